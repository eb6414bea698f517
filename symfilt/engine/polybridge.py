"""Exact conversion between sympy polynomial expressions and python-flint polynomials.

:class:`PolyContext` turns sympy expressions into ``fmpq_mpoly`` and back (the number
pi is carried as a generator of its own so that single-pole op-amp results stay
exact); :func:`poly_to_sympy` turns an engine ``fmpz_mpoly`` into sympy's canonical
form quickly. :mod:`symfilt.engine.rational` builds its ratios through both.
"""

from __future__ import annotations

import functools
import gc
from functools import cmp_to_key
from itertools import compress
from operator import itemgetter

import flint
import sympy
from symfilt.model.safe import as_sympy


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
            syms |= as_sympy(e).free_symbols
            has_pi = has_pi or as_sympy(e).has(sympy.pi)
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
        direct = self._direct(expr)
        if direct is None:
            direct = self._tree(expr)
        if direct is not None:
            return direct
        e = sympy.expand(as_sympy(expr).xreplace({sympy.pi: self._pi}))
        n = self.ctx.nvars()
        if not self.gens:
            q = sympy.Rational(e)
            return self.ctx.from_dict({(0,) * n: flint.fmpq(int(q.p), int(q.q))})
        poly = sympy.Poly(e, *self.gens)
        return self.ctx.from_dict({k: flint.fmpq(int(sympy.Rational(v).p), int(sympy.Rational(v).q))
                                   for k, v in poly.as_dict().items()})

    def _direct(self, expr):
        """An already expanded polynomial (a sum of rational multiples of products of powers of
        the generators) read term by term, without ``sympy.expand`` and ``sympy.Poly``; None
        for anything else."""
        if not isinstance(expr, (sympy.Add, sympy.Mul, sympy.Symbol, sympy.Pow, sympy.Rational)):
            return None
        n = self.ctx.nvars()
        terms: dict = {}
        for term in sympy.Add.make_args(expr):
            coeff, rest = term.as_coeff_Mul()
            if not coeff.is_Rational:
                return None
            exps = [0] * n
            for f in sympy.Mul.make_args(rest):
                if f == 1:
                    continue
                base, e = f.as_base_exp()
                i = self._index.get(self._pi if base is sympy.pi else base)
                if i is None or not e.is_Integer or e < 0:
                    return None
                exps[i] += int(e)
            key = tuple(exps)
            terms[key] = terms.get(key, 0) + coeff
        return self.ctx.from_dict({k: flint.fmpq(int(v.p), int(v.q)) for k, v in terms.items() if v != 0})

    def _tree(self, expr):
        """A polynomial expression in any arrangement (products and whole powers of sums) multiplied
        out inside flint, as ``sympy.expand`` then ``sympy.Poly`` would give it; None for anything
        that is not one (a negative or fractional power, another function, an unknown symbol)."""
        if isinstance(expr, sympy.Rational):
            return self.ctx.from_dict({(0,) * self.ctx.nvars(): flint.fmpq(int(expr.p), int(expr.q))})
        if isinstance(expr, sympy.Symbol) or expr is sympy.pi:
            i = self._index.get(self._pi if expr is sympy.pi else expr)
            return None if i is None else self.ctx.gens()[i]
        if isinstance(expr, (sympy.Add, sympy.Mul)):
            parts = [self._tree(a) for a in expr.args]
            if any(p is None for p in parts):
                return None
            out = parts[0]
            for p in parts[1:]:
                out = out + p if isinstance(expr, sympy.Add) else out * p
            return out
        if isinstance(expr, sympy.Pow) and expr.exp.is_Integer and expr.exp >= 0:
            base = self._tree(expr.base)
            return None if base is None else base ** int(expr.exp)
        return None

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
        gens = self.gens
        if gens and all(c.q == 1 for c in p.coeffs()):  # integer coefficients: built directly (poly_to_sympy)
            names = tuple(self.ctx.names())
            zctx = flint.fmpz_mpoly_ctx.get(names, "degrevlex")
            symbols = {nm: sympy.pi if g is self._pi else g for nm, g in zip(names, gens)}
            return poly_to_sympy(zctx.from_dict({k: int(c.p) for k, c in p.to_dict().items()}), symbols)
        terms = []
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

    def symbols(self) -> list:
        """The sympy object each generator stands for, in order (:data:`sympy.pi` for pi).

        Examples
        --------
        >>> x, y = sympy.symbols("x y")
        >>> PolyContext([y * sympy.pi + x]).symbols()
        [x, y, pi]
        """
        return [sympy.pi if g == self._pi else g for g in self.gens]

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


def poly_to_sympy(p, symbols: dict) -> sympy.Expr:
    """Convert a flint polynomial to a sympy expression, built directly in canonical form.

    The result is the very expression ``sympy.Add(*[coeff * Mul(*powers) ...])``
    would give (same arguments in the same order, so ``==`` and hashing agree),
    but it is assembled with ``_from_args`` after sorting the terms with keys that
    reproduce sympy's canonical order (:func:`sympy.core.basic.Basic.compare`),
    which skips sympy's general-purpose flattening. This matters for results with
    tens of thousands of terms.

    Parameters
    ----------
    p : flint.fmpz_mpoly
    symbols : dict
        Generator name -> sympy object: a Symbol or a number symbol such as pi.

    Examples
    --------
    >>> ctx = flint.fmpz_mpoly_ctx.get(("x", "y"), "lex")
    >>> x, y = ctx.gens()
    >>> poly_to_sympy(3 * x * y - y**2, {"x": sympy.Symbol("x"), "y": sympy.Symbol("y")})
    3*x*y - y**2
    >>> poly_to_sympy(2 * x**2 - 5, {"x": sympy.pi, "y": sympy.Symbol("y")})
    -5 + 2*pi**2
    """
    if p == 0:
        return sympy.Integer(0)
    # tens of thousands of new objects, none of them cyclic: the collector would
    # only rescan them again and again, so it rests while they are made
    paused = gc.isenabled()
    gc.disable()
    try:
        return _poly_to_sympy_fast(p, symbols)
    finally:
        if paused:
            gc.enable()


def _poly_to_sympy_fast(p, symbols: dict) -> sympy.Expr:
    names = p.context().names()
    gens = [symbols[nm] for nm in names]
    pow_class = _class_key(sympy.Pow)
    if not gens or not all(isinstance(g, (sympy.Symbol, sympy.NumberSymbol)) and _class_key(type(g)) < pow_class
                           for g in gens):
        return _poly_to_sympy_slow(p, gens)
    # generators in sympy's canonical order; a product lists its number, then bare
    # generators, then powers, each in this order (Pi and Symbol sort before Pow)
    order = sorted(range(len(gens)), key=cmp_to_key(lambda i, j: gens[i].compare(gens[j])))
    by_rank = [gens[i] for i in order]
    reorder = itemgetter(*order) if len(order) > 1 else (lambda exps: (exps[order[0]],))
    n_gens, top = len(gens), max(p.degrees()) + 1
    gen_class = [_class_key(type(g))[0] for g in by_rank]
    mul_class = _class_key(sympy.Mul)[0]
    powers: dict[int, sympy.Expr] = {}
    constant = None
    keyed = []
    ranks = range(n_gens)
    for exps, c in p.terms():
        c = int(c)
        ex = reorder(exps)
        codes = list(compress(ranks, ex))
        if not codes:
            constant = sympy.Integer(c)
            continue
        if max(ex) == 1:
            factors = [by_rank[r] for r in codes]
        else:
            codes = [r for r in codes if ex[r] == 1]
            factors = [by_rank[r] for r in codes]
            for r, e in enumerate(ex):
                if e > 1:
                    code = n_gens + r * top + e
                    obj = powers.get(code)
                    if obj is None:
                        obj = powers[code] = sympy.Pow(by_rank[r], e)
                    codes.append(code)
                    factors.append(obj)
        if c == 1 and len(factors) == 1:
            code = codes[0]
            keyed.append(((gen_class[code] if code < n_gens else pow_class[0], 1, (2, 0), (code,)), factors[0]))
            continue
        if c != 1:
            factors.insert(0, sympy.Integer(c))
            number = (0, c) if c == -1 else (1, c)  # NegativeOne sorts before Integer
        else:
            number = (2, 0)
        keyed.append(((mul_class, len(factors), number, tuple(codes)), sympy.Mul._from_args(tuple(factors), True)))
    keyed.sort(key=lambda kt: kt[0])
    terms = [t for _k, t in keyed]
    if constant is not None:
        terms.insert(0, constant)
    if not terms:
        return sympy.Integer(0)
    if len(terms) == 1:
        return terms[0]
    return sympy.Add._from_args(tuple(terms), True)


@functools.lru_cache(maxsize=None)
def _class_key(cls) -> tuple:
    """Sort key of a class as :func:`sympy.core.basic._cmp_name` orders classes."""
    from sympy.core.basic import ordering_of_classes

    name = cls.__name__
    if name in ordering_of_classes:
        return (ordering_of_classes.index(name), "")
    return (len(ordering_of_classes) + 1, name)


def _poly_to_sympy_slow(p, gens) -> sympy.Expr:
    terms = []
    for exps, c in p.terms():
        factors = [sympy.Integer(int(c))]
        for gsym, e in zip(gens, exps):
            if e:
                factors.append(gsym**e)
        terms.append(sympy.Mul(*factors))
    return sympy.Add(*terms)


def to_fmpq(p, qctx):
    """An integer polynomial as a rational one in ``qctx`` (same names, in the same order).

    A direct copy when both contexts have the same names and ordering (python-flint copies
    the exponent vectors as they are); otherwise term by term.

    Parameters
    ----------
    p : flint.fmpz_mpoly
    qctx : flint.fmpq_mpoly_ctx
        Holds exactly p's names.

    Examples
    --------
    >>> ctx = flint.fmpz_mpoly_ctx.get(("x", "y"), "lex")
    >>> x, y = ctx.gens()
    >>> to_fmpq(x**2 * y + 3 * y, flint.fmpq_mpoly_ctx.get(("x", "y"), "degrevlex"))
    x^2*y + 3*y
    """
    src = p.context()
    if tuple(src.names()) == tuple(qctx.names()) and src.ordering() == qctx.ordering():
        return flint.fmpq_mpoly(p, qctx)
    return qctx.from_dict(p.to_dict())
