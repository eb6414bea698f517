"""Tied values put into a derived ratio, on the flint polynomials.

The engine derives with every part as its own symbol; a tied part's symbol is then
replaced by its expression (a ratio ``p/q`` of integer polynomials in the free
symbols, :meth:`symfilt.model.circuit.Circuit.ties`), all on ``fmpz_mpoly``.

Ties with a constant ``q`` (``R/2``, ``2*C``, ``R1*k``: the usual ones) are put in
together by one flint ``compose``: with ``L`` the least common multiple of their
constants, ``t`` becomes ``p (L/q) u`` where the generator ``u`` stands for ``1/L``,
and ``u`` is then taken back out as the elimination does with ``G:R`` (``sum_j c_j u^j``
times ``L^U`` is ``sum_j c_j L^(U - j)``). For the other ties, a polynomial ``sum_k c_k t^k`` of
top degree ``T`` in the tied symbol ``t`` (taken over numerator and denominator
together), both are multiplied by ``q^T``: it becomes ``sum_k c_k p^k q^(T - k)``,
so the ratio stays a ratio of polynomials and no fraction appears. The common
factor (a twin-T's pole-zero pair that cancels only at balanced values) is divided
out at the end by the one rule of :func:`symfilt.engine.rational.cancel_pair`.
"""

from __future__ import annotations

import math
from typing import Mapping

import flint
import sympy

from symfilt.engine.rational import Ratio, reringed
from symfilt.errors import SingularCircuitError
from symfilt.model.safe import as_sympy

__all__ = ["substitute_ties"]


def substitute_ties(ratio: Ratio, ties: Mapping[str, sympy.Expr], where: str = "circuit") -> Ratio:
    """The ratio with each tied symbol replaced by its expression, cancelled.

    Parameters
    ----------
    ratio : Ratio
        A derived ratio over the parts' own symbols.
    ties : mapping of str to sympy.Expr
        Tied symbol name -> rational expression over symbols that are not tied.
    where : str
        The place named when the tied values leave no solution.

    Returns
    -------
    Ratio

    Raises
    ------
    SingularCircuitError
        When the denominator vanishes with the tied values.

    Examples
    --------
    >>> R, C, R1, C1, s = sympy.symbols("R C R1 C1 s", positive=True)
    >>> r = Ratio.from_sympy(1, 1 + s * R1 * C1)
    >>> substitute_ties(r, {"R1": R / 2, "C1": 2 * C}).to_sympy()
    (1, C*R*s + 1)
    """
    old = list(ratio.num.context().names())
    used = {nm: ties[nm] for nm in old if nm in ties and ratio.degree(nm) > 0}
    if not used or ratio.infinite or ratio.num == 0:
        return ratio
    symbols, names = dict(ratio.symbols), list(old)
    for expr in used.values():
        for x in sorted(as_sympy(expr).free_symbols, key=lambda x: x.name):
            if x.name not in symbols:
                symbols[x.name] = x
                names.append(x.name)
    names.append(_U)
    ctx = flint.fmpz_mpoly_ctx.get(tuple(names), "degrevlex")
    gens = dict(zip(names, ctx.gens()))
    pairs = {nm: _integer_pair(used[nm], gens, ctx) for nm in used}
    constant = {nm: int(q.coeffs()[0]) for nm, (_p, q) in pairs.items() if q.total_degree() <= 0}
    lcm = 1
    for c in constant.values():
        lcm = lcm * c // math.gcd(lcm, c)
    images = [gens[nm] if nm not in constant else pairs[nm][0] * (lcm // constant[nm]) * (gens[_U] if lcm > 1 else 1)
              for nm in old]
    num, den = ratio.num.compose(*images, ctx=ctx), ratio.den.compose(*images, ctx=ctx)
    if lcm > 1:
        top = max(num.degrees()[-1], den.degrees()[-1])
        num, den = _put_in(num, len(names) - 1, top, ctx.from_dict({}) + 1, ctx.from_dict({}) + lcm), \
            _put_in(den, len(names) - 1, top, ctx.from_dict({}) + 1, ctx.from_dict({}) + lcm)
    for nm, (p, q) in pairs.items():
        if nm not in constant:
            k = names.index(nm)
            top = max(num.degrees()[k], den.degrees()[k])
            num, den = _put_in(num, k, top, p, q), _put_in(den, k, top, p, q)
    if den == 0:
        raise SingularCircuitError(where, "with the tied values the equations have no unique solution",
                                   "check the ties: they make the circuit degenerate (untie one of the parts)")
    return reringed(num, den, symbols)


#: The helper generator that stands for 1/L while constant denominators are put in.
_U = "tie:1/L"


def _integer_pair(expr: sympy.Expr, gens: dict, ctx):
    """A tie ``p/q`` as two integer polynomials of ``ctx``, ``q``'s sign made positive when constant."""
    n, d = sympy.fraction(sympy.together(as_sympy(expr)))
    scale = 1
    for c in sympy.Poly(n * d, *sorted((n * d).free_symbols, key=lambda x: x.name) or [sympy.Symbol("x")]).coeffs():
        scale = scale * int(sympy.Rational(c).q) // math.gcd(scale, int(sympy.Rational(c).q))
    n, d = sympy.expand(n * scale), sympy.expand(d * scale)
    if d.is_Number and d < 0:
        n, d = -n, -d
    return _flint_of(n, gens, ctx), _flint_of(d, gens, ctx)


def _flint_of(expr: sympy.Expr, gens: dict, ctx):
    """A polynomial expression with integer coefficients as an fmpz polynomial of ``ctx``."""
    if expr.is_Symbol:
        return gens[expr.name]
    if expr.is_Integer:
        return ctx.from_dict({}) + int(expr)
    if expr.is_Add or expr.is_Mul:
        parts = [_flint_of(a, gens, ctx) for a in expr.args]
        out = parts[0]
        for part in parts[1:]:
            out = out + part if expr.is_Add else out * part
        return out
    if expr.is_Pow and expr.exp.is_Integer and expr.exp >= 0:
        return _flint_of(expr.base, gens, ctx) ** int(expr.exp)
    raise ValueError(f"not a polynomial with integer coefficients: {expr}")


def _put_in(poly, k: int, top: int, p, q):
    """``sum_j c_j t^j`` -> ``sum_j c_j p^j q^(top - j)`` for the generator of index k."""
    ctx = poly.context()
    by_power: dict[int, dict] = {}
    for e, c in poly.to_dict().items():
        by_power.setdefault(e[k], {})[e[:k] + (0,) + e[k + 1:]] = c
    out = ctx.from_dict({})
    for j, terms in by_power.items():
        out += ctx.from_dict(terms) * p**j * q ** (top - j)
    return out
