"""Approximate transfer functions with a measured error: dominant terms of each coefficient.

The method is *simplification after generation* (SAG) by term pruning: the exact H(s) is
derived first; then, in each coefficient of N(s) and D(s) (the terms of one power of s),
the terms are weighed at the parts' values and the smallest are dropped while their summed
magnitude stays within ``eps`` times the magnitude of the coefficient (the usual magnitude
criterion of simplification after generation, see tests/REFERENCES.md). Given value ranges,
a term is dropped only when the criterion holds at every corner of the ranges.

The error of the result is then *measured*, not assumed: the worst relative error of
``|H(jw)|``,

    e = max over w of | |H_approx(jw)| / |H(jw)| - 1 |,

over the band (two decades around the cutoff, or the band edges, f0 or notch; log-spaced
points; at every corner when ranges are given), and the worst phase difference
``max |arg(H_approx(jw) / H(jw))|`` in degrees beside it. When ``e`` exceeds the bound, the
per-coefficient ``eps`` is halved and the pruning done again (more terms kept) until it holds;
``eps = 0`` keeps every term, the exact result, so the loop always ends.

Examples
--------
>>> from symfilt import catalogue
>>> from symfilt.analysis.network import derive
>>> c = catalogue.build("sallen-key-lowpass")
>>> x = approximate(derive(c), c.values(), 0.05)
>>> x.measured_worst <= 0.05, x.terms_kept < x.terms_total
(True, True)
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass
from typing import Mapping

import sympy

from symfilt.analysis.forms import standard_form
from symfilt.analysis.network import NetworkFunction
from symfilt.engine.rational import Ratio, cancel_pair
from symfilt.errors import UsageError

#: Points of the measuring band (log-spaced).
POINTS = 400
#: Halvings of the per-coefficient bound before every term is kept.
BACK_OFFS = 16
#: Most value ranges whose corners are visited (2**n corners).
MAX_RANGES = 6
#: The standard form (w0, Q) of an approximation is read off up to this many terms.
FORM_TERMS = 200

__all__ = ["Approximation", "approximate", "approximations", "measure_error", "BACK_OFFS", "POINTS"]


@dataclass(frozen=True)
class Approximation:
    """An approximate transfer function and its measured error against the exact one.

    Parameters
    ----------
    exact, approx : NetworkFunction
        The exact H(s) and the one with the small terms dropped.
    bound : float
        The error asked for (0.05 for 5%).
    eps : float
        The per-coefficient bound the pruning finally used (``bound``, or smaller after back-off).
    measured_worst : float
        The worst relative error of |H(jw)| over the band (and the corners), measured.
    phase_worst_deg : float
        The worst phase difference there, in degrees.
    band_hz : tuple of float
        The band measured, (low, high) in Hz.
    terms_kept, terms_total : int
        Terms of N and D together, approximate and exact.
    corners : int
        Value sets the terms were weighed and the error measured at (1: the values alone).
    form : StandardForm or None
        The approximation's standard form (w0, Q) when its order is at most 2.
    points : int
        Frequencies of the band measured.
    dropped : tuple of (str, int, sympy.Expr)
        The terms dropped: ("num" or "den", power of s, the term) of the exact N and D.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> c = catalogue.build("rc-lowpass")
    >>> approximate(derive(c), c.values(), 0.0).approx == derive(c)
    True
    """

    exact: NetworkFunction
    approx: NetworkFunction
    bound: float
    eps: float
    measured_worst: float
    phase_worst_deg: float
    band_hz: tuple
    terms_kept: int
    terms_total: int
    corners: int = 1
    form: object = None
    points: int = POINTS
    dropped: tuple = ()


def _value_points(values: Mapping, ranges: Mapping | None) -> list[dict[str, float]]:
    """Name -> float at the values, then at each corner of the ranges."""
    base = {(k.name if hasattr(k, "name") else str(k)): float(v) for k, v in values.items()}
    points = [base]
    ranges = dict(ranges or {})
    if len(ranges) > MAX_RANGES:
        raise UsageError("approx ranges", f"{len(ranges)} value ranges, over the limit of {MAX_RANGES}",
                         "give ranges for the few parts that matter most")
    names = sorted(ranges)
    for corner in () if not names else itertools.product(*[(float(ranges[n][0]), float(ranges[n][1])) for n in names]):
        points.append({**base, **dict(zip(names, corner))})
    return points


def _need_values(h: NetworkFunction, values: Mapping) -> None:
    given = {(k.name if hasattr(k, "name") else str(k)) for k in values}
    missing = sorted(x.name for x in h.free_symbols() if x.name != "s" and x.name not in given)
    if missing:
        raise UsageError("--approx", "the terms are weighed at the values, and " + ", ".join(missing)
                         + (" has" if len(missing) == 1 else " have") + " none",
                         "give every symbol a value in the circuit file (or drop --approx for the exact result)")


def _log_terms(poly, names: list[str], point: dict[str, float]):
    """Each term of a flint polynomial as (exponents, s power, sign, log magnitude) at a value set.

    A zero value makes its terms' log magnitude -inf (they vanish there).
    """
    k_s = names.index("s") if "s" in names else None
    at = [1.0 if n == "s" else math.pi if n == "pi" else float(point[n]) for n in names]
    out = []
    for exps, c in poly.to_dict().items():
        c = int(c)
        mag, sign = math.log(abs(c)), 1 if c > 0 else -1
        for e, v in zip(map(int, exps), at):
            if e:
                mag = mag + e * math.log(abs(v)) if v else -math.inf
                sign *= (1 if v >= 0 else -1) ** e
        out.append((exps, int(exps[k_s]) if k_s is not None else 0, sign, mag))
    return out


def _pruned(poly, names: list[str], points: list[dict], eps: float):
    """The exponents of the terms kept: per power of s, the smallest dropped while within eps."""
    weighed = [_log_terms(poly, names, p) for p in points]
    by_power: dict[int, list[int]] = {}
    for i, (_e, k, _sg, _m) in enumerate(weighed[0]):
        by_power.setdefault(k, []).append(i)
    keep = set()
    for idx in by_power.values():
        idx = sorted(idx, key=lambda i: weighed[0][i][3])
        scales = []
        for w in weighed:  # per value set: the coefficient's magnitude, relative to its largest term
            top = max(w[i][3] for i in idx)
            scales.append((top, abs(sum(w[i][2] * math.exp(w[i][3] - top) for i in idx if w[i][3] > -math.inf))))
        dropped = [0.0] * len(weighed)
        for pos, i in enumerate(idx):
            if pos == len(idx) - 1:
                keep.add(i)  # the largest term of a coefficient always stays
                break
            trial = [d + math.exp(w[i][3] - top) if w[i][3] > -math.inf else d
                     for d, w, (top, _a) in zip(dropped, weighed, scales)]
            if all(t <= eps * a for t, (_top, a) in zip(trial, scales)):
                dropped = trial
            else:
                keep.update(idx[pos:])
                break
    return {weighed[0][i][0] for i in keep}


def _kept_poly(poly, kept: set):
    ctx = poly.context()
    return ctx.from_dict({e: c for e, c in poly.to_dict().items() if e in kept})


def _dropped_terms(which: str, poly, kept: set, symbols: dict) -> list:
    """("num"/"den", power of s, term) of every term of ``poly`` not in ``kept``."""
    names = list(poly.context().names())
    out = []
    for exps, c in poly.to_dict().items():
        if exps in kept:
            continue
        term = sympy.Integer(int(c))
        for n, e in zip(names, map(int, exps)):
            term *= symbols[n] ** e
        out.append((which, int(exps[names.index("s")]) if "s" in names else 0, term))
    return out


def _band(exact: NetworkFunction, numbers: Mapping | None, point: dict) -> tuple[float, float]:
    """Two decades around the marked frequencies (cutoff, edges, f0, notch), else the poles and zeros."""
    keys = ("cutoff_hz", "low_edge_hz", "high_edge_hz", "f0_hz", "notch_hz")
    marks = [numbers[k] for k in keys if numbers and isinstance(numbers.get(k), (int, float)) and numbers[k] > 0]
    if not marks:
        import numpy as np

        num, den = exact.coefficient_values(point)
        roots = [abs(r) / (2 * math.pi) for cs in (num, den) if len(cs) > 1 for r in np.roots(cs[::-1]) if abs(r) > 0]
        marks = roots or [1.0]
    return min(marks) / 10.0, max(marks) * 10.0


def measure_error(exact: NetworkFunction, approx: NetworkFunction, point: Mapping, band_hz,
                  points: int = POINTS) -> tuple[float, float]:
    """Worst relative error of |H(jw)| and worst phase difference (degrees) over a log-spaced band.

    Parameters
    ----------
    exact, approx : NetworkFunction
    point : mapping
        Symbol name -> value for every symbol but s.
    band_hz : (float, float)
    points : int

    Examples
    --------
    >>> s = sympy.Symbol("s")
    >>> e, p = measure_error(NetworkFunction(1, s + 1), NetworkFunction(1, s), {}, (10.0, 100.0))
    >>> round(e, 5), round(p, 3)  # |jw + 1|/|jw| - 1 and atan(1/w) at w = 2*pi*10 rad/s
    (0.00013, 0.912)
    """
    import numpy as np

    w = 2 * np.pi * np.logspace(math.log10(band_hz[0]), math.log10(band_hz[1]), points)

    def response(h):
        num, den = h.coefficient_values(point)
        return np.polyval(num[::-1], 1j * w) / np.polyval(den[::-1], 1j * w)

    he, ha = response(exact), response(approx)
    ratio = ha / he
    return float(np.max(np.abs(np.abs(ratio) - 1.0))), float(np.degrees(np.max(np.abs(np.angle(ratio)))))


def approximate(h: NetworkFunction, values: Mapping, bound: float, *, ranges: Mapping | None = None,
                numbers: Mapping | None = None) -> Approximation:
    """The dominant terms of each coefficient of N and D, within a measured error bound.

    Parameters
    ----------
    h : NetworkFunction
        The exact transfer function.
    values : mapping
        Symbol (or name) -> value, for every symbol of ``h`` but s (a UsageError otherwise).
    bound : float
        Worst relative error of |H(jw)| allowed over the band, 0 <= bound < 1 (0: exact).
    ranges : mapping of str to (low, high), optional
        Value ranges: a term is dropped only if small at every corner, the error measured at each.
    numbers : mapping, optional
        The view's numbers (``cutoff_hz``, ``f0_hz``, ...) that place the band.

    Returns
    -------
    Approximation

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> c = catalogue.build("mfb-lowpass")
    >>> x = approximate(derive(c), c.values(), 0.05)
    >>> x.measured_worst <= x.bound, x.terms_kept <= x.terms_total
    (True, True)
    """
    if not isinstance(bound, (int, float)) or not 0 <= bound < 1:
        raise UsageError("--approx", f"{bound!r} is outside 0..100%", "give a bound such as 5%")
    _need_values(h, values)
    if h.infinite or h.ratio.num == 0:
        raise UsageError("--approx", "the transfer function is zero or infinite", "drop --approx")
    points = _value_points(values, ranges)
    ratio = h.ratio
    names = list(ratio.num.context().names())
    total = len(ratio.num.to_dict()) + len(ratio.den.to_dict())
    band = _band(h, numbers, points[0])
    eps = float(bound)
    for attempt in range(BACK_OFFS + 1):
        if attempt == BACK_OFFS:
            eps = 0.0
        kept_num, kept_den = _pruned(ratio.num, names, points, eps), _pruned(ratio.den, names, points, eps)
        num, den = _kept_poly(ratio.num, kept_num), _kept_poly(ratio.den, kept_den)
        kept = len(num.to_dict()) + len(den.to_dict())
        n, d = cancel_pair(num, den)
        approx = NetworkFunction.from_ratio(Ratio(n, d, ratio.symbols), h.quantity)
        errs = [measure_error(h, approx, p, band) for p in points]
        worst, phase = max(e for e, _p in errs), max(p for _e, p in errs)
        if worst <= bound or eps == 0.0:
            form = standard_form(approx) if approx.order() <= 2 and kept <= FORM_TERMS else None
            dropped = _dropped_terms("num", ratio.num, kept_num, ratio.symbols) + \
                _dropped_terms("den", ratio.den, kept_den, ratio.symbols)
            return Approximation(h, approx, float(bound), eps, worst, phase, (float(band[0]), float(band[1])),
                                 kept, total, len(points), form, POINTS, tuple(dropped))
        eps /= 2
    raise AssertionError("unreachable")  # pragma: no cover


def approximations(analysis, bound: float, ranges: Mapping | None = None) -> tuple:
    """(view, Approximation) of the transfer function of each view, loaded then ideal.

    Parameters
    ----------
    analysis : symfilt.analysis.stage.Analysis
        Exact (not substituted): its circuit gives the values, its numbers the band.
    bound : float
    ranges : mapping of str to (low, high), optional

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> [(v, x.measured_worst <= 0.05) for v, x in approximations(analyse(catalogue.build("rc-lowpass")), 0.05)]
    [('loaded', True), ('ideal', True)]
    """
    values = analysis.circuit.values()
    return tuple((key, approximate(getattr(analysis, key).transfer, values, bound, ranges=ranges,
                                   numbers=analysis.numeric[key])) for key in ("loaded", "ideal"))
