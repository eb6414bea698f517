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
import re
import unicodedata
from typing import Mapping

import sympy

from symfilt.claims.latex import parse_latex_claim
from symfilt.claims.limits import (
    MAX_DEPTH,
    MAX_DIGITS,
    MAX_EXPONENT,
    MAX_LATEX_TOKENS,
    MAX_LENGTH,
    MAX_TERMS,
    PLAIN_HELP,
    check_size,
    checked_power,
    lookup_name,
    parallel,
    strip_lhs,
    unknown_name,
)
from symfilt.errors import ClaimError

__all__ = ["MAX_DEPTH", "MAX_DIGITS", "MAX_EXPONENT", "MAX_LATEX_TOKENS", "MAX_LENGTH", "MAX_TERMS", "parse_claim"]

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
        if isinstance(node, ast.BinOp) and isinstance(node.op, (ast.Add, ast.Sub, ast.Mult, ast.Div, ast.MatMult)):
            return self._chain(node, depth)
        if isinstance(node, ast.BinOp) and isinstance(node.op, (ast.Pow, ast.BitOr)):
            left, right = self.visit(node.left, depth + 1), self.visit(node.right, depth + 1)
            return checked_power(left, right, self.where) if isinstance(node.op, ast.Pow) else parallel(left, right)
        if isinstance(node, ast.BinOp):
            sign = _OPERATORS.get(type(node.op), type(node.op).__name__)
            raise ClaimError(self.where, f"the operator '{sign}' is not allowed", PLAIN_HELP)
        if isinstance(node, ast.UnaryOp) and isinstance(node.op, (ast.USub, ast.UAdd)):
            value = self.visit(node.operand, depth + 1)
            return -value if isinstance(node.op, ast.USub) else value
        if isinstance(node, ast.Constant):
            return self._number(node)
        if isinstance(node, ast.Name):
            value = lookup_name(node.id, self.table)
            if value is None:
                raise unknown_name(node.id, self.table, self.where)
            return value
        if (isinstance(node, ast.Call) and isinstance(node.func, ast.Name) and node.func.id == "sqrt"
                and len(node.args) == 1 and not node.keywords and not isinstance(node.args[0], ast.Starred)):
            return checked_power(self.visit(node.args[0], depth + 1), sympy.Rational(1, 2), self.where)
        word = _NODE_WORDS.get(type(node), f"'{type(node).__name__}'")
        if isinstance(node, ast.UnaryOp):
            word = f"the operator '{'not' if isinstance(node.op, ast.Not) else '~'}'"
        raise ClaimError(self.where, f"{word} is not allowed in a claim", PLAIN_HELP)

    def _chain(self, node: ast.BinOp, depth: int) -> sympy.Expr:
        """A run of + - (or * /) read without recursion, so long sums stay shallow."""
        additive = isinstance(node.op, (ast.Add, ast.Sub))
        kinds = (ast.Add, ast.Sub) if additive else (ast.Mult, ast.Div, ast.MatMult)
        parts = []
        while isinstance(node, ast.BinOp) and isinstance(node.op, kinds):
            parts.append((isinstance(node.op, (ast.Sub, ast.Div)), node.right, isinstance(node.op, ast.MatMult)))
            node = node.left
        parts.append((False, node, False))
        tops, bottoms, branches = [], [], []
        for inverse, operand, new_branch in reversed(parts):
            if new_branch:  # `||` (read as @): the products on either side are the branches
                branches.append(sympy.Mul(*tops) / sympy.Mul(*bottoms))
                tops, bottoms = [], []
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
        value = sympy.Mul(*tops) / sympy.Mul(*bottoms)
        for branch in reversed(branches):
            value = parallel(branch, value)
        return value

    def _number(self, node: ast.Constant) -> sympy.Expr:
        if isinstance(node.value, bool) or not isinstance(node.value, (int, float, complex)):
            raise ClaimError(self.where, f"the constant {node.value!r} is not allowed", PLAIN_HELP)
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
    if "@" in text:
        raise ClaimError(where, "the operator '@' is not allowed", PLAIN_HELP)
    # `||` binds tighter than + and -, looser than * and /: read as @ (the level of *), and the
    # products on either side of it are its branches (_PlainWalker._chain)
    src = " ".join(text.replace("||", "@").replace("|", "@").replace("^", "**").split())
    for old, new in (("·", "*"), ("×", "*"), ("−", "-")):
        src = src.replace(old, new)
    try:
        tree = ast.parse(src, mode="eval")
    except (RecursionError, MemoryError):
        raise ClaimError(where, f"the claim is nested more than {MAX_DEPTH} levels deep",
                         "simplify the formula") from None
    except (SyntaxError, ValueError) as exc:
        reason = getattr(exc, "msg", None) or str(exc)
        raise ClaimError(where, f"the formula cannot be read ({reason})", PLAIN_HELP) from None
    return _PlainWalker(src, table, where).visit(tree.body, 0)



def _refuse_odd_digits(text: str, where: str) -> None:
    """Digits other than 0-9 (superscripts, Arabic-Indic, Devanagari, double-struck) name their code point."""
    for ch in text:
        if ord(ch) > 127 and (unicodedata.category(ch) in ("Nd", "No", "Nl") or 0x1D400 <= ord(ch) <= 0x1D7FF):
            raise ClaimError(where, f"the character {ch} (U+{ord(ch):04X}, {unicodedata.name(ch, 'unnamed')}) is not "
                             "read in a claim", "write digits as 0-9 and powers as ^2 (or ^{2} in LaTeX)")


def parse_claim(text: str, symbols: Mapping[str, sympy.Symbol], *, where: str = "claim") -> sympy.Expr:
    r"""Read a hand-derived formula, plain text or LaTeX, without evaluating it.

    Plain text uses Python's operators (``^`` is accepted for ``**``) with
    ``sqrt()``, ``pi``, ``j`` or ``I`` for the imaginary unit, ``w`` or ``omega``
    for the angular frequency (``j*w`` becomes ``s``) and ``a || b`` for a
    parallel combination ``a*b/(a + b)``; ``||`` binds tighter than ``+`` and ``-``
    and looser than ``*`` and ``/``: ``R_s + R1 || R2`` is ``R_s + (R1 || R2)`` and
    ``2*R1 || R2`` is ``(2*R1) || R2`` (LaTeX alike). Text containing a
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
    >>> parse_claim("R1 + R1 || C1", {"R1": R1, "C1": C1})
    R1 + 1/(1/R1 + 1/C1)
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
    _refuse_odd_digits(text, where)
    table = dict(symbols)
    body = strip_lhs(text, where)
    if not body.strip():
        raise ClaimError(where, "the claim is empty", "write a formula such as 1/(1 + s*R1*C1)")
    if any(mark in body for mark in "\\{}"):
        return check_size(parse_latex_claim(body, table, where), where)
    return check_size(_parse_plain(body, table, where), where)
