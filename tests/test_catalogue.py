"""The catalogue's circuits against published formulas, each re-derived here by hand.

Every formula used is first checked against an independent nodal derivation
written out in this file (KCL at each node, solved by sympy), then symfilt's
derivation of the catalogue circuit is compared with both. Sources are named
beside each check; see tests/REFERENCES.md.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import sympy
from scipy.optimize import brentq

from helpers import same, solve_nodes

from symfilt import catalogue
from symfilt.analysis.stage import analyse, standard_form
from symfilt.model.circuit_file import circuit_to_text, load_circuit, parse_circuit_text
from symfilt.errors import UsageError
from symfilt.analysis.network import NetworkFunction, derive

s = sympy.Symbol("s")
pos = lambda names: sympy.symbols(names, positive=True)
R, C, K = pos("R C K")
R1, R2, R3, R4, R5, R6, R7 = pos("R1 R2 R3 R4 R5 R6 R7")
C1, C2, C3, Rf, Rg = pos("C1 C2 C3 Rf Rg")
R_s, R_L = pos("R_s R_L")

# (order, kind) of each entry's ideal transfer function at its default values
EXPECTED_KIND = {
    "rc-lowpass": (1, "lowpass"), "rc-highpass": (1, "highpass"), "inverting-lowpass": (1, "lowpass"),
    "noninverting-lowpass": (1, "lowpass"), "sallen-key-lowpass": (2, "lowpass"),
    "mfb-lowpass": (2, "lowpass"), "sallen-key-highpass": (2, "highpass"),
    "sallen-key-lowpass-gain": (2, "lowpass"), "mfb-bandpass": (2, "bandpass"),
    "twin-t-notch": (3, "general"), "rc-ladder": (3, "general"), "state-variable": (2, "lowpass"),
    "adc-driver": (2, "lowpass"),
    # tied R, R, R/2 and C, C, 2C: the second-order notch (REFERENCES.md, twin-T)
    "twin-t-notch-tied": (2, "notch"),
}


def ideal(name, **values):
    """symfilt's ideal transfer function of a catalogue circuit with symbolic parts."""
    return derive(catalogue.build(name, **values)).ideal()


def cutoff_hz_numeric(h_expr, values, passband):
    """-3 dB point by brentq on |H(j 2 pi f)|, independent of symfilt's cutoff code."""
    f = sympy.lambdify(s, h_expr.subs(values), "numpy")
    g = lambda hz: abs(f(2j * math.pi * hz)) - abs(passband) / math.sqrt(2)
    grid = np.geomspace(1, 1e7, 2000)
    vals = [g(x) for x in grid]
    for a, b, va, vb in zip(grid, grid[1:], vals, vals[1:]):
        if va * vb < 0:
            return brentq(g, a, b, xtol=1e-12, rtol=1e-14)
    raise AssertionError("no -3 dB crossing")


# --- every entry ---------------------------------------------------------------------

def test_every_entry_is_listed_with_its_kind():
    assert set(catalogue.names()) == set(EXPECTED_KIND)


@pytest.mark.parametrize("name", sorted(EXPECTED_KIND))
def test_every_entry_derives(name):
    a = analyse(catalogue.build(name))
    assert (a.ideal.transfer.order(), a.ideal.form.kind) == EXPECTED_KIND[name]
    assert a.numeric["ideal"], name
    # RC circuits with ideal op-amps: sum over resistors of S_R^w0 = -1, over capacitors -1, for Q 0
    # (Schaumann & Van Valkenburg, Design of Analog Filters, sensitivity chapter, from memory).
    assert all(r.holds for r in a.rules), (name, a.rules)


@pytest.mark.parametrize("name", sorted(EXPECTED_KIND))
def test_every_entry_round_trips_through_a_circuit_file(name, tmp_path, run_cli):
    built = catalogue.build(name)
    assert parse_circuit_text(circuit_to_text(built)) == built
    path = tmp_path / f"{name}.toml"
    code, _, err = run_cli("catalogue", name, "--write", str(path))
    assert code == 0, err
    assert load_circuit(path) == built


# --- Sallen-Key high-pass ---------------------------------------------------------------

def sallen_key_highpass_by_hand():
    # C1 in->a, C2 a->b, R1 a->out, R2 b->ground, unity follower: V(out) = V(b).
    vi, va, vb = sympy.symbols("vi va vb")
    eqs = [(vi - va) * s * C1 - (va - vb) * s * C2 - (va - vb) / R1,   # KCL at a (out = b)
           (va - vb) * s * C2 - vb / R2]                                 # KCL at b
    return solve_nodes(eqs, [va, vb], vb).subs(vi, 1)


def test_sallen_key_highpass_w0_and_q():
    # Unity-gain Sallen-Key high-pass, R1 the feedback resistor (a->out), R2 to ground:
    # w0 = 1/sqrt(R1 R2 C1 C2), Q = sqrt(R1 R2 C1 C2) / (R1 (C1 + C2)).
    # TI application report SLOA024, Analysis of the Sallen-Key Architecture (from memory),
    # re-derived here by hand.
    w0 = 1 / sympy.sqrt(R1 * R2 * C1 * C2)
    q = sympy.sqrt(R1 * R2 * C1 * C2) / (R1 * (C1 + C2))
    by_hand = sallen_key_highpass_by_hand()
    assert same(by_hand, (s / w0) ** 2 / (1 + s / (w0 * q) + (s / w0) ** 2))
    h = ideal("sallen-key-highpass", C1=None, C2=None, R1=None, R2=None)
    assert same(h.as_expr(), by_hand)
    form = standard_form(h)
    assert form.kind == "highpass" and form.gain == 1
    assert same(form.w0, w0) and same(form.q, q)


def test_sallen_key_highpass_worked_numbers():
    # C1 = C2 = 15n, R1 = 5.1k, R2 = 10k: f0 = 1485.74 Hz, Q = 0.700140, cutoff 1500.67 Hz
    # (REFERENCES.md worked numbers, computed regression values, closed form and numeric root).
    a = analyse(catalogue.build("sallen-key-highpass"), sensitivity=False)
    n = a.numeric["ideal"]
    assert n["f0_hz"] == pytest.approx(1485.74, abs=0.01)
    assert n["q"] == pytest.approx(0.700140, abs=1e-6)
    assert n["cutoff_hz"] == pytest.approx(1500.67, abs=0.01)
    hz = cutoff_hz_numeric(a.ideal.transfer.as_expr(), a.circuit.values(), 1)
    assert hz == pytest.approx(n["cutoff_hz"], rel=1e-9)


def test_sallen_key_highpass_source_resistance_lowers_the_hf_gain():
    # With R_s, the high-frequency gain becomes R2/(R2 + R_s) (REFERENCES.md, cautions;
    # at high frequency the capacitors are shorts and R_s, R2 divide the input).
    h = derive(catalogue.build("sallen-key-highpass", C1=None, C2=None, R1=None, R2=None,
                               source="symbol", load="symbol"))
    assert same(h.hf_gain(), R2 / (R2 + R_s))


# --- equal-component Sallen-Key low-pass with gain --------------------------------------

def test_equal_component_sallen_key_q_is_one_over_three_minus_k():
    # Equal R and C, gain K = 1 + Rf/Rg: w0 = 1/(RC), Q = 1/(3 - K), DC gain K.
    # Horowitz & Hill, The Art of Electronics, 3rd ed., ch. 6 (from memory); by hand below.
    vi, va, vb, vo = sympy.symbols("vi va vb vo")
    # R1 in->a, R2 a->b, C1 a->out, C2 b->ground; op-amp makes V(out) = K V(b).
    eqs = [(vi - va) / R - (va - vb) / R - (va - vo) * s * C,
           (va - vb) / R - vb * s * C,
           vo - K * vb]
    by_hand = solve_nodes(eqs, [va, vb, vo], vo).subs(vi, 1)
    w0, q = 1 / (R * C), 1 / (3 - K)
    assert same(by_hand, K / (1 + s / (w0 * q) + (s / w0) ** 2))
    h = ideal("sallen-key-lowpass-gain", R=None, C=None, Rf=None, Rg=None)
    h_equal = h.as_expr().subs({R1: R, R2: R, C1: C, C2: C})
    assert same(h_equal, by_hand.subs(K, 1 + Rf / Rg))
    form = standard_form(NetworkFunction.from_expr(h_equal))
    assert same(form.w0, w0) and same(form.q, q.subs(K, 1 + Rf / Rg)) and same(form.gain, 1 + Rf / Rg)


def test_equal_component_sallen_key_worked_numbers():
    # R = 8.2k, C = 6.8n, K = 1.56: f0 = 2854.29 Hz, Q = 0.694444, cutoff 2802.26 Hz (REFERENCES.md worked numbers,
    # computed regression values).
    a = analyse(catalogue.build("sallen-key-lowpass-gain"), sensitivity=False)
    n = a.numeric["ideal"]
    assert n["f0_hz"] == pytest.approx(2854.29, abs=0.01)
    assert n["q"] == pytest.approx(0.694444, abs=1e-6)
    assert n["cutoff_hz"] == pytest.approx(2802.26, abs=0.01)
    assert n["dc_gain"] == pytest.approx(1.56, abs=1e-12)


# --- multiple-feedback band-pass -------------------------------------------------------------

def mfb_bandpass_by_hand():
    # R1 in->x, R2 x->ground, C1 x->out, C2 x->n, R3 n->out; op-amp + at ground holds V(n) = 0.
    vi, vx, vo = sympy.symbols("vi vx vo")
    eqs = [(vi - vx) / R1 - vx / R2 - (vx - vo) * s * C1 - vx * s * C2,   # KCL at x
           vx * s * C2 + vo / R3]                                           # KCL at n (V = 0)
    return solve_nodes(eqs, [vx, vo], vo).subs(vi, 1)


def test_mfb_bandpass_centre_frequency_gain_and_q():
    # MFB band-pass, equal capacitors C (TI, Op Amps for Everyone, active-filter chapter, from memory;
    # their R1 input, R2 feedback, R3 to ground are our R1, R3, R2):
    # f_m = 1/(2 pi C) sqrt((R1 + R2)/(R1 R2 R3)), gain at f_m A_m = -R3/(2 R1), Q = pi f_m R3 C.
    # The general-capacitor forms are re-derived by hand first.
    by_hand = mfb_bandpass_by_hand()
    w0 = sympy.sqrt((R1 + R2) / (R1 * R2 * R3 * C1 * C2))
    q = sympy.sqrt(R3 * C1 * C2 * (R1 + R2) / (R1 * R2)) / (C1 + C2)
    k = -R3 * C2 / (R1 * (C1 + C2))
    assert same(by_hand, k * (s / (w0 * q)) / (1 + s / (w0 * q) + (s / w0) ** 2))
    h = ideal("mfb-bandpass", R1=None, R2=None, R3=None, C1=None, C2=None)
    assert same(h.as_expr(), by_hand)
    form = standard_form(h)
    assert form.kind == "bandpass"
    eq = {C1: C, C2: C}
    f_m = sympy.sqrt((R1 + R2) / (R1 * R2 * R3)) / (2 * sympy.pi * C)
    assert same(form.w0.subs(eq) / (2 * sympy.pi), f_m)
    assert same(form.gain.subs(eq), -R3 / (2 * R1))
    assert same(form.q.subs(eq), sympy.pi * f_m * R3 * C)


def test_mfb_bandpass_gain_at_centre_is_k_and_inverted():
    a = analyse(catalogue.build("mfb-bandpass"), sensitivity=False)
    values = a.circuit.values()
    w0 = 2 * math.pi * a.numeric["ideal"]["f0_hz"]
    h = complex(a.ideal.transfer.evaluate(values, [1j * w0])[0])
    k = float(a.ideal.form.gain.xreplace(values))
    assert h.real == pytest.approx(k, rel=1e-12) and abs(h.imag) < 1e-9 * abs(k)
    assert k == pytest.approx(-100e3 / (2 * 22e3), rel=1e-12)  # -R3/(2 R1) at the defaults (C1 = C2)


# --- twin-T notch ------------------------------------------------------------------------------

def test_twin_t_has_an_exact_zero_at_one_over_rc():
    # Twin-T with R, R, R/2 and C, C, 2C: notch at f0 = 1/(2 pi R C) (common practice).
    # Checked exactly, |H(j w0)| = 0, with the source and load resistances kept as symbols.
    h = derive(catalogue.build("twin-t-notch", R=None, C=None, source="symbol", load="symbol"))
    balanced = {R3: R / 2, C3: 2 * C, R1: R, R2: R, C1: C, C2: C}
    num = sympy.expand(h.num.xreplace(balanced))
    assert num != 0
    assert sympy.simplify(num.subs(s, sympy.I / (R * C))) == 0
    # and the default parts (R = 10k, C = 15n) are balanced: zero at exactly 1/(R C)
    d = catalogue.build("twin-t-notch")
    hd = derive(d).subs(d.values())
    w0 = sympy.Rational(1) / (sympy.Rational(10**4) * sympy.Rational(15, 10**9))
    assert sympy.expand(hd.num.subs(s, sympy.I * w0)) == 0
    assert sympy.expand(hd.den.subs(s, sympy.I * w0)) != 0


def test_twin_t_balanced_transfer_function():
    # Unloaded balanced twin-T: H = (1 + (sRC)^2)/(1 + 4 sRC + (sRC)^2), a notch with Q = 1/4
    # (common practice, from memory), re-derived by hand:
    vi, va, vm, vo = sympy.symbols("vi va vm vo")
    # R1 in->a, R2 a->out, C3 (2C) a->ground; C1 in->m, C2 m->out, R3 (R/2) m->ground; open output.
    eqs = [(vi - va) / R - (va - vo) / R - va * s * 2 * C,
           (vi - vm) * s * C - (vm - vo) * s * C - vm * 2 / R,
           (va - vo) / R + (vm - vo) * s * C]
    by_hand = solve_nodes(eqs, [va, vm, vo], vo).subs(vi, 1)
    x = s * R * C
    assert same(by_hand, (1 + x**2) / (1 + 4 * x + x**2))
    h = ideal("twin-t-notch", R=None, C=None)
    balanced = {R3: R / 2, C3: 2 * C, R1: R, R2: R, C1: C, C2: C}
    hb = NetworkFunction.from_expr(h.as_expr().xreplace(balanced))
    assert same(hb.as_expr(), by_hand)
    form = standard_form(hb)
    assert form.kind == "notch" and same(form.w0, 1 / (R * C)) and form.q == sympy.Rational(1, 4)


# --- RC ladder ------------------------------------------------------------------------------

def ladder_by_chain_matrices(n):
    """Open-circuit voltage ratio of n equal RC sections from the product of their ABCD matrices."""
    series = sympy.Matrix([[1, R], [0, 1]])
    shunt = sympy.Matrix([[1, 0], [s * C, 1]])
    m = sympy.eye(2)
    for _ in range(n):
        m = m * series * shunt
    return sympy.cancel(1 / m[0, 0])   # V2/V1 with I2 = 0 is 1/A


@pytest.mark.parametrize("n", [1, 2, 3, 4])
def test_rc_ladder_matches_the_chain_matrix_product(n):
    # Two sections: 1/(1 + 3 sRC + (sRC)^2); three: 1/(1 + 6 sRC + 5 (sRC)^2 + (sRC)^3)
    # (common practice, from memory), both checked here against the chain-matrix product.
    x = s * R * C
    known = {2: 1 / (1 + 3 * x + x**2), 3: 1 / (1 + 6 * x + 5 * x**2 + x**3)}
    by_chain = ladder_by_chain_matrices(n)
    if n in known:
        assert same(by_chain, known[n])
    c = catalogue.build("rc-ladder", n=n, R=None, C=None)
    assert [p.name for p in c.parts] == [f"{k}{i}" for i in range(1, n + 1) for k in ("R", "C")]
    h = derive(c).ideal().as_expr()
    equal = {sympy.Symbol(f"R{i}", positive=True): R for i in range(1, n + 1)}
    equal.update({sympy.Symbol(f"C{i}", positive=True): C for i in range(1, n + 1)})
    assert same(h.xreplace(equal), by_chain)


def test_rc_ladder_cuts_off_far_below_buffered_sections():
    # A passive ladder is not a cascade of buffered sections: its cutoff is far lower
    # (REFERENCES.md, cautions). Two buffered sections: (1 + (w/wc1)^2) = sqrt(2), so
    # w = sqrt(sqrt(2) - 1)/(RC); the two-section ladder (Q = 1/3) is lower still.
    a = analyse(catalogue.build("rc-ladder", n=2, source="none", load="none"), sensitivity=False)
    rc = 10e3 * 10e-9
    buffered_hz = math.sqrt(math.sqrt(2) - 1) / rc / (2 * math.pi)
    ladder_hz = a.numeric["ideal"]["cutoff_hz"]
    assert ladder_hz < 0.6 * buffered_hz
    assert ladder_hz == pytest.approx(cutoff_hz_numeric(a.ideal.transfer.as_expr(), a.circuit.values(), 1), rel=1e-9)


@pytest.mark.parametrize("n", [0, 13, "two", 2.5])
def test_rc_ladder_refuses_a_bad_section_count(n):
    with pytest.raises(UsageError, match="rc-ladder n"):
        catalogue.build("rc-ladder", n=n)


# --- state-variable ---------------------------------------------------------------------------

def state_variable_by_hand():
    # U1: R1 in->n1, R2 lp->n1, R3 hp->n1, + input at p1 = bp R5/(R4 + R5), output hp.
    # U2, U3: inverting integrators, bp = -hp/(s R6 C1), lp = -bp/(s R7 C2).
    vi, hp, bp, lp = sympy.symbols("vi hp bp lp")
    vp = bp * R5 / (R4 + R5)
    eqs = [(vi - vp) / R1 + (lp - vp) / R2 + (hp - vp) / R3,
           bp + hp / (s * R6 * C1),
           lp + bp / (s * R7 * C2)]
    sol = sympy.solve(eqs, [hp, bp, lp], dict=True)[0]
    return {k: sympy.cancel(sol[v].subs(vi, 1)) for k, v in (("hp", hp), ("bp", bp), ("lp", lp))}


SV_PARTS = dict(R1=None, R2=None, R3=None, R4=None, R5=None, R6=None, R7=None, C1=None, C2=None)


@pytest.mark.parametrize("output", ["lp", "bp", "hp"])
def test_state_variable_outputs_match_a_hand_derivation(output):
    by_hand = state_variable_by_hand()[output]
    h = ideal("state-variable", output=output, **SV_PARTS)
    assert same(h.as_expr(), by_hand)
    assert standard_form(h).kind == {"lp": "lowpass", "bp": "bandpass", "hp": "highpass"}[output]


def test_state_variable_equal_component_w0_and_q():
    # Three-op-amp state-variable filter with equal R1 = R2 = R3, R6 = R7 = R, C1 = C2 = C:
    # w0 = 1/(RC), Q = (1 + R4/R5)/3; low-pass and high-pass gains -1, band-pass gain at w0 = Q.
    # Kerwin, Huelsman & Newcomb, IEEE J. Solid-State Circuits, 1967 (from memory), re-derived
    # by hand in state_variable_by_hand.
    eq = {R2: R1, R3: R1, R6: R, R7: R, C1: C, C2: C}
    w0, q = 1 / (R * C), (1 + R4 / R5) / 3
    expected_gain = {"lp": -1, "hp": -1, "bp": q}
    for output, by_hand in state_variable_by_hand().items():
        h = NetworkFunction.from_expr(ideal("state-variable", output=output, **SV_PARTS).as_expr().xreplace(eq))
        assert same(h.as_expr(), by_hand.xreplace(eq))
        form = standard_form(h)
        assert same(form.w0, w0) and same(form.q, q) and same(form.gain, expected_gain[output]), output


def test_state_variable_default_values():
    # Defaults: R6 = R7 = 10k, C1 = C2 = 16n, R4 = 11k, R5 = 10k: f0 = 1/(2 pi 10k 16n), Q = 0.7.
    a = analyse(catalogue.build("state-variable"), sensitivity=False)
    assert a.numeric["ideal"]["f0_hz"] == pytest.approx(1 / (2 * math.pi * 10e3 * 16e-9), rel=1e-12)
    assert a.numeric["ideal"]["q"] == pytest.approx((1 + 11 / 10) / 3, rel=1e-12)


def test_state_variable_refuses_an_unknown_output():
    with pytest.raises(UsageError, match="use one of lp, bp, hp"):
        catalogue.build("state-variable", output="notch")
