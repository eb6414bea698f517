"""Numbers for any order at the values: poles and zeros, the kind after exact cancellation, the
notch, group delay at DC, peaking and ripple, and the numeric cutoff's sensitivities by the
implicit-function derivative. Sources are named beside each check (tests/REFERENCES.md)."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
import scipy.signal
import sympy
from click.testing import CliRunner

from symfilt import catalogue
from symfilt.cli import cli
from symfilt.model.circuit import Circuit, Part
from symfilt.analysis.stage import analyse
from symfilt.analysis.numeric import numeric_cutoff, numeric_sensitivity
from symfilt.analysis.response import (cutoff_sensitivities, group_delay_dc, peaking_ripple, reduce_pair,
                                       response_kind, root_list)

RQ = lambda x: sympy.Rational(repr(float(x)))  # a float part value as the exact decimal it prints as


# --- the twin-T notch -------------------------------------------------------------------------

TWIN_T = {"R1": 10e3, "R2": 10e3, "R3": 5e3, "C1": 15e-9, "C2": 15e-9, "C3": 30e-9}


def twin_t(source="50", load="100k", load_capacitance=None, **parts) -> Circuit:
    """R1 in->a, R2 a->out, C3 a->ground; C1 in->m, C2 m->out, R3 m->ground (the catalogue's wiring)."""
    v = {**TWIN_T, **parts}
    return Circuit.build([Part.resistor("R1", "in", "a", RQ(v["R1"])), Part.resistor("R2", "a", "out", RQ(v["R2"])),
                          Part.capacitor("C3", "a", "0", RQ(v["C3"])), Part.capacitor("C1", "in", "m", RQ(v["C1"])),
                          Part.capacitor("C2", "m", "out", RQ(v["C2"])), Part.resistor("R3", "m", "0", RQ(v["R3"]))],
                         source=source, load=load, load_capacitance=load_capacitance)


def nodal_twin_t(v: dict, w: np.ndarray, r_s=0.0, r_l=math.inf, c_l=0.0) -> np.ndarray:
    """Our own numpy nodal solve (KCL at a, m, out; source V = 1 behind r_s), independent of symfilt."""
    out = []
    for wk in np.atleast_1d(w):
        jw = 1j * wk
        g1, g2, g3 = 1 / v["R1"], 1 / v["R2"], 1 / v["R3"]
        y1, y2, y3 = jw * v["C1"], jw * v["C2"], jw * v["C3"]
        yl = (0 if math.isinf(r_l) else 1 / r_l) + jw * c_l
        nodes = ["in", "a", "m", "out"]
        Y = np.zeros((4, 4), dtype=complex)
        for a, b, y in (("in", "a", g1), ("a", "out", g2), ("a", None, y3), ("in", "m", y1), ("m", "out", y2),
                        ("m", None, g3), ("out", None, yl)):
            i = nodes.index(a)
            Y[i, i] += y
            if b is not None:
                j = nodes.index(b)
                Y[j, j] += y
                Y[i, j] -= y
                Y[j, i] -= y
        rhs = np.zeros(4, dtype=complex)
        if r_s == 0:  # the input node held at 1 V: replace its row
            Y[0, :] = 0
            Y[0, 0] = 1
            rhs[0] = 1
        else:
            Y[0, 0] += 1 / r_s
            rhs[0] = 1 / r_s
        out.append(np.linalg.solve(Y, rhs)[3])
    return np.array(out)


def test_derive_twin_t_reports_a_notch_with_frequency_and_depth():
    # Williams & Taylor, Electronic Filter Design Handbook, twin-T (REFERENCES.md, from memory):
    # R, R, R/2 and C, C, 2C give a notch at f0 = 1/(2 pi R C) with Q = 1/4, an ideal null.
    # The -3 dB edges of (1 + x^2)/(1 + 4x + x^2), x = s/w0: (1 - u)^2 = 16 u, so
    # w = w0 (sqrt(5) -+ 2) and the bandwidth is 4 w0 = w0/Q (derived from that H; common practice).
    text = CliRunner().invoke(cli, ["derive", "@twin-t-notch"]).output
    assert "cutoff " not in text.split("Numbers at the given values")[1].split("\n\n")[0]
    d = json.loads(CliRunner().invoke(cli, ["derive", "@twin-t-notch", "--format", "json"]).output)
    f0 = 1 / (2 * math.pi * 10e3 * 15e-9)
    for view in ("loaded", "ideal"):
        n = d["numeric"][view]
        assert n["kind"] == "notch" and n["order"] == 2 and "cutoff_hz" not in n
        assert n["notch_hz"] == pytest.approx(f0, rel=1e-12)
        assert n["notch_null"] is True and n["notch_depth_db"] is None
    ideal = d["numeric"]["ideal"]
    assert ideal["q"] == pytest.approx(0.25, rel=1e-12) and ideal["f0_hz"] == pytest.approx(f0, rel=1e-12)
    assert ideal["low_edge_hz"] == pytest.approx(f0 * (math.sqrt(5) - 2), rel=1e-9)
    assert ideal["high_edge_hz"] == pytest.approx(f0 * (math.sqrt(5) + 2), rel=1e-9)
    assert ideal["bandwidth_hz"] == pytest.approx(4 * f0, rel=1e-9)
    # the cancelled pair is the real pole-zero at -1/(RC): N = (1 + sRC)(1 + (sRC)^2) at these values
    # (expand the handbook's numerator C^3 R^3 s^3 + C^2 R^2 s^2 + C R s + 1; common practice)
    assert [c["f_hz"] for c in ideal["cancelled"]] == [pytest.approx(f0, rel=1e-12)]
    assert "notch" in text and "1.061 kHz" in text and "infinite (exact null)" in text
    assert "Poles and zeros at the given values" in text and "pair on the jω axis at 1.061 kHz" in text


@pytest.mark.parametrize("source, load, cl", [("50", "100k", None), ("600", "1k", None), ("1k", "10k", "10n")])
def test_loading_does_not_fill_the_twin_t_null(source, load, cl):
    # Physics (README "JSON output", the response at the values): at the notch the network's output voltage is zero, so no current
    # flows in R_L or C_L and they cannot change it, and R_s only scales the input voltage: the null
    # stays at 1/(2 pi R C) and stays infinite. Checked by our own nodal solve (KCL; common practice).
    a = analyse(twin_t(source, load, cl), sensitivity=False)
    n = a.numeric["loaded"]
    f0 = 1 / (2 * math.pi * 10e3 * 15e-9)
    # a heavy R_L leaves a high-pass with a null, a C_L a low-pass with one: a null all the same
    assert n["kind"] == {"1k": "highpass", "10k": "lowpass"}.get(load, "notch")
    assert n["notch_null"] and n["notch_hz"] == pytest.approx(f0, rel=1e-12) and "cutoff_hz" not in n
    r_s, r_l = float(sympy.Rational(a.circuit.values()[sympy.Symbol("R_s", positive=True)])), \
        float(a.circuit.values()[sympy.Symbol("R_L", positive=True)])
    c_l = 0.0 if cl is None else 10e-9
    h = nodal_twin_t(TWIN_T, np.array([2 * math.pi * f0, 1e-3]), r_s, r_l, c_l)
    assert abs(h[0]) <= 1e-12 * abs(h[1])


def test_a_mismatched_twin_t_has_a_finite_notch_against_a_nodal_solve():
    # R3 1 % high: the zeros leave the jw axis and the depth is finite. Reference: our own nodal
    # solve, its minimum by scipy.optimize.minimize_scalar in log w, depth relative to the DC gain
    # (the pass-band rule of README "JSON output", the response at the values).
    from scipy.optimize import minimize_scalar

    parts = {**TWIN_T, "R3": 5050.0}
    for source, load, r_s, r_l in (("none", "none", 0.0, math.inf), ("50", "100k", 50.0, 100e3)):
        a = analyse(twin_t(source, load, **{"R3": 5050.0}), sensitivity=False)
        n = a.numeric["ideal" if source == "none" else "loaded"]
        assert n["kind"] == "notch" and n["notch_null"] is False and n["order"] == 3
        mag = lambda lw: abs(nodal_twin_t(parts, np.array([math.exp(lw)]), r_s, r_l)[0])
        w0 = 1 / (10e3 * 15e-9)
        best = minimize_scalar(mag, bounds=(math.log(w0 / 2), math.log(w0 * 2)), method="bounded",
                               options={"xatol": 1e-10})
        g = abs(nodal_twin_t(parts, np.array([1e-3]), r_s, r_l)[0])
        assert n["notch_hz"] == pytest.approx(math.exp(best.x) / (2 * math.pi), rel=1e-6)
        assert n["notch_depth_db"] == pytest.approx(20 * math.log10(g / best.fun), rel=1e-6)
        assert 50 < n["notch_depth_db"] < 60  # about 58 dB (README "JSON output", the response at the values; computed regression value)


# --- poles against scipy ------------------------------------------------------------------------

def sallen_key_cascade(sections, real_pole_w=None) -> Circuit:
    """Unity-gain Sallen-Key low-pass sections in a chain (R1 in->a, R2 a->b, C1 a->out, C2 b->ground,
    follower b->out), each with R1 = R2 = R: C1 = 2Q/(w0 R), C2 = 1/(2 Q w0 R) give w0 = 1/(R sqrt(C1 C2))
    and Q = sqrt(C1 C2)/(2 C2) (TI SLOA024 formulas, REFERENCES.md); then, with ``real_pole_w``, an RC
    section (R from the last output to node out, C to ground, open load)."""
    r = 10e3
    parts, node = [], "in"
    for k, (w0, q) in enumerate(sections, 1):
        a, b, out = f"a{k}", f"b{k}", f"o{k}"
        parts += [Part.resistor(f"R{k}a", node, a, RQ(r)), Part.resistor(f"R{k}b", a, b, RQ(r)),
                  Part.capacitor(f"C{k}a", a, out, RQ(2 * q / (w0 * r))),
                  Part.capacitor(f"C{k}b", b, "0", RQ(1 / (2 * q * w0 * r))), Part.opamp(f"U{k}", b, out, out)]
        node = out
    if real_pole_w is not None:
        parts += [Part.resistor("Rr", node, "out", RQ(r)), Part.capacitor("Cr", "out", "0", RQ(1 / (real_pole_w * r)))]
    else:  # name the last output "out"
        parts.append(Part.resistor("Rout", node, "out", 1))
    return Circuit.build(parts, source="none", load="none")


def _pairs(poles):
    """(w0, Q) of each complex pair of a list of complex poles."""
    return sorted((abs(p), abs(p) / (2 * abs(p.real))) for p in poles if p.imag > 1e-9 * abs(p))


def _key(p):
    return (round(p.real, 3), p.imag)


def _ours(circuit):
    n = analyse(circuit, sensitivity=False).numeric["ideal"]
    return n, sorted((complex(p["real"], p["imag"]) for p in n["poles"]), key=_key), n["poles"]


@pytest.mark.parametrize("order", [4, 5])
def test_butterworth_cascade_poles_against_scipy_butter(order):
    # Butterworth: poles on the circle |p| = w0 at angles (2k - 1) pi/(2n) from the jw axis, so
    # Q_k = 1/(2 sin((2k - 1) pi/(2n))) and one real pole for odd n (common practice; the n = 4
    # table values 0.5412 and 1.3066 are in TI, Op Amps for Everyone, active filter design
    # chapter, Butterworth coefficients, from memory). Compared with scipy.signal.butter(analog=True).
    w0 = 2 * math.pi * 1e3
    qs = [1 / (2 * math.sin((2 * k - 1) * math.pi / (2 * order))) for k in range(1, order // 2 + 1)]
    if order == 4:
        assert sorted(round(q, 4) for q in qs) == [0.5412, 1.3066]
    n, ours, raw = _ours(sallen_key_cascade([(w0, q) for q in qs], w0 if order % 2 else None))
    _z, ref, _k = scipy.signal.butter(order, w0, analog=True, output="zpk")
    assert n["order"] == order and n["kind"] == "lowpass" and n["zeros"] == []
    assert len(ours) == order
    for p, r in zip(ours, sorted(ref, key=_key)):
        assert abs(p - r) <= 1e-9 * w0
    for (w, q), (w_ref, q_ref) in zip(_pairs(ours), _pairs(ref)):
        assert w == pytest.approx(w_ref, rel=1e-9) and q == pytest.approx(q_ref, rel=1e-9)
    real = [p for p in raw if p["imag"] == 0]
    assert len(real) == order % 2 and all(p["q"] is None for p in real)  # a real pole: a corner, no Q
    # Butterworth is maximally flat: no peaking, no ripple; its -3 dB point is w0 (common practice)
    assert "peaking_db" not in n and "ripple_db" not in n
    assert n["cutoff_hz"] == pytest.approx(1e3, rel=1e-9)


@pytest.mark.parametrize("order", [3, 4])
def test_bessel_cascade_poles_against_scipy_bessel_delay_normalised(order):
    # scipy.signal.bessel(n, Wn, analog=True, norm='delay'): the Bessel-Thomson response whose group
    # delay at DC is 1/Wn (SciPy reference guide, scipy.signal.bessel; the normalised delay of 1 s
    # is the defining property, Thomson 1949, from memory). The sections are sized from scipy's
    # poles (w0 = |p|, Q = |p|/(2|Re p|)); our poles of the derived circuit must be scipy's, and our
    # exact group delay a1/a0 - b1/b0 must be 1/Wn. The n = 4 Qs 0.5219 and 0.8055 are the
    # published Bessel table (TI, Op Amps for Everyone, Bessel coefficients, from memory).
    wn = 2 * math.pi * 1e3
    _z, ref, _k = scipy.signal.bessel(order, wn, analog=True, norm="delay", output="zpk")
    pairs = _pairs(ref)
    real = [p.real for p in ref if abs(p.imag) <= 1e-9 * abs(p)]
    if order == 4:
        assert sorted(round(q, 4) for _w, q in pairs) == [0.5219, 0.8055]
    n, ours, _raw = _ours(sallen_key_cascade(pairs, -real[0] if real else None))
    for p, r in zip(ours, sorted(ref, key=_key)):
        assert abs(p - r) <= 1e-9 * wn
    assert n["group_delay_dc_s"] == pytest.approx(1 / wn, rel=1e-9)
    assert "peaking_db" not in n


# --- classification, peaking and ripple ---------------------------------------------------------

def _exact(cs):
    return [sympy.Rational(repr(float(c))) for c in cs]


@pytest.mark.parametrize("order, ripple", [(4, 1.0), (5, 0.5)])
def test_chebyshev_ripple_against_scipy_cheby1(order, ripple):
    # scipy.signal.cheby1(n, rp, Wn, analog=True): pass-band ripple rp dB, equiripple (SciPy reference
    # guide). An even order starts at the bottom of the ripple, so it also peaks rp dB above its DC
    # gain; an odd order starts at the top and does not peak (common practice).
    b, a = scipy.signal.cheby1(order, ripple, 1.0, analog=True)
    red = reduce_pair(_exact(b[::-1]), _exact(a[::-1]))
    assert response_kind(red) == "lowpass"
    d = peaking_ripple(red, "lowpass")
    assert d["ripple_db"] == pytest.approx(ripple, rel=1e-6)
    if order % 2:
        assert "peaking_db" not in d
    else:
        assert d["peaking_db"] == pytest.approx(ripple, rel=1e-6)


@pytest.mark.parametrize("q", [0.8, 2.0, 5.0])
def test_second_order_peaking_closed_form(q):
    # Second-order low-pass peak: |H|max/K = Q/sqrt(1 - 1/(4 Q^2)) for Q > 1/sqrt(2) (common practice).
    red = reduce_pair([1], [1, sympy.Rational(repr(1 / q)), 1])
    d = peaking_ripple(red, response_kind(red))
    assert d["peaking_db"] == pytest.approx(20 * math.log10(q / math.sqrt(1 - 1 / (4 * q * q))), rel=1e-9)


@pytest.mark.parametrize("num, den, kind", [
    ([1], [1, 1], "lowpass"), ([0, 1], [1, 1], "highpass"), ([0, 1], [1, 1, 1], "bandpass"),
    ([1, -1], [1, 1], "allpass"), ([1, -1, 1], [1, 1, 1], "allpass"), ([1, 0, 1], [1, 1, 1], "notch"),
    ([1, sympy.Rational(1, 10)], [1, 1], "lowpass"),  # a lag network: HF floor 20 dB down
    ([1, sympy.Rational(9, 10)], [1, 1], "general"),  # a shelf of under 1 dB
    ([1], [0, 1], "general"),  # an integrator: a pole at s = 0
])
def test_kind_at_the_values(num, den, kind):
    # Standard second-order forms (Schaumann & Van Valkenburg, REFERENCES.md) and first-order ones
    # (common practice); the 3 dB level rule is README "JSON output", the response at the values.
    assert response_kind(reduce_pair(num, den)) == kind


def test_root_conventions_and_group_delay_of_a_first_order():
    # RC low-pass 1/(1 + sRC): one real pole at -1/(RC), group delay RC at DC (common practice,
    # d(atan wRC)/dw at w = 0).
    r, c = sympy.Rational(4700), sympy.Rational(22, 10**9)
    red = reduce_pair([1], [1, r * c])
    (p,) = root_list(red.den)
    assert p["imag"] == 0 and p["q"] is None and p["real"] == pytest.approx(-1 / float(r * c), rel=1e-12)
    assert group_delay_dc(red) == pytest.approx(float(r * c), rel=1e-15)
    a = analyse(catalogue.build("rc-lowpass"), sensitivity=False)
    assert a.numeric["ideal"]["group_delay_dc_s"] == pytest.approx(4700 * 22e-9, rel=1e-12)


# --- cutoff sensitivity by the implicit-function derivative --------------------------------------

def test_implicit_cutoff_sensitivity_against_central_differences():
    # The RC ladder (third order, no closed-form cutoff): the exact implicit derivative against the old
    # central difference in log x (computed regression comparison) and the scaling sum rules
    # sum_R = sum_C = -1 (Schaumann & Van Valkenburg, REFERENCES.md "Sensitivity and tolerances").
    a = analyse(catalogue.build("rc-ladder"))
    values = a.circuit.values()
    for view in ("loaded", "ideal"):
        h = getattr(a, view).transfer
        row = a.numeric[view]["sensitivity"]["cutoff"]
        for x in sorted(h.free_symbols() - {sympy.Symbol("s")}, key=str):
            fd = numeric_sensitivity(lambda v, x=x: numeric_cutoff(h, {**values, x: sympy.Rational(repr(v))}),
                                     float(values[x]))
            assert row[x.name] == pytest.approx(fd, abs=1e-6)
        assert sum(v for k, v in row.items() if k.startswith("R")) == pytest.approx(-1, abs=1e-12)
        assert sum(v for k, v in row.items() if k.startswith("C")) == pytest.approx(-1, abs=1e-12)


@pytest.mark.parametrize("name", ["rc-lowpass", "sallen-key-lowpass", "sallen-key-highpass"])
def test_implicit_cutoff_sensitivity_against_the_closed_form(name):
    # First and second order: the closed-form cutoff sensitivities (chain rule through w0 and Q,
    # REFERENCES.md "Second-order low-pass -3 dB frequency") against the implicit derivative.
    a = analyse(catalogue.build(name))
    values = a.circuit.values()
    for view in ("loaded", "ideal"):
        n = a.numeric[view]
        closed = n["sensitivity"]["cutoff"]
        implicit = cutoff_sensitivities(getattr(a, view).transfer, values, 2 * math.pi * n["cutoff_hz"])
        assert set(implicit) == set(closed)
        for k in closed:
            assert implicit[k] == pytest.approx(closed[k], abs=1e-9)


def test_a_finite_notch_depth_is_printed_in_db(tmp_path):
    # The text report of the 1 % mismatched twin-T names its depth in dB, not "infinite".
    from symfilt.model.circuit_file import circuit_to_text

    f = tmp_path / "twin.toml"
    f.write_text(circuit_to_text(twin_t("50", "100k", R3=5050.0)), encoding="utf-8")
    text = CliRunner().invoke(cli, ["derive", str(f)]).output
    n = analyse(twin_t("50", "100k", R3=5050.0), sensitivity=False).numeric
    line = next(x for x in text.splitlines() if x.strip().startswith("notch depth"))
    assert f"loaded {n['loaded']['notch_depth_db']:.2f} dB" in line and "infinite" not in line
