"""Size targets: the quantities a part can be sized for, their values and named alignments.

Examples
--------
>>> parse_target("w0=2k"), parse_target("q=bessel")
(('w0', 2000), ('q', sqrt(3)/3))
"""

from __future__ import annotations

from types import MappingProxyType

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
    return parse_value(raw, where="--target")


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


__all__ = ["ALIGNMENTS", "TARGETS", "parse_target", "read_target"]
