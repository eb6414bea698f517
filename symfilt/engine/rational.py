"""Exact rational functions ``num / den`` on python-flint polynomials: the one implementation.

A :class:`Ratio` holds two coprime integer polynomials (``flint.fmpz_mpoly``) and
the sympy object each generator stands for. Degrees, coefficients in one
variable, limits at 0 and infinity, gains, substitution of exact numbers and
cancellation all work on the polynomials; sympy expressions are made only when
asked for (:meth:`Ratio.to_sympy`, :meth:`Ratio.quotient`).

One cancellation rule serves every caller (:func:`cancel_pair`): divide out the
polynomial gcd, scale to integer coefficients without a common factor, and make
the denominator's trailing coefficient (the last term in the ring's degrevlex
order) positive. With every symbol positive, that keeps physically positive
denominators positive.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass
from typing import Mapping

import flint
import sympy
from sympy.polys.polyerrors import BasePolynomialError

from symfilt.engine.polybridge import PolyContext, poly_to_sympy, smaller_than, to_fmpq
from symfilt.model.safe import as_sympy
from symfilt.model.values import parse_value

#: A cancelled ratio with at most this many terms is shown factored by :meth:`Ratio.quotient`.
FACTOR_TERMS = 60


@dataclass(frozen=True)
class Ratio:
    """An exact ratio ``num / den`` of flint polynomials over the plain symbols.

    Parameters
    ----------
    num, den : flint.fmpz_mpoly
        Coprime polynomials in one context (``den`` is 0 for an infinite ratio).
    symbols : dict
        Generator name -> sympy object.

    Examples
    --------
    >>> x, y = sympy.symbols("x y")
    >>> r = Ratio.from_sympy(x**2 - y**2, 2*x + 2*y)
    >>> r.to_sympy(), r.degree(x), r.limit(y, 0).to_sympy()
    ((x - y, 2), 1, (x, 2))
    """

    num: object
    den: object
    symbols: dict

    @classmethod
    def from_sympy(cls, num, den=1) -> "Ratio":
        """Build from two polynomial expressions with rational coefficients, cancelled.

        The generators are the free symbols sorted by name, then pi when present.

        Parameters
        ----------
        num, den : sympy.Expr or int
            Polynomials with rational coefficients (pi allowed).

        Examples
        --------
        >>> x = sympy.Symbol("x")
        >>> Ratio.from_sympy(x / 2 + sympy.pi, -x).to_sympy()
        (-x - 2*pi, 2*x)
        """
        num, den = as_sympy(num, "num"), as_sympy(den, "den")  # multiplied out by the bridge, in flint
        bridge = PolyContext([num, den])
        fn, fd = cancel_pair(bridge.to_flint(num), bridge.to_flint(den))
        return _integer_ratio(fn, fd, bridge.symbols())

    @property
    def terms(self) -> int:
        """Number of terms of numerator and denominator together.

        Examples
        --------
        >>> Ratio.from_sympy(sympy.Symbol("x") + 1, 3).terms
        3
        """
        return len(self.num) + len(self.den)

    @property
    def infinite(self) -> bool:
        """True when the denominator is 0.

        Examples
        --------
        >>> Ratio.from_sympy(1, 0).infinite
        True
        """
        return self.den == 0

    def to_sympy(self) -> tuple[sympy.Expr, sympy.Expr]:
        """Numerator and denominator as expanded sympy expressions.

        Examples
        --------
        >>> x = sympy.Symbol("x")
        >>> Ratio.from_sympy(x * (x + 1), x).to_sympy()
        (x + 1, 1)
        """
        return poly_to_sympy(self.num, self.symbols), poly_to_sympy(self.den, self.symbols)

    def quotient(self, factor_terms: int | None = FACTOR_TERMS) -> sympy.Expr:
        """``num/den`` as one sympy expression, factored (flint) when it has at most
        ``factor_terms`` terms (always when None); ``oo`` when infinite.

        Parameters
        ----------
        factor_terms : int or None
            Largest number of terms still factored; None factors always.

        Examples
        --------
        >>> x, y = sympy.symbols("x y")
        >>> Ratio.from_sympy(x**2 * y + x * y**2, y - x).quotient()
        x*y*(x + y)/(-x + y)
        """
        if self.num == 0:
            return sympy.Integer(0)
        if self.infinite:
            return sympy.oo
        if factor_terms is not None and self.terms > factor_terms:
            return poly_to_sympy(self.num, self.symbols) / poly_to_sympy(self.den, self.symbols)
        return _factored(self.num, self.symbols) / _factored(self.den, self.symbols)

    def factored(self) -> sympy.Expr:
        """``num/den`` factored (flint), the constant factors of both sides combined into one
        number; ``oo`` when infinite.

        Examples
        --------
        >>> x, y = sympy.symbols("x y")
        >>> Ratio.from_sympy(x**2 - y**2, 2 * x + 2 * y).factored()
        x/2 - y/2
        """
        if self.num == 0:
            return sympy.Integer(0)
        if self.infinite:
            return sympy.oo
        (cn, pn), (cd, pd) = self.num.factor(), self.den.factor()
        prod = lambda fs: sympy.Mul(*[poly_to_sympy(f, self.symbols) ** e for f, e in fs])
        return sympy.Rational(int(cn), int(cd)) * prod(pn) / prod(pd)

    def name_of(self, var) -> str | None:
        """The generator name of a symbol (or a name), None when it is not a generator.

        Parameters
        ----------
        var : sympy.Symbol or str
            The symbol, or its generator name.

        Examples
        --------
        >>> x = sympy.Symbol("x")
        >>> r = Ratio.from_sympy(x + 1)
        >>> r.name_of(x), r.name_of("x"), r.name_of(sympy.Symbol("y"))
        ('x', 'x', None)
        """
        names = self.num.context().names()
        if isinstance(var, str):
            return var if var in names else None
        return next((nm for nm in names if self.symbols[nm] == var), None)

    def free_symbols(self) -> set:
        """The symbols (pi not counted) that the numerator or denominator contains.

        Examples
        --------
        >>> x, y = sympy.symbols("x y")
        >>> sorted(map(str, Ratio.from_sympy(x + y, y).free_symbols()))
        ['x', 'y']
        """
        degrees = zip(self.num.context().names(), self.num.degrees(), self.den.degrees())
        return {self.symbols[nm] for nm, a, b in degrees
                if max(a, b) > 0 and isinstance(self.symbols[nm], sympy.Symbol)}

    def degree(self, var) -> int:
        """The larger degree of numerator and denominator in one symbol (0 when absent).

        Parameters
        ----------
        var : sympy.Symbol or str
            The symbol, or its generator name.

        Examples
        --------
        >>> x = sympy.Symbol("x")
        >>> Ratio.from_sympy(1, x**2 + 1).degree("x")
        2
        """
        name = self.name_of(var)
        if name is None:
            return 0
        k = self.num.context().variable_to_index(name)
        return max(0, self.num.degrees()[k], self.den.degrees()[k])

    def coefficients(self, var) -> tuple[list, list]:
        """Coefficients of numerator and denominator in powers of one symbol, lowest first.

        The coefficients are flint polynomials in the other symbols; convert one with
        :func:`poly_to_sympy`.

        Parameters
        ----------
        var : sympy.Symbol or str
            The symbol, or its generator name.

        Examples
        --------
        >>> x, y = sympy.symbols("x y")
        >>> r = Ratio.from_sympy(1, x * y + 1)
        >>> [[poly_to_sympy(c, r.symbols) for c in cs] for cs in r.coefficients(x)]
        [[1], [1, y]]
        """
        name = self.name_of(var)
        if name is None:
            return [self.num], [self.den]
        return coefficients_in(self.num, name), coefficients_in(self.den, name)

    def limit(self, var, point) -> "Ratio | None":
        """The ratio as one symbol goes to 0 or to infinity (``point`` 0 or ``"oo"``), cancelled.

        None when the limit is infinite; the ratio itself when it does not contain the symbol.

        Parameters
        ----------
        var : sympy.Symbol or str
            The symbol, or its generator name.
        point : {0, "oo"}
            Where the symbol goes.

        Examples
        --------
        >>> x, y = sympy.symbols("x y")
        >>> r = Ratio.from_sympy(x, x + y)
        >>> r.limit(x, "oo").to_sympy(), r.limit(y, 0).to_sympy(), r.limit(x, 0).to_sympy()
        ((1, 1), (1, 1), (0, 1))
        >>> Ratio.from_sympy(x**2, x + 1).limit(x, "oo") is None
        True
        """
        if point not in (0, "oo"):
            raise ValueError("point must be 0 or 'oo'")
        if self.name_of(var) is None or self.num == 0 or self.infinite:
            return self
        n_cs, d_cs = self.coefficients(var)
        if point == 0:
            a = next(k for k, c in enumerate(n_cs) if c != 0)
            b = next(k for k, c in enumerate(d_cs) if c != 0)
        else:
            a, b = -(len(n_cs) - 1), -(len(d_cs) - 1)
        if a < b:
            return None
        if a > b:
            ctx = self.num.context()
            return Ratio(ctx.from_dict({}), ctx.from_dict({(0,) * ctx.nvars(): 1}), self.symbols)
        num, den = cancel_pair(n_cs[abs(a)], d_cs[abs(b)])
        return Ratio(num, den, self.symbols)

    def gain(self, point, var="s") -> sympy.Expr:
        """The value as ``var`` goes to 0 or oo (``point`` 0 or ``"oo"``) as a sympy
        expression, factored (:meth:`factored`) when small; ``oo`` when unbounded.

        Parameters
        ----------
        point : {0, "oo"}
            Where ``var`` goes.
        var : sympy.Symbol or str
            The variable, ``s`` by default.

        Examples
        --------
        >>> s, k = sympy.symbols("s k")
        >>> r = Ratio.from_sympy(k * s, 2 * s + 1)
        >>> r.gain(0), r.gain("oo"), Ratio.from_sympy(s**2, s + 1).gain("oo")
        (0, k/2, oo)
        """
        if self.infinite:
            return sympy.oo
        r = self.limit(var, point)
        if r is None:
            return sympy.oo
        if r.num == 0:
            return sympy.Integer(0)
        n, d = r.to_sympy()
        if smaller_than(n, 400) and smaller_than(d, 400):
            return r.factored()
        return n / d

    def subs(self, values: Mapping) -> "Ratio":
        """Substitute exact values (symbol or name -> number) and cancel.

        Rational values (floats are read exactly from their decimal repr) are put in
        on the flint polynomials; any other value goes through sympy.

        Parameters
        ----------
        values : Mapping
            Symbol or generator name -> exact number or expression.

        Examples
        --------
        >>> x, y = sympy.symbols("x y")
        >>> Ratio.from_sympy(x + y, x - y).subs({"y": sympy.Rational(1, 2)}).to_sympy()
        (-2*x - 1, 1 - 2*x)
        >>> Ratio.from_sympy(x + y, x).subs({y: x}).to_sympy()
        (2, 1)
        """
        point, other = {}, {}
        for key, v in values.items():
            name = self.name_of(key)
            if name is None:
                continue
            v = sympy.Rational(repr(v)) if isinstance(v, float) else parse_value(v, where=str(key)) if isinstance(v, str) \
                else as_sympy(v, str(key))
            if v.is_Rational:
                point[name] = flint.fmpq(int(v.p), int(v.q))
            else:
                other[self.symbols[name]] = v
        if other:
            num, den = self.to_sympy()
            sub = {self.symbols[nm]: sympy.Rational(int(q.p), int(q.q)) for nm, q in point.items()} | other
            return Ratio.from_sympy(num.xreplace(sub), den.xreplace(sub))
        if not point:
            return self
        qctx = flint.fmpq_mpoly_ctx.get(tuple(self.num.context().names()), "degrevlex")
        num = to_fmpq(self.num, qctx).subs(point)
        den = to_fmpq(self.den, qctx).subs(point)
        return reringed(num, den, self.symbols)


def _integer_ratio(fn, fd, gens: list) -> Ratio:
    """A Ratio from a cancelled pair of fmpq polynomials (integer coefficients) over ``gens``."""
    names, symbols = [], {}
    for g in gens:
        name = "pi" if g is sympy.pi else g.name
        while name in symbols:
            name += "'"
        names.append(name)
        symbols[name] = g
    ctx = flint.fmpz_mpoly_ctx.get(tuple(names), "degrevlex")
    width = len(names)  # a ring without generators still has one unused one in flint
    conv = lambda p: ctx.from_dict({k[:width]: int(c.p) for k, c in p.to_dict().items()})
    return Ratio(conv(fn), conv(fd), symbols)


def reringed(num, den, symbols: dict) -> Ratio:
    """Cancel a pair of fmpq polynomials in the ring of the symbols they still contain
    (sorted by name, pi last, as :meth:`Ratio.from_sympy` orders them).

    Parameters
    ----------
    num, den : flint.fmpq_mpoly
        In one context.
    symbols : dict
        Generator name -> sympy object, for every generator of that context.

    Examples
    --------
    >>> q = flint.fmpq_mpoly_ctx.get(("x", "y"), "degrevlex")
    >>> x, y = q.gens()
    >>> reringed(x * x / 2, x, {"x": sympy.Symbol("x"), "y": sympy.Symbol("y")}).to_sympy()
    (x, 2)
    """
    names = num.context().names()
    used = [k for k, (a, b) in enumerate(zip(num.degrees(), den.degrees())) if max(a, b) > 0]
    used.sort(key=lambda k: (symbols[names[k]] is sympy.pi, symbols[names[k]].name
                             if symbols[names[k]] is not sympy.pi else ""))
    qctx = flint.fmpq_mpoly_ctx.get(tuple(names[k] for k in used) or ("x0",), "degrevlex")
    pick = (lambda e: tuple(e[k] for k in used)) if used else (lambda e: (0,))
    conv = lambda p: qctx.from_dict({pick(e): c for e, c in p.to_dict().items()})
    fn, fd = cancel_pair(conv(num), conv(den))
    return _integer_ratio(fn, fd, [symbols[names[k]] for k in used])


def _factored(p, symbols: dict) -> sympy.Expr:
    """A polynomial as a product of its flint factors, each converted to sympy."""
    const, factors = p.factor()
    return sympy.Integer(int(const)) * sympy.Mul(*[poly_to_sympy(f, symbols) ** e for f, e in factors])


def tidy_quotient(num, den, symbols: dict, factor_terms: int | None = FACTOR_TERMS) -> sympy.Expr:
    """``num/den`` of two flint polynomials, cancelled, as a tidy sympy expression.

    Parameters
    ----------
    num, den : flint.fmpz_mpoly
        In one context.
    symbols : dict
        Generator name -> sympy object.
    factor_terms : int or None
        See :meth:`Ratio.quotient`.

    Examples
    --------
    >>> ctx = flint.fmpz_mpoly_ctx.get(("x", "y"), "degrevlex")
    >>> x, y = ctx.gens()
    >>> tidy_quotient(2 * x * (x + y), -4 * x * y, {"x": sympy.Symbol("x"), "y": sympy.Symbol("y")})
    (-x - y)/(2*y)
    """
    return Ratio(*cancel_pair(num, den), symbols).quotient(factor_terms)


def cancel_pair(num, den):
    """Cancel a pair of flint polynomials by the one rule of this module.

    Divide out the gcd, scale to integer coefficients without a common factor
    (for ``fmpq_mpoly``; an ``fmpz_mpoly`` gcd already takes the integer content),
    and make the denominator's trailing term (lowest in the ring's order) positive.
    ``0/d`` becomes ``0/1`` and ``n/0`` becomes ``1/0``.

    Parameters
    ----------
    num, den : flint.fmpz_mpoly or flint.fmpq_mpoly
        Two polynomials in one context.

    Examples
    --------
    >>> ctx = flint.fmpz_mpoly_ctx.get(("x", "y"), "lex")
    >>> x, y = ctx.gens()
    >>> cancel_pair((x + y) * x, -(x + y) * y)
    (-x, y)
    >>> q = flint.fmpq_mpoly_ctx.get(("x",), "lex")
    >>> cancel_pair(q.gens()[0] / 2, q.from_dict({(0,): -3}))
    (-x, 6)
    """
    ctx = den.context()
    if num == 0:
        return num, ctx.from_dict({(0,) * ctx.nvars(): 1})
    if den == 0:
        return ctx.from_dict({(0,) * ctx.nvars(): 1}), den
    g = num.gcd(den)
    if not g.is_one():
        num, den = num / g, den / g
    if isinstance(num, flint.fmpq_mpoly):
        return integer_scale(num, den)
    if int(den.coeffs()[-1]) < 0:
        num, den = -num, -den
    return num, den


def integer_scale(fn, fd):
    """Scale a pair of ``fmpq_mpoly`` so both have integer coefficients with no common
    factor and the denominator's trailing coefficient is positive.

    Parameters
    ----------
    fn, fd : flint.fmpq_mpoly
        Numerator and denominator in one context.

    Examples
    --------
    >>> x = sympy.Symbol("x")
    >>> b = PolyContext([x])
    >>> n, d = integer_scale(b.to_flint(x / 2), b.to_flint(-x / 4 - sympy.Rational(1, 2)))
    >>> b.to_sympy(n), b.to_sympy(d)
    (-2*x, x + 2)
    """
    coeffs = list(fn.coeffs()) + list(fd.coeffs())
    lcm = 1
    for c in coeffs:
        lcm = sympy.ilcm(lcm, int(c.q))
    g = 0
    for c in coeffs:
        g = sympy.igcd(g, int(c.p) * lcm // int(c.q))
    scale = flint.fmpq(lcm, g or 1)
    if fd.coeffs()[-1] < 0:
        scale = -scale
    return fn * scale, fd * scale


def cancel_exprs(num, den) -> tuple[sympy.Expr, sympy.Expr]:
    """Cancel two polynomial expressions exactly (python-flint) by the rule of :func:`cancel_pair`.

    Coefficients must be rational; the number pi may appear as a factor.

    Parameters
    ----------
    num, den : sympy.Expr
        Polynomials with rational coefficients (pi allowed).

    Examples
    --------
    >>> x, y = sympy.symbols("x y", positive=True)
    >>> cancel_exprs(x**2 - y**2, 2*x + 2*y)
    (x - y, 2)
    """
    return Ratio.from_sympy(num, den).to_sympy()


@functools.lru_cache(maxsize=1024)
def factor_ratio(num, den=1) -> sympy.Expr:
    """num/den cancelled and factored with python-flint (much faster than sympy.factor; memoised).

    Parameters
    ----------
    num, den : sympy.Expr
        Polynomials with rational coefficients (pi allowed); ``den`` 1 by default.

    Examples
    --------
    >>> x, y = sympy.symbols("x y")
    >>> factor_ratio(x**2 - y**2, 2 * x + 2 * y)
    x/2 - y/2
    >>> factor_ratio(x**2 * y + x * y**2, x - y)
    x*y*(x + y)/(x - y)
    """
    return Ratio.from_sympy(num, den).factored()


def rational_limit(expr, x, point):
    """Limit of a rational function of the symbol ``x`` as x -> 0 or oo (``point`` 0 or
    ``"oo"``): ``zoo`` when unbounded, None when ``expr`` is not a ratio of polynomials.

    Worked on flint polynomials when every coefficient is rational (pi allowed);
    otherwise on the polynomials in ``x`` with sympy coefficients.

    Parameters
    ----------
    expr : sympy.Expr
        A ratio of polynomials.
    x : sympy.Symbol
        The variable that goes to ``point``.
    point : {0, "oo"}
        Where ``x`` goes.

    Examples
    --------
    >>> x, y = sympy.symbols("x y")
    >>> rational_limit((x + y) / (2 * x + 1), x, "oo"), rational_limit(x / y, x, "oo")
    (1/2, zoo)
    >>> rational_limit((sympy.sqrt(y) * x + 1) / (x + 3), x, 0)
    1/3
    """
    num, den = sympy.fraction(sympy.together(expr))
    try:
        r = Ratio.from_sympy(num, den)
    except (BasePolynomialError, TypeError, ValueError):
        return _sympy_limit(num, den, x, point)
    if r.infinite:
        return sympy.zoo
    r = r.limit(x, point)
    return sympy.zoo if r is None else r.quotient()


def _sympy_limit(num, den, x, point):
    """:func:`rational_limit` on the polynomials in x with sympy coefficients (not cancelled)."""
    try:
        pn, pd = sympy.Poly(num, x), sympy.Poly(den, x)
    except sympy.PolynomialError:
        return None
    if pn.is_zero:
        return sympy.Integer(0)
    if point == 0:
        (kn, cn), (kd, cd) = [min(((m[0], c) for m, c in p.terms()), key=lambda t: t[0]) for p in (pn, pd)]
        kn, kd = -kn, -kd  # lowest power dominates: compare like degrees at infinity
    else:
        (kn, cn), (kd, cd) = (pn.degree(), pn.LC()), (pd.degree(), pd.LC())
    if kn == kd:
        return cn / cd
    return sympy.zoo if kn > kd else sympy.Integer(0)


def coefficients_in(p, name: str) -> list:
    """Coefficients of a flint polynomial in powers of one generator, lowest first, in p's ring.

    Parameters
    ----------
    p : flint.fmpz_mpoly or flint.fmpq_mpoly
    name : str
        The generator.

    Examples
    --------
    >>> ctx = flint.fmpz_mpoly_ctx.get(("s", "x"), "degrevlex")
    >>> s, x = ctx.gens()
    >>> coefficients_in(3 * s**2 * x + x + 1, "s")
    [x + 1, 0, 3*x]
    """
    top = max(p.degrees()[p.context().variable_to_index(name)], 0)
    # Taylor's formula at 0, every step inside flint: a Python loop over the terms was slower at every
    # size (1.1 s of a 28 657-term ladder's report)
    out, factorial = [], 1
    for j in range(top + 1):
        if j:
            p = p.derivative(name)
            factorial *= j
        c = p.subs({name: 0})
        out.append(c / factorial if factorial != 1 else c)
    return out
