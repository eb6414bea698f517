"""Read a hand derivation safely: plain text or LaTeX to an exact sympy expression.

A claim is a formula an engineer derived by hand, pasted as plain text
(``R_L/(R_s + R1 + R_L + s*C1*R_L*(R_s + R1))``) or as LaTeX
(``\\frac{R_{L}}{R_{s} + R_{1} + R_{L} + s C_{1} R_{L} (R_{s} + R_{1})}``),
in s or in jw. The text is never evaluated: plain text is read by a whitelist
walk over Python's ``ast``; LaTeX is tokenised here, handed to sympy's LaTeX
parser (lark backend) in a canonical form, and its result is walked by the same
whitelist. Every limit (length, nesting depth, exponent, number size, expanded
size) ends in a :class:`~symfilt.errors.ClaimError` naming it. The equivalence
test lives in :mod:`symfilt.claims.judge`.
"""

from __future__ import annotations

import ast
import itertools
import re
from typing import Any, Mapping

import sympy

from symfilt.errors import ClaimError

MAX_LENGTH = 5000  # characters in a claim
MAX_DEPTH = 100  # nesting of brackets and operators
MAX_EXPONENT = 64  # largest |exponent|, whole or half-integer
MAX_DIGITS = 20000  # digits a numeric power may produce
MAX_TERMS = 10**6  # estimated terms once brought over a common denominator
MAX_LATEX_TOKENS = 400  # sympy's LaTeX parser (Earley) needs about 10-25 ms per token

_S = sympy.Symbol("s")
_GREEK = frozenset(
    "alpha beta gamma delta epsilon zeta eta theta kappa lambda mu nu xi rho sigma "
    "tau upsilon phi chi psi omega pi".split()
)
_HELP = "use the circuit's symbols, s, j or I, w or omega, pi, sqrt(), + - * / ^ || and parentheses"


# ---------------------------------------------------------------- names and limits


def _lookup(name: str, table: Mapping[str, sympy.Symbol]) -> sympy.Expr | None:
    """Meaning of a name: a known symbol first, then the constants, then R_1 -> R1."""
    if name in table:
        return table[name]
    if name in ("j", "I"):
        return sympy.I
    if name in ("pi", "π"):
        return sympy.pi
    if name in ("w", "omega", "ω"):
        return table.get("s", _S) / sympy.I  # s = j w
    if name == "s":
        return _S
    match = re.fullmatch(r"([A-Za-z]+)_([A-Za-z0-9]+)", name)
    if match:
        for candidate in (match[1] + match[2], f"{match[1]}_{match[2]}"):
            if candidate in table:
                return table[candidate]
    return None


def _unknown(name: str, table: Mapping[str, sympy.Symbol], where: str) -> ClaimError:
    known = ", ".join(sorted(table)) or "none"
    return ClaimError(where, f"unknown name '{name}' (known symbols: {known})", _HELP)


def _digits(number: sympy.Rational) -> int:
    return len(str(abs(number.p))) + len(str(number.q))


def _power(base: sympy.Expr, exp: sympy.Expr, where: str) -> sympy.Expr:
    """base**exp with the exponent and number-size limits."""
    if not exp.is_Rational:
        raise ClaimError(where, f"the exponent '{exp}' is not a number", "use exponents such as 2, -1 or 1/2")
    if (2 * exp).q != 1:
        raise ClaimError(where, f"the exponent {exp} is not a whole or half-integer number",
                         "use exponents such as 2, -1 or 1/2")
    if abs(exp) > MAX_EXPONENT:
        raise ClaimError(where, f"the exponent {exp} is over the limit of {MAX_EXPONENT}",
                         "write the claim with smaller powers")
    if base == 0 and exp < 0:
        raise ClaimError(where, "the claim divides by zero", "check the denominators")
    coeff = base.as_coeff_Mul()[0]
    if coeff.is_Rational and _digits(coeff) * abs(exp) > MAX_DIGITS:
        raise ClaimError(where, f"a number in the claim would have more than {MAX_DIGITS} digits",
                         "write the claim with smaller numbers")
    return base**exp


def _parallel(a: sympy.Expr, b: sympy.Expr) -> sympy.Expr:
    return a * b / (a + b)


def _estimate(expr: sympy.Expr, cap: int) -> tuple[int, int]:
    """Upper estimate of (numerator, denominator) terms over a common denominator."""
    if expr.is_Atom or not expr.args:
        return 1, 1
    if expr.is_Add or expr.is_Mul:
        num, den = (0, 1) if expr.is_Add else (1, 1)
        for arg in expr.args:
            n, d = _estimate(arg, cap)
            num = num * d + n * den if expr.is_Add else num * n
            num, den = min(num, cap + 1), min(den * d, cap + 1)
        return num, den
    if expr.is_Pow and expr.exp.is_Rational:
        n, d = _estimate(expr.base, cap)
        k = int(abs(expr.exp))
        grown = tuple(_multiset(t, k, cap) for t in (n, d))
        return grown[::-1] if expr.exp < 0 else grown
    return 1, 1


def _multiset(terms: int, k: int, cap: int) -> int:
    """Number of monomials of (t terms)**k, binomial(t + k - 1, k), stopped past cap."""
    count = 1
    for i in range(1, k + 1):
        count = count * (terms - 1 + i) // i
        if count > cap:
            return cap + 1
    return count


def _finish(expr: sympy.Expr, where: str) -> sympy.Expr:
    if expr.has(sympy.zoo, sympy.nan, sympy.oo, -sympy.oo):
        raise ClaimError(where, "the claim divides by zero", "check the denominators")
    num, den = _estimate(expr, MAX_TERMS)
    if max(num, den) > MAX_TERMS:
        raise ClaimError(where, f"the claim would expand to more than {MAX_TERMS} terms",
                         "write it with fewer or smaller powers")
    return expr


def _strip_lhs(text: str, where: str) -> str:
    equals = [m.start() for m in re.finditer(r"(?<![=<>!])=(?!=)", text)]
    if len(equals) > 1:
        raise ClaimError(where, "the claim has more than one '='", "give one formula, optionally after 'H(s) ='")
    return text[equals[0] + 1:] if equals else text


# ---------------------------------------------------------------- plain text

_NUMBER = re.compile(r"(?:\d[\d_]*(?:\.[\d_]*)?|\.\d[\d_]*)(?:[eE]([+-]?\d[\d_]*))?([jJ])?")
_NODE_WORDS = {
    ast.Attribute: "attribute access", ast.Lambda: "a lambda", ast.ListComp: "a comprehension",
    ast.SetComp: "a comprehension", ast.DictComp: "a comprehension", ast.GeneratorExp: "a comprehension",
    ast.Subscript: "a subscript", ast.Compare: "a comparison", ast.BoolOp: "and/or",
    ast.IfExp: "a conditional", ast.NamedExpr: "an assignment", ast.JoinedStr: "a string",
    ast.List: "a list", ast.Tuple: "a tuple", ast.Set: "a set", ast.Dict: "a dict",
    ast.Starred: "a starred expression", ast.Await: "await", ast.Call: "a call",
}
_OPERATORS = {ast.Mod: "%", ast.FloorDiv: "//", ast.MatMult: "@", ast.BitAnd: "&",
              ast.BitXor: "^", ast.LShift: "<<", ast.RShift: ">>"}


class _PlainWalker:
    """Build a sympy expression from a whitelisted Python ``ast``."""

    def __init__(self, src: str, table: Mapping[str, sympy.Symbol], where: str) -> None:
        self.src, self.table, self.where = src, table, where

    def visit(self, node: ast.AST, depth: int) -> sympy.Expr:
        if depth > MAX_DEPTH:
            raise ClaimError(self.where, f"the claim is nested more than {MAX_DEPTH} levels deep",
                             "simplify the formula")
        if isinstance(node, ast.BinOp) and isinstance(node.op, (ast.Add, ast.Sub, ast.Mult, ast.Div)):
            return self._chain(node, depth)
        if isinstance(node, ast.BinOp) and isinstance(node.op, (ast.Pow, ast.BitOr)):
            left, right = self.visit(node.left, depth + 1), self.visit(node.right, depth + 1)
            return _power(left, right, self.where) if isinstance(node.op, ast.Pow) else _parallel(left, right)
        if isinstance(node, ast.BinOp):
            sign = _OPERATORS.get(type(node.op), type(node.op).__name__)
            raise ClaimError(self.where, f"the operator '{sign}' is not allowed", _HELP)
        if isinstance(node, ast.UnaryOp) and isinstance(node.op, (ast.USub, ast.UAdd)):
            value = self.visit(node.operand, depth + 1)
            return -value if isinstance(node.op, ast.USub) else value
        if isinstance(node, ast.Constant):
            return self._number(node)
        if isinstance(node, ast.Name):
            value = _lookup(node.id, self.table)
            if value is None:
                raise _unknown(node.id, self.table, self.where)
            return value
        if (isinstance(node, ast.Call) and isinstance(node.func, ast.Name) and node.func.id == "sqrt"
                and len(node.args) == 1 and not node.keywords and not isinstance(node.args[0], ast.Starred)):
            return _power(self.visit(node.args[0], depth + 1), sympy.Rational(1, 2), self.where)
        word = _NODE_WORDS.get(type(node), f"'{type(node).__name__}'")
        if isinstance(node, ast.UnaryOp):
            word = f"the operator '{'not' if isinstance(node.op, ast.Not) else '~'}'"
        raise ClaimError(self.where, f"{word} is not allowed in a claim", _HELP)

    def _chain(self, node: ast.BinOp, depth: int) -> sympy.Expr:
        """A run of + - (or * /) read without recursion, so long sums stay shallow."""
        additive = isinstance(node.op, (ast.Add, ast.Sub))
        kinds = (ast.Add, ast.Sub) if additive else (ast.Mult, ast.Div)
        parts = []
        while isinstance(node, ast.BinOp) and isinstance(node.op, kinds):
            parts.append((isinstance(node.op, (ast.Sub, ast.Div)), node.right))
            node = node.left
        parts.append((False, node))
        tops, bottoms = [], []
        for inverse, operand in reversed(parts):
            value = self.visit(operand, depth + 1)
            if additive:
                tops.append(-value if inverse else value)
            elif inverse:
                if value == 0:
                    raise ClaimError(self.where, "the claim divides by zero", "check the denominators")
                bottoms.append(value)
            else:
                tops.append(value)
        if additive:
            return sympy.Add(*tops)
        return sympy.Mul(*tops) / sympy.Mul(*bottoms)

    def _number(self, node: ast.Constant) -> sympy.Expr:
        if isinstance(node.value, bool) or not isinstance(node.value, (int, float, complex)):
            raise ClaimError(self.where, f"the constant {node.value!r} is not allowed", _HELP)
        text = ast.get_source_segment(self.src, node) or ""
        match = _NUMBER.fullmatch(text)
        if not match:
            raise ClaimError(self.where, f"the number '{text}' is not understood",
                             "write decimal numbers such as 4700 or 2.2e-9")
        if match[1] and abs(int(match[1].replace("_", ""))) > 400:
            raise ClaimError(self.where, f"the number '{text}' is out of range",
                             "keep powers of ten within 1e-400 to 1e400")
        value = sympy.Rational(text.rstrip("jJ").replace("_", ""))
        return value * sympy.I if match[2] else value


def _parse_plain(text: str, table: Mapping[str, sympy.Symbol], where: str) -> sympy.Expr:
    depth = deepest = 0
    for char in text:
        depth += (char in "([{") - (char in ")]}")
        deepest = max(deepest, depth)
    if deepest > MAX_DEPTH:
        raise ClaimError(where, f"the claim is nested more than {MAX_DEPTH} levels deep", "simplify the formula")
    src = " ".join(text.replace("||", "|").replace("^", "**").split())
    for old, new in (("·", "*"), ("×", "*"), ("−", "-")):
        src = src.replace(old, new)
    try:
        tree = ast.parse(src, mode="eval")
    except (RecursionError, MemoryError):
        raise ClaimError(where, f"the claim is nested more than {MAX_DEPTH} levels deep",
                         "simplify the formula") from None
    except (SyntaxError, ValueError) as exc:
        reason = getattr(exc, "msg", None) or str(exc)
        raise ClaimError(where, f"the formula cannot be read ({reason})", _HELP) from None
    return _PlainWalker(src, table, where).visit(tree.body, 0)


# ---------------------------------------------------------------- LaTeX

_COMMAND = re.compile(r"\\([A-Za-z]+|.)", re.S)
_WORD_COMMANDS = frozenset({"mathrm", "text", "mathit", "operatorname", "textrm", "rm", "mathsf"})
_SKIP_COMMANDS = frozenset({"left", "right", "big", "Big", "bigl", "bigr", "Bigl", "Bigr", "quad",
                            "qquad", "displaystyle", ",", ";", ":", "!", " "})
_CLOSER = {"(": ")", "[": "]", "{": "}"}
_LATEX_HELP = r"use \frac{}{}, \cdot, \sqrt{}, \left( \right), \parallel, \omega, \pi and the circuit's symbols"


class _LatexReader:
    """Tokenise LaTeX into atoms (placeholders for symbols and numbers) and operators."""

    def __init__(self, text: str, table: Mapping[str, sympy.Symbol], where: str) -> None:
        self.text, self.table, self.where = text, table, where
        self.pos = 0
        self.tokens: list[tuple[str, Any]] = []
        self.values: dict[str, sympy.Expr] = {}
        self._names: dict[sympy.Expr, str] = {}

    def fail(self, what: str, fix: str = _LATEX_HELP) -> ClaimError:
        return ClaimError(self.where, what, fix)

    def atom(self, value: sympy.Expr) -> None:
        if value not in self._names:
            n, letters = len(self._names) + 26, ""
            while n:
                n, r = divmod(n, 26)
                letters = chr(97 + r) + letters
            self._names[value] = name = f"v_{{{letters}}}"
            self.values[name] = value
        self.tokens.append(("atom", self._names[value]))

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
        elif name in _GREEK or name in self.table:
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
                value = _lookup(candidate, self.table)
                head = self.split(letters[:start]) if value is not None else None
                if head is not None:
                    for item in head + [value]:
                        self.atom(item)
                    self.pos = end
                    return
        sub = subs[0][0]
        raise _unknown(letters + digits + (f"_{{{sub}}}" if sub else ""), self.table, self.where)

    def split(self, letters: str) -> list[sympy.Expr] | None:
        """Fewest known names that spell ``letters`` (implicit multiplication), or None."""
        longest = max([len(n) for n in self.table] + [5])
        best: list[list[sympy.Expr] | None] = [[]] + [None] * len(letters)
        for end in range(1, len(letters) + 1):
            for start in range(max(0, end - longest), end):
                value = _lookup(letters[start:end], self.table) if best[start] is not None else None
                if value is not None and (best[end] is None or len(best[start]) + 1 < len(best[end])):
                    best[end] = best[start] + [value]
        return best[-1]


def _group_tokens(tokens: list[tuple[str, Any]], where: str) -> list[tuple]:
    """Nest the token list by brackets; \\frac takes two braced groups, \\sqrt one."""
    pos = 0

    def fail(what: str) -> ClaimError:
        return ClaimError(where, what, _LATEX_HELP)

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


def _emit(items: list[tuple], where: str) -> str:
    """Canonical LaTeX: explicit \\cdot, parallel as 1/(1/a + 1/b)."""
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
                raise ClaimError(where, "'^' has nothing to raise", _LATEX_HELP)
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
        raise ClaimError(where, "an operand is missing", _LATEX_HELP)
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
        return _power(base, exp, where)
    if obj in (sympy.zoo, sympy.nan):
        raise ClaimError(where, "the claim divides by zero", "check the denominators")
    raise ClaimError(where, f"the LaTeX parser produced '{type(obj).__name__}', which is not allowed in a claim",
                     _LATEX_HELP)


def _parse_latex(text: str, table: Mapping[str, sympy.Symbol], where: str) -> sympy.Expr:
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


def parse_claim(text: str, symbols: Mapping[str, sympy.Symbol], *, where: str = "claim") -> sympy.Expr:
    r"""Read a hand-derived formula, plain text or LaTeX, without evaluating it.

    Plain text uses Python's operators (``^`` is accepted for ``**``) with
    ``sqrt()``, ``pi``, ``j`` or ``I`` for the imaginary unit, ``w`` or ``omega``
    for the angular frequency (``j*w`` becomes ``s``) and ``a || b`` for a
    parallel combination ``a*b/(a + b)``; ``||`` binds more loosely than ``+``,
    like Python's ``|``, so write ``R_s + (R1 || R2)``. Text containing a
    backslash or a brace is LaTeX: ``\frac``, ``\cdot``, ``\left( \right)``,
    ``\sqrt``, ``\omega``, ``\pi``, ``\parallel`` or ``\|``, and names written
    ``R_{1}``, ``R_{s}``, ``A_{U1}``, ``\mathrm{GBW}_{U1}`` or plainly. A left-hand
    side before a single ``=`` is dropped. A name of the circuit always wins over
    a constant of the same name.

    Parameters
    ----------
    text : str
        The claim, at most ``MAX_LENGTH`` characters.
    symbols : Mapping[str, sympy.Symbol]
        The names the claim may use.
    where : str
        Where the claim came from, for error messages.

    Returns
    -------
    sympy.Expr
        The claim, with numbers exact.

    Raises
    ------
    ClaimError
        For an unknown name, a construct outside the whitelist, or a limit
        exceeded (length, nesting depth, exponent, size).

    Examples
    --------
    >>> import sympy
    >>> R1, C1 = sympy.symbols("R1 C1", positive=True)
    >>> parse_claim("H(s) = 1/(1 + j*w*R1*C1)", {"R1": R1, "C1": C1})
    1/(C1*R1*s + 1)
    >>> parse_claim("2.2e-9 * R1^2", {"R1": R1})
    11*R1**2/5000000000
    >>> parse_claim("__import__('os')", {"R1": R1})
    Traceback (most recent call last):
    ...
    symfilt.errors.ClaimError: claim: a call is not allowed in a claim, use the circuit's symbols, ...
    """
    if not isinstance(text, str):
        raise ClaimError(where, f"the claim must be text, not {type(text).__name__}", "pass a string")
    if len(text) > MAX_LENGTH:
        raise ClaimError(where, f"the claim is {len(text)} characters long, over the limit of {MAX_LENGTH}",
                         "shorten it")
    table = dict(symbols)
    body = _strip_lhs(text, where)
    if not body.strip():
        raise ClaimError(where, "the claim is empty", "write a formula such as 1/(1 + s*R1*C1)")
    if any(mark in body for mark in "\\{}"):
        return _finish(_parse_latex(body, table, where), where)
    return _finish(_parse_plain(body, table, where), where)
