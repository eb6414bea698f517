"""The product of two exact ratios over different symbol sets, on flint.

Multiplying through sympy (``from_expr(a * b)``) expands the product as sympy
expressions before flint sees it: minutes for a loop gain of a three-op-amp circuit with
two-pole op-amps. Here both ratios are lifted to one ring of the union of their
generators, multiplied and cancelled there, and put back in the ring of the symbols the
product still has (:func:`~symfilt.engine.rational.reringed`, the same canonical form
:meth:`~symfilt.engine.rational.Ratio.from_sympy` gives).

Examples
--------
>>> import sympy
>>> from symfilt.engine.rational import Ratio
>>> x, y = sympy.symbols("x y")
>>> ratio_product(Ratio.from_sympy(x, y + 1), Ratio.from_sympy(y + 1, x**2)).to_sympy()
(1, x)
"""

from __future__ import annotations

import flint

from symfilt.engine.rational import Ratio, reringed


def ratio_product(a: Ratio, b: Ratio) -> Ratio | None:
    """a * b, cancelled, in the canonical ring of the symbols it has.

    Parameters
    ----------
    a, b : Ratio
        Two finite ratios.

    Returns
    -------
    Ratio or None
        None when a generator name stands for different sympy objects in ``a`` and ``b``
        (multiply their sympy forms instead).

    Examples
    --------
    >>> import sympy
    >>> from symfilt.engine.rational import Ratio
    >>> s, k, r = sympy.symbols("s k r", positive=True)
    >>> p = ratio_product(Ratio.from_sympy(k, s + k), Ratio.from_sympy(2 * r, r + 1))
    >>> p.to_sympy() == Ratio.from_sympy(2 * k * r, (s + k) * (r + 1)).to_sympy()
    True
    """
    symbols = dict(a.symbols)
    for name, sym in b.symbols.items():
        if symbols.setdefault(name, sym) != sym:
            return None
    qctx = flint.fmpq_mpoly_ctx.get(tuple(symbols), "degrevlex")
    return reringed(moved(a.num, qctx) * moved(b.num, qctx), moved(a.den, qctx) * moved(b.den, qctx), symbols)


def moved(p, ctx):
    """A flint polynomial moved by generator name into the ring ``ctx``, which holds every
    generator that occurs in ``p`` (flint's spare generator of an empty ring is dropped).

    Parameters
    ----------
    p : flint.fmpz_mpoly
    ctx : flint.fmpz_mpoly_ctx or flint.fmpq_mpoly_ctx

    Examples
    --------
    >>> a = flint.fmpz_mpoly_ctx.get(("y",), "degrevlex")
    >>> moved(a.gens()[0] * 3 + 1, flint.fmpq_mpoly_ctx.get(("x", "y"), "degrevlex"))
    3*y + 1
    """
    names = tuple(ctx.names())
    at = [names.index(n) if n in names else None for n in p.context().names()]
    terms = {}
    for exps, c in p.terms():
        e = [0] * len(names)
        for k, x in zip(at, exps):
            if k is not None:
                e[k] += x
        terms[tuple(e)] = int(c)
    return ctx.from_dict(terms)


__all__ = ["moved", "ratio_product"]
