"""Load limits: how far the source resistance and the load may go before the cutoff moves.

Each fixture is taken alone (the others at their ideal limits): the smallest R_L,
the largest R_s and the largest C_L that keep the cutoff within a tolerance of the
ideal cutoff. Closed form for first order, else a logarithmic scan and bisection at
the circuit's values. Each limit is set against the fixture's actual value (the factor
between them, and the cutoff's shift with that fixture alone); :func:`combined_shift`
gives the shift with every fixture at its actual value together.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable, Mapping

import sympy

from symfilt.analysis.stage import Analysis
from symfilt.analysis.forms import cutoff, standard_form
from symfilt.analysis.findings import Finding, finding
from symfilt.analysis.numeric import finite_float, numeric_cutoff
from symfilt.model.circuit import LOAD_C, LOAD_R, SOURCE_R, S
from symfilt.analysis.network import NetworkFunction
from symfilt.model.safe import as_sympy


@dataclass(frozen=True)
class LoadLimit:
    """The bound on one fixture that keeps the cutoff within a tolerance of ideal.

    Each fixture is taken alone: the other fixtures are at their ideal limits.

    Parameters
    ----------
    fixture : str
        ``R_L``, ``R_s`` or ``C_L``.
    bound : str
        ``min`` (R_L must be at least the value) or ``max`` (R_s, C_L at most).
    tolerance : float
        Allowed relative change of the cutoff, as a fraction (0.02 for 2%).
    value : float or None
        The bound at the circuit's values (None when it cannot be computed).
    exact : sympy.Expr or None
        Closed form of the bound, where one exists (first order).
    note : Finding or None
        Why there is no value (or what limits it), worded by :mod:`symfilt.export.findings`.
    actual : float or None
        The fixture's value in the circuit (None when symbolic).
    factor : float or None
        How far the actual value lies beyond the limit: actual/limit for a ``max`` bound,
        limit/actual for a ``min`` one (above 1: outside the limit).
    shift : float or None
        The cutoff's relative change against ideal with this fixture alone at its actual value.

    Examples
    --------
    >>> LoadLimit("R_L", "min", 0.02, 235000.0, None).bound
    'min'
    """

    fixture: str
    bound: str
    tolerance: float
    value: float | None
    exact: sympy.Expr | None
    note: Finding | None = None
    actual: float | None = None
    factor: float | None = None
    shift: float | None = None


def _fixture_alone(h: NetworkFunction, keep: str) -> NetworkFunction:
    for name, point in ((SOURCE_R, 0), (LOAD_R, sympy.oo), (LOAD_C, 0)):
        if name != keep:
            h = h.limit(sympy.Symbol(name, positive=True), point)
    return h


def _cutoff_function(h: NetworkFunction, x: sympy.Symbol, others: Mapping) -> Callable[[float], float | None]:
    """The cutoff (rad/s) as a function of one symbol, the others at their values.

    The standard form is found once; a closed-form cutoff becomes a plain float
    function, otherwise each call finds the root numerically.
    """
    cut = cutoff(standard_form(h)).value
    if cut is not None:
        args = sorted(as_sympy(cut).free_symbols, key=lambda z: z.name)
        f = sympy.lambdify(args, cut, modules="math", dummify=True)
        fixed = {k: float(v) for k, v in others.items()}

        def closed(v: float) -> float | None:
            try:
                w = complex(f(*[v if a == x else fixed[a] for a in args]))
            except (ValueError, ZeroDivisionError, OverflowError, KeyError):
                return None
            return w.real if abs(w.imag) <= 1e-12 * max(1.0, abs(w.real)) else None

        return closed
    return lambda v: numeric_cutoff(h, {**others, x: v})


def load_limits(analysis: Analysis, tolerance: float) -> list[LoadLimit]:
    """Smallest R_L, largest R_s (and largest C_L) for which the cutoff stays within
    ``tolerance`` of the ideal cutoff.

    Closed form for first order (solving the cutoff ratio = 1 +- tolerance), else a
    numeric bracket and bisection on a logarithmic scan at the circuit's values.

    Parameters
    ----------
    analysis : Analysis
    tolerance : float
        Fraction, e.g. 0.02.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> lims = load_limits(analyse(catalogue.build("rc-lowpass"), sensitivity=False), 0.02)
    >>> [(x.fixture, x.bound, x.exact, round(x.value)) for x in lims]
    [('R_s', 'max', R1/49, 96), ('R_L', 'min', 50*R1, 235000)]
    >>> round(lims[0].actual), round(lims[0].factor, 2), round(lims[0].shift, 4)
    (600, 6.26, -0.1132)
    """
    c = analysis.circuit
    values = dict(c.values())
    out = []
    for name, bound, present, scan in ((SOURCE_R, "max", c.source.present, (-3, 9)),
                                       (LOAD_R, "min", c.load_resistance.present, (-3, 12)),
                                       (LOAD_C, "max", c.load_capacitance.present, (-18, -1))):
        if not present:
            continue
        x = sympy.Symbol(name, positive=True)
        h = _fixture_alone(analysis.loaded.transfer, name)
        if x not in h.free_symbols():
            out.append(LoadLimit(name, bound, tolerance, None, None, finding("fixture-has-no-effect")))
            continue
        exact = _exact_bound(h, x, analysis.ideal.cutoff.value, tolerance)
        if exact is not None and not (exact.free_symbols - set(values)):
            value, note = finite_float(exact.xreplace(values)), None
        else:
            value, note = _scanned_bound(analysis, h, x, (bound, scan), tolerance, values)
        out.append(LoadLimit(name, bound, tolerance, value, exact, note, *_against_actual(analysis, h, x, bound, value)))
    return out


def combined_shift(analysis: Analysis) -> float | None:
    """The cutoff's relative change against ideal with every fixture at its value together.

    Parameters
    ----------
    analysis : Analysis

    Returns
    -------
    float or None
        loaded cutoff / ideal cutoff - 1; None when either has no number.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> round(combined_shift(analyse(catalogue.build("rc-lowpass"), sensitivity=False)), 4)
    0.3568
    """
    loaded, ideal = (analysis.numeric[k].get("cutoff_hz") for k in ("loaded", "ideal"))
    return None if loaded is None or not ideal else loaded / ideal - 1


def _against_actual(analysis: Analysis, h: NetworkFunction, x: sympy.Symbol, bound: str, value):
    """(actual value, factor beyond the limit, cutoff shift with this fixture alone) - None where unknown."""
    values = dict(analysis.circuit.values())
    if x not in values:
        return None, None, None
    actual = float(values[x])
    factor = None
    if value:
        factor = actual / value if bound == "max" else value / actual
    ideal = analysis.numeric["ideal"].get("cutoff_hz")
    others = {k: v for k, v in values.items() if k != x}
    if ideal is None or (h.free_symbols() - {S, x} - set(others)):
        return actual, factor, None
    w = _cutoff_function(h, x, others)(actual)
    return actual, factor, None if w is None else w / (2 * math.pi * ideal) - 1


def _exact_bound(h: NetworkFunction, x: sympy.Symbol, ideal_cut, tolerance: float):
    """The closed-form bound of a first-order stage (the one positive solution of ratio = 1 +- tol), or None."""
    form = standard_form(h)
    if not (form.order == 1 and form.w0 is not None and ideal_cut is not None):
        return None
    ratio = sympy.cancel(form.w0 / ideal_cut)
    tol = sympy.nsimplify(tolerance)
    sols = []
    for target in (1 + tol, 1 - tol):
        try:
            sols += [r for r in sympy.solve(sympy.Eq(ratio, target), x) if r.is_positive is not False]
        except NotImplementedError:
            sols = []
    sols = [sympy.factor(r) for r in sols if not r.has(sympy.I)]
    return sols[0] if len(sols) == 1 else None


def _scanned_bound(analysis: Analysis, h: NetworkFunction, x: sympy.Symbol, where: tuple, tolerance: float,
                   values: dict) -> tuple[float | None, Finding | None]:
    """(bound, note) from a quarter-decade scan and bisection in log x at the circuit's values."""
    bound, scan = where
    others = {k: v for k, v in values.items() if k != x}
    ideal_num = analysis.numeric["ideal"].get("cutoff_hz")
    if ideal_num is None or (h.free_symbols() - {S, x} - set(others)):
        return None, finding("needs-every-value")
    w_ideal = ideal_num * 2 * math.pi
    cutoff_of = _cutoff_function(h, x, others)

    def dev(v: float) -> float:
        w = cutoff_of(v)
        return math.inf if w is None else abs(w / w_ideal - 1) - tolerance

    grid = [10.0 ** (k / 4) for k in range(scan[0] * 4, scan[1] * 4 + 1)]
    prev = None
    for v in grid[::-1] if bound == "min" else grid:
        if dev(v) > 0:
            if prev is None:
                return None, finding("bound-outside-scan")
            return _bisect(dev, sorted((prev, v)), bound), None
        prev = v
    return None, finding("within-tolerance-over-scan")


def _bisect(dev: Callable[[float], float], bracket: list, bound: str) -> float:
    """The edge of dev <= 0 within the bracket, by 60 bisections in log x."""
    lo, hi = bracket
    for _ in range(60):
        mid = math.sqrt(lo * hi)
        inside = dev(mid) <= 0
        if (bound == "min") == inside:
            hi = mid
        else:
            lo = mid
    return math.sqrt(lo * hi)
