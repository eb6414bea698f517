"""analysis.fastfactor: flint's factoring gives sympy.factor's very expression, or declines.

The reference is ``sympy.factor`` itself (tests/REFERENCES.md, "What sympy's factoring
gives"): on generated products of rational powers of polynomials the fast answer must have
the same ``str`` and compare equal as a tree; where the module declines (None), tidy keeps
sympy's path.
"""

from __future__ import annotations

import pytest
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

from symfilt.analysis.fastfactor import factor_power_product
from symfilt.analysis.numeric import tidy

X = sympy.symbols("R1 R_s C1 A_U1 x", positive=True)
GENS = list(X) + [sympy.pi]

coefficient = st.integers(-3, 3).filter(lambda c: c != 0)
monomial = st.tuples(coefficient, st.lists(st.sampled_from(GENS), max_size=2))
polynomial = st.lists(monomial, min_size=1, max_size=3).map(
    lambda ms: sympy.Add(*[c * sympy.Mul(*gs) for c, gs in ms]))
exponent = st.sampled_from([sympy.Integer(k) for k in (-2, -1, 1, 2)]
                           + [sympy.Rational(k, 2) for k in (-3, -1, 1, 3)])
number = st.sampled_from([sympy.Integer(1), sympy.Integer(-1), sympy.Rational(3, 4), sympy.Integer(6),
                          sympy.sqrt(2)])
product = st.tuples(number, st.lists(st.tuples(polynomial, exponent), min_size=1, max_size=3)).map(
    lambda t: t[0] * sympy.Mul(*[p**q for p, q in t[1]]))


@settings(max_examples=300, deadline=None, derandomize=True, database=None)
@given(product)
def test_fast_factor_is_sympys(e):
    fast = factor_power_product(e)
    if fast is not None:
        slow = sympy.factor(e)
        assert str(fast) == str(slow)
        assert fast == slow


@settings(max_examples=150, deadline=None, derandomize=True, database=None)
@given(product)
def test_tidy_is_the_sympy_path(e):
    """tidy (memoised, fast paths inside) against the old body: cancel, then factor. The one
    departure allowed: a product of powers shown as sympy.factor gives it, when that form is short
    (the old body could keep the cancelled, expanded form of such a product)."""
    old = sympy.cancel(e) if sympy.count_ops(e) < 400 else e
    old = sympy.factor(old) if sympy.count_ops(old) < 120 else old
    got = tidy(e)
    if str(got) != str(old):
        assert str(got) == str(sympy.factor(e)) and sympy.count_ops(got) < 120
        assert sympy.simplify(got - old) == 0


radical = polynomial.map(sympy.sqrt)
scale = st.sampled_from([sympy.Integer(k) for k in (1, -1, 2, -3)] + [sympy.Rational(1, 2), sympy.Rational(-2, 3)])
term = st.tuples(scale, st.lists(st.one_of(st.sampled_from(GENS), radical), max_size=2)).map(
    lambda t: t[0] * sympy.Mul(*t[1]))
total = st.lists(term, min_size=1, max_size=3).map(lambda ts: sympy.Add(*ts))
general = st.one_of(
    st.tuples(total, st.lists(st.tuples(total, st.sampled_from([-2, -1, 1, 2])), max_size=2)).map(
        lambda t: t[0] * sympy.Mul(*[p**k for p, k in t[1]])),
    st.tuples(total, total, total).map(lambda t: t[0] / t[1] + t[2]))


@settings(max_examples=200, deadline=None, derandomize=True, database=None)
@given(general)
def test_general_factor_is_sympys(e):
    """fastfactor.factor against sympy.factor on sums with radicals, pi and rational numbers, products
    and sums of fractions: the same tree (srepr), or the same error."""
    from symfilt.analysis.fastfactor import factor

    try:
        slow = sympy.factor(e)
    except sympy.PolynomialError:
        with pytest.raises(sympy.PolynomialError):
            factor(e)
        return
    assert sympy.srepr(factor(e)) == sympy.srepr(slow)


@settings(max_examples=200, deadline=None, derandomize=True, database=None)
@given(st.lists(monomial, min_size=1, max_size=4), st.lists(monomial, min_size=1, max_size=3),
       st.sampled_from([sympy.Integer(1), sympy.Rational(2, 3), sympy.Integer(-6)]))
def test_poly_factor_list_is_sympys(a, b, k):
    """poly_factor_list of a product of two generated polynomials, over ZZ and over QQ, against
    Poly.factor_list: the same content and the same factors with the same multiplicities."""
    from symfilt.analysis.fastfactor import poly_factor_list

    p = sympy.expand(k * sympy.Add(*[c * sympy.Mul(*gs) for c, gs in a]) * sympy.Add(*[c * sympy.Mul(*gs) for c, gs in b]))
    if p.is_number:
        return
    poly = sympy.Poly(p)
    coeff, factors = poly_factor_list(poly)
    want_coeff, want = poly.factor_list()
    assert coeff == want_coeff and type(coeff) is type(want_coeff)
    assert sorted(map(str, factors)) == sorted(map(str, want))
    assert {f: m for f, m in factors} == {f: m for f, m in want}


R1, R_s, C1, A, x = X
TABLE = [  # input, sympy.factor's answer (computed by sympy 1.14; the fast path must agree)
    (1 / sympy.sqrt(C1 * R1 + C1 * R_s), "1/(sqrt(C1)*sqrt(R1 + R_s))"),
    (sympy.sqrt(2 * sympy.pi * A + 2 * sympy.pi) / (R1 + R_s), "sqrt(2)*sqrt(pi)*sqrt(A_U1 + 1)/(R1 + R_s)"),
    ((2 * R1 + 2 * R_s) / 3, "2*(R1 + R_s)/3"),
    ((R1**2 - R_s**2) / (2 * R_s - 2 * R1), "-(R1 + R_s)/2"),
    (sympy.sqrt(4 * R1 + 4 * R_s) * sympy.sqrt(R1 + R_s), "2*(R1 + R_s)"),
    (sympy.sqrt(R1 / 2 + R_s / 2), "sqrt(2)*sqrt(R1 + R_s)/2"),
]


def test_table_matches_sympy():
    for e, text in TABLE:
        assert str(sympy.factor(e)) == text
        assert str(factor_power_product(e)) == text


def test_declines_what_it_cannot_match():
    # under a square root sympy groups the factors it cannot prove positive; not reproduced
    assert factor_power_product(sympy.sqrt(R1 - R_s)) is None
    assert factor_power_product(sympy.sqrt(-R1 - R_s)) is None
    # floats, functions, numbers alone and non-positive symbols keep sympy's path
    y = sympy.Symbol("y")
    for e in (sympy.Float(0.5) * R1, sympy.exp(R1), sympy.sqrt(2) + 1, y + 1, sympy.sqrt(sympy.sqrt(R1) + 1)):
        assert factor_power_product(e) is None


# --- cancel ----------------------------------------------------------------------------------
# The reference is sympy.cancel itself (tests/REFERENCES.md, "What sympy's factoring gives"):
# on generated rational functions of symbols the flint answer must be the very expression.

PLAIN = sympy.symbols("R1 R_s C1 A_U1", positive=True) + (sympy.Symbol("y"),)
plain_polynomial = st.lists(st.tuples(st.integers(-4, 4).filter(bool),
                                      st.lists(st.sampled_from(PLAIN), max_size=3)), min_size=1, max_size=4).map(
    lambda ms: sympy.Add(*[c * sympy.Mul(*gs) for c, gs in ms]))
rational_function = st.tuples(plain_polynomial, plain_polynomial, plain_polynomial,
                              st.sampled_from([sympy.Integer(1), sympy.Rational(2, 3), sympy.Integer(-5)])).map(
    lambda t: t[3] * t[0] * t[2] / (t[1] * t[2]) + (t[0] / t[2] if t[3] == -5 else 0))


@settings(max_examples=300, deadline=None, derandomize=True, database=None)
@given(rational_function)
def test_fast_cancel_is_sympys(e):
    from symfilt.analysis.fastfactor import cancel_rational

    fast = cancel_rational(e)
    slow = sympy.cancel(e)
    if fast is not None:
        assert str(fast) == str(slow)
        assert sympy.srepr(fast) == sympy.srepr(slow)


def test_fast_cancel_declines_what_it_does_not_reproduce():
    from symfilt.analysis.fastfactor import cancel_rational

    x, y = sympy.symbols("x y", positive=True)
    for e in (sympy.sqrt(x) / (x + 1), sympy.pi * x / (x + 1), sympy.Float(0.5) * x / y, sympy.Integer(3),
              sympy.sin(x) / x):
        assert cancel_rational(e) is None
    assert cancel_rational((x**2 - y**2) / (x + y)) == x - y
