"""Sensitivity tables that keep each entry exact until it is read.

:func:`~symfilt.analysis.sensitivity.product_sensitivities` gives S_x^y of a product of
polynomials as one cancelled flint ratio per symbol. A report that prints only numbers
reads them with :meth:`ExactTable.numbers` (exact at the values, one rounding) and never
builds the sympy forms; reading an entry builds its form once. The cutoff's table is the
chain rule over the tables of w0 and Q (:func:`chain_rule_row`), shared with
:mod:`symfilt.analysis.vectorised`.
"""

from __future__ import annotations

import collections.abc
import decimal
from dataclasses import dataclass, field
from typing import Callable, Mapping

import sympy

from symfilt.analysis.fastfactor import factor

#: pi to 50 decimals: the exact evaluations' stand-in for pi (an op-amp's 2·pi·GBW).
PI_DIGITS = "314159265358979323846264338327950288419716939937510"
#: Digits of the one square root in the cutoff's chain rule.
CHAIN_DIGITS = 40
#: Terms of numerator and denominator together below which an entry is shown factored.
FACTOR_TERMS = 60


class ExactTable(collections.abc.Mapping):
    """A sensitivity table (symbol name -> S_x^y) that also gives its numbers without sympy.

    Reading an entry builds its sympy form once (kept for the next read); :meth:`numbers`
    evaluates every entry exactly at the values and rounds once. Subclasses give
    ``names``, ``_build``, ``exact`` and a ``_shown`` dict (the forms built so far).

    Examples
    --------
    >>> from symfilt.analysis.sensitivity import product_sensitivities
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> t = product_sensitivities([(R * C, -1)], [R, C])
    >>> isinstance(t, ExactTable), "R" in t, t == {"R": -1, "C": -1}
    (True, True, True)
    """

    def __getitem__(self, name: str) -> sympy.Expr:
        if name not in self.names:
            raise KeyError(name)
        if name not in self._shown:
            self._shown[name] = self._build(name)
        return self._shown[name]

    def __contains__(self, name) -> bool:
        return name in self.names

    def __iter__(self):
        return iter(self.names)

    def __len__(self) -> int:
        return len(self.names)

    def __repr__(self) -> str:
        return repr(dict(self))

    def numbers(self, values: Mapping) -> dict | None:
        """Every entry at exact values as a float (None where it divides by 0 there).

        Parameters
        ----------
        values : mapping
            Symbol -> exact number.

        Returns
        -------
        dict or None
            None when a symbol has no value or a value is not rational: the caller then
            evaluates the sympy forms.

        Examples
        --------
        >>> from symfilt.analysis.sensitivity import product_sensitivities
        >>> R, C = sympy.symbols("R C", positive=True)
        >>> product_sensitivities([(R + C, 1)], [R, C]).numbers({R: 3, C: 1})
        {'R': 0.75, 'C': 0.25}
        """
        row = self.exact(values)
        return None if row is None else floats(row)


@dataclass(frozen=True, eq=False, repr=False)
class ProductSensitivities(ExactTable):
    """S_x^y of y = prod p_i ** e_i as cancelled flint ratios, one per symbol name.

    Parameters
    ----------
    bridge : PolyContext
        The ring of the ratios.
    factors : tuple of (sympy.Expr, sympy.Rational)
        The p_i and e_i the table was taken from (two tables of the same factors are equal
        without building either).
    polys : tuple of flint.fmpq_mpoly
        The p_i in the ring, in the same order.
    ratios : dict
        Symbol name -> (numerator, denominator); a zero numerator for S_x = 0.
    _shown : dict
        The sympy forms built so far, filled as entries are read (not compared).

    Examples
    --------
    >>> from symfilt.analysis.sensitivity import product_sensitivities
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> t = product_sensitivities([(R * C, -1)], [R, C])
    >>> list(t), t["R"], t.factor_values({R: 2, C: 3})
    (['R', 'C'], -1, [6])
    """

    bridge: object
    factors: tuple
    polys: tuple
    ratios: dict
    _shown: dict = field(default_factory=dict, compare=False)

    @property
    def names(self):
        """The symbol names, in the order given."""
        return self.ratios

    def __eq__(self, other) -> bool:
        if isinstance(other, ProductSensitivities) and other.factors == self.factors and list(other) == list(self):
            return True
        return super().__eq__(other)

    __hash__ = None

    def _build(self, name: str) -> sympy.Expr:
        n, d = self.ratios[name]
        return sympy.Integer(0) if n == 0 else _factored(self.bridge, n, d)

    def _point(self, values: Mapping) -> list | None:
        """The ring's generators at the values as flint rationals (pi to 50 decimals), or None."""
        import flint

        pt = []
        for g in self.bridge.symbols():
            v = sympy.pi if g is sympy.pi else values.get(g)
            if v is sympy.pi:
                pt.append(flint.fmpq(int(PI_DIGITS), 10 ** (len(PI_DIGITS) - 1)))
                continue
            v = sympy.Integer(v) if isinstance(v, int) and not isinstance(v, bool) else v
            if not isinstance(v, sympy.Rational):  # no value, or pi, a float, a root: the caller's sympy route
                return None
            pt.append(flint.fmpq(int(v.p), int(v.q)))
        return pt or [flint.fmpq(0)]

    def exact(self, values: Mapping) -> dict | None:
        """Symbol name -> S_x at the values as a flint rational (None where the denominator is 0).

        Parameters
        ----------
        values : mapping
            Symbol -> exact number.

        Returns
        -------
        dict or None
            None when a symbol of the ring has no rational value.

        Examples
        --------
        >>> from symfilt.analysis.sensitivity import product_sensitivities
        >>> R, C = sympy.symbols("R C", positive=True)
        >>> product_sensitivities([(R + C, -1)], [R]).exact({R: 1, C: 1})
        {'R': -1/2}
        """
        pt = self._point(values)
        if pt is None:
            return None
        out = {}
        for name, (n, d) in self.ratios.items():
            dv = 1 if d is None else d(*pt)
            out[name] = None if dv == 0 else n(*pt) / dv
        return out

    def factor_values(self, values: Mapping) -> list | None:
        """Each p_i at the values, exact, in the order given (None without every value).

        Parameters
        ----------
        values : mapping
            Symbol -> exact number.

        Examples
        --------
        >>> from symfilt.analysis.sensitivity import product_sensitivities
        >>> R, C = sympy.symbols("R C", positive=True)
        >>> product_sensitivities([(R + C, 1), (R, -1)], [R]).factor_values({R: 1, C: 2})
        [3, 1]
        """
        pt = self._point(values)
        return None if pt is None else [p(*pt) for p in self.polys]


@dataclass(frozen=True, eq=False, repr=False)
class ChainedSensitivities(ExactTable):
    """S_x^cutoff from the tables of w0 and of Q (second order) or of the zero (first order).

    The chain rule of :func:`chain_rule_row`; an entry's sympy form is ``build(name)``.

    Parameters
    ----------
    order : int
        1 (a first order with a zero) or 2.
    kind : str
        ``lowpass``, ``highpass`` or (first order) ``general``.
    s_w0 : ProductSensitivities
    other : ProductSensitivities
        S^Q (second order) or S^wz (first order).
    build : callable
        Symbol name -> the sympy form of the entry.
    _shown : dict
        The sympy forms built so far, filled as entries are read (not compared).

    Examples
    --------
    >>> from symfilt.analysis.sensitivity import product_sensitivities
    >>> R1, R2, C1, C2 = sympy.symbols("R1 R2 C1 C2", positive=True)
    >>> syms = [R1, R2, C1, C2]
    >>> w0 = product_sensitivities([(1, sympy.Rational(1, 2)), (R1 * R2 * C1 * C2, -sympy.Rational(1, 2))], syms)
    >>> q = product_sensitivities([(1, sympy.Rational(1, 2)), (R1 * R2 * C1 * C2, sympy.Rational(1, 2)),
    ...                            (C2 * (R1 + R2), -1)], syms)
    >>> t = ChainedSensitivities(2, "lowpass", w0, q, lambda name: None)
    >>> round(t.numbers({R1: 1, R2: 1, C1: 2, C2: 1})["R1"], 6)
    -0.5
    """

    order: int
    kind: str
    s_w0: ProductSensitivities
    other: ProductSensitivities
    build: Callable
    _shown: dict = field(default_factory=dict, compare=False)

    @property
    def names(self):
        """The symbol names of w0's table."""
        return self.s_w0.ratios

    def _build(self, name: str) -> sympy.Expr:
        return self.build(name)

    def exact(self, values: Mapping) -> dict | None:
        """Symbol name -> S_x^cutoff at the values (flint rational or 40-digit decimal), or None.

        Parameters
        ----------
        values : mapping
            Symbol -> exact number.

        Examples
        --------
        >>> from symfilt.analysis.sensitivity import product_sensitivities
        >>> R, C, L = sympy.symbols("R C L", positive=True)
        >>> w0 = product_sensitivities([(1, 1), (R * C, -1)], [R, C])
        >>> wz = product_sensitivities([(1, 1), (L * C, -1)], [R, C])
        >>> ChainedSensitivities(1, "general", w0, wz, lambda name: None).exact({R: 1, C: 1, L: sympy.Rational(1, 4)})["R"]
        -8/7
        """
        w, o = self.s_w0.exact(values), self.other.exact(values)
        if w is None or o is None:
            return None
        if self.order == 1:
            coeffs = self.s_w0.factor_values(values) + self.other.factor_values(values)
        else:
            coeffs = self.other.factor_values(values)
        return chain_rule_row(self.order, self.kind, w, o, coeffs)


def chain_rule_row(order: int, kind: str, s_w0: dict, s_other: dict, coeffs: list) -> dict:
    """S_x^cutoff at exact values from S_x^w0 and S_x^Q (or S_x^wz), by the chain rule.

    First order with a zero wz: S^wc = S^wp + 2 r^2/(1 - 2 r^2) (S^wp - S^wz), r = wp/wz,
    from ``coeffs`` = a0, a1, b0, b1 (wp = a0/a1, wz = b0/b1). Second order: S^wc = S^w0 ± g S^Q
    (+ low-pass, - high-pass), g = 1/(2 Q^2 sqrt(x^2 + 1)), x = 1 - 1/(2 Q^2), from
    ``coeffs`` = a0, a2, a1 (Q^2 = a0 a2 / a1^2); its one square root in 40-digit decimals.

    Parameters
    ----------
    order : int
    kind : str
    s_w0, s_other : dict
        Symbol name -> flint rational or None.
    coeffs : list of flint.fmpq

    Returns
    -------
    dict
        Symbol name -> flint rational, decimal, or None where a term is undefined.

    Examples
    --------
    >>> import flint
    >>> one, half = flint.fmpq(1), flint.fmpq(1, 2)
    >>> chain_rule_row(2, "lowpass", {"R": -half}, {"R": flint.fmpq(0)}, [one, one, one])
    {'R': -1/2}
    """
    if order == 1:
        a0, a1, b0, b1 = coeffs
        den = (a1 * b0) ** 2 - 2 * (a0 * b1) ** 2
        if den == 0:
            return {k: None if s_w0[k] != s_other[k] else s_w0[k] for k in s_w0}
        g = 2 * (a0 * b1) ** 2 / den
        return {k: _plus(s_w0[k], g, s_w0[k], s_other[k]) for k in s_w0}
    a0, a2, a1 = coeffs
    if a0 * a2 == 0 or a1 == 0:
        return {k: None if s_other[k] != 0 else s_w0[k] for k in s_w0}
    q2 = a0 * a2 / (a1 * a1)
    x = 1 - 1 / (2 * q2)
    ctx = decimal.Context(prec=CHAIN_DIGITS)
    dec = lambda v: ctx.divide(decimal.Decimal(int(v.p)), decimal.Decimal(int(v.q)))
    g = ctx.divide(1, ctx.multiply(2 * dec(q2), ctx.sqrt(dec(x * x + 1))))
    sign = 1 if kind == "lowpass" else -1
    out = {}
    for k in s_w0:
        w, o = s_w0[k], s_other[k]
        if w is None or o is None:
            out[k] = None if o != 0 else w
        else:
            out[k] = w if o == 0 else ctx.add(dec(w), ctx.multiply(sign * g, dec(o)))
    return out


def _plus(s_w0, g, a, b):
    """s_w0 + g (a - b), or s_w0 where a and b are equal (None where either is)."""
    if s_w0 is None or b is None:
        return None
    return s_w0 if a == b else s_w0 + g * (a - b)


def floats(row: dict) -> dict:
    """Each entry rounded to a float once (flint rationals and decimals alike).

    Parameters
    ----------
    row : dict
        Name -> flint rational, decimal or None.

    Examples
    --------
    >>> import flint
    >>> floats({"R": flint.fmpq(1, 4), "C": None, "L": decimal.Decimal("0.5")})
    {'R': 0.25, 'C': None, 'L': 0.5}
    """
    out = {}
    for k, v in row.items():
        out[k] = None if v is None else float(v) if isinstance(v, decimal.Decimal) else int(v.p) / int(v.q)
    return out


def _factored(bridge, n, d) -> sympy.Expr:
    """n/d in sympy, as ``sympy.factor`` gives it when small (:func:`symfilt.analysis.fastfactor.factor`)."""
    value = bridge.to_sympy(n) / bridge.to_sympy(d)
    if len(n) + len(d) > FACTOR_TERMS:
        return value
    return factor(value)


__all__ = ["CHAIN_DIGITS", "PI_DIGITS", "ChainedSensitivities", "ExactTable", "ProductSensitivities", "chain_rule_row",
           "floats"]
