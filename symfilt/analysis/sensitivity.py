"""Normalized sensitivities S_x^y = (x / y) * dy/dx and their sum-rule self-checks.

Sum rules (Schaumann & Van Valkenburg, *Design of Analog Filters*, sensitivity
chapter; from memory): for a circuit of resistors, capacitors and ideal op-amps
(or op-amps of a pure, dimensionless gain), impedance scaling leaves w0 and Q
unchanged and frequency scaling moves w0 inversely with every capacitor, so

* sum over resistors of S_R^w0 = -1, sum over capacitors of S_C^w0 = -1,
* the same sums for Q are 0 (and for a dimensionless gain, 0).

They hold only when every resistor is counted (R_s and R_L included). With inductors,
op-amp bandwidths (GBW, P2) or transconductances the same two scalings give the general
pair (:func:`sum_rules`): sum of S_R + S_L − S_C = 0 and sum of S_C + S_L − S_GBW = -1
for a frequency (0 for Q and gains).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping

import sympy

from symfilt.analysis.exact_tables import ProductSensitivities
from symfilt.analysis.fastfactor import factor
from symfilt.model.safe import as_sympy

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


def product_sensitivities(factors, symbols) -> ProductSensitivities | None:
    """S_x^y for y = product of polynomials p_i ** e_i, for every symbol x at once.

    S_x^y = sum of e_i * (x / p_i) dp_i/dx: exact and cheap, a cancelled ratio of
    polynomials (no radicals) even when y itself has square roots. Worked on
    python-flint polynomials; each factor is converted once. The table keeps each S_x as
    its flint ratio until it is read (:class:`~symfilt.analysis.exact_tables.ProductSensitivities`), so a report that
    prints only numbers never builds the sympy forms. None when ``factors`` is None.

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

    factors = tuple((as_sympy(p), sympy.Rational(e)) for p, e in factors)
    symbols = list(symbols)
    bridge = PolyContext([p for p, _e in factors if p != 1] + symbols)
    polys = [(bridge.to_flint(p), flint.fmpq(int(e.p), int(e.q)), p.free_symbols) for p, e in factors]
    zero = (bridge.ctx.from_dict({}), None)
    ratios = {}
    for x in symbols:
        used = [(fp, e) for fp, e, free in polys if x in free]
        if not used:
            ratios[str(x)] = zero
            continue
        den = used[0][0]
        for fp, _e in used[1:]:
            den = den * fp
        xg = bridge.gen(x)
        num = bridge.ctx.from_dict({})
        for fp, e in used:
            num = num + e * xg * bridge.derivative(fp, x) * (den / fp)
        ratios[str(x)] = zero if num == 0 else cancel_pair(num, den)
    return ProductSensitivities(bridge, factors, tuple(fp for fp, _e, _f in polys), ratios)


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
        ``resistors`` or ``capacitors`` (the classical pair), else the signed classes of one
        scaling, e.g. ``resistors + inductors − capacitors``.
    expected : int
        The sum the rule asks for (-1 for a frequency under frequency scaling, else 0).
    total : sympy.Expr
        The sum of the derived sensitivities (simplified).
    holds : bool
        Whether ``total`` equals ``expected`` exactly.

    Examples
    --------
    >>> half = sympy.Rational(1, 2)
    >>> sum_rules({"q": {"R1": half, "R2": -half}}, {"R1": "resistors", "R2": "resistors"})[0]
    SumRule(quantity='q', group='resistors', expected=0, total=0, holds=True)
    """

    quantity: str
    group: str
    expected: int
    total: sympy.Expr
    holds: bool


#: Scaling class -> (impedance exponent, frequency exponent): scaling every impedance by k
#: multiplies a resistance by k**1 and a capacitance by k**-1; scaling every time constant by k
#: multiplies a capacitance and an inductance by k and a bandwidth (GBW, P2) by 1/k.
SCALING = {"resistors": (1, 0), "capacitors": (-1, 1), "inductors": (1, 1), "bandwidths": (0, -1),
           "transconductances": (-1, 0), "gains": (0, 0)}
#: What frequency scaling asks of each quantity's sum (a frequency moves as 1/k; ratios stay);
#: None: impedance scaling only (|H(jw)| at a fixed frequency moves with frequency scaling).
#: The cutoff's sensitivities are a chain-rule combination of w0's and Q's (or the zero's), so
#: their sums follow from these; tests/test_analysis.py checks them anyway.
FREQUENCY_SUM = {"w0": -1, "q": 0, "gain": 0, "magnitude": None}


def scaling_sum(factors, weights: Mapping[str, int]) -> sympy.Rational | None:
    """sum over x of w_x·S_x^y for y = product of p_i ** e_i, by Euler's theorem; None when it does not apply.

    A polynomial p is weighted-homogeneous of degree d when every term has the same weighted
    degree sum w_x·k_x (k_x the term's power of x); then sum_x w_x·x·dp/dx = d·p (Euler's theorem
    on homogeneous functions), so sum_x w_x·S_x^y = sum_i e_i·d_i exactly, with no sum of
    rational functions to cancel. Symbols without a weight count 0. When a factor is not
    homogeneous (or not an expanded polynomial) the sum is left to the caller (None).

    Parameters
    ----------
    factors : iterable of (sympy.Expr, number)
        Polynomials and their exponents, as :func:`product_sensitivities` takes.
    weights : mapping
        Symbol name -> weight w_x (an integer).

    Returns
    -------
    sympy.Rational or None

    Examples
    --------
    >>> R1, R2, C1, C2 = sympy.symbols("R1 R2 C1 C2", positive=True)
    >>> q = [(R1 * R2 * C1 * C2, sympy.Rational(1, 2)), (C2 * (R1 + R2), -1)]
    >>> scaling_sum(q, {"R1": 1, "R2": 1}), scaling_sum(q, {"C1": 1, "C2": 1})
    (0, 0)
    >>> scaling_sum([(R1 + C1, 1)], {"R1": 1}) is None
    True
    """
    total = sympy.Integer(0)
    for p, e in factors:
        degree = _weighted_degree(as_sympy(p), weights)
        if degree is None:
            return None
        total += sympy.Rational(e) * degree
    return total


def _weighted_degree(p: sympy.Expr, weights: Mapping[str, int]) -> int | None:
    """The one weighted degree of every term of a polynomial (sums, products and positive integer
    powers of symbols and numbers); None when its terms differ in degree (or it is 0, or not such
    a polynomial)."""
    if p.is_number:
        return None if p == 0 else 0
    if p.is_Symbol:
        return weights.get(p.name, 0)
    if p.is_Pow and p.exp.is_Integer and p.exp > 0:
        d = _weighted_degree(p.base, weights)
        return None if d is None else d * int(p.exp)
    if p.is_Mul or p.is_Add:
        degrees = [_weighted_degree(a, weights) for a in p.args if not (p.is_Mul and a.is_number)]
        if None in degrees or (p.is_Add and len(set(degrees)) > 1):
            return None
        return sum(degrees) if p.is_Mul else degrees[0]
    return None


def sum_rules(sens: Mapping[str, Mapping[str, sympy.Expr] | None], classes: Mapping[str, str],
              factors: Mapping[str, list | None] | None = None) -> tuple[SumRule, ...]:
    """Check the scaling sum rules on derived sensitivities.

    Impedance scaling (every R, L, Rout, transresistance times k, every C over k) leaves a
    voltage transfer unchanged; frequency scaling (every C and L times k, every bandwidth over
    k) turns H(s) into H(ks). Hence, for each quantity y with exponents e of :data:`SCALING`:
    sum of e_imp·S_x^y = 0 and sum of e_freq·S_x^y = -1 for a frequency (w0, the cutoff),
    0 for Q and a gain. For a circuit of resistors, capacitors and dimensionless gains only
    these are the classical pair (Schaumann & Van Valkenburg; from memory), shown as such:
    sum over resistors = sum over capacitors = -1 for w0, 0 for Q.

    Parameters
    ----------
    sens : mapping
        quantity (``w0``, ``q``, ``gain``, ``magnitude``) -> symbol name -> sensitivity (other
        quantities are ignored).
    classes : mapping
        Every symbol name (fixtures and op-amp parameters included) -> a key of :data:`SCALING`.
    factors : mapping, optional
        quantity -> the (polynomial, exponent) factors its sensitivities were taken from (as
        :func:`product_sensitivities` took them). A sum whose factors are all homogeneous under
        the scaling is then :func:`scaling_sum` (exact, no cancelling); any other sum is formed
        from ``sens`` and cancelled.

    Examples
    --------
    >>> R1, R2, C1, C2 = sympy.symbols("R1 R2 C1 C2", positive=True)
    >>> w0 = 1 / sympy.sqrt(R1 * R2 * C1 * C2)
    >>> cls = {"R1": "resistors", "R2": "resistors", "C1": "capacitors", "C2": "capacitors"}
    >>> [(r.group, r.holds) for r in sum_rules({"w0": sensitivities(w0, [R1, R2, C1, C2])}, cls)]
    [('resistors', True), ('capacitors', True)]
    >>> R, L = sympy.symbols("R L", positive=True)
    >>> [(r.group, r.expected, r.holds) for r in sum_rules({"w0": sensitivities(R / L, [R, L])},
    ...                                                    {"R": "resistors", "L": "inductors"})]
    [('resistors + inductors', 0, True), ('inductors', -1, True)]
    """
    present = {c for c in classes.values()} - {"gains"}
    classical = present <= {"resistors", "capacitors"}
    out = []
    for quantity, freq_sum in FREQUENCY_SUM.items():
        table = sens.get(quantity)
        if not table:
            continue
        if classical and freq_sum is not None:
            rules = [(g, {n: 1 for n, c in classes.items() if c == g}, freq_sum) for g in ("resistors", "capacitors")]
        else:
            rules = [(_group_label(present, k), {n: SCALING[c][k] for n, c in classes.items() if SCALING[c][k]}, e)
                     for k, e in ((0, 0), (1, freq_sum)) if e is not None]
        for group, weights, expected in rules:
            names = [n for n in weights if n in table]
            if not names:
                continue
            total = None
            if factors and factors.get(quantity) is not None:
                total = scaling_sum(factors[quantity], {n: weights[n] for n in names})
            if total is not None:
                holds = total == expected
            else:
                total = sympy.cancel(sympy.together(sympy.Add(*[weights[n] * table[n] for n in names])))
                holds = sympy.cancel(total - expected) == 0
            out.append(SumRule(quantity, group, expected, total, bool(holds)))
    return tuple(out)


def _group_label(present, k: int) -> str:
    """``resistors + inductors − capacitors``: the classes of one scaling, by the sign they enter with."""
    plus = [c for c in SCALING if c in present and SCALING[c][k] > 0]
    minus = [c for c in SCALING if c in present and SCALING[c][k] < 0]
    return " + ".join(plus) + "".join(f" − {c}" for c in minus) if plus else "− " + " − ".join(minus)
