"""A lazy view of a result's coefficients: each turned into sympy only when it is read.

A large network function's coefficients are flint polynomials of thousands of terms; the
report often needs only the end ones (the DC and the HF gain), so converting every one to
sympy first (seconds at a 12-section ladder) is wasted.
"""

from __future__ import annotations

from collections.abc import Sequence

from symfilt.engine.rational import poly_to_sympy
from symfilt.model.safe import as_sympy


class LazyCoefficients(Sequence):
    """A sequence of coefficients (lowest power first), each turned into sympy when first read.

    Parameters
    ----------
    polys : sequence
        flint polynomials (or sympy expressions, taken as they are when ``symbols`` is None).
    symbols : tuple or None
        The generators' symbols for :func:`poly_to_sympy`.

    Examples
    --------
    >>> LazyCoefficients([1, 2], None)[-1]
    2
    """

    def __init__(self, polys, symbols) -> None:
        self._polys, self._symbols, self._done = list(polys), symbols, {}

    def __len__(self) -> int:
        return len(self._polys)

    def __getitem__(self, k):
        if isinstance(k, slice):
            return [self[i] for i in range(len(self))[k]]
        k = range(len(self))[k]
        if k not in self._done:
            c = self._polys[k]
            self._done[k] = as_sympy(c, "coefficient") if self._symbols is None else poly_to_sympy(c, self._symbols)
        return self._done[k]


__all__ = ["LazyCoefficients"]
