"""A swept symbol: ``R_L=1k,10k,100k`` (a list) or ``R_L=1k..1M/4`` (a logarithmic range).

The same text is read from the command line (``symfilt plot --sweep``) and from a circuit
file's ``[note]`` table (``sweep = "R_L=1k,10k,100k"``), which asks the design note for the
family of loaded curves. Values are exact Rationals; a range's inner points are rounded to
four significant digits (a value a part could have, not a 17-digit float).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import sympy

from symfilt.errors import CircuitFileError, UsageError
from symfilt.model.values import parse_value

#: Values of a range without ``/N``.
RANGE_POINTS = 5
#: Most values one sweep may have (a plot of more curves is not read).
MAX_VALUES = 8
#: Points of a range for a plot against the symbol (``--versus``) when no ``/N`` is given.
VERSUS_POINTS = 61
#: Keys of the ``[note]`` table.
NOTE_KEYS = {"sweep"}
_HOW = "write NAME=V1,V2,... or NAME=LO..HI or NAME=LO..HI/N (e.g. R_L=1k,10k,100k or R_L=1k..1M/4)"


@dataclass(frozen=True)
class Sweep:
    """A symbol's name and the values it takes, in order.

    Parameters
    ----------
    name : str
        The symbol (a part, a parameter, ``R_s``, ``R_L``, ``C_L`` or an op-amp parameter).
    values : tuple of sympy.Rational
        Positive values, as given or spread logarithmically over a range.
    is_range : bool
        Whether the text gave a range (``LO..HI``) rather than a list.

    Examples
    --------
    >>> parse_sweep("R_L=1k..100k/3")
    Sweep(name='R_L', values=(1000, 10000, 100000), is_range=True)
    """

    name: str
    values: tuple
    is_range: bool = False


def _range_values(lo, hi, n: int) -> tuple:
    if n == 1:
        return (lo,)
    out = []
    for k in range(n):
        if k in (0, n - 1):
            out.append(lo if k == 0 else hi)
            continue
        x = math.exp(math.log(float(lo)) + k * (math.log(float(hi)) - math.log(float(lo))) / (n - 1))
        out.append(sympy.Rational(f"{x:.4g}"))
    return tuple(out)


def parse_sweep(text: str, *, where: str = "--sweep", max_values: int | None = MAX_VALUES,
                points: int = RANGE_POINTS) -> Sweep:
    """Read ``NAME=V1,V2,...`` or ``NAME=LO..HI[/N]``.

    Parameters
    ----------
    text : str
        The sweep as written.
    where : str
        Where it was written, for the error message.
    max_values : int or None
        Most values allowed (None: no limit, for a plot against the symbol).
    points : int
        Values of a range without ``/N``.

    Returns
    -------
    Sweep

    Raises
    ------
    UsageError
        The text is not a sweep, a value is not positive, or there are too many values.

    Examples
    --------
    >>> parse_sweep("R_L=1k,10k,100k").values
    (1000, 10000, 100000)
    >>> parse_sweep("C_L=1n..1u").values
    (1/1000000000, 5623/1000000000000, 1581/50000000000, 889/5000000000, 1/1000000)
    >>> parse_sweep("R_L=1k")
    Sweep(name='R_L', values=(1000,), is_range=False)
    """
    name, sep, rest = str(text).partition("=")
    name, rest = name.strip(), rest.strip()
    if not sep or not name or not rest:
        raise UsageError(where, f"{text!r} is not a sweep", _HOW)
    if ".." in rest:
        span, _, count = rest.partition("/")
        lo_text, _, hi_text = span.partition("..")
        try:
            n = int(count) if count.strip() else points
        except ValueError:
            raise UsageError(where, f"{count!r} is not a whole number of values", _HOW) from None
        lo, hi = (parse_value(x.strip(), where=where) for x in (lo_text, hi_text))
        if n < 1 or not 0 < lo < hi:
            raise UsageError(where, f"{text!r} is not a range 0 < LO < HI with one value or more", _HOW)
        values, is_range = _range_values(lo, hi, n), True
    else:
        values, is_range = tuple(parse_value(x.strip(), where=where) for x in rest.split(",")), False
        if any(v <= 0 for v in values):
            raise UsageError(where, f"{text!r} has a value that is not positive", "give positive values")
    if max_values is not None and len(values) > max_values:
        raise UsageError(where, f"{len(values)} values", f"give at most {max_values}, so that the curves can be told apart")
    return Sweep(name, values, is_range)


def note_sweep(data: dict, name: str) -> Sweep | None:
    """The ``[note]`` table's ``sweep`` (None when the file has none); a bad table is refused.

    Parameters
    ----------
    data : dict
        The whole circuit file as TOML data.
    name : str
        The file's name, for messages.

    Returns
    -------
    Sweep or None

    Examples
    --------
    >>> note_sweep({"note": {"sweep": "R_L=1k,10k"}}, "c.toml").values
    (1000, 10000)
    >>> note_sweep({}, "c.toml") is None
    True
    """
    table = data.get("note", {})
    if not isinstance(table, dict):
        raise CircuitFileError(f"{name} [note]", "is not a table", 'write [note] with sweep = "R_L=1k,10k,100k"')
    unknown = sorted(set(table) - NOTE_KEYS)
    if unknown:
        raise CircuitFileError(f"{name} [note] {unknown[0]}", "is not a note option", "use only sweep")
    if "sweep" not in table:
        return None
    if not isinstance(table["sweep"], str):
        raise CircuitFileError(f"{name} [note] sweep", "is not text", 'write sweep = "R_L=1k,10k,100k"')
    try:
        return parse_sweep(table["sweep"], where=f"{name} [note] sweep")
    except UsageError as e:
        raise CircuitFileError(e.where, e.what, e.fix) from None


def load_note_sweep(path) -> Sweep | None:
    """The sweep a circuit file's ``[note]`` table asks for (None when none, or for ``@name``).

    Parameters
    ----------
    path : str or Path
        A circuit file.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "c.toml"
    >>> _ = p.write_text('[note]\\nsweep = "R_L=1k,10k"\\n')
    >>> load_note_sweep(p).name
    'R_L'
    """
    import tomllib
    from pathlib import Path

    p = Path(path)
    if str(path).startswith("@") or not p.is_file():
        return None
    return note_sweep(tomllib.loads(p.read_bytes().decode("utf-8").removeprefix("\ufeff")), p.name)
