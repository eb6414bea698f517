"""Component values: exact parsing and engineering formatting.

Accepted forms (see DEVELOPERS.md for the full list):

* plain numbers, read exactly as decimals: ``"2200"``, ``"2.2e-9"``, ``"1/3"``;
* an SI prefix after the number (BIPM SI Brochure): ``"4.7k"``, ``"22n"``, ``"1.5M"``
  (``M`` is mega, ``m`` is milli, ``u`` and ``µ`` are micro);
* the RKM code of IEC 60062, the prefix letter standing for the decimal point:
  ``"4k7"``, ``"2n2"``, ``"1R5"``, ``"R47"`` (``R`` marks the point with no multiplier);
* an optional unit after it: ``Ω``, ``ohm``, ``ohms``, ``F``, ``H``, ``Hz``, ``V``, ``A``
  (``"1.5 MΩ"``, ``"22nF"``, ``"10 kHz"``).

Values are exact :class:`sympy.Rational` numbers: ``"4.7k"`` is 4700, never a float.
"""

from __future__ import annotations

import math
import re
from decimal import Decimal
from fractions import Fraction

import sympy

from symfilt.errors import ValueParseError

#: SI prefixes and their powers of ten.
PREFIXES: dict[str, int] = {
    "p": -12, "n": -9, "u": -6, "µ": -6, "μ": -6, "m": -3,
    "k": 3, "K": 3, "M": 6, "G": 9, "T": 12, "f": -15,
}
#: Unit words accepted after a value (case-sensitive except for "ohm").
UNITS = ("Ω", "ohms", "ohm", "Ohm", "Ohms", "F", "H", "Hz", "V", "A")

#: Largest magnitude of a value (the range of the SI prefixes, yocto to yotta).
MAX_MAGNITUDE = sympy.Integer(10) ** 24
#: Smallest magnitude of a non-zero value.
MIN_MAGNITUDE = sympy.Rational(1, 10**24)
#: Longest value text, in characters.
MAX_VALUE_CHARS = 64

_NUMBER = r"(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
# ASCII digits only: "\d" alone would also take digits of other scripts
_PLAIN = re.compile(rf"^(?P<num>[+-]?{_NUMBER})(?P<prefix>[pnuµμmkKMGTf]?)$", re.ASCII)
_RKM = re.compile(r"^(?P<sign>[+-]?)(?P<int>\d*)(?P<letter>[pnuµμmkKMGTfR])(?P<frac>\d+)$", re.ASCII)
_RATIO = re.compile(r"^(?P<p>[+-]?\d+)/(?P<q>\d+)$", re.ASCII)
_LEADING_NUMBER = re.compile(rf"^[+-]?{_NUMBER}", re.ASCII)

_ACCEPTED = "a number with an optional SI prefix (p n u µ m k M G), e.g. 4.7k, 4k7, 22n, 1R5, 2.2e-9"
_SUFFIXES = "use an SI prefix (f p n u µ m k M G T), an RKM letter (R, as in 1R5) and optionally a unit (Ω ohm F H Hz V A)"
_RANGE = "use a value between 1e-24 and 1e24 in magnitude (the SI prefix range)"


def _shown(text: str, limit: int = 24) -> str:
    """The value text for a message: quoted, escaped, clipped."""
    return repr(text if len(text) <= limit else text[:limit] + "...")


def _in_range(value: sympy.Rational, shown: str, where: str) -> sympy.Rational:
    if value != 0 and not (MIN_MAGNITUDE <= abs(value) <= MAX_MAGNITUDE):
        raise ValueParseError(where, f"value {shown} is out of range", _RANGE)
    return value


def _decimal(number: str, power: int, shown: str, where: str) -> sympy.Rational:
    """Exact value of ``number * 10**power``, refusing huge exponents before expanding them."""
    mantissa, _, exponent = number.lower().partition("e")
    scale = power + (int(exponent) if exponent else 0)
    digits = Decimal(mantissa)  # at most 64 characters: the text limit
    if digits == 0:
        return sympy.Integer(0)
    if not -30 <= digits.adjusted() + scale <= 30:
        raise ValueParseError(where, f"value {shown} is out of range", _RANGE)
    return _in_range(sympy.Rational(mantissa) * sympy.Rational(10) ** scale, shown, where)


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
        When the text is not a value, is NaN or infinite, or lies outside
        1e-24 ... 1e24 in magnitude (zero is allowed here; parts refuse it).

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
    >>> parse_value("4x7", where="part R1")
    Traceback (most recent call last):
    ...
    symfilt.errors.ValueParseError: part R1: value '4x7' has an unknown suffix 'x7', use an SI prefix (f p n u µ m k M G T), an RKM letter (R, as in 1R5) and optionally a unit (Ω ohm F H Hz V A)
    """
    if isinstance(text, bool):
        raise ValueParseError(where, f"value {text!r} is not a number", f"write {_ACCEPTED}")
    if isinstance(text, sympy.Rational):
        return _in_range(text, _shown(str(text)) if text.q < 10**30 and abs(text.p) < 10**30 else "(a long fraction)", where)
    if isinstance(text, Fraction):
        return parse_value(sympy.Rational(text.numerator, text.denominator), where=where)
    if isinstance(text, int):
        # a huge integer is refused before it is ever written out in full
        if text.bit_length() > 100:
            raise ValueParseError(where, f"a value of about {int(text.bit_length() * 0.30103)} digits is out of range", _RANGE)
        return _in_range(sympy.Integer(text), _shown(str(text)), where)
    if isinstance(text, float):
        if not math.isfinite(text):
            raise ValueParseError(where, f"value {text!r} is not finite", f"write {_ACCEPTED}")
        return _in_range(sympy.Rational(repr(text)), _shown(repr(text)), where)
    if not isinstance(text, str):
        kind = {"list": "a list", "dict": "a table"}.get(type(text).__name__, f"a {type(text).__name__}")
        raise ValueParseError(where, f"{kind} is not a value", f"write {_ACCEPTED}")
    shown = _shown(text)
    body = " ".join(text.split())
    if len(body) > MAX_VALUE_CHARS:
        raise ValueParseError(where, f"value text is {len(body)} characters long",
                              f"write a value of at most {MAX_VALUE_CHARS} characters")
    if body.lower() in {"nan", "+nan", "-nan", "inf", "+inf", "-inf", "infinity", "+infinity", "-infinity"}:
        raise ValueParseError(where, f"value {shown} is not finite", f"write {_ACCEPTED}")
    body = _strip_unit(body).replace(" ", "")
    if (m := _RATIO.match(body)) is not None:
        q = int(m["q"])
        if q == 0:
            raise ValueParseError(where, f"value {shown} divides by zero", f"write {_ACCEPTED}")
        return _in_range(sympy.Rational(int(m["p"]), q), shown, where)
    if (m := _PLAIN.match(body)) is not None:
        return _decimal(m["num"], PREFIXES.get(m["prefix"], 0), shown, where)
    if (m := _RKM.match(body)) is not None:
        power = 0 if m["letter"] == "R" else PREFIXES[m["letter"]]
        return _decimal(f"{m['sign']}{m['int'] or '0'}.{m['frac']}", power, shown, where)
    suffix = _LEADING_NUMBER.sub("", body)
    near = near_miss(body)
    if near:
        raise ValueParseError(where, f"value {shown} is not understood ({near[1]})", f"write {near[0]}")
    if suffix and suffix != body:
        raise ValueParseError(where, f"value {shown} has an unknown suffix {_shown(suffix)}", _SUFFIXES)
    raise ValueParseError(where, f"value {shown} is not understood", f"write {_ACCEPTED}")


_NEAR_PREFIX = {"meg": ("M", "mega is M; m is milli"), "Meg": ("M", "mega is M"), "MEG": ("M", "mega is M"),
                "K": ("k", "kilo is a small k"), "u": ("u", ""), "N": ("n", "nano is a small n"),
                "P": ("p", "pico is a small p"), "U": ("u", "micro is a small u")}


def near_miss(text: str) -> tuple[str, str] | None:
    """What a value that is not one was probably meant to be, and why: ``1meg`` -> ``1M``,
    ``22nf`` -> ``22n``, ``4,7k`` -> ``4.7k or 4k7``; None when nothing is near.

    Parameters
    ----------
    text : str
        The value text, spaces removed.

    Returns
    -------
    (str, str) or None
        The suggestion and the reason.

    Examples
    --------
    >>> near_miss("1meg"), near_miss("22nf"), near_miss("4,7k")
    (('1M', 'mega is M; m is milli'), ('22n (or 22nF)', 'the farad is a capital F; f is femto'), ('4.7k or 4k7', 'the decimal mark is a point'))
    """
    body = text.strip()
    if (m := re.fullmatch(r"([+-]?\d+),(\d+)([pnuµμmkKMGTfR]?)(\D*)", body)) is not None:
        head, frac, prefix, rest = m.groups()
        letter = prefix or "R"
        plain = f"{head}.{frac}{prefix}{rest}"
        return f"{plain} or {head}{letter}{frac}{rest}", "the decimal mark is a point"
    if (m := re.fullmatch(rf"({_NUMBER})(meg|Meg|MEG|K|N|P|U)(\w*)", body, re.ASCII)) is not None:
        num, prefix, rest = m.groups()
        good, why = _NEAR_PREFIX[prefix]
        return f"{num}{good}{rest if rest.lower() not in ('', 'ohm', 'ohms') else ''}", why
    if (m := re.fullmatch(rf"({_NUMBER})([pnuµμmkMG]?)(f|farad|farads)", body, re.ASCII)) is not None:
        num, prefix, _unit = m.groups()
        if prefix:
            return f"{num}{prefix} (or {num}{prefix}F)", "the farad is a capital F; f is femto"
    if (m := re.fullmatch(rf"({_NUMBER})([pnuµμmkMG]?)(h|henry|henries)", body, re.ASCII)) is not None:
        num, prefix, _unit = m.groups()
        return f"{num}{prefix} (or {num}{prefix}H)", "the henry is a capital H"
    return None


_UNIT_KINDS = {"Ω": "Ω", "ohms": "Ω", "ohm": "Ω", "Ohm": "Ω", "Ohms": "Ω", "F": "F", "H": "H", "Hz": "Hz",
               "V": "V", "A": "A"}


def unit_of(text) -> str | None:
    """The unit a value text ends in (``Ω``, ``F``, ``H``, ``Hz``, ``V``, ``A``), or None.

    Parameters
    ----------
    text : object
        A value as written; only text can carry a unit.

    Returns
    -------
    str or None

    Examples
    --------
    >>> unit_of("22nH"), unit_of("10 kΩ"), unit_of("4k7"), unit_of(1000)
    ('H', 'Ω', None, None)
    """
    if not isinstance(text, str):
        return None
    body = " ".join(text.split())
    stripped = _strip_unit(body)
    if stripped == body:
        return None
    return _UNIT_KINDS.get(body[len(stripped):].strip())


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
