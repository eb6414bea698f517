"""Size targets: the quantities a part can be sized for, their values and named alignments.

Examples
--------
>>> parse_target("w0=2k"), parse_target("q=bessel")
(('w0', 2000), ('q', sqrt(3)/3))
"""

from __future__ import annotations

from types import MappingProxyType

import re
from fractions import Fraction

import sympy

from symfilt.errors import UsageError
from symfilt.model.values import parse_value

# --------------------------------------------------------------------

#: Target quantities and the key of :func:`symfilt.analysis.stage.numeric_values` that measures each.
TARGETS = MappingProxyType({"cutoff": "cutoff_hz", "w0": "f0_hz", "q": "q", "dc-gain": "dc_gain"})
_ALIASES = {"cutoff": "cutoff", "fc": "cutoff", "w0": "w0", "f0": "w0", "q": "q",
            "dc-gain": "dc-gain", "dc_gain": "dc-gain", "gain": "dc-gain"}


#: Named second-order alignments for a Q target: Butterworth 1/sqrt(2) (maximally flat
#: magnitude), Bessel 1/sqrt(3) (maximally flat delay; B2(s) = s^2 + 3s + 3).
ALIGNMENTS = MappingProxyType({"butterworth": 1 / sympy.sqrt(2), "bessel": 1 / sympy.sqrt(3)})


_DECIMAL = re.compile(r"^[+-]?(\d*)\.(\d+)$")
#: Largest numerator and denominator tried by :func:`recognise`.
_SMALL = 12


def _candidates():
    """Simple closed forms, simplest first: p/q and sqrt(p/q) with p, q <= 12 (each once)."""
    seen, out = set(), []
    for total in range(2, 2 * _SMALL + 1):
        for q in range(1, min(total, _SMALL + 1)):
            p = total - q
            if p > _SMALL or Fraction(p, q) in seen:
                continue
            seen.add(Fraction(p, q))
            out.append(sympy.Rational(p, q))
            root = sympy.sqrt(sympy.Rational(p, q))
            if not root.is_Rational:
                out.append(root)
    return out


def recognise(text: str, value: sympy.Rational) -> sympy.Expr:
    """The simplest p/q or sqrt(p/q) (p, q <= 12) that a decimal equals to the digits given.

    A dimensionless target written as a decimal of three or more significant digits is taken
    as the simple closed form it rounds from, when there is one within half a unit of its last
    digit (0.7071 -> 1/sqrt(2), 0.333 -> 1/3); otherwise the decimal stays as written. The
    result differs from the decimal by less than the precision the decimal states, so a sizing
    result is the same to those digits, and its closed form reads without constants such as
    49999041/100000000.

    Parameters
    ----------
    text : str
        The value as written.
    value : sympy.Rational
        Its exact value (``parse_value(text)``).

    Returns
    -------
    sympy.Expr
        The recognised form, or ``value``.

    Examples
    --------
    >>> recognise("0.7071", sympy.Rational("0.7071")), recognise("0.577", sympy.Rational("0.577"))
    (sqrt(2)/2, sqrt(3)/3)
    >>> recognise("-0.333", sympy.Rational("-0.333")), recognise("0.7", sympy.Rational("0.7"))
    (-1/3, 7/10)
    >>> recognise("0.5412", sympy.Rational("0.5412"))
    1353/2500
    """
    m = _DECIMAL.match(text.strip())
    digits = m and (m.group(1) + m.group(2)).lstrip("0")
    if not m or len(digits) < 3:
        return value
    tol = sympy.Rational(1, 2 * 10 ** len(m.group(2)))
    mag = abs(value)
    for c in _candidates():
        if c == mag:
            return value
        if abs(c - mag) < tol and abs(float(c) - float(mag)) < float(tol):
            return c if value > 0 else -c
    return value


def parse_target(text: str) -> tuple[str, sympy.Rational]:
    """Read ``quantity=value`` (``cutoff=2k``, ``w0=1.5kHz``, ``q=0.707``, ``q=butterworth``, ``dc-gain=-2``).

    Cutoff and w0 are in Hz; a Q target may name a second-order alignment of :data:`ALIGNMENTS`.

    Parameters
    ----------
    text : str
        The target as written on the command line; the value takes SI prefixes.

    Returns
    -------
    (quantity, value) : (str, sympy.Rational)
        quantity is one of the keys of :data:`TARGETS`.

    Examples
    --------
    >>> parse_target("cutoff=2k")
    ('cutoff', 2000)
    >>> parse_target("q = 0.5")
    ('q', 1/2)
    >>> parse_target("q=butterworth")
    ('q', sqrt(2)/2)
    """
    name, sep, value = text.partition("=")
    key = _ALIASES.get(name.strip().lower())
    if not sep or key is None:
        raise UsageError("--target", f"{text!r} is not a target",
                         "write quantity=value with quantity cutoff, w0, q or dc-gain, e.g. cutoff=2k")
    return key, _target_value(key, value.strip())


def _target_value(key: str, raw):
    """A target value: value text, a number, or an alignment name for q."""
    if isinstance(raw, sympy.Basic) and not isinstance(raw, sympy.Rational):
        return raw
    word = raw.strip().lower() if isinstance(raw, str) else None
    if word in ALIGNMENTS:
        if key != "q":
            raise UsageError("--target", f"{word} names a Q, not a {key}", f"write q={word}")
        return ALIGNMENTS[word]
    if word and word[:1].isalpha() and key == "q":
        raise UsageError("--target", f"unknown alignment {raw!r}",
                         "use q=butterworth, q=bessel or a number such as q=0.7071")
    value = parse_value(raw, where="--target")
    return recognise(raw, value) if isinstance(raw, str) and key in ("q", "dc-gain") else value


def read_target(target) -> tuple[str, sympy.Expr]:
    """The target quantity (canonical name) and its value, checked.

    Parameters
    ----------
    target : (str, value)
        Quantity (or an alias: fc, f0, gain) and its value (text, number or alignment name).

    Returns
    -------
    (str, sympy.Expr)

    Examples
    --------
    >>> read_target(("fc", "2k")), read_target(("q", "bessel"))
    (('cutoff', 2000), ('q', sqrt(3)/3))
    """
    quantity, raw = target
    quantity = _ALIASES.get(str(quantity).lower(), str(quantity).lower())
    if quantity not in TARGETS:
        raise UsageError("--target", f"unknown quantity {target[0]!r}", "use cutoff, w0, q or dc-gain")
    tval = _target_value(quantity, raw)
    if quantity in ("cutoff", "w0", "q") and tval <= 0:
        raise UsageError("--target", f"a {quantity} of {tval} is not positive", "give a positive target")
    if tval == 0:
        raise UsageError("--target", "a DC gain of 0 cannot be sized for", "give a non-zero gain")
    return quantity, tval


__all__ = ["ALIGNMENTS", "TARGETS", "parse_target", "read_target", "recognise"]
