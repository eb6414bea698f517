"""Names and limits shared by the plain-text and LaTeX readers of a claim.

The limits (length, nesting depth, exponent, number size, expanded size) each end
in a :class:`~symfilt.errors.ClaimError` naming them.

Examples
--------
>>> import sympy
>>> lookup_name("R_1", {"R1": sympy.Symbol("R1")})
R1
"""

from __future__ import annotations

import re
from typing import Mapping

import sympy

from symfilt.errors import ClaimError

MAX_LENGTH = 5000  # characters in a claim
MAX_DEPTH = 100  # nesting of brackets and operators
MAX_EXPONENT = 64  # largest |exponent|, whole or half-integer
MAX_DIGITS = 4000  # digits a number may have (under Python's 4300-digit limit of int to text)
MAX_TERMS = 10**6  # estimated terms once brought over a common denominator
MAX_DEGREE = 256  # estimated total degree once brought over a common denominator
MAX_CLAIM_BYTES = 200 * 10**6  # estimated memory of the expanded claim
DIAGNOSE_TERMS = 1000  # a differing claim larger than this is not diagnosed (the diagnosis works in sympy)
MAX_LATEX_TOKENS = 400  # sympy's LaTeX parser (Earley) needs about 10-25 ms per token

S = sympy.Symbol("s")
GREEK = frozenset(
    "alpha beta gamma delta epsilon zeta eta theta kappa lambda mu nu xi rho sigma "
    "tau upsilon phi chi psi omega pi".split()
)
PLAIN_HELP = "use the circuit's symbols, s, j or I, w or omega, pi, sqrt(), + - * / ^ || and parentheses"


def lookup_name(name: str, table: Mapping[str, sympy.Symbol]) -> sympy.Expr | None:
    """Meaning of a name: a known symbol first, then the constants, then R_1 -> R1.

    Parameters
    ----------
    name : str
        The name as written in the claim.
    table : Mapping[str, sympy.Symbol]
        The names the claim may use.

    Returns
    -------
    sympy.Expr or None
        The symbol or constant (``w`` is s/j), or None when unknown.

    Examples
    --------
    >>> lookup_name("w", {})
    -I*s
    """
    if name in table:
        return table[name]
    if name in ("j", "I"):
        return sympy.I
    if name in ("pi", "π"):
        return sympy.pi
    if name in ("w", "omega", "ω"):
        return table.get("s", S) / sympy.I  # s = j w
    if name == "s":
        return S
    match = re.fullmatch(r"([A-Za-z]+)_([A-Za-z0-9]+)", name)
    if match:
        for candidate in (match[1] + match[2], f"{match[1]}_{match[2]}"):
            if candidate in table:
                return table[candidate]
    return None


def unknown_name(name: str, table: Mapping[str, sympy.Symbol], where: str) -> ClaimError:
    """The error for a name the claim may not use, listing the known ones.

    Parameters
    ----------
    name : str
        The unknown name.
    table : Mapping[str, sympy.Symbol]
        The names the claim may use.
    where : str
        Where the claim came from.

    Returns
    -------
    ClaimError
        The error to raise.

    Examples
    --------
    >>> str(unknown_name("X", {}, "claim")).split(",")[0]
    "claim: unknown name 'X' (known symbols: none)"
    """
    known = ", ".join(sorted(table)) or "none"
    return ClaimError(where, f"unknown name '{name}' (known symbols: {known})", PLAIN_HELP)


def _digits(number: sympy.Rational) -> int:
    """Decimal digits of numerator and denominator, from their bit lengths (no text made)."""
    return sum(abs(int(x)).bit_length() * 30103 // 100000 + 1 for x in (number.p, number.q))


def checked_power(base: sympy.Expr, exp: sympy.Expr, where: str, limit: int | None = MAX_EXPONENT) -> sympy.Expr:
    """base**exp with the exponent and number-size limits.

    Parameters
    ----------
    base, exp : sympy.Expr
        The base and the (whole or half-integer) exponent.
    where : str
        Where the claim came from, for error messages.
    limit : int or None
        Largest |exponent|; None when the exponent was not written by the user (a
        parser's collected product such as ``s s s``) and was checked where written.

    Returns
    -------
    sympy.Expr
        The power.

    Examples
    --------
    >>> import sympy
    >>> checked_power(sympy.Integer(2), sympy.Integer(3), "claim")
    8
    """
    if not exp.is_Rational:
        raise ClaimError(where, f"the exponent '{exp}' is not a number", "use exponents such as 2, -1 or 1/2")
    if (2 * exp).q != 1:
        raise ClaimError(where, f"the exponent {exp} is not a whole or half-integer number",
                         "use exponents such as 2, -1 or 1/2")
    if limit is not None and abs(exp) > limit:
        raise ClaimError(where, f"the exponent {exp} is over the limit of {limit}",
                         "write the claim with smaller powers")
    if base == 0 and exp < 0:
        raise ClaimError(where, "the claim divides by zero", "check the denominators")
    coeff = base.as_coeff_Mul()[0]
    if coeff.is_Rational and _digits(coeff) * abs(exp) > MAX_DIGITS:
        raise ClaimError(where, f"a number in the claim would have more than {MAX_DIGITS} digits",
                         "write the claim with smaller numbers")
    return base**exp


def parallel(a: sympy.Expr, b: sympy.Expr) -> sympy.Expr:
    """The parallel combination a || b = a*b/(a + b).

    Parameters
    ----------
    a, b : sympy.Expr
        The two impedances.

    Returns
    -------
    sympy.Expr
        Their parallel combination.

    Examples
    --------
    >>> import sympy
    >>> parallel(sympy.Integer(2), sympy.Integer(2))
    1
    """
    # 1/(1/a + 1/b), not a*b/(a + b): each side appears once, so a chain of n parallels stays
    # a tree of n leaves (a*b/(a + b) doubles every level: 2**n nodes for sympy to walk)
    if a == 0 or b == 0:
        return sympy.Integer(0)
    return 1 / (1 / a + 1 / b)


class _Size(tuple):
    """(terms, degree, bits) of a polynomial, upper estimates: how much it holds once expanded."""

    @staticmethod
    def of(terms: int, degree: int, bits: int) -> "_Size":
        return _Size((min(terms, _CAP), min(degree, _CAP), min(bits, _CAP)))

    def times(self, other: "_Size") -> "_Size":
        return _Size.of(self[0] * other[0], self[1] + other[1], self[2] + other[2] + _log2(min(self[0], other[0])))

    def plus(self, other: "_Size") -> "_Size":
        if not self[0] or not other[0]:
            return self if other[0] == 0 else other
        return _Size.of(self[0] + other[0], max(self[1], other[1]), max(self[2], other[2]) + 1)

    def power(self, k: int) -> "_Size":
        return _Size.of(_multiset(self[0], k, _CAP), k * self[1], k * (self[2] + _log2(self[0])))


def _log2(n: int) -> int:
    """ceil(log2 n) for n >= 1 (0 for 0 and 1)."""
    return max(0, int(n) - 1).bit_length()


_CAP = 10**12
_ONE = _Size((1, 0, 0))


def _estimate(expr: sympy.Expr) -> tuple[_Size, _Size]:
    """Upper estimates of (numerator, denominator) over a common denominator: terms, degree, bits."""
    if expr.is_Rational:
        return _Size.of(1, 0, _log2(abs(int(expr.p)))), _Size.of(1, 0, _log2(int(expr.q)))
    if expr.is_Atom or not expr.args:
        return _Size.of(1, 1, 0), _ONE
    if expr.is_Add or expr.is_Mul:
        num, den = (_Size.of(0, 0, 0), _ONE) if expr.is_Add else (_ONE, _ONE)
        for arg in expr.args:
            n, d = _estimate(arg)
            num = num.times(d).plus(n.times(den)) if expr.is_Add else num.times(n)
            den = den.times(d)
        return num, den
    if expr.is_Pow and expr.exp.is_Rational:
        n, d = _estimate(expr.base)
        k = max(1, -(-abs(expr.exp.p) // expr.exp.q))
        grown = (n.power(k), d.power(k))
        return grown[::-1] if expr.exp < 0 else grown
    sizes = [_estimate(a) for a in expr.args]  # a function: as large as its arguments, counted once
    return max((n for n, _ in sizes), default=_ONE), max((d for _, d in sizes), default=_ONE)


def _multiset(terms: int, k: int, cap: int) -> int:
    """Number of monomials of (t terms)**k, binomial(t + k - 1, k), stopped past cap."""
    count = 1
    for i in range(1, k + 1):
        count = count * (terms - 1 + i) // i
        if count > cap:
            return cap + 1
    return count


def claim_size(expr: sympy.Expr) -> tuple[int, int, int]:
    """(terms, degree, digits) the larger of a claim's numerator and denominator may reach, estimated.

    Parameters
    ----------
    expr : sympy.Expr
        A claim.

    Returns
    -------
    tuple of int
        Upper estimates: number of terms, total degree, decimal digits of a coefficient.

    Examples
    --------
    >>> import sympy
    >>> s = sympy.Symbol("s")
    >>> claim_size((1 + s) ** 4)
    (5, 4, 3)
    """
    num, den = _estimate(expr)
    terms, degree, bits = (max(a, b) for a, b in zip(num, den))
    return terms, degree, -(-bits * 30103 // 100000)


def check_size(expr: sympy.Expr, where: str) -> sympy.Expr:
    """The claim itself, once checked finite and within the size limits when expanded.

    The limits are checked on estimates made from the expression's tree, before anything
    is expanded: terms (``MAX_TERMS``), total degree (``MAX_DEGREE``), digits of a
    coefficient (``MAX_DIGITS``) and the memory all of it takes (``MAX_CLAIM_BYTES``).

    Parameters
    ----------
    expr : sympy.Expr
        The claim read.
    where : str
        Where the claim came from, for error messages.

    Returns
    -------
    sympy.Expr
        ``expr`` unchanged.

    Examples
    --------
    >>> import sympy
    >>> check_size(sympy.Symbol("R1"), "claim")
    R1
    >>> check_size((1 + sympy.Symbol("s")) ** 4096, "claim")
    Traceback (most recent call last):
    ...
    symfilt.errors.ClaimError: claim: the claim would reach degree 4096 when expanded, over the limit of 256, write it with fewer or smaller powers
    """
    if expr.has(sympy.zoo, sympy.nan, sympy.oo, -sympy.oo):
        raise ClaimError(where, "the claim divides by zero", "check the denominators")
    terms, degree, digits = claim_size(expr)
    fix = "write it with fewer or smaller powers"
    if terms > MAX_TERMS:
        raise ClaimError(where, f"the claim would expand to more than {MAX_TERMS} terms", fix)
    if degree > MAX_DEGREE:
        raise ClaimError(where, f"the claim would reach degree {degree} when expanded, over the limit of {MAX_DEGREE}", fix)
    if digits > MAX_DIGITS:
        raise ClaimError(where, f"a coefficient of the claim would have about {digits} digits when expanded, "
                         f"over the limit of {MAX_DIGITS}", fix + " and smaller numbers")
    need = terms * (2 + -(-digits // 19) + -(-len(expr.free_symbols) // 4)) * 8
    if need > MAX_CLAIM_BYTES:
        raise ClaimError(where, f"the claim would take about {need // 10**6} MB when expanded, over the limit of "
                         f"{MAX_CLAIM_BYTES // 10**6} MB", fix)
    return expr


def strip_lhs(text: str, where: str) -> str:
    """The text after a single ``=`` (the left-hand side dropped), or all of it.

    Parameters
    ----------
    text : str
        The claim.
    where : str
        Where the claim came from, for error messages.

    Returns
    -------
    str
        The right-hand side.

    Examples
    --------
    >>> strip_lhs("H(s) = 1/R1", "claim")
    ' 1/R1'
    """
    equals = [m.start() for m in re.finditer(r"(?<![=<>!])=(?!=)", text)]
    if len(equals) > 1:
        raise ClaimError(where, "the claim has more than one '='", "give one formula, optionally after 'H(s) ='")
    return text[equals[0] + 1:] if equals else text
