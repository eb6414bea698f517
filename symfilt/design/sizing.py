"""Sizing to a target, with the loading included, snapped to IEC 60063 preferred numbers.

:func:`size` solves the *loaded* equation of a circuit for one part (or several
parts held in a ratio) so that a quantity hits a target: cutoff or w0 in Hz, Q,
or DC gain. It gives the exact solution where the equation is small enough
(a polynomial of degree at most two in the varied part once radicals are
squared away), else a bracketed numeric root on a logarithmic scale, and then
the two neighbouring values of a preferred-number series with the loaded and
ideal result of each.

The preferred-number series are in :mod:`symfilt.design.eseries`.

Examples
--------
>>> from symfilt import catalogue
>>> r = size(catalogue.build("rc-lowpass"), ("cutoff", 2000), "R1", series="E24")
>>> round(r.value, 1)
5067.0
>>> [str(n.values["R1"]) for n in r.neighbours]
['4700', '5100']
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, field
from typing import Callable, Mapping, Sequence

import sympy
from mpmath.libmp.libhyper import NoConvergence

from symfilt.analysis.findings import Finding, finding
from symfilt.analysis.numeric import batch_cutoff, finite_float, tidy
from symfilt.analysis.stage import StageResult, analyse, numeric_values
from symfilt.model.circuit import LOAD_C, Circuit, S
from symfilt.engine.elimination import DEFAULT_MAX_TERMS
from symfilt.errors import UsageError
from symfilt.model.values import format_value

from symfilt.design.closed_form import closed_form_roots
from symfilt.design.eseries import series_neighbours, series_values
from symfilt.model.safe import as_sympy

from symfilt.design.targets import ALIGNMENTS, TARGETS, parse_target, read_target


@dataclass(frozen=True)
class Neighbour:
    """One preferred value tried in place of the exact solution.

    Parameters
    ----------
    values : dict
        Part name -> exact value for every varied part.
    loaded, ideal : float or None
        The target quantity with these values, loaded and ideal (Hz for cutoff and w0).
    error_pct, ideal_error_pct : float or None
        Deviation from the target in percent.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> n = size(catalogue.build("rc-lowpass"), ("cutoff", 2000), "R1").neighbours[0]
    >>> n.values, round(n.loaded, 1), round(n.error_pct, 2)
    ({'R1': 4700}, 2088.4, 4.42)
    """

    values: dict
    loaded: float | None
    ideal: float | None
    error_pct: float | None
    ideal_error_pct: float | None


@dataclass(frozen=True)
class SizeResult:
    """The outcome of :func:`size`.

    Parameters
    ----------
    vary : tuple of str
        The varied parts; the first is the one solved for, the others follow it in ``ratio``.
    ratio : dict
        Part name -> its value over the first part's value (1 for the first).
    quantity : str
        ``cutoff``, ``w0``, ``q`` or ``dc-gain``.
    target : sympy.Rational
        As asked (Hz for cutoff and w0).
    exact : sympy.Expr or None
        Closed-form solution for the first varied part, in the other symbols.
    exact_note : Finding or None
        Why there is no closed form, when there is none.
    value : float
        The solution at the circuit's values (SI base units).
    solutions : tuple of float
        Every positive solution found (``value`` is the one nearest the part's present value).
    method : str
        ``closed form`` or ``numeric root``.
    series : str
        The preferred-number series of the neighbours (``E24``, ...).
    neighbours : tuple of Neighbour
        The series values just below and just above the solution; with parts held in a ratio,
        every combination of each part's own two neighbours, the smallest loaded error first.
    present : float or None
        The loaded quantity with the circuit's present values.
    notes : tuple of Finding
        What limited the solution, worded by :mod:`symfilt.export.findings`.
    kinds : dict
        Part name -> kind (``resistor``, ``capacitor``, ``inductor``) of each varied part.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> r = size(catalogue.build("rc-lowpass"), ("cutoff", 2000), "R1")
    >>> r.vary, r.method, r.series, round(r.present, 1)
    (('R1',), 'closed form', 'E24', 2088.4)
    """

    vary: tuple
    ratio: dict
    quantity: str
    target: sympy.Rational
    exact: sympy.Expr | None
    exact_note: Finding | None
    value: float
    solutions: tuple
    method: str
    series: str
    neighbours: tuple
    present: float | None = None
    notes: tuple = field(default=())
    kinds: dict = field(default_factory=dict)


def _quantity_expr(stage: StageResult, quantity: str):
    if quantity == "cutoff":
        return stage.cutoff.value
    if quantity == "w0":
        return stage.form.w0
    if quantity == "q":
        return stage.form.q
    return stage.transfer.dc_gain()


def _condition(stage: StageResult, quantity: str, target):
    """An expression that is zero exactly when the quantity equals the target,
    free of radicals where the standard forms allow (None when there is none)."""
    form = stage.form
    if quantity == "dc-gain":
        return stage.transfer.dc_gain() - target
    if quantity == "q":
        return None if form.q is None else form.q**2 - target**2
    wt = 2 * sympy.pi * target
    if quantity == "w0":
        return None if form.w0 is None else form.w0**2 - wt**2
    if stage.cutoff.value is None:
        return None
    if form.order == 1:
        return form.w0**2 - wt**2
    if form.order == 2 and form.kind in ("lowpass", "highpass"):
        # (w_c/w0)^2 = u solves u^2 - 2 x u - 1 = 0 with x = 1 - 1/(2 Q^2), whose only
        # positive root is the cutoff (analysis.second_order_root); high-pass: u = (w0/w_c)^2.
        u = wt**2 / form.w0**2 if form.kind == "lowpass" else form.w0**2 / wt**2
        return 1 - 1 / (2 * form.q**2) - (u - 1 / u) / 2
    return None


def _rational(v: float) -> sympy.Rational:
    return sympy.Rational(repr(float(v)))


def _shown(v: float, unit: str) -> str:
    """A number for a message: engineering prefixes with a unit, else four digits."""
    return format_value(_rational(v), unit) if unit else f"{v:.4g}"


#: Range of values searched for each kind of part (SI base units).
SCAN_RANGE = {"resistor": (1e-3, 1e12), "capacitor": (1e-18, 1.0), "inductor": (1e-12, 1e3)}


def _log_roots(f: Callable[[float], float | None], lo: float, hi: float, per_decade: int = 3) -> list[float]:
    """Every sign change of f on a logarithmic grid from lo to hi, refined by bisection in log x."""
    n = max(2, int(round(math.log10(hi / lo) * per_decade)))
    grid = [lo * (hi / lo) ** (k / n) for k in range(n + 1)]
    vals = [f(x) for x in grid]
    roots = []
    for (a, fa), (b, fb) in zip(zip(grid, vals), zip(grid[1:], vals[1:])):
        if fa is None or fb is None or (fa > 0) == (fb > 0):
            if fa == 0:
                roots.append(a)
            continue
        la, lb = math.log(a), math.log(b)
        for _ in range(200):
            mid = (la + lb) / 2
            fm = f(math.exp(mid))
            if fm is None:
                break
            if (fm > 0) == (fa > 0):
                la, fa = mid, fm
            else:
                lb = mid
            if lb - la < 1e-14:
                break
        if fm is not None:
            roots.append(math.exp((la + lb) / 2))
    return roots


def _numeric_cutoff_function(stage: StageResult, tie: dict, values: dict, x, goal: float):
    """f(x) = cutoff(x) / goal - 1 in Hz, the cutoff found from the coefficients of H(s) in
    floating point (:func:`symfilt.analysis.numeric.batch_cutoff`, numpy) - fast enough for a scan."""
    import numpy as np


    b, d = stage.transfer.coefficients()
    lam = [sympy.lambdify(x, (c.xreplace(tie) if tie else c).xreplace(values), "math") for c in b + d]

    def f(xv: float) -> float | None:
        try:
            cs = [np.array([float(fn(xv))]) for fn in lam]
        except (ZeroDivisionError, OverflowError, ValueError):
            return None
        w = float(batch_cutoff(cs[: len(b)], cs[len(b):])[0])
        return None if not math.isfinite(w) else w / (2 * math.pi) / goal - 1

    return f


def varied_symbols(circuit: Circuit, vary: Sequence[str]) -> list:
    """(name, symbol, value or None, kind) of each part to vary, checked.

    Parameters
    ----------
    circuit : Circuit
        The circuit.
    vary : sequence of str
        Resistors, capacitors, inductors, parameters of those units, or R_s, R_L, C_L.

    Returns
    -------
    list of (str, sympy.Symbol, sympy.Rational or None, str)

    Examples
    --------
    >>> from symfilt import catalogue
    >>> [(n, str(v), k) for n, _s, v, k in varied_symbols(catalogue.build("rc-lowpass"), ["R1"])]
    [('R1', '4700', 'resistor')]
    """
    table = circuit.symbols()
    out = []
    for name in vary:
        info = table.get(name)
        if info is None or name == "s":
            raise UsageError("--vary", f"{name} is not a part of the circuit",
                             "name a resistor, capacitor or inductor (or R_s, R_L, C_L)")
        if info["role"] == "part" and info.get("kind") not in ("resistor", "capacitor", "inductor"):
            raise UsageError("--vary", f"{name} is a {info.get('kind')}", "vary a resistor, capacitor or inductor")
        if info["role"] == "opamp":
            raise UsageError("--vary", f"{name} is an op-amp parameter", "vary a resistor, capacitor or inductor")
        if "tie" in info:
            raise UsageError("--vary", f"{name} is tied ({name} = {info['tie']})",
                             "vary a parameter or part it refers to, or give it a value of its own")
        kind = info.get("kind", "resistor" if name != LOAD_C else "capacitor")
        if info["role"] == "parameter":
            kind = {"Ω": "resistor", "F": "capacitor", "H": "inductor"}.get(info["unit"])
            if kind is None:
                raise UsageError("--vary", f"parameter {name} is no resistance, capacitance or inductance",
                                 "vary a parameter that sets resistors, capacitors or inductors")
        out.append((name, info["symbol"], info["value"], kind))
    return out


def size(circuit: Circuit, target: tuple[str, object], vary: str | Sequence[str], *, series: str = "E24",
         max_terms: int = DEFAULT_MAX_TERMS) -> SizeResult:
    """Solve the loaded circuit for a part value that meets a target.

    Parameters
    ----------
    circuit : Circuit
        Every symbol but the varied part(s) needs a value.
    target : (str, value)
        ``("cutoff", 2000)`` or ``("w0", 1e3)`` in Hz, ``("q", 0.707)``, ``("dc-gain", -2)``;
        the value as a number or value text.
    vary : str or sequence of str
        One part, or several parts held in the ratio of their present values (all need
        values then); the first is solved for.
    series : str
        IEC 60063 series for the neighbours: E6, E12, E24, E48, E96, E192.
    max_terms : int
        Size budget of the elimination.

    Returns
    -------
    SizeResult

    Raises
    ------
    UsageError
        Unknown part or quantity, missing values, or no value of the part meets the target.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> r = size(catalogue.build("sallen-key-lowpass"), ("cutoff", "3k"), ("C1", "C2"), series="E12")
    >>> r.method, round(r.value * 1e9, 3)
    ('closed form', 10.228)
    >>> sorted(r.neighbours[0].values)
    ['C1', 'C2']
    """
    quantity, tval = read_target(target)
    series_values(series)
    names, varied = _read_vary(circuit, vary)
    first_name, x, first_value, kind = varied[0]
    ratio = {n: (sympy.Integer(1) if i == 0 else v / first_value) for i, (n, _s, v, _k) in enumerate(varied)}
    a = analyse(circuit, sensitivity=False, max_terms=max_terms, numbers=False)  # it measures its own numbers
    values = fixed_values(circuit, a, varied)
    tie = {s: x * ratio[n] for n, s, _v, _k in varied[1:]}
    notes: list[str] = []
    at = _evaluator(values, varied, ratio, TARGETS[quantity])
    present = at(a.loaded, first_value) if first_value is not None else None
    goal = _signed_goal(a, at, quantity, tval, present, kind, notes)

    def check(xv: float) -> bool:
        got = at(a.loaded, _rational(xv))
        return got is not None and abs(got / float(goal) - 1) < 1e-7

    _require_dependence(a.loaded, quantity, x, tie, first_name)
    candidates, method, reason = _solutions(a, quantity, goal, x, tie, values, (first_value, kind), check, notes)
    if not candidates:
        raise _unreachable(a, at, (first_name, kind), quantity, float(goal))
    centre = float(first_value) if first_value is not None else None
    candidates.sort(key=lambda c: abs(math.log(c[0] / centre)) if centre else c[0])
    value, exact = candidates[0]
    if exact is not None:
        exact = tidy(exact, radicals=True)
    neighbours = _neighbours(a, values, varied, ratio, value, series, (TARGETS[quantity], float(goal)))
    return SizeResult(names, ratio, quantity, tval, exact, None if exact is not None else reason, value,
                      tuple(sorted(c[0] for c in candidates)), method, series.strip().upper(),
                      tuple(neighbours), present, tuple(notes), {n: k for n, _s, _v, k in varied})


def _unreachable(a, at, part: tuple, quantity: str, goal: float) -> UsageError:
    """No value meets the target: the range the quantity covers over the part's range, and what binds."""
    name, kind = part
    lo, hi = SCAN_RANGE[kind]
    seen = []
    for k in range(31):
        xv = lo * (hi / lo) ** (k / 30)
        v = at(a.loaded, _rational(xv))
        if v is not None and math.isfinite(v):
            seen.append((v, k))
    reach = ""
    if seen:
        (low, k_low), (high, k_high) = min(seen), max(seen)
        k = k_high if goal > high else k_low
        end = {0: f", the {'highest' if goal > high else 'lowest'} as {name} -> 0",
               30: f", the {'highest' if goal > high else 'lowest'} as {name} -> oo"}.get(k, "")
        unit = "Hz" if quantity in ("cutoff", "w0") else ""
        reach = f" (reachable {_shown(low, unit)} .. {_shown(high, unit)}{end})"
    unit = "Hz" if quantity in ("cutoff", "w0") else ""
    return UsageError("size", f"no positive value of {name} gives {quantity} = {_shown(goal, unit)}{reach}",
                      "choose a reachable target, or vary another part")


def _neighbours(a, values: dict, varied: list, ratio: dict, value: float, series: str, measure: tuple) -> list:
    """The series values either side of every varied part (each snapped on its own), loaded and ideal;
    several parts give every combination, the smallest loaded error first."""
    key, goal = measure
    options = [sorted(set(series_neighbours(value * float(ratio[n]), series))) for n, *_ in varied]
    out = []
    for combo in itertools.product(*options):
        vals = {**values, **{s: v for (_n, s, _v, _k), v in zip(varied, combo)}}
        got = []
        for stage in (a.loaded, a.ideal):
            try:
                got.append(numeric_values(stage, vals, targets_only=True).get(key))
            except NoConvergence:
                got.append(None)
        errs = [None if v is None else (v / goal - 1) * 100 for v in got]
        out.append(Neighbour({n: v for (n, *_r), v in zip(varied, combo)}, got[0], got[1], errs[0], errs[1]))
    if len(varied) > 1:
        out.sort(key=lambda n: math.inf if n.error_pct is None else abs(n.error_pct))
    return out


def _read_vary(circuit: Circuit, vary) -> tuple[tuple, list]:
    """The varied part names and their (name, symbol, value, kind), checked."""
    names = (vary,) if isinstance(vary, str) else tuple(vary)
    if not names or len(set(names)) != len(names):
        raise UsageError("--vary", "name each varied part once", "e.g. --vary R1 or --vary C1,C2")
    varied = varied_symbols(circuit, names)
    if len(varied) > 1 and any(v is None for _n, _s, v, _k in varied):
        raise UsageError("--vary", "parts held in a ratio need values (the ratio is taken from them)",
                         "give " + ", ".join(n for n, _s, v, _k in varied if v is None) + " a value")
    return names, varied


def fixed_values(circuit: Circuit, a, varied) -> dict:
    """The values of every symbol but the varied ones; every symbol of H needs one.

    Parameters
    ----------
    circuit : Circuit
        The circuit.
    a : Analysis
        Its analysis (:func:`symfilt.analysis.stage.analyse`).
    varied : list
        As :func:`varied_symbols` gives it.

    Returns
    -------
    dict
        Symbol -> exact value.

    Raises
    ------
    UsageError
        A symbol of the transfer function has no value.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> c = catalogue.build("rc-lowpass")
    >>> sorted(str(k) for k in fixed_values(c, analyse(c, sensitivity=False), varied_symbols(c, ["R1"])))
    ['C1', 'R_L', 'R_s']
    """
    syms = {s for _n, s, _v, _k in varied}
    values = {k: v for k, v in circuit.values().items() if k not in syms}
    needed = (a.loaded.transfer.free_symbols() | a.ideal.transfer.free_symbols()) - {S} - syms
    missing = sorted(str(m) for m in needed if m not in values)
    if missing:
        raise UsageError("size", "no value for " + ", ".join(missing), "give every part but the varied one a value")
    return values


def _evaluator(values: dict, varied, ratio: dict, key: str) -> Callable:
    """at(stage, x): the measured quantity with the first varied part at x (the others in ratio)."""
    def at(stage: StageResult, xv: sympy.Rational) -> float | None:
        vals = {**values, **{s: xv * ratio[n] for n, s, _v, _k in varied}}
        try:
            return numeric_values(stage, vals, targets_only=True).get(key)
        except NoConvergence:
            return None

    return at


def _signed_goal(a, at, quantity: str, tval, present, kind: str, notes: list):
    """The target with the sign of the circuit's DC gain (its magnitude is sized)."""
    if quantity != "dc-gain":
        return tval
    sample = present if present is not None else at(a.loaded, _rational(SCAN_RANGE[kind][0] * 1e6))
    if sample is not None and sample * float(tval) < 0:
        notes.append(finding("dc-gain-sign", negative=sample < 0, magnitude=abs(float(tval))))
        return -tval
    return tval


def _require_dependence(stage: StageResult, quantity: str, x, tie: dict, first_name: str) -> None:
    """UsageError when the varied part does not appear in the loaded quantity."""
    expr0 = _quantity_expr(stage, quantity)
    if expr0 is not None and x not in as_sympy(expr0).free_symbols and not (
            tie and set(tie) & as_sympy(expr0).free_symbols):
        used = sorted(str(v) for v in as_sympy(expr0).free_symbols)
        raise UsageError("--vary", f"{first_name} does not change the loaded {quantity}",
                         "vary a part that appears in it: " + (", ".join(used) if used else "none does"))


def _solutions(a, quantity: str, goal, x, tie: dict, values: dict, start: tuple, check: Callable,
               notes: list) -> tuple[list, str, Finding | None]:
    """(candidates as (float, exact or None), method, reason there is no closed form)."""
    exact_roots, reason = [], None
    cond = _condition(a.loaded, quantity, goal)
    if cond is None:
        reason = finding("no-closed-form-quantity", quantity=quantity)
    else:
        cond = cond.xreplace(tie) if tie else cond
        exact_roots, reason = closed_form_roots(cond, x)
    candidates = []  # (float, exact or None)
    for r in exact_roots:
        v = finite_float(r, values)
        if v is not None and v > 0 and check(v):
            candidates.append((v, r))
    if candidates:
        return candidates, "closed form", reason
    if cond is not None and not reason:
        reason = finding("closed-form-roots-miss")
    g = _target_function(a, quantity, goal, x, tie, values)
    return _numeric_candidates(g, start, check, notes), "numeric root", reason


def _target_function(a, quantity: str, goal, x, tie: dict, values: dict) -> Callable[[float], float | None]:
    """g(x) = quantity(x) / goal - 1 (Hz for cutoff and w0), from the closed form or the numeric cutoff."""
    scale = 2 * math.pi if quantity in ("cutoff", "w0") else 1.0
    expr = _quantity_expr(a.loaded, quantity)
    if expr is not None:
        e = (expr.xreplace(tie) if tie else expr).xreplace(values)
        fn = sympy.lambdify(x, e, "mpmath")

        def g(xv: float) -> float | None:
            try:
                v = complex(fn(xv))
            except (ZeroDivisionError, ValueError, TypeError, OverflowError):
                return None
            if abs(v.imag) > 1e-9 * max(1.0, abs(v.real)):
                return None
            return v.real / scale / float(goal) - 1

        return g
    if quantity == "cutoff" and a.loaded.cutoff.edges is None:
        return _numeric_cutoff_function(a.loaded, tie, values, x, float(goal))
    raise UsageError("--target", f"the loaded stage has no {quantity} (order {a.loaded.form.order}, "
                     f"{a.loaded.form.kind})", "target the cutoff, or the w0 and Q of a first- or second-order stage")


def _numeric_candidates(g: Callable, start: tuple, check: Callable, notes: list) -> list:
    """Roots of g on a log scan around the present value (or over the kind's whole range)."""
    first_value, kind = start
    centre = float(first_value) if first_value is not None else math.sqrt(SCAN_RANGE[kind][0] * SCAN_RANGE[kind][1])
    lo, hi = (centre * 1e-6, centre * 1e6) if first_value is not None else SCAN_RANGE[kind]
    roots = _log_roots(g, lo, hi)
    if not roots and first_value is not None:
        roots = _log_roots(g, *SCAN_RANGE[kind], per_decade=2)
    candidates = [(v, None) for v in roots if check(v)]
    if roots and not candidates:
        candidates = [(v, None) for v in roots]
        notes.append(finding("numeric-root-unconfirmed"))
    return candidates


__all__ = ["ALIGNMENTS", "SCAN_RANGE", "TARGETS", "Neighbour", "SizeResult", "fixed_values", "parse_target",
           "read_target", "size", "varied_symbols"]
