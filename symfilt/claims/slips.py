"""The usual slips of a hand derivation, one at a time and in pairs.

Each slip is a transformation of the *derived* result: a fixture or op-amp limit taken
(R_s -> 0, R_L -> oo, C_L -> 0, A -> oo, GBW -> oo), a part shorted or left open, the sign
lost, 2*pi put in or left out, two parts exchanged, one part's name written for another's.
:func:`find_slips` tries every single slip, then every pair of slips of two different
kinds, and returns the first that makes the derived result equal the claim. A quantity with
a root (a Sallen-Key w0 or Q) is compared on its square, where the limits are rational.
:func:`coefficient_hint` names the first coefficient of numerator or denominator, by power
of s, in which a transfer-function claim differs.

Examples
--------
>>> import sympy
>>> R1, R_s, C1 = sympy.symbols("R1 R_s C1", positive=True)
>>> from symfilt.claims.compare import Judge
>>> derived = 1 / (2 * sympy.pi * (R1 + R_s) * C1)
>>> [f.kind for f in find_slips(1 / (R1 * C1), derived, Judge({R1, R_s, C1}, 0))]
['left-out', 'two-pi']
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass
from typing import Callable

import sympy

from symfilt.claims.compare import Judge

_TWO_PI = 2 * sympy.pi

#: Fixture symbol -> (limit at zero?, what leaving it out means).
FIXTURES = {"R_L": (False, "load"), "C_L": (True, "load-capacitance"), "R_s": (True, "source-resistance")}

#: Most exchanged pairs tried, and most slips combined in pairs.
MAX_EXCHANGES = 40
MAX_PAIRED = 30


@dataclass(frozen=True)
class _Slip:
    """One transformation of the derived result and the finding it stands for."""

    group: str
    kind: str
    data: dict
    apply: Callable


def _rational_in(expr: sympy.Expr, x: sympy.Symbol) -> bool:
    if x not in expr.free_symbols or expr.is_Symbol:
        return True
    if expr.is_Pow:
        return expr.exp.is_Integer and _rational_in(expr.base, x)
    return (expr.is_Add or expr.is_Mul) and all(_rational_in(a, x) for a in expr.args)


def limit_of(expr: sympy.Expr | None, x: sympy.Symbol, at_zero: bool) -> sympy.Expr | None:
    """Limit of a rational function of x as x -> 0 or oo (zoo when unbounded); None if not rational.

    Parameters
    ----------
    expr : sympy.Expr or None
        The expression.
    x : sympy.Symbol
        The symbol taken to its limit.
    at_zero : bool
        x -> 0 (True) or x -> oo (False).

    Returns
    -------
    sympy.Expr or None

    Examples
    --------
    >>> import sympy
    >>> R1, R_L = sympy.symbols("R1 R_L", positive=True)
    >>> limit_of(R_L / (R1 + R_L), R_L, False)
    1
    """
    if expr is None or x not in expr.free_symbols:
        return expr
    if not _rational_in(expr, x):
        return None
    from symfilt.engine.rational import rational_limit

    return rational_limit(expr, x, 0 if at_zero else "oo")


def _limit_slip(x, at_zero: bool, group: str, kind: str, data: dict) -> _Slip:
    def apply(e):
        out = limit_of(e, x, at_zero)
        return None if out is None or out.has(sympy.zoo) else out
    return _Slip(group, kind, data, apply)


def _limit_slips(missing: list) -> list[_Slip]:
    """Fixture and op-amp limits (kind ``left-out``) and part shorts and opens (``part-limit``)."""
    out = []
    for x in missing:
        name = x.name
        what = FIXTURES.get(name, (None, None))[1] or ("opamp-gain" if name.startswith("A_") else
                                                       "opamp-bandwidth" if name.startswith("GBW_") else None)
        if what:
            at_zero = FIXTURES[name][0] if name in FIXTURES else False
            out.append(_limit_slip(x, at_zero, "left-out:" + name, "left-out", {"limits": ((name, at_zero, what),)}))
        elif name[:1] in "RCL" and name != "s":
            for at_zero in (True, False):
                short = (name[0] in "RL") == at_zero
                out.append(_limit_slip(x, at_zero, "part:" + name, "part-limit",
                                       {"symbol": name, "at_zero": at_zero, "effect": "short" if short else "open"}))
        else:
            for at_zero in (True, False):
                out.append(_limit_slip(x, at_zero, "part:" + name, "part-limit",
                                       {"symbol": name, "at_zero": at_zero, "effect": None}))
    return out


def _form_slips(s, squared: bool, with_j: bool) -> list[_Slip]:
    """Sign, 2*pi and a missing j."""
    k = _TWO_PI**2 if squared else _TWO_PI
    out = [] if squared else [_Slip("sign", "sign", {}, lambda e: -e)]
    out += [_Slip("two-pi", "two-pi", {"how": "divided"}, lambda e: e / k),
            _Slip("two-pi", "two-pi", {"how": "times"}, lambda e: e * k),
            _Slip("two-pi", "two-pi", {"how": "s-for-2pi-s"}, lambda e: e.xreplace({s: _TWO_PI * s})),
            _Slip("two-pi", "two-pi", {"how": "2pi-s-for-s"}, lambda e: e.xreplace({s: s / _TWO_PI}))]
    if with_j:
        out.append(_Slip("j", "missing-j", {}, lambda e: e.xreplace({s: -sympy.I * s})))
    return out


def _name_slips(claim: sympy.Expr, derived: sympy.Expr, s) -> list[_Slip]:
    """Two parts of a kind exchanged; a name of the claim written for one of the circuit."""
    common = sorted(claim.free_symbols & derived.free_symbols - {s}, key=str)
    pairs = [(a, b) for a, b in itertools.combinations(common, 2) if a.name[0] == b.name[0]][:MAX_EXCHANGES]
    out = [_Slip("exchange", "exchanged", {"a": a.name, "b": b.name},
                 lambda e, a=a, b=b: e.xreplace({a: b, b: a})) for a, b in pairs]
    extra = set(claim.free_symbols - derived.free_symbols - {s})
    missing = sorted(derived.free_symbols - claim.free_symbols - {s}, key=str)
    written = sorted(claim.free_symbols - {s}, key=str)
    for w, m in itertools.product(written, missing):  # a name of the claim, of the same kind or unused
        if w not in extra and w.name[0] != m.name[0]:
            continue
        out.append(_Slip("rename:" + m.name, "renamed", {"written": w.name, "meant": m.name},
                         lambda e, w=w, m=m: e.xreplace({m: w})))
    return out


def _has_root(expr: sympy.Expr) -> bool:
    return any(p.exp.is_Rational and not p.exp.is_Integer for p in expr.atoms(sympy.Pow))


def _squares(claim: sympy.Expr, derived: sympy.Expr):
    """(claim^2, derived^2) when the derived result has a root and its square has none."""
    if not _has_root(derived):
        return None
    d2, c2 = sympy.powsimp(sympy.expand_power_base(derived**2, force=True)), claim**2
    d2 = sympy.together(d2)
    return None if _has_root(d2) else (sympy.together(c2), d2)


def _search(claim, derived, judge: Judge, slips: list[_Slip]):
    """The first single slip, then the first pair of slips of different groups, that explains the claim."""
    for slip in slips:
        target = slip.apply(derived)
        if target is not None and target != derived and judge.equal(claim, target):
            return [slip]
    fixtures = [sl for sl in slips if sl.kind == "left-out"]
    for size in range(2, min(len(fixtures), 4) + 1):  # several fixtures left out at once
        for chosen in itertools.combinations(fixtures, size):
            target = derived
            for sl in chosen:
                target = None if target is None else sl.apply(target)
            if target is not None and judge.equal(claim, target):
                return [_Slip("left-out", "left-out", {"limits": sum((sl.data["limits"] for sl in chosen), ())},
                              None)]
    paired = slips[:MAX_PAIRED]
    for first, second in itertools.combinations(paired, 2):
        if first.group == second.group or first.group.split(":")[0] == second.group.split(":")[0] == "two-pi":
            continue
        target = first.apply(derived)
        target = None if target is None else second.apply(target)
        if target is not None and target != derived and judge.equal(claim, target):
            return [first, second]
    return []


def _ordered(missing, claim, derived, s, squared: bool, with_j: bool) -> list[_Slip]:
    """Every slip, the likeliest first (these are the ones paired): fixtures, sign and 2*pi, names, parts."""
    limits = _limit_slips(missing)
    return ([sl for sl in limits if sl.kind == "left-out"] + _form_slips(s, squared, with_j)
            + _name_slips(claim, derived, s) + [sl for sl in limits if sl.kind != "left-out"])


def find_slips(claim: sympy.Expr, derived: sympy.Expr, judge: Judge) -> list:
    """The slips (one, or a pair) that turn the derived result into the claim, as ClaimFindings.

    Parameters
    ----------
    claim, derived : sympy.Expr
        The hand derivation and the derived quantity (known to differ).
    judge : Judge
        The judge over the symbols of both.

    Returns
    -------
    list of ClaimFinding
        Empty when no single slip or pair explains the claim. A quantity with a root is
        compared on its square; its findings then carry ``squared`` in their data.

    Examples
    --------
    >>> import sympy
    >>> R1, R2, C1, C2, R_s = sympy.symbols("R1 R2 C1 C2 R_s", positive=True)
    >>> from symfilt.claims.compare import Judge
    >>> w0 = 1 / sympy.sqrt((R1 + R_s) * R2 * C1 * C2)
    >>> f = find_slips(1 / sympy.sqrt(R1 * R2 * C1 * C2), w0, Judge({R1, R2, C1, C2, R_s}, 0))
    >>> f[0].kind, f[0].data["squared"]
    ('left-out', True)
    """
    from symfilt.claims.diagnosis import ClaimFinding

    s = judge.s
    missing = sorted(derived.free_symbols - claim.free_symbols - {s}, key=str)
    with_j = sympy.I in claim.atoms()
    found = _search(claim, derived, judge, _ordered(missing, claim, derived, s, False, with_j))
    squared = False
    if not found:
        pair = _squares(claim, derived)
        if pair is not None:
            squared = True
            found = _search(pair[0], pair[1], judge, _ordered(missing, claim, derived, s, True, with_j))
    paired = len(found) > 1
    return [ClaimFinding(sl.kind, {**sl.data, **({"squared": True} if squared else {}),
                                   **({"paired": True, "first": i == 0} if paired else {})})
            for i, sl in enumerate(found)]


def _normalised(expr: sympy.Expr, s):
    """Numerator and denominator coefficients in s (lowest power first), the denominator's lowest one 1."""
    num, den = sympy.fraction(sympy.cancel(sympy.together(expr)))
    pn, pd = sympy.Poly(num, s), sympy.Poly(den, s)
    cn, cd = list(reversed(pn.all_coeffs())), list(reversed(pd.all_coeffs()))
    lowest = next(c for c in cd if c != 0)
    return [sympy.cancel(c / lowest) for c in cn], [sympy.cancel(c / lowest) for c in cd]


def coefficient_hint(claim: sympy.Expr, derived: sympy.Expr, judge: Judge):
    """The first coefficient, by power of s, where a transfer claim differs (numerator, then denominator).

    Both are written N(s)/D(s) with the lowest-order coefficient of D equal to 1.

    Parameters
    ----------
    claim, derived : sympy.Expr
        Rational functions of s.
    judge : Judge
        The judge over the symbols of both.

    Returns
    -------
    ClaimFinding or None
        Kind ``coefficient`` with ``part``, ``power``, ``expected`` and ``got``.

    Examples
    --------
    >>> import sympy
    >>> R1, C1, C2, s = sympy.symbols("R1 C1 C2 s", positive=True)
    >>> from symfilt.claims.compare import Judge
    >>> f = coefficient_hint(1 / (1 + s * R1 * C1), 1 / (1 + s * R1 * (C1 + C2)), Judge({R1, C1, C2, s}, 0))
    >>> f.data["part"], f.data["power"], f.data["expected"]
    ('denominator', 1, R1*(C1 + C2))
    """
    from symfilt.claims.diagnosis import ClaimFinding

    s = judge.s
    if s not in derived.free_symbols or sympy.count_ops(derived) > 3000 or _has_root(derived) or _has_root(claim):
        return None
    try:
        want, have = _normalised(derived, s), _normalised(claim, s)
    except (sympy.PolynomialError, StopIteration):
        return None
    for part, w, h in (("numerator", want[0], have[0]), ("denominator", want[1], have[1])):
        for k in range(max(len(w), len(h))):
            a = w[k] if k < len(w) else sympy.Integer(0)
            b = h[k] if k < len(h) else sympy.Integer(0)
            if not judge.equal(a, b):
                return ClaimFinding("coefficient", {"part": part, "power": k, "expected": sympy.factor(a),
                                                    "got": sympy.factor(b)})
    return None


__all__ = ["FIXTURES", "MAX_EXCHANGES", "MAX_PAIRED", "coefficient_hint", "find_slips", "limit_of"]
