"""Impedances written as series and parallel combinations of the parts, for display.

``Zin = R1 + (R_L || 1/(C1·s))`` instead of ``(C1·R1·R_L·s + R1 + R_L)/(C1·R_L·s + 1)``.

The search peels one part at a time off the impedance Z(s): a part whose impedance ``z``
(``R``, ``1/(C·s)``, ``L·s``) is in series when ``Z - z`` no longer holds the part's symbol,
in parallel when ``1/(1/Z - 1/z)`` no longer holds it. Each step removes a symbol, so the
search ends after as many steps as Z has symbols; where no part peels off, the rest is
printed factored (an op-amp stage's impedance is seldom a pure ladder). The arithmetic is
exact on python-flint polynomials (one gcd per try). The result is display only and equals
Z (:func:`symfilt.export.readable.exact` of it is Z).
"""

from __future__ import annotations

import functools

import sympy

from symfilt.engine.polybridge import PolyContext
from symfilt.engine.rational import cancel_pair, factor_ratio
from symfilt.export.common import Parallel
from symfilt.export.readable import ordered, readable
from symfilt.model.circuit import S

#: Impedances with more terms (numerator plus denominator) than this are not searched.
SEARCH_MAX_TERMS = 60


def part_impedance(symbol):
    """The impedance a part's symbol stands for by its letter: R -> R, C -> 1/(C s), L -> L s.

    Parameters
    ----------
    symbol : sympy.Symbol
        A part's value symbol (``R1``, ``C_L``, ``L2``); any other letter gives None.

    Examples
    --------
    >>> part_impedance(sympy.Symbol("C1")), part_impedance(sympy.Symbol("A_U1"))
    (1/(C1*s), None)
    """
    head = symbol.name[:1]
    if head == "R":
        return symbol
    if head == "C":
        return 1 / (symbol * S)
    if head == "L":
        return symbol * S
    return None


def impedance_display(z):
    """An impedance for display: series/parallel form when small (``R1 + 1/(C1·s)``), else normalized.

    Parameters
    ----------
    z : NetworkFunction
        The impedance (an infinite one gives ``oo``).

    Examples
    --------
    >>> from symfilt.analysis.network import NetworkFunction
    >>> R1, C1 = sympy.symbols("R1 C1", positive=True)
    >>> s = sympy.Symbol("s")
    >>> print(impedance_display(NetworkFunction.from_expr(R1 + 1 / (s * C1), "zin")))
    R1 + 1/(C1*s)
    """
    if z.infinite:
        return sympy.oo
    if z.ratio is None or z.ratio.terms <= SEARCH_MAX_TERMS:
        return impedance_form(z.num, z.den)
    return z.normalized_expr()


@functools.lru_cache(maxsize=256)
def impedance_form(num, den):
    """Z = num/den as series (``+``) and parallel (``||``) combinations of its parts where it has them
    (memoised: the loaded and ideal views often share an impedance).

    Parameters
    ----------
    num, den : sympy.Expr
        Numerator and denominator polynomials in ``s`` and the parts' symbols.

    Returns
    -------
    sympy.Expr
        A display form equal to num/den: the parts that peel off in series or parallel, the
        rest factored.

    Examples
    --------
    >>> R1, RL, C1 = sympy.symbols("R1 R_L C1", positive=True)
    >>> s = sympy.Symbol("s")
    >>> print(impedance_form(C1 * R1 * RL * s + R1 + RL, C1 * RL * s + 1))
    R1 + (R_L || 1/(C1*s))
    """
    ctx = PolyContext([num, den, S])
    n, d = ctx.to_flint(num), ctx.to_flint(den)
    if len(n) + len(d) > SEARCH_MAX_TERMS:
        return factor_ratio(num, den)
    return _peel(ctx, n, d)


def _peel(ctx, n, d):
    """One part off ``n/d`` in series or parallel, and recurse on the rest."""
    for sym in _part_symbols(ctx, n, d):
        zn, zd = _as_pair(ctx, part_impedance(sym))
        shown = readable(part_impedance(sym))
        rn, rd = cancel_pair(n * zd - zn * d, d * zd)  # Z - z
        if not rn.is_zero() and not _holds(ctx, sym, rn, rd):
            return ordered([shown, *_series_terms(_peel(ctx, rn, rd))])
        rn, rd = cancel_pair(n * zn, d * zn - n * zd)  # 1/(1/Z - 1/z)
        if not rd.is_zero() and not rn.is_zero() and not _holds(ctx, sym, rn, rd):
            return Parallel(shown, *_parallel_args(_peel(ctx, rn, rd)))
    return readable(factor_ratio(ctx.to_sympy(n), ctx.to_sympy(d)))


def _part_symbols(ctx, n, d) -> list:
    """The symbols of n/d that stand for a part, resistors first, then capacitors, inductors."""
    live = [g for i, g in enumerate(ctx.symbols()) if g != S and isinstance(g, sympy.Symbol)
            and (n.degrees()[i] or d.degrees()[i]) and part_impedance(g) is not None]
    return sorted(live, key=lambda g: ("RCL".index(g.name[0]), g.name))


def _as_pair(ctx, z):
    num, den = sympy.fraction(z)
    return ctx.to_flint(num), ctx.to_flint(den)


def _holds(ctx, sym, n, d) -> bool:
    i = ctx.symbols().index(sym)
    return bool(n.degrees()[i] or d.degrees()[i])


def _series_terms(form) -> tuple:
    from symfilt.export.readable import Ordered

    return form.args if isinstance(form, Ordered) else (form,)


def _parallel_args(form) -> tuple:
    return form.args if isinstance(form, Parallel) else (form,)
