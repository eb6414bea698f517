"""Checking a hand derivation (symfilt.claims, export.check_report).

The "derived" side of every comparison is built here by nodal analysis, node by
node with the connections written out, and solved with ``sympy.solve``; the
claims are published formulas typed by hand, each with its source beside it
(see tests/REFERENCES.md), and deliberately wrong variants of them: the
slips an engineer makes (load left out, source resistance left out, two parts
exchanged, a lost sign, a forgotten 2*pi). No check compares printed strings of
expressions; the diagnosis is checked for the finding it must contain.
"""

from __future__ import annotations

import builtins
import dataclasses
import json
import math
import os
import re
import subprocess

import pytest
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

from helpers import solve_nodes

from symfilt.claims.parse import MAX_DEPTH, MAX_EXPONENT, MAX_LATEX_TOKENS, MAX_LENGTH, parse_claim
from symfilt.claims.judge import Equivalence, equivalent
from symfilt.errors import ClaimError
from symfilt.export.check_report import assert_equivalent, check_json, check_text, diagnosis_text

s = sympy.Symbol("s")
R1, R2, C1, C2 = sympy.symbols("R1 R2 C1 C2", positive=True)
R_s, R_L, C_L, A_U1 = sympy.symbols("R_s R_L C_L A_U1", positive=True)
ALL = {x.name: x for x in (R1, R2, C1, C2, R_s, R_L, C_L, A_U1, s)}


def rc_lowpass(source=True, load=True, load_cap=False):
    """V_s -- R_s -- x -- R1 -- out; C1 out->ground; R_L and C_L out->ground."""
    x, out = sympy.symbols("v_x v_out")
    shunt = out * s * C1 + (out / R_L if load else 0) + (out * s * C_L if load_cap else 0)
    if source:
        eqs = [(x - 1) / R_s + (x - out) / R1, (out - x) / R1 + shunt]
    else:
        eqs = [x - 1, (out - x) / R1 + shunt]
    return solve_nodes(eqs, [x, out], out)


def inverting(gain=A_U1, cap=False):
    """R1 from V_s to the inverting input m, R2 (parallel C1 if cap) from m to out,
    non-inverting input grounded, out = A*(0 - m); gain=None means an ideal op-amp (m = 0)."""
    m, out = sympy.symbols("v_m v_out")
    feedback = (m - out) * (1 / R2 + (s * C1 if cap else 0))
    eqs = [(m - 1) / R1 + feedback, out + gain * m if gain is not None else m]
    return solve_nodes(eqs, [m, out], out)


def sallen_key(source=False):
    """Unity-gain Sallen-Key low-pass: V_s -- R_s -- x -- R1 -- a -- R2 -- b; C1 a->out,
    C2 b->ground, follower from b to out (out = b)."""
    x, a, b = sympy.symbols("v_x v_a v_b")
    first = (x - 1) / R_s + (x - a) / R1 if source else x - 1
    eqs = [first, (a - x) / R1 + (a - b) / R2 + (a - b) * s * C1, (b - a) / R2 + b * s * C2]
    return solve_nodes(eqs, [x, a, b], b)


def second_order(h):
    """(w0, Q) of a low-pass with denominator a0 + a1 s + a2 s^2."""
    a2, a1, a0 = sympy.Poly(sympy.fraction(h)[1], s).all_coeffs()
    return sympy.sqrt(a0 / a2), sympy.sqrt(a0 * a2) / a1


def first_order_cutoff(h):
    """|pole| of a first-order low-pass with denominator a0 + a1 s."""
    a1, a0 = sympy.Poly(sympy.fraction(h)[1], s).all_coeffs()
    return a0 / a1


def has(result, words):
    return any(words in finding for finding in diagnosis_text(result))


# ------------------------------------------------------------------ the derivations themselves


def test_rc_lowpass_derivation_matches_worked_numbers():
    # REFERENCES.md worked numbers, computed regression values (two independent computations): RC low-pass R = 4.7k,
    # C = 22n, R_s = 600, R_L = 10k: cutoff 2088.40 Hz, DC gain 0.653595.
    h = rc_lowpass()
    values = {R1: 4700, C1: sympy.Rational(22, 10**9), R_s: 600, R_L: 10000}
    assert float(first_order_cutoff(h).subs(values)) / (2 * math.pi) == pytest.approx(2088.40, rel=1e-5)
    assert float(h.subs(values).subs(s, 0)) == pytest.approx(0.653595, rel=1e-6)


def test_sallen_key_derivation_matches_worked_numbers():
    # REFERENCES.md worked numbers, computed regression values: unity Sallen-Key LP R1 = 6.8k, R2 = 15k, C1 = 10n,
    # C2 = 3.3n, R_s = 50: f0 = 2733.21 Hz, Q = 0.807574.
    w0, q = second_order(sallen_key(source=True))
    values = {R1: 6800, R2: 15000, C1: sympy.Rational(1, 10**8), C2: sympy.Rational(33, 10**10), R_s: 50}
    assert float(w0.subs(values)) / (2 * math.pi) == pytest.approx(2733.21, rel=1e-5)
    assert float(q.subs(values)) == pytest.approx(0.807574, rel=1e-5)


# ------------------------------------------------------------------ RC low-pass, loaded

# Loaded RC low-pass: H = R_L / (R_s + R + R_L + s C R_L (R_s + R)); Thevenin's theorem,
# common practice (REFERENCES.md, first order).
RC_LOADED = "R_L/(R_s + R1 + R_L + s*C1*R_L*(R_s + R1))"


def test_rc_loaded_claim_is_equal_exactly():
    result = equivalent(RC_LOADED, rc_lowpass())
    assert result.equivalent and result.method == "exact" and result.points == 0
    assert result.diagnosis == () and result.counterexample is None


def test_rc_loaded_claim_in_jw_is_equal():
    # the same formula written with s = j*w (common practice)
    assert equivalent("H(s) = R_L/(R_s + R1 + R_L + j*w*C1*R_L*(R_s + R1))", rc_lowpass()).equivalent
    assert equivalent("R_L/(R_s + R1 + R_L + I*omega*C1*R_L*(R_s + R1))", rc_lowpass()).equivalent


def test_rc_claim_without_the_load():
    # the capacitor sees R_s + R alone: H = 1/(1 + s C (R_s + R)) is the open-load formula
    result = equivalent("1/(1 + s*C1*(R_s + R1))", rc_lowpass())
    assert not result.equivalent
    assert "agrees when R_L -> oo: the load was left out" in diagnosis_text(result)
    assert has(result, "DC gain (s -> 0) differs")
    assert has(result, "symbols in the derived result but not in the claim: R_L")


def test_rc_claim_without_the_source_resistance():
    result = equivalent("R_L/(R1 + R_L + s*C1*R_L*R1)", rc_lowpass())
    assert "agrees when R_s -> 0: the source resistance was left out" in diagnosis_text(result)


def test_rc_textbook_claim_misses_source_and_load():
    # H = 1/(1 + s R C): Horowitz & Hill, The Art of Electronics, 3rd ed., ch. 1 (from memory);
    # true only with an ideal source and an open output
    result = equivalent("1/(1 + s*R1*C1)", rc_lowpass())
    assert has(result, "agrees when R_L -> oo and R_s -> 0")
    assert equivalent("1/(1 + s*R1*C1)", rc_lowpass(source=False, load=False)).equivalent


def test_rc_claim_without_the_load_capacitance():
    result = equivalent(RC_LOADED, rc_lowpass(load_cap=True))
    assert "agrees when C_L -> 0: the load capacitance was left out" in diagnosis_text(result)


def test_rc_counterexample_uses_given_values_and_reports_db():
    # open-load claim against the loaded stage: at DC the load divides by 0.653595 (-3.69 dB),
    # REFERENCES.md worked numbers, computed regression values
    values = {"R1": 4700, "C1": 22e-9, "R_s": 600, "R_L": 10000}
    result = equivalent("1/(1 + s*C1*(R_s + R1))", rc_lowpass(), values=values)
    assert {k: result.counterexample[k] for k in values} == values
    w = result.counterexample["w"]
    assert w == 0
    assert has(result, f"{20 * math.log10(1 / 0.653595):.3g} dB apart")


def test_rc_loaded_claim_in_latex():
    tex = (r"H(s) = \frac{R_{L}}{R_{s} + R_{1} + R_{L} + s \cdot C_{1} R_{L} "
           r"\left(R_{s} + R_{1}\right)}")
    assert equivalent(tex, rc_lowpass()).equivalent
    tex_jw = r"\frac{R_L}{R_s + R_1 + R_L + j\omega C_1 R_L (R_s + R_1)}"
    assert equivalent(tex_jw, rc_lowpass()).equivalent


CUTOFF_PARALLEL = [
    # w_c = 1/(C ((R_s + R) || R_L)); Thevenin's theorem, common practice (REFERENCES.md)
    "1/(C1*((R_s + R1) || R_L))",
    r"\omega_{c} = \frac{1}{C_{1} \left( \left(R_{s} + R_{1}\right) \parallel R_{L} \right)}",
    r"\frac{1}{C_1 \cdot ((R_s + R_1) \| R_L)}",
]


@pytest.mark.parametrize("claim", CUTOFF_PARALLEL)
def test_rc_cutoff_with_parallel_combination(claim):
    assert equivalent(claim, first_order_cutoff(rc_lowpass())).equivalent


def test_rc_cutoff_in_hz_for_rad_s_is_a_forgotten_two_pi():
    # f_c = w_c / (2 pi): the claim gives Hz where the derived cutoff is in rad/s
    result = equivalent("1/(2*pi*C1*((R_s + R1) || R_L))", first_order_cutoff(rc_lowpass()))
    assert has(result, "differs by a factor 2*pi: Hz vs rad/s mixed up")


def test_rc_transfer_with_2pi_inside():
    result = equivalent("R_L/(R_s + R1 + R_L + 2*pi*s*C1*R_L*(R_s + R1))", rc_lowpass())
    assert has(result, "differs by a factor 2*pi: Hz vs rad/s mixed up")


def test_rc_misquoted_cutoff():
    # REFERENCES.md cautions: the loaded cutoff is often misquoted as 1/((R_s + R) C)
    result = equivalent("1/((R_s + R1)*C1)", first_order_cutoff(rc_lowpass()))
    assert "agrees when R_L -> oo: the load was left out" in diagnosis_text(result)


# ------------------------------------------------------------------ inverting stage

# Inverting amplifier with finite open-loop gain A: G = -(R2/R1) / (1 + (1 + R2/R1)/A);
# Sedra & Smith, Microelectronic Circuits, ch. 2 (from memory).
INVERTING = "-(R2/R1)/(1 + (1 + R2/R1)/A_U1)"


def test_inverting_finite_gain_claim_is_equal():
    assert equivalent(INVERTING, inverting()).equivalent
    tex = r"G = -\frac{R_{2}}{R_{1}} \cdot \frac{1}{1 + \frac{1 + R_{2}/R_{1}}{A_{U1}}}"
    assert equivalent(tex, inverting()).equivalent


def test_inverting_ideal_claim_names_the_op_amp_gain():
    result = equivalent("-R2/R1", inverting())
    assert "agrees when A_U1 -> oo: the op-amp's finite gain was left out" in diagnosis_text(result)


def test_inverting_sign_lost():
    result = equivalent("(R2/R1)/(1 + (1 + R2/R1)/A_U1)", inverting())
    assert "agrees up to sign: a sign was lost" in diagnosis_text(result)
    assert has(result, "phase 180.0 degrees apart")


def test_inverting_resistors_exchanged():
    result = equivalent("-(R1/R2)/(1 + (1 + R1/R2)/A_U1)", inverting())
    assert "agrees when R1 and R2 are exchanged" in diagnosis_text(result)


def test_inverting_lowpass_sign_lost_in_latex():
    # inverting low-pass, ideal op-amp: H = -(R2/R1) / (1 + s R2 C); common practice
    h = inverting(gain=None, cap=True)
    assert equivalent(r"-\frac{R_2/R_1}{1 + j \omega R_2 C_1}", h).equivalent
    result = equivalent(r"\frac{R_{2}}{R_{1} \left(1 + s R_{2} C_{1}\right)}", h)
    assert "agrees up to sign: a sign was lost" in diagnosis_text(result)


# ------------------------------------------------------------------ unity-gain Sallen-Key

# Unity-gain Sallen-Key low-pass: w0 = 1/sqrt(R1 R2 C1 C2), Q = sqrt(R1 R2 C1 C2)/(C2 (R1 + R2));
# TI application report SLOA024, Analysis of the Sallen-Key Architecture (from memory).
SK_H = "1/(1 + s*C2*(R1 + R2) + s^2*R1*R2*C1*C2)"


def test_sallen_key_transfer_and_its_jw_form():
    h = sallen_key()
    assert equivalent(SK_H, h).equivalent
    assert equivalent("1/(1 + j*w*C2*(R1 + R2) - w**2*R1*R2*C1*C2)", h).equivalent


def test_sallen_key_capacitors_exchanged():
    result = equivalent("1/(1 + s*C1*(R1 + R2) + s^2*R1*R2*C1*C2)", sallen_key())
    assert "agrees when C1 and C2 are exchanged" in diagnosis_text(result)


def test_sallen_key_source_resistance_left_out():
    result = equivalent(SK_H, sallen_key(source=True))
    assert "agrees when R_s -> 0: the source resistance was left out" in diagnosis_text(result)


def test_sallen_key_order_differs():
    result = equivalent("1/(1 + s*C2*(R1 + R2))", sallen_key())
    assert "order differs: expected 2, got 1" in diagnosis_text(result)


def test_sallen_key_w0_and_q_with_radicals_are_decided_exactly():
    # radicals are made new symbols first (issue 19), so no sampling is needed
    w0, q = second_order(sallen_key())
    r_w0 = equivalent("1/sqrt(R1*R2*C1*C2)", w0)
    assert r_w0.equivalent and r_w0.method == "exact" and r_w0.points == 0
    tex_q = r"Q = \frac{\sqrt{R_{1} R_{2} C_{1} C_{2}}}{C_{2} \left(R_{1} + R_{2}\right)}"
    assert equivalent(tex_q, q).equivalent


def test_sallen_key_f0_for_w0_is_a_forgotten_two_pi():
    w0, _ = second_order(sallen_key())
    result = equivalent("1/(2*pi*sqrt(R1*R2*C1*C2))", w0)
    assert not result.equivalent and result.method == "exact"
    assert has(result, "differs by a factor 2*pi: Hz vs rad/s mixed up")


def test_sallen_key_q_with_capacitors_exchanged():
    _, q = second_order(sallen_key())
    result = equivalent("sqrt(R1*R2*C1*C2)/(C1*(R1 + R2))", q)
    assert "agrees when C1 and C2 are exchanged" in diagnosis_text(result)


def test_close_but_wrong_radical_is_caught_exactly():
    w0, _ = second_order(sallen_key())
    result = equivalent("(1 + 10**-12)/sqrt(R1*R2*C1*C2)", w0)
    assert not result.equivalent and result.method == "exact"


# ------------------------------------------------------------------ parsing


def test_plain_text_forms():
    assert parse_claim("R1^2 + 4.7e3", ALL) == R1**2 + 4700
    assert parse_claim("0.1*R1", ALL) == R1 / 10  # floats read exactly
    # a || b is read as 1/(1/a + 1/b) (a tree that stays small when parallels are chained): compare values
    assert sympy.cancel(parse_claim("R1 || R2", ALL) - R1 * R2 / (R1 + R2)) == 0
    assert sympy.cancel(parse_claim("Zin = R_s + (R1 || R2)", ALL) - (R_s + R1 * R2 / (R1 + R2))) == 0
    assert parse_claim("1/(1 + 1j*w*R1*C1)", ALL) == 1 / (1 + s * R1 * C1)
    assert parse_claim("sqrt(R1*C1)", ALL) == sympy.sqrt(R1 * C1)
    assert parse_claim("R_1 * R_L", ALL) == R1 * R_L


def test_known_symbols_win_over_constants():
    pi, I, E, beta = sympy.Symbol("pi", positive=True), sympy.Symbol("I", positive=True), \
        sympy.Symbol("E", real=True), sympy.Symbol("beta", real=True)
    table = {"pi": pi, "I": I, "E": E, "beta": beta}
    assert parse_claim("2*pi*I*E*beta", table) == 2 * pi * I * E * beta
    assert parse_claim(r"\pi \cdot \beta E", table) == pi * beta * E
    assert parse_claim("pi*j", {}) == sympy.pi * sympy.I


@pytest.mark.parametrize("text, expected", [
    (r"R_{b} + R_{L}", "Rb + R_L"),
    (r"{Rb + R_L}", "Rb + R_L"),
    (r"\mathrm{GBW}_{U1} A_{U1}", "GBW_U1*A_U1"),
    (r"{GBW_{U1}/A_U1}", "GBW_U1/A_U1"),
    (r"\frac{1}{s C_{1}R_1}", "1/(s*C1*R1)"),
    (r"\left(R_{1} + R_{2}\right)^{2} \cdot 10^{-3}", "(R1 + R2)^2/1000"),
    (r"{R_1}^{1/2} + \sqrt{R_2}", "sqrt(R1) + sqrt(R2)"),
])
def test_latex_names_as_symfilt_writes_them(text, expected):
    names = ("Rb", "R_L", "GBW_U1", "A_U1", "R1", "R2", "C1")
    table = {n: sympy.Symbol(n, positive=True) for n in names}
    assert sympy.expand(parse_claim(text, table) - parse_claim(expected, table)) == 0


def test_unknown_name_lists_the_known_symbols():
    with pytest.raises(ClaimError) as info:
        parse_claim("R1 + R9", {"R1": R1, "C1": C1})
    assert "R9" in str(info.value) and "C1, R1" in str(info.value)
    with pytest.raises(ClaimError, match=re.escape("R_{9}")):
        parse_claim(r"\frac{1}{R_{9}}", {"R1": R1})


# ------------------------------------------------------------------ hostile input

HOSTILE = [
    "__import__('os').system('touch {sentinel}')",
    "open('{sentinel}', 'w').write('x')",
    "R1.__class__.__mro__",
    "(lambda: __import__('os').system('touch {sentinel}'))()",
    "[__import__('os') for _ in (1,)]",
    "{{k: 1 for k in (1,)}}",
    "10**10**10",
    "x" * 100_000,
    "(" * 5000 + "R1" + ")" * 5000,
    "(" * (MAX_DEPTH + 5) + "R1" + ")" * (MAX_DEPTH + 5),
    "-" * 4000 + "R1",
    "R1[0]",
    "'R1'",
    "R1 if R1 else C1",
    "eval('1')",
    "sqrt(R1, R2)",
    "R1 @ R2",
    "R1 ** R2",
    "R1 ** 65",
    "((10**64)**64)**64",
    "(R1 + R2 + C1 + C2 + R_s + R_L)**64",
    "1e999999",
    "0x1F",
    "1/0",
    "True",
    r"\input{{{sentinel}}}",
    r"\def\x{{1}} \x",
    r"10^{{10^{{10}}}}",
    "{{" * 3000 + "R_1" + "}}" * 3000,
    r"\int R_{{1}} dx",
    r"\sin{{R_1}}",
    r"|R_{{1}}|",
    r"\sqrt[3]{{R_1}}",
    " + ".join([r"R_{{1}}"] * (MAX_LATEX_TOKENS // 2 + 1)),
]


@pytest.fixture
def watchers(monkeypatch):
    """Record any attempt to run a process or import a system module during a call."""
    calls = []
    from symfilt.claims.judge import parse_claim as warm
    warm(r"\frac{1}{R_{1}}", {"R1": R1})  # load the LaTeX parser before watching
    monkeypatch.setattr(os, "system", lambda *a, **k: calls.append(("system", a)))
    monkeypatch.setattr(os, "popen", lambda *a, **k: calls.append(("popen", a)))
    monkeypatch.setattr(subprocess, "Popen", lambda *a, **k: calls.append(("Popen", a)))
    real_import = builtins.__import__

    def watched_import(name, *args, **kwargs):
        if name.split(".")[0] in {"os", "subprocess", "shutil", "socket", "ctypes", "pty"}:
            calls.append(("import", name))
        return real_import(name, *args, **kwargs)

    monkeypatch.setattr(builtins, "__import__", watched_import)
    return calls


@pytest.mark.parametrize("template", HOSTILE, ids=lambda t: t[:30])
def test_hostile_input_is_refused_and_runs_nothing(template, tmp_path, watchers):
    sentinel = tmp_path / "sentinel"
    text = template.format(sentinel=sentinel) if "{" in template else template
    with pytest.raises(ClaimError):
        parse_claim(text, ALL)
    with pytest.raises(ClaimError):
        equivalent(text, R1 / (R1 + R2 + s * C1))
    assert watchers == []
    assert not sentinel.exists()
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("text, limit", [
    ("R1" * (MAX_LENGTH // 2 + 1), str(MAX_LENGTH)),
    ("(" * (MAX_DEPTH + 1) + "R1" + ")" * (MAX_DEPTH + 1), "nested"),
    (f"R1**{MAX_EXPONENT + 1}", str(MAX_EXPONENT)),
    ("R1**(1/3)", "half-integer"),
])
def test_each_limit_names_itself(text, limit):
    with pytest.raises(ClaimError, match=limit):
        parse_claim(text, ALL)


def test_limits_leave_room_for_real_claims():
    assert parse_claim(f"R1**{MAX_EXPONENT}", ALL) == R1**MAX_EXPONENT
    nested = "(" * (MAX_DEPTH - 2) + "R1" + ")" * (MAX_DEPTH - 2)
    assert parse_claim(nested, ALL) == R1


# ------------------------------------------------------------------ results and reports


def test_equivalence_is_frozen_and_matches_the_json_contract():
    result = equivalent("1/(1 + s*C1*(R_s + R1))", rc_lowpass())
    with pytest.raises(dataclasses.FrozenInstanceError):
        result.equivalent = True
    data = json.loads(check_json(result))
    assert set(data) == {"equivalent", "method", "points", "diagnosis", "counterexample"}
    assert data["equivalent"] is False and data["method"] in ("exact", "sampled")
    assert isinstance(data["points"], int) and data["diagnosis"] == diagnosis_text(result)
    assert all(isinstance(v, float | int) for v in data["counterexample"].values())


def test_check_text_verdict_and_findings():
    same = check_text(equivalent(RC_LOADED, rc_lowpass()))
    assert same.startswith("equal") and "exact" in same
    differs = check_text(equivalent("1/(1 + s*R1*C1)", rc_lowpass()))
    assert differs.startswith("different")
    assert "the load" in differs and "source resistance" in differs


def test_assert_equivalent_raises_with_the_diagnosis():
    assert isinstance(assert_equivalent(RC_LOADED, rc_lowpass()), Equivalence)
    with pytest.raises(AssertionError, match="the load was left out"):
        assert_equivalent("1/(1 + s*C1*(R_s + R1))", rc_lowpass())


def test_derived_object_with_as_expr_and_sympy_claim():
    class Derived:
        def as_expr(self):
            return rc_lowpass()

    loose = sympy.symbols("R_L R_s R1 C1")  # no assumptions: matched by name
    claim = loose[0] / (loose[1] + loose[2] + loose[0] + s * loose[3] * loose[0] * (loose[1] + loose[2]))
    assert equivalent(claim, Derived()).equivalent


# ------------------------------------------------------------------ properties (bounded)

_MONOMIALS = [sympy.Integer(1), R1, C1, s, R1 * C1, s * R1, s**2 * R1 * C1]
_poly = st.lists(st.integers(-4, 4), min_size=len(_MONOMIALS), max_size=len(_MONOMIALS)).map(
    lambda cs: sum(c * m for c, m in zip(cs, _MONOMIALS)))


@settings(max_examples=25, deadline=None)
@given(_poly, _poly.filter(lambda p: p != 0))
def test_sympy_text_reads_back_and_is_equal(num, den):
    expr = num / den
    table = {"R1": R1, "C1": C1}
    assert sympy.cancel(parse_claim(str(expr), table) - expr) == 0
    # a name may cancel out of the derived side (C1*R1*s**2/(C1*R1*s**2 + R1*s) has no R1 once
    # cancelled): the claim's names come from the derived quantity and `symbols`, so pass both
    assert equivalent(str(expr), sympy.cancel(expr), symbols=[R1, C1]).equivalent
    assert not equivalent(str(expr), sympy.cancel(expr) + R1, symbols=[C1]).equivalent


@settings(max_examples=6, deadline=None)
@given(_poly, _poly.filter(lambda p: p != 0))
def test_sympy_latex_reads_back(num, den):
    expr = num / den
    tex = sympy.latex(expr, symbol_names={R1: "R_{1}", C1: "C_{1}"})
    assert sympy.cancel(parse_claim(tex, {"R1": R1, "C1": C1}) - expr) == 0
