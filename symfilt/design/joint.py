"""Sizing to several targets at once, every part snapped to a preferred-number series.

:func:`size_joint` solves the *loaded* circuit for as many independent parts (or groups
of parts held in a ratio) as there are targets: w0 and Q, cutoff and DC gain, ... It
finds the continuous solution by a damped Newton iteration on the logarithms of the
parts (the residuals are ln(quantity/target)), started from the best points of a
logarithmic grid, then gives *every* varied part its two neighbouring series values
(around every solution found) and ranks each combination by the loaded error of every
target (the worst target first, then the sum of squares). :func:`sized_circuit` puts the chosen values into the
circuit, for ``size --write``. A target no values reach is an error that gives the
range each quantity covers and the limit (a part -> 0 or -> oo) that binds.

Examples
--------
>>> from symfilt import catalogue
>>> c = catalogue.build("sallen-key-lowpass", source="1k")
>>> r = size_joint(c, [("w0", "2k"), ("q", "butterworth")], ["R1", "R2"])
>>> [round(r.solution[n]) for n in ("R1", "R2")]
[6109, 26994]
>>> {k: str(v) for k, v in r.chosen.values.items()}
{'R1': '6200', 'R2': '27000'}
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, field
from typing import Callable, Sequence

import sympy
from mpmath.libmp.libhyper import NoConvergence

from symfilt.analysis.findings import finding
from symfilt.analysis.stage import analyse, numeric_values
from symfilt.design.eseries import series_neighbours, series_values
from symfilt.design.sizing import SCAN_RANGE, fixed_values, varied_symbols
from symfilt.design.targets import ALIGNMENTS, TARGETS, parse_target, read_target
from symfilt.engine.elimination import DEFAULT_MAX_TERMS
from symfilt.errors import UsageError
from symfilt.model.values import format_value

#: Most parts snapped together (2**n combinations are evaluated).
MAX_SNAPPED = 8


@dataclass(frozen=True)
class Candidate:
    """One combination of series values, every target measured on the loaded (and ideal) circuit.

    Parameters
    ----------
    values : dict
        Part name -> exact series value, for every varied part.
    loaded, ideal : dict
        Target quantity -> its value with these parts (Hz for cutoff and w0), or None.
    error_pct : dict
        Target quantity -> loaded deviation from the target in percent, or None.
    worst_pct : float or None
        The largest deviation in size (the ranking key).

    Examples
    --------
    >>> Candidate({"R1": 1000}, {"q": 0.7}, {"q": 0.7}, {"q": -1.0}, 1.0).worst_pct
    1.0
    """

    values: dict
    loaded: dict
    ideal: dict
    error_pct: dict
    worst_pct: float | None


@dataclass(frozen=True)
class JointResult:
    """The outcome of :func:`size_joint`.

    Parameters
    ----------
    groups : tuple of tuple of str
        The varied parts, one group per independent unknown; a group's later parts follow
        its first in ``ratio``.
    ratio : dict
        Part name -> its value over its group's first part (1 for the first).
    targets : tuple of (str, sympy.Expr, str or None)
        Quantity, target value and the alignment name it came from (``butterworth``), if any.
    solution : dict
        Part name -> continuous solution (float, SI base units): the one whose series
        neighbours gave the chosen combination.
    solutions : int
        How many distinct solutions the search found; the neighbours of each are ranked together.
    series : str
        The preferred-number series.
    candidates : tuple of Candidate
        Every combination of neighbouring series values, best first (``chosen`` is the first).
    present : dict
        Target quantity -> its loaded value with the present part values (None without them).
    kinds : dict
        Part name -> ``resistor``, ``capacitor`` or ``inductor``.
    notes : tuple of Finding
        What limited the result, worded by :mod:`symfilt.export.findings`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> r = size_joint(catalogue.build("sallen-key-lowpass"), [("w0", "1k"), ("q", "0.6")], ["R1", "R2"])
    >>> r.groups, r.series, r.solutions, len(r.candidates)
    ((('R1',), ('R2',)), 'E24', 2, 8)
    """

    groups: tuple
    ratio: dict
    targets: tuple
    solution: dict
    solutions: int
    series: str
    candidates: tuple
    present: dict
    kinds: dict
    notes: tuple = field(default=())

    @property
    def chosen(self) -> Candidate:
        """The best combination of series values.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> r = size_joint(catalogue.build("rc-lowpass"), [("cutoff", "2k")], ["R1"])
        >>> {k: str(v) for k, v in r.chosen.values.items()}
        {'R1': '5100'}
        """
        return self.candidates[0]


def read_targets(targets: Sequence) -> tuple:
    """Each target as (quantity, value, alignment name or None); a quantity given twice is an error.

    Parameters
    ----------
    targets : sequence of (str, value) or str
        ``("q", "butterworth")`` or ``"w0=2k"``.

    Returns
    -------
    tuple of (str, sympy.Expr, str or None)

    Examples
    --------
    >>> read_targets(["w0=2k", ("q", "bessel")])
    (('w0', 2000, None), ('q', sqrt(3)/3, 'bessel'))
    """
    out, seen = [], {}
    for t in targets:
        text = t if isinstance(t, str) else f"{t[0]}={t[1]}"
        quantity, value = read_target(parse_target(text) if isinstance(t, str) else t)
        raw = text.partition("=")[2].strip().lower()
        if quantity in seen:
            raise UsageError("--target", f"{quantity} is given twice ({seen[quantity]} and {text})",
                             "give each quantity one target")
        seen[quantity] = text
        out.append((quantity, value, raw if raw in ALIGNMENTS else None))
    if not out:
        raise UsageError("--target", "no target given", "give --target, e.g. --target cutoff=2k")
    return tuple(out)


def read_groups(circuit, vary: Sequence) -> tuple[tuple, list]:
    """The groups of varied parts (one per ``--vary``; ``"C1,C2"`` is one group) and their symbols.

    Parameters
    ----------
    circuit : Circuit
        The circuit the parts belong to.
    vary : sequence of str or of sequences of str
        ``["R1", "R2"]`` (two unknowns) or ``["C1,C2"]`` (one, C2 held in ratio to C1).

    Returns
    -------
    (groups, varied)
        The groups as tuples of names, and (name, symbol, value, kind) of every part.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> read_groups(catalogue.build("sallen-key-lowpass"), ["R1", "C1,C2"])[0]
    (('R1',), ('C1', 'C2'))
    """
    groups = []
    for v in vary:
        names = tuple(p.strip() for p in (v.split(",") if isinstance(v, str) else v) if p.strip())
        if not names:
            raise UsageError("--vary", "an empty part list", "name a part, e.g. --vary R1")
        groups.append(names)
    flat = [n for g in groups for n in g]
    twice = sorted({n for n in flat if flat.count(n) > 1})
    if twice:
        raise UsageError("--vary", f"{', '.join(twice)} is varied twice", "name each varied part once")
    varied = varied_symbols(circuit, flat)
    held = [n for g in groups if len(g) > 1 for n in g]
    lacking = [n for n, _s, v, _k in varied if v is None and n in held]
    if lacking:
        raise UsageError("--vary", "parts held in a ratio need values (the ratio is taken from them)",
                         "give " + ", ".join(lacking) + " a value")
    return tuple(groups), varied


def _measure(stage, values: dict) -> dict:
    """Every target quantity of a stage at the values (None where it does not exist)."""
    try:
        got = numeric_values(stage, values, targets_only=True)
    except (NoConvergence, ZeroDivisionError, ValueError):
        return {}
    return {q: got.get(key) for q, key in TARGETS.items()}


def _rational(v: float) -> sympy.Rational:
    return sympy.Rational(repr(float(v)))


def _shown(v: float, unit: str) -> str:
    """A number for a message: engineering prefixes with a unit, else four digits."""
    return format_value(_rational(v), unit) if unit else f"{v:.4g}"


class _Problem:
    """The loaded stage, the fixed values and the targets, as a function of the groups' log values."""

    def __init__(self, a, fixed: dict, groups: tuple, varied: list, targets: tuple):
        self.a, self.fixed, self.groups, self.targets = a, fixed, groups, targets
        info = {n: (s, v, k) for n, s, v, k in varied}
        self.symbol = {n: info[n][0] for n in info}
        self.kind = {n: info[n][2] for n in info}
        self.present = {n: info[n][1] for n in info}
        self.ratio = {n: sympy.Integer(1) if i == 0 else info[n][1] / info[g[0]][1]
                      for g in groups for i, n in enumerate(g)}
        self.goal = {q: float(v) for q, v, _a in targets}

    def values_of(self, firsts: Sequence[float]) -> dict:
        """Part name -> exact value, each group's first part at the given value."""
        out = {}
        for g, xv in zip(self.groups, firsts):
            x = _rational(xv)
            for n in g:
                out[n] = x * self.ratio[n]
        return out

    def measure(self, parts: dict, ideal: bool = False) -> dict:
        vals = {**self.fixed, **{self.symbol[n]: v for n, v in parts.items()}}
        return _measure(self.a.ideal if ideal else self.a.loaded, vals)

    def residual(self, u: np.ndarray) -> np.ndarray | None:
        """ln(quantity/target) of each target with each group's first part at exp(u)."""
        import numpy as np  # here, not at import: a report that does not size needs no numpy

        for g, ug in zip(self.groups, u):
            lo, hi = SCAN_RANGE[self.kind[g[0]]]
            if not math.log(lo) <= ug <= math.log(hi):
                return None
        got = self.measure(self.values_of(np.exp(u)))
        out = []
        for q, goal in self.goal.items():
            v = got.get(q)
            if v is None or v == 0 or not math.isfinite(v) or (q == "dc-gain" and v * goal < 0):
                return None
            out.append(math.log(abs(v) / abs(goal)))
        return np.array(out)


def _newton(res: Callable, u0: np.ndarray, tol: float = 1e-11, iterations: int = 60) -> np.ndarray | None:
    """A damped Newton iteration on res(u) = 0 with a forward-difference Jacobian."""
    import numpy as np  # here, not at import: a report that does not size needs no numpy

    u, r = np.array(u0, dtype=float), res(np.array(u0, dtype=float))
    if r is None:
        return None
    for _ in range(iterations):
        if float(np.max(np.abs(r))) < tol:
            return u
        jac = np.empty((len(r), len(u)))
        for j in range(len(u)):
            du = np.zeros(len(u))
            du[j] = 1e-7
            rj = res(u + du)
            if rj is None:
                return None
            jac[:, j] = (rj - r) / 1e-7
        step = np.linalg.lstsq(jac, -r, rcond=None)[0]
        t = 1.0
        while t > 1e-6:
            un = u + t * step
            rn = res(un)
            if rn is not None and np.linalg.norm(rn) < np.linalg.norm(r):
                break
            t /= 2
        else:
            return None
        u, r = un, rn
    return u if float(np.max(np.abs(r))) < tol else None


def _grid(problem: _Problem, points: int) -> list[np.ndarray]:
    """Log-spaced starting points: six decades around the present value, else the kind's whole range."""
    import numpy as np  # here, not at import: a report that does not size needs no numpy

    axes = []
    for g in problem.groups:
        first = problem.present[g[0]]
        lo, hi = SCAN_RANGE[problem.kind[g[0]]]
        if first is not None:
            c = math.log(float(first))
            axes.append([c + k for k in np.linspace(-3 * math.log(10), 3 * math.log(10), points)])
        else:
            axes.append(list(np.linspace(math.log(lo) + 1, math.log(hi) - 1, points)))
    return [np.array(p) for p in itertools.product(*axes)]


def _solve(problem: _Problem) -> list[np.ndarray]:
    """Every distinct solution found from the best starting points, nearest the present values first."""
    import numpy as np  # here, not at import: a report that does not size needs no numpy

    points = 7 if len(problem.groups) <= 2 else 4
    starts = []
    if all(problem.present[g[0]] is not None for g in problem.groups):
        starts.append(np.array([math.log(float(problem.present[g[0]])) for g in problem.groups]))
    scored = []
    for u in _grid(problem, points):
        r = problem.residual(u)
        if r is not None:
            scored.append((float(np.linalg.norm(r)), tuple(u)))
    starts += [np.array(u) for _n, u in sorted(scored)[:6]]
    found: list[np.ndarray] = []
    for u0 in starts:
        u = _newton(problem.residual, u0)
        if u is not None and all(np.max(np.abs(u - f)) > 1e-5 for f in found):
            found.append(u)
    centre = starts[0] if starts and len(starts) > len(scored[:6]) else None
    if centre is not None:
        found.sort(key=lambda f: float(np.sum(np.abs(f - centre))))
    return found


def _reach_error(problem: _Problem) -> UsageError:
    """No solution: the range each target quantity covers over the parts' whole range, and what binds."""
    axes = []
    for g in problem.groups:
        lo, hi = SCAN_RANGE[problem.kind[g[0]]]
        axes.append([lo * (hi / lo) ** (k / 12) for k in range(13)])
    seen: dict[str, list] = {q: [] for q in problem.goal}
    for point in itertools.product(*axes):
        got = problem.measure(problem.values_of(point))
        for q in seen:
            v = got.get(q)
            if v is not None and math.isfinite(v):
                seen[q].append((v, point))
    parts = []
    for q, goal in problem.goal.items():
        if not seen[q]:
            parts.append(f"{q} has no value for any {', '.join(g[0] for g in problem.groups)}")
            continue
        (low, at_low), (high, at_high) = min(seen[q]), max(seen[q])
        unit = "Hz" if q in ("cutoff", "w0") else ""
        side = at_high if goal > high else at_low if goal < low else None
        binds = ""
        if side is not None:
            ends = []
            for g, x, ax in zip(problem.groups, side, axes):
                if x == ax[0] or x == ax[-1]:
                    ends.append(f"{g[0]} -> {'0' if x == ax[0] else 'oo'}")
            binds = f", the {'highest' if goal > high else 'lowest'} as " + " and ".join(ends) if ends else ""
        parts.append(f"{q} reaches {_shown(low, unit)} .. {_shown(high, unit)}{binds}")
    asked = ", ".join(f"{q} = {_shown(goal, 'Hz' if q in ('cutoff', 'w0') else '')}"
                      for q, goal in problem.goal.items())
    names = ", ".join(g[0] for g in problem.groups)
    return UsageError("size", f"no values of {names} give {asked}" + (" together" if len(problem.goal) > 1 else "")
                      + " (" + "; ".join(parts) + ")",
                      "choose a reachable target, or vary other parts")


def _candidates(problem: _Problem, solution: dict, series: str) -> list[Candidate]:
    """Every combination of the neighbouring series values of every varied part."""
    names = list(solution)
    options = [sorted(set(series_neighbours(solution[n], series))) for n in names]
    out = []
    for combo in itertools.product(*options):
        parts = dict(zip(names, combo))
        loaded, ideal = problem.measure(parts), problem.measure(parts, ideal=True)
        errs = {}
        for q, goal in problem.goal.items():
            v = loaded.get(q)
            errs[q] = None if v is None else (v / goal - 1) * 100
        worst = None if any(e is None for e in errs.values()) else max(abs(e) for e in errs.values())
        out.append(Candidate(parts, {q: loaded.get(q) for q in problem.goal},
                             {q: ideal.get(q) for q in problem.goal}, errs, worst))
    return out


def _rank(c: Candidate) -> tuple:
    """Worst target error first, then the sum of squares; a missing quantity last."""
    return (c.worst_pct is None, c.worst_pct or 0, sum(e * e for e in c.error_pct.values() if e is not None))


def size_joint(circuit, targets: Sequence, vary: Sequence, *, series: str = "E24",
               max_terms: int = DEFAULT_MAX_TERMS) -> JointResult:
    """Solve the loaded circuit for several targets at once and snap every varied part to a series.

    Parameters
    ----------
    circuit : Circuit
        Every symbol but the varied parts needs a value.
    targets : sequence
        ``("w0", "2k")``, ``("q", "butterworth")``, ``"cutoff=2k"``, ...; each quantity once.
    vary : sequence
        One entry per independent unknown: a part name, or several (``"C1,C2"`` or a tuple)
        held in the ratio of their present values. As many entries as targets.
    series : str
        IEC 60063 series: E6, E12, E24, E48, E96, E192.
    max_terms : int
        Size budget of the elimination.

    Returns
    -------
    JointResult

    Raises
    ------
    UsageError
        Targets and unknowns do not pair up, a part is named twice, values are missing,
        or no values meet the targets (the message gives the reachable range).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> r = size_joint(catalogue.build("sallen-key-lowpass"), ["cutoff=3k", "q=0.6"], ["R1", "R2"],
    ...                series="E12")
    >>> sorted(r.chosen.values), r.chosen.worst_pct < 10
    (['R1', 'R2'], True)
    """
    import numpy as np  # here, not at import: a report that does not size needs no numpy

    tlist = read_targets(targets)
    series_values(series)
    groups, varied = read_groups(circuit, vary)
    if len(groups) != len(tlist):
        n, m = len(tlist), len(groups)
        raise UsageError("--vary", f"{n} target{'s' * (n > 1)} need{'s' * (n == 1)} {n} independent "
                         f"part{'s' * (n > 1)} (one --vary each), got {m} --vary",
                         "give one --vary per --target (hold parts in a ratio with commas, e.g. --vary C1,C2)")
    if sum(len(g) for g in groups) > MAX_SNAPPED:
        raise UsageError("--vary", f"more than {MAX_SNAPPED} varied parts", "vary fewer parts")
    a = analyse(circuit, sensitivity=False, max_terms=max_terms, numbers=False)  # it measures its own numbers
    problem = _Problem(a, fixed_values(circuit, a, varied), groups, varied, tlist)
    found = _solve(problem)
    if not found:
        raise _reach_error(problem)
    solutions = [{n: float(v) for n, v in problem.values_of(np.exp(u)).items()} for u in found]
    ranked, seen = [], set()
    for k, sol in enumerate(solutions):  # the neighbours of every solution compete
        for cand in _candidates(problem, sol, series):
            key = tuple(sorted(cand.values.items()))
            if key not in seen:
                seen.add(key)
                ranked.append((cand, k))
    ranked.sort(key=lambda ck: _rank(ck[0]))
    notes = []
    if len(found) > 1:
        notes.append(finding("joint-solutions", count=len(found)))
    present = {}
    if all(v is not None for v in problem.present.values()):
        present = {q: v for q, v in problem.measure(dict(problem.present)).items() if q in problem.goal}
    return JointResult(groups, dict(problem.ratio), tlist, solutions[ranked[0][1]], len(found),
                       series.strip().upper(), tuple(c for c, _k in ranked), present, dict(problem.kind),
                       tuple(notes))


def chosen_values(result) -> dict:
    """Part name -> the chosen series value: the best combination of a :class:`JointResult`,
    the neighbour with the smallest loaded error of a :class:`~symfilt.design.sizing.SizeResult`.

    Parameters
    ----------
    result : JointResult or SizeResult
        A sizing.

    Returns
    -------
    dict

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.sizing import size
    >>> chosen_values(size(catalogue.build("rc-lowpass"), ("cutoff", 2000), "R1"))
    {'R1': 5100}
    """
    if isinstance(result, JointResult):
        return dict(result.chosen.values)
    best = min(result.neighbours, key=lambda n: math.inf if n.error_pct is None else abs(n.error_pct))
    return dict(best.values)


def size_design(circuit, targets: Sequence, vary: Sequence, *, series: str = "E24",
                max_terms: int = DEFAULT_MAX_TERMS):
    """``symfilt size``: one target and one ``--vary`` go to :func:`~symfilt.design.sizing.size`
    (with its closed form), anything else to :func:`size_joint`.

    Parameters
    ----------
    circuit : Circuit
        The circuit to size.
    targets : sequence of str
        ``quantity=value`` texts.
    vary : sequence of str
        One entry per ``--vary`` (``"R1"`` or ``"C1,C2"``).
    series : str
        IEC 60063 series.
    max_terms : int
        Size budget of the elimination.

    Returns
    -------
    SizeResult or JointResult

    Examples
    --------
    >>> from symfilt import catalogue
    >>> type(size_design(catalogue.build("rc-lowpass"), ["cutoff=2k"], ["R1"])).__name__
    'SizeResult'
    """
    from symfilt.design.sizing import size

    if len(targets) == 1 and len(vary) == 1:
        tlist = read_targets(targets)
        groups, _varied = read_groups(circuit, vary)
        return size(circuit, tlist[0][:2], groups[0], series=series, max_terms=max_terms)
    return size_joint(circuit, targets, vary, series=series, max_terms=max_terms)


def sized_circuit(circuit, result):
    """The circuit with the chosen series values put in (for ``size --write``).

    Parameters
    ----------
    circuit : Circuit
        The circuit that was sized.
    result : JointResult or SizeResult
        Its sizing (:func:`chosen_values`).

    Returns
    -------
    Circuit

    Examples
    --------
    >>> from symfilt import catalogue
    >>> c = catalogue.build("rc-lowpass")
    >>> sized_circuit(c, size_joint(c, ["cutoff=2k"], ["R1"])).part("R1").value
    5100
    """
    return circuit.with_values(chosen_values(result))


__all__ = ["MAX_SNAPPED", "Candidate", "JointResult", "chosen_values", "read_groups", "read_targets", "size_design",
           "size_joint", "sized_circuit"]
