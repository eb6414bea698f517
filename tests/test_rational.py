"""The rational-function core (symfilt.engine.rational) against hand results and sympy.

References: limits, degrees and cancellation of rational functions are checked
against sympy's own ``limit``, ``degree`` and ``cancel`` (a general computer-algebra
library), or against results worked by hand (marked "by hand").
"""

from __future__ import annotations

import flint
import pytest
import sympy

from symfilt.analysis.network import NetworkFunction
from symfilt.engine.rational import Ratio, cancel_exprs, cancel_pair, factor_ratio, rational_limit, tidy_quotient

x, y, z = sympy.symbols("x y z", positive=True)

CASES = [
    ((x + y) * (2 * x - 3) / ((x + y) * (x * z + 1)), x),
    ((x**2 * y + 3 * x) / (2 * x**2 + y), x),
    ((y + z) / (x**3 + x * y + z), x),
    ((x * y - z) * (x + 1) / (4 * x * (x + 1)), x),
    ((x / 3 + sympy.Rational(1, 2)) / (y - x), y),
    (sympy.pi * x / (x + 2 * sympy.pi), x),
]


def _same(a, b) -> bool:
    return sympy.simplify(a - b) == 0


@pytest.mark.parametrize("expr, var", CASES)
def test_the_ratio_is_the_expression_cancelled(expr, var):
    num, den = sympy.fraction(sympy.together(expr))
    n, d = Ratio.from_sympy(num, den).to_sympy()
    assert _same(n / d, expr)
    # coprime: sympy's cancel finds nothing more to take out
    assert sympy.gcd(n, d) in (1, -1)


@pytest.mark.parametrize("expr, var", CASES)
@pytest.mark.parametrize("point", [0, "oo"])
def test_limits_agree_with_sympy(expr, var, point):
    want = sympy.limit(expr, var, 0 if point == 0 else sympy.oo)
    got = rational_limit(expr, var, point)
    if want.is_infinite:
        assert got == sympy.zoo
    else:
        assert _same(got, want)


@pytest.mark.parametrize("expr, var", CASES)
def test_degree_and_coefficients_agree_with_sympy(expr, var):
    num, den = sympy.fraction(sympy.cancel(sympy.together(expr)))
    r = Ratio.from_sympy(num, den)
    assert r.degree(var) == max(sympy.degree(num, var), sympy.degree(den, var))
    n_cs, d_cs = r.coefficients(var)
    n, d = r.to_sympy()
    from symfilt.engine.rational import poly_to_sympy

    assert [poly_to_sympy(c, r.symbols) for c in n_cs] == sympy.Poly(n, var).all_coeffs()[::-1]
    assert [poly_to_sympy(c, r.symbols) for c in d_cs] == sympy.Poly(d, var).all_coeffs()[::-1]


def test_gains_by_hand():
    # by hand: H = k s / (2 s + 1) -> 0 at s = 0, k/2 as s -> oo; s**2/(s + 1) is unbounded
    s, k = sympy.symbols("s k")
    r = Ratio.from_sympy(k * s, 2 * s + 1)
    assert r.gain(0, s) == 0
    assert r.gain("oo", s) == k / 2
    assert Ratio.from_sympy(s**2, s + 1).gain("oo", s) == sympy.oo
    assert Ratio.from_sympy(1, 0).gain(0, s) == sympy.oo


def test_limit_of_a_variable_that_is_absent_is_the_ratio_itself():
    r = Ratio.from_sympy(x + 1, y)
    assert r.limit(z, 0) is r
    assert r.limit(x, "oo") is None


def test_subs_exact_and_symbolic_agree_with_sympy():
    expr = (x**2 * y + z) / (x * y - 2 * z)
    r = Ratio.from_sympy(*sympy.fraction(expr))
    for values in ({y: sympy.Rational(3, 7)}, {"x": 2, "z": 0.25}, {y: x + z}, {y: sympy.sqrt(2) * 0 + 5}):
        sub = {(sympy.Symbol(k, positive=True) if isinstance(k, str) else k):
               (sympy.Rational(repr(v)) if isinstance(v, float) else v) for k, v in values.items()}
        n, d = r.subs(values).to_sympy()
        assert _same(n / d, expr.xreplace(sub))


def test_subs_everything_gives_a_number():
    r = Ratio.from_sympy(x + y, x - y).subs({x: 3, y: 1})
    assert r.to_sympy() == (2, 1)
    assert r.free_symbols() == set()


def test_cancellation_sign_rule():
    # the denominator's trailing term (lowest in degrevlex) is made positive; by hand
    ctx = flint.fmpz_mpoly_ctx.get(("a", "b"), "degrevlex")
    a, b = ctx.gens()
    n, d = cancel_pair(3 * (a + b) * a, -6 * (a + b) * (b + 1))
    assert (n, d) == (-a, 2 * b + 2)
    q = flint.fmpq_mpoly_ctx.get(("a",), "degrevlex")
    n, d = cancel_pair(q.gens()[0] / 4, q.from_dict({(1,): -1, (0,): flint.fmpq(-1, 2)}))
    assert (str(n), str(d)) == ("-a", "4*a + 2")
    # zero and infinite ratios
    assert cancel_pair(ctx.from_dict({}), a) == (0, 1)
    assert cancel_pair(a + 3, ctx.from_dict({})) == (1, 0)


def test_sympy_views_of_the_cancellation():
    assert cancel_exprs(x**2 - y**2, 2 * x + 2 * y) == (x - y, 2)
    assert cancel_exprs(x / 2, -x * y - y) == (-x, 2 * x * y + 2 * y)
    assert factor_ratio(x**2 * y + x * y**2, x - y) == x * y * (x + y) / (x - y)
    ctx = flint.fmpz_mpoly_ctx.get(("x", "y"), "degrevlex")
    gx, gy = ctx.gens()
    assert tidy_quotient(gx * gy + gx, 2 * gx, {"x": x, "y": y}) == (y + 1) / 2


def test_network_function_keeps_a_ratio_through_every_operation():
    s = sympy.Symbol("s")
    h = NetworkFunction.from_expr((x + s) / (x * y * s + y))
    assert isinstance(h.ratio, Ratio)
    g = h.subs({y: 2})
    assert isinstance(g.ratio, Ratio)
    assert _same(g.as_expr(), ((x + s) / (x * y * s + y)).subs(y, 2))
    assert g.limit(x, sympy.oo).as_expr() == sympy.Rational(1, 2) / s
    assert NetworkFunction(sympy.Integer(0), sympy.Integer(1)).dc_gain() == 0
    zin = NetworkFunction(sympy.Integer(1), sympy.Integer(0), "zin")
    assert zin.infinite and zin.as_expr() == sympy.oo and zin.subs({x: 1}) is zin
