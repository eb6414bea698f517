"""Component values: exact parsing and engineering formatting.

Accepted forms (see DEVELOPERS.md for the full list):

* plain numbers, read exactly as decimals: ``"2200"``, ``"2.2e-9"``, ``"1/3"``;
* an SI prefix after the number (BIPM SI Brochure): ``"4.7k"``, ``"22n"``, ``"1.5M"``
  (``M`` is mega, ``m`` is milli, ``u`` and ``µ`` are micro);
* the RKM code of IEC 60062, the prefix letter standing for the decimal point:
  ``"4k7"``, ``"2n2"``, ``"1R5"`` (``R`` marks the point with no multiplier);
* an optional unit after it: ``Ω``, ``ohm``, ``ohms``, ``F``, ``H``, ``Hz``, ``V``, ``A``
  (``"1.5 MΩ"``, ``"22nF"``, ``"10 kHz"``).

Values are exact :class:`sympy.Rational` numbers: ``"4.7k"`` is 4700, never a float.
"""

from __future__ import annotations

import math
import re
from fractions import Fraction

import sympy

from .errors import ValueParseError

#: SI prefixes and their powers of ten.
PREFIXES: dict[str, int] = {
    "p": -12, "n": -9, "u": -6, "µ": -6, "μ": -6, "m": -3,
    "k": 3, "K": 3, "M": 6, "G": 9, "T": 12, "f": -15,
}
#: Unit words accepted after a value (case-sensitive except for "ohm").
UNITS = ("Ω", "ohms", "ohm", "Ohm", "Ohms", "F", "H", "Hz", "V", "A")

_NUMBER = r"(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_PLAIN = re.compile(rf"^(?P<num>[+-]?{_NUMBER})(?P<prefix>[pnuµμmkKMGTf]?)$")
_RKM = re.compile(r"^(?P<int>\d+)(?P<letter>[pnuµμmkKMGTfR])(?P<frac>\d+)$")
_RATIO = re.compile(r"^(?P<p>[+-]?\d+)/(?P<q>\d+)$")

_ACCEPTED = "a number with an optional SI prefix (p n u µ m k M G), e.g. 4.7k, 4k7, 22n, 1R5, 2.2e-9"


def _strip_unit(text: str) -> str:
    for unit in sorted(UNITS, key=len, reverse=True):
        if text.endswith(unit) and len(text) > len(unit):
            head = text[: -len(unit)].rstrip()
            # "1F" is one farad, but a bare prefix letter before nothing is not a unit
            if head and (head[-1].isdigit() or head[-1] in PREFIXES or head[-1] == "."):
                return head
    return text


def parse_value(text: str | int | float | Fraction | sympy.Rational, *, where: str = "value") -> sympy.Rational:
    """Read a component value exactly.

    Parameters
    ----------
    text : str, int, float, Fraction or sympy.Rational
        The value as written. Floats are taken by their shortest decimal text
        (``0.1`` is 1/10).
    where : str
        Where the value came from, for the error message (e.g. ``"part R1"``).

    Returns
    -------
    sympy.Rational
        The exact value.

    Raises
    ------
    ValueParseError
        When the text is not a value, or is NaN or infinite.

    Examples
    --------
    >>> parse_value("4k7")
    4700
    >>> parse_value("22n")
    11/500000000
    >>> parse_value("1.5 MΩ")
    1500000
    >>> parse_value("2.2e-9") == parse_value("2n2")
    True
    >>> parse_value("1R5")
    3/2
    """
    if isinstance(text, bool):
        raise ValueParseError(where, f"value {text!r} is not a number", f"write {_ACCEPTED}")
    if isinstance(text, sympy.Rational):
        return text
    if isinstance(text, Fraction):
        return sympy.Rational(text.numerator, text.denominator)
    if isinstance(text, int):
        return sympy.Integer(text)
    if isinstance(text, float):
        if not math.isfinite(text):
            raise ValueParseError(where, f"value {text!r} is not finite", f"write {_ACCEPTED}")
        return sympy.Rational(repr(text))
    if not isinstance(text, str):
        raise ValueParseError(where, f"value of type {type(text).__name__} is not understood", f"write {_ACCEPTED}")
    raw = text
    body = " ".join(text.split())
    if len(body) > 64:
        raise ValueParseError(where, f"value text is {len(body)} characters long", "write a value of at most 64 characters")
    if body.lower() in {"nan", "inf", "+inf", "-inf", "infinity", "-infinity"}:
        raise ValueParseError(where, f"value {raw!r} is not finite", f"write {_ACCEPTED}")
    body = _strip_unit(body).replace(" ", "")
    if (m := _RATIO.match(body)) is not None:
        q = int(m["q"])
        if q == 0:
            raise ValueParseError(where, f"value {raw!r} divides by zero", f"write {_ACCEPTED}")
        return sympy.Rational(int(m["p"]), q)
    if (m := _PLAIN.match(body)) is not None:
        number = sympy.Rational(m["num"])
        power = PREFIXES.get(m["prefix"], 0)
        return number * sympy.Rational(10) ** power
    if (m := _RKM.match(body)) is not None:
        number = sympy.Rational(f"{m['int']}.{m['frac']}")
        power = 0 if m["letter"] == "R" else PREFIXES[m["letter"]]
        return number * sympy.Rational(10) ** power
    suffix = re.sub(rf"^[+-]?{_NUMBER}", "", body)
    if suffix and suffix != body:
        raise ValueParseError(where, f"value {raw!r} has an unknown suffix {suffix!r}",
                              "use an SI prefix (p n u µ m k M G) and optionally a unit (Ω ohm F H Hz)")
    raise ValueParseError(where, f"value {raw!r} is not understood", f"write {_ACCEPTED}")


_FORMAT_PREFIXES = [(12, "T"), (9, "G"), (6, "M"), (3, "k"), (0, ""), (-3, "m"), (-6, "µ"), (-9, "n"), (-12, "p"), (-15, "f")]


def format_value(value, unit: str = "", digits: int = 4) -> str:
    """Write a number in engineering notation with an SI prefix.

    Parameters
    ----------
    value : number or sympy number
        The value (exact or float).
    unit : str
        Unit symbol appended after the prefix (``"Ω"``, ``"F"``, ``"Hz"``).
    digits : int
        Significant digits.

    Returns
    -------
    str
        For example ``"4.7 kΩ"``.

    Examples
    --------
    >>> format_value(4700, "Ω")
    '4.7 kΩ'
    >>> format_value(parse_value("22n"), "F")
    '22 nF'
    >>> format_value(1539.2177, "Hz")
    '1.539 kHz'
    >>> format_value(0)
    '0'
    """
    x = float(value)
    if x == 0:
        return "0" + (f" {unit}" if unit else "")
    if not math.isfinite(x):
        return f"{x:g}"
    # round first so that 999.99 becomes 1 k, not 1000
    rounded = float(f"{x:.{digits - 1}e}")
    exp = math.floor(math.log10(abs(rounded)))
    eng = 3 * (exp // 3)
    eng = max(min(eng, 12), -15)
    prefix = dict(_FORMAT_PREFIXES)[eng]
    mant = rounded / 10 ** eng
    text = f"{mant:.{digits}g}"
    if "e" in text:  # out of the prefix range
        text = f"{x:.{digits}g}"
        prefix = ""
    sep = " " if (prefix or unit) else ""
    return f"{text}{sep}{prefix}{unit}"
