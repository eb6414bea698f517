"""Source and load fixtures: what drives a circuit's input or loads its output.

A fixture is absent (ideal source, open output), symbolic (``R_s``, ``R_L``, ``C_L``
kept as symbols) or has an exact value. :class:`~symfilt.model.circuit.Circuit` holds
three of them; ``symfilt.model.circuit`` re-exports :class:`Fixture`.

>>> Fixture.parse("600", "source resistance").value
600
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import sympy

from symfilt.errors import CircuitError, ValueParseError
from symfilt.model.names import clip_name
from symfilt.model.values import format_value, parse_value


@dataclass(frozen=True)
class Fixture:
    """What drives the input or loads the output: absent, symbolic, or with a value.

    Parameters
    ----------
    present : bool
        False for an absent fixture (ideal source, open output).
    value : sympy.Rational or None
        Resistance (ohms) or capacitance (farads); None keeps it symbolic.

    Examples
    --------
    >>> Fixture.parse("2k", "source resistance")
    Fixture(present=True, value=2000)
    >>> Fixture.parse("none", "x").present
    False
    """

    present: bool = False
    value: sympy.Rational | None = None

    @classmethod
    def parse(cls, text, where: str) -> "Fixture":
        """Read ``"none"``, ``"symbol"`` or a value.

        Parameters
        ----------
        text : str, number, Fixture or None
            ``"none"``/None/``""`` (absent), ``"symbol"`` or a positive value such as ``"600"``.
        where : str
            The place to name in an error message.

        Examples
        --------
        >>> Fixture.parse("symbol", "load resistance")
        Fixture(present=True, value=None)
        """
        if text is None or (isinstance(text, str) and text.strip().lower() in ("none", "")):
            return cls()
        if isinstance(text, str) and text.strip().lower() == "symbol":
            return cls(True, None)
        if isinstance(text, Fixture):
            return text
        hint = "write a positive value, \"symbol\" to keep it symbolic, or \"none\" to leave it out"
        if (isinstance(text, float) and not math.isfinite(text)) or (
                isinstance(text, str) and text.strip().lower().lstrip("+-") in ("inf", "infinity", "nan")):
            raise ValueParseError(where, f"value {clip_name(str(text))} is not finite", hint)
        value = parse_value(text, where=where)
        if value <= 0:
            shown = format_value(value).replace(" ", "")
            raise CircuitError(where, f"value {shown} must be positive", hint)
        return cls(True, value)
