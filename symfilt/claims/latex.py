"""The LaTeX route of a claim: tokenised here, parsed by sympy (lark), walked by a whitelist.

The text is tokenised into placeholders for the circuit's symbols and numbers,
re-emitted in a canonical form for sympy's LaTeX parser (lark backend), and the
parser's result is walked by a whitelist that puts the symbols back.

Examples
--------
>>> import sympy
>>> R1 = sympy.Symbol("R1")
>>> parse_latex_claim(r"\\frac{1}{R_{1}}", {"R1": R1}, "claim")
1/R1
"""

from __future__ import annotations

import itertools
import re
from typing import Any, Mapping

import sympy

from symfilt.claims.limits import GREEK, MAX_DEPTH, MAX_LATEX_TOKENS, checked_power, lookup_name, unknown_name
from symfilt.errors import ClaimError

_COMMAND = re.compile(r"\\([A-Za-z]+|.)", re.S)
_WORD_COMMANDS = frozenset({"mathrm", "text", "mathit", "operatorname", "textrm", "rm", "mathsf"})
_SKIP_COMMANDS = frozenset({"left", "right", "big", "Big", "bigl", "bigr", "Bigl", "Bigr", "quad",
                            "qquad", "displaystyle", ",", ";", ":", "!", " "})
_CLOSER = {"(": ")", "[": "]", "{": "}"}
LATEX_HELP = r"use \frac{}{}, \cdot, \sqrt{}, \left( \right), \parallel, \omega, \pi and the circuit's symbols"


class _LatexReader:
    """Tokenise LaTeX into atoms (placeholders for symbols and numbers) and operators."""

    def __init__(self, text: str, table: Mapping[str, sympy.Symbol], where: str) -> None:
        self.text, self.table, self.where = text, table, where
        self.pos = 0
        self.tokens: list[tuple[str, Any]] = []
        self.values: dict[str, sympy.Expr] = {}

    def fail(self, what: str, fix: str = LATEX_HELP) -> ClaimError:
        return ClaimError(self.where, what, fix)

    def atom(self, value: sympy.Expr) -> None:
        # a placeholder per occurrence, never per value: sympy would collect a repeated
        # one (s s s -> s**3) into a power the user never wrote, and the exponent limit
        # is for the exponents written after ^ only
        n, letters = len(self.values) + 26, ""
        while n:
            n, r = divmod(n, 26)
            letters = chr(97 + r) + letters
        name = f"v_{{{letters}}}"
        self.values[name] = value
        self.tokens.append(("atom", name))

    def read(self) -> list[tuple[str, Any]]:
        text = self.text
        while self.pos < len(text):
            char = text[self.pos]
            if char.isspace():
                self.pos += 1
            elif char == "\\":
                self.command()
            elif char.isdigit() or (char == "." and text[self.pos + 1:self.pos + 2].isdigit()):
                number = re.compile(r"\d*\.?\d+").match(text, self.pos)
                self.pos = number.end()
                self.atom(sympy.Rational(number[0]))
            elif char.isascii() and char.isalpha():
                letters = re.compile(r"[A-Za-z]+").match(text, self.pos)
                digits = re.compile(r"\d*").match(text, letters.end())
                self.pos = digits.end()
                self.name(letters[0], digits[0], self.subscript(), upright=False)
            elif char in "+-*/":
                self.tokens.append(("op", char))
                self.pos += 1
            elif char == "^":
                self.tokens.append(("pow", None))
                self.pos += 1
                self.exponent_char()
            elif char in "([{":
                self.tokens.append(("open", char))
                self.pos += 1
            elif char in ")]}":
                self.tokens.append(("close", char))
                self.pos += 1
            elif text.startswith("||", self.pos):
                self.tokens.append(("par", None))
                self.pos += 2
            else:
                raise self.fail(f"the character '{char}' is not allowed in a LaTeX claim")
            if len(self.tokens) > MAX_LATEX_TOKENS:
                raise self.fail(f"the LaTeX claim has more than {MAX_LATEX_TOKENS} tokens",
                                "shorten it or write it as plain text")
        return self.tokens

    def exponent_char(self) -> None:
        """TeX reads x^23 as x^{2} 3: one character unless braced."""
        while self.pos < len(self.text) and self.text[self.pos].isspace():
            self.pos += 1
        char = self.text[self.pos:self.pos + 1]
        if char.isdigit():
            self.atom(sympy.Integer(char))
            self.pos += 1
        elif char.isascii() and char.isalpha():
            self.pos += 1
            self.name(char, "", [(None, self.pos)], upright=True)

    def command(self) -> None:
        match = _COMMAND.match(self.text, self.pos)
        if not match:
            raise self.fail("the claim ends with a lone backslash")
        name, self.pos = match[1], match.end()
        if name in ("frac", "dfrac", "tfrac", "sqrt"):
            self.tokens.append(("sqrt" if name == "sqrt" else "frac", None))
        elif name in ("cdot", "times"):
            self.tokens.append(("op", "*"))
        elif name in ("parallel", "|"):
            self.tokens.append(("par", None))
        elif name in ("{", "}"):
            self.tokens.append(("open", "(") if name == "{" else ("close", ")"))
        elif name in _SKIP_COMMANDS:
            if name in ("left", "right") and self.text[self.pos:self.pos + 1] == ".":
                self.pos += 1
        elif name in _WORD_COMMANDS:
            word = self.braced()
            match = re.fullmatch(r"([A-Za-z][A-Za-z0-9]*)(?:_\{?([A-Za-z0-9]+)\}?)?", word.replace(" ", ""))
            if not match:
                raise self.fail(f"the name '{word}' is not understood")
            self.name(match[1], "", [(match[2], self.pos)] if match[2] else self.subscript(), upright=True)
        elif name in GREEK or name in self.table:
            self.name(name, "", self.subscript(), upright=True)
        else:
            raise self.fail(f"the LaTeX command '\\{name}' is not supported")

    def braced(self) -> str:
        """Text of the {...} group at the current position (one level of nesting)."""
        match = re.compile(r"\s*\{((?:[^{}]|\{[^{}]*\})*)\}").match(self.text, self.pos)
        if not match:
            raise self.fail("a '{' group is missing or unbalanced")
        self.pos = match.end()
        return match[1]

    def subscript(self) -> list[tuple[str | None, int]]:
        """Possible subscripts here, as (text, end position): one if braced; an unbraced
        run (A_U1, R_LC_1) offers its prefixes, longest first; (None, pos) if none."""
        match = re.compile(r"\s*_\s*").match(self.text, self.pos)
        if not match:
            return [(None, self.pos)]
        self.pos = match.end()
        char = self.text[self.pos:self.pos + 1]
        if char == "{" or char == "\\":
            if char == "\\":
                word = _COMMAND.match(self.text, self.pos)
                if not word or word[1] not in _WORD_COMMANDS:
                    raise self.fail("a subscript is not understood")
                self.pos = word.end()
            content = re.sub(r"\\(?:mathrm|text|mathit|rm|textrm|operatorname|mathsf)|[{}\s]", "", self.braced())
            if not re.fullmatch(r"[A-Za-z0-9]+", content):
                raise self.fail("a subscript is not understood", "write subscripts such as R_{1}, R_{s} or A_{U1}")
            return [(content, self.pos)]
        run = re.compile(r"[A-Za-z0-9]*").match(self.text, self.pos)[0]
        if not run:
            raise self.fail("a subscript is not understood", "write subscripts such as R_{1}, R_{s} or A_{U1}")
        return [(run[:k], self.pos + k) for k in range(len(run), 0, -1)]

    def name(self, letters: str, digits: str, subs: list[tuple[str | None, int]], *, upright: bool) -> None:
        """Map a letter run (with digits and subscript) to symbols, splitting implicit products."""
        if len(letters) > 200:
            raise self.fail("a name is longer than 200 letters")
        starts = range(len(letters)) if not upright else range(1)
        for (sub, end), start in itertools.product(subs, starts):  # the longest names first
            base = letters[start:] + digits
            for candidate in ([base] if sub is None else [f"{base}_{sub}", base + sub]):
                value = lookup_name(candidate, self.table)
                head = self.split(letters[:start]) if value is not None else None
                if head is not None:
                    for item in head + [value]:
                        self.atom(item)
                    self.pos = end
                    return
        sub = subs[0][0]
        raise unknown_name(letters + digits + (f"_{{{sub}}}" if sub else ""), self.table, self.where)

    def split(self, letters: str) -> list[sympy.Expr] | None:
        """Fewest known names that spell ``letters`` (implicit multiplication), or None."""
        longest = max([len(n) for n in self.table] + [5])
        best: list[list[sympy.Expr] | None] = [[]] + [None] * len(letters)
        for end in range(1, len(letters) + 1):
            for start in range(max(0, end - longest), end):
                value = lookup_name(letters[start:end], self.table) if best[start] is not None else None
                if value is not None and (best[end] is None or len(best[start]) + 1 < len(best[end])):
                    best[end] = best[start] + [value]
        return best[-1]


def _group_tokens(tokens: list[tuple[str, Any]], where: str) -> list[tuple]:
    """Nest the token list by brackets; \\frac takes two braced groups, \\sqrt one."""
    pos = 0

    def fail(what: str) -> ClaimError:
        return ClaimError(where, what, LATEX_HELP)

    def braced(depth: int, what: str) -> list[tuple]:
        nonlocal pos
        if pos >= len(tokens) or tokens[pos] != ("open", "{"):
            raise fail(f"{what} needs a braced argument {{...}}")
        pos += 1
        return group("}", depth + 1)

    def group(closer: str | None, depth: int) -> list[tuple]:
        nonlocal pos
        if depth > MAX_DEPTH:
            raise ClaimError(where, f"the claim is nested more than {MAX_DEPTH} levels deep", "simplify the formula")
        items: list[tuple] = []
        while pos < len(tokens):
            kind, value = tokens[pos]
            pos += 1
            if kind == "close":
                if value != closer:
                    raise fail("the brackets are not balanced")
                return items
            if kind == "open":
                items.append(("group", group(_CLOSER[value], depth + 1)))
            elif kind == "frac":
                items.append(("frac", braced(depth, r"\frac"), braced(depth, r"\frac")))
            elif kind == "sqrt":
                if pos < len(tokens) and tokens[pos] == ("open", "["):
                    raise fail(r"only square roots are allowed, not \sqrt[n]")
                items.append(("sqrt", braced(depth, r"\sqrt")))
            elif kind == "pow":
                if pos < len(tokens) and tokens[pos][0] == "atom":
                    pos += 1
                    items.append(("pow", [tokens[pos - 1]]))
                elif pos < len(tokens) and tokens[pos][0] == "open":
                    pos += 1
                    items.append(("pow", group(_CLOSER[tokens[pos - 1][1]], depth + 1)))
                else:
                    raise fail("'^' needs an exponent")
            else:
                items.append((kind, value))
        if closer is not None:
            raise fail("a bracket is not closed")
        return items

    return group(None, 0)


def _terms(items: list[tuple]) -> list[list[tuple]]:
    """The items split before each binary + or - (a term keeps its sign as its first item)."""
    out: list[list[tuple]] = [[]]
    for item in items:
        if item[0] == "op" and item[1] in "+-" and out[-1] and out[-1][-1][0] != "op":
            out.append([])
        out[-1].append(item)
    return out


def _emit(items: list[tuple], where: str) -> str:
    """Canonical LaTeX: explicit \\cdot, parallel as 1/(1/a + 1/b), binding tighter than + and -."""
    if any(item[0] == "par" for item in items):
        terms = _terms(items)
        if len(terms) > 1:
            out = []
            for term in terms:
                sign = term[0][1] if term[0][0] == "op" and term[0][1] in "+-" else None
                body = term[1:] if sign else term
                out.append((f" {sign} " if sign else "") + "(" + _emit(body, where) + ")")
            return "".join(out)
    parts: list[list[tuple]] = [[]]
    for item in items:
        if item[0] == "par":
            parts.append([])
        else:
            parts[-1].append(item)
    if len(parts) > 1:
        return r"\frac{1}{" + " + ".join(r"\frac{1}{" + _emit(p, where) + "}" for p in parts) + "}"
    out, operand = [], False
    for item in items:
        kind = item[0]
        if kind == "op":
            out.append(r" \cdot " if item[1] == "*" else f" {item[1]} ")
            operand = False
            continue
        if kind == "pow":
            if not operand:
                raise ClaimError(where, "'^' has nothing to raise", LATEX_HELP)
            out.append("^{" + _emit(item[1], where) + "}")
            continue
        if operand:
            out.append(r" \cdot ")
        if kind == "atom":
            out.append(item[1])
        elif kind == "group":
            out.append("(" + _emit(item[1], where) + ")")
        elif kind == "frac":
            out.append(r"\frac{" + _emit(item[1], where) + "}{" + _emit(item[2], where) + "}")
        else:
            out.append(r"\sqrt{" + _emit(item[1], where) + "}")
        operand = True
    if not out or not operand:
        raise ClaimError(where, "an operand is missing", LATEX_HELP)
    return "".join(out)


def _from_lark(obj: Any, values: Mapping[str, sympy.Expr], where: str) -> sympy.Expr:
    """Whitelist walk over the LaTeX parser's result, putting the symbols back."""
    if isinstance(obj, sympy.Symbol) and obj.name in values:
        return values[obj.name]
    if isinstance(obj, sympy.Rational):
        return obj
    if isinstance(obj, (sympy.Add, sympy.Mul)):
        args = [_from_lark(arg, values, where) for arg in obj.args]
        return sympy.Add(*args) if isinstance(obj, sympy.Add) else sympy.Mul(*args)
    if isinstance(obj, sympy.Pow):
        base, exp = (_from_lark(arg, values, where) for arg in obj.args)
        return checked_power(base, exp, where)
    if obj in (sympy.zoo, sympy.nan):
        raise ClaimError(where, "the claim divides by zero", "check the denominators")
    raise ClaimError(where, f"the LaTeX parser produced '{type(obj).__name__}', which is not allowed in a claim",
                     LATEX_HELP)


def parse_latex_claim(text: str, table: Mapping[str, sympy.Symbol], where: str) -> sympy.Expr:
    """A LaTeX claim as an exact sympy expression (limits other than the size checked).

    Parameters
    ----------
    text : str
        The LaTeX, the left-hand side already dropped.
    table : Mapping[str, sympy.Symbol]
        The names the claim may use.
    where : str
        Where the claim came from, for error messages.

    Returns
    -------
    sympy.Expr
        The claim.

    Examples
    --------
    >>> import sympy
    >>> R1, C1 = sympy.symbols("R1 C1")
    >>> parse_latex_claim(r"\\frac{1}{1 + s R_{1} C_{1}}", {"R1": R1, "C1": C1}, "claim")
    1/(C1*R1*s + 1)
    """
    reader = _LatexReader(text, table, where)
    canonical = _emit(_group_tokens(reader.read(), where), where)
    try:
        import lark
        from sympy.parsing.latex import parse_latex
        from sympy.parsing.latex.errors import LaTeXParsingError
    except ImportError:
        raise ClaimError(where, "reading LaTeX needs the lark package",
                         "install lark or write the claim as plain text") from None
    try:
        parsed = parse_latex(canonical, backend="lark")
    except (lark.exceptions.LarkError, LaTeXParsingError, RecursionError, ValueError, TypeError):
        raise ClaimError(where, "the LaTeX cannot be read",
                         "check operators and braces, or write the claim as plain text") from None
    return _from_lark(parsed, reader.values, where)

