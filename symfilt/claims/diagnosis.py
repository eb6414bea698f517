"""What the diagnosis of a differing claim looks for, as data.

When a claim differs from the derived result, :func:`diagnose` looks for the
usual slips (load or source resistance left out, op-amp taken as ideal, a part
shorted or left open, a lost sign, 2*pi, a missing j, two parts exchanged, a
constant factor), states plain facts (symbols, order, DC and high-frequency
gain) and finds one set of values where the two differ. Each item is a
:class:`ClaimFinding`: a ``kind`` code and its data. The words are chosen in
:mod:`symfilt.export.check_report`, nowhere here.

Examples
--------
>>> import sympy
>>> R1, R2 = sympy.symbols("R1 R2", positive=True)
>>> findings, _ = diagnose(R2 / R1, -R2 / R1, Judge({R1, R2}, 0), {}, 0)
>>> findings[0].kind
'sign'
"""

from __future__ import annotations

import itertools
import math
import random
from dataclasses import dataclass, field
from typing import Any, Mapping

import mpmath
import sympy

from symfilt.claims.compare import Judge, mp_eval

_TWO_PI = 2 * sympy.pi

#: Kinds of finding, in the order they are looked for.
FINDING_KINDS = ("left-out", "part-limit", "sign", "two-pi", "missing-j", "exchanged", "constant-factor",
                 "no-simple-cause", "missing-symbols", "extra-symbols", "order", "limit-differs",
                 "counterexample", "not-diagnosed")


@dataclass(frozen=True)
class ClaimFinding:
    """One item of the diagnosis of a differing claim: a kind code and its data.

    Parameters
    ----------
    kind : str
        One of ``FINDING_KINDS``.
    data : Mapping[str, Any]
        What the kind needs to be worded: symbol names, limits, expressions,
        numbers (see :func:`symfilt.export.check_report.finding_text`).

    Examples
    --------
    >>> ClaimFinding("order", {"expected": 2, "got": 1}).data["got"]
    1
    """

    kind: str
    data: Mapping[str, Any] = field(default_factory=dict, hash=False)


# ---------------------------------------------------------------- limits (rational in one symbol)


def _rational_in(expr: sympy.Expr, x: sympy.Symbol) -> bool:
    """True when x appears only under + * and whole powers."""
    if x not in expr.free_symbols:
        return True
    if expr.is_Symbol:
        return True
    if expr.is_Pow:
        return expr.exp.is_Integer and _rational_in(expr.base, x)
    return (expr.is_Add or expr.is_Mul) and all(_rational_in(a, x) for a in expr.args)


def _limit(expr: sympy.Expr | None, x: sympy.Symbol, at_zero: bool) -> sympy.Expr | None:
    """Limit of a rational function of x as x -> 0 or oo (zoo when unbounded), None if not rational."""
    if expr is None or x not in expr.free_symbols:
        return expr
    if not _rational_in(expr, x):
        return None
    from symfilt.engine.rational import rational_limit

    return rational_limit(expr, x, 0 if at_zero else "oo")


# ---------------------------------------------------------------- the usual slips

#: Fixture symbol -> (limit at zero?, what leaving it out means).
_FIXTURES = {"R_L": (False, "load"), "C_L": (True, "load-capacitance"), "R_s": (True, "source-resistance")}


def _candidate_limits(missing: list[sympy.Symbol]) -> tuple[list, list]:
    """(fixture and op-amp limits, single-part limits) for the symbols the claim lacks."""
    fixtures, parts = [], []
    for x in missing:
        name = x.name
        if name in _FIXTURES:
            fixtures.append((x, _FIXTURES[name][0], _FIXTURES[name][1]))
        elif name.startswith("A_"):
            fixtures.append((x, False, "opamp-gain"))
        elif name.startswith("GBW_"):
            fixtures.append((x, False, "opamp-bandwidth"))
        elif name[:1] in "RCL" and name != "s":
            short_at_zero = name[0] in "RL"
            parts.append((x, True, "short" if short_at_zero else "open"))
            parts.append((x, False, "open" if short_at_zero else "short"))
        else:
            parts.extend([(x, True, None), (x, False, None)])
    return fixtures, parts


def _limit_findings(claim: sympy.Expr, derived: sympy.Expr, judge: Judge, missing: list) -> list[ClaimFinding]:
    fixtures, parts = _candidate_limits(missing)
    for size in range(1, min(len(fixtures), 4) + 1):
        for chosen in itertools.combinations(fixtures, size):
            target = derived
            for x, at_zero, _ in chosen:
                target = _limit(target, x, at_zero)
            if target is not None and not target.has(sympy.zoo) and judge.equal(claim, target):
                limits = tuple((x.name, at_zero, what) for x, at_zero, what in chosen)
                return [ClaimFinding("left-out", {"limits": limits})]
    for x, at_zero, effect in parts:
        target = _limit(derived, x, at_zero)
        if target is not None and not target.has(sympy.zoo) and judge.equal(claim, target):
            return [ClaimFinding("part-limit", {"symbol": x.name, "at_zero": at_zero, "effect": effect})]
    return []


def _slips(claim: sympy.Expr, derived: sympy.Expr, judge: Judge) -> list[ClaimFinding]:
    """Explanations: limits, sign, 2*pi, constant factor, exchanged parts."""
    s = judge.s
    missing = sorted(derived.free_symbols - claim.free_symbols - {s}, key=str)
    out = _limit_findings(claim, derived, judge, missing)
    if judge.equal(claim, -derived):
        out.append(ClaimFinding("sign"))
    for target, how in ((derived / _TWO_PI, "divided"), (derived * _TWO_PI, "times"),
                        (derived.xreplace({s: _TWO_PI * s}), "s-for-2pi-s"),
                        (derived.xreplace({s: s / _TWO_PI}), "2pi-s-for-s")):
        if target != derived and judge.equal(claim, target):
            out.append(ClaimFinding("two-pi", {"how": how}))
            break
    if sympy.I in claim.atoms() and judge.equal(claim, derived.xreplace({s: -sympy.I * s})):
        out.append(ClaimFinding("missing-j"))
    common = sorted(claim.free_symbols & derived.free_symbols - {s}, key=str)
    pairs = [(a, b) for a, b in itertools.combinations(common, 2) if a.name[0] == b.name[0]][:60]
    for a, b in pairs:
        if judge.equal(claim.xreplace({a: b, b: a}), derived):
            out.append(ClaimFinding("exchanged", {"a": a.name, "b": b.name}))
    if not out and s in derived.free_symbols:
        factor = judge.ratio(claim, derived)
        if factor is not None:
            out.append(ClaimFinding("constant-factor", {"factor": factor}))
    return out


def _facts(claim: sympy.Expr, derived: sympy.Expr, judge: Judge) -> list[ClaimFinding]:
    """Plain facts: symbols, order, DC and high-frequency gain."""
    s, out = judge.s, []
    missing = sorted(derived.free_symbols - claim.free_symbols, key=str)
    extra = sorted(claim.free_symbols - derived.free_symbols, key=str)
    if missing:
        out.append(ClaimFinding("missing-symbols", {"symbols": tuple(map(str, missing))}))
    if extra:
        out.append(ClaimFinding("extra-symbols", {"symbols": tuple(map(str, extra))}))
    if s not in claim.free_symbols | derived.free_symbols:
        return out
    expected, got = judge.order(derived), judge.order(claim)
    if expected is not None and got is not None and expected != got:
        out.append(ClaimFinding("order", {"expected": expected, "got": got}))
    for at_zero in (True, False):
        want, have = _limit(derived, s, at_zero), _limit(claim, s, at_zero)
        if want is not None and have is not None and not judge.equal(have, want):
            out.append(ClaimFinding("limit-differs", {"at_zero": at_zero, "expected": want, "got": have}))
    return out


# ---------------------------------------------------------------- a counterexample

_TYPICAL = (("GBW_", 1e6), ("A_", 1e5), ("R", 1e3), ("C", 1e-8), ("L", 1e-3))  # scale of a random value


def _random_values(symbols: list[sympy.Symbol], values: Mapping[str, float], rng: random.Random) -> dict[str, float]:
    chosen: dict[str, float] = {}
    for x in symbols:
        typical = next((v for k, v in _TYPICAL if x.name.startswith(k)), 1.0)
        chosen[x.name] = values[x.name] if x.name in values else float(f"{typical * 10 ** rng.uniform(-1, 1):.2g}")
    return chosen


def _worst_frequency(claim, derived, s, point, uses_s, mp):
    """(score, w, claim value, derived value, dB apart, phase apart) of the most telling frequency."""
    grid = [0.0] + [10 ** (k / 4) for k in range(-40, 49)] if uses_s else [None]
    best = None
    for w in grid:
        if w is not None:
            point[s] = mp.mpc(0, w)
        try:
            have, want = mp_eval(claim, point, mp), mp_eval(derived, point, mp)
        except (ZeroDivisionError, ValueError):
            continue
        if not (mp.isfinite(have) and mp.isfinite(want)) or have == want:
            continue
        db = float(20 * mp.log10(abs(have) / abs(want))) if have != 0 and want != 0 else math.inf
        phase = float(mp.degrees(abs(mp.arg(have / want)))) if have != 0 and want != 0 else 0.0
        score = (abs(db) >= 1.0 or phase >= 10.0, abs(db) + phase / 10)
        if best is None or score > best[0]:
            best = (score, w, have, want, db, phase)
        if score[0]:
            break
    return best


def _counterexample(claim: sympy.Expr, derived: sympy.Expr, s: sympy.Symbol,
                    values: Mapping[str, float], seed: int) -> tuple[dict[str, float] | None, ClaimFinding | None]:
    """One set of values where the two differ, and by how much in dB."""
    rng, mp = random.Random(seed + 1), mpmath.MPContext()
    mp.dps = 30
    symbols = sorted((claim.free_symbols | derived.free_symbols) - {s}, key=str)
    chosen = _random_values(symbols, values, rng)
    point: dict[sympy.Symbol, Any] = {x: mp.mpf(chosen[x.name]) for x in symbols}
    uses_s = s in claim.free_symbols | derived.free_symbols
    best = _worst_frequency(claim, derived, s, point, uses_s, mp)
    if best is None:
        return None, None
    _, w, have, want, db, phase = best
    if w is not None:
        chosen["omega" if "w" in chosen else "w"] = w
    size = lambda v: (float(abs(v)), float(20 * mp.log10(abs(v))) if v != 0 else None)
    (claim_abs, claim_db), (derived_abs, derived_db) = size(have), size(want)
    return chosen, ClaimFinding("counterexample", {
        "values": dict(chosen), "claim": claim_abs, "claim_db": claim_db, "derived": derived_abs,
        "derived_db": derived_db, "db_apart": db, "phase_apart": phase})


# ---------------------------------------------------------------- all of it


def diagnose(claim: sympy.Expr, derived: sympy.Expr, judge: Judge, values: Mapping[str, float],
             seed: int) -> tuple[tuple[ClaimFinding, ...], dict[str, float] | None]:
    """Why a claim differs from the derived result: slips, facts and a counterexample.

    Parameters
    ----------
    claim, derived : sympy.Expr
        The hand derivation and the derived quantity (known to differ).
    judge : Judge
        The judge over the symbols of both.
    values : Mapping[str, float]
        Values for the counterexample (others are drawn at random).
    seed : int
        Seed of the random values.

    Returns
    -------
    (tuple of ClaimFinding, dict or None)
        The findings, slips first (``no-simple-cause`` when none), then the
        facts and the counterexample; and the counterexample's values.

    Examples
    --------
    >>> import sympy
    >>> R1, R2 = sympy.symbols("R1 R2", positive=True)
    >>> findings, counter = diagnose(R2 / R1, -R2 / R1, Judge({R1, R2}, 0), {"R1": 1e3, "R2": 1e4}, 0)
    >>> [f.kind for f in findings], counter
    (['sign', 'counterexample'], {'R1': 1000.0, 'R2': 10000.0})
    """
    findings = _slips(claim, derived, judge) or [ClaimFinding("no-simple-cause")]
    counter, example = _counterexample(claim, derived, judge.s, values, seed)
    return tuple(findings + _facts(claim, derived, judge) + ([example] if example else [])), counter
