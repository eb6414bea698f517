"""Structural checks on a circuit, before any algebra.

Names, pins, ports, control parts, ground and floating nodes. Each problem is a
:class:`~symfilt.errors.CircuitError` whose message names the parts or nodes.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from .errors import CircuitError

if TYPE_CHECKING:  # pragma: no cover
    from .circuit import Circuit

#: Most parts a circuit may have.
MAX_PARTS = 200


def check_structure(circuit: "Circuit") -> None:
    """Raise CircuitError for the first structural problem of ``circuit``.

    Parameters
    ----------
    circuit : Circuit

    Examples
    --------
    >>> from symfilt.circuit import Circuit, Part
    >>> Circuit.build([Part.resistor("R1", "in", "out")], output="nowhere")
    Traceback (most recent call last):
    ...
    symfilt.errors.CircuitError: ports output: node nowhere is not connected to any part, name a node that a part uses
    """
    from .circuit import CONTROL_KINDS, GROUND

    parts = circuit.parts
    if not parts:
        raise CircuitError("parts", "the circuit has no parts", "add parts under [parts]")
    if len(parts) > MAX_PARTS:
        raise CircuitError("parts", f"{len(parts)} parts is more than the limit of {MAX_PARTS}",
                           "split the circuit into stages")
    seen: set[str] = set()
    for p in parts:
        if p.name in seen:
            raise CircuitError(f"part {p.name}", "the name is used twice", "give each part its own name")
        seen.add(p.name)
    by_name = {p.name: p for p in parts}
    for p in parts:
        if p.kind in ("resistor", "capacitor", "inductor") and p.nodes[0] == p.nodes[1]:
            raise CircuitError(f"part {p.name}", f"both ends are on node {p.nodes[0]}",
                               "connect it between two different nodes")
        if p.kind in ("vcvs", "vccs", "ccvs", "cccs") and p.nodes[0] == p.nodes[1]:
            raise CircuitError(f"part {p.name}", f"both outputs are on node {p.nodes[0]}",
                               "connect out+ and out- to two different nodes")
        if p.kind == "opamp" and p.nodes[2] == GROUND:
            raise CircuitError(f"part {p.name}", "the op-amp output is on ground",
                               "connect out to a node of its own")
        if p.control is not None:
            ctrl = by_name.get(p.control)
            if ctrl is None:
                raise CircuitError(f"part {p.name}", f"control part {p.control!r} does not exist",
                                   "name one of the circuit's parts: " + ", ".join(by_name))
            if ctrl.kind not in CONTROL_KINDS:
                raise CircuitError(f"part {p.name}", f"control part {p.control} is a {ctrl.kind}, whose current is not defined here",
                                   "use a resistor, capacitor, inductor, vcvs or ccvs as the control")
    used = {n for p in parts for n in p.nodes}
    for label, node in (("input", circuit.input), ("output", circuit.output)):
        if node == GROUND:
            raise CircuitError(f"ports {label}", "the port is on ground", "name the node the signal is on")
        if node not in used:
            raise CircuitError(f"ports {label}", f"node {node} is not connected to any part",
                               "name a node that a part uses")
    if circuit.input == circuit.output and not any(p.kind != "opamp" for p in parts):
        raise CircuitError("ports", "input and output are the same node", "name two different nodes")
    if GROUND not in used and not (circuit.source.present or circuit.load_resistance.present
                                   or circuit.load_capacitance.present):
        raise CircuitError("parts", "no part connects to ground", "connect a part to gnd (or 0)")
    floating = _floating_nodes(circuit)
    if floating:
        raise CircuitError("nodes " + ", ".join(sorted(floating)), "no path to ground through any part",
                           "connect them to the rest of the circuit")


def _floating_nodes(circuit: "Circuit") -> set[str]:
    """Nodes with no conductive or source path to ground (graph connectivity).

    Every two-terminal part and every controlled-source output joins its nodes; an
    op-amp joins its output to ground (it drives it); the source joins the input to
    ground; control pins draw no current and join nothing.
    """
    from .circuit import GROUND

    adj: dict[str, set[str]] = {}

    def join(a: str, b: str) -> None:
        adj.setdefault(a, set()).add(b)
        adj.setdefault(b, set()).add(a)

    for p in circuit.parts:
        for n in p.nodes:
            adj.setdefault(n, set())
        if p.kind in ("resistor", "capacitor", "inductor", "vcvs", "vccs", "ccvs", "cccs"):
            join(p.nodes[0], p.nodes[1])
        elif p.kind == "opamp":
            join(p.nodes[2], GROUND)
    join(circuit.input, GROUND)
    if circuit.load_resistance.present or circuit.load_capacitance.present:
        join(circuit.output, GROUND)
    reached = {GROUND}
    stack = [GROUND]
    while stack:
        for m in adj.get(stack.pop(), ()):
            if m not in reached:
                reached.add(m)
                stack.append(m)
    return set(adj) - reached
