"""Check a hand derivation against a derived quantity, and say where it goes wrong.

:func:`equivalent` reads the claim with :func:`~symfilt.claims.parse.parse_claim`
(plain text or LaTeX, never evaluated) and decides whether it equals the derived
expression: exactly on python-flint polynomials for rational functions, by
high-precision sampling with mpmath when radicals appear. When the two differ it
looks for the usual slips (load or source resistance left out, op-amp taken as
ideal, a lost sign, 2*pi, two parts exchanged) and gives one concrete set of
values where they differ. :func:`assert_equivalent` is the same for pytest.
"""

from __future__ import annotations

import itertools
import math
import random
from dataclasses import dataclass
from typing import Any, Mapping

import flint
import mpmath
import sympy

from symfilt.claims.parse import parse_claim
from symfilt.errors import ClaimError, UsageError

SAMPLE_POINTS = 24  # points of the sampled test
SAMPLE_DIGITS = 50  # working precision of the sampled test
TOLERANCE = "1e-20"  # relative difference the sampled test accepts

_S = sympy.Symbol("s")
_TWO_PI = 2 * sympy.pi

__all__ = ["Equivalence", "assert_equivalent", "equivalent", "parse_claim"]


# ---------------------------------------------------------------- deciding equality


class _Judge:
    """Decide equality of expressions over one set of symbols (one judge per call).

    Exact on python-flint polynomials when both sides are rational functions
    (``I`` reduced by I**2 = -1, ``pi`` kept as an indeterminate, which is exact
    since pi is transcendental); otherwise sampled with mpmath.
    """

    def __init__(self, symbols: set[sympy.Symbol], seed: int) -> None:
        self.symbols = sorted(symbols, key=lambda x: (x.name, sympy.srepr(x)))
        names = tuple(f"x{k}" for k in range(len(self.symbols))) + ("xI", "xpi")
        self.ctx = flint.fmpq_mpoly_ctx.get(names, "lex")
        gens = self.ctx.gens()
        self.gens = dict(zip(self.symbols, gens))
        self.i_index = len(self.symbols)
        self.s = next((x for x in self.symbols if x.name == "s"), _S)
        self.mp = mpmath.MPContext()
        self.mp.dps = SAMPLE_DIGITS
        self.seed = seed
        self._pairs: dict[sympy.Expr, Any] = {}
        self._values: dict[tuple[sympy.Expr, int], Any] = {}
        self._points: list[dict[sympy.Symbol, Any]] | None = None

    # exact arithmetic ---------------------------------------------------------
    def pair(self, expr: sympy.Expr):
        """(numerator, denominator) as flint polynomials, or None if not rational."""
        if expr not in self._pairs:
            self._pairs[expr] = self._pair(expr)
        return self._pairs[expr]

    def _pair(self, e: sympy.Expr):
        one = self.ctx.constant(1)
        if e in self.gens:
            return self.gens[e], one
        if e.is_Rational:
            return self.ctx.constant(flint.fmpq(int(e.p), int(e.q))), one
        if e is sympy.I or e is sympy.pi:
            return self.ctx.gens()[self.i_index + (e is sympy.pi)], one
        parts = [self.pair(a) for a in e.args] if (e.is_Add or e.is_Mul) else []
        if None in parts:
            return None
        if e.is_Add:
            num, den = parts[0]
            for n, d in parts[1:]:
                if d == den:
                    num = num + n
                else:
                    g = den.gcd(d)
                    num, den = num * (d / g) + n * (den / g), den * (d / g)
            return num, den
        if e.is_Mul:
            num, den = one, one
            for n, d in parts:
                num, den = num * n, den * d
            return num, den
        if e.is_Pow and e.exp.is_Integer:
            base = self.pair(e.base)
            if base is None:
                return None
            k = int(e.exp)
            return (base[0] ** k, base[1] ** k) if k >= 0 else (base[1] ** -k, base[0] ** -k)
        return None

    def reduced(self, p):
        """p with I**2 = -1 applied."""
        if p.is_zero() or p.degrees()[self.i_index] < 2:
            return p
        acc: dict[tuple[int, ...], Any] = {}
        k = self.i_index
        for exps, coeff in p.to_dict().items():
            key = exps[:k] + (exps[k] % 2,) + exps[k + 1:]
            acc[key] = acc.get(key, 0) + (-coeff if (exps[k] // 2) % 2 else coeff)
        return self.ctx.from_dict({key: c for key, c in acc.items() if c != 0})

    def rational(self, expr: sympy.Expr):
        """The pair with the denominator checked, or None if not rational."""
        p = self.pair(expr)
        if p is not None and self.reduced(p[1]).is_zero():
            raise ClaimError("claim", "the expression divides by zero", "check the denominators")
        return p

    def to_sympy(self, p) -> sympy.Expr:
        gens = self.symbols + [sympy.I, sympy.pi]
        return sympy.Add(*[sympy.Rational(int(c.p), int(c.q)) * sympy.Mul(*[g**k for g, k in zip(gens, exps)])
                           for exps, c in p.to_dict().items()])

    # sampling -----------------------------------------------------------------
    def points(self) -> list[dict[sympy.Symbol, Any]]:
        if self._points is None:
            rng, mp = random.Random(self.seed), self.mp
            self._points = []
            for k in range(3 * SAMPLE_POINTS):
                point = {x: mp.mpf(10 ** rng.uniform(-1, 1)) for x in self.symbols}
                w = 10 ** rng.uniform(-1, 1)
                point[self.s] = mp.mpc(0, w) if k % 2 == 0 else mp.mpc(10 ** rng.uniform(-1, 1), w)
                self._points.append(point)
        return self._points

    def value(self, expr: sympy.Expr, k: int):
        key = (expr, k)
        if key not in self._values:
            self._values[key] = _mp_eval(expr, self.points()[k], self.mp)
        return self._values[key]

    def _sampled(self, a: sympy.Expr, b: sympy.Expr) -> tuple[bool, int]:
        mp, used = self.mp, 0
        tol = mp.mpf(TOLERANCE)
        for k in range(len(self.points())):
            try:
                va, vb = self.value(a, k), self.value(b, k)
            except (ZeroDivisionError, ValueError):
                continue
            if not (mp.isfinite(va) and mp.isfinite(vb)):
                continue
            used += 1
            if abs(va - vb) > tol * max(abs(va), abs(vb)):
                return False, used
            if used == SAMPLE_POINTS:
                break
        if used == 0:
            raise ClaimError("claim", "no sample point gives a finite value", "check the claim's denominators")
        return True, used

    def same(self, a: sympy.Expr, b: sympy.Expr) -> tuple[bool, str, int]:
        """(equal, "exact" or "sampled", points used)."""
        pa, pb = self.rational(a), self.rational(b)
        if pa is not None and pb is not None:
            return self.reduced(pa[0] * pb[1] - pb[0] * pa[1]).is_zero(), "exact", 0
        equal, used = self._sampled(a, b)
        return equal, "sampled", used

    def equal(self, a: sympy.Expr | None, b: sympy.Expr | None) -> bool:
        if a is None or b is None or a.has(sympy.zoo) or b.has(sympy.zoo):
            return a is not None and b is not None and a.has(sympy.zoo) and b.has(sympy.zoo)
        return self.same(a, b)[0]

    # facts ------------------------------------------------------------------------
    def _lowest(self, expr: sympy.Expr):
        p = self.pair(expr)
        if p is None or max(p[0].degrees()[self.i_index], p[1].degrees()[self.i_index]) > 0:
            return None
        g = p[0].gcd(p[1])
        return p[0] / g, p[1] / g

    def order(self, expr: sympy.Expr) -> int | None:
        """Order in s (degree of the larger of numerator and denominator), or None."""
        p = self._lowest(expr)
        if p is None or self.s not in self.gens:
            return None if p is None else 0
        k = self.symbols.index(self.s)
        return max(p[0].degrees()[k], p[1].degrees()[k])

    def ratio(self, a: sympy.Expr, b: sympy.Expr) -> sympy.Expr | None:
        """a/b when it is a rational function free of s, else None."""
        pa, pb = self.pair(a), self.pair(b)
        if pa is None or pb is None or self.s not in self.gens or pb[0].is_zero():
            return None
        q = self._lowest(sympy.Mul(a, sympy.Pow(b, -1, evaluate=False), evaluate=False))
        if q is None or max(q[0].degrees()[self.symbols.index(self.s)], q[1].degrees()[self.symbols.index(self.s)]):
            return None
        return self.to_sympy(q[0]) / self.to_sympy(q[1])


_MP_FUNCTIONS = {"exp": "exp", "log": "log", "sin": "sin", "cos": "cos", "tan": "tan", "atan": "atan",
                 "asin": "asin", "acos": "acos", "sinh": "sinh", "cosh": "cosh", "tanh": "tanh",
                 "Abs": "fabs", "re": "re", "im": "im", "arg": "arg", "atan2": "atan2"}


def _mp_eval(e: sympy.Expr, point: Mapping[sympy.Symbol, Any], mp: mpmath.MPContext):
    """Value of e at a point, in the mpmath context mp."""
    if e.is_Symbol:
        return point[e]
    if e.is_Rational:
        return mp.mpf(int(e.p)) / int(e.q)
    if e.is_Float:
        return mp.mpf(e._mpf_)
    if e is sympy.I:
        return mp.mpc(0, 1)
    if e is sympy.pi:
        return +mp.pi
    if e is sympy.E:
        return +mp.e
    args = [_mp_eval(a, point, mp) for a in e.args]
    if e.is_Add:
        return mp.fsum(args)
    if e.is_Mul:
        return mp.fprod(args)
    if e.is_Pow:
        if e.exp.is_Integer:
            return args[0] ** int(e.exp)
        return mp.sqrt(args[0]) ** int(2 * e.exp) if (2 * e.exp).is_Integer else mp.power(*args)
    name = _MP_FUNCTIONS.get(type(e).__name__)
    if name is None:
        raise UsageError("derived expression", f"cannot evaluate '{type(e).__name__}' numerically",
                         "pass an expression built from + - * / powers and elementary functions")
    return getattr(mp, name)(*args)


# ---------------------------------------------------------------- result


@dataclass(frozen=True)
class Equivalence:
    """Outcome of comparing a claim with a derived expression.

    Attributes
    ----------
    equivalent : bool
        Whether the claim equals the derived expression.
    method : str
        ``"exact"`` (rational functions cancelled exactly) or ``"sampled"``.
    points : int
        Sample points used (0 for the exact test).
    diagnosis : tuple of str
        Plain-English findings when the two differ (empty when equal).
    counterexample : dict or None
        Symbol name -> value where the two differ (``w`` is the angular
        frequency, s = j*w), or None.

    Examples
    --------
    >>> Equivalence(True, "exact", 0, (), None).to_dict()["method"]
    'exact'
    """

    equivalent: bool
    method: str
    points: int
    diagnosis: tuple[str, ...]
    counterexample: dict[str, float] | None

    def __bool__(self) -> bool:
        return self.equivalent

    def to_dict(self) -> dict[str, Any]:
        """The ``check`` JSON shape of DESIGN.md.

        Examples
        --------
        >>> Equivalence(False, "sampled", 24, ("order differs: expected 2, got 1",), {"R1": 2.0}).to_dict()
        {'equivalent': False, 'method': 'sampled', 'points': 24, 'diagnosis': ['order differs: expected 2, got 1'], 'counterexample': {'R1': 2.0}}
        """
        return {"equivalent": self.equivalent, "method": self.method, "points": self.points,
                "diagnosis": list(self.diagnosis),
                "counterexample": None if self.counterexample is None else dict(self.counterexample)}


# ---------------------------------------------------------------- limits and diagnosis


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


def _show(expr: sympy.Expr | None) -> str:
    if expr is None or expr.has(sympy.zoo):
        return "unbounded"
    text = str(expr)
    return text if len(text) <= 100 else text[:97] + "..."


_FIXTURES = {"R_L": (False, "the load"), "C_L": (True, "the load capacitance"),
             "R_s": (True, "the source resistance")}


def _candidate_limits(missing: list[sympy.Symbol]) -> tuple[list, list]:
    """(fixture and op-amp limits, single-part limits) for the symbols the claim lacks."""
    fixtures, parts = [], []
    for x in missing:
        name = x.name
        if name in _FIXTURES:
            fixtures.append((x, _FIXTURES[name][0], _FIXTURES[name][1]))
        elif name.startswith("A_"):
            fixtures.append((x, False, "the op-amp's finite gain"))
        elif name.startswith("GBW_"):
            fixtures.append((x, False, "the op-amp's finite bandwidth"))
        elif name[:1] in "RCL" and name != "s":
            short_at_zero = name[0] in "RL"
            parts.append((x, True, f"{name} was {'shorted' if short_at_zero else 'left open'}"))
            parts.append((x, False, f"{name} was {'left open' if short_at_zero else 'shorted'}"))
        else:
            parts.extend([(x, True, ""), (x, False, "")])
    return fixtures, parts


def _limit_findings(claim: sympy.Expr, derived: sympy.Expr, judge: Any, missing: list) -> list[str]:
    fixtures, parts = _candidate_limits(missing)
    for size in range(1, min(len(fixtures), 4) + 1):
        for chosen in itertools.combinations(fixtures, size):
            target = derived
            for x, at_zero, _ in chosen:
                target = _limit(target, x, at_zero)
            if target is not None and not target.has(sympy.zoo) and judge.equal(claim, target):
                when = " and ".join(f"{x.name} -> {'0' if z else 'oo'}" for x, z, _ in chosen)
                what = " and ".join(w for _, _, w in chosen)
                return [f"agrees when {when}: {what} {'was' if size == 1 else 'were'} left out"]
    for x, at_zero, why in parts:
        target = _limit(derived, x, at_zero)
        if target is not None and not target.has(sympy.zoo) and judge.equal(claim, target):
            return [f"agrees when {x.name} -> {'0' if at_zero else 'oo'}" + (f": {why}" if why else "")]
    return []


def _findings(claim: sympy.Expr, derived: sympy.Expr, judge: Any) -> list[str]:
    """Explanations: limits, sign, 2*pi, constant factor, exchanged parts."""
    s = judge.s
    missing = sorted(derived.free_symbols - claim.free_symbols - {s}, key=str)
    out = _limit_findings(claim, derived, judge, missing)
    if judge.equal(claim, -derived):
        out.append("agrees up to sign: a sign was lost")
    for target, how in ((derived / _TWO_PI, "the claim is the derived result divided by 2*pi"),
                        (derived * _TWO_PI, "the claim is the derived result times 2*pi"),
                        (derived.xreplace({s: _TWO_PI * s}), "the claim has s where 2*pi*s belongs"),
                        (derived.xreplace({s: s / _TWO_PI}), "the claim has 2*pi*s where s belongs")):
        if target != derived and judge.equal(claim, target):
            out.append(f"differs by a factor 2*pi: Hz vs rad/s mixed up ({how})")
            break
    if sympy.I in claim.atoms() and judge.equal(claim, derived.xreplace({s: -sympy.I * s})):
        out.append("agrees when w is read as j*w: a j was left out (s = j*w)")
    common = sorted(claim.free_symbols & derived.free_symbols - {s}, key=str)
    pairs = [(a, b) for a, b in itertools.combinations(common, 2) if a.name[0] == b.name[0]][:60]
    for a, b in pairs:
        if judge.equal(claim.xreplace({a: b, b: a}), derived):
            out.append(f"agrees when {a.name} and {b.name} are exchanged")
    if not out and s in derived.free_symbols:
        factor = judge.ratio(claim, derived)
        if factor is not None:
            out.append(f"differs by a constant factor {_show(factor)}: the frequency dependence agrees")
    return out


def _facts(claim: sympy.Expr, derived: sympy.Expr, judge: Any) -> list[str]:
    """Plain facts: symbols, order, DC and high-frequency gain."""
    s, out = judge.s, []
    missing = sorted(derived.free_symbols - claim.free_symbols, key=str)
    extra = sorted(claim.free_symbols - derived.free_symbols, key=str)
    if missing:
        out.append("symbols in the derived result but not in the claim: " + ", ".join(map(str, missing)))
    if extra:
        out.append("symbols in the claim but not in the derived result: " + ", ".join(map(str, extra)))
    if s not in claim.free_symbols | derived.free_symbols:
        return out
    expected, got = judge.order(derived), judge.order(claim)
    if expected is not None and got is not None and expected != got:
        out.append(f"order differs: expected {expected}, got {got}")
    for at_zero, label in ((True, "DC gain (s -> 0)"), (False, "high-frequency gain (s -> oo)")):
        want, have = _limit(derived, s, at_zero), _limit(claim, s, at_zero)
        if want is not None and have is not None and not judge.equal(have, want):
            out.append(f"{label} differs: expected {_show(want)}, got {_show(have)}")
    return out


_TYPICAL = (("GBW_", 1e6), ("A_", 1e5), ("R", 1e3), ("C", 1e-8), ("L", 1e-3))  # scale of a random value


def _counterexample(claim: sympy.Expr, derived: sympy.Expr, s: sympy.Symbol,
                    values: Mapping[str, float], seed: int) -> tuple[dict[str, float] | None, str | None]:
    """One set of values where the two differ, and by how much in dB."""
    rng, mp = random.Random(seed + 1), mpmath.MPContext()
    mp.dps = 30
    chosen: dict[str, float] = {}
    point: dict[sympy.Symbol, Any] = {}
    for x in sorted((claim.free_symbols | derived.free_symbols) - {s}, key=str):
        typical = next((v for k, v in _TYPICAL if x.name.startswith(k)), 1.0)
        chosen[x.name] = values[x.name] if x.name in values else float(f"{typical * 10 ** rng.uniform(-1, 1):.2g}")
        point[x] = mp.mpf(chosen[x.name])
    uses_s = s in claim.free_symbols | derived.free_symbols
    grid = [0.0] + [10 ** (k / 4) for k in range(-40, 49)] if uses_s else [None]
    best = None
    for w in grid:
        if w is not None:
            point[s] = mp.mpc(0, w)
        try:
            have, want = _mp_eval(claim, point, mp), _mp_eval(derived, point, mp)
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
    if best is None:
        return None, None
    _, w, have, want, db, phase = best
    if w is not None:
        chosen["omega" if "w" in chosen else "w"] = w
    where = ", ".join(f"{k} = {v:.4g}" for k, v in chosen.items())
    mag = lambda v: f"{float(abs(v)):.4g}" + (f" ({float(20 * mp.log10(abs(v))):+.2f} dB)" if v != 0 else "")
    text = f"at {where}: the claim gives {mag(have)}, the derived result {mag(want)}"
    text += ", apart by an unbounded amount" if math.isinf(db) else f", {abs(db):.3g} dB apart"
    if phase >= 1.0:
        text += f", phase {phase:.1f} degrees apart"
    return chosen, text


# ---------------------------------------------------------------- public API


def _as_expr(derived: Any) -> sympy.Expr:
    if hasattr(derived, "as_expr") and not isinstance(derived, sympy.Basic):
        derived = derived.as_expr()
    if isinstance(derived, (int, float)) and not isinstance(derived, bool):
        derived = sympy.Rational(str(derived))
    if not isinstance(derived, sympy.Expr):
        raise UsageError("derived", f"expected a sympy expression, got {type(derived).__name__}",
                         "pass a sympy expression or an object with as_expr()")
    if derived.has(sympy.zoo, sympy.oo, sympy.nan):
        raise UsageError("derived", "the derived quantity is infinite or undefined", "compare a finite quantity")
    return derived


def _claim_expr(claim: Any, table: dict[str, sympy.Symbol]) -> sympy.Expr:
    if isinstance(claim, str):
        return parse_claim(claim, table)
    if isinstance(claim, (int, float)) and not isinstance(claim, bool):
        return sympy.Rational(str(claim))
    if not isinstance(claim, sympy.Expr):
        raise UsageError("claim", f"expected text or a sympy expression, got {type(claim).__name__}",
                         "pass the claim as a string")
    # the same name means the same symbol, whatever assumptions the caller gave it
    rename = {x: table[x.name] for x in claim.free_symbols if x.name in table and table[x.name] != x}
    return claim.xreplace(rename)


def equivalent(claim: Any, derived: Any, *, symbols: Any = None, values: Mapping[str, Any] | None = None,
               rng_seed: int = 0) -> Equivalence:
    """Decide whether a hand derivation equals a derived quantity, and if not, why.

    Parameters
    ----------
    claim : str or sympy.Expr
        The hand derivation; text (plain or LaTeX) is read with
        :func:`~symfilt.claims.parse.parse_claim` against the symbols of
        ``derived``, ``symbols`` and ``s``.
    derived : sympy.Expr or object with ``as_expr()``
        The quantity symfilt derived (a NetworkFunction, a cutoff, a gain).
    symbols : Mapping[str, sympy.Symbol] or iterable of sympy.Symbol, optional
        Further names the claim may use.
    values : Mapping[str, number], optional
        Values for the counterexample (others are drawn at random).
    rng_seed : int
        Seed of the sample points and random values.

    Returns
    -------
    Equivalence
        ``method`` says which test decided: ``"exact"`` for rational functions,
        ``"sampled"`` (``SAMPLE_POINTS`` points at ``SAMPLE_DIGITS`` digits) when
        radicals appear.

    Examples
    --------
    >>> import sympy
    >>> R1, C1, R_L = sympy.symbols("R1 C1 R_L", positive=True)
    >>> s = sympy.Symbol("s")
    >>> h = R_L / (R1 + R_L + s * C1 * R1 * R_L)
    >>> equivalent("R_L/(R1 + R_L + j*w*C1*R1*R_L)", h).equivalent
    True
    >>> r = equivalent("1/(1 + s*R1*C1)", h)
    >>> r.equivalent, r.method, r.diagnosis[0]
    (False, 'exact', 'agrees when R_L -> oo: the load was left out')
    """
    target = _as_expr(derived)
    table = {x.name: x for x in target.free_symbols}
    extra = symbols.values() if isinstance(symbols, Mapping) else (symbols or ())
    for x in extra:
        if not isinstance(x, sympy.Symbol):
            raise UsageError("symbols", f"expected sympy symbols, got {type(x).__name__}", "pass Symbol objects")
        table.setdefault(x.name, x)
    table.setdefault("s", _S)
    given: dict[str, float] = {}
    for name, value in (values or {}).items():
        try:
            given[str(name)] = float(value)
        except (TypeError, ValueError):
            raise UsageError("values", f"the value of {name} is not a number", "pass numbers") from None
    hand = _claim_expr(claim, table)
    judge = _Judge(hand.free_symbols | target.free_symbols | {table["s"]}, rng_seed)
    same, method, points = judge.same(hand, target)
    if same:
        return Equivalence(True, method, points, (), None)
    findings = _findings(hand, target, judge)
    if not findings:
        findings = ["no simple cause found (tried source, load and op-amp limits, sign, 2*pi and exchanged parts)"]
    counter, text = _counterexample(hand, target, judge.s, given, rng_seed)
    diagnosis = findings + _facts(hand, target, judge) + ([text] if text else [])
    return Equivalence(False, method, points, tuple(diagnosis), counter)


def assert_equivalent(claim: Any, derived: Any, **kwargs: Any) -> Equivalence:
    """Assert a hand derivation equals a derived quantity, for the user's own tests.

    Parameters
    ----------
    claim, derived
        As for :func:`equivalent`.
    **kwargs
        ``symbols``, ``values`` and ``rng_seed`` as for :func:`equivalent`.

    Returns
    -------
    Equivalence
        The result, when equal.

    Raises
    ------
    AssertionError
        When they differ; the message carries the diagnosis.

    Examples
    --------
    >>> import sympy
    >>> R1, R2 = sympy.symbols("R1 R2", positive=True)
    >>> assert_equivalent("R1 || R2", R1 * R2 / (R1 + R2)).method
    'exact'
    >>> assert_equivalent("R2/R1", -R2 / R1, values={"R1": 1000, "R2": 10000})
    Traceback (most recent call last):
    ...
    AssertionError: the claim differs from the derived result (exact test):
      - agrees up to sign: a sign was lost
      - at R1 = 1000, R2 = 1e+04: the claim gives 10 (+20.00 dB), the derived result 10 (+20.00 dB), 0 dB apart, phase 180.0 degrees apart
    """
    result = equivalent(claim, derived, **kwargs)
    if not result.equivalent:
        plural = "s" if result.points != 1 else ""
        how = "exact test" if result.method == "exact" else f"sampled at {result.points} point{plural}"
        lines = "\n".join(f"  - {d}" for d in result.diagnosis)
        raise AssertionError(f"the claim differs from the derived result ({how}):\n{lines}")
    return result
