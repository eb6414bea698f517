"""Closed-form roots of a sizing condition in the varied part: factors by python-flint, then the
quadratic formula.

The condition's numerator is factored once by python-flint (``fmpz_mpoly.factor``) with the
generators in sympy's own order (the varied part first, then the others as sympy sorts
them) and a lexicographic ordering, so every factor comes out primitive and with the sign
``sympy.factor_list`` gives it: the same factors as sympy's, in milliseconds where sympy's
multivariate factoring took tens of them. Each factor holding the varied part x is solved
by -c/b or the quadratic formula on its exact coefficients (:func:`low_degree_roots`).
"""

from __future__ import annotations

import functools
import math

import sympy

from symfilt.analysis.fastfactor import factor
from symfilt.analysis.findings import Finding, finding
from symfilt.engine.polybridge import poly_to_sympy


def closed_form_roots(condition, x, max_degree: int = 2) -> tuple[list, Finding | None]:
    """Roots in x of the numerator of ``condition``, when each factor holding x is of degree <= max_degree.

    Parameters
    ----------
    condition : sympy.Expr
        Zero exactly when the target is met.
    x : sympy.Symbol
        The varied part.
    max_degree : int
        Largest degree (in x, or in x^k for a factor in x^k only) solved.

    Returns
    -------
    (list of sympy.Expr, Finding or None)
        The roots, minus root first for each quadratic factor; or no roots and the reason.

    Examples
    --------
    >>> R, C, w = sympy.symbols("R C w", positive=True)
    >>> closed_form_roots(1 / (R * C) ** 2 - w**2, R)
    ([1/(C*w), -1/(C*w)], None)
    """
    if sympy.count_ops(condition) > 4000:
        return [], finding("equation-too-large")
    num = sympy.expand(sympy.numer(sympy.together(condition)))
    factored = factor_list(num, x)
    if factored is None:  # not a polynomial in its symbols (and pi) with rational coefficients
        return _sympy_closed_form(num, x, max_degree)
    degree, factors = factored
    if degree > 8:
        return [], finding("equation-degree", degree=degree)
    roots = []
    for cs, exps, ring_cs in factors:
        # a polynomial in x^k only (parts scaled together): solve for y = x^k
        k = math.gcd(*exps)
        if (len(cs) - 1) // k > max_degree:
            return [], finding("equation-factor-degree", degree=len(cs) - 1)
        roots += [r if k == 1 else sympy.root(r, k) for r in low_degree_roots(cs[::k], ring_cs[::k])]
    return roots, None


def _sympy_closed_form(num, x, max_degree: int) -> tuple[list, Finding | None]:
    """The same by sympy's own factor_list, for a numerator flint cannot hold (a radical of a symbol)."""
    try:
        poly = sympy.Poly(num, x)
    except sympy.PolynomialError:
        return [], finding("equation-not-polynomial")
    if poly.degree() > 8:
        return [], finding("equation-degree", degree=poly.degree())
    roots = []
    for fac, _mult in sympy.factor_list(num, x)[1]:
        p = sympy.Poly(fac, x)
        if p.degree() == 0:
            continue
        k = math.gcd(*[m[0] for m in p.monoms()])
        if p.degree() // k > max_degree:
            return [], finding("equation-factor-degree", degree=p.degree())
        cs = [p.coeff_monomial(x**i) for i in range(p.degree() + 1)]
        roots += [r if k == 1 else sympy.root(r, k) for r in low_degree_roots(cs[::k])]
    return roots, None


def _ring(expr, first=None):
    """(flint polynomial over the integers, its denominator, the generators) of a polynomial expression, the
    generators in sympy's order (``first`` ahead); None when it is no polynomial with rational coefficients."""
    import flint
    from sympy.polys.polyutils import _sort_gens

    gens = set(expr.free_symbols) | ({sympy.pi} if expr.has(sympy.pi) else set())
    order = list(_sort_gens(gens - {first}))
    if first is not None:
        order.insert(0, first)
    try:
        terms = sympy.Poly(expr, *order).as_dict() if order else {(): expr}
    except sympy.PolynomialError:
        return None
    if not all(c.is_Rational for c in terms.values()):
        return None
    den = math.lcm(*[int(c.q) for c in terms.values()])
    names = tuple(f"g{i}" for i in range(max(1, len(order))))
    ctx = flint.fmpz_mpoly_ctx.get(names, "lex")
    width = len(names)
    p = ctx.from_dict({(tuple(e) + (0,) * (width - len(e))): int(c * den) for e, c in terms.items()})
    return p, den, dict(zip(names, order))


def factor_list(num, x) -> tuple[int, list] | None:
    """The factors of ``num`` holding x, as ``sympy.factor_list(num, x)`` gives them, by python-flint.

    Parameters
    ----------
    num : sympy.Expr
        An expanded polynomial.
    x : sympy.Symbol

    Returns
    -------
    (int, list) or None
        The degree of ``num`` in x, and per factor holding x (in increasing degree, as sympy
        sorts them) its coefficients in x (sympy, lowest first) and the exponents of x that
        occur, and the same coefficients as flint polynomials with their generators' symbols; None
        when ``num`` is no polynomial with rational coefficients.

    Examples
    --------
    >>> x, y = sympy.symbols("x y", positive=True)
    >>> [(cs, exps) for cs, exps, _ring in factor_list(sympy.expand(-2 * y * (x**2 * y - 1) * (x + y)), x)[1]]
    [([y, 1], [0, 1]), ([-1, 0, y], [0, 2])]
    """
    ring = _ring(num, x)
    if ring is None:
        return None
    p, _den, symbols = ring
    if p == 0:
        return 0, []
    degree = p.degrees()[0]
    out = []
    for f, mult in p.factor()[1]:
        if f.degrees()[0] == 0:
            continue
        by_power: dict = {}
        for e, c in f.to_dict().items():
            by_power.setdefault(e[0], {})[(0,) + tuple(e[1:])] = c
        top = max(by_power)
        ctx = f.context()
        polys = [ctx.from_dict(by_power.get(i, {})) for i in range(top + 1)]
        cs = [poly_to_sympy(c, symbols) if c != 0 else sympy.Integer(0) for c in polys]
        out.append(((top, mult, len(f)), cs, sorted(by_power), [(c, symbols) for c in polys]))
    out.sort(key=lambda t: t[0][:2])
    return degree, [(cs, exps, ring_cs) for _key, cs, exps, ring_cs in out]


def square_part(d, ring=None) -> tuple:
    """(o, r) with d = o^2·r: the squares of d's positive factors (and of its constant) taken out.

    The factors are python-flint's, with the signs and content ``sympy.factor_list`` gives.

    Parameters
    ----------
    d : sympy.Expr or None
        An expanded polynomial (None when ``ring`` is given).
    ring : (flint.fmpz_mpoly, dict), optional
        d itself on python-flint with its generators' symbols, the generators in sympy's order.

    Returns
    -------
    (sympy.Expr, sympy.Expr)

    Examples
    --------
    >>> x, y = sympy.symbols("x y", positive=True)
    >>> square_part(sympy.expand(8 * x**2 * (y - 1) * (x + y) ** 2))
    (2*sqrt(2)*x*(x + y), y - 1)
    """
    factored = _factors(d) if ring is None else _flint_factors(ring[0], 1, ring[1])
    if factored is None:
        coeff, factors = sympy.factor_list(d)
    else:
        coeff, factors = factored
    out, rest = sympy.Integer(1), sympy.Integer(1)
    for f, m in factors:
        if f.is_positive:
            out, rest = out * f ** (m // 2), rest * f ** (m % 2)
        else:
            rest *= f**m
    return out * sympy.sqrt(abs(coeff)), sympy.expand(sympy.sign(coeff) * rest)


def _factors(d) -> tuple | None:
    """``sympy.factor_list(d)`` by python-flint (None when d is no polynomial with rational coefficients)."""
    ring = _ring(d)
    return None if ring is None else _flint_factors(*ring)


def _flint_factors(p, den: int, symbols: dict) -> tuple:
    """(coefficient, [(factor, multiplicity)]) of p/den, the factors in sympy."""
    const, factors = p.factor()
    coeff = sympy.Rational(int(const), den)
    return coeff, [(poly_to_sympy(f, symbols), int(m)) for f, m in factors]


def low_degree_roots(cs: list, ring_cs: list | None = None) -> list:
    """The roots in y of c0 + c1 y (+ c2 y^2), minus root first.

    -c/b, or the quadratic formula (-b -+ sqrt(b^2 - 4ac))/(2a) on the exact coefficients with
    the square factors of the discriminant taken out of the root and the factors common to a, b
    and that root cancelled. Sign and realness are left to the caller, which keeps only the roots
    positive at the values. No ``sympy.solve``: its simplification of each root took 1-3 s.

    Parameters
    ----------
    cs : list of sympy.Expr
        The coefficients, lowest power first (two or three).
    ring_cs : list, optional
        The same as (flint polynomial, generators' symbols): the discriminant is then formed there.

    Returns
    -------
    list of sympy.Expr

    Examples
    --------
    >>> low_degree_roots([sympy.Integer(-2), sympy.Integer(0), sympy.Integer(1)])
    [-sqrt(2), sqrt(2)]
    """
    if len(cs) == 2:
        return [-cs[0] / cs[1]]
    c, b, a = cs
    if ring_cs is None:
        out, radicand = square_part(sympy.expand(b**2 - 4 * a * c))
    else:
        (fc, symbols), (fb, _s), (fa, _s) = ring_cs
        if fb != 0:
            return _flint_quadratic(fc, fb, fa, symbols)
        out, radicand = square_part(None, (fb * fb - 4 * fa * fc, symbols))
    g = sympy.gcd(sympy.gcd(b, out), a)
    b, out, a = (sympy.cancel(v / g) for v in (b, out, a))
    h = sympy.gcd(b, out)
    b, out = factor(sympy.cancel(b / h)), sympy.cancel(out / h)
    d = out * sympy.sqrt(radicand)
    den = factor(2 * a)
    return [h * (-b - d) / den, h * (-b + d) / den]


def _flint_quadratic(fc, fb, fa, symbols: dict) -> list:
    """:func:`low_degree_roots` of c + b y + a y^2 (b not zero) with every gcd, exact quotient and
    factorisation done on the flint coefficients: the same steps, giving the same expressions, as
    sympy's ``gcd``, ``cancel`` and ``factor`` on the sympy coefficients (a number radical such as
    sqrt(2) in front of the square part is a generator to sympy's gcd, so it divides nothing)."""
    square, number, radicand = _square_part_flint(fb * fb - 4 * fa * fc, symbols)
    r, surd = sympy.sqrt(number).as_coeff_Mul()  # sqrt(8) = 2*sqrt(2): r = 2 joins the polynomial part
    out = square * int(r)
    g = _positive(fb.gcd(out).gcd(fa))
    fb, out, fa = fb / g, out / g, fa / g
    h = _positive(fb.gcd(out))
    fb, out = fb / h, out / h
    to = functools.partial(poly_to_sympy, symbols=symbols)
    b = factor(to(fb))
    d = sympy.Add(*[surd * t for t in sympy.Add.make_args(to(out))]) * sympy.sqrt(radicand)
    den = factor(to(2 * fa))
    return [to(h) * (-b - d) / den, to(h) * (-b + d) / den]


def _positive(p):
    """A flint polynomial with a positive leading coefficient (sympy's gcd normalisation)."""
    return -p if p.coeffs()[0] < 0 else p


def _square_part_flint(p, symbols: dict) -> tuple:
    """(o, n, r) with p = o^2 * n * r: o the flint product of the squares of p's positive factors, n the
    absolute content (an integer), r the sympy rest with the content's sign (:func:`square_part`)."""
    const, factors = p.factor()
    out, rest = p.context().from_dict({(0,) * p.context().nvars(): 1}), sympy.Integer(1)
    for f, m in factors:
        fe, m = poly_to_sympy(f, symbols), int(m)
        if fe.is_positive:
            out, rest = out * f ** (m // 2), rest * fe ** (m % 2)
        else:
            rest *= fe**m
    return out, abs(int(const)), sympy.expand(sympy.sign(int(const)) * rest)


__all__ = ["closed_form_roots", "factor_list", "low_degree_roots", "square_part"]
