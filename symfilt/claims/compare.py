"""Decide whether two expressions are equal: exactly on python-flint, else by sampling.

Rational functions (``I`` and ``pi`` allowed) are brought to python-flint
polynomials and cancelled exactly; radicals are first made new symbols
(:mod:`symfilt.claims.radicals`), so a claim with roots is decided exactly too.
Anything else (``exp``, ``log``, trigonometric functions) is compared at
``SAMPLE_POINTS`` random points at ``SAMPLE_DIGITS`` digits with mpmath: a difference
over the relative ``TOLERANCE`` proves the claim different; agreement proves nothing,
and the judge says it cannot decide (a ClaimError) rather than "equal".

Examples
--------
>>> import sympy
>>> x = sympy.Symbol("x")
>>> Judge({x}, 0).equal(x / x, sympy.Integer(1))
True
"""

from __future__ import annotations

import random
from typing import Any, Mapping

import flint
import mpmath
import sympy

from symfilt.claims.radicals import has_radicals, reduce_relations, without_radicals
from symfilt.errors import ClaimError, UsageError

SAMPLE_POINTS = 24  # points of the sampled test
SAMPLE_DIGITS = 50  # working precision of the sampled test
TOLERANCE = "1e-20"  # relative difference the sampled test accepts

S = sympy.Symbol("s")


class Judge:
    """Decide equality of expressions over one set of symbols (one judge per call).

    Exact on python-flint polynomials when both sides are rational functions
    (``I`` reduced by I**2 = -1, ``pi`` kept as an indeterminate, which is exact
    since pi is transcendental), also once radicals are new symbols; otherwise
    sampled with mpmath, which can only show a difference.

    Parameters
    ----------
    symbols : set of sympy.Symbol
        Every symbol either side may use (``s`` among them).
    seed : int
        Seed of the sample points.

    Examples
    --------
    >>> import sympy
    >>> R1, R2 = sympy.symbols("R1 R2")
    >>> Judge({R1, R2}, 0).same(R1 * R2 / (R1 + R2), 1 / (1 / R1 + 1 / R2))
    (True, 'exact', 0)
    >>> Judge({R1}, 0).same(sympy.sqrt(R1) + 1, R1)[:2]
    (False, 'exact')
    >>> Judge({R1}, 0).same(sympy.exp(R1), R1)[:2]
    (False, 'sampled')
    """

    def __init__(self, symbols: set[sympy.Symbol], seed: int) -> None:
        self.symbols = sorted(symbols, key=lambda x: (x.name, sympy.srepr(x)))
        names = tuple(f"x{k}" for k in range(len(self.symbols))) + ("xI", "xpi")
        self.ctx = flint.fmpq_mpoly_ctx.get(names, "lex")
        gens = self.ctx.gens()
        self.gens = dict(zip(self.symbols, gens))
        self.i_index = len(self.symbols)
        self.s = next((x for x in self.symbols if x.name == "s"), S)
        self.mp = mpmath.MPContext()
        self.mp.dps = SAMPLE_DIGITS
        self.seed = seed
        self._pairs: dict[sympy.Expr, Any] = {}
        self._values: dict[tuple[sympy.Expr, int], Any] = {}
        self._points: list[dict[sympy.Symbol, Any]] | None = None

    # exact arithmetic ---------------------------------------------------------
    def pair(self, expr: sympy.Expr):
        """(numerator, denominator) as flint polynomials, or None if not rational.

        Parameters
        ----------
        expr : sympy.Expr
            The expression to bring to polynomials.

        Examples
        --------
        >>> x = sympy.Symbol("x")
        >>> Judge({x}, 0).pair(1 / x), Judge({x}, 0).pair(sympy.sqrt(x))
        ((1, x0), None)
        """
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
        """p with I**2 = -1 applied.

        Parameters
        ----------
        p : flint.fmpq_mpoly
            A polynomial of this judge's context.

        Examples
        --------
        >>> x = sympy.Symbol("x")
        >>> judge = Judge({x}, 0)
        >>> judge.reduced(judge.pair(sympy.I * x)[0] ** 2)
        -x0^2
        """
        if p.is_zero() or p.degrees()[self.i_index] < 2:
            return p
        acc: dict[tuple[int, ...], Any] = {}
        k = self.i_index
        for exps, coeff in p.to_dict().items():
            key = exps[:k] + (exps[k] % 2,) + exps[k + 1:]
            acc[key] = acc.get(key, 0) + (-coeff if (exps[k] // 2) % 2 else coeff)
        return self.ctx.from_dict({key: c for key, c in acc.items() if c != 0})

    def rational(self, expr: sympy.Expr):
        """The pair with the denominator checked, or None if not rational.

        Parameters
        ----------
        expr : sympy.Expr
            The expression; a denominator that is zero raises ClaimError.

        Examples
        --------
        >>> x = sympy.Symbol("x")
        >>> Judge({x}, 0).rational((x + 1) / x)
        (x0 + 1, x0)
        """
        p = self.pair(expr)
        if p is not None and self.reduced(p[1]).is_zero():
            raise ClaimError("claim", "the expression divides by zero", "check the denominators")
        return p

    def to_sympy(self, p) -> sympy.Expr:
        """The sympy expression of a polynomial of this judge's context.

        Parameters
        ----------
        p : flint.fmpq_mpoly
            A polynomial of this judge's context.

        Examples
        --------
        >>> x = sympy.Symbol("x")
        >>> judge = Judge({x}, 0)
        >>> judge.to_sympy(judge.pair(sympy.I * x)[0])
        I*x
        """
        gens = self.symbols + [sympy.I, sympy.pi]
        return sympy.Add(*[sympy.Rational(int(c.p), int(c.q)) * sympy.Mul(*[g**k for g, k in zip(gens, exps)])
                           for exps, c in p.to_dict().items()])

    # sampling -----------------------------------------------------------------
    def points(self) -> list[dict[sympy.Symbol, Any]]:
        """The sample points (3 * SAMPLE_POINTS, from the seed), made once.

        Examples
        --------
        >>> x = sympy.Symbol("x")
        >>> len(Judge({x}, 0).points()) == 3 * SAMPLE_POINTS
        True
        """
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
        """The value of expr at sample point k (kept for reuse).

        Parameters
        ----------
        expr : sympy.Expr
            The expression.
        k : int
            Index into :meth:`points`.

        Examples
        --------
        >>> x = sympy.Symbol("x")
        >>> judge = Judge({x}, 0)
        >>> judge.value(x + 1, 0) - judge.value(x, 0)
        mpf('1.0')
        """
        key = (expr, k)
        if key not in self._values:
            self._values[key] = mp_eval(expr, self.points()[k], self.mp)
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
        """(equal, "exact" or "sampled", points used).

        Parameters
        ----------
        a, b : sympy.Expr
            The two sides.

        Examples
        --------
        >>> x = sympy.Symbol("x")
        >>> Judge({x}, 0).same(x / x, sympy.Integer(1))
        (True, 'exact', 0)
        """
        pa, pb = self.rational(a), self.rational(b)
        if pa is not None and pb is not None:
            return self.reduced(pa[0] * pb[1] - pb[0] * pa[1]).is_zero(), "exact", 0
        decided = self._exact_with_radicals(a, b)
        if decided is not None:
            return decided, "exact", 0
        equal, used = self._sampled(a, b)
        if not equal:
            return False, "sampled", used
        raise ClaimError("claim", f"the claim agrees with the derived quantity at {used} sample points, but it holds "
                         f"{_undecidable(a, b)}, and agreement at sample points is no proof of equality",
                         "write it as a rational function of the symbols (square roots are decided exactly)")

    def _exact_with_radicals(self, a: sympy.Expr, b: sympy.Expr) -> bool | None:
        """Equality decided after the radicals are new symbols (:mod:`symfilt.claims.radicals`), or None."""
        if not (has_radicals(a) or has_radicals(b)):
            return None
        a2, b2, relations = without_radicals(a, b)
        sub = Judge(a2.free_symbols | b2.free_symbols | {self.s}, self.seed)
        pa, pb = sub.pair(a2), sub.pair(b2)
        if pa is None or pb is None:
            return None
        diff = sub.reduced(pa[0] * pb[1] - pb[0] * pa[1])
        return diff.is_zero() if not relations else reduce_relations(diff, sub, relations)

    def equal(self, a: sympy.Expr | None, b: sympy.Expr | None) -> bool:
        """Whether a equals b; None is equal to nothing, zoo only to zoo.

        Parameters
        ----------
        a, b : sympy.Expr or None
            The two sides.

        Examples
        --------
        >>> x = sympy.Symbol("x")
        >>> Judge({x}, 0).equal(x, x), Judge({x}, 0).equal(x, None)
        (True, False)
        """
        if a is None or b is None or a.has(sympy.zoo) or b.has(sympy.zoo):
            return a is not None and b is not None and a.has(sympy.zoo) and b.has(sympy.zoo)
        try:
            return self.same(a, b)[0]
        except ClaimError:  # undecided by sampling: not shown to be equal
            return False

    # facts ------------------------------------------------------------------------
    def _lowest(self, expr: sympy.Expr):
        p = self.pair(expr)
        if p is None or max(p[0].degrees()[self.i_index], p[1].degrees()[self.i_index]) > 0:
            return None
        g = p[0].gcd(p[1])
        return p[0] / g, p[1] / g

    def order(self, expr: sympy.Expr) -> int | None:
        """Order in s (degree of the larger of numerator and denominator), or None.

        Parameters
        ----------
        expr : sympy.Expr
            A rational function free of I.

        Examples
        --------
        >>> s, x = sympy.symbols("s x")
        >>> Judge({s, x}, 0).order(1 / (s**2 + x * s + 1))
        2
        """
        p = self._lowest(expr)
        if p is None or self.s not in self.gens:
            return None if p is None else 0
        k = self.symbols.index(self.s)
        return max(p[0].degrees()[k], p[1].degrees()[k])

    def ratio(self, a: sympy.Expr, b: sympy.Expr) -> sympy.Expr | None:
        """a/b when it is a rational function free of s, else None.

        Parameters
        ----------
        a, b : sympy.Expr
            Numerator and denominator of the ratio.

        Examples
        --------
        >>> s, x = sympy.symbols("s x")
        >>> Judge({s, x}, 0).ratio(x / (s + 1), 1 / (s + 1)), Judge({s, x}, 0).ratio(s, sympy.Integer(1))
        (x, None)
        """
        pa, pb = self.pair(a), self.pair(b)
        if pa is None or pb is None or self.s not in self.gens or pb[0].is_zero():
            return None
        q = self._lowest(sympy.Mul(a, sympy.Pow(b, -1, evaluate=False), evaluate=False))
        if q is None or max(q[0].degrees()[self.symbols.index(self.s)], q[1].degrees()[self.symbols.index(self.s)]):
            return None
        return self.to_sympy(q[0]) / self.to_sympy(q[1])


def _undecidable(a: sympy.Expr, b: sympy.Expr) -> str:
    """What keeps the exact test out: the functions, else the roots of a base linear in no symbol."""
    names = sorted({type(f).__name__ for e in (a, b) for f in e.atoms(sympy.Function)})
    return ", ".join(names) if names else "a root of an expression that no change of variable makes rational"


_MP_FUNCTIONS = {"exp": "exp", "log": "log", "sin": "sin", "cos": "cos", "tan": "tan", "atan": "atan",
                 "asin": "asin", "acos": "acos", "sinh": "sinh", "cosh": "cosh", "tanh": "tanh",
                 "Abs": "fabs", "re": "re", "im": "im", "arg": "arg", "atan2": "atan2"}


def mp_eval(e: sympy.Expr, point: Mapping[sympy.Symbol, Any], mp: mpmath.MPContext):
    """Value of e at a point, in the mpmath context mp.

    Parameters
    ----------
    e : sympy.Expr
        Built from + * powers, numbers, I, pi, E and elementary functions.
    point : Mapping[sympy.Symbol, mpmath number]
        The value of each symbol.
    mp : mpmath.MPContext
        The working precision.

    Returns
    -------
    mpmath number
        The value.

    Examples
    --------
    >>> import mpmath, sympy
    >>> x = sympy.Symbol("x")
    >>> mp_eval(x ** 2 + 1, {x: 3}, mpmath.MPContext())
    mpf('10.0')
    """
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
    args = [mp_eval(a, point, mp) for a in e.args]
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
