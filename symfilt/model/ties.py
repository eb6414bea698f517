"""Tied values: named parameters, and part values written as expressions over them.

A circuit's parameters (``[parameters]`` in a circuit file, ``parameters=`` in
:meth:`~symfilt.model.circuit.Circuit.build`) are named values or symbols
(``R = "10k"``, ``k = "symbol"``). A part's value may then be an expression over
parameter names and other parts' names: ``"R"``, ``"R/2"``, ``"2*C1"``, ``"R1*k"``,
``"(R1 + R2)/2"`` (read by :mod:`symfilt.model.expression`). Such a part is *tied*: its
symbol is replaced by the expression in every derived quantity, so the free symbols are
the parameters and the untied parts.
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass
from fractions import Fraction

import sympy

from symfilt.errors import CircuitError
from symfilt.model.expression import parse_tie
from symfilt.model.names import clip_name
from symfilt.model.values import format_value, parse_value

#: The fixtures' symbols: a tie may not name them (they are limits of the ideal view).
FIXTURE_NAMES = ("R_s", "R_L", "C_L")
#: Part kinds a tie may refer to, and whose value may be tied.
TIEABLE = ("resistor", "capacitor", "inductor", "vcvs", "vccs", "ccvs", "cccs")
#: Dimensions (exponents of ohm and second) of the values of each part kind.
KIND_DIMENSIONS = {"resistor": (1, 0), "capacitor": (-1, 1), "inductor": (1, 1), "vcvs": (0, 0),
                   "cccs": (0, 0), "vccs": (-1, 0), "ccvs": (1, 0)}
#: Unit shown for a parameter of each dimension.
DIMENSION_UNITS = {(1, 0): "Ω", (-1, 1): "F", (1, 1): "H", (0, 0): ""}


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
            if word in FIXTURE_NAMES:
                raise CircuitError(f"part {name}", f"the value refers to {word}, the source or load, which a tie cannot name",
                                   "give the part a value or a parameter of its own")
            if word not in known:
                close = difflib.get_close_matches(word, known, n=3)
                hint = f"did you mean {' or '.join(close)}? " if close else ""
                raise CircuitError(f"part {name}", f"the value refers to {word}, which is no parameter or part",
                                   hint + "add it under [parameters], or name one of: "
                                   + (", ".join(known[:12]) + (", ..." if len(known) > 12 else "") or "(none)"))
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
