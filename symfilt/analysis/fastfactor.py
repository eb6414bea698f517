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
"""

from __future__ import annotations

import flint
import sympy
from sympy.core.exprtools import _keep_coeff, factor_terms
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
        if not q.is_Rational or not (base.is_Rational and base > 0 or _polynomial(base)):
            return None
        items.append((base, q))
    return coeff, items


def _polynomial(expr) -> bool:
    """True for a polynomial with rational coefficients in positive symbols and pi."""
    if expr.is_Rational or expr is sympy.pi:
        return True
    if isinstance(expr, sympy.Symbol):
        return expr.is_positive is True
    if isinstance(expr, (sympy.Add, sympy.Mul)):
        return all(_polynomial(a) for a in expr.args)
    if isinstance(expr, sympy.Pow):
        return expr.exp.is_Integer and expr.exp > 0 and _polynomial(expr.base)
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
        terms = p.to_dict()
        den = 1
        for c in terms.values():
            den = den * int(c.q) // flint.fmpz(den).gcd(int(c.q))
        ints = {tuple(k[i] for i in self.perm): int(c * den) for k, c in terms.items()}
        const, fs = self.ctx.from_dict(ints).factor()
        out = []
        for f, m in fs:
            if f.coeffs()[0] < 0:
                f, const = -f, const * (-1) ** m
            out.append((f, int(m)))
        return sympy.Rational(int(const), den), out
