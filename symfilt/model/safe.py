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

from symfilt.errors import UsageError

__all__ = ["as_sympy"]


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
