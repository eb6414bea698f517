"""Partly symbolic derivation: which symbols stay symbols and which values go in first.

A circuit with :attr:`Circuit.keep <symfilt.model.circuit.Circuit.keep>` set (``--keep R_L,R_s``,
the circuit file's top-level ``keep`` key, :meth:`Circuit.keeping
<symfilt.model.circuit.Circuit.keeping>`) is derived with every other part's value put into
the MNA equations before the elimination (:func:`symfilt.engine.mna.build_system`), so the
polynomials carry only the kept symbols and ``s``. The rules, in one place:

* a part, op-amp parameter or parameter named in ``keep`` stays a symbol;
* a part that is not kept and has no value stays a symbol too (:func:`unvalued`; the
  report says so): it is never an error, the derivation is only larger;
* a tied part goes in at its tie's value when no symbol of the tie is kept and every one
  has a value; otherwise it stays symbolic and its tie is put in after the derivation, with
  the values of the tie's symbols that are not kept (:func:`kept_ties`);
* the fixtures ``R_s``, ``R_L`` and ``C_L`` stay symbols through the elimination, because
  the ideal view is their limit (R_s -> 0, R_L -> oo, C_L -> 0); the loaded view then gets the
  values of those not kept (:func:`fixture_values`).

The result equals the fully symbolic one with the values substituted, exactly.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import sympy

from symfilt.errors import CircuitError
from symfilt.model.names import suggest
from symfilt.model.part import LOAD_C, LOAD_R, SOURCE_R

if TYPE_CHECKING:  # pragma: no cover
    from symfilt.model.circuit import Circuit

FIXTURES = (SOURCE_R, LOAD_R, LOAD_C)

__all__ = ["FIXTURES", "keep_warnings", "load_keep", "check_keep", "fixed_values", "fixture_values", "kept_ties", "parse_keep", "unvalued"]


def parse_keep(text, where: str = "--keep") -> tuple[str, ...]:
    """Names from ``"R_L,R_s"`` (or a list of names), stripped, in order, each once.

    Parameters
    ----------
    text : str or iterable of str
    where : str
        The option or key named in messages.

    Examples
    --------
    >>> parse_keep("R_L, R_s,R_L")
    ('R_L', 'R_s')
    """
    if not isinstance(text, (str, list, tuple)):
        raise CircuitError(where, f"{text!r} is not a list of names", 'write names such as keep = ["R_L", "R_s"]')
    items = text.split(",") if isinstance(text, str) else list(text)
    out: list[str] = []
    for item in items:
        if not isinstance(item, str):
            raise CircuitError(where, f"{item!r} is not a symbol name", 'write names such as keep = ["R_L", "R_s"]')
        name = item.strip()
        if not name:
            raise CircuitError(where, "an empty name", "write names separated by commas, e.g. R_L,R_s")
        if name not in out:
            out.append(name)
    return tuple(out)


def check_keep(circuit: "Circuit", names, where: str = "--keep") -> tuple[str, ...]:
    """The names to keep, checked against the circuit's symbols (a 'did you mean' otherwise).

    Parameters
    ----------
    circuit : Circuit
    names : iterable of str
    where : str
        The option or key named in messages.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> check_keep(catalogue.build("rc-lowpass"), ["R_L"])
    ('R_L',)
    >>> check_keep(catalogue.build("rc-lowpass"), ["R_LL"])
    Traceback (most recent call last):
    ...
    symfilt.errors.CircuitError: --keep: R_LL is not a symbol of the circuit, did you mean R_L? keep one of C1, R1, R_L, R_s
    """
    rows = circuit.symbols()
    choices = [n for n in rows if n != "s"]
    ties = {p.name: p.tie for p in circuit.parts if p.tie}
    for name in names:
        if name not in choices:
            raise CircuitError(where, f"{name} is not a symbol of the circuit",
                               suggest(name, choices) + "keep one of " + ", ".join(sorted(choices)))
        if name in ties:
            raise CircuitError(where, f"{name} is tied to {ties[name]}",
                               "keep the symbols of its tie instead (or untie the part)")
    return tuple(names)


def _tie_free(circuit: "Circuit") -> dict[str, set[str]]:
    return {name: {x.name for x in expr.free_symbols} for name, expr in circuit.ties().items()}


def fixed_values(circuit: "Circuit") -> dict[str, sympy.Rational]:
    """Symbol name -> value of every part symbol that goes into the equations as a number.

    Empty when the circuit keeps everything (``keep`` is None). Fixtures are never in it.

    Parameters
    ----------
    circuit : Circuit

    Examples
    --------
    >>> from symfilt import catalogue
    >>> fixed_values(catalogue.build("rc-lowpass").keeping(["R1"]))
    {'C1': 11/500000000}
    """
    if circuit.keep is None:
        return {}
    keep = set(circuit.keep)
    rows = circuit.symbols()
    tied = _tie_free(circuit)
    out = {}
    for name, info in rows.items():
        if info["role"] not in ("part", "opamp") or name in keep or info["value"] is None:
            continue
        if name in tied and tied[name] & keep:
            continue
        out[name] = sympy.Rational(info["value"])
    return out


def fixture_values(circuit: "Circuit") -> dict[sympy.Symbol, sympy.Rational]:
    """Fixture symbol -> value for the fixtures that are not kept: put into the loaded view.

    Parameters
    ----------
    circuit : Circuit

    Examples
    --------
    >>> from symfilt import catalogue
    >>> fixture_values(catalogue.build("rc-lowpass").keeping(["R_L"]))
    {R_s: 600}
    """
    if circuit.keep is None:
        return {}
    rows = circuit.symbols()
    return {rows[n]["symbol"]: rows[n]["value"] for n in FIXTURES
            if n in rows and n not in circuit.keep and rows[n]["value"] is not None}


def kept_ties(circuit: "Circuit") -> dict[str, sympy.Expr]:
    """The ties put in after the derivation: of the tied parts that stayed symbols, with the
    values of their symbols that are not kept.

    Parameters
    ----------
    circuit : Circuit

    Examples
    --------
    >>> from symfilt import catalogue
    >>> c = catalogue.build("twin-t-notch-tied")
    >>> kept_ties(c.keeping(["R"]))["R3"]
    R/2
    >>> kept_ties(c.keeping(["R_L"]))
    {}
    """
    ties = circuit.ties()
    if circuit.keep is None or not ties:
        return ties
    fixed = fixed_values(circuit)
    rows = circuit.symbols()
    put = {rows[n]["symbol"]: rows[n]["value"] for n in rows if n not in circuit.keep and n not in ties
           and rows[n]["value"] is not None and rows[n]["role"] in ("part", "opamp", "parameter")}
    return {name: expr.xreplace(put) for name, expr in ties.items() if name not in fixed}


def unvalued(circuit: "Circuit") -> tuple[str, ...]:
    """Names that are not kept but stay symbols because they have no value.

    Parameters
    ----------
    circuit : Circuit

    Examples
    --------
    >>> from symfilt import catalogue
    >>> unvalued(catalogue.build("rc-lowpass", load="symbol").keeping(["R1"]))
    ('R_L',)
    """
    if circuit.keep is None:
        return ()
    fixed = fixed_values(circuit)
    rows = circuit.symbols()
    return tuple(n for n, info in rows.items() if n != "s" and n not in circuit.keep and n not in fixed
                 and info["value"] is None and n not in circuit.ties())


def keep_warnings(circuit: "Circuit") -> tuple[str, ...]:
    """The warning that names the parts which stay symbols because they have no value.

    Parameters
    ----------
    circuit : Circuit

    Examples
    --------
    >>> from symfilt import catalogue
    >>> keep_warnings(catalogue.build("rc-lowpass", load="symbol").keeping(["R1"]))
    ('keep: R_L has no value and stays a symbol, give it a value to put it in before the elimination',)
    """
    names = unvalued(circuit)
    if not names:
        return ()
    return (f"keep: {', '.join(names)} {'has' if len(names) == 1 else 'have'} no value and "
            f"{'stays a symbol' if len(names) == 1 else 'stay symbols'}, give "
            f"{'it a value' if len(names) == 1 else 'them values'} to put {'it' if len(names) == 1 else 'them'} "
            "in before the elimination",)


def load_keep(path) -> tuple[str, ...] | None:
    """A circuit file's top-level ``keep`` list (None when it has none, or for ``@name``).

    The circuit file checks the names when it is read (:func:`symfilt.model.circuit_file.load_circuit`).

    Parameters
    ----------
    path : str or Path

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "c.toml"
    >>> _ = p.write_text('keep = ["R_L"]\\n')
    >>> load_keep(p)
    ('R_L',)
    """
    from pathlib import Path

    if str(path).startswith("@") or not Path(path).is_file():
        return None  # before the TOML reader is imported: a built-in circuit never needs it
    from symfilt.model.circuit_file import read_text_file, read_toml

    text, name = read_text_file(path)
    keep = read_toml(text, name).get("keep")
    return None if keep is None else parse_keep(keep, f"{name} keep")
