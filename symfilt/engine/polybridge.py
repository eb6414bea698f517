"""Exact conversion between sympy polynomial expressions and python-flint ``fmpq_mpoly``.

Used wherever polynomial arithmetic on sympy results must be fast (cancelling a
ratio, differentiating coefficient polynomials). The number pi is carried as a
generator of its own so that single-pole op-amp results stay exact.
"""

from __future__ import annotations

import flint
import sympy


class PolyContext:
    """A polynomial ring over the rationals in the given sympy symbols.

    Parameters
    ----------
    exprs : iterable of sympy.Expr
        Expressions whose free symbols (and pi, if present) become the generators.

    Examples
    --------
    >>> x, y = sympy.symbols("x y")
    >>> b = PolyContext([x * y + 1])
    >>> p = b.to_flint(x * y + 1) * b.to_flint(x - y / 2)
    >>> b.to_sympy(p) == sympy.expand((x * y + 1) * (x - y / 2))
    True
    """

    def __init__(self, exprs) -> None:
        exprs = list(exprs)
        self._pi = sympy.Dummy("pi")
        syms: set = set()
        has_pi = False
        for e in exprs:
            syms |= sympy.sympify(e).free_symbols
            has_pi = has_pi or sympy.sympify(e).has(sympy.pi)
        self.gens = sorted(syms, key=lambda z: z.name)
        if has_pi:
            self.gens.append(self._pi)
        names = tuple(f"x{i}" for i in range(max(1, len(self.gens))))
        self.ctx = flint.fmpq_mpoly_ctx.get(names, "degrevlex")
        self._index = {g: i for i, g in enumerate(self.gens)}

    def to_flint(self, expr):
        """Convert a polynomial expression (rational coefficients) to ``fmpq_mpoly``.

        Parameters
        ----------
        expr : sympy.Expr
            A polynomial in the context's symbols (and pi) with rational coefficients.

        Returns
        -------
        flint.fmpq_mpoly

        Examples
        --------
        >>> x = sympy.Symbol("x")
        >>> PolyContext([x]).to_flint(x**2 / 3 + 1)
        1/3*x0^2 + 1
        """
        e = sympy.expand(sympy.sympify(expr).xreplace({sympy.pi: self._pi}))
        n = self.ctx.nvars()
        if not self.gens:
            q = sympy.Rational(e)
            return self.ctx.from_dict({(0,) * n: flint.fmpq(int(q.p), int(q.q))})
        poly = sympy.Poly(e, *self.gens)
        return self.ctx.from_dict({k: flint.fmpq(int(sympy.Rational(v).p), int(sympy.Rational(v).q))
                                   for k, v in poly.as_dict().items()})

    def to_sympy(self, p) -> sympy.Expr:
        """Convert back to a sympy expression.

        Parameters
        ----------
        p : flint.fmpq_mpoly
            A polynomial of this context.

        Returns
        -------
        sympy.Expr
            The same polynomial over the sympy symbols (pi restored).

        Examples
        --------
        >>> x = sympy.Symbol("x")
        >>> b = PolyContext([x])
        >>> b.to_sympy(b.to_flint(2 * x + 1))
        2*x + 1
        """
        terms = []
        gens = self.gens
        for exps, c in zip(p.monoms(), p.coeffs()):
            factors = [sympy.Rational(int(c.p), int(c.q))]
            factors += [g**e if e != 1 else g for g, e in zip(gens, exps) if e]
            terms.append(sympy.Mul(*factors))
        out = sympy.Add(*terms)
        return out.xreplace({self._pi: sympy.pi}) if self._pi in self._index else out

    def derivative(self, p, symbol):
        """Partial derivative of a flint polynomial with respect to a sympy symbol.

        Parameters
        ----------
        p : flint.fmpq_mpoly
            A polynomial of this context.
        symbol : sympy.Symbol
            One of the context's symbols.

        Returns
        -------
        flint.fmpq_mpoly
            d p / d symbol.

        Examples
        --------
        >>> x, y = sympy.symbols("x y")
        >>> b = PolyContext([x * y])
        >>> b.to_sympy(b.derivative(b.to_flint(x**2 * y), x))
        2*x*y
        """
        if symbol not in self._index:
            return self.ctx.from_dict({})
        return p.derivative(self._index[symbol])

    def gen(self, symbol):
        """The generator standing for ``symbol``.

        Parameters
        ----------
        symbol : sympy.Symbol
            One of the context's symbols.

        Returns
        -------
        flint.fmpq_mpoly
            The generator as a polynomial.

        Examples
        --------
        >>> x = sympy.Symbol("x")
        >>> PolyContext([x]).gen(x)
        x0
        """
        return self.ctx.gens()[self._index[symbol]]


def integer_scale(fn, fd):
    """Scale a pair so both have integer coefficients with no common factor and the
    denominator's trailing coefficient is positive.

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


def smaller_than(expr, nodes: int) -> bool:
    """True when an expression tree has fewer than ``nodes`` nodes; stops counting early.

    A cheap stand-in for ``sympy.count_ops`` on expressions that may be huge.

    Parameters
    ----------
    expr : sympy.Expr
        The expression tree to count.
    nodes : int
        The bound.

    Returns
    -------
    bool

    Examples
    --------
    >>> x, y = sympy.symbols("x y")
    >>> smaller_than(x + y, 10), smaller_than(sum(x**k for k in range(50)), 10)
    (True, False)
    """
    from itertools import islice

    return sum(1 for _ in islice(sympy.preorder_traversal(expr), nodes)) < nodes


def factor_ratio(num, den=1) -> sympy.Expr:
    """num/den cancelled and factored with python-flint (much faster than sympy.factor).

    Examples
    --------
    >>> x, y = sympy.symbols("x y")
    >>> factor_ratio(x**2 - y**2, 2 * x + 2 * y)
    x/2 - y/2
    >>> factor_ratio(x**2 * y + x * y**2, x - y)
    x*y*(x + y)/(x - y)
    """
    num, den = sympy.expand(num), sympy.expand(den)
    if num == 0:
        return sympy.Integer(0)
    bridge = PolyContext([num, den])
    fn, fd = bridge.to_flint(num), bridge.to_flint(den)
    g = fn.gcd(fd)
    if not g.is_one():
        fn, fd = fn / g, fd / g

    def product(p):
        const, factors = p.factor()
        out = sympy.Rational(int(const.p), int(const.q))
        parts = [bridge.to_sympy(f) ** e for f, e in factors]
        return out, sympy.Mul(*parts)

    cn, pn = product(fn)
    cd, pd = product(fd)
    return (cn / cd) * pn / pd
