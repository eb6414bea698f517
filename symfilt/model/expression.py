"""The tie expression reader: a part's value written as ``R/2``, ``2*C1``, ``(R1 + R2)/2``.

A small recursive-descent parser of its own (nothing is evaluated, no ``eval``, no
``sympify`` of user text); the result is an exact sympy expression whose names are
plain symbols, resolved by :mod:`symfilt.model.ties`::

    expr   := term (("+" | "-") term)*
    term   := unary (("*" | "/") unary)*
    unary  := ("+" | "-") unary | atom
    atom   := number | name | "(" expr ")"

A *number* starts with a digit or a point and is read by
:func:`~symfilt.model.values.parse_value` (``2``, ``0.5``, ``10k``, ``4k7``, ``2.2e-9``;
no unit and no space inside); a *name* starts with a letter. So ``2*C`` is two times C,
and ``2C`` is refused (write ``2*C``).
"""

from __future__ import annotations

import re

import sympy

from symfilt.errors import CircuitError, ValueParseError
from symfilt.model.values import parse_value

#: Longest tie expression, in characters.
MAX_TIE_CHARS = 120
#: Deepest nesting of parentheses in a tie expression.
MAX_TIE_DEPTH = 12

_TOKEN = re.compile(r"\s*(?:(?P<num>(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?(?:[A-Za-zµμ][0-9A-Za-zµμ]*)?)"
                    r"|(?P<name>[A-Za-z][A-Za-z0-9_]*)|(?P<op>[-+*/()]))", re.ASCII)
_WORD = re.compile(r"[A-Za-z][A-Za-z0-9_]*", re.ASCII)
_NAME_START = re.compile(r"(?:^|[\s+\-*/()])[A-Za-z]", re.ASCII)
_HELP = "write + - * / and parentheses over numbers and names, e.g. R/2, 2*C1 or (R1 + R2)/2"


def tokens(text: str, where: str) -> list[tuple[str, str]]:
    """The tokens of a tie expression: ``(kind, text)`` with kind ``num``, ``name`` or ``op``.

    Parameters
    ----------
    text : str
        The expression.
    where : str
        The place named in error messages.

    Examples
    --------
    >>> tokens("2.2e-9*k + R1/2", "x")
    [('num', '2.2e-9'), ('op', '*'), ('name', 'k'), ('op', '+'), ('name', 'R1'), ('op', '/'), ('num', '2')]
    """
    out, i = [], 0
    body = text.rstrip()
    while i < len(body):
        m = _TOKEN.match(body, i)
        if m is None or m.end() == i:
            j = i + len(body[i:]) - len(body[i:].lstrip())
            raise CircuitError(where, f"the value {_shown(text)} has {_shown(body[j])} at position {j + 1}, "
                               "which a tie expression does not take", _HELP)
        kind = m.lastgroup
        out.append((kind, m[kind]))
        i = m.end()
    return out


def _shown(text: str) -> str:
    return repr(text if len(text) <= 40 else text[:40] + "...")


def tie_text(value) -> str | None:
    """The expression text when a part's value is a tie, else None (a plain value).

    A value that :func:`~symfilt.model.values.parse_value` reads is a plain value,
    except a bare word such as ``R47`` or ``k1`` (an RKM code, but also a name): it
    is returned here, and the circuit decides (a name of the circuit wins).

    Parameters
    ----------
    value : object
        The value as given.

    Examples
    --------
    >>> tie_text("R/2"), tie_text("4k7"), tie_text("R47"), tie_text(2)
    ('R/2', None, 'R47', None)
    """
    if not isinstance(value, str):
        return None
    body = " ".join(value.split())
    try:
        parse_value(body)
    except ValueParseError:
        pass
    else:
        return body if _WORD.fullmatch(body) else None
    try:
        found = tokens(body, "value")
    except CircuitError:  # a character no expression has: a tie only when a name stands on its own
        return body if _NAME_START.search(body) else None
    if any(kind != "num" for kind, _t in found):
        return body
    return None


def rkm_value(text: str) -> sympy.Rational | None:
    """The value of a bare word that is also an RKM code (``R47`` is 0.47), else None.

    Parameters
    ----------
    text : str
        A tie's text.

    Examples
    --------
    >>> rkm_value("R47"), rkm_value("R"), rkm_value("R/2")
    (47/100, None, None)
    """
    if not _WORD.fullmatch(text):
        return None
    try:
        return parse_value(text)
    except ValueParseError:
        return None


def parse_tie(text: str, where: str = "value") -> tuple[sympy.Expr, tuple[str, ...]]:
    """Read a tie expression exactly: the expression (names as plain symbols) and its names.

    Parameters
    ----------
    text : str
        The expression, at most :data:`MAX_TIE_CHARS` characters.
    where : str
        The place named in error messages.

    Raises
    ------
    CircuitError
        For a malformed expression or a division by zero.

    Examples
    --------
    >>> parse_tie("R/2")
    (R/2, ('R',))
    >>> parse_tie("(R1 + 4k7)*k")
    (k*(R1 + 4700), ('R1', 'k'))
    >>> parse_tie("2*(R")
    Traceback (most recent call last):
    ...
    symfilt.errors.CircuitError: value: the value '2*(R' ends before the expression is complete, write + - * / and parentheses over numbers and names, e.g. R/2, 2*C1 or (R1 + R2)/2
    """
    if len(text) > MAX_TIE_CHARS:
        raise CircuitError(where, f"the value is {len(text)} characters long, over the limit of {MAX_TIE_CHARS}",
                           "shorten the expression, or add a parameter for part of it")
    reader = _Reader(tokens(text, where), text, where)
    expr = reader.expr(0)
    if reader.i < len(reader.toks):
        raise CircuitError(where, f"the value {_shown(text)} has {_shown(reader.toks[reader.i][1])} where an "
                           "operator or the end should be", _HELP)
    names = tuple(dict.fromkeys(t for kind, t in reader.toks if kind == "name"))
    return expr, names


class _Reader:
    """Recursive descent over the tokens; builds exact sympy expressions."""

    def __init__(self, toks, text: str, where: str) -> None:
        self.toks, self.text, self.where, self.i = toks, text, where, 0

    def _peek(self):
        return self.toks[self.i] if self.i < len(self.toks) else (None, "")

    def _fail(self, what: str):
        raise CircuitError(self.where, f"the value {_shown(self.text)} {what}", _HELP)

    def expr(self, depth: int) -> sympy.Expr:
        if depth > MAX_TIE_DEPTH:
            self._fail(f"nests parentheses more than {MAX_TIE_DEPTH} deep")
        out = self.term(depth)
        while self._peek() in (("op", "+"), ("op", "-")):
            op = self.toks[self.i][1]
            self.i += 1
            right = self.term(depth)
            out = out + right if op == "+" else out - right
        return out

    def term(self, depth: int) -> sympy.Expr:
        out = self.unary(depth)
        while self._peek() in (("op", "*"), ("op", "/")):
            op = self.toks[self.i][1]
            self.i += 1
            right = self.unary(depth)
            if op == "/" and right == 0:
                self._fail("divides by zero")
            out = out * right if op == "*" else out / right
        return out

    def unary(self, depth: int) -> sympy.Expr:
        kind, text = self._peek()
        if (kind, text) in (("op", "+"), ("op", "-")):
            self.i += 1
            value = self.unary(depth + 1)
            return -value if text == "-" else value
        return self.atom(depth)

    def atom(self, depth: int) -> sympy.Expr:
        kind, text = self._peek()
        if kind is None:
            self._fail("ends before the expression is complete")
        self.i += 1
        if kind == "num":
            try:
                return parse_value(text, where=self.where)
            except ValueParseError:
                hint = f" (a product is written with *, e.g. {_split(text)})" if _split(text) else ""
                self._fail(f"has the number {_shown(text)}, which is not understood{hint}")
        if kind == "name":
            return sympy.Symbol(text)
        if text == "(":
            inner = self.expr(depth + 1)
            if self._peek() != ("op", ")"):
                self._fail("ends before the expression is complete" if self.i >= len(self.toks)
                           else "has an unclosed parenthesis")
            self.i += 1
            return inner
        self._fail(f"has {_shown(text)} where a number or a name should be")


def _split(text: str) -> str:
    """``2C`` -> ``2*C`` for the hint, when the text is a number followed by a name."""
    m = re.fullmatch(r"([0-9.]+)([A-Za-z][A-Za-z0-9_]*)", text)
    return f"{m[1]}*{m[2]}" if m else ""
