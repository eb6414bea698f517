"""Radicals put in terms of new symbols, so that a claim with roots is decided exactly.

A radical ``x^(p/q)`` of a symbol becomes a power of a new positive symbol ``t`` with
``x = t^q``; a radical ``b^(p/q)`` of a compound base that is linear in some symbol ``x``
becomes ``u^p`` with ``x`` written in ``u`` (``b = u^q`` solved for ``x``). Both are
changes of variables that are one to one where the base is positive, so two expressions
are equal exactly when the substituted ones are, and the substituted ones are rational
functions that the exact test decides. A radical of a number (``sqrt(2)``) becomes a
symbol ``u`` with the relation ``u^q = c``, applied by :func:`reduce_relations`; whatever
is left (a function such as ``exp``, a root of a base that is linear in no symbol) is left
as it is, and the caller samples.

>>> R1 = sympy.Symbol("R1", positive=True)
>>> a, b, rel = without_radicals(sympy.sqrt(R1) ** 2, R1)
>>> a == b, rel
(True, [])
"""

from __future__ import annotations

from math import lcm

import sympy

from symfilt.errors import ClaimError

__all__ = ["NON_ANALYTIC", "check_analytic", "has_radicals", "reduce_relations", "without_radicals"]

#: Functions a claim may not hold: not analytic, so agreement on a region says nothing elsewhere.
NON_ANALYTIC = ("Abs", "sign", "re", "im", "arg", "conjugate", "floor", "ceiling", "frac", "Max", "Min",
                "Piecewise", "Heaviside", "Mod", "atan2", "DiracDelta", "KroneckerDelta")
_MAX_ROUNDS = 12


def check_analytic(expr: sympy.Expr, where: str) -> None:
    """Raise for an absolute value or another non-analytic function in a claim.

    Parameters
    ----------
    expr : sympy.Expr
        The claim or the derived quantity.
    where : str
        Which side, for the message.

    Raises
    ------
    ClaimError
        Naming the function.

    Examples
    --------
    >>> x = sympy.Symbol("x")
    >>> check_analytic(sympy.sqrt(x) + 1, "claim")
    >>> check_analytic(sympy.Abs(x - 1), "claim")
    Traceback (most recent call last):
    ...
    symfilt.errors.ClaimError: claim: Abs is not analytic, so no test of sample points can decide equality with it, write the claim without Abs, sign, re, im, arg, floor, ceiling, Max, Min or Piecewise
    """
    for node in sympy.preorder_traversal(expr):
        name = type(node).__name__
        if name in NON_ANALYTIC or isinstance(node, (sympy.Piecewise, sympy.core.relational.Relational)):
            raise ClaimError(where, f"{name} is not analytic, so no test of sample points can decide equality with it",
                             "write the claim without Abs, sign, re, im, arg, floor, ceiling, Max, Min or Piecewise")


def _radicals(exprs) -> dict:
    """base -> lcm of the denominators of its non-integer rational exponents."""
    found: dict = {}
    for e in exprs:
        for p in e.atoms(sympy.Pow):
            if p.exp.is_Rational and not p.exp.is_Integer:
                found[p.base] = lcm(found.get(p.base, 1), int(p.exp.q))
    return found


def has_radicals(expr: sympy.Expr) -> bool:
    """True when expr holds a power with a non-integer rational exponent.

    Parameters
    ----------
    expr : sympy.Expr

    Examples
    --------
    >>> x = sympy.Symbol("x")
    >>> has_radicals(sympy.sqrt(x) + 1), has_radicals(x**2)
    (True, False)
    """
    return bool(_radicals([expr]))


def _linear_symbol(base: sympy.Expr):
    """(x, num, den) with base = num/den, num of degree 1 in x and den free of x; else None."""
    num, den = sympy.fraction(sympy.together(base))
    for x in sorted(base.free_symbols, key=lambda z: z.name):
        if den.has(x):
            continue
        poly = sympy.Poly(num, x)
        if poly.degree() == 1 and not poly.coeffs()[0].has(x):
            return x, poly, den
    return None


def _replace_powers(e: sympy.Expr, base: sympy.Expr, q: int, u: sympy.Symbol) -> sympy.Expr:
    """Every base^(k/q') in e as a power of u, where base = u^q."""
    swap = {p: u ** int(p.exp * q) for p in e.atoms(sympy.Pow)
            if p.base == base and p.exp.is_Rational and (p.exp * q).is_Integer}
    return e.xreplace(swap)


def without_radicals(a: sympy.Expr, b: sympy.Expr):
    """(a', b', relations): a and b with radicals put in terms of new positive symbols.

    Parameters
    ----------
    a, b : sympy.Expr
        The two sides.

    Returns
    -------
    tuple
        The substituted sides and the relations ``(u, q, c)`` meaning ``u^q = c`` left for
        radicals of numbers (:func:`reduce_relations`).

    Examples
    --------
    >>> R1 = sympy.Symbol("R1", positive=True)
    >>> a, b, rel = without_radicals(sympy.sqrt(1 + R1) ** 3, (1 + R1) * sympy.sqrt(1 + R1))
    >>> sympy.expand(a - b), rel
    (0, [])
    """
    relations = []
    for _ in range(_MAX_ROUNDS):
        found = _radicals([a, b])
        if not found:
            break
        base, q = next(iter(sorted(found.items(), key=lambda kv: (not kv[0].is_Symbol, sympy.default_sort_key(kv[0])))))
        u = sympy.Dummy("u", positive=True)
        if base.is_Symbol:
            a, b = a.xreplace({base: u**q}), b.xreplace({base: u**q})
            continue
        a, b = _replace_powers(a, base, q, u), _replace_powers(b, base, q, u)
        if base.is_Rational:
            relations.append((u, q, base))
            continue
        linear = _linear_symbol(base)
        if linear is None:
            return a, b, relations + [(u, q, base)]
        x, poly, den = linear
        slope, rest = poly.coeffs()[0], poly.as_expr() - poly.coeffs()[0] * x
        a, b = (e.xreplace({x: (u**q * den - rest) / slope}) for e in (a, b))
    return a, b, relations


def reduce_relations(pair_difference, judge, relations) -> bool | None:
    """Whether a numerator is zero once ``u^q = c`` is applied; None when it cannot tell.

    Parameters
    ----------
    pair_difference : flint.fmpq_mpoly
        Numerator of a − b in the judge's context.
    judge : Judge
        Its context (the ``u`` are among its symbols).
    relations : list of (u, q, c)
        Each ``c`` a positive rational number, q-th-power free (as sympy keeps it).

    Returns
    -------
    bool or None
        True when the reduced numerator is zero (a − b = 0 exactly), False when it is not
        and every relation is irreducible (a prime q), else None.

    Examples
    --------
    >>> from symfilt.claims.compare import Judge
    >>> u = sympy.Symbol("u", positive=True)
    >>> j = Judge({u}, 0)
    >>> reduce_relations(j.pair(u**2 - 2)[0], j, [(u, 2, sympy.Integer(2))])
    True
    """
    p = pair_difference
    for u, q, c in relations:
        if not c.is_Rational or c <= 0:
            return None
        k = judge.symbols.index(u)
        acc: dict = {}
        for exps, coeff in p.to_dict().items():
            e = exps[k]
            key = exps[:k] + (e % q,) + exps[k + 1:]
            acc[key] = acc.get(key, 0) + coeff * sympy_to_fmpq(c ** (e // q))
        p = judge.ctx.from_dict({key: v for key, v in acc.items() if v != 0})
    if p.is_zero():
        return True
    return False if all(sympy.isprime(q) for _, q, _ in relations) and len(relations) == 1 else None


def sympy_to_fmpq(value: sympy.Rational):
    """A sympy Rational as a flint fmpq.

    Parameters
    ----------
    value : sympy.Rational

    Examples
    --------
    >>> sympy_to_fmpq(sympy.Rational(3, 4))
    3/4
    """
    import flint

    return flint.fmpq(int(value.p), int(value.q))
