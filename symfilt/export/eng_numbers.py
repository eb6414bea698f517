"""Numbers in formulas written the way an engineer reads them, for display.

Once values are in (``--substitute``, ``--keep``) the exact rationals get long:
``531·s/26875000``. Display forms write each such number in engineering notation to four
significant digits (``19.76e-6·s``); a short exact number stays exact (``2``, ``1/4``,
``2·pi``, ``sqrt(2)/2``; the number under a root at most 12). The rule: a number stays exact when every rational in it has a
numerator of at most five digits and a denominator of at most 12 (the denominators a hand
derivation produces), or of at most five digits where it multiplies symbols
(``R_L/(4000·pi·C1·R_L - 1)``); otherwise it is shown as a decimal, plainly between 0.1 and 10 000
(``0.5814``, ``72.11``), else as mantissa times a power of ten that is a multiple of three
(``17.17e3``, ``3.391e-9``; LaTeX ``17.17 \\cdot 10^{3}``). A long number that a short
mantissa and a power of ten give exactly keeps its exactness in that form
(``64000000000·pi^3`` is ``64e9·pi^3``, 1/6400000000 is ``156.25e-12``). JSON always keeps the
exact value.
"""

from __future__ import annotations

import functools
import math

import sympy

from symfilt.model.circuit import S

#: Largest numerator (absolute) and denominator a number may have and stay exact.
EXACT_MAX_NUMERATOR = 99999
EXACT_MAX_DENOMINATOR = 12


def eng_text(x: float, digits: int = 4) -> str:
    """``x`` to ``digits`` significant digits: plain between 0.1 and 10 000, else engineering notation.

    Parameters
    ----------
    x : float
        The number.
    digits : int
        Significant digits.

    Examples
    --------
    >>> eng_text(0.58139), eng_text(17170.2), eng_text(3.3912e-9), eng_text(2.0e6)
    ('0.5814', '17.17e3', '3.391e-9', '2e6')
    >>> eng_text(1000000 / 1000001)  # not shown as a whole number it is not
    '0.999999'
    """
    if x == 0 or not math.isfinite(x):
        return repr(x) if not math.isfinite(x) else "0"
    for more in range(digits, 11):  # a rounding that reads as 1 (or 2, ...) gets more digits
        text = _digits(x, more)
        v = float(text)
        if v == x or v != round(v) or abs(v) > 10:
            return text
    return text


def _digits(x: float, digits: int) -> str:
    if 0.1 <= abs(x) < 1e4:
        return f"{x:.{digits}g}"
    k = 3 * math.floor(math.log10(abs(x)) / 3)
    m = float(f"{x / 10 ** k:.{digits}g}")
    if abs(m) >= 1000:  # rounding carried into the next power
        m, k = m / 1000, k + 3
    text = f"{m:.{digits}g}"
    return f"{text}e{k}"


class Eng(sympy.Symbol):
    """A number shown in engineering notation (display only; it behaves as a symbol).

    Parameters
    ----------
    value : float
        The value (positive; a negative number is shown as ``-1 * Eng(|x|)``).
    text : str, optional
        The text to show (default :func:`eng_text` of the value).

    Examples
    --------
    >>> e = Eng(17170.2)
    >>> print(e, sympy.latex(e), float(e.value))
    17.17e3 17.17 \\cdot 10^{3} 17170.2
    """

    def __new__(cls, value: float, text: str | None = None):
        obj = super().__new__(cls, text or eng_text(value), positive=True)
        obj.value = value
        return obj

    def __getnewargs_ex__(self):
        return (self.value, self.name), {}

    def _sympystr(self, printer):
        return self.name

    def _latex(self, printer):
        mant, _, exp = self.name.partition("e")
        return mant if not exp else f"{mant} \\cdot 10^{{{exp}}}"

    def _pretty(self, printer):
        from sympy.printing.pretty.stringpict import prettyForm

        return prettyForm(self.name)


def _exact_enough(x, strict: bool) -> bool:
    """True for a number short enough to keep exact (small rationals, pi, their roots); a
    coefficient of symbols (not ``strict``) may have a denominator as long as its numerator."""
    top = EXACT_MAX_DENOMINATOR if strict else EXACT_MAX_NUMERATOR
    for p in x.atoms(sympy.Pow):
        if not p.exp.is_Integer and p.base.is_Rational and max(abs(p.base.p), p.base.q) > EXACT_MAX_DENOMINATOR:
            return False  # sqrt(2) stays, sqrt(63591) is a decimal
    for r in x.atoms(sympy.Rational):
        if abs(r.p) > EXACT_MAX_NUMERATOR or r.q > top:
            if not _exponent_only(x, r):
                return False
    return True


def _exponent_only(x, r) -> bool:
    """True when the rational ``r`` appears in ``x`` only as an exponent (the 1/2 of a root)."""
    return all(p.exp == r for p in x.atoms(sympy.Pow) if r in p.args) and r.q == 2 and abs(r.p) == 1


#: Most significant digits of a rational written exactly in engineering notation (64e9, 156.25e-12).
EXACT_DIGITS = 6


def exact_eng(r):
    """An :class:`Eng` showing the positive rational ``r`` exactly (``64000000000`` as ``64e9``),
    or None when no text of at most :data:`EXACT_DIGITS` significant digits is exact.

    Parameters
    ----------
    r : sympy.Rational

    Examples
    --------
    >>> print(exact_eng(sympy.Integer(64000000000)), exact_eng(sympy.Rational(1, 6400000000)))
    64e9 156.25e-12
    >>> exact_eng(sympy.Rational(1, 3)) is None
    True
    """
    if not r.is_Rational or r <= 0:
        return None
    for digits in range(1, EXACT_DIGITS + 1):
        text = _digits(float(r), digits)
        mant, _, exp = text.partition("e")
        if "e" in mant or "+" in text:
            continue  # too few digits for the mantissa's whole part
        if sympy.Rational(mant) * sympy.Integer(10) ** int(exp or 0) == r:
            return Eng(float(r), text)
    return None


def _shown(x, strict: bool = True):
    if _exact_enough(x, strict):
        return x
    from symfilt.export.readable import exact

    coeff, rest = x.as_coeff_Mul()
    if rest != 1 and _exact_enough(rest, strict):  # 64000000000·pi^3: the integer exactly, as 64e9·pi^3
        shown = exact_eng(abs(coeff))
        if shown is not None:
            return sympy.Mul(shown if coeff > 0 else -shown, rest)
    v = float(exact(x))  # a display root or parallel of numbers evaluated
    return Eng(v) if v > 0 else -Eng(-v) if v < 0 else sympy.Integer(0)


def _numeric_ratio(expr):
    """A ratio of polynomials in s with number coefficients: the denominator's lowest term made
    1, each side in descending powers of s, coefficients shown; None when ``expr`` is not such
    a ratio."""
    from symfilt.export.readable import Ordered

    try:
        num, den = (sympy.Poly(p, S) for p in sympy.fraction(sympy.together(expr)))
    except sympy.PolynomialError:
        return None
    low = [c for c in reversed(den.all_coeffs()) if c != 0][0]  # the denominator starts at 1
    num, den = num * (1 / low), den * (1 / low)

    def side(p):
        terms = [sympy.Mul(_shown(c), S**k, evaluate=False) if k and c != 1 else (S**k if k else _shown(c))
                 for (k,), c in p.terms() if c != 0]
        return terms[0] if len(terms) == 1 else Ordered(*terms)

    top = side(num)
    return top if den.as_expr() == 1 else sympy.Mul(top, sympy.Pow(side(den), -1, evaluate=False), evaluate=False)


@functools.lru_cache(maxsize=2048)
def engineering(expr):
    """``expr`` with each long number replaced by its engineering-notation display (memoised).

    Parameters
    ----------
    expr : sympy.Expr or None
        Any expression (display forms from :mod:`symfilt.export.readable` included);
        exponents are never touched.

    Returns
    -------
    sympy.Expr
        The same expression for display; numbers rounded to four significant digits.

    Examples
    --------
    >>> s = sympy.Symbol("s")
    >>> print(engineering(sympy.Rational(25, 43)), engineering(1 / (sympy.Rational(531, 26875000) * s + 1)))
    0.5814 1/(19.76e-6*s + 1)
    >>> print(engineering(2000000 * sympy.sqrt(1507) / 4521), engineering(sympy.sqrt(2) / 2))
    17.17e3 sqrt(2)/2
    """
    if expr is None or not isinstance(expr, sympy.Basic):
        return expr
    if isinstance(expr, sympy.Expr) and expr.is_number and not expr.has(sympy.I):
        return _shown(expr)
    if isinstance(expr, sympy.Expr) and expr.free_symbols == {S} and type(expr).__module__.startswith("sympy") \
            and not _exact_enough(expr, True):
        shown = _numeric_ratio(expr)
        if shown is not None:
            return shown
    if isinstance(expr, sympy.Pow):
        base = engineering(expr.base)
        return expr if base == expr.base else sympy.Pow(base, expr.exp, evaluate=False)
    if isinstance(expr, sympy.Mul):
        nums = [a for a in expr.args if a.is_number]
        rest = [engineering(a) for a in expr.args if not a.is_number]
        if (not nums or _exact_enough(sympy.Mul(*nums), not rest)) and \
                all(r == a for r, a in zip(rest, [a for a in expr.args if not a.is_number])):
            return expr  # nothing shown differently
        lead = _shown(sympy.Mul(*nums), strict=not rest) if nums else sympy.Integer(1)
        if isinstance(lead, Eng) or any(isinstance(a, sympy.Add) for a in rest):
            heads = lead.args if isinstance(lead, sympy.Mul) else (lead,)
            return sympy.Mul(*[h for h in heads if h != 1], *rest, evaluate=False) if rest else lead
        return sympy.Mul(lead, *rest)
    if not expr.args or isinstance(expr, Eng):
        return expr
    if isinstance(expr, sympy.Add):
        return _sum(expr)
    return expr.func(*[engineering(a) for a in expr.args])


def _sum(expr):
    """A sum with its number terms last (``101·R_s + 1.058e6``, not ``1.058e6 + 101·R_s``)."""
    from symfilt.export.readable import Ordered

    terms = [engineering(a) for a in expr.as_ordered_terms()]
    if all(t == a for t, a in zip(terms, expr.as_ordered_terms())):
        return expr  # nothing to show differently: the sum keeps its own order
    numbers = [t for t in terms if isinstance(t, Eng) or (-t).is_Number or isinstance(-t, Eng) or t.is_Number]
    if not numbers or len(numbers) == len(terms):
        return sympy.Add(*terms, evaluate=False)
    return Ordered(*[t for t in terms if t not in numbers], *numbers)
