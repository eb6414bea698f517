"""``sympy.factor`` of a product of rational powers of polynomials, and ``sympy.cancel`` of a
ratio of integer polynomials, done by python-flint.

:func:`factor_power_product` gives the very expression ``sympy.factor`` gives (same tree, so
the same ``str`` and printed text) for the shapes the standard forms produce: a rational
number times powers ``P**q`` (``q`` rational) of polynomials ``P`` with rational
coefficients in positive symbols and pi, e.g. ``sqrt(a0/a2)`` or ``sqrt(a0*a2)/a1``. For
anything else it answers None and the caller keeps sympy's path.

How sympy arranges its answer (``sympy.polys.polytools._symbolic_factor_list``, checked
against it by ``tests/test_fastfactor.py`` and by whole-command output comparisons):

* every base is split into its content and its irreducible factors over the integers, each
  primitive with a positive leading coefficient in lex order of the generators sorted by
  ``sympy.polys.polyutils._sort_gens``; equal factors' exponents add up;
* an integer power's content goes into the rational coefficient; a fractional power of a
  positive content stays a number radical (``sqrt(2)``), its rational part joining the
  coefficient;
* the coefficient is put in front by ``sympy.core.exprtools._keep_coeff`` (so ``2*(x + y)``
  stays unexpanded).

:func:`cancel_rational` gives the very expression ``sympy.cancel`` gives for a ratio of
polynomials whose numerator and denominator (as sympy's own ``factor_terms`` and
``as_numer_denom`` leave them) have integer coefficients: sympy's answer over the integers is
``P/Q`` with the gcd (integer content included) divided out and the leading coefficient of
``Q`` positive in lex order of the sorted generators, which fixes ``P`` and ``Q`` uniquely,
so flint's gcd in the same ring gives the same pair (``sympy.polys.rings.PolyElement.cancel``).

Under a fractional power sympy keeps a factor apart only when it can tell that it is
positive, and groups the others; that grouping is not reproduced: a fractional power of a
negative content or of a factor with a coefficient that is not positive gives None.

:func:`factor` is ``sympy.factor`` for every commutative expression: it tries
:func:`factor_power_product` first, and otherwise runs sympy's own symbolic factoring
(``sympy.polys.polytools._symbolic_factor_list``, the same steps in the same order: ``together``,
one polynomial per factor of the product, read by sympy with sympy's generators, a radical such as
``sqrt(R1 + R2)`` being one of them) with only the factorisation of each polynomial over the
integers or rationals done by python-flint (:func:`poly_factor_list`), which gives
``Poly.factor_list``'s content and its primitive factors with positive lex leading coefficients.
"""

from __future__ import annotations

import functools
import math

import flint
import sympy
from sympy.core.evalf import pure_complex
from sympy.core.exprtools import _keep_coeff, factor_terms
from sympy.polys import polyoptions
from sympy.polys.polyerrors import PolificationFailed
from sympy.polys.polytools import _factors_product, _poly_from_expr
from sympy.polys.polyutils import _sort_gens

from symfilt.engine.polybridge import PolyContext, poly_to_sympy


def factor_power_product(e) -> sympy.Expr | None:
    """``sympy.factor(e)`` by flint for a rational times rational powers of polynomials, else None.

    Parameters
    ----------
    e : sympy.Expr
        A product of a rational number and powers (rational exponents) of polynomials with
        rational coefficients in positive symbols and pi.

    Returns
    -------
    sympy.Expr or None
        The expression ``sympy.factor(e)`` returns; None when ``e`` has another shape or when
        sympy's arrangement is not reproduced (see the module notes).

    Examples
    --------
    >>> x, y = sympy.symbols("x y", positive=True)
    >>> factor_power_product(sympy.sqrt(2*x**2 + 2*x*y) / (x**2 - y**2))
    sqrt(2)*sqrt(x)/((x - y)*sqrt(x + y))
    >>> factor_power_product(sympy.sqrt(x - y)) is None
    True
    """
    parsed = _power_product(e)
    if parsed is None:
        return None
    coeff, items = parsed
    bridge = PolyContext([b for b, _q in items])
    if not bridge.gens:
        return None
    ring = _LexRing(bridge)
    radicals, exps, polys = [], {}, {}
    for base, q in items:
        k, fs = ring.factor(bridge.to_flint(base))
        if q.is_Integer:
            coeff *= k**q
        elif k < 0 or not all(c > 0 for f, _m in fs for c in f.coeffs()):
            return None
        elif k != 1:
            radicals.append(sympy.Pow(k, q))
        for f, m in fs:
            key = str(f)
            polys[key] = f
            exps[key] = exps.get(key, 0) + m * q
    rc, rr = sympy.Mul(*radicals).as_coeff_Mul()
    factors = [poly_to_sympy(polys[key], ring.symbols) ** x for key, x in exps.items() if x != 0]
    return _keep_coeff(coeff * rc, sympy.Mul(rr, *factors))


@functools.lru_cache(maxsize=1024)
def factor(e) -> sympy.Expr:
    """``sympy.factor(e)``, its polynomials factored by python-flint (memoised).

    Parameters
    ----------
    e : sympy.Expr
        Any expression; one that is not a commutative ``Expr`` goes to ``sympy.factor``.

    Returns
    -------
    sympy.Expr
        The expression ``sympy.factor(e)`` returns (see the module notes).

    Examples
    --------
    >>> x, y = sympy.symbols("x y", positive=True)
    >>> factor(sympy.sqrt(x + y) * x**2 - sympy.sqrt(x + y) * y**2)
    (x - y)*(x + y)**(3/2)
    """
    fast = factor_power_product(e)
    if fast is not None:
        return fast
    if not isinstance(e, sympy.Expr) or not e.is_commutative or hasattr(e, "_eval_factor"):
        return sympy.factor(e)
    opt = polyoptions.build_options((), {})
    opt["fraction"] = True
    try:
        coeff, factors = _symbolic_factor_list(sympy.together(e, fraction=True), opt)
    except sympy.PolynomialError:
        return sympy.factor(e)
    return _keep_coeff(coeff, _factors_product(factors))


def _symbolic_factor_list(expr, opt) -> tuple:
    """``sympy.polys.polytools._symbolic_factor_list(expr, opt, "factor")`` with
    :func:`poly_factor_list` in place of ``Poly.factor_list``; the rest is sympy's, step for step."""
    coeff, factors = sympy.Integer(1), []
    args = [i._eval_factor() if hasattr(i, "_eval_factor") else i for i in sympy.Mul.make_args(expr)]
    for arg in args:
        if arg.is_Number or (isinstance(arg, sympy.Expr) and pure_complex(arg)):
            coeff *= arg
            continue
        if arg.is_Pow and arg.base != sympy.E:
            base, exp = arg.args
            if base.is_Number and exp.is_Number:
                coeff *= arg
                continue
            if base.is_Number:
                factors.append((base, exp))
                continue
        else:
            base, exp = arg, sympy.Integer(1)
        try:
            poly, _opt = _poly_from_expr(base, opt)
        except PolificationFailed as exc:
            factors.append((exc.expr, exp))
            continue
        _coeff, _factors = poly_factor_list(poly)
        if _coeff is not sympy.S.One:
            if exp.is_Integer:
                coeff *= _coeff**exp
            elif _coeff.is_positive:
                factors.append((_coeff, exp))
            else:
                _factors.append((_coeff, sympy.Integer(1)))
        if exp is sympy.S.One:
            factors.extend(_factors)
        elif exp.is_integer:
            factors.extend([(f, k * exp) for f, k in _factors])
        else:
            other = []
            for f, k in _factors:
                if f.as_expr().is_positive:
                    factors.append((f, k * exp))
                else:
                    other.append((f, k))
            factors.append((_factors_product(other), exp))
    collected: dict = {}
    for k, v in factors:
        collected[k] = collected.get(k, 0) + v
    return coeff, list(collected.items())


def poly_factor_list(poly) -> tuple:
    """``poly.factor_list()`` by python-flint for a ``sympy.Poly`` over ZZ or QQ (sympy's own otherwise).

    Parameters
    ----------
    poly : sympy.Poly

    Returns
    -------
    (sympy.Rational, list of (sympy.Poly, int))
        The content with its sign, and the primitive irreducible factors with positive leading
        coefficients in lex order of the generators, with their multiplicities, as
        ``Poly.factor_list`` gives them (the order of the factors aside).

    Examples
    --------
    >>> x, y = sympy.symbols("x y")
    >>> poly_factor_list(sympy.Poly(-2 * x**2 + 2 * y**2, x, y))
    (-2, [(Poly(x - y, x, y, domain='ZZ'), 1), (Poly(x + y, x, y, domain='ZZ'), 1)])
    """
    dom = poly.domain
    if not (dom.is_ZZ or dom.is_QQ) or poly.is_ground:
        return poly.factor_list()
    ctx = flint.fmpz_mpoly_ctx.get(tuple(f"x{i}" for i in range(len(poly.gens))), "lex")
    pairs = (lambda c: (int(c.numerator), int(c.denominator))) if dom.is_QQ else (lambda c: (int(c), 1))
    content, fs = _integer_factors(ctx, {m: pairs(c) for m, c in poly.rep.to_dict().items()})
    out = []
    for f, m in fs:
        d = {tuple(int(e) for e in k): dom.convert(int(c)) for k, c in f.to_dict().items()}
        out.append((sympy.Poly.from_dict(d, *poly.gens, domain=dom), m))
    return content, out


def _integer_factors(ctx, terms: dict) -> tuple:
    """(rational content with sign, [(primitive factor with positive lex leading coefficient,
    multiplicity)]) of the nonzero polynomial ``{monomial: (numerator, denominator)}`` in the
    integer ring ``ctx``: the denominators cleared, then flint's factorisation."""
    den = math.lcm(*(q for _p, q in terms.values()))
    const, fs = ctx.from_dict({k: p * (den // q) for k, (p, q) in terms.items()}).factor()
    out = []
    for f, m in fs:
        if f.coeffs()[0] < 0:
            f, const = -f, const * (-1) ** int(m)
        out.append((f, int(m)))
    return sympy.Rational(int(const), den), out


def cancel_rational(e) -> sympy.Expr | None:
    """``sympy.cancel(e)`` by flint for a ratio of integer-coefficient polynomials in symbols, else None.

    Parameters
    ----------
    e : sympy.Expr
        Any expression; only a rational function of commutative symbols (no pi, no radicals)
        whose numerator and denominator sympy reads with integer coefficients takes this path.

    Returns
    -------
    sympy.Expr or None
        The expression ``sympy.cancel(e)`` returns, or None (use ``sympy.cancel``).

    Examples
    --------
    >>> x, y = sympy.symbols("x y", positive=True)
    >>> cancel_rational((x**2 - y**2) / (2*y - 2*x)), sympy.cancel((x**2 - y**2) / (2*y - 2*x))
    (-x/2 - y/2, -x/2 - y/2)
    >>> cancel_rational(sympy.sqrt(x) / x) is None
    True
    """
    from sympy.simplify.simplify import signsimp

    if not isinstance(e, sympy.Expr) or e.is_Number or not _rational_function(e):
        return None
    p, q = factor_terms(signsimp(e), radical=True).as_numer_denom()
    if not (_rational_function(p, polynomial=True) and _rational_function(q, polynomial=True)):
        return None
    bridge = PolyContext([p, q])
    if not bridge.gens:
        return None
    ring = _LexRing(bridge)
    fp, fq = ring.integer(bridge.to_flint(p)), ring.integer(bridge.to_flint(q))
    if fp is None or fq is None or fq == 0:
        return None
    g = fp.gcd(fq)
    if not g.is_one():
        fp, fq = fp / g, fq / g
    if fq.coeffs()[0] < 0:
        fp, fq = -fp, -fq
    return poly_to_sympy(fp, ring.symbols) / poly_to_sympy(fq, ring.symbols)


def _rational_function(expr, polynomial: bool = False) -> bool:
    """True for a rational function (a polynomial when ``polynomial``) with rational coefficients
    in commutative symbols, without pi."""
    if expr.is_Rational:
        return True
    if isinstance(expr, sympy.Symbol):
        return expr.is_commutative is True
    if isinstance(expr, (sympy.Add, sympy.Mul)):
        return all(_rational_function(a, polynomial) for a in expr.args)
    if isinstance(expr, sympy.Pow):
        return (expr.exp.is_Integer and (expr.exp > 0 or not polynomial)
                and _rational_function(expr.base, polynomial))
    return False


def _power_product(e):
    """(rational, [(base, rational exponent)]) of a product of powers of polynomials, or None."""
    if not isinstance(e, sympy.Expr) or not e.free_symbols:
        return None
    coeff, items = sympy.Integer(1), []
    for arg in sympy.Mul.make_args(e):
        if arg.is_Rational:
            coeff *= arg
            continue
        base, q = (arg.base, arg.exp) if arg.is_Pow else (arg, sympy.Integer(1))
        if not q.is_Rational or not (base.is_Rational and base > 0 or is_polynomial(base)):
            return None
        items.append((base, q))
    return coeff, items


def is_polynomial(expr, positive: bool = True) -> bool:
    """True for a polynomial with rational coefficients in symbols and pi, in any arrangement
    (sums, products, whole powers).

    Parameters
    ----------
    expr : sympy.Expr
    positive : bool
        Ask every symbol to be declared positive.

    Examples
    --------
    >>> x = sympy.Symbol("x", positive=True)
    >>> y = sympy.Symbol("y")
    >>> is_polynomial((x + 1) ** 2 * sympy.pi / 3), is_polynomial(sympy.sqrt(x) + 1)
    (True, False)
    >>> is_polynomial(y), is_polynomial(y, positive=False)
    (False, True)
    """
    if expr.is_Rational or expr is sympy.pi:
        return True
    if isinstance(expr, sympy.Symbol):
        return expr.is_positive is True or not positive
    if isinstance(expr, (sympy.Add, sympy.Mul)):
        return all(is_polynomial(a, positive) for a in expr.args)
    if isinstance(expr, sympy.Pow):
        return expr.exp.is_Integer and expr.exp > 0 and is_polynomial(expr.base, positive)
    return False


class _LexRing:
    """Integer polynomials in a bridge's generators, lex-ordered as sympy sorts generators."""

    def __init__(self, bridge: PolyContext) -> None:
        real = [sympy.pi if g == bridge._pi else g for g in bridge.gens]
        order = _sort_gens(real)
        self.perm = [real.index(g) for g in order]
        names = tuple(f"x{i}" for i in range(len(order)))
        self.symbols = dict(zip(names, order))
        self.ctx = flint.fmpz_mpoly_ctx.get(names, "lex")

    def integer(self, p):
        """A bridge's ``fmpq_mpoly`` with integer coefficients in this ring, or None if one is not an integer."""
        terms = p.to_dict()
        if any(c.q != 1 for c in terms.values()):
            return None
        return self.ctx.from_dict({tuple(k[i] for i in self.perm): int(c.p) for k, c in terms.items()})

    def factor(self, p):
        """(rational content with sign, [(primitive factor with positive lex leading
        coefficient, multiplicity)]) of a nonzero ``fmpq_mpoly`` of the bridge."""
        return _integer_factors(self.ctx, {tuple(k[i] for i in self.perm): (int(c.p), int(c.q))
                                           for k, c in p.to_dict().items()})
