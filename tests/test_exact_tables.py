"""What a report builds only when it is read (issue 14, item 4): sensitivity forms and the closed cutoff.

* The numbers a table gives without sympy equal its sympy forms evaluated at the values by
  ``sympy.N`` at 30 digits (the outside reference for the arithmetic), on every catalogue circuit.
* S_x^y of a product of polynomials against sympy's own derivative of the product,
  x·(dy/dx)/y, at random rational points (hypothesis; the definition of the normalised
  sensitivity, tests/REFERENCES.md "Sensitivity and tolerances").
* A plain text report prints every sensitivity as a number and builds none of the forms, and
  never builds a second-order closed cutoff (shown through w0 and Q; its number comes from the
  exact coefficients and equals the closed form put to sympy.N).
"""

from __future__ import annotations

import pytest
import sympy
from hypothesis import given, settings, strategies as st

from symfilt.analysis.exact_tables import ExactTable, chain_rule_row
from symfilt.analysis.numeric import finite_float
from symfilt.analysis.sensitivity import product_sensitivities
from symfilt.analysis.stage import analyse
from symfilt.design.report import report
from symfilt.export.derive_report import derive_text
from symfilt.model import catalogue

X, Y, Z = sympy.symbols("X Y Z", positive=True)


def _tables(a):
    return [(view, q, t) for view, stage in (("loaded", a.loaded), ("ideal", a.ideal))
            for q, t in stage.sensitivity.items() if isinstance(t, ExactTable)]


@pytest.mark.parametrize("name", catalogue.names())
def test_table_numbers_equal_the_sympy_forms_at_the_values(name):
    c = catalogue.build(name)
    values = c.values()
    tables = _tables(analyse(c))
    assert tables
    for view, q, table in tables:
        got = table.numbers(values)
        assert got is not None, (view, q)
        assert list(got) == list(table)
        for n in table:
            want = finite_float(sympy.sympify(table[n]).xreplace(values))
            if want is None:
                assert got[n] is None, (view, q, n)
            else:
                assert got[n] == pytest.approx(want, rel=1e-12, abs=1e-15), (view, q, n)


def test_a_table_without_every_value_gives_no_numbers():
    t = product_sensitivities([(X + Y, 1)], [X, Y])
    assert t.numbers({X: 1}) is None
    assert t.numbers({X: 1, Y: sympy.sqrt(2)}) is None  # not rational: the caller evaluates the forms
    assert t.numbers({X: 1, Y: 3}) == {"X": 0.25, "Y": 0.75}


def test_tables_of_the_same_factors_are_equal_without_building():
    a = product_sensitivities([(X * Y + Z, 1), (Z, -1)], [X, Y, Z])
    b = product_sensitivities([(X * Y + Z, 1), (Z, -1)], [X, Y, Z])
    assert a == b and not a._shown and not b._shown
    c = product_sensitivities([(X * Y + Z, 2), (Z, -2)], [X, Y, Z])
    assert a != c  # different factors: compared entry by entry
    assert dict(a) == {n: a[n] for n in ("X", "Y", "Z")}


_poly = st.lists(st.tuples(st.integers(1, 5), st.integers(0, 2), st.integers(0, 2), st.integers(0, 1)),
                 min_size=1, max_size=4)


@settings(max_examples=40, deadline=None)
@given(_poly, _poly, st.sampled_from([sympy.Rational(1, 2), 1, -1, sympy.Rational(-1, 2), 2]),
       st.tuples(st.integers(1, 9), st.integers(1, 9), st.integers(1, 9)))
def test_product_sensitivities_equal_sympys_derivative(p1, p2, e, point):
    polys = [sum(k * X**a * Y**b * Z**c for k, a, b, c in p) for p in (p1, p2)]
    y = polys[0] ** e * polys[1] ** -1
    table = product_sensitivities([(polys[0], e), (polys[1], -1)], [X, Y, Z])
    at = dict(zip((X, Y, Z), map(sympy.Integer, point)))
    got = table.numbers(at)
    for x in (X, Y, Z):
        want = sympy.N((x * sympy.diff(y, x) / y).xreplace(at), 40)
        assert got[str(x)] == pytest.approx(float(want), rel=1e-13, abs=1e-15), x


def test_second_order_chain_rule_at_q_of_one_over_root_two():
    # Q = 1/sqrt(2): x = 0, wc = w0 and g = 1/(2 Q^2) = 1 (REFERENCES.md "Second order", common practice):
    # S^wc = S^w0 + S^Q for a low-pass, S^w0 - S^Q for a high-pass. a0 = a2 = 1, a1 = sqrt(2) is not
    # rational, so take Q^2 = a0 a2 / a1^2 = 1/2 from a0 = 1, a2 = 2, a1 = 2.
    import flint

    w, q = {"R": flint.fmpq(-1, 2)}, {"R": flint.fmpq(1, 4)}
    one, two = flint.fmpq(1), flint.fmpq(2)
    assert float(chain_rule_row(2, "lowpass", w, q, [one, two, two])["R"]) == pytest.approx(-0.25, rel=1e-30)
    assert float(chain_rule_row(2, "highpass", w, q, [one, two, two])["R"]) == pytest.approx(-0.75, rel=1e-30)


@pytest.mark.parametrize("name", ["sallen-key-lowpass", "mfb-bandpass", "adc-driver", "state-variable"])
def test_a_text_report_builds_no_sensitivity_form(name):
    r = report(catalogue.build(name))
    text = derive_text(r)
    assert "Sensitivity S_x^y" in text
    tables = _tables(r.analysis)
    assert tables and all(not t._shown for _v, _q, t in tables)


@pytest.mark.parametrize("name", catalogue.names())
def test_the_cutoff_number_equals_the_closed_form_at_the_values(name):
    # The number comes from the exact coefficients (cutoff_value, 40-digit decimals); the reference
    # puts the values into the closed form itself and lets sympy.N evaluate it at 30 digits.
    import math

    from symfilt.analysis.numbers import numeric_values

    c = catalogue.build(name)
    a = analyse(c, sensitivity=False, numbers=False)
    for st_ in (a.loaded, a.ideal):
        if st_.cutoff.value is None:
            continue
        want = finite_float(sympy.sympify(st_.cutoff.value).xreplace(c.values()))
        assert numeric_values(st_, c.values())["cutoff_hz"] == pytest.approx(want / (2 * math.pi), rel=1e-14)


def test_cutoff_value_in_floats_and_decimals():
    # Q = 1/sqrt(2): the cutoff is w0 (common practice); Q = 1/2 (two equal real poles at w0):
    # wc = w0·sqrt(sqrt(2) - 1) (from memory: the -3 dB point of 1/(1 + s/w0)^2).
    import decimal
    import math

    from symfilt.analysis.forms import cutoff_value

    assert cutoff_value(2, "lowpass", 10.0, 1 / math.sqrt(2), math.sqrt) == pytest.approx(10.0, rel=1e-15)
    assert cutoff_value(2, "lowpass", 1.0, 0.5, math.sqrt) == pytest.approx(math.sqrt(math.sqrt(2) - 1), rel=1e-15)
    assert cutoff_value(2, "highpass", 1.0, 0.5, math.sqrt) == pytest.approx(1 / math.sqrt(math.sqrt(2) - 1), rel=1e-15)
    with decimal.localcontext(decimal.Context(prec=40)) as ctx:
        got = cutoff_value(2, "lowpass", decimal.Decimal(1), decimal.Decimal("0.5"), ctx.sqrt)
        want = (decimal.Decimal(2).sqrt() - 1).sqrt()
    assert abs(got - want) < decimal.Decimal("1e-38")


@pytest.mark.parametrize("name", ["sallen-key-lowpass", "sallen-key-highpass", "mfb-lowpass", "adc-driver"])
def test_a_text_report_never_builds_the_second_order_cutoff(name):
    # The text shows the cutoff through w0 and Q and its number from the coefficients; the closed
    # form w0·sqrt(x + sqrt(x^2 + 1)) (REFERENCES.md "Second order", common practice) waits until read.
    from symfilt.analysis.forms import second_order_root

    r = report(catalogue.build(name))
    derive_text(r)
    for st_ in (r.analysis.loaded, r.analysis.ideal):
        assert st_.cutoff.has_value and "value" not in vars(st_.cutoff)
        root = second_order_root(st_.form.q)
        want = st_.form.w0 * root if st_.form.kind == "lowpass" else st_.form.w0 / root
        assert st_.cutoff.value == want
