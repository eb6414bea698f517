"""Tied values put into a derived ratio, on the flint polynomials.

The engine derives with every part as its own symbol; a tied part's symbol is then
replaced by its expression (a ratio ``p/q`` of polynomials in the free symbols,
:meth:`symfilt.model.circuit.Circuit.ties`). For a polynomial ``sum_k c_k t^k`` of
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
    names = list(ratio.num.context().names())
    used = {nm: ties[nm] for nm in names if nm in ties and ratio.degree(nm) > 0}
    if not used or ratio.infinite or ratio.num == 0:
        return ratio
    symbols = dict(ratio.symbols)
    pairs = {}
    for nm, expr in used.items():
        n, d = sympy.fraction(sympy.together(sympy.sympify(expr)))
        for x in sorted(n.free_symbols | d.free_symbols, key=lambda x: x.name):
            if x.name not in symbols:
                symbols[x.name] = x
                names.append(x.name)
        pairs[nm] = (n, d)
    ctx = flint.fmpq_mpoly_ctx.get(tuple(names), "degrevlex")
    width = ratio.num.context().nvars()
    pad = (0,) * (len(names) - width)
    lift = lambda p: ctx.from_dict({e + pad: int(c) for e, c in p.to_dict().items()})
    num, den = lift(ratio.num), lift(ratio.den)
    for nm, (n, d) in pairs.items():
        k = names.index(nm)
        top = max(num.degrees()[k], den.degrees()[k])
        p, q = _to_ctx(n, ctx, names), _to_ctx(d, ctx, names)
        num, den = _put_in(num, k, top, p, q), _put_in(den, k, top, p, q)
    if den == 0:
        raise SingularCircuitError(where, "with the tied values the equations have no unique solution",
                                   "check the ties: they make the circuit degenerate (untie one of the parts)")
    return reringed(num, den, symbols)


def _to_ctx(expr: sympy.Expr, ctx, names: list):
    """A polynomial expression (rational coefficients) as an fmpq polynomial of ``ctx``."""
    gens = sorted(expr.free_symbols, key=lambda x: x.name)
    index = [names.index(x.name) for x in gens]
    out = {}
    for monom, coeff in sympy.Poly(expr, *gens).terms() if gens else [((), sympy.Rational(expr))]:
        e = [0] * len(names)
        for i, power in zip(index, monom):
            e[i] = int(power)
        c = sympy.Rational(coeff)
        out[tuple(e)] = flint.fmpq(int(c.p), int(c.q))
    return ctx.from_dict(out)


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
