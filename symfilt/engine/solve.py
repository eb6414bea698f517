"""The engine's one entry point: any unknown of a circuit, driven one of three ways.

:func:`solve_unknown` stamps the circuit (:func:`symfilt.engine.mna.build_system`)
for a drive mode and solves for one unknown (:func:`symfilt.engine.elimination.solve`):
the mode's own target (output voltage, input or output impedance), any node
voltage ``V(node)`` or any branch current ``I(part)`` of a voltage-type part or
of the source.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Callable

from symfilt.engine.elimination import DEFAULT_MAX_MEMORY, DEFAULT_MAX_TERMS, Ratio, solve
from symfilt.engine.mna import build_system
from symfilt.engine.ties import substitute_ties
from symfilt.model.stamps import DRIVES, SOURCE_BRANCH, Unknown
from symfilt.errors import UsageError
from symfilt.model.circuit import Circuit
from symfilt.model.keep import kept_ties

__all__ = ["solve_unknown"]


def solve_unknown(circuit: Circuit, unknown: str | None = None, *, drive: str = "transfer",
                  max_terms: int = DEFAULT_MAX_TERMS, progress: Callable[[str], None] | None = None,
                  where: str | None = None, opamp: str | None = None,
                  max_memory: int = DEFAULT_MAX_MEMORY) -> Ratio:
    """One unknown of the circuit's MNA system as an exact, cancelled ratio.

    Parameters
    ----------
    circuit : Circuit
    unknown : str or Unknown, optional
        An :class:`symfilt.model.stamps.Unknown` (exact: ``Unknown("V", node)``,
        ``Unknown("I", part)``, ``Unknown("I", SOURCE_BRANCH)`` for the source's current), or
        text: ``V(<node>)``, ``I(<part>)`` for the branch current of an op-amp, vcvs or ccvs
        (it flows from the node into the part's output), ``I(source)`` for the source's (from
        the input side into the source; a part named ``source`` comes first), or a bare node
        name. Text that is both (a node named ``I(U1)``) is read as ``V(...)`` and ``I(...)``
        first; code inside symfilt always passes an ``Unknown``.
        Default: the drive mode's own unknown (output voltage for ``transfer``,
        input voltage for ``zin``, output voltage for ``zout``).
    drive : {"transfer", "zin", "zout", "loop"}
        How the circuit is driven (see :func:`symfilt.engine.mna.build_system`):
        a unit voltage behind R_s, a unit current into the input (no source), a
        unit current into the output (source zeroed, no load), or a unit voltage
        in place of op-amp ``opamp``'s controlled source (source zeroed, load kept;
        its own unknown is that op-amp's V+ − V−). The ratio is the unknown per
        unit of that drive.
    max_terms : int
        Size budget of the elimination.
    progress : callable, optional
        Receives stage names.
    where : str, optional
        Name used in error messages (default: the circuit's title, or "circuit").
    opamp : str, optional
        The op-amp whose loop ``drive="loop"`` breaks.
    max_memory : int
        Memory budget of the elimination in bytes (:func:`symfilt.engine.elimination.solve`).

    Returns
    -------
    Ratio
        In the free symbols: a tied part's symbol is replaced by its expression
        (:func:`symfilt.engine.ties.substitute_ties`).

    Raises
    ------
    UsageError
        When the circuit has no such unknown in that drive mode.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> c = catalogue.build("rc-lowpass").without_fixtures()
    >>> solve_unknown(c).to_sympy()
    (1, C1*R1*s + 1)
    >>> solve_unknown(c, "I(source)").to_sympy()
    (-C1*s, C1*R1*s + 1)
    """
    if drive not in DRIVES:
        raise ValueError(f"drive must be one of {DRIVES}")
    system = build_system(circuit, drive, opamp)
    if unknown is not None:
        key = unknown if isinstance(unknown, Unknown) else _read_unknown(unknown, system.keys)
        if key not in system.keys:
            raise UsageError(str(unknown), "no such node or branch", "name a node of the circuit")
        system = replace(system, target=system.keys.index(key))
    where = where if where is not None else circuit.title or "circuit"
    ratio = solve(system, max_terms=max_terms, progress=progress, where=where, max_memory=max_memory)
    ties = kept_ties(circuit)  # circuit.ties(), with the values that went in first (model.keep)
    return substitute_ties(ratio, ties, where) if ties else ratio


def _read_unknown(text: str, keys: tuple) -> Unknown | None:
    """The unknown a text names: ``V(node)``, ``I(part)``, ``I(source)``, else a bare node name."""
    if not isinstance(text, str):
        raise UsageError(repr(text), "an unknown is named by text", "write V(node), I(part) or a node name")
    if len(text) > 3 and text[1] == "(" and text.endswith(")") and text[0] in "VI":
        key = Unknown(text[0], text[2:-1])
        if key in keys:
            return key
        if text == "I(source)":
            return Unknown("I", SOURCE_BRANCH)
    return Unknown("V", text)

