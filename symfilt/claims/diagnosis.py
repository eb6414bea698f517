"""What the diagnosis of a differing claim looks for, as data.

When a claim differs from the derived result, :func:`diagnose` looks for the
usual slips, alone or in pairs (:mod:`symfilt.claims.slips`: load or source
resistance left out, op-amp taken as ideal, a part shorted or left open, a lost
sign, 2*pi, a missing j, two parts exchanged, one part's name written for another;
on the squares when the quantity has a root), else a constant factor; states plain
facts (symbols, order, DC and high-frequency gain, the first differing coefficient)
and finds one set of values where the two differ (other values than the given ones
when the two agree there: "equal at your values but not in general"). Each item is a
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

import math
import random
from dataclasses import dataclass, field
from typing import Any, Mapping

import mpmath
import sympy

from symfilt.claims.compare import Judge, mp_eval
from symfilt.claims.slips import coefficient_hint, find_slips, limit_of

#: Kinds of finding, in the order they are looked for.
FINDING_KINDS = ("left-out", "part-limit", "sign", "two-pi", "missing-j", "exchanged", "renamed",
                 "constant-factor", "no-simple-cause", "missing-symbols", "extra-symbols", "order", "limit-differs",
                 "coefficient", "equal-at-values", "counterexample", "not-diagnosed")


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


# ---------------------------------------------------------------- the usual slips


def _slips(claim: sympy.Expr, derived: sympy.Expr, judge: Judge) -> list[ClaimFinding]:
    """Explanations: single slips and pairs (:func:`symfilt.claims.slips.find_slips`), else a constant factor."""
    out = find_slips(claim, derived, judge)
    if not out and judge.s in derived.free_symbols:
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
        want, have = limit_of(derived, s, at_zero), limit_of(claim, s, at_zero)
        if want is not None and have is not None and not judge.equal(have, want):
            out.append(ClaimFinding("limit-differs", {"at_zero": at_zero, "expected": want, "got": have}))
    hint = coefficient_hint(claim, derived, judge)
    if hint is not None:
        out.append(hint)
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


def _agrees(best) -> bool:
    """No frequency on the grid tells the two apart (the most telling one is within 1e-12)."""
    if best is None:
        return True
    have, want = best[2], best[3]
    return want != 0 and abs(have / want - 1) < 1e-12


def _counterexample(claim: sympy.Expr, derived: sympy.Expr, s: sympy.Symbol,
                    values: Mapping[str, float], seed: int, gain: bool) -> tuple[dict | None, list]:
    """One set of values where the two differ, and by how much (in dB for a gain, else relatively).

    When the two agree at the given values (to 1e-12) but not in general, that is a finding
    of its own and the counterexample is drawn at other values."""
    rng, mp = random.Random(seed + 1), mpmath.MPContext()
    mp.dps = 30
    symbols = sorted((claim.free_symbols | derived.free_symbols) - {s}, key=str)
    uses_s = s in claim.free_symbols | derived.free_symbols
    out = []
    chosen = _random_values(symbols, values, rng)
    best = _worst_frequency(claim, derived, s, {x: mp.mpf(chosen[x.name]) for x in symbols}, uses_s, mp)
    given = [x.name for x in symbols if x.name in values]
    if given and _agrees(best):
        out.append(ClaimFinding("equal-at-values", {"symbols": tuple(given)}))
        chosen = _random_values(symbols, {}, rng)
        best = _worst_frequency(claim, derived, s, {x: mp.mpf(chosen[x.name]) for x in symbols}, uses_s, mp)
    if best is None:
        return None, out
    _, w, have, want, db, phase = best
    if w is not None:
        chosen["omega" if "w" in chosen else "w"] = w
    size = lambda v: (float(abs(v)), float(20 * mp.log10(abs(v))) if v != 0 else None)
    (claim_abs, claim_db), (derived_abs, derived_db) = size(have), size(want)
    relative = float(abs(have / want - 1)) if want != 0 else math.inf
    return chosen, out + [ClaimFinding("counterexample", {
        "values": dict(chosen), "claim": claim_abs, "claim_db": claim_db, "derived": derived_abs,
        "derived_db": derived_db, "db_apart": db, "phase_apart": phase, "gain": gain,
        "claim_value": complex(have) if uses_s else float(mp.re(have)),
        "derived_value": complex(want) if uses_s else float(mp.re(want)), "relative": relative})]


# ---------------------------------------------------------------- all of it


def _dimensionless(expr: sympy.Expr, s) -> bool:
    """True when expr is unchanged by impedance scaling (R, L times k, C over k) and by frequency
    scaling (C, L times k, s and bandwidths over k): a ratio of like quantities, such as a gain."""
    if sympy.count_ops(expr) > 400:  # large: the transfer functions, which are gains
        return s in expr.free_symbols
    k = sympy.Symbol("k_scale", positive=True)
    for scale in ({"R": k, "C": 1 / k, "L": k, "GBW_": 1, "P2_": 1, "s": 1},
                  {"R": 1, "C": k, "L": k, "GBW_": 1 / k, "P2_": 1 / k, "s": 1 / k}):
        rep = {}
        for x in expr.free_symbols:
            key = "s" if x == s else next((p for p in ("GBW_", "P2_") if x.name.startswith(p)), x.name[:1])
            if key in scale and scale[key] != 1:
                rep[x] = x * scale[key]
        if rep and sympy.cancel(expr.xreplace(rep) - expr) != 0:
            return False
    return True


def diagnose(claim: sympy.Expr, derived: sympy.Expr, judge: Judge, values: Mapping[str, float],
             seed: int, gain: bool | None = None) -> tuple[tuple[ClaimFinding, ...], dict[str, float] | None]:
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
    gain : bool or None
        Whether the quantity is a gain (its difference is given in dB); None: when it keeps its
        value under impedance and frequency scaling (a Q counts as a gain then).

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
    gain = _dimensionless(derived, judge.s) if gain is None else gain
    counter, examples = _counterexample(claim, derived, judge.s, values, seed, gain)
    return tuple(findings + _facts(claim, derived, judge) + examples), counter
