"""IEC 60063 preferred numbers: the E-series, neighbours of a value and snapping.

E6, E12 and E24 are the standard's own lists, which are *not* 10^(i/N) rounded
(2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7 and 8.2 differ); E48, E96 and E192 are
10^(i/N) rounded to three significant figures, except that E192 has 9.20 where
the rounding gives 9.19.
"""

from __future__ import annotations

import math
from fractions import Fraction
from types import MappingProxyType
from typing import Mapping

import sympy

from symfilt.errors import UsageError


_E6 = (10, 15, 22, 33, 47, 68)
_E12 = (10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82)
_E24 = (10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30, 33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91)


def _generated(n: int) -> tuple[int, ...]:
    """10^(i/n) rounded to three significant figures, in hundredths (100 ... 999).

    No value of i/n for n = 48, 96, 192 lies within 0.01 of a rounding boundary,
    so float arithmetic rounds exactly as decimal arithmetic would.
    """
    out = [int(math.floor(100 * 10 ** (i / n) + 0.5)) for i in range(n)]
    if n == 192:
        out[out.index(919)] = 920  # the standard's exception
    return tuple(out)


#: Series name -> mantissas in [1, 10) as exact rationals (read-only).
SERIES: Mapping[str, tuple[sympy.Rational, ...]] = MappingProxyType({
    **{name: tuple(sympy.Rational(v, 10) for v in table) for name, table in (("E6", _E6), ("E12", _E12), ("E24", _E24))},
    **{f"E{n}": tuple(sympy.Rational(v, 100) for v in _generated(n)) for n in (48, 96, 192)},
})


def series_values(name: str) -> tuple[sympy.Rational, ...]:
    """The mantissas of a preferred-number series, 1 <= m < 10, ascending.

    Parameters
    ----------
    name : str
        ``E6``, ``E12``, ``E24``, ``E48``, ``E96`` or ``E192`` (any case).

    Examples
    --------
    >>> [str(v) for v in series_values("E6")]
    ['1', '3/2', '11/5', '33/10', '47/10', '34/5']
    >>> len(series_values("e192")), float(series_values("E192")[185])
    (192, 9.2)
    """
    key = name.strip().upper()
    if key not in SERIES:
        raise UsageError("series", f"unknown series {name!r}", "use one of " + ", ".join(SERIES))
    return SERIES[key]


def _exact(value) -> Fraction:
    if isinstance(value, sympy.Rational):
        return Fraction(int(value.p), int(value.q))
    if isinstance(value, float):
        return Fraction(value)
    return Fraction(value)


def series_neighbours(value, series: str = "E24") -> tuple[sympy.Rational, sympy.Rational]:
    """The series values just below (or equal to) and just above ``value``.

    Parameters
    ----------
    value : float or sympy.Rational
        A positive value in SI base units.
    series : str

    Returns
    -------
    (lower, upper) : tuple of sympy.Rational
        ``lower <= value < upper``.

    Examples
    --------
    >>> series_neighbours(3003.4, "E24")
    (3000, 3300)
    >>> series_neighbours(sympy.Rational(47, 10**9), "E12")
    (47/1000000000, 7/125000000)
    """
    table = series_values(series)
    x = _exact(value)
    if x <= 0:
        raise UsageError("series", f"value {float(x):g} is not positive", "snap only positive values")
    k = math.floor(math.log10(float(x)))
    while Fraction(10) ** k > x:
        k -= 1
    while Fraction(10) ** (k + 1) <= x:
        k += 1
    decade = sympy.Rational(10) ** k
    mantissa = x / Fraction(10) ** k
    lower = max(m for m in table if _exact(m) <= mantissa)
    above = [m for m in table if _exact(m) > mantissa]
    upper = above[0] * decade if above else table[0] * decade * 10
    return lower * decade, upper


def snap(value, series: str = "E24") -> sympy.Rational:
    """The series value nearest to ``value`` on a logarithmic scale.

    Parameters
    ----------
    value : float or sympy.Rational
        A positive value in SI base units.
    series : str
        A series name (``E6`` ... ``E192``).

    Returns
    -------
    sympy.Rational

    Examples
    --------
    >>> snap(4600, "E12"), snap(5150, "E24")
    (4700, 5100)
    """
    lo, hi = series_neighbours(value, series)
    x = float(value)
    return lo if math.log(x / float(lo)) <= math.log(float(hi) / x) else hi


__all__ = ["SERIES", "series_neighbours", "series_values", "snap"]
