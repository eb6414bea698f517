"""The derivation engine against published formulas and worked numbers.

Every check names its source beside it (see tests/REFERENCES.md). The
circuits are built here, part by part, with their node connections written out, so
that the tests do not lean on the catalogue; one test then checks that the
catalogue's circuits are the same circuits.

Expressions are compared exactly, by ``sympy.cancel(a - b) == 0``; cutoffs are
found numerically with ``scipy.optimize.brentq`` on the derived H(s), never with a
symfilt cutoff function.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import sympy
from scipy.optimize import brentq

from helpers import (close_to, mfb_lowpass, parallel, rc_highpass, rc_lowpass, same, sallen_key_highpass,
                     sallen_key_lowpass, sallen_key_lowpass_gain, w0_q_squared)

from symfilt import catalogue
from symfilt.model.circuit import Circuit, Part
from symfilt.analysis.network import derive

s = sympy.Symbol("s")
R1, R2, R3, C1, C2, L1, Rf, Rg = sympy.symbols("R1 R2 R3 C1 C2 L1 Rf Rg", positive=True)
R_s, R_L, C_L = sympy.symbols("R_s R_L C_L", positive=True)
A_U1 = sympy.Symbol("A_U1", positive=True)


# --- circuits, with their connections -------------------------------------------

def inverting_lowpass(model="ideal", **fixtures) -> Circuit:
    # R1 from in to n, R2 and C1 both from n to out, op-amp + at ground, - at n, output at out.
    return Circuit.build([Part.resistor("R1", "in", "n"), Part.resistor("R2", "n", "out"),
                          Part.capacitor("C1", "n", "out"), Part.opamp("U1", "0", "n", "out", model=model)],
                         **fixtures)


def inverting_amplifier(model="gain", **fixtures) -> Circuit:
    # R1 from in to n, R2 from n to out, op-amp + at ground, - at n, output at out.
    return Circuit.build([Part.resistor("R1", "in", "n"), Part.resistor("R2", "n", "out"),
                          Part.opamp("U1", "0", "n", "out", model=model)], **fixtures)


def lc_lowpass(**fixtures) -> Circuit:
    # L1 from in to out, C1 from out to ground.
    return Circuit.build([Part.inductor("L1", "in", "out"), Part.capacitor("C1", "out", "0")], **fixtures)


# --- helpers for the numeric checks ------------------------------------------------

def numeric_response(h, values):
    """H(jw) as a numpy function of w (rad/s), from the derived H with exact values put in."""
    hv = h.subs(values)
    assert hv.free_symbols() <= {s}, hv.free_symbols()
    num = [complex(c) for c in sympy.Poly(hv.num, s).all_coeffs()]
    den = [complex(c) for c in sympy.Poly(hv.den, s).all_coeffs()]
    return lambda w: np.polyval(num, 1j * np.asarray(w, dtype=float)) / np.polyval(den, 1j * np.asarray(w, dtype=float))


def cutoff_hz(h, values, passband: str) -> float:
    """The -3 dB frequency relative to the passband gain, by a numeric root of |H(jw)|^2 = |K|^2 / 2."""
    hv = h.subs(values)
    ref = hv.dc_gain() if passband == "low" else hv.hf_gain()
    ref2 = float(abs(ref)) ** 2
    resp = numeric_response(h, values)
    f = lambda w: abs(resp(w)) ** 2 - ref2 / 2  # noqa: E731
    lo, hi = 1.0, 1e8
    assert f(lo) * f(hi) < 0
    w = brentq(f, lo, hi, xtol=1e-12, rtol=1e-14, maxiter=500)
    return w / (2 * math.pi)


V = sympy.Rational


def val(text: str) -> sympy.Rational:
    """Exact value of a component written with an SI prefix (k, n)."""
    scale = {"k": 10**3, "n": V(1, 10**9)}
    return V(text[:-1]) * scale[text[-1]] if text[-1] in scale else V(text)


# --- first order, passive ------------------------------------------------------------

def test_rc_lowpass_loaded_transfer():
    # Thevenin's theorem; common practice. The capacitor sees Rth = (R_s + R1) || R_L,
    # the open-circuit voltage is R_L / (R_s + R1 + R_L) of the source.
    h = derive(rc_lowpass(source="symbol", load="symbol"))
    k = R_L / (R_s + R1 + R_L)
    rth = parallel(R_s + R1, R_L)
    assert same(h.as_expr(), k / (1 + s * C1 * rth))
    assert same(h.dc_gain(), k)
    assert h.hf_gain() == 0
    assert h.order() == 1
    (pole,) = sympy.roots(sympy.Poly(h.den, s)).keys()
    assert same(pole, -1 / (C1 * rth))


def test_rc_lowpass_ideal():
    # Horowitz & Hill, The Art of Electronics, 3rd ed., ch. 1, RC filters (from memory): H = 1/(1 + sRC).
    h = derive(rc_lowpass(source="symbol", load="symbol", load_capacitance="symbol")).ideal()
    assert same(h.as_expr(), 1 / (1 + s * R1 * C1))
    assert same(derive(rc_lowpass()).as_expr(), 1 / (1 + s * R1 * C1))


def test_rc_lowpass_load_capacitance_adds_to_c():
    # Common practice: a capacitive load at the output is in parallel with the shunt capacitor.
    h = derive(rc_lowpass(source="symbol", load="symbol", load_capacitance="symbol"))
    k = R_L / (R_s + R1 + R_L)
    assert same(h.as_expr(), k / (1 + s * (C1 + C_L) * parallel(R_s + R1, R_L)))


def test_rc_highpass_loaded_transfer():
    # Thevenin's theorem; common practice. The capacitor sees R_s + (R1 || R_L);
    # the passband (high-frequency) gain is (R1 || R_L) / (R_s + R1 || R_L), DC gain 0.
    h = derive(rc_highpass(source="symbol", load="symbol"))
    rp = parallel(R1, R_L)
    assert same(h.as_expr(), s * C1 * rp / (1 + s * C1 * (R_s + rp)))
    assert h.dc_gain() == 0
    assert same(h.hf_gain(), rp / (R_s + rp))
    (pole,) = sympy.roots(sympy.Poly(h.den, s)).keys()
    assert same(pole, -1 / (C1 * (R_s + rp)))
    # Horowitz & Hill, 3rd ed., ch. 1 (from memory): the stage alone is sRC / (1 + sRC).
    assert same(h.ideal().as_expr(), s * R1 * C1 / (1 + s * R1 * C1))


# REFERENCES.md worked numbers, computed regression values (closed form and a numeric root, computed two ways there).
@pytest.mark.parametrize("fixtures, expected", [
    ({}, "1539.22"),
    ({"source": "600"}, "1364.97"),
    ({"load": "10k"}, "2262.65"),
    ({"source": "600", "load": "10k"}, "2088.40"),
])
def test_rc_lowpass_worked_cutoffs(fixtures, expected):
    # R1 = 4.7k, C1 = 22n; cutoff relative to the (loaded) DC gain.
    c = rc_lowpass(**fixtures)
    h = derive(rc_lowpass(**{k: "symbol" for k in fixtures}))
    values = {R1: val("4.7k"), C1: val("22n")}
    values.update({sym: c.values()[sym] for sym in c.values()})
    assert close_to(cutoff_hz(h, values, "low"), expected)


def test_rc_lowpass_worked_dc_gain():
    # REFERENCES.md worked numbers, computed regression values: R_s = 600, R_L = 10k gives DC gain 0.653595.
    h = derive(rc_lowpass(source="symbol", load="symbol"))
    g = h.subs({R1: val("4.7k"), C1: val("22n"), R_s: 600, R_L: val("10k")}).dc_gain()
    assert close_to(float(g), "0.653595")


def test_rc_highpass_worked_numbers():
    # REFERENCES.md worked numbers, computed regression values: R1 = 3.9k, C1 = 68n, R_s = 600, R_L = 10k:
    # HF gain 0.823828, cutoff 687.223 Hz (relative to the HF gain).
    h = derive(rc_highpass(source="symbol", load="symbol"))
    values = {R1: val("3.9k"), C1: val("68n"), R_s: 600, R_L: val("10k")}
    assert close_to(float(h.subs(values).hf_gain()), "0.823828")
    assert close_to(cutoff_hz(h, values, "high"), "687.223")


def test_lc_lowpass_against_hand_formula():
    # Common practice (voltage divider): Z_series = R_s + sL, Z_shunt = R_L || 1/(sC);
    # H = Z_shunt / (Z_series + Z_shunt) = R_L / (R_L + (R_s + sL)(1 + sC R_L)).
    h = derive(lc_lowpass(source="symbol", load="symbol"))
    assert same(h.as_expr(), R_L / (R_L + (R_s + s * L1) * (1 + s * C1 * R_L)))
    assert h.order() == 2
    # Unloaded, ideal source: 1 / (1 + s^2 L C), w0 = 1/sqrt(LC); common practice.
    assert same(h.ideal().as_expr(), 1 / (1 + s**2 * L1 * C1))


# --- impedances --------------------------------------------------------------------

def test_rc_lowpass_input_impedance():
    # Common practice: the source sees Zin = R1 + (1/(sC1) || R_L).
    z = derive(rc_lowpass(source="symbol", load="symbol"), "zin")
    assert same(z.as_expr(), R1 + parallel(1 / (s * C1), R_L))
    assert R_s not in z.free_symbols()


def test_rc_lowpass_output_impedance():
    # Common practice: with the source set to zero, the load sees Zout = (R_s + R1) || 1/(sC1).
    z = derive(rc_lowpass(source="symbol", load="symbol"), "zout")
    assert same(z.as_expr(), parallel(R_s + R1, 1 / (s * C1)))
    assert R_L not in z.free_symbols()


def test_opamp_stage_output_impedance_is_zero():
    # Common practice: an ideal op-amp output is an ideal voltage source, so Zout = 0.
    for c in (inverting_lowpass(source="symbol", load="symbol"), sallen_key_lowpass(source="symbol", load="symbol"),
              mfb_lowpass(source="symbol", load="symbol")):
        assert derive(c, "zout").as_expr() == 0


def test_input_impedance_into_an_ideal_output_is_zero():
    # Common practice: a node held by an ideal voltage-source output has zero impedance.
    # (a) the input port is the output of an ideal follower: U1 + at a, - and out at in;
    #     R1 a->ground, R2 in->out, R3 out->ground.
    follower = Circuit.build([Part.resistor("R1", "a", "0"), Part.opamp("U1", "a", "in", "in"),
                              Part.resistor("R2", "in", "out"), Part.resistor("R3", "out", "0")], load="symbol")
    assert derive(follower, "zin").as_expr() == 0
    # (b) a vcvs E1 from in to ground copies E1 * V(out), with R1 in->out, R2 out->ground: the KCL at
    #     out gives V(out) = V(in) R2/(R1 + R2), so V(in) (1 - E1 R2/(R1 + R2)) = 0, hence Zin = 0.
    held = Circuit.build([Part.resistor("R1", "in", "out"), Part.resistor("R2", "out", "0"),
                          Part.make("E1", "vcvs", ("in", "0", "out", "0"))])
    assert derive(held, "zin").as_expr() == 0


def test_input_impedance_of_a_follower_is_infinite():
    # Common practice: an ideal op-amp input draws no current, so a follower driven at its + input
    # (U1 + at in, - and out at out, R1 out->ground) has Zin = oo; the function's denominator is 0.
    c = Circuit.build([Part.opamp("U1", "in", "out", "out"), Part.resistor("R1", "out", "0")])
    z = derive(c, "zin")
    assert z.den == 0 and z.num != 0


def test_inverting_stage_input_impedance():
    # Common practice: the inverting input is a virtual ground, so the source sees R1.
    z = derive(inverting_lowpass(source="symbol", load="symbol"), "zin")
    assert same(z.as_expr(), R1)


# --- op-amp stages -------------------------------------------------------------------

def test_inverting_lowpass_ideal_opamp():
    # Common practice (REFERENCES.md): H = -(R2/R1)/(1 + s R2 C1); R_L does not appear; R_s adds to R1.
    h = derive(inverting_lowpass(source="symbol", load="symbol", load_capacitance="symbol"))
    assert R_L not in h.free_symbols() and C_L not in h.free_symbols()
    assert same(h.as_expr(), -(R2 / (R1 + R_s)) / (1 + s * R2 * C1))
    assert same(h.dc_gain(), -R2 / (R1 + R_s))
    assert same(h.ideal().as_expr(), -(R2 / R1) / (1 + s * R2 * C1))


def test_inverting_amplifier_finite_gain():
    # Sedra & Smith, Microelectronic Circuits, ch. 2 (from memory):
    # G = -(R2/R1) / (1 + (1 + R2/R1)/A), exactly, for an op-amp of open-loop gain A.
    h = derive(inverting_amplifier(model="gain", load="symbol"))
    expected = -(R2 / R1) / (1 + (1 + R2 / R1) / A_U1)
    assert same(h.as_expr(), expected)
    assert R_L not in h.free_symbols()
    # ... and tends to -R2/R1 as A -> oo (the engine's limit and sympy's agree).
    assert same(h.limit(A_U1, sympy.oo).as_expr(), -R2 / R1)
    assert same(sympy.limit(h.as_expr(), A_U1, sympy.oo), -R2 / R1)


def test_inverting_amplifier_single_pole_dc():
    # README op-amp model A(s) = A0*2*pi*GBW/(A0*s + 2*pi*GBW): at s = 0 it is A0, so the DC gain is
    # Sedra & Smith's finite-gain result (ch. 2, from memory).
    h = derive(inverting_amplifier(model="single-pole"))
    assert same(h.dc_gain(), -(R2 / R1) / (1 + (1 + R2 / R1) / A_U1))
    # Sedra & Smith, ch. 2 (from memory): closed-loop bandwidth of the inverting amplifier is
    # GBW / (1 + R2/R1) when A0 -> oo. Read the pole off the A0 -> oo limit.
    gbw = sympy.Symbol("GBW_U1", positive=True)
    lim = h.limit(A_U1, sympy.oo)
    (pole,) = sympy.roots(sympy.Poly(lim.den, s)).keys()
    assert same(-pole, 2 * sympy.pi * gbw / (1 + R2 / R1))


def test_unity_sallen_key_lowpass_w0_q():
    # TI SLOA024, Analysis of the Sallen-Key Architecture (from memory):
    # w0 = 1/sqrt(R1 R2 C1 C2), Q = sqrt(R1 R2 C1 C2) / (C2 (R1 + R2)); DC gain 1.
    h = derive(sallen_key_lowpass(source="symbol", load="symbol")).ideal()
    w02, q2 = w0_q_squared(h)
    assert same(w02, 1 / (R1 * R2 * C1 * C2))
    assert same(q2, R1 * R2 * C1 * C2 / (C2 * (R1 + R2)) ** 2)
    assert h.dc_gain() == 1
    # Common practice: with an ideal follower R_L drops out, and R_s adds to R1.
    loaded = derive(sallen_key_lowpass(source="symbol", load="symbol"))
    assert R_L not in loaded.free_symbols()
    assert same(loaded.as_expr(), h.as_expr().subs(R1, R1 + R_s))


def test_unity_sallen_key_lowpass_worked_numbers():
    # REFERENCES.md worked numbers, computed regression values: R1 = 6.8k, R2 = 15k, C1 = 10n, C2 = 3.3n, R_s = 50:
    # f0 = 2733.21 Hz, Q = 0.807574, cutoff 3068.26 Hz.
    h = derive(sallen_key_lowpass(source="symbol"))
    values = {R1: val("6.8k"), R2: val("15k"), C1: val("10n"), C2: val("3.3n"), R_s: 50}
    w02, q2 = w0_q_squared(h.subs(values))
    assert close_to(math.sqrt(float(w02)) / (2 * math.pi), "2733.21")
    assert close_to(math.sqrt(float(q2)), "0.807574")
    assert close_to(cutoff_hz(h, values, "low"), "3068.26")


def test_equal_component_sallen_key_gain():
    # Horowitz & Hill, 3rd ed., ch. 6, active filters (from memory): equal R and C, K = 1 + Rf/Rg,
    # w0 = 1/(RC), Q = 1/(3 - K), DC gain K.
    R, C = sympy.symbols("R C", positive=True)
    h = derive(sallen_key_lowpass_gain())
    h_eq = h.subs({R1: R, R2: R, C1: C, C2: C})
    w02, q2 = w0_q_squared(h_eq)
    k = 1 + Rf / Rg
    assert same(w02, 1 / (R * C) ** 2)
    assert same(q2, 1 / (3 - k) ** 2)
    assert same(h_eq.dc_gain(), k)


def test_equal_component_sallen_key_worked_numbers():
    # REFERENCES.md worked numbers, computed regression values: R = 8.2k, C = 6.8n, K = 1.56 (Rf = 5.6k, Rg = 10k):
    # f0 = 2854.29 Hz, Q = 0.694444, cutoff 2802.26 Hz.
    h = derive(sallen_key_lowpass_gain())
    values = {R1: val("8.2k"), R2: val("8.2k"), C1: val("6.8n"), C2: val("6.8n"), Rf: val("5.6k"), Rg: val("10k")}
    w02, q2 = w0_q_squared(h.subs(values))
    assert close_to(math.sqrt(float(w02)) / (2 * math.pi), "2854.29")
    assert close_to(math.sqrt(float(q2)), "0.694444")
    assert close_to(cutoff_hz(h, values, "low"), "2802.26")


def test_unity_sallen_key_highpass_worked_numbers():
    # REFERENCES.md worked numbers (computed regression values):
    # C1 = C2 = 15n, R1 = 5.1k (feedback), R2 = 10k (to ground):
    # f0 = 1485.74 Hz, Q = 0.700140, cutoff 1500.67 Hz; HF gain 1 (unity follower).
    h = derive(sallen_key_highpass())
    values = {C1: val("15n"), C2: val("15n"), R1: val("5.1k"), R2: val("10k")}
    w02, q2 = w0_q_squared(h.subs(values))
    assert close_to(math.sqrt(float(w02)) / (2 * math.pi), "1485.74")
    assert close_to(math.sqrt(float(q2)), "0.700140")
    assert h.hf_gain() == 1 and h.dc_gain() == 0
    assert close_to(cutoff_hz(h, values, "high"), "1500.67")


def test_sallen_key_highpass_source_resistance():
    # REFERENCES.md cautions: with R_s, the high-frequency gain becomes R2/(R2 + R_s)
    # (at high frequency the capacitors are shorts: R_s and R2 form a divider, R1 sees the output
    # equal to V(b) and carries no current). Common practice.
    h = derive(sallen_key_highpass(source="symbol"))
    assert same(h.hf_gain(), R2 / (R2 + R_s))


def test_mfb_lowpass():
    # TI, Op Amps for Everyone, active-filter chapter (from memory):
    # H(0) = -R2/R1, w0 = 1/sqrt(R2 R3 C1 C2), Q = sqrt(R2 R3 C1 C2) / (C2 (R2 + R3 + R2 R3 / R1)).
    h = derive(mfb_lowpass(source="symbol", load="symbol")).ideal()
    assert same(h.dc_gain(), -R2 / R1)
    w02, q2 = w0_q_squared(h)
    assert same(w02, 1 / (R2 * R3 * C1 * C2))
    assert same(q2, R2 * R3 * C1 * C2 / (C2 * (R2 + R3 + R2 * R3 / R1)) ** 2)
    # Common practice: R_s is in series with R1 (the source drives R1 alone); R_L drops out.
    loaded = derive(mfb_lowpass(source="symbol", load="symbol"))
    assert R_L not in loaded.free_symbols()
    assert same(loaded.as_expr(), h.as_expr().subs(R1, R1 + R_s))


def test_mfb_lowpass_worked_numbers():
    # REFERENCES.md worked numbers (computed regression values):
    # R1 = 5.6k, R2 = 12k, R3 = 8.2k, C1 = 47n, C2 = 2.2n, R_s = 600:
    # f0 = 1577.84 Hz, Q = 1.27109, DC gain -1.93548, cutoff 2178.21 Hz.
    h = derive(mfb_lowpass(source="symbol"))
    values = {R1: val("5.6k"), R2: val("12k"), R3: val("8.2k"), C1: val("47n"), C2: val("2.2n"), R_s: 600}
    hv = h.subs(values)
    w02, q2 = w0_q_squared(hv)
    assert close_to(math.sqrt(float(w02)) / (2 * math.pi), "1577.84")
    assert close_to(math.sqrt(float(q2)), "1.27109")
    assert close_to(float(hv.dc_gain()), "-1.93548")
    assert close_to(cutoff_hz(h, values, "low"), "2178.21")


@pytest.mark.parametrize("name, builder", [
    ("rc-lowpass", rc_lowpass), ("rc-highpass", rc_highpass), ("inverting-lowpass", inverting_lowpass),
    ("sallen-key-lowpass", sallen_key_lowpass), ("mfb-lowpass", mfb_lowpass),
])
def test_catalogue_matches_the_circuits_above(name, builder):
    # The catalogue's circuits are the topologies checked above (same H, all parts symbolic).
    symbolic = {p.name: None for p in catalogue.build(name).parts if p.kind != "opamp"}
    c = catalogue.build(name, source="symbol", load="symbol", **symbolic)
    assert same(derive(c).as_expr(), derive(builder(source="symbol", load="symbol")).as_expr())


# --- names that collide with algebra-system builtins -----------------------------------

COLLIDING = {"E": "Ra", "I": "La", "N": "Rb", "S": "Ca", "Q": "Cb", "beta": "Ea", "gamma": "Rc"}


def _collision_circuit(n: dict) -> Circuit:
    # E in->a (resistor), I a->b (inductor), N b->ground (resistor), S a->ground (capacitor),
    # Q b->x (capacitor), gamma x->out (resistor), beta: vcvs out->ground controlled by b->ground;
    # the output port is x.
    return Circuit.build([
        Part.resistor(n["E"], "in", "a"), Part.inductor(n["I"], "a", "b"), Part.resistor(n["N"], "b", "0"),
        Part.capacitor(n["S"], "a", "0"), Part.capacitor(n["Q"], "b", "x"), Part.resistor(n["gamma"], "x", "out"),
        Part.make(n["beta"], "vcvs", ("out", "0", "b", "0")),
    ], output="x", source="symbol", load="symbol")


@pytest.mark.parametrize("quantity", ["transfer", "zin", "zout"])
def test_builtin_names_are_ordinary_part_names(quantity):
    # Common practice: a part's name is its symbol and nothing else (E is not Euler's number,
    # I not the imaginary unit, S not sympy's singleton registry, N, Q, beta, gamma not functions).
    c_odd = _collision_circuit({k: k for k in COLLIDING})
    c_plain = _collision_circuit(COLLIDING)
    h_odd, h_plain = derive(c_odd, quantity), derive(c_plain, quantity)
    odd, plain = c_odd.symbol_table(), c_plain.symbol_table()
    rename = {odd[k]: plain[v] for k, v in COLLIDING.items()}
    assert same(h_odd.as_expr().xreplace(rename), h_plain.as_expr())
    names = {str(x) for x in h_odd.free_symbols()}
    assert names <= set(odd)
    expr = h_odd.as_expr()
    for const in (sympy.E, sympy.I, sympy.EulerGamma, sympy.pi):
        assert not expr.has(const)
    assert not expr.has(sympy.gamma, sympy.beta)
    # With numbers put in (by symbol), the result is a real function of s, the same for both namings.
    values = {odd[k]: i + 2 for i, k in enumerate(COLLIDING)} | {R_s: 1, R_L: 3}
    hv = h_odd.subs(values)
    assert hv.free_symbols() <= {s}
    assert all(c.is_real for c in sympy.Poly(hv.num * hv.den, s).all_coeffs())
    hp = h_plain.subs({rename[k]: v for k, v in values.items() if k in rename} | {R_s: 1, R_L: 3})
    assert same(hv.as_expr(), hp.as_expr())


@pytest.mark.parametrize("quantity", ["transfer", "zin", "zout"])
def test_substitution_by_name_with_colliding_names(quantity):
    # NetworkFunction.subs documents "symbol or name -> number"; a name must reach its symbol whatever
    # the part's kind (beta is a vcvs gain, a real symbol; the others are positive). Common practice.
    c = _collision_circuit({k: k for k in COLLIDING})
    h = derive(c, quantity)
    table = c.symbol_table()
    by_name = {k: i + 2 for i, k in enumerate(COLLIDING)} | {"R_s": 1, "R_L": 3}
    hv = h.subs(by_name)
    assert hv.free_symbols() <= {s}
    assert same(hv.as_expr(), h.subs({table[k]: v for k, v in by_name.items()}).as_expr())


def test_vcvs_gain_named_beta_may_be_negative():
    # The controlled-source gain symbol is real, not positive (DEVELOPERS.md, conventions): substituting a negative
    # gain gives the same as an ideal inverting gain stage, V(out) = beta * V(in) (common practice).
    c = Circuit.build([Part.resistor("E", "in", "0"), Part.make("beta", "vcvs", ("out", "0", "in", "0")),
                       Part.resistor("gamma", "out", "0")])
    h = derive(c)
    beta = c.symbol_table()["beta"]
    assert same(h.as_expr(), beta)
    assert h.subs({beta: -3}).as_expr() == -3
