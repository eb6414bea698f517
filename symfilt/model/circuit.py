"""Circuits as values: parts, ports, source and load fixtures, and their symbols.

:class:`Fixture` lives in :mod:`symfilt.model.fixture` and is re-exported here.

A :class:`Circuit` is frozen. It is built from a circuit file
(:func:`symfilt.model.circuit_file.load_circuit`), from the catalogue, or directly in Python::

    >>> c = Circuit.build(
    ...     [Part.resistor("R1", "in", "out", "4k7"), Part.capacitor("C1", "out", "gnd", "22n")],
    ...     source="600", load="10k")
    >>> sorted(c.symbols())
    ['C1', 'R1', 'R_L', 'R_s', 's']

Ground is the node ``0`` or ``gnd`` (any case); it is stored as ``"0"``.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Iterable, Mapping

import sympy

from symfilt.errors import ArgumentTypeError, CircuitError
from symfilt.model.fixture import Fixture
from symfilt.model.names import GROUND, clip_name, is_ground, node_name
from symfilt.model.opamp import OPAMP_MODELS, opamp_parameters
from symfilt.model.ties import Parameter
from symfilt.model.values import parse_value

from symfilt.model.part import CONTROL_KINDS, LOAD_C, LOAD_R, PART_PINS, S, SOURCE_R, Part, part_symbol

__all__ = ["GROUND", "OPAMP_MODELS", "clip_name", "is_ground", "node_name", "opamp_parameters", "CONTROL_KINDS", "LOAD_C", "LOAD_R", "PART_PINS", "S", "SOURCE_R", "Part", "part_symbol",
           "Circuit", "Fixture", "Parameter"]


def _value(text, where: str):
    return None if text is None else parse_value(text, where=where)


@dataclass(frozen=True)
class Circuit:
    """A circuit with its ports and fixtures.

    Parameters
    ----------
    parts : tuple of Part
    input, output : str
        The node the source drives and the node whose voltage is the output.
    source : Fixture
        Source resistance ``R_s`` (absent: ideal source).
    load_resistance, load_capacitance : Fixture
        Load ``R_L`` and ``C_L`` (absent: open output).
    title : str
    parameters : tuple of Parameter
        Named values or symbols that tied parts refer to (:mod:`symfilt.model.ties`).
    probes : tuple of (str, str)
        (label, node) pairs: more nodes whose voltage is reported against the source, with
        the load staying on ``output`` (:mod:`symfilt.analysis.probe`).
    keep : tuple of str or None
        None: every symbol stays symbolic (the default). Otherwise only these symbols (and
        ``s``) do: the other values go in before the elimination (:mod:`symfilt.model.keep`).

    Examples
    --------
    >>> c = Circuit.build([Part.resistor("R1", "in", "out")], load="symbol")
    >>> c.load_resistance
    Fixture(present=True, value=None)
    """

    parts: tuple[Part, ...]
    input: str = "in"
    output: str = "out"
    source: Fixture = field(default_factory=Fixture)
    load_resistance: Fixture = field(default_factory=Fixture)
    load_capacitance: Fixture = field(default_factory=Fixture)
    title: str = ""
    parameters: tuple[Parameter, ...] = ()
    probes: tuple[tuple[str, str], ...] = ()
    keep: tuple[str, ...] | None = None

    def __post_init__(self) -> None:
        if isinstance(self.parts, (str, bytes)) or not isinstance(self.parts, (tuple, list)):
            raise ArgumentTypeError("Circuit parts", f"expected a list of Part, got {type(self.parts).__name__}",
                                    "pass parts such as [Part.resistor(\"R1\", \"in\", \"out\")]")
        bad = next((p for p in self.parts if not isinstance(p, Part)), None)
        if bad is not None:
            raise ArgumentTypeError("Circuit parts", f"expected Part values, got a {type(bad).__name__}",
                                    "build each with Part.resistor, Part.capacitor, ... or Part.make")
        if isinstance(self.parts, list):
            object.__setattr__(self, "parts", tuple(self.parts))
        # a bare word that is also an RKM code (R47) is a tie when the circuit has that name
        names = {q.name for q in self.parameters} | {p.name for p in self.parts}
        settled = tuple(p if p.tie is None or p.value is None else
                        replace(p, value=None) if p.tie in names else replace(p, tie=None) for p in self.parts)
        if settled != self.parts:
            object.__setattr__(self, "parts", settled)

    @classmethod
    def build(cls, parts: Iterable[Part], *, input: str = "in", output: str = "out", source=None,
              load=None, load_capacitance=None, title: str = "", parameters=None) -> "Circuit":
        """Build and check a circuit; fixtures as text (``"600"``, ``"symbol"``, ``"none"``) or None.

        Parameters
        ----------
        parts : iterable of Part
        input, output : str
            The driven node and the output node.
        source, load, load_capacitance : str, number or None
            Source resistance ``R_s``, load resistance ``R_L`` and load capacitance ``C_L``.
        title : str
        parameters : mapping of str to str, number or None, optional
            Parameter name -> value text or ``"symbol"`` (None keeps it a symbol).

        Examples
        --------
        >>> Circuit.build([Part.resistor("R1", "in", "out", "1k")], source="50").source.value
        50
        >>> c = Circuit.build([Part.resistor("R1", "in", "out", "R"), Part.resistor("R2", "out", "0", "R/2")],
        ...                   parameters={"R": "10k"})
        >>> c.ties()
        {'R1': R, 'R2': R/2}
        """
        if parts is None or isinstance(parts, (str, bytes)) or not hasattr(parts, "__iter__"):
            raise ArgumentTypeError("Circuit.build parts", f"expected a list of Part, got {type(parts).__name__}",
                                    "pass parts such as [Part.resistor(\"R1\", \"in\", \"out\")]")
        if parameters is not None and not isinstance(parameters, Mapping):
            raise ArgumentTypeError("Circuit.build parameters", f"expected a mapping, got {type(parameters).__name__}",
                                    "pass a dict such as {\"R\": \"10k\"}")
        params = tuple(Parameter.parse(k, v) for k, v in (parameters or {}).items())
        c = cls(parts=tuple(parts), input=node_name(input, "ports input"), output=node_name(output, "ports output"),
                source=Fixture.parse(source, "source resistance"),
                load_resistance=Fixture.parse(load, "load resistance"),
                load_capacitance=Fixture.parse(load_capacitance, "load capacitance"), title=title,
                parameters=params)
        c.check()
        return c

    @classmethod
    def from_file(cls, path) -> "Circuit":
        """Read a circuit file (see :mod:`symfilt.model.circuit_file`).

        Parameters
        ----------
        path : str or path-like
            The circuit file.

        Examples
        --------
        >>> import tempfile, pathlib
        >>> p = pathlib.Path(tempfile.mkdtemp()) / "c.toml"
        >>> _ = p.write_text('[parts]\\nR1 = {kind = "resistor", nodes = ["in", "out"]}\\n'
        ...                  'C1 = {kind = "capacitor", nodes = ["out", "gnd"]}\\n')
        >>> len(Circuit.from_file(p).parts)
        2
        """
        from symfilt.model.circuit_file import load_circuit

        return load_circuit(path)

    # --- queries --------------------------------------------------------------
    def part(self, name: str) -> Part:
        """The part called ``name``.

        Parameters
        ----------
        name : str
            A part name; CircuitError if there is none such.

        Examples
        --------
        >>> Circuit.build([Part.resistor("R1", "in", "out"), Part.resistor("R2", "out", "0")]).part("R1").kind
        'resistor'
        """
        for p in self.parts:
            if p.name == name:
                return p
        raise CircuitError(f"part {name}", "no such part", "use one of " + ", ".join(p.name for p in self.parts))

    def nodes(self) -> list[str]:
        """Non-ground nodes in first-seen order (ports first).

        Examples
        --------
        >>> Circuit.build([Part.resistor("R1", "in", "out"), Part.capacitor("C1", "out", "0")]).nodes()
        ['in', 'out']
        """
        seen: dict[str, None] = {}
        for n in (self.input, self.output):
            if n != GROUND:
                seen.setdefault(n, None)
        for p in self.parts:
            for n in p.nodes:
                if n != GROUND:
                    seen.setdefault(n, None)
        return list(seen)

    def symbols(self) -> dict[str, dict]:
        """Every symbol with its role and value (None when symbolic), in a stable order.

        Roles are ``parameter``, ``part``, ``source``, ``load``, ``opamp`` and ``laplace``. A tied
        part has the key ``tie`` (its expression as written) and the value the tie gives
        (None when a symbol it refers to has none); a parameter has the key ``unit``
        (:func:`symfilt.model.ties.parameter_units`).

        Examples
        --------
        >>> c = Circuit.build([Part.resistor("R1", "in", "out", "1k"), Part.resistor("R2", "out", "0")], source="50")
        >>> c.symbols()["R_s"]
        {'role': 'source', 'value': 50, 'symbol': R_s}
        >>> c = Circuit.build([Part.resistor("R1", "in", "out", "R"), Part.resistor("R2", "out", "0", "R/2")],
        ...                   parameters={"R": "10k"})
        >>> c.symbols()["R2"]["tie"], c.symbols()["R2"]["value"], c.symbols()["R"]["role"]
        ('R/2', 5000, 'parameter')
        """
        from symfilt.model.symbols import symbol_rows

        return symbol_rows(self)

    def symbol_table(self) -> dict[str, sympy.Symbol]:
        """Name -> sympy symbol for every symbol of the circuit.

        Examples
        --------
        >>> Circuit.build([Part.resistor("E", "in", "out"), Part.resistor("N", "out", "0")]).symbol_table()["E"]
        E
        """
        return {name: info["symbol"] for name, info in self.symbols().items()}

    def values(self) -> dict[sympy.Symbol, sympy.Rational]:
        """Symbol -> exact value, for the symbols that have one.

        Examples
        --------
        >>> Circuit.build([Part.resistor("R1", "in", "out", "1k"), Part.capacitor("C1", "out", "0")]).values()
        {R1: 1000}
        """
        return {info["symbol"]: info["value"] for info in self.symbols().values() if info["value"] is not None}

    def ties(self) -> dict[str, sympy.Expr]:
        """Tied part name -> its value as an expression over the free symbols.

        Examples
        --------
        >>> Circuit.build([Part.resistor("R1", "in", "out", "2*R2"), Part.resistor("R2", "out", "0")]).ties()
        {'R1': 2*R2}
        """
        from symfilt.model.ties import resolve_ties

        return resolve_ties(self.parts, self.parameters) if any(p.tie for p in self.parts) else {}

    # --- transformations -----------------------------------------------------
    def without_fixtures(self) -> "Circuit":
        """The stage alone: ideal source, open output.

        Examples
        --------
        >>> Circuit.build([Part.resistor("R1", "in", "out")], source="1k").without_fixtures().source.present
        False
        """
        return replace(self, source=Fixture(), load_resistance=Fixture(), load_capacitance=Fixture())

    def with_probes(self, nodes: Iterable[str]) -> "Circuit":
        """A copy that also probes these nodes (each labelled by its own name).

        Parameters
        ----------
        nodes : iterable of str
            Node names; a node already probed is not added twice.

        Examples
        --------
        >>> c = Circuit.build([Part.resistor("R1", "in", "mid"), Part.resistor("R2", "mid", "out"),
        ...                    Part.capacitor("C1", "out", "0")])
        >>> c.with_probes(["mid"]).probes
        (('mid', 'mid'),)
        """
        from symfilt.model.structure import check_probes

        have = {node for _label, node in self.probes}
        extra = []
        for n in nodes:
            n = node_name(n, "probe")
            if n not in have:
                have.add(n)
                extra.append((n, n))
        c = replace(self, probes=self.probes + tuple(extra))
        check_probes(c)
        return c

    def keeping(self, names) -> "Circuit":
        """A copy derived partly symbolically: only ``names`` (and ``s``) stay symbols.

        Parameters
        ----------
        names : str, iterable of str or None
            ``"R_L,R_s"`` or a list of symbol names; None goes back to fully symbolic.
            A name that is not a symbol of the circuit is a CircuitError with a suggestion.

        Examples
        --------
        >>> c = Circuit.build([Part.resistor("R1", "in", "out", "1k"), Part.capacitor("C1", "out", "0", "1u")],
        ...                   load="10k")
        >>> c.keeping("R_L").keep
        ('R_L',)
        """
        if names is None:
            return replace(self, keep=None)
        from symfilt.model.keep import check_keep, parse_keep

        return replace(self, keep=check_keep(self, parse_keep(names)))

    def with_opamp_model(self, model: str, gain=None, gbw=None) -> "Circuit":
        """Every op-amp switched to ``model``; parts keep their own gain and gbw values.

        Parameters
        ----------
        model : str
            ``ideal``, ``gain`` or ``single-pole``.
        gain, gbw : str, number or None
            DC gain and gain-bandwidth (Hz) for op-amps that have none.

        Examples
        --------
        >>> c = Circuit.build([Part.opamp("U1", "in", "out", "out"), Part.resistor("R1", "out", "0")])
        >>> c.with_opamp_model("gain").parts[0].model
        'gain'
        """
        if model not in OPAMP_MODELS:
            raise CircuitError("opamp model", f"unknown model {model!r}", "use one of " + ", ".join(OPAMP_MODELS))
        parts = tuple(replace(p, model=model, gain=p.gain if p.gain is not None else _value(gain, "opamp gain"),
                              gbw=p.gbw if p.gbw is not None else _value(gbw, "opamp gbw"))
                      if p.kind == "opamp" else p for p in self.parts)
        return replace(self, parts=parts)

    def with_values(self, values: Mapping[str, object]) -> "Circuit":
        """A copy with some part or fixture values replaced (name -> value text or number).

        A parameter gets the new value; a tied part given a value is no longer tied.

        Parameters
        ----------
        values : mapping of str to str or number
            Symbol name (``R1``, ``R_s``, ``A_U1``, a parameter, ...) -> new value.

        Examples
        --------
        >>> c = Circuit.build([Part.resistor("R1", "in", "out", "1k"), Part.resistor("R2", "out", "0")])
        >>> c.with_values({"R1": "2k"}).part("R1").value
        2000
        """
        from symfilt.model.symbols import with_values

        if not isinstance(values, Mapping):
            raise ArgumentTypeError("with_values values", f"expected a mapping, got {type(values).__name__}",
                                    "pass a dict such as {\"R1\": \"4k7\"}")
        return with_values(self, values)

    # --- validation ----------------------------------------------------------
    def check(self) -> None:
        """Structural checks that need no algebra; raise CircuitError on the first problem.

        Examples
        --------
        >>> Circuit.build([Part.resistor("R1", "in", "in")])
        Traceback (most recent call last):
        ...
        symfilt.errors.CircuitError: part R1: both ends are on node in, connect it between two different nodes
        """
        from symfilt.model.structure import check_structure
        from symfilt.model.ties import check_ties

        check_structure(self)
        if self.probes:
            from symfilt.model.structure import check_probes

            check_probes(self)
        if self.parameters or any(p.tie for p in self.parts):
            check_ties(self)
