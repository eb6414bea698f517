"""One part of a circuit: its kind, pins, value or tie, and op-amp options.

:class:`Part` is re-exported by :mod:`symfilt.model.circuit`, with the names below.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Iterable

import sympy

from symfilt.errors import ArgumentTypeError, CircuitError
from symfilt.model.fixture import Fixture
from symfilt.model.names import check_symbol_name, clip_name, node_name, suggest
from symfilt.model.opamp import check_opamp_options, opamp_parameters
from symfilt.model.expression import parse_tie, rkm_value, tie_text
from symfilt.model.ties import TIEABLE
from symfilt.model.values import parse_value, unit_of


#: Part kinds and their pins.
PART_PINS: dict[str, tuple[str, ...]] = {
    "resistor": ("a", "b"),
    "capacitor": ("a", "b"),
    "inductor": ("a", "b"),
    "opamp": ("plus", "minus", "out"),
    "vcvs": ("out+", "out-", "ctrl+", "ctrl-"),
    "vccs": ("out+", "out-", "ctrl+", "ctrl-"),
    "ccvs": ("out+", "out-"),
    "cccs": ("out+", "out-"),
}
#: Kinds whose current can control a ccvs or cccs.
CONTROL_KINDS = ("resistor", "capacitor", "inductor", "vcvs", "ccvs")
#: Names of the fixture symbols.
SOURCE_R, LOAD_R, LOAD_C = "R_s", "R_L", "C_L"
#: The Laplace variable.
S = sympy.Symbol("s")


def _value(text, where: str):
    return None if text is None else parse_value(text, where=where)


#: The unit of each passive kind's value, and the words for units in messages.
KIND_UNITS = {"resistor": "Ω", "capacitor": "F", "inductor": "H"}
_UNIT_WORDS = {"Ω": "ohms (a resistance)", "F": "farads (a capacitance)", "H": "henries (an inductance)",
               "Hz": "hertz (a frequency)", "V": "volts (a voltage)", "A": "amperes (a current)"}


def _check_unit(name: str, kind: str, value, where: str) -> None:
    """A unit written with a passive part's value must be the part's own (22nH on a capacitor is refused)."""
    unit = unit_of(value)
    want = KIND_UNITS.get(kind)
    if unit is None or want is None or unit == want:
        return
    raise CircuitError(where, f"value {value!r} is in {_UNIT_WORDS[unit]}, but {clip_name(name)} is a {kind}",
                       f"give a {kind} its value in {_UNIT_WORDS[want].split(' ')[0]}, or check the part's kind")


def part_symbol(name: str, kind: str = "resistor") -> sympy.Symbol:
    """The sympy symbol of a part or fixture.

    Passive parts, fixtures and op-amp parameters are positive; controlled-source
    gains are real (they may be negative).

    Parameters
    ----------
    name : str
        The symbol's name (a part name, ``R_s``, ``A_U1``, ...).
    kind : str
        The part kind, one of :data:`PART_PINS`.

    Examples
    --------
    >>> part_symbol("R1").is_positive, part_symbol("E1", "vcvs").is_positive
    (True, None)
    """
    if kind in ("vcvs", "vccs", "ccvs", "cccs"):
        return sympy.Symbol(name, real=True)
    return sympy.Symbol(name, positive=True)


@dataclass(frozen=True)
class Part:
    """One part of a circuit.

    Parameters
    ----------
    name : str
        Unique name, also the part's symbol (``R1``, ``C2``, ``U1``, ``E1``).
    kind : str
        One of :data:`PART_PINS`.
    nodes : tuple of str
        The pins in the order of :data:`PART_PINS` for that kind.
    value : sympy.Rational or None
        Resistance, capacitance, inductance, or a controlled source's gain; None keeps it symbolic.
    model : str
        Op-amp model: ``ideal``, ``gain``, ``single-pole`` or ``two-pole``
        (see :mod:`symfilt.model.opamp`).
    gain, gbw, pole2 : sympy.Rational or None
        Op-amp open-loop DC gain, gain-bandwidth product (Hz) and second pole (Hz).
    control : str or None
        For ccvs and cccs, the name of the part whose current controls it.
    iout_max, slew : sympy.Rational or None
        Op-amp output current limit (A) and slew rate (V/µs), for the drive check.
    rout, rin, cin : Fixture
        Op-amp output resistance, differential input resistance and input
        capacitance to ground: absent, symbolic or with a value.
    tie : str or None
        A tied value as written (``"R/2"``, see :mod:`symfilt.model.ties`); ``value``
        is then None and the circuit works the value out.

    Examples
    --------
    >>> Part.resistor("R1", "in", "gnd", "4k7").value
    4700
    >>> Part.resistor("R3", "m", "0", "R/2").tie
    'R/2'
    >>> Part.opamp("U1", "a", "out", "out").symbols()
    []
    """

    name: str
    kind: str
    nodes: tuple[str, ...]
    value: sympy.Rational | None = None
    model: str = "ideal"
    gain: sympy.Rational | None = None
    gbw: sympy.Rational | None = None
    control: str | None = None
    iout_max: sympy.Rational | None = None
    slew: sympy.Rational | None = None
    pole2: sympy.Rational | None = None
    rout: Fixture = field(default_factory=Fixture)
    rin: Fixture = field(default_factory=Fixture)
    cin: Fixture = field(default_factory=Fixture)
    tie: str | None = None

    def __post_init__(self) -> None:
        # a Part built directly gets the form checks Part.make gives (the reserved names are
        # checked by Part.make and the circuit file: symfilt's own transformations make parts
        # named R_s or N:R1); internal parts hold a colon, which no user name can
        if not isinstance(self.name, str) or ":" not in self.name:
            check_symbol_name(self.name, f"part {clip_name(self.name)}", reserved=False)
        where = f"part {self.name}"
        if self.kind not in PART_PINS:
            raise CircuitError(where, f"unknown kind {clip_name(self.kind)}", "use one of " + ", ".join(PART_PINS))
        if not isinstance(self.nodes, tuple) or len(self.nodes) != len(PART_PINS[self.kind]) or not all(
                isinstance(n, str) for n in self.nodes):
            raise CircuitError(where, f"the nodes must be a tuple of {len(PART_PINS[self.kind])} names",
                               "list the pins: " + ", ".join(PART_PINS[self.kind]))
        for key in ("value", "gain", "gbw", "iout_max", "slew", "pole2"):
            v = getattr(self, key)
            if v is not None and not (isinstance(v, sympy.Basic) and v.is_Rational):
                raise ArgumentTypeError(f"{where} {key}", f"expected an exact number, got {type(v).__name__}",
                                        "build the part with Part.make or Part.resistor, ..., which read text and numbers")
        self.check_values()

    # --- constructors -------------------------------------------------------
    @classmethod
    def resistor(cls, name: str, a: str, b: str, value=None) -> "Part":
        """A resistor between nodes ``a`` and ``b``.

        Parameters
        ----------
        name, a, b : str
            Part name and its two nodes.
        value : str, number or None
            Resistance in ohms (text such as ``"4k7"`` or a number); None keeps it symbolic.

        Examples
        --------
        >>> Part.resistor("R2", "x", "0", "10k").nodes
        ('x', '0')
        """
        return cls.make(name, "resistor", (a, b), value=value)

    @classmethod
    def capacitor(cls, name: str, a: str, b: str, value=None) -> "Part":
        """A capacitor between nodes ``a`` and ``b``.

        Parameters
        ----------
        name, a, b : str
            Part name and its two nodes.
        value : str, number or None
            Capacitance in farads (text such as ``"4k7"`` or a number); None keeps it symbolic.

        Examples
        --------
        >>> Part.capacitor("C1", "x", "gnd", "22n").kind
        'capacitor'
        """
        return cls.make(name, "capacitor", (a, b), value=value)

    @classmethod
    def inductor(cls, name: str, a: str, b: str, value=None) -> "Part":
        """An inductor between nodes ``a`` and ``b``.

        Parameters
        ----------
        name, a, b : str
            Part name and its two nodes.
        value : str, number or None
            Inductance in henries (text such as ``"4k7"`` or a number); None keeps it symbolic.

        Examples
        --------
        >>> Part.inductor("L1", "x", "y", "10m").value
        1/100
        """
        return cls.make(name, "inductor", (a, b), value=value)

    @classmethod
    def opamp(cls, name: str, plus: str, minus: str, out: str, model: str = "ideal",
              gain=None, gbw=None, iout_max=None, slew=None, *, pole2=None, rout=None, rin=None,
              cin=None) -> "Part":
        """An op-amp with pins ``plus``, ``minus``, ``out`` (output against ground).

        Parameters
        ----------
        name, plus, minus, out : str
            Part name, non-inverting input, inverting input and output nodes.
        model : str
            ``ideal``, ``gain``, ``single-pole`` or ``two-pole``.
        gain, gbw, iout_max, slew : str, number or None
            DC gain, gain-bandwidth (Hz), output current limit (A), slew rate (V/µs).
        pole2 : str, number or None
            Second open-loop pole (Hz) of the ``two-pole`` model.
        rout, rin, cin : str, number or None
            Output resistance, differential input resistance, input capacitance to
            ground: None or ``"none"`` (absent), ``"symbol"`` or a value.

        Examples
        --------
        >>> Part.opamp("U1", "a", "out", "out", model="gain", gain="100k").symbols()
        ['A_U1']
        >>> Part.opamp("U1", "a", "out", "out", rout="symbol").symbols()
        ['Rout_U1']
        """
        return cls.make(name, "opamp", (plus, minus, out), model=model, gain=gain, gbw=gbw,
                        iout_max=iout_max, slew=slew, pole2=pole2, rout=rout, rin=rin, cin=cin)

    @classmethod
    def make(cls, name: str, kind: str, nodes: Iterable[str], *, value=None, model: str = "ideal",
             gain=None, gbw=None, control: str | None = None, iout_max=None, slew=None, pole2=None,
             rout=None, rin=None, cin=None) -> "Part":
        """Build and check any part, parsing values from text.

        Parameters
        ----------
        name, kind, nodes, value, model, gain, gbw, control, iout_max, slew, pole2, rout, rin, cin : object
            As the fields of :class:`Part`; values may be text (``"22n"``) or numbers,
            ``rout``, ``rin``, ``cin`` also ``"symbol"`` or ``"none"``.

        Raises
        ------
        CircuitError, SizeLimitError, ValueParseError
            For a bad name, kind, pin list, option or value.

        Examples
        --------
        >>> Part.make("E1", "vcvs", ["o", "0", "i", "0"], value="2").value
        2
        """
        where = f"part {clip_name(name)}"
        check_symbol_name(name, where)
        extras = {"pole2": pole2, "rout": rout, "rin": rin, "cin": cin}
        if not isinstance(kind, str) or kind not in PART_PINS:
            hint = suggest(kind, PART_PINS) if isinstance(kind, str) else ""
            raise CircuitError(where, f"unknown kind {clip_name(kind)!r}" if isinstance(kind, str) else f"unknown kind {clip_name(kind)}",
                               hint + "use one of " + ", ".join(PART_PINS))
        if isinstance(nodes, (str, bytes)) or not isinstance(nodes, Iterable):
            raise CircuitError(where, "the nodes must be a list", "list the pins: " + ", ".join(PART_PINS[kind]))
        nodes = list(nodes)
        if len(nodes) != len(PART_PINS[kind]):
            raise CircuitError(where, f"a {kind} has {len(PART_PINS[kind])} pins ({', '.join(PART_PINS[kind])}), got {len(nodes)}",
                               "list exactly those pins")
        nodes = tuple(node_name(n, where) for n in nodes)
        check_opamp_options(where, kind, model, value, (gain, gbw, iout_max, slew, *extras.values()))
        if kind in ("ccvs", "cccs"):
            if not control:
                raise CircuitError(where, f"a {kind} needs control = \"<part whose current controls it>\"",
                                   "name a resistor, capacitor, inductor, vcvs or ccvs")
            if not isinstance(control, str):
                raise CircuitError(where, f"control {clip_name(control)} is not a part name",
                                   "name a resistor, capacitor, inductor, vcvs or ccvs")
        elif control is not None:
            raise CircuitError(where, f"a {kind} takes no control part", "remove control")
        tie = tie_text(value) if kind in TIEABLE else None
        if tie is not None:
            parse_tie(tie, where)  # a malformed expression is refused here; names are checked by the circuit
            value = rkm_value(tie)
        _check_unit(name, kind, value, where)
        part = cls(name=name, kind=kind, nodes=nodes, value=_value(value, where), model=model, tie=tie,
                   gain=_value(gain, f"{where} gain"), gbw=_value(gbw, f"{where} gbw"), control=control,
                   iout_max=_value(iout_max, f"{where} iout_max"), slew=_value(slew, f"{where} slew"),
                   pole2=_value(pole2, f"{where} pole2"),
                   **{k: Fixture.parse(extras[k], f"{where} {k}") for k in ("rout", "rin", "cin")})
        part.check_values()
        return part

    # --- checks and symbols ---------------------------------------------------
    def check_values(self) -> None:
        """Raise CircuitError for values that no real part has (zero, negative).

        Zero resistance or inductance is a wire, zero capacitance an open circuit;
        passive values and op-amp parameters are positive. A controlled source's
        gain may be any real number.

        Examples
        --------
        >>> Part.resistor("R1", "a", "b", "0")
        Traceback (most recent call last):
        ...
        symfilt.errors.CircuitError: part R1: a resistance of 0 is a short circuit, use a wire, or remove the part
        >>> Part.capacitor("C1", "a", "b", "-22n")
        Traceback (most recent call last):
        ...
        symfilt.errors.CircuitError: part C1: a negative capacitance (-22n) is not a real part, give its magnitude
        """
        from symfilt.model.values import format_value

        where = f"part {self.name}"
        if self.kind in ("resistor", "capacitor", "inductor") and self.value is not None:
            what = {"resistor": "resistance", "capacitor": "capacitance", "inductor": "inductance"}[self.kind]
            if self.value == 0:
                if self.kind == "capacitor":
                    raise CircuitError(where, "a capacitance of 0 is an open circuit", "remove the part")
                raise CircuitError(where, f"a{'n' if what[0] == 'i' else ''} {what} of 0 is a short circuit",
                                   "use a wire, or remove the part")
            if self.value < 0:
                shown = format_value(self.value).replace(" ", "")
                raise CircuitError(where, f"a negative {what} ({shown}) is not a real part", "give its magnitude")
        if self.kind == "opamp":
            for label in ("gain", "gbw", "pole2", "iout_max", "slew"):
                v = getattr(self, label)
                if v is not None and v <= 0:
                    raise CircuitError(where, f"the op-amp's {label} must be positive, got {format_value(v).replace(' ', '')}",
                                       f"give a positive {label}")

    @property
    def symbol(self) -> sympy.Symbol:
        """The part's own symbol (its name).

        Examples
        --------
        >>> Part.capacitor("C1", "a", "b").symbol
        C1
        """
        return part_symbol(self.name, self.kind)

    def symbols(self) -> list[str]:
        """Names of the symbols this part brings into the equations.

        Examples
        --------
        >>> Part.opamp("U2", "a", "b", "c", model="single-pole").symbols()
        ['A_U2', 'GBW_U2']
        """
        if self.kind != "opamp":
            return [self.name]
        return [name for name, _param, _value in opamp_parameters(self)]
