"""Normalized sensitivities S_x^y = (x / y) * dy/dx and their sum-rule self-checks.

Sum rules (Schaumann & Van Valkenburg, *Design of Analog Filters*, sensitivity
chapter; from memory): for a circuit of resistors, capacitors and ideal op-amps
(or op-amps of a pure, dimensionless gain), impedance scaling leaves w0 and Q
unchanged and frequency scaling moves w0 inversely with every capacitor, so

* sum over resistors of S_R^w0 = -1, sum over capacitors of S_C^w0 = -1,
* the same sums for Q are 0 (and for a dimensionless DC gain, 0).

They hold only when every resistor is counted (R_s and R_L included) and no
inductor or single-pole op-amp is present (its bandwidth is itself a frequency).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping

import sympy

_SMALL = 120


def sensitivity(y: sympy.Expr, x: sympy.Symbol) -> sympy.Expr:
    """The normalized sensitivity S_x^y = (x/y) dy/dx, simplified when small.

    Parameters
    ----------
    y : sympy.Expr
    x : sympy.Symbol

    Examples
    --------
    >>> R1, R2, C1, C2 = sympy.symbols("R1 R2 C1 C2", positive=True)
    >>> sensitivity(1 / sympy.sqrt(R1 * R2 * C1 * C2), R1)
    -1/2
    """
    if y == 0 or x not in y.free_symbols:
        return sympy.Integer(0)
    e = x * sympy.diff(y, x) / y
    if sympy.count_ops(e) < 600:
        e = sympy.cancel(sympy.powsimp(sympy.expand_power_base(e, force=True), force=True))
        if sympy.count_ops(e) < _SMALL:
            e = sympy.factor(e)
    return e


def product_sensitivities(factors, symbols) -> dict[str, sympy.Expr] | None:
    """S_x^y for y = product of polynomials p_i ** e_i, for every symbol x at once.

    S_x^y = sum of e_i * (x / p_i) dp_i/dx: exact and cheap, a cancelled ratio of
    polynomials (no radicals) even when y itself has square roots. Worked on
    python-flint polynomials; each factor is converted once. None when ``factors``
    is None.

    Parameters
    ----------
    factors : iterable of (sympy.Expr, number) or None
        Polynomials and their exponents.
    symbols : iterable of sympy.Symbol

    Examples
    --------
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> product_sensitivities([(R * C, -1)], [R, C])
    {'R': -1, 'C': -1}
    >>> R1, R2, C1, C2 = sympy.symbols("R1 R2 C1 C2", positive=True)
    >>> q = [(R1 * R2 * C1 * C2, sympy.Rational(1, 2)), (C2 * (R1 + R2), -1)]
    >>> product_sensitivities(q, [R1])
    {'R1': -(R1 - R2)/(2*(R1 + R2))}
    """
    if factors is None:
        return None
    import flint

    from symfilt.engine.polybridge import PolyContext
    from symfilt.engine.rational import cancel_pair

    factors = [(sympy.sympify(p), sympy.Rational(e)) for p, e in factors if p != 1]
    bridge = PolyContext([p for p, _e in factors] + list(symbols))
    polys = [(bridge.to_flint(p), flint.fmpq(int(e.p), int(e.q)), p.free_symbols) for p, e in factors]
    out = {}
    for x in symbols:
        used = [(fp, e) for fp, e, free in polys if x in free]
        if not used:
            out[str(x)] = sympy.Integer(0)
            continue
        den = used[0][0]
        for fp, _e in used[1:]:
            den = den * fp
        xg = bridge.gen(x)
        num = bridge.ctx.from_dict({})
        for fp, e in used:
            num = num + e * xg * bridge.derivative(fp, x) * (den / fp)
        if num == 0:
            out[str(x)] = sympy.Integer(0)
            continue
        n, d = cancel_pair(num, den)
        value = bridge.to_sympy(n) / bridge.to_sympy(d)
        out[str(x)] = sympy.factor(value) if sympy.count_ops(value) < _SMALL else value
    return out


def sensitivities(y: sympy.Expr | None, symbols) -> dict[str, sympy.Expr] | None:
    """S_x^y for every symbol x in ``symbols`` (names -> expressions); None when y is None.

    Parameters
    ----------
    y : sympy.Expr or None
        The quantity.
    symbols : iterable of sympy.Symbol
        The symbols x.

    Examples
    --------
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> sensitivities(1 / (R * C), [R, C])
    {'R': -1, 'C': -1}
    """
    if y is None:
        return None
    return {str(x): sensitivity(y, x) for x in symbols}


@dataclass(frozen=True)
class SumRule:
    """One sum-rule self-check.

    Parameters
    ----------
    quantity : str
        ``w0`` or ``q``.
    group : str
        ``resistors`` or ``capacitors``.
    expected : int
        The sum the rule asks for (-1 for ``w0``, 0 for ``q``).
    total : sympy.Expr
        The sum of the derived sensitivities (simplified).
    holds : bool
        Whether ``total`` equals ``expected`` exactly.

    Examples
    --------
    >>> half = sympy.Rational(1, 2)
    >>> sum_rules({"q": {"R1": half, "R2": -half}}, ["R1", "R2"], [])[0]
    SumRule(quantity='q', group='resistors', expected=0, total=0, holds=True)
    """

    quantity: str
    group: str
    expected: int
    total: sympy.Expr
    holds: bool


def sum_rules(sens: Mapping[str, Mapping[str, sympy.Expr] | None], resistors, capacitors) -> tuple[SumRule, ...]:
    """Check the classical sum rules on derived sensitivities.

    Parameters
    ----------
    sens : mapping
        quantity (``w0``, ``q``) -> symbol name -> sensitivity.
    resistors, capacitors : iterable of str
        Names of every resistive and capacitive symbol (fixtures included).

    Examples
    --------
    >>> R1, R2, C1, C2 = sympy.symbols("R1 R2 C1 C2", positive=True)
    >>> w0 = 1 / sympy.sqrt(R1 * R2 * C1 * C2)
    >>> rules = sum_rules({"w0": sensitivities(w0, [R1, R2, C1, C2])}, ["R1", "R2"], ["C1", "C2"])
    >>> [(r.group, r.holds) for r in rules]
    [('resistors', True), ('capacitors', True)]
    """
    out = []
    for quantity, expected in (("w0", -1), ("q", 0)):
        table = sens.get(quantity)
        if not table:
            continue
        for group, names in (("resistors", resistors), ("capacitors", capacitors)):
            names = [n for n in names if n in table]
            if not names:
                continue
            total = sympy.Add(*[table[n] for n in names])
            total = sympy.cancel(sympy.together(total))
            holds = sympy.cancel(total - expected) == 0
            out.append(SumRule(quantity, group, expected, total, bool(holds)))
    return tuple(out)
