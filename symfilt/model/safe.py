"""Values into sympy without ever reading text as code.

``sympy.sympify`` parses a string with Python's ``eval``; symfilt never calls it on text.
Every conversion of an outside value into a sympy object goes through :func:`as_sympy`,
which takes sympy objects and numbers as they are and refuses text (text is read by the
safe readers only: :func:`symfilt.model.values.parse_value` for values,
:mod:`symfilt.model.expression` for ties, :func:`symfilt.claims.parse.parse_claim` for
formulas). ``tests/test_safety.py`` checks that no other module calls ``sympify``,
``parse_expr``, ``eval`` or ``exec``.

>>> as_sympy(3), as_sympy(0.5)
(3, 0.500000000000000)
"""

from __future__ import annotations

from fractions import Fraction

import sympy

from symfilt.errors import ArgumentTypeError, UsageError

__all__ = ["as_sympy", "require", "require_budget"]


def as_sympy(value: object, where: str = "expression") -> sympy.Basic:
    """A sympy object for a sympy object or a number; text and other types are refused.

    Parameters
    ----------
    value : sympy.Basic, int, float, fractions.Fraction
        The value; a ``bool`` is not a number here.
    where : str
        The argument's name for the message.

    Returns
    -------
    sympy.Basic

    Raises
    ------
    UsageError
        For text (never evaluated) or a value of another type.

    Examples
    --------
    >>> as_sympy(sympy.Symbol("R1") + 1)
    R1 + 1
    >>> as_sympy("__import__('os')", "expr")
    Traceback (most recent call last):
    ...
    symfilt.errors.UsageError: expr: text is not read as a formula here (it would be evaluated), read it with symfilt.parse_claim(text, symbols) and pass the expression
    """
    if isinstance(value, sympy.Basic):
        return value
    if isinstance(value, str):
        raise UsageError(where, "text is not read as a formula here (it would be evaluated)",
                         "read it with symfilt.parse_claim(text, symbols) and pass the expression")
    if isinstance(value, bool) or not isinstance(value, (int, float, Fraction)):
        raise UsageError(where, f"expected a sympy expression or a number, got {type(value).__name__}",
                         "pass a sympy expression, an int, a float or a Fraction")
    if isinstance(value, Fraction):
        return sympy.Rational(value.numerator, value.denominator)
    return sympy.sympify(value, strict=True)


def require(value: object, kind: type, where: str, fix: str = "") -> None:
    """Raise :class:`~symfilt.errors.ArgumentTypeError` unless ``value`` is a ``kind``.

    Parameters
    ----------
    value : object
        The argument.
    kind : type
        The type it must have.
    where : str
        The function and argument, for the message (``"analyse circuit"``).
    fix : str
        How to get one (default: "pass a <kind>").

    Examples
    --------
    >>> require(3, int, "f x")
    >>> require("x", int, "f x")
    Traceback (most recent call last):
    ...
    symfilt.errors.ArgumentTypeError: f x: expected a int, got str, pass a int
    """
    if not isinstance(value, kind):
        raise ArgumentTypeError(where, f"expected a {kind.__name__}, got {type(value).__name__}",
                                fix or f"pass a {kind.__name__}")


def require_budget(max_terms: object, where: str) -> None:
    """Raise unless ``max_terms`` is None or a whole number of at least 10.

    Parameters
    ----------
    max_terms : object
    where : str

    Examples
    --------
    >>> require_budget(None, "derive"); require_budget(1000, "derive")
    >>> require_budget("lots", "derive")
    Traceback (most recent call last):
    ...
    symfilt.errors.ArgumentTypeError: derive max_terms: expected a whole number of terms, got str, pass an int of 10 or more
    """
    if max_terms is None:
        return
    if isinstance(max_terms, bool) or not isinstance(max_terms, int):
        raise ArgumentTypeError(f"{where} max_terms", f"expected a whole number of terms, got {type(max_terms).__name__}",
                                "pass an int of 10 or more")
    if max_terms < 10:
        raise UsageError(f"{where} max_terms", f"{max_terms} is under 10", "pass an int of 10 or more")

