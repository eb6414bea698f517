"""The op-amp's small-signal model: its models, its parameters and their symbols.

An op-amp is a voltage-controlled voltage source ``A(s)·(V+ − V−)`` at an internal
node, behind an output resistance, with an input resistance and input
capacitances::

              Rin_U                     Rout_U
    plus o---/\\/\\---o minus      e o---/\\/\\---o out      e = A(s)·(V+ − V−)
         |            |
       Cin_U        Cin_U           (ideal: A -> oo, a nullor)
         |            |
        gnd          gnd

* ``model``: ``ideal`` (A -> oo), ``gain`` (A = A0, flat), ``integrator``
  (A(s) = 2π·GBW/s: the single pole at DC, infinite DC gain), ``single-pole``
  (A(s) = A0·2π·GBW/(A0·s + 2π·GBW)) or ``two-pole`` (that times
  2π·P2/(s + 2π·P2), a second pole at ``pole2`` Hz).
* ``rout``, ``rin``, ``cin``: optional with every model. Absent means 0 Ω,
  an open circuit and no capacitance; ``"symbol"`` keeps the parameter as the
  symbol ``Rout_<name>``, ``Rin_<name>``, ``Cin_<name>``; a value fixes it. ``cin``
  is from each input to ground (the same value on both).
* ``en``, ``in``, ``fc_en``, ``fc_in``: noise data (densities in V/√Hz and A/√Hz, 1/f
  corners in Hz); they never enter the equations (:mod:`symfilt.model.noise`).

>>> [p.key for p in PARAMETERS]
['gain', 'gbw', 'pole2', 'rout', 'rin', 'cin', 'iout_max', 'slew', 'en', 'in', 'fc_en', 'fc_in']
"""

from __future__ import annotations

from dataclasses import dataclass

from symfilt.errors import CircuitError
from symfilt.model.names import clip_name

#: Op-amp models, in order of detail.
OPAMP_MODELS = ("ideal", "gain", "integrator", "single-pole", "two-pole")
#: Models with a finite open-loop gain A0 (the integrator's DC gain is infinite).
FINITE_MODELS = ("gain", "single-pole", "two-pole")
#: Models whose open-loop gain falls with frequency (they bring ``gbw``).
BANDWIDTH_MODELS = ("integrator", "single-pole", "two-pole")


@dataclass(frozen=True)
class Parameter:
    """One op-amp parameter: its file key, the symbol prefix and what it is.

    Parameters
    ----------
    key : str
        The key in a circuit file and the field of :class:`~symfilt.model.circuit.Part`.
    prefix : str or None
        The symbol is ``<prefix><op-amp name>``; None when it never enters the equations.
    meaning : str
        Words for notes and messages.
    unit : str
        SI unit of the value.
    models : tuple of str
        The models that use it; empty when every model may have it (as a fixture-like
        parameter that is absent unless given).

    Examples
    --------
    >>> PARAMETER["rout"].symbol("U1")
    'Rout_U1'
    """

    key: str
    prefix: str | None
    meaning: str
    unit: str
    models: tuple = ()

    def symbol(self, name: str) -> str | None:
        """The symbol name of this parameter for the op-amp ``name``.

        Parameters
        ----------
        name : str
            The op-amp's part name.

        Examples
        --------
        >>> PARAMETER["gbw"].symbol("U2")
        'GBW_U2'
        """
        return None if self.prefix is None else f"{self.prefix}{name}"

    @property
    def optional(self) -> bool:
        """True for ``rout``, ``rin`` and ``cin``: absent unless given, with any model.

        Examples
        --------
        >>> PARAMETER["rout"].optional, PARAMETER["gain"].optional
        (True, False)
        """
        return self.prefix is not None and not self.models


PARAMETERS = (
    Parameter("gain", "A_", "open-loop DC gain", "", FINITE_MODELS),
    Parameter("gbw", "GBW_", "gain-bandwidth product", "Hz", BANDWIDTH_MODELS),
    Parameter("pole2", "P2_", "second open-loop pole", "Hz", ("two-pole",)),
    Parameter("rout", "Rout_", "open-loop output resistance", "Ω"),
    Parameter("rin", "Rin_", "differential input resistance", "Ω"),
    Parameter("cin", "Cin_", "input capacitance to ground on each input", "F"),
    Parameter("iout_max", None, "output current limit", "A"),
    Parameter("slew", None, "slew rate", "V/µs"),
    # noise data: no Part field, no symbol in the MNA equations (read by symfilt.model.noise)
    Parameter("en", None, "voltage noise density", "V/√Hz"),
    Parameter("in", None, "current noise density", "A/√Hz"),
    Parameter("fc_en", None, "1/f corner of the voltage noise", "Hz"),
    Parameter("fc_in", None, "1/f corner of the current noise", "Hz"),
)
#: key -> Parameter.
PARAMETER = {p.key: p for p in PARAMETERS}
#: Symbol prefix -> Parameter, for the parameters that have a symbol.
BY_PREFIX = {p.prefix: p for p in PARAMETERS if p.prefix}


def model_parameters(model: str) -> list[Parameter]:
    """The parameters a model always brings (gain, gbw, pole2 as it needs them).

    Parameters
    ----------
    model : str
        One of :data:`OPAMP_MODELS`.

    Examples
    --------
    >>> [p.key for p in model_parameters("two-pole")]
    ['gain', 'gbw', 'pole2']
    """
    return [p for p in PARAMETERS if model in p.models]


def parameter_of_symbol(name: str) -> tuple[Parameter, str] | None:
    """(parameter, op-amp name) for an op-amp symbol name such as ``Rout_U1``, else None.

    Parameters
    ----------
    name : str
        A symbol name.

    Examples
    --------
    >>> p, amp = parameter_of_symbol("Cin_U3")
    >>> p.key, amp
    ('cin', 'U3')
    >>> parameter_of_symbol("R1") is None
    True
    """
    for prefix, param in BY_PREFIX.items():
        if name.startswith(prefix) and len(name) > len(prefix):
            return param, name[len(prefix):]
    return None


def internal_node(name: str) -> str:
    """The internal node of an op-amp with an output resistance (behind ``Rout``).

    Control characters are refused in user node names, so it cannot collide.

    Parameters
    ----------
    name : str
        The op-amp's part name.

    Examples
    --------
    >>> internal_node("U1") == "\\x00U1:e"
    True
    """
    return f"\x00{name}:e"


def opamp_parameters(part) -> list[tuple[str, Parameter, object]]:
    """(symbol name, Parameter, value or None) of each op-amp parameter in the equations.

    The model's own (gain, gbw, pole2) and the optional ``rout``, ``rin``, ``cin``
    that are present; empty for a part that is not an op-amp.

    Parameters
    ----------
    part : Part
        Any part.

    Examples
    --------
    >>> from symfilt.model.circuit import Part
    >>> [(n, v) for n, _p, v in opamp_parameters(Part.opamp("U1", "a", "b", "c", rin="1M"))]
    [('Rin_U1', 1000000)]
    """
    if part.kind != "opamp":
        return []
    out = [(p.symbol(part.name), p, getattr(part, p.key)) for p in model_parameters(part.model)]
    for p in PARAMETERS:
        fixture = getattr(part, p.key) if p.optional else None
        if fixture is not None and fixture.present:
            out.append((p.symbol(part.name), p, fixture.value))
    return out


def check_opamp_options(where: str, kind: str, model, value, options: tuple) -> None:
    """Raise CircuitError for an op-amp with a value or an unknown model, or op-amp options on another kind.

    Parameters
    ----------
    where : str
        The part, for the message.
    kind : str
        The part's kind.
    model : object
        The model given.
    value : object
        The value given (an op-amp has none).
    options : tuple
        The op-amp options given (None when absent).

    Examples
    --------
    >>> check_opamp_options("part R1", "resistor", "ideal", "1k", (None, "50"))
    Traceback (most recent call last):
    ...
    symfilt.errors.CircuitError: part R1: model, gain, gbw, pole2, rout, rin, cin, iout_max and slew belong to op-amps, not to a resistor, remove them
    """
    if kind == "opamp":
        if not isinstance(model, str) or model not in OPAMP_MODELS:
            raise CircuitError(where, f"unknown op-amp model {clip_name(model)!r}", "use one of " + ", ".join(OPAMP_MODELS))
        if value is not None:
            raise CircuitError(where, "an op-amp has no value", "use gain = ... and gbw = ... for its model")
    elif any(v is not None for v in options) or model != "ideal":
        controlled = kind in ("vcvs", "vccs", "ccvs", "cccs")
        raise CircuitError(where, "model, " + ("" if controlled else "gain, ") + "gbw, pole2, rout, rin, cin, iout_max "
                           f"and slew belong to op-amps, not to a {kind}",
                           "remove them" + (", and give a controlled source's gain as gain" if controlled else ""))
