"""Display forms of closed forms, the way an engineer writes them.

Three rewrites, all for display only (JSON never uses them; :func:`exact` turns a display form
back into the exact expression, and the tests check ``exact(readable(e)) == e``):

- one radical: ``1/(sqrt(C1)·sqrt(C2)·sqrt(R2)·sqrt(R1 + R_s))`` is written
  ``1/sqrt(C1·C2·R2·(R1 + R_s))``;
- grouped sums: a sum is written with the symbols its terms share pulled out, a pair of symbols
  that only ever appear as their sum kept together (``R1·R2 + R1·R3 + R2·R3 + R2·R_s + R3·R_s``
  is ``(R1 + R_s)·(R2 + R3) + R2·R3``); where the pulled-out group also divides the numerator
  it is divided into the sum (Q of a multiple-feedback stage reads
  ``sqrt(C1·R2·R3/C2)/(R2 + R3 + R2·R3/R1)``);
- parallel combinations ``a b/(a + b)`` as ``a || b`` (:func:`symfilt.export.common.parallel_display`).

Impedances as series and parallel combinations of the parts are in
:mod:`symfilt.export.impedance_form`.
"""

from __future__ import annotations

import functools

import sympy
from sympy.printing.precedence import PRECEDENCE, precedence

from symfilt.engine.polybridge import PolyContext, poly_to_sympy, smaller_than
from symfilt.engine.rational import Ratio, cancel_pair
from symfilt.export.common import Parallel, parallel_display
from symfilt.export.eng_numbers import engineering
from symfilt.model.circuit import S

#: Sums with more terms than this are printed as they are (grouping them reads no better).
GROUP_MAX_TERMS = 40


class Root(sympy.Function):
    """Display-only square root that keeps a product under one radical.

    sympy splits ``sqrt(C1*C2)`` of positive symbols into ``sqrt(C1)*sqrt(C2)``; ``Root``
    does not evaluate, so it prints as one radical. :func:`exact` gives the value back.

    Parameters
    ----------
    *args : sympy.Expr
        The radicand (one argument).

    Examples
    --------
    >>> C1, C2 = sympy.symbols("C1 C2", positive=True)
    >>> print(Root(C1 * C2), sympy.latex(Root(C1 * C2)))
    sqrt(C1*C2) \\sqrt{C_{1} C_{2}}
    """

    nargs = 1

    def _sympystr(self, printer):
        return f"sqrt({printer._print(self.args[0])})"

    def _latex(self, printer):
        return f"\\sqrt{{{printer._print(self.args[0])}}}"

    def _pretty(self, printer):
        return printer._print(sympy.Pow(self.args[0], sympy.S.Half, evaluate=False))


class Ordered(sympy.Function):
    """Display-only sum printed in the order given (positive terms first, fractions last).

    Parameters
    ----------
    *args : sympy.Expr
        The terms, none of them a sum.

    Examples
    --------
    >>> R1, R2, R3 = sympy.symbols("R1 R2 R3", positive=True)
    >>> print(Ordered(R2, R3, R2 * R3 / R1), sympy.latex(R1 * Ordered(R2, -R3)))
    R2 + R3 + R2*R3/R1 R_{1} \\left(R_{2} - R_{3}\\right)
    """

    precedence = PRECEDENCE["Add"]

    def _joined(self, show, left="(", right=")") -> str:
        out = ""
        for a in self.args:
            neg = a.could_extract_minus_sign()
            b = -a if neg else a
            text = show(b) if precedence(b) > PRECEDENCE["Add"] else f"{left}{show(b)}{right}"
            out += ("-" if neg else "") + text if not out else (" - " if neg else " + ") + text
        return out

    def _sympystr(self, printer):
        return self._joined(printer._print)

    def _latex(self, printer):
        return self._joined(printer._print, "\\left(", "\\right)")

    def _pretty(self, printer):
        from sympy.printing.pretty.stringpict import prettyForm

        out = None
        for a in self.args:
            neg = a.could_extract_minus_sign()
            form = printer._print(-a if neg else a)
            if precedence(-a if neg else a) <= PRECEDENCE["Add"]:
                form = prettyForm(*form.parens())
            if out is None:
                out = prettyForm(*form.left("-")) if neg else form
            else:
                out = prettyForm(*out.right(" - " if neg else " + ", form))
        out.binding = prettyForm.ADD
        return out


def ordered(terms):
    """A sum of ``terms`` shown as :class:`Ordered`: terms with a plus sign first, fractions last.

    Parameters
    ----------
    terms : iterable of sympy.Expr

    Examples
    --------
    >>> R1, R2, R3 = sympy.symbols("R1 R2 R3", positive=True)
    >>> print(ordered([R2 * R3 / R1, -R3, R2]))
    R2 - R3 + R2*R3/R1
    """
    terms = [u for t in terms for u in (t.args if isinstance(t, (sympy.Add, Ordered)) else (t,)) if u != 0]
    key = lambda t: (sympy.fraction(t)[1] != 1, t.could_extract_minus_sign())
    terms = sorted(terms, key=key)
    return terms[0] if len(terms) == 1 else Ordered(*terms)


def exact(display) -> sympy.Expr:
    """The exact expression a display form stands for (``Root`` and ``||`` evaluated).

    Parameters
    ----------
    display : sympy.Expr
        A form from :func:`readable` or :func:`symfilt.export.impedance_form.impedance_form`.

    Examples
    --------
    >>> R1, R2 = sympy.symbols("R1 R2", positive=True)
    >>> exact(Parallel(R1, R2) + Root(R1 * R2))
    sqrt(R1)*sqrt(R2) + R1*R2/(R1 + R2)
    """
    if not isinstance(display, sympy.Basic) or not display.args:
        return display
    args = [exact(a) for a in display.args]
    if isinstance(display, Root):
        return sympy.sqrt(args[0])
    if isinstance(display, Ordered):
        return sympy.Add(*args)
    if isinstance(display, Parallel):
        return sympy.Mul(*args) / sympy.Add(*[sympy.Mul(*args[:i], *args[i + 1:]) for i in range(len(args))])
    return display.func(*args)


def _shown(expr) -> bool:
    """True when ``expr`` already holds a display form (rewriting it again would change nothing)."""
    return expr.has(Root) or expr.has(Parallel)


@functools.lru_cache(maxsize=1024)
def readable(expr):
    """:func:`grouped_form` of ``expr`` with long numbers in engineering notation
    (:func:`symfilt.export.eng_numbers.engineering`).

    Parameters
    ----------
    expr : sympy.Expr or None
        The expression.

    Examples
    --------
    >>> R1, C1 = sympy.symbols("R1 C1", positive=True)
    >>> print(readable(1 / sympy.sqrt(C1 * R1)), readable(sympy.Rational(2000000, 4521)))
    1/sqrt(C1*R1) 442.4
    """
    return engineering(grouped_form(expr))


def grouped_form(expr):
    """An s-free closed form as an engineer writes it: one radical, grouped sums, ``||``.

    Parameters
    ----------
    expr : sympy.Expr or None
        The expression; one with ``s``, a number, None or a large one is returned as
        :func:`symfilt.export.common.parallel_display` leaves it.

    Returns
    -------
    sympy.Expr
        A display form equal to ``expr`` (:func:`exact` of it is ``expr``); its numbers are
        left exact.

    Examples
    --------
    >>> R1, R2, R3, Rs, C1, C2 = sympy.symbols("R1 R2 R3 R_s C1 C2", positive=True)
    >>> print(grouped_form(1 / sympy.sqrt(C1 * C2 * R2 * (R1 + Rs))))
    1/sqrt(C1*C2*R2*(R1 + R_s))
    >>> print(grouped_form(sympy.sqrt(C1 * R2 * R3 / C2) * R1 / (R1 * R2 + R1 * R3 + R2 * R3)))
    sqrt(C1*R2*R3/C2)/(R2 + R3 + R2*R3/R1)
    """
    if expr is None or not isinstance(expr, sympy.Expr) or expr.is_number or _shown(expr):
        return expr
    if expr.has(S) or not smaller_than(expr, 300):
        return parallel_display(expr)
    if isinstance(expr, sympy.Add) and any(sympy.fraction(t)[1] != 1 for t in expr.args):
        return sympy.Add(*[grouped_form(t) for t in expr.args])  # a sum of fractions stays one
    split = _radical_split(expr)
    if split is None:
        return parallel_display(expr)
    rational, radicand = split
    if radicand.is_number:  # sqrt(2), sqrt(pi): a number stays with the other numbers
        return _rational_form(rational, sympy.sqrt(radicand))
    rad_num, rad_den = sympy.fraction(radicand)
    inside = _rational_form(rad_den if rad_num == 1 else radicand)
    if rad_num != 1 and sympy.fraction(inside)[0] == 1:
        rad_num, inside = 1, sympy.fraction(inside)[1]  # the radicand's display form is 1/X
    if rad_num == 1:
        return _rational_form(rational) / Root(inside)
    return _rational_form(rational) * Root(inside)


def _radical_split(expr):
    """``expr = rational * sqrt(radicand)`` with both rational functions of the symbols, or None
    when it holds any other root (a nested one, a cube root)."""
    rational, radicand = [], []
    for f in sympy.Mul.make_args(expr):
        base, e = f.as_base_exp()
        if not e.is_Rational or e.q not in (1, 2) or (not base.is_number and _has_root(base)):
            return None
        if e.q == 1 or (base.is_number and not base.is_positive):
            rational.append(f)
            continue
        whole = e - sympy.Rational(1, 2) if e > 0 else e + sympy.Rational(1, 2)
        rational.append(base**whole)
        radicand.append(base if e > 0 else 1 / base)
    return sympy.Mul(*rational), sympy.Mul(*radicand)


def _has_root(expr) -> bool:
    return any(not p.exp.is_Integer for p in expr.atoms(sympy.Pow))


def _rational_form(r, scale=1):
    """``scale`` (a number) times a rational function of the symbols: ``||`` where one exists,
    else its sums grouped; the number stays in front (it is never multiplied into a sum)."""
    shown = parallel_display(r) * scale
    if shown.has(Parallel) or r.is_number:
        return shown
    try:
        lead, nf, df = _factors(r)
    except (sympy.PolynomialError, ValueError, TypeError):
        return shown
    scale = scale * lead
    nf, df = _signed(nf), _signed(df)
    df = [_divided(f, nf) if isinstance(f, sympy.Add) else f for f in df]
    nf = [grouped(f) if isinstance(f, sympy.Add) else f for f in nf]
    df = [grouped(f) if isinstance(f, sympy.Add) else f for f in df]
    coeff = scale * sympy.Mul(*[f for f in nf if f.is_number]) / sympy.Mul(*[f for f in df if f.is_number])
    out = sympy.Mul(*[f for f in nf if not f.is_number]) / sympy.Mul(*[f for f in df if not f.is_number])
    if coeff != 1:
        sums = any(isinstance(f, (sympy.Add, Ordered)) for f in sympy.Mul.make_args(out))
        # a number times one sum is multiplied out by sympy: keep that product unevaluated
        out = sympy.Mul(coeff, *sympy.Mul.make_args(out), evaluate=False) if sums else coeff * out
    return out if len(str(out)) <= len(str(r * scale)) + 8 else shown


def _factors(r):
    """``r = lead * prod(nf) / prod(df)``: the number and the irreducible factors (flint), kept
    apart so that no number is multiplied into a sum."""
    ctx = PolyContext([r])
    pair = flint_fraction(ctx, r)
    if pair is None:
        ratio = Ratio.from_sympy(*sympy.fraction(sympy.together(r)))
        num, den = ratio.num, ratio.den
        convert = lambda f: poly_to_sympy(f, ratio.symbols)
    else:
        num, den = cancel_pair(*pair)
        convert = ctx.to_sympy
    (cn, pn), (cd, pd) = num.factor(), den.factor()
    side = lambda fs: [convert(f) ** e for f, e in fs]
    return _rational(cn) / _rational(cd), side(pn), side(pd)


def _rational(c):
    """A flint integer or rational as a sympy Rational."""
    return sympy.Rational(int(c.p), int(c.q)) if hasattr(c, "q") else sympy.Integer(int(c))


def flint_fraction(ctx, expr, power: int = 1):
    """``expr**power`` as (numerator, denominator) flint polynomials of ``ctx``, read off its
    product of powers (no sympy ``together``); None when a factor is not a polynomial to a
    whole power (a root, a fraction inside a sum).

    Parameters
    ----------
    ctx : symfilt.engine.polybridge.PolyContext
        A context holding every symbol of ``expr``.
    expr : sympy.Expr
    power : int
        Raise to this power first (2 squares the half powers of a root away).

    Examples
    --------
    >>> x, y = sympy.symbols("x y", positive=True)
    >>> ctx = PolyContext([x, y])
    >>> [ctx.to_sympy(p) for p in flint_fraction(ctx, sympy.sqrt(x) / (x + y), 2)]
    [x, x**2 + 2*x*y + y**2]
    """
    num = den = ctx.to_flint(sympy.Integer(1))
    for f in sympy.Mul.make_args(expr):
        base, e = f.as_base_exp()
        k = e * power
        if not k.is_Integer or any(not q.exp.is_Integer or q.exp < 0 for q in base.atoms(sympy.Pow)):
            return None
        try:
            p = ctx.to_flint(base)
        except (sympy.PolynomialError, ValueError, TypeError):
            return None
        p = p ** abs(int(k))
        num, den = (num * p, den) if k > 0 else (num, den * p)
    return num, den


def _signed(factors) -> list:
    """Factors with each sum written with more plus than minus signs (the sign moved to a -1)."""
    out, sign = [], 1
    for f in factors:
        if isinstance(f, sympy.Add) and 2 * sum(t.could_extract_minus_sign() for t in f.args) > len(f.args):
            f, sign = -f, -sign
        out.append(f)
    return out if sign == 1 else [sympy.Integer(-1), *out]


def _divided(den_factor, num_factors: list):
    """A denominator sum ``g·A + B`` whose group ``g`` is a numerator factor, written
    ``A + B/g`` (``g`` taken out of the numerator list); else the sum unchanged."""
    form = grouped(den_factor)
    if not isinstance(form, (sympy.Add, Ordered)):
        return den_factor
    for term in _terms(form):
        parts = sympy.Mul.make_args(term)
        if not any(isinstance(f, (sympy.Add, Ordered)) for f in parts):
            continue  # only a group pulled out of two or more terms is divided in
        for g in parts:
            if g.is_number or g not in num_factors or not _flat(term / g):
                continue
            rest = ordered([t / g for t in _terms(form)])
            if len(str(rest)) > len(str(form)):
                continue
            num_factors.remove(g)
            return rest
    return den_factor


def _flat(e) -> bool:
    """True when every sum in the product ``e`` is a sum of plain products (no sum inside)."""
    sums = [f for f in sympy.Mul.make_args(e) if isinstance(f, (sympy.Add, Ordered))]
    return all(not t.has(sympy.Add, Ordered) for f in sums for t in _terms(f))


@functools.lru_cache(maxsize=1024)
def grouped(p):
    """A sum with the symbols its terms share pulled out, pairs seen only as their sum kept together (memoised).

    Parameters
    ----------
    p : sympy.Expr
        A polynomial in positive symbols with rational coefficients (anything else is returned
        as it is, and so is a sum of more than :data:`GROUP_MAX_TERMS` terms).

    Returns
    -------
    sympy.Expr
        The same polynomial, grouped where that prints no longer.

    Examples
    --------
    >>> R1, R2, R3, Rs = sympy.symbols("R1 R2 R3 R_s", positive=True)
    >>> print(grouped(R1 * R2 + R1 * R3 + R2 * R3 + R2 * Rs + R3 * Rs))
    (R1 + R_s)*(R2 + R3) + R2*R3
    """
    terms = sympy.Add.make_args(p)
    if len(terms) < 3 or len(terms) > GROUP_MAX_TERMS or p.has(S):
        return p
    try:
        ctx = PolyContext([p])
        f = ctx.to_flint(p)
    except (sympy.PolynomialError, ValueError, TypeError):
        return p
    atoms = {i: g for i, g in enumerate(ctx.symbols())}
    f = _merge_sums(f, atoms)
    out = _horner(f.to_dict(), atoms)
    return out if len(str(out)) <= len(str(p)) else p


def _merge_sums(f, atoms: dict):
    """Fold generator pairs that only appear as their sum (df/dx = df/dy) into one atom."""
    found = True
    while found:
        found = False
        live = [i for i in atoms if f.degrees()[i] > 0]
        for a in live:
            for b in live:
                if a < b and f.derivative(a) == f.derivative(b):
                    keep, drop = (b, a) if _fixture(atoms[a]) else (a, b)
                    atoms[keep] = sympy.Add(atoms[keep], atoms[drop])  # kept as one group
                    f = f.subs({f.context().names()[drop]: 0})
                    del atoms[drop]
                    found = True
                    break
            if found:
                break
    return f


def _fixture(atom) -> bool:
    return isinstance(atom, sympy.Symbol) and atom.name in ("R_s", "R_L", "C_L")


def _horner(terms: dict, atoms: dict):
    """Pull the atom shared by most terms out of the sum, recursively (a sum of negative
    terms shown as minus a positive one)."""
    if len(terms) <= 1:
        return sympy.Add(*[_monomial(m, c, atoms) for m, c in terms.items()])
    counts = {i: sum(1 for m in terms if m[i] > 0) for i in atoms}
    best = max(counts, key=lambda i: (counts[i], isinstance(atoms[i], sympy.Add), -i))
    content = _content(terms.values())
    if content != 1:
        inner = _horner({m: c / content for m, c in terms.items()}, atoms)
        return sympy.Mul(content, inner, evaluate=not isinstance(inner, (sympy.Add, Ordered)))
    if counts[best] < 2:
        return ordered([_monomial(m, c, atoms) for m, c in terms.items()])
    lift = min(m[best] for m in terms) if counts[best] == len(terms) else 1
    inner = {_minus(m, best, lift): c for m, c in terms.items() if m[best] >= lift}
    rest = {m: c for m, c in terms.items() if m[best] < lift}
    sign = -1 if all(c < 0 for c in inner.values()) else 1
    sign = sympy.Integer(sign)
    head = sign * atoms[best] ** lift * _horner({m: sign * c for m, c in inner.items()}, atoms)
    return head if not rest else ordered([head, *_terms(_horner(rest, atoms))])


def _content(coeffs):
    """The positive rational common to every coefficient (gcd of numerators over lcm of denominators)."""
    from math import gcd, lcm

    cs = [_rational(c) for c in coeffs]
    return sympy.Rational(gcd(*[int(c.p) for c in cs]), lcm(*[int(c.q) for c in cs]))


def _terms(form) -> tuple:
    return form.args if isinstance(form, Ordered) else sympy.Add.make_args(form)


def _minus(m: tuple, i: int, k: int) -> tuple:
    return tuple(e - k if j == i else e for j, e in enumerate(m))


def _monomial(m: tuple, c, atoms: dict):
    q = _rational(c)
    factors = [atoms[i] ** e for i, e in enumerate(m) if e]
    return sympy.Mul(q, *factors) if q != 1 else sympy.Mul(*factors)
