"""Tied values put into a derived ratio, on the flint polynomials.

The engine derives with every part as its own symbol; a tied part's symbol is then
replaced by its expression (a ratio ``p/q`` of polynomials in the free symbols,
:meth:`symfilt.model.circuit.Circuit.ties`). Ties with a constant ``q`` (``R/2``,
``2*C``, ``R1*k``: the usual ones) are put in together by one flint ``compose``. For the
others, a polynomial ``sum_k c_k t^k`` of
top degree ``T`` in the tied symbol ``t`` (taken over numerator and denominator
together), both are multiplied by ``q^T``: it becomes ``sum_k c_k p^k q^(T - k)``,
so the ratio stays a ratio of polynomials and no fraction appears. The common
factor (a twin-T's pole-zero pair that cancels only at balanced values) is divided
out at the end by the one rule of :func:`symfilt.engine.rational.cancel_pair`.
"""

from __future__ import annotations

from typing import Mapping

import flint
import sympy

from symfilt.engine.rational import Ratio, reringed
from symfilt.errors import SingularCircuitError

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
        for x in sorted(sympy.sympify(expr).free_symbols, key=lambda x: x.name):
            if x.name not in symbols:
                symbols[x.name] = x
                names.append(x.name)
    ctx = flint.fmpq_mpoly_ctx.get(tuple(names), "degrevlex")
    gens = dict(zip(names, ctx.gens()))
    images, later = [], []
    for k, nm in enumerate(old):
        if nm not in used:
            images.append(gens[nm])
            continue
        n, d = sympy.fraction(sympy.together(sympy.sympify(used[nm])))
        p, q = _flint_of(n, gens, ctx), _flint_of(d, gens, ctx)
        if q.total_degree() <= 0:  # R/2, 2*C: a polynomial image, put in by one compose
            images.append(p / q.coeffs()[0])
        else:
            images.append(gens[nm])
            later.append((k, p, q))
    old_ctx = flint.fmpq_mpoly_ctx.get(tuple(old), "degrevlex")
    lift = lambda poly: old_ctx.from_dict(poly.to_dict()).compose(*images, ctx=ctx)
    num, den = lift(ratio.num), lift(ratio.den)
    for k, p, q in later:
        top = max(num.degrees()[k], den.degrees()[k])
        num, den = _put_in(num, k, top, p, q), _put_in(den, k, top, p, q)
    if den == 0:
        raise SingularCircuitError(where, "with the tied values the equations have no unique solution",
                                   "check the ties: they make the circuit degenerate (untie one of the parts)")
    return reringed(num, den, symbols)


def _flint_of(expr: sympy.Expr, gens: dict, ctx):
    """A polynomial expression with rational coefficients as an fmpq polynomial of ``ctx``."""
    if expr.is_Symbol:
        return gens[expr.name]
    if expr.is_Rational:
        return ctx.from_dict({(0,) * ctx.nvars(): flint.fmpq(int(expr.p), int(expr.q))})
    if expr.is_Add or expr.is_Mul:
        parts = [_flint_of(a, gens, ctx) for a in expr.args]
        out = parts[0]
        for part in parts[1:]:
            out = out + part if expr.is_Add else out * part
        return out
    if expr.is_Pow and expr.exp.is_Integer and expr.exp >= 0:
        return _flint_of(expr.base, gens, ctx) ** int(expr.exp)
    raise ValueError(f"not a polynomial: {expr}")


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
