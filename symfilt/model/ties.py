"""Tied values: named parameters, and part values written as expressions over them.

A circuit's parameters (``[parameters]`` in a circuit file, ``parameters=`` in
:meth:`~symfilt.model.circuit.Circuit.build`) are named values or symbols
(``R = "10k"``, ``k = "symbol"``). A part's value may then be an expression over
parameter names and other parts' names: ``"R"``, ``"R/2"``, ``"2*C1"``, ``"R1*k"``,
``"(R1 + R2)/2"``. Such a part is *tied*: its symbol is replaced by the expression
in every derived quantity, so the free symbols are the parameters and the untied parts.

The expression reader is a small recursive-descent parser (nothing is evaluated)::

    expr   := term (("+" | "-") term)*
    term   := unary (("*" | "/") unary)*
    unary  := ("+" | "-") unary | atom
    atom   := number | name | "(" expr ")"

A *number* starts with a digit or a point and is read by
:func:`~symfilt.model.values.parse_value` (``2``, ``0.5``, ``1/2`` as ``1/2``,
``10k``, ``4k7``, ``2.2e-9``; no unit and no space inside); a *name* starts with a
letter. So ``2*C`` is two times C, and ``2C`` is refused (write ``2*C``).
"""

from __future__ import annotations

import difflib
import re
from dataclasses import dataclass
from fractions import Fraction

import sympy

from symfilt.errors import CircuitError, ValueParseError
from symfilt.model.names import clip_name
from symfilt.model.values import format_value, parse_value

#: Longest tie expression, in characters.
MAX_TIE_CHARS = 120
#: Deepest nesting of parentheses in a tie expression.
MAX_TIE_DEPTH = 12
#: Part kinds a tie may refer to, and whose value may be tied.
TIEABLE = ("resistor", "capacitor", "inductor", "vcvs", "vccs", "ccvs", "cccs")
#: Dimensions (exponents of ohm and second) of the values of each part kind.
KIND_DIMENSIONS = {"resistor": (1, 0), "capacitor": (-1, 1), "inductor": (1, 1), "vcvs": (0, 0),
                   "cccs": (0, 0), "vccs": (-1, 0), "ccvs": (1, 0)}
#: Unit shown for a parameter of each dimension.
DIMENSION_UNITS = {(1, 0): "Ω", (-1, 1): "F", (1, 1): "H", (0, 0): ""}

_TOKEN = re.compile(r"\s*(?:(?P<num>(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?(?:[A-Za-zµμ][0-9A-Za-zµμ]*)?)"
                    r"|(?P<name>[A-Za-z][A-Za-z0-9_]*)|(?P<op>[-+*/()]))", re.ASCII)
_WORD = re.compile(r"[A-Za-z][A-Za-z0-9_]*", re.ASCII)
_NAME_START = re.compile(r"(?:^|[\s+\-*/()])[A-Za-z]", re.ASCII)
_HELP = "write + - * / and parentheses over numbers and names, e.g. R/2, 2*C1 or (R1 + R2)/2"


@dataclass(frozen=True)
class Parameter:
    """A named value of a circuit that tied parts refer to.

    Parameters
    ----------
    name : str
        The parameter's name, also its symbol (positive).
    value : sympy.Rational or None
        Its exact value; None keeps it a symbol.

    Examples
    --------
    >>> Parameter.parse("R", "10k")
    Parameter(name='R', value=10000)
    >>> Parameter.parse("k", "symbol").symbol.is_positive
    True
    """

    name: str
    value: sympy.Rational | None = None

    @classmethod
    def parse(cls, name: str, text, where: str = "parameters") -> "Parameter":
        """Read one parameter: its name and ``"symbol"`` (or None) or a positive value.

        Parameters
        ----------
        name : str
            The name (the part-name rules apply).
        text : str, number or None
            ``"symbol"``, None, or a value in the part value syntax (``"10k"``).
        where : str
            The table named in error messages.

        Examples
        --------
        >>> Parameter.parse("C", "15n").value
        3/200000000
        >>> Parameter.parse("C", "0")
        Traceback (most recent call last):
        ...
        symfilt.errors.CircuitError: parameters C: the value 0 is not positive, give a positive value (write a sign in the tie, e.g. value = "-k"), or "symbol"
        """
        from symfilt.model.names import check_symbol_name

        place = f"{where} {clip_name(name)}"
        check_symbol_name(name, place, "parameter")
        if text is None or (isinstance(text, str) and text.strip().lower() == "symbol"):
            return cls(name, None)
        value = parse_value(text, where=place)
        if value <= 0:
            raise CircuitError(place, f"the value {format_value(value).replace(' ', '')} is not positive",
                               "give a positive value (write a sign in the tie, e.g. value = \"-k\"), or \"symbol\"")
        return cls(name, value)

    @property
    def symbol(self) -> sympy.Symbol:
        """The parameter's symbol (positive).

        Examples
        --------
        >>> Parameter("R").symbol
        R
        """
        return sympy.Symbol(self.name, positive=True)


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


def resolve_ties(parts, parameters) -> dict[str, sympy.Expr]:
    """Each tied part's value as an expression over the free symbols (parameters, untied parts).

    Parameters
    ----------
    parts : iterable of Part
        The circuit's parts (a part with ``tie`` set is tied).
    parameters : iterable of Parameter
        The circuit's parameters.

    Returns
    -------
    dict
        Part name -> sympy expression, in the order of the parts.

    Raises
    ------
    CircuitError
        For an unknown name (with the closest names), a tie on an op-amp, a cycle of ties.

    Examples
    --------
    >>> from symfilt.model.circuit import Part
    >>> ps = [Part.resistor("R1", "a", "b", "R"), Part.resistor("R2", "b", "0", "R1/2")]
    >>> resolve_ties(ps, [Parameter("R", 1000)])
    {'R1': R, 'R2': R/2}
    """
    parts = list(parts)
    by_name = {p.name: p for p in parts}
    symbols = {q.name: q.symbol for q in parameters}
    from symfilt.model.circuit import part_symbol

    for p in parts:
        if p.kind in TIEABLE and p.tie is None:
            symbols[p.name] = part_symbol(p.name, p.kind)
    read = {p.name: parse_tie(p.tie, f"part {p.name}") for p in parts if p.tie is not None}
    known = sorted(set(symbols) | set(read))
    for name, (_expr, used) in read.items():
        for word in used:
            if word in by_name and by_name[word].kind not in TIEABLE:
                raise CircuitError(f"part {name}", f"the value refers to {word}, a {by_name[word].kind}",
                                   "refer to a parameter or to a resistor, capacitor, inductor or controlled source")
            if word not in known:
                close = difflib.get_close_matches(word, known, n=3)
                hint = f"did you mean {' or '.join(close)}? " if close else ""
                raise CircuitError(f"part {name}", f"the value refers to {word}, which is no parameter or part",
                                   hint + "add it under [parameters], or name one of: " + (", ".join(known) or "(none)"))
    done: dict[str, sympy.Expr] = {}
    for name in read:
        _resolve(name, read, symbols, done, [])
    return {p.name: done[p.name] for p in parts if p.name in done}


def _resolve(name: str, read: dict, symbols: dict, done: dict, path: list) -> sympy.Expr:
    if name in done:
        return done[name]
    if name in path:
        cycle = path[path.index(name):] + [name]
        raise CircuitError(f"part {cycle[0]}", "the ties form a cycle (" + " -> ".join(cycle) + ")",
                           "give one of these parts a value or tie it to a parameter")
    expr, used = read[name]
    sub = {}
    for word in used:
        sub[sympy.Symbol(word)] = _resolve(word, read, symbols, done, path + [name]) if word in read else symbols[word]
    done[name] = expr.xreplace(sub)
    return done[name]


def check_ties(circuit) -> None:
    """Raise CircuitError for a parameter named like another symbol or a non-positive tied value.

    Parameters
    ----------
    circuit : Circuit
        The circuit (parameters and parts).

    Examples
    --------
    >>> from symfilt.model.circuit import Circuit, Part
    >>> Circuit.build([Part.resistor("R1", "in", "out", "R - 20k"), Part.capacitor("C1", "out", "0")],
    ...               parameters={"R": "10k"})
    Traceback (most recent call last):
    ...
    symfilt.errors.CircuitError: part R1: the tied value R - 20k is -10 kΩ, not positive, give a tie that is positive at the parameters' values
    """
    taken = set()
    for p in circuit.parts:
        taken.update([p.name] + p.symbols())
    taken.update(("R_s", "R_L", "C_L"))
    seen = set()
    for q in circuit.parameters:
        if q.name in seen:
            raise CircuitError(f"parameters {q.name}", "the parameter is given twice", "keep one of them")
        seen.add(q.name)
        if q.name in taken:
            raise CircuitError(f"parameters {q.name}", "the parameter has the name of a part or symbol of the circuit",
                               f"rename the parameter (e.g. {q.name}_p) or the part")
    ties = circuit.ties()
    values = {q.symbol: q.value for q in circuit.parameters if q.value is not None}
    values.update({part.symbol: part.value for part in circuit.parts if part.value is not None and part.tie is None})
    for p in circuit.parts:
        if p.name in ties:
            _check_value(p, ties[p.name], values)


def _check_value(part, expr: sympy.Expr, values: dict) -> None:
    """A tied value must be finite at the values; a passive part's must be positive."""
    where = f"part {part.name}"
    fix = "give a tie that is positive at the parameters' values"
    known = expr.free_symbols <= set(values)
    v = expr.xreplace(values) if known else None
    if known and not v.is_finite:
        raise CircuitError(where, f"the tied value {part.tie} divides by zero at the values",
                           "change the tie or the values it refers to")
    if part.kind not in KIND_UNITS:
        return
    if known:
        if v <= 0:
            raise CircuitError(where, f"the tied value {part.tie} is {format_value(v, KIND_UNITS[part.kind])}, not positive", fix)
    elif expr.is_positive is False or expr == 0:
        raise CircuitError(where, f"the tied value {part.tie} is never positive", fix)


#: Unit of each passive kind's value.
KIND_UNITS = {"resistor": "Ω", "capacitor": "F", "inductor": "H"}


def tie_values(circuit) -> dict[str, sympy.Rational | None]:
    """The value of each tied part at the parameters' and parts' values (None when a symbol has none).

    Parameters
    ----------
    circuit : Circuit

    Examples
    --------
    >>> from symfilt.model.circuit import Circuit, Part
    >>> c = Circuit.build([Part.resistor("R1", "in", "out", "R/2"), Part.capacitor("C1", "out", "0", "2*C")],
    ...                   parameters={"R": "10k", "C": "symbol"})
    >>> tie_values(c)
    {'R1': 5000, 'C1': None}
    """
    values = {q.symbol: q.value for q in circuit.parameters if q.value is not None}
    values.update({p.symbol: p.value for p in circuit.parts if p.value is not None and p.tie is None})
    out = {}
    for name, expr in circuit.ties().items():
        out[name] = expr.xreplace(values) if expr.free_symbols <= set(values) else None
    return out


def unused_parameters(circuit) -> list[str]:
    """Names of parameters no part's value refers to.

    Parameters
    ----------
    circuit : Circuit

    Examples
    --------
    >>> from symfilt.model.circuit import Circuit, Part
    >>> c = Circuit.build([Part.resistor("R1", "in", "out", "R"), Part.capacitor("C1", "out", "0")],
    ...                   parameters={"R": "1k", "k": "2"})
    >>> unused_parameters(c)
    ['k']
    """
    used = {word for p in circuit.parts if p.tie is not None for word in parse_tie(p.tie)[1]}
    return [q.name for q in circuit.parameters if q.name not in used]


def parameter_units(circuit) -> dict[str, str | None]:
    """Each parameter's unit, inferred from the parts it sets (None when it cannot be told).

    A term of a tie is a product of powers; its dimension (powers of ohm and second)
    must be that of the tied part. Parameters are solved for one at a time from
    terms where they are the only unknown; a parameter with two different answers,
    or with one that is no resistance, capacitance, inductance or plain number, has
    unit None.

    Parameters
    ----------
    circuit : Circuit

    Examples
    --------
    >>> from symfilt.model.circuit import Circuit, Part
    >>> c = Circuit.build([Part.resistor("R1", "in", "out", "R*k"), Part.resistor("R2", "out", "0", "R"),
    ...                    Part.capacitor("C1", "out", "0", "2*C")], parameters={"R": "1k", "C": "1n", "k": "2"})
    >>> parameter_units(c)
    {'R': 'Ω', 'C': 'F', 'k': ''}
    """
    dims, found, _rules = _dimensions(circuit)
    return {q.name: (DIMENSION_UNITS.get(dims[q.name]) if len(found[q.name]) == 1 else None)
            for q in circuit.parameters}


def _dimensions(circuit):
    """(name -> dimension or None, parameter -> dimensions found, [(part, target, term)])."""
    dims: dict[str, tuple | None] = {p.name: KIND_DIMENSIONS.get(p.kind) for p in circuit.parts}
    unknown = {q.name for q in circuit.parameters}
    for name in unknown:
        dims[name] = None
    rules = []
    for p in circuit.parts:
        if p.tie is not None and p.kind in KIND_DIMENSIONS:
            rules += [(p, KIND_DIMENSIONS[p.kind], term) for term in _terms(parse_tie(p.tie)[0])]
    found: dict[str, set] = {name: set() for name in unknown}
    for _round in range(len(unknown) + 1):
        for _p, target, term in rules:
            open_ = [x for x, e in term.items() if dims.get(x) is None and e != 0]
            if len(open_) == 1 and open_[0] in unknown:
                x = open_[0]
                rest = [sum(Fraction(e) * dims[y][i] for y, e in term.items() if y != x) for i in (0, 1)]
                found[x].add(tuple((target[i] - rest[i]) / Fraction(term[x]) for i in (0, 1)))
        for x in unknown:
            if dims[x] is None and len(found[x]) == 1:
                dims[x] = next(iter(found[x]))
    return dims, found, rules


def unit_warnings(circuit) -> list[str]:
    """A message for each tied part whose tie does not give its kind's unit (``R1 = "2*C1"``).

    Parameters
    ----------
    circuit : Circuit

    Examples
    --------
    >>> from symfilt.model.circuit import Circuit, Part
    >>> c = Circuit.build([Part.resistor("R1", "in", "out", "2*C1"), Part.capacitor("C1", "out", "0", "1n")])
    >>> unit_warnings(c)
    ['part R1: its tie 2*C1 is no resistance (a term of it is a capacitance), check the names in it']
    """
    dims, _found, rules = _dimensions(circuit)
    words = {(1, 0): "a resistance", (-1, 1): "a capacitance", (1, 1): "an inductance", (0, 0): "a plain number"}
    nouns = {"resistor": "resistance", "capacitor": "capacitance", "inductor": "inductance", "vcvs": "gain",
             "cccs": "gain", "vccs": "transconductance", "ccvs": "transresistance"}
    out, seen = [], set()
    for p, target, term in rules:
        names = [x for x, e in term.items() if e != 0]
        # a number alone has the part's unit (R + 100 is R plus 100 ohm): only terms with names count
        if p.name in seen or not names or any(dims.get(x) is None for x in names):
            continue
        dim = tuple(sum(Fraction(term[x]) * dims[x][i] for x in names) for i in (0, 1))
        if dim != target:
            seen.add(p.name)
            out.append(f"part {p.name}: its tie {p.tie} is no {nouns[p.kind]} "
                       f"(a term of it is {words.get(dim, 'of another unit')}), check the names in it")
    return out


def _terms(expr: sympy.Expr) -> list[dict[str, int]]:
    """The power products of a tie's numerator terms over its denominator terms (name -> exponent)."""
    num, den = sympy.fraction(sympy.together(expr))
    powers = lambda t: {x.name: int(e) for x, e in t.as_powers_dict().items() if isinstance(x, sympy.Symbol)}
    out = []
    for a in sympy.Add.make_args(sympy.expand(num)):
        for b in sympy.Add.make_args(sympy.expand(den)):
            pa, pb = powers(a), powers(b)
            out.append({x: pa.get(x, 0) - pb.get(x, 0) for x in pa.keys() | pb.keys()})
    return out


def untied(circuit):
    """The circuit with every tied part given the value its tie gives, as a part of its own.

    A tie whose value cannot be told (a symbol without a value) stays; parameters no
    part refers to any more are dropped. For a tolerance study: each tied part is a
    physical part with its own tolerance.

    Parameters
    ----------
    circuit : Circuit

    Examples
    --------
    >>> from symfilt.model.circuit import Circuit, Part
    >>> c = Circuit.build([Part.resistor("R1", "in", "out", "R/2"), Part.capacitor("C1", "out", "0")],
    ...                   parameters={"R": "10k"})
    >>> u = untied(c)
    >>> u.part("R1").value, u.part("R1").tie, u.parameters
    (5000, None, ())
    """
    from dataclasses import replace

    values = tie_values(circuit) if any(p.tie for p in circuit.parts) else {}
    if not values and not circuit.parameters:
        return circuit
    parts = tuple(replace(p, value=values[p.name], tie=None) if values.get(p.name) is not None else p
                  for p in circuit.parts)
    out = replace(circuit, parts=parts)
    unused = set(unused_parameters(out))
    return replace(out, parameters=tuple(q for q in circuit.parameters if q.name not in unused))
