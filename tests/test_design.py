"""Design assist (issue 7) against published formulas, standards and hand calculations.

Each check names its source beside it (see tests/REFERENCES.md). Circuits are
built here part by part with their connections written out. Reference values are
computed in the test from the published formula or by an independent nodal solve
with numpy and a root with scipy, never with a symfilt function.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
import sympy
from scipy.optimize import brentq

from helpers import rc_lowpass as shared_rc_lowpass, same

from symfilt.model.circuit import Circuit, Part
from symfilt.design.eseries import SERIES, series_neighbours, series_values, snap
from symfilt.design.sizing import parse_target, size
from symfilt.design.drive import drive
from symfilt.errors import OutputError, UsageError
from symfilt.export import design_report
from symfilt.design.opamp_error import opamp_error
from symfilt.analysis.numeric import batch_cutoff
from symfilt.design.spread import parse_tolerance, spread, vector_model

R1, R2, C1, C2, R_s, R_L = sympy.symbols("R1 R2 C1 C2 R_s R_L", positive=True)
A_U1 = sympy.Symbol("A_U1", positive=True)
R, C, U = Part.resistor, Part.capacitor, Part.opamp


def rel(a: float, b: float) -> float:
    return abs(a / b - 1)


# --- IEC 60063 preferred numbers --------------------------------------------------------
# IEC 60063, *Preferred number series for resistors and capacitors* (from memory).
E6_IEC = [1.0, 1.5, 2.2, 3.3, 4.7, 6.8]
E12_IEC = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2]
E24_IEC = [1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1,
           5.6, 6.2, 6.8, 7.5, 8.2, 9.1]
E96_IEC = [int(v) for v in """
100 102 105 107 110 113 115 118 121 124 127 130 133 137 140 143 147 150 154 158 162 165 169 174
178 182 187 191 196 200 205 210 215 221 226 232 237 243 249 255 261 267 274 280 287 294 301 309
316 324 332 340 348 357 365 374 383 392 402 412 422 432 442 453 464 475 487 499 511 523 536 549
562 576 590 604 619 634 649 665 681 698 715 732 750 768 787 806 825 845 866 887 909 931 953 976
""".split()]
E192_IEC = [int(v) for v in """
100 101 102 104 105 106 107 109 110 111 113 114 115 117 118 120 121 123 124 126 127 129 130 132
133 135 137 138 140 142 143 145 147 149 150 152 154 156 158 160 162 164 165 167 169 172 174 176
178 180 182 184 187 189 191 193 196 198 200 203 205 208 210 213 215 218 221 223 226 229 232 234
237 240 243 246 249 252 255 258 261 264 267 271 274 277 280 284 287 291 294 298 301 305 309 312
316 320 324 328 332 336 340 344 348 352 357 361 365 370 374 379 383 388 392 397 402 407 412 417
422 427 432 437 442 448 453 459 464 470 475 481 487 493 499 505 511 517 523 530 536 542 549 556
562 569 576 583 590 597 604 612 619 626 634 642 649 657 665 673 681 690 698 706 715 723 732 741
750 759 768 777 787 796 806 816 825 835 845 856 866 876 887 898 909 920 931 942 953 965 976 988
""".split()]


@pytest.mark.parametrize("name, table, scale", [("E6", E6_IEC, 1), ("E12", E12_IEC, 1), ("E24", E24_IEC, 1),
                                                ("E96", E96_IEC, 100), ("E192", E192_IEC, 100)])
def test_series_tables_match_iec_60063(name, table, scale):
    # IEC 60063 (from memory): the tables typed above, value by value.
    got = [v * scale for v in series_values(name)]
    assert got == [sympy.nsimplify(v) for v in table]


def test_e12_e24_are_not_rounded_powers_of_ten():
    # IEC 60063 (from memory): E12/E24 keep historical values; rounding 10^(i/N) to two
    # figures would give 2.6, 3.2, 3.8, 4.6, 8.3 where the standard has 2.7, 3.3, 3.9, 4.7, 8.2.
    rounded = [round(10 ** (i / 24), 1) for i in range(24)]
    differ = {float(v) for v, r in zip(series_values("E24"), rounded) if abs(float(v) - r) > 1e-9}
    assert {2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2} <= differ


def test_e48_is_e96_every_other_value():
    # IEC 60063 (from memory): E48 is every second value of E96, as E96 is of E192 (except 9.20).
    assert list(series_values("E48")) == list(series_values("E96"))[::2]
    e192 = list(series_values("E192"))
    assert [v for v in e192[::2]] == list(series_values("E96"))


@pytest.mark.parametrize("value, series, expected", [
    (3003.4, "E24", (3000, 3300)), (4700, "E12", (4700, 5600)), (9999.0, "E24", (9100, 10000)),
    (1e-9, "E6", (sympy.Rational(1, 10**9), sympy.Rational(3, 2 * 10**9))), (0.0123, "E96", (sympy.Rational(121, 10**4), sympy.Rational(124, 10**4))),
])
def test_series_neighbours_bracket(value, series, expected):
    # Common practice: the two series values on either side of a value.
    assert series_neighbours(value, series) == expected


@pytest.mark.parametrize("seed", range(5))
def test_series_neighbours_property(seed):
    # The bracket holds and no series value lies strictly between (checked against the typed tables).
    rng = np.random.default_rng(seed)
    table = np.array(E24_IEC)
    for v in 10 ** rng.uniform(-12, 7, 50):
        lo, hi = series_neighbours(v, "E24")
        assert float(lo) <= v < float(hi)
        k = math.floor(math.log10(v))
        candidates = np.concatenate([table * 10.0 ** (k - 1), table * 10.0**k, table * 10.0 ** (k + 1)])
        assert not np.any((candidates > float(lo) * (1 + 1e-12)) & (candidates < float(hi) * (1 - 1e-12)))
        assert snap(v, "E24") in (lo, hi)


def test_unknown_series_is_a_usage_error():
    with pytest.raises(UsageError, match="unknown series"):
        series_values("E13")


# --- size --------------------------------------------------------------------------------

def rc_lowpass(r="4k7", c="22n", source="600", load="10k") -> Circuit:
    # The shared RC low-pass (R1 from in to out, C1 from out to ground) with this file's default values.
    return shared_rc_lowpass(r, c, source=source, load=load)


def test_size_loaded_rc_matches_thevenin_solution():
    # Thevenin (common practice; REFERENCES.md): w_c = 1/(C ((R_s + R) || R_L)). Solving for R:
    # (R_s + R) || R_L = 1/(w C) =: Rth, so R = 1/(1/Rth - 1/R_L) - R_s.
    f = 2000
    r = size(rc_lowpass(), ("cutoff", f), "R1", series="E24")
    w = 2 * sympy.pi * f
    rth = 1 / (w * C1)
    expected = 1 / (1 / rth - 1 / R_L) - R_s
    assert r.method == "closed form"
    assert same(r.exact, expected)
    vals = {C1: sympy.Rational(22, 10**9), R_s: 600, R_L: 10000}
    assert rel(r.value, float(expected.subs(vals))) < 1e-12
    # the neighbours: loaded cutoff from the same Thevenin formula, ideal from 1/(2 pi R C)
    # (Horowitz & Hill, 3rd ed., ch. 1; from memory)
    for n in r.neighbours:
        rv = float(n.values["R1"])
        thev = 1 / (1 / (600 + rv) + 1 / 10000)
        assert rel(n.loaded, 1 / (2 * math.pi * 22e-9 * thev)) < 1e-12
        assert rel(n.ideal, 1 / (2 * math.pi * rv * 22e-9)) < 1e-12
        assert abs(n.error_pct - (n.loaded / f - 1) * 100) < 1e-9
    # the E24 values either side of the exact R1 (IEC 60063, from memory)
    assert [float(n.values["R1"]) for n in r.neighbours] == [4700.0, 5100.0]


def test_size_loaded_rc_dc_gain():
    # Voltage divider (common practice; REFERENCES.md): H(0) = R_L / (R_s + R + R_L), so R = R_L/G - R_L - R_s.
    r = size(rc_lowpass(), ("dc-gain", "0.8"), "R1")
    assert same(r.exact, R_L / sympy.Rational(4, 5) - R_L - R_s)
    assert rel(r.value, 10000 / 0.8 - 10000 - 600) < 1e-12


def test_size_two_parts_in_ratio_sallen_key_w0():
    # Unity-gain Sallen-Key low-pass (TI SLOA024, from memory): w0 = 1/sqrt(R1 R2 C1 C2); the
    # source resistance adds to R1. R1 in->a, R2 a->b, C1 a->out, C2 b->ground, follower b->out.
    c = Circuit.build([R("R1", "in", "a", "6k8"), R("R2", "a", "b", "15k"), C("C1", "a", "out", "10n"),
                       C("C2", "b", "0", "3n3"), U("U1", "b", "out", "out")], source="50", load="2k")
    f0 = 1000
    r = size(c, ("w0", f0), ("C1", "C2"), series="E12")
    ratio = 3.3 / 10
    expected_c1 = 1 / (2 * math.pi * f0 * math.sqrt((6800 + 50) * 15000 * ratio))
    assert rel(r.value, expected_c1) < 1e-12
    # every held part is snapped on its own (issue 15): each of C1 and C2 is an E12 value either
    # side of its exact share, every combination is tried, the smallest loaded error first
    e12 = {sympy.Rational(m) / 10 for m in (10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82)}
    assert len(r.neighbours) == 4
    for n in r.neighbours:
        for name, exact in (("C1", expected_c1), ("C2", expected_c1 * ratio)):
            v = n.values[name]
            assert v / sympy.Integer(10) ** sympy.floor(sympy.log(v, 10)) in e12
            assert float(v) <= exact * 1.3 and float(v) >= exact / 1.3
        w0 = 1 / math.sqrt(6850 * 15000 * float(n.values["C1"]) * float(n.values["C2"]))
        assert rel(n.loaded, w0 / (2 * math.pi)) < 1e-12
    errors = [abs(n.error_pct) for n in r.neighbours]
    assert errors == sorted(errors)


def test_size_sallen_key_q_every_solution_meets_target():
    # Same circuit: Q = sqrt(R1 R2 C1 C2) / (C2 (R1 + R2)), R1 including R_s (TI SLOA024, from memory).
    c = Circuit.build([R("R1", "in", "a", "6k8"), R("R2", "a", "b", "15k"), C("C1", "a", "out", "10n"),
                       C("C2", "b", "0", "3n3"), U("U1", "b", "out", "out")], source="50", load="2k")
    r = size(c, ("q", "0.7071"), "R2")
    assert len(r.solutions) == 2  # Q(R2) rises then falls
    for r2 in r.solutions:
        q = math.sqrt(6850 * r2 * 10e-9 * 3.3e-9) / (3.3e-9 * (6850 + r2))
        assert rel(q, 1 / math.sqrt(2)) < 1e-9  # 0.7071 is read as 1/sqrt(2) (targets.recognise)
    assert r.value == max(r.solutions, key=lambda v: -abs(math.log(v / 15000)))


def ladder() -> Circuit:
    # Third-order RC ladder: R1 in->a, C1 a->gnd, R2 a->b, C2 b->gnd, R3 b->out, C3 out->gnd, R_L at out.
    return Circuit.build([R("R1", "in", "a", "1k"), C("C1", "a", "0", "10n"), R("R2", "a", "b", "1k"),
                          C("C2", "b", "0", "10n"), R("R3", "b", "out", "1k"), C("C3", "out", "0", "10n")],
                         load="100k")


def ladder_h(w, r1=1e3, r2=1e3, r3=1e3, c1=10e-9, c2=10e-9, c3=10e-9, rl=1e5):
    """V(out)/V(in) by nodal analysis with numpy (common practice), ideal source."""
    s = 1j * w
    y = np.array([[1 / r1 + 1 / r2 + s * c1, -1 / r2, 0],
                  [-1 / r2, 1 / r2 + 1 / r3 + s * c2, -1 / r3],
                  [0, -1 / r3, 1 / r3 + s * c3 + 1 / rl]], dtype=complex)
    return np.linalg.solve(y, np.array([1 / r1, 0, 0], dtype=complex))[2]


def ladder_cutoff(**kw) -> float:
    h0 = abs(ladder_h(0.0, **kw))
    return brentq(lambda w: abs(ladder_h(w, **kw)) ** 2 - h0**2 / 2, 1.0, 1e8, xtol=1e-12, rtol=1e-13)


def test_size_third_order_numeric_root_against_scipy():
    # No closed form beyond second order: a numeric root. Checked with an independent nodal
    # solve and scipy's brentq on |H(jw)|^2 = |H(0)|^2 / 2 (common practice).
    r = size(ladder(), ("cutoff", "3k"), "R1")
    assert r.method == "numeric root" and r.exact is None
    assert rel(ladder_cutoff(r1=r.value) / (2 * math.pi), 3000) < 1e-8
    for n in r.neighbours:
        assert rel(n.loaded, ladder_cutoff(r1=float(n.values["R1"])) / (2 * math.pi)) < 1e-8


def test_size_errors():
    with pytest.raises(UsageError, match="not a part"):
        size(rc_lowpass(), ("cutoff", 2000), "R9")
    with pytest.raises(UsageError, match="no positive value"):
        size(rc_lowpass(), ("dc-gain", 2), "R1")  # a passive divider never gains
    with pytest.raises(UsageError, match="no value for"):
        size(rc_lowpass(c=None), ("cutoff", 2000), "R1")
    assert parse_target("w0=1.5kHz") == ("w0", 1500)
    with pytest.raises(UsageError, match="not a target"):
        parse_target("bandwidth=3k")


# --- spread ------------------------------------------------------------------------------

def rc_cutoff(r1, c1, rs, rl):
    # Thevenin (common practice): w_c = 1/(C ((R_s + R) || R_L)), in Hz.
    return 1 / (2 * np.pi * c1 * (1 / (1 / (rs + r1) + 1 / rl)))


def test_spread_std_agrees_with_sensitivity_estimate_rc():
    # For small tolerances y varies linearly: std(y) = y sqrt(sum (S_i sigma_i)^2) with
    # sigma = tol/sqrt(3) for a uniform spread (common practice). S from the Thevenin formula.
    tol = {"R1": 0.002, "C1": 0.003, "R_s": 0.002, "R_L": 0.001}
    r = spread(rc_lowpass(), tol, runs=40000, seed=11)
    x = {R1: 4700, C1: 22e-9, R_s: 600, R_L: 10000}
    wc = 1 / (C1 * (1 / (1 / (R_s + R1) + 1 / R_L)))
    sens = {str(k): float((k / wc * sympy.diff(wc, k)).subs(x)) for k in x}
    nominal = float(wc.subs(x)) / (2 * math.pi)
    est = nominal * math.sqrt(sum((sens[n] * t / math.sqrt(3)) ** 2 for n, t in tol.items()))
    q = r.quantities["cutoff_hz"]
    assert rel(q.nominal, nominal) < 1e-12
    assert rel(q.std, est) < 0.10
    assert rel(q.std_linear, est) < 1e-9
    assert q.linear_high - q.nominal == pytest.approx(nominal * sum(abs(sens[n]) * t for n, t in tol.items()), rel=1e-9)


def test_spread_std_agrees_with_sensitivity_estimate_sallen_key_q_normal():
    # Sallen-Key Q = sqrt(R1 R2 C1 C2) / (C2 (R1 + R2)) (TI SLOA024, from memory); ideal source.
    # Normal spread with tolerance = 3 sigma: std(Q) = Q sqrt(sum (S_i tol_i/3)^2).
    c = Circuit.build([R("R1", "in", "a", "6k8"), R("R2", "a", "b", "15k"), C("C1", "a", "out", "10n"),
                       C("C2", "b", "0", "3n3"), U("U1", "b", "out", "out")])
    tol = {"R": 0.005, "C": 0.01}
    r = spread(c, tol, distribution="normal", runs=40000, seed=5)
    x = {R1: 6800, R2: 15000, C1: 10e-9, C2: 3.3e-9}
    q_expr = sympy.sqrt(R1 * R2 * C1 * C2) / (C2 * (R1 + R2))
    t = {R1: 0.005, R2: 0.005, C1: 0.01, C2: 0.01}
    est = float(q_expr.subs(x)) * math.sqrt(sum((float((k / q_expr * sympy.diff(q_expr, k)).subs(x)) * t[k] / 3) ** 2
                                                for k in x))
    assert rel(r.quantities["q"].std, est) < 0.10


def test_corner_worst_case_bounds_every_uniform_sample():
    # The loaded RC cutoff 1/(C ((R_s+R)||R_L)) falls as each part grows (monotonic in each), so with
    # uniform spreads its extremes are corners (common practice): every sample lies between them,
    # and the corners are the formula at all parts +tol (low) and -tol (high).
    tol = {"R": 0.05, "C": 0.1, "R_s": 0.2, "R_L": 0.2}
    r = spread(rc_lowpass(), tol, runs=20000, seed=3)
    q = r.quantities["cutoff_hz"]
    samples = r.samples["cutoff_hz"]
    assert q.worst_method == "corners"
    assert np.all(samples >= q.worst_low) and np.all(samples <= q.worst_high)
    assert rel(q.corner_low, rc_cutoff(4700 * 1.05, 22e-9 * 1.1, 600 * 1.2, 10000 * 1.2)) < 1e-12
    assert rel(q.corner_high, rc_cutoff(4700 * 0.95, 22e-9 * 0.9, 600 * 0.8, 10000 * 0.8)) < 1e-12


def test_corner_bounds_sallen_key_f0():
    # f0 = 1/(2 pi sqrt(R1 R2 C1 C2)) (TI SLOA024, from memory) is monotonic in each part.
    c = Circuit.build([R("R1", "in", "a", "6k8"), R("R2", "a", "b", "15k"), C("C1", "a", "out", "10n"),
                       C("C2", "b", "0", "3n3"), U("U1", "b", "out", "out")])
    r = spread(c, {"R": 0.01, "C": 0.05}, runs=20000, seed=9)
    s = r.samples["f0_hz"]
    q = r.quantities["f0_hz"]
    assert np.all((s >= q.worst_low) & (s <= q.worst_high))
    assert rel(q.worst_low, 1 / (2 * math.pi * math.sqrt(6800 * 15000 * 10e-9 * 3.3e-9 * 1.01**2 * 1.05**2))) < 1e-12


def test_spread_third_order_cutoff_against_scipy():
    # The vectorised numeric cutoff (order 3, no closed form) against brentq on an independent nodal solve.
    m = vector_model(ladder())
    vals = {"R1": np.array([1e3, 2.2e3, 470.0]), "R2": 1e3, "R3": 1e3, "C1": 10e-9, "C2": 10e-9, "C3": 10e-9,
            "R_L": 1e5}
    got = m.evaluate("cutoff_hz", vals)
    for r1, g in zip(vals["R1"], got):
        assert rel(g, ladder_cutoff(r1=r1) / (2 * math.pi)) < 1e-9


def test_batch_cutoff_first_order_highpass():
    # H = s RC / (1 + s RC): -3 dB at 1/(RC) (common practice), found as the highest crossing.
    w = batch_cutoff([np.zeros(2), np.array([1e-3, 2e-3])], [np.ones(2), np.array([1e-3, 2e-3])])
    assert np.allclose(w, [1000.0, 500.0], rtol=1e-12)


def test_spread_reproducible_and_options():
    a = spread(rc_lowpass(), {"R": 0.01, "C": 0.05}, runs=500, seed=42)
    b = spread(rc_lowpass(), {"R": 0.01, "C": 0.05}, runs=500, seed=42)
    assert np.array_equal(a.samples["cutoff_hz"], b.samples["cutoff_hz"])
    assert a.tolerances == {"R1": 0.01, "C1": 0.05}
    assert parse_tolerance("R3=0.1%") == ("R3", pytest.approx(0.001))
    with pytest.raises(UsageError, match="outside"):
        parse_tolerance("R=150%")
    with pytest.raises(UsageError, match="no part"):
        spread(rc_lowpass(), {"Q7": 0.01}, runs=500)
    calls = []
    spread(rc_lowpass(), {"R": 0.01}, runs=12000, seed=1, progress=lambda d, t: calls.append((d, t)))
    assert calls[-1] == (12000, 12000) and len(calls) >= 2


def test_histogram_written_atomically(tmp_path):
    r = spread(rc_lowpass(), {"R": 0.01, "C": 0.05}, runs=500, seed=1)
    p = tmp_path / "h.svg"
    design_report.write_histogram(r, p)
    assert p.read_text().lstrip().startswith("<?xml")
    with pytest.raises(OutputError, match="image type"):
        design_report.write_histogram(r, tmp_path / "h.txt")


# --- drive -------------------------------------------------------------------------------

def inverting(r1="10k", r2="22k", load="2k", c1=None, **opamp) -> Circuit:
    # R1 from in to n, R2 (and C1 if given) from n to out, op-amp + at ground, - at n, output at out.
    parts = [R("R1", "in", "n", r1), R("R2", "n", "out", r2), U("U1", "0", "n", "out", **opamp)]
    if c1:
        parts.append(C("C1", "n", "out", c1))
    return Circuit.build(parts, load=load)


def test_drive_inverting_stage_hand_calculation():
    # Hand calculation (common practice): ideal op-amp, virtual ground at n. Vout = -(R2/R1) A = -2.2 V;
    # the op-amp drives R_L (2.2 V / 2k = 1.1 mA) and R2 (2.2 V / 22k = 0.1 mA): 1.2 mA peak.
    # Slew rate of a sine: 2 pi f Vpeak = 2 pi 1000 2.2 V/s = 0.013823 V/us.
    r = drive(inverting(iout_max="1m", slew="0.5"), 1, "1k")
    d = r.opamps[0]
    assert d.vout_peak_v == pytest.approx(2.2, rel=1e-12)
    assert d.iout_peak_a == pytest.approx(1.2e-3, rel=1e-12)
    assert d.slew_v_per_us == pytest.approx(2 * math.pi * 1000 * 2.2 / 1e6, rel=1e-12)
    assert {b.part: b.peak_a for b in d.branches} == pytest.approx({"R2": 1e-4, "R_L": 1.1e-3}, rel=1e-12)
    assert d.iout_exceeded is True and d.slew_exceeded is False
    assert design_report.drive_warnings(r) == ["U1 must deliver 1.2 mA peak, more than its iout_max of 1 mA"]


def test_drive_inverting_lowpass_phasors():
    # Hand calculation with phasors (common practice): Vout = -(R2/(R1 + R_s)) A / (1 + j w R2 C1);
    # the output current Vout (1/R_L + 1/R2 + j w C1) flows into the load and the feedback (n at 0 V).
    c = Circuit.build([R("R1", "in", "n", "10k"), R("R2", "n", "out", "22k"), C("C1", "n", "out", "4n7"),
                       U("U1", "0", "n", "out", slew="0.01")], source="600", load="2k")
    amp, f = 2.0, 10e3
    w = 2 * math.pi * f
    vout = -(22e3 / 10.6e3) * amp / (1 + 1j * w * 22e3 * 4.7e-9)
    iout = vout * (1 / 2e3 + 1 / 22e3 + 1j * w * 4.7e-9)
    d = drive(c, amp, f).opamps[0]
    assert d.vout_peak_v == pytest.approx(abs(vout), rel=1e-12)
    assert d.iout_peak_a == pytest.approx(abs(iout), rel=1e-12)
    assert d.slew_exceeded is (w * abs(vout) / 1e6 > 0.01)


def test_drive_noninverting_feedback_current():
    # Non-inverting gain stage (common practice): a -> + input, out -> Rf -> f, Rg f -> ground.
    # Vout = (1 + Rf/Rg) A; the feedback draws Vout/(Rf + Rg), the load Vout/R_L.
    c = Circuit.build([R("Rin", "in", "a", "1k"), U("U1", "a", "f", "out"), R("Rf", "out", "f", "30k"),
                       R("Rg", "f", "0", "10k")], load="5k")
    d = drive(c, "0.5", "100").opamps[0]
    vout = 4 * 0.5
    assert d.vout_peak_v == pytest.approx(vout, rel=1e-12)
    assert d.iout_peak_a == pytest.approx(vout / 40e3 + vout / 5e3, rel=1e-12)


def test_drive_needs_an_opamp_and_values():
    with pytest.raises(UsageError, match="no op-amp"):
        drive(rc_lowpass(), 1, 1000)
    with pytest.raises(UsageError, match="no value"):
        drive(inverting(r2=None), 1, 1000)


# --- non-ideal op-amps -------------------------------------------------------------------

def test_finite_gain_inverting_amplifier_sedra_smith():
    # Sedra & Smith, *Microelectronic Circuits*, ch. 2 (from memory): G = -(R2/R1)/(1 + (1 + R2/R1)/A),
    # so to first order in 1/A the relative error is -(1 + R2/R1)/A.
    c = Circuit.build([R("R1", "in", "n"), R("R2", "n", "out"), U("U1", "0", "n", "out")])
    e = opamp_error(c, "gain")
    g = -(R2 / R1) / (1 + (1 + R2 / R1) / A_U1)
    assert same(e.dc_ideal, -R2 / R1)
    assert same(e.dc_real, g)
    assert same(e.dc_error, g / (-R2 / R1) - 1)
    assert same(e.dc_first_order["A_U1"], -(1 + R2 / R1))


def test_finite_gain_numbers():
    # The same formula at R1 = 10k, R2 = 22k, A = 10^4 (Sedra & Smith ch. 2, from memory).
    c = Circuit.build([R("R1", "in", "n", "10k"), R("R2", "n", "out", "22k"), U("U1", "0", "n", "out", gain="10k")])
    n = opamp_error(c, "gain").numeric["dc_gain"]
    g = -2.2 / (1 + 3.2 / 1e4)
    assert n["real"] == pytest.approx(g, rel=1e-12)
    assert n["error"] == pytest.approx(g / -2.2 - 1, rel=1e-9)
    assert n["first_order"] == pytest.approx(-3.2e-4, rel=1e-12)


def test_single_pole_first_order_cutoff_against_exact():
    # Consistency: the first-order term in 1/GBW predicts the exact cutoff shift when GBW is large.
    # Inverting low-pass (R2 || C1 feedback): ideal w_c = 1/(R2 C1) (common practice).
    c = inverting(c1="4n7", load="2k", gain="1M", gbw="10M")
    e = opamp_error(c, "single-pole")
    n = e.numeric["cutoff_hz"]
    assert n["ideal"] == pytest.approx(1 / (2 * math.pi * 22e3 * 4.7e-9), rel=1e-12)
    assert rel(n["first_order"], n["error"]) < 0.01
    assert set(e.cutoff_first_order) == {"A_U1", "GBW_U1"}


def test_second_order_first_order_routes_agree():
    # Unity-gain Sallen-Key with finite gain: the closed-form first-order coefficient (through w0 and Q)
    # and the numeric implicit-derivative estimate are two derivations of the same number.
    c = Circuit.build([R("R1", "in", "a", "6k8"), R("R2", "a", "b", "15k"), C("C1", "a", "out", "10n"),
                       C("C2", "b", "0", "3n3"), U("U1", "b", "out", "out", gain="100k")], source="50")
    e = opamp_error(c, "gain")
    coef = e.cutoff_first_order["A_U1"]
    vals = {sympy.Symbol(k, positive=True): v for k, v in
            {"R1": 6800, "R2": 15000, "C1": sympy.Rational(1, 10**8), "C2": sympy.Rational(33, 10**10), "R_s": 50}.items()}
    closed = float(coef.subs(vals)) / 1e5
    assert rel(closed, e.numeric["cutoff_hz"]["first_order"]) < 1e-9
    assert rel(closed, e.numeric["cutoff_hz"]["error"]) < 1e-3


# --- JSON and text -----------------------------------------------------------------------

def test_json_shapes_follow_design_md():
    # README "JSON output", the other commands: the listed keys are present; numbers finite.
    s = design_report.size_dict(size(rc_lowpass(), ("cutoff", 2000), "R1"))
    assert {"vary", "target", "exact", "value", "series", "neighbours"} <= set(s)
    assert {"quantity", "value"} <= set(s["target"])
    assert all({"value", "loaded", "ideal", "error_pct"} <= set(n) for n in s["neighbours"])
    assert same(sympy.sympify(s["exact"], locals={"C1": C1, "R_L": R_L, "R_s": R_s}),
                size(rc_lowpass(), ("cutoff", 2000), "R1").exact)
    p = design_report.spread_dict(spread(rc_lowpass(), {"R": 0.01}, runs=500, seed=2))
    assert {"runs", "seed", "quantities"} <= set(p)
    keys = {"nominal", "mean", "std", "p1", "p50", "p99", "worst_low", "worst_high"}
    assert set(p["quantities"]) <= {"cutoff_hz", "f0_hz", "q", "dc_gain"}
    assert all(keys <= set(v) for v in p["quantities"].values())
    d = design_report.drive_dict(drive(inverting(), 1, 1000))
    assert {"iout_peak_a", "vout_peak_v", "slew_v_per_us"} <= set(d["opamps"]["U1"])
    for data in (s, p, d):
        json.loads(json.dumps(data, allow_nan=False))


def test_text_reports_render():
    text = design_report.size_text(size(rc_lowpass(), ("cutoff", 2000), "R1", series="E12"))
    assert "4.7 kΩ" in text and "5.6 kΩ" in text
    text = design_report.drive_text(drive(inverting(iout_max="1m"), 1, 1000))
    assert "WARNING: U1 must deliver 1.2 mA peak" in text
    text = design_report.opamp_error_text(opamp_error(inverting(gain="100k"), "gain"))
    assert "A_U1" in text


def test_series_tables_are_read_only():
    with pytest.raises(TypeError):
        SERIES["E3"] = ()
