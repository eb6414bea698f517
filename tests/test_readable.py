"""Display forms (one radical, grouped sums, series/parallel impedances, engineering numbers):
each is checked equal to the exact expression, and the printed forms against the published ones.

Sources are in tests/REFERENCES.md; the printed strings below are symfilt's own layout of
those formulas.
"""

from __future__ import annotations

import json
import random

import pytest
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

from symfilt import catalogue
from symfilt.analysis.stage import analyse, substitute
from symfilt.export.common import Parallel
from symfilt.export.correction import corrections, quantity
from symfilt.export.eng_numbers import eng_text, exact_eng
from symfilt.export.impedance_form import impedance_display, impedance_form
from symfilt.export.readable import Ordered, Root, exact, grouped, readable
from symfilt.export.text import one_line

S = sympy.Symbol("s")
R1, R2, R3, R4, Rs, RL = sympy.symbols("R1 R2 R3 R4 R_s R_L", positive=True)
C1, C2 = sympy.symbols("C1 C2", positive=True)


def _point(expr) -> dict:
    rng = random.Random(7)
    return {x: sympy.Rational(rng.randint(1, 97), rng.randint(1, 13)) for x in expr.free_symbols}


def assert_same(display, expr):
    """exact(display) == expr: squares equal as rational functions (exact), and the same
    value at a rational point (which fixes the sign)."""
    d = exact(display)
    assert not d.has(Root, Parallel, Ordered)
    assert sympy.cancel(sympy.expand(d**2 - expr**2)) == 0, (display, expr)
    at = _point(expr + d)
    assert abs(sympy.N(d.xreplace(at) - expr.xreplace(at), 30)) < sympy.Float("1e-25")


def _quantities(st_):
    f = st_.form
    return {"w0": f.w0, "q": f.q, "gain": f.gain, "tau": f.tau, "cutoff": st_.cutoff.value,
            "dc_gain": st_.transfer.dc_gain()}


@pytest.mark.parametrize("name", catalogue.names())
def test_every_display_form_of_the_catalogue_equals_its_exact_expression(name):
    a = analyse(catalogue.build(name), sensitivity=False)
    for view in (a.loaded, a.ideal):
        for key, e in _quantities(view).items():
            if e is None or not isinstance(e, sympy.Expr) or e.has(sympy.oo, sympy.zoo):
                continue
            assert_same(readable(e), e)
        for z in (view.zin, view.zout):
            if z is None or z.infinite:
                continue
            shown = impedance_display(z)
            if shown.has(Parallel, Ordered, Root) or z.ratio.terms <= 60:
                assert sympy.cancel(exact(shown) - z.as_expr()) == 0, (name, shown)


_atoms = st.sampled_from([R1, R2, R3, R4, Rs, C1, C2])
_monomials = st.lists(_atoms, min_size=1, max_size=3).map(lambda xs: sympy.Mul(*xs))
_terms = st.tuples(st.integers(-3, 5).filter(bool), _monomials).map(lambda t: t[0] * t[1])


@settings(max_examples=80, deadline=None)
@given(st.lists(_terms, min_size=1, max_size=9))
def test_grouping_any_polynomial_keeps_it_exactly(terms):
    p = sympy.expand(sympy.Add(*terms))
    assert sympy.expand(exact(grouped(p)) - p) == 0


@settings(max_examples=60, deadline=None)
@given(st.lists(_terms, min_size=1, max_size=5), st.lists(_monomials, min_size=1, max_size=3),
       st.sampled_from([1, -1, sympy.Rational(1, 2), sympy.Rational(-1, 2)]))
def test_one_radical_of_any_root_of_a_ratio_keeps_it(terms, den, power):
    num = sympy.expand(sympy.Add(*terms))
    if num == 0:
        return
    e = sympy.Pow(num / sympy.Mul(*den), power) * R1 / (R2 + Rs)
    if not (e.is_positive or e.is_negative):
        e = sympy.Pow(sympy.Abs(num) / sympy.Mul(*den), power)
        if e.has(sympy.Abs):
            return
    assert_same(readable(e), e)


def _derive(run_cli, *args) -> str:
    code, out, _err = run_cli("derive", *args)
    assert code == 0
    return out


def test_sallen_key_w0_and_q_read_with_one_radical(run_cli):
    # Unity-gain Sallen-Key low-pass: w0 = 1/sqrt(R1 R2 C1 C2), Q = sqrt(R1 R2 C1 C2)/(C2 (R1 + R2)),
    # TI SLOA024 (REFERENCES.md, second order); R_s adds to R1 (Thevenin, common practice).
    out = _derive(run_cli, "@sallen-key-lowpass")
    assert "  w0         = 1/sqrt(C1·C2·R1·R2)\n" in out
    assert "  Q          = sqrt(C1·R1·R2/C2)/(R1 + R2)\n" in out
    assert "  w0         = 1/sqrt(C1·C2·R2·(R1 + R_s))\n" in out
    assert "  Q          = sqrt(C1·R2·(R1 + R_s)/C2)/(R1 + R2 + R_s)\n" in out


def test_mfb_q_reads_as_the_published_grouped_sum(run_cli):
    # MFB low-pass: Q = sqrt(R2 R3 C1 C2) / (C2 (R2 + R3 + R2 R3 / R1)), TI "Op Amps for Everyone"
    # (REFERENCES.md, second order); loaded, R_s adds to R1 (common practice).
    out = _derive(run_cli, "@mfb-lowpass")
    assert "  Q          = sqrt(C1·R2·R3/C2)/(R2 + R3 + R2·R3/R1)\n" in out
    assert "  Q          = sqrt(C1·R2·R3/C2)/(R2 + R3 + R2·R3/(R1 + R_s))\n" in out
    assert "  w0         = 1/sqrt(C1·C2·R2·R3)\n" in out


def test_rc_impedances_read_as_series_and_parallel(run_cli):
    # Z_in = R + (1/(sC) || R_L), Z_out = (R_s + R) || 1/(sC) (REFERENCES.md, first order).
    out = _derive(run_cli, "@rc-lowpass")
    assert "  Zin        = R1 + (R_L || 1/(C1·s))\n" in out
    assert "  Zout       = 1/(C1·s) || (R1 + R_s)\n" in out
    assert "  Zin        = R1 + 1/(C1·s)\n" in out  # ideal: open load


def test_ladder_impedance_reads_as_a_continued_fraction():
    # An RC ladder's input impedance is the continued fraction R1 + 1/(sC1 + 1/(R2 + ...))
    # (Cauer ladder form; common practice).
    a = analyse(catalogue.build("rc-ladder", n=2), sensitivity=False)
    assert one_line(impedance_display(a.ideal.zin)) == "R1 + (1/(C1·s) || (R2 + 1/(C2·s)))"


def test_an_active_stage_impedance_peels_what_it_can_and_factors_the_rest():
    # Sallen-Key input: R1 in series with the rest (the rest holds no R1; ideal op-amp, common practice).
    a = analyse(catalogue.build("sallen-key-lowpass"), sensitivity=False)
    shown = impedance_display(a.ideal.zin)
    assert isinstance(shown, Ordered) and shown.args[0] == R1
    assert sympy.cancel(exact(shown) - a.ideal.zin.as_expr()) == 0


def test_no_part_peels_off_a_bridge():
    # A bridge is not series-parallel (common practice): R1 A-C, R2 A-D, R3 C-B, R4 D-B and
    # R_L C-D, seen from A to B. Its impedance here comes from the nodal equations in sympy.
    vc, vd = sympy.symbols("vc vd")
    sol = sympy.solve([(vc - 1) / R1 + vc / R3 + (vc - vd) / RL, (vd - 1) / R2 + vd / R4 + (vd - vc) / RL], [vc, vd])
    z = sympy.cancel(1 / ((1 - sol[vc]) / R1 + (1 - sol[vd]) / R2))
    num, den = sympy.fraction(z)
    shown = impedance_form(num, den)
    assert not shown.has(Parallel) and not isinstance(shown, Ordered)  # no part in series either
    assert sympy.cancel(exact(shown) - z) == 0


def test_parallel_prints_with_parentheses_only_inside_a_product():
    assert str(Parallel(R1, R2)) == "R1 || R2"
    assert str(C1 * Parallel(R1 + Rs, RL)) == "C1*((R1 + R_s) || R_L)"
    assert sympy.latex(Parallel(R1, R2)) == "R_{1} \\parallel R_{2}"


def test_engineering_notation_uses_powers_of_a_thousand():
    # Engineering notation: mantissa 1..999 times 10^(3k) (common practice).
    assert [eng_text(x) for x in (12345.0, 0.000123, 3.3912e-9, 999.96e3, 0.5)] == \
        ["12.35e3", "123e-6", "3.391e-9", "1e6", "0.5"]


def test_substituted_formulas_show_engineering_numbers_close_to_the_exact_ones(run_cli):
    out = _derive(run_cli, "@sallen-key-lowpass", "--substitute")
    assert "3.391e-9⋅s" in out and "4000000000000" not in out
    shown = substitute(analyse(catalogue.build("sallen-key-lowpass"), sensitivity=False))
    for e in (shown.loaded.form.w0, shown.loaded.form.q, shown.ideal.form.w0):
        text = one_line(e)
        assert abs(float(text) / float(e) - 1) < 5e-4, (text, e)  # four significant digits
    assert f"  w0         = {one_line(shown.loaded.form.w0)}\n" in out


def test_json_keeps_the_exact_expressions(run_cli):
    code, out, _err = run_cli("derive", "@mfb-lowpass", "--format", "json")
    assert code == 0
    data = json.loads(out)
    text = json.dumps(data)
    assert "||" not in text and "Root" not in text and "Ordered" not in text


@pytest.mark.parametrize("name", catalogue.names())
def test_every_correction_factor_times_the_ideal_quantity_is_the_loaded_one(name):
    a = analyse(catalogue.build(name), sensitivity=False)
    for label, factor in corrections(a.loaded, a.ideal, one_line).items():
        lo, hi = quantity(a.loaded, label), quantity(a.ideal, label)
        assert_same(readable(factor) * hi, lo)


def test_the_loaded_rc_cutoff_reads_as_the_ideal_one_times_the_thevenin_factor(run_cli):
    # w_c = 1/(C ((R_s + R) || R_L)) loaded and 1/(R C) ideal (REFERENCES.md, first order):
    # their ratio is R/((R_s + R) || R_L).
    out = _derive(run_cli, "@rc-lowpass")
    assert "  cutoff ωc  = 1/(C1·((R1 + R_s) || R_L))\n             = cutoff ωc (ideal) · R1/((R1 + R_s) || R_L)\n" in out
    # an ideal op-amp stage's w0 does not see the load: no factor (the MFB w0 has no R1, REFERENCES.md)
    assert "w0 (ideal)" not in _derive(run_cli, "@mfb-lowpass")
    code, out, _err = run_cli("derive", "@rc-lowpass", "--format", "latex")
    assert "= \\omega_{c,\\mathrm{ideal}} \\cdot \\frac{R_{1}}{\\left(R_{1} + R_{s}\\right) \\parallel R_{L}}" in out


@pytest.mark.parametrize("name, wanted", [
    # TI SLOA024 and "Op Amps for Everyone" (REFERENCES.md, second order), in LaTeX
    ("sallen-key-lowpass", ["\\frac{1}{\\sqrt{C_{1} C_{2} R_{1} R_{2}}}",
                            "\\frac{\\sqrt{\\frac{C_{1} R_{1} R_{2}}{C_{2}}}}{R_{1} + R_{2}}"]),
    ("mfb-lowpass", ["\\frac{1}{\\sqrt{C_{1} C_{2} R_{2} R_{3}}}",
                     "{R_{2} + R_{3} + \\frac{R_{2} R_{3}}{R_{1}}}"]),
])
def test_the_notes_show_w0_under_one_radical_and_q_as_a_grouped_sum(run_cli, tmp_path, name, wanted):
    for suffix in (".md", ".tex"):
        path = tmp_path / f"{name}{suffix}"
        code, _out, _err = run_cli("note", f"@{name}", "-o", str(path))
        assert code == 0
        text = path.read_text()
        for piece in wanted:
            assert piece in text, (suffix, piece)


@pytest.mark.parametrize("name", ["sallen-key-lowpass", "sallen-key-highpass", "mfb-lowpass", "sallen-key-lowpass-gain"])
def test_the_cutoff_sensitivity_through_w0_and_q_matches_the_computed_one(run_cli, name):
    # Chain rule (common practice): wc = w0 g(Q) with g = sqrt(x + sqrt(x^2 + 1)),
    # x = 1 - 1/(2 Q^2) (1/g for a high-pass), so S^wc = S^w0 +/- S^Q / (2 Q^2 sqrt(x^2 + 1)).
    # Checked against the cutoff sensitivities symfilt computes on its own route (at the values).
    a = analyse(catalogue.build(name))
    sign = 1 if a.loaded.form.kind == "lowpass" else -1
    for view in ("loaded", "ideal"):
        num = a.numeric[view]
        q = num["q"]
        x = 1 - 1 / (2 * q * q)
        kappa = 1 / (2 * q * q * (x * x + 1) ** 0.5)
        sens = num["sensitivity"]
        for part, s_wc in sens["cutoff"].items():
            assert s_wc == pytest.approx(sens["w0"][part] + sign * kappa * sens["q"][part], abs=1e-9)
    code, out, _err = run_cli("derive", f"@{name}", "--format", "latex", "--quantity", "sensitivity")
    assert code == 0 and "S_{p}^{\\omega_{c}} &= S_{p}^{\\omega_{0}} " + ("+" if sign > 0 else "-") + " \\kappa" in out
    assert "S_{R_{1}}^{\\omega_{c}}" not in out


def test_a_large_json_result_reads_back_with_sympify_at_default_settings():
    # The JSON contract: every expression string is read by sympy.sympify as it is. A result
    # past LARGE_TERMS is written from the flint polynomials with its sums in nested groups,
    # so Python's parser does not meet one nesting level per term (ladder-8: 4 182 terms).
    import sys

    sys.path.insert(0, str(__import__("pathlib").Path(__file__).resolve().parents[1] / "benchmarks"))
    from cases import rc_ladder

    from symfilt.design.report import report
    from symfilt.export.derive_report import derive_json

    r = report(rc_ladder(8), sensitivity=False)
    assert r.analysis.loaded.transfer.ratio.terms > 2000
    text = json.loads(derive_json(r))["loaded"]["transfer"]
    back = sympy.sympify(text)
    exact_h = r.analysis.loaded.transfer.as_expr()
    at = {x: sympy.Rational(k + 2, 7) for k, x in enumerate(sorted(exact_h.free_symbols, key=str))}
    at_names = {sympy.Symbol(x.name): v for x, v in at.items()}
    assert back.xreplace(at_names) == exact_h.xreplace(at)


def test_a_long_number_that_a_short_mantissa_gives_exactly_stays_exact(run_cli):
    # Sizing to fc = 2 kHz puts wc = 2*pi*2000 = 4000*pi and wc^2 = 16e6*pi^2 into the closed
    # form (common practice); written in engineering notation they must still be exact.
    for r in (sympy.Integer(64000000000), sympy.Rational(1, 6400000000), sympy.Integer(500000)):
        shown = exact_eng(r)
        mant, _, exp = shown.name.partition("e")
        assert sympy.Rational(mant) * sympy.Integer(10) ** int(exp or 0) == r
    assert exact_eng(sympy.Rational(1, 3)) is None and exact_eng(sympy.Integer(157904356)) is None
    code, out, _err = run_cli("size", "@sallen-key-lowpass", "--target", "cutoff=2k", "--vary", "R1")
    assert code == 0 and "16e6·pi^2·C1^2·R2^2 + 1" in out and "4000·pi·C2" in out
