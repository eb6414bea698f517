"""Structural checks on a circuit, before any algebra.

:func:`check_structure` looks at names, kinds, pins, ports, control parts, ground
and floating nodes, then calls :func:`symfilt.model.solvability.check_solvable`,
which finds circuits whose equations can have no unique solution whatever the values:

* a loop of voltage-type parts (the source, vcvs and ccvs outputs, op-amp
  outputs): the current around the loop is undetermined;
* a cut-set of current-type parts (vccs and cccs outputs): the voltage of the
  nodes behind it is undetermined;
* anything else the MNA pattern reveals, by a maximum bipartite matching between
  equations and unknowns (the structural rank). When it falls short, a
  Dulmage-Mendelsohn walk from the unmatched equations and unknowns names the
  nodes and parts involved (an ideal op-amp without feedback is the usual case).

Each finds only circuits whose determinant vanishes for every value, so nothing
solvable is ever refused; rarer singular circuits are left to the elimination.
:func:`check_structure` refuses a circuit only when it is singular for every
quantity (transfer function, input and output impedance); a caller about to
derive one quantity can ask :func:`~symfilt.model.solvability.check_solvable` about
that one alone.

:func:`structure_warnings` lists what is legal but suspicious (a node with one
connection only). :func:`branches` and :func:`reach` are the graph helpers the
floating-node check here and the cut-set check of the solvability share. Every
check is linear or near-linear in the circuit's size.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import sympy

from symfilt.errors import CircuitError, SizeLimitError
from symfilt.model.names import clip_name, confusable_hint, suggest

if TYPE_CHECKING:  # pragma: no cover
    from symfilt.model.circuit import Circuit

#: Most parts a circuit may have.
MAX_PARTS = 200

_TWO_TERMINAL = ("resistor", "capacitor", "inductor")
_CONTROLLED = ("vcvs", "vccs", "ccvs", "cccs")
_SOURCE = "the source"  # label of the signal source in messages


def check_structure(circuit: "Circuit") -> None:
    """Raise an error for the first structural problem of ``circuit``.

    Parameters
    ----------
    circuit : Circuit

    Raises
    ------
    CircuitError
        Unknown kind, wrong pin count, duplicate name, both ends on one node,
        missing port or control part, no ground, floating nodes.
    SizeLimitError
        More than :data:`MAX_PARTS` parts.
    SingularCircuitError
        Equations that have no unique solution (see :func:`symfilt.model.solvability.check_solvable`).

    Examples
    --------
    >>> from symfilt.model.circuit import Circuit, Part
    >>> Circuit.build([Part.resistor("R1", "in", "out")], output="nowhere")
    Traceback (most recent call last):
    ...
    symfilt.errors.CircuitError: ports output: node nowhere is not connected to any part, name a node that a part uses
    """
    from symfilt.model.circuit import CONTROL_KINDS, GROUND, PART_PINS

    parts = circuit.parts
    if not parts:
        raise CircuitError("parts", "the circuit has no parts", "add parts under [parts]")
    if len(parts) > MAX_PARTS:
        raise SizeLimitError("parts", f"{len(parts)} parts is over the limit of {MAX_PARTS}",
                             "split the circuit into stages and derive each one")
    seen: set[str] = set()
    for p in parts:
        if p.kind not in PART_PINS:
            raise CircuitError(f"part {p.name}", f"unknown kind {p.kind!r}", "use one of " + ", ".join(PART_PINS))
        if len(p.nodes) != len(PART_PINS[p.kind]):
            raise CircuitError(f"part {p.name}", f"a {p.kind} has {len(PART_PINS[p.kind])} pins "
                               f"({', '.join(PART_PINS[p.kind])}), got {len(p.nodes)}", "list exactly those pins")
        if p.name in seen:
            raise CircuitError(f"part {p.name}", "the name is used twice", "give each part its own name")
        seen.add(p.name)
    from symfilt.model.opamp import opamp_parameters

    by_name = {p.name: p for p in parts}
    for p in parts:
        for symbol, _param, _value in opamp_parameters(p):
            if symbol in by_name:
                raise CircuitError(f"part {symbol}", f"the name is also the symbol of op-amp {p.name}'s parameter",
                                   "rename the part")
    for p in parts:
        _check_pins(p, GROUND)
        if p.control is not None:
            ctrl = by_name.get(p.control)
            if ctrl is None:
                raise CircuitError(f"part {p.name}", f"control part {p.control!r} does not exist",
                                   "name one of the circuit's parts: " + ", ".join(by_name))
            if ctrl.kind not in CONTROL_KINDS:
                raise CircuitError(f"part {p.name}", f"control part {p.control} is a {ctrl.kind}, whose current is not defined here",
                                   "use a resistor, capacitor, inductor, vcvs or ccvs as the control")
            if ctrl.name == p.name:
                raise CircuitError(f"part {p.name}", "a source cannot be controlled by its own current",
                                   "name another part as the control (a ccvs controlled by itself is a resistor)")
    used = {n for p in parts for n in p.nodes}
    for label, node in (("input", circuit.input), ("output", circuit.output)):
        if node == GROUND:
            raise CircuitError(f"ports {label}", "the port is on ground", "name the node the signal is on")
        if node not in used:
            hint = confusable_hint(node, sorted(used))
            raise CircuitError(f"ports {label}", f"node {node} is not connected to any part" + (f" ({hint})" if hint else ""),
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
    from symfilt.model.solvability import check_solvable

    check_solvable(circuit)


#: Most probes a circuit may have.
MAX_PROBES = 20


def check_probes(circuit: "Circuit") -> None:
    """Raise CircuitError for a probe on a node the circuit does not have, on ground, or twice.

    Parameters
    ----------
    circuit : Circuit

    Examples
    --------
    >>> from symfilt.model.circuit import Circuit, Part
    >>> c = Circuit.build([Part.resistor("R1", "in", "mid"), Part.capacitor("C1", "mid", "0")], output="mid")
    >>> c.with_probes(["mdi"])
    Traceback (most recent call last):
    ...
    symfilt.errors.CircuitError: probe mdi: node mdi is not in the circuit, did you mean mid? probe one of in, mid
    """
    from symfilt.model.circuit import GROUND

    if len(circuit.probes) > MAX_PROBES:
        raise SizeLimitError("probes", f"{len(circuit.probes)} probes is over the limit of {MAX_PROBES}",
                             "probe the nodes you need")
    nodes = circuit.nodes()
    seen: dict[str, str] = {}
    for label, node in circuit.probes:
        where = f"probe {clip_name(label)}"
        if label in seen:
            raise CircuitError(where, "the label is used twice", "give each probe its own label")
        seen[label] = node
        if node == GROUND:
            raise CircuitError(where, "the probe is on ground", "name a node the signal is on")
        if node not in nodes:
            look_alike = confusable_hint(node, nodes)
            hint = f"{look_alike}; " if look_alike else suggest(node, nodes)
            raise CircuitError(where, f"node {clip_name(node)} is not in the circuit",
                               f"{hint}probe one of {', '.join(clip_name(n) for n in nodes[:12])}")


def _check_pins(p, ground: str) -> None:
    where = f"part {p.name}"
    if p.kind in _TWO_TERMINAL and p.nodes[0] == p.nodes[1]:
        raise CircuitError(where, f"both ends are on node {p.nodes[0]}", "connect it between two different nodes")
    if p.kind in _CONTROLLED and p.nodes[0] == p.nodes[1]:
        raise CircuitError(where, f"both outputs are on node {p.nodes[0]}", "connect out+ and out- to two different nodes")
    if p.kind in ("vcvs", "vccs") and p.nodes[2] == p.nodes[3]:
        raise CircuitError(where, f"both control pins are on node {p.nodes[2]}, so the control voltage is always 0",
                           "connect ctrl+ and ctrl- to two different nodes")
    if p.kind == "opamp":
        if p.nodes[2] == ground:
            raise CircuitError(where, "the op-amp output is on ground", "connect out to a node of its own")
        if p.nodes[0] == p.nodes[1]:
            raise CircuitError(where, f"both inputs are on node {p.nodes[0]}",
                               "connect plus and minus to two different nodes")


def _floating_nodes(circuit: "Circuit") -> set[str]:
    """Nodes with no path to ground through any part (graph connectivity).

    Every two-terminal part and every controlled-source output joins its nodes; an
    op-amp joins its output to ground (it drives it); the source joins the input to
    ground; control pins draw no current and join nothing.
    """
    from symfilt.model.circuit import GROUND

    adj: dict[str, set[str]] = {}
    for a, b in branches(circuit, current_sources=True):
        adj.setdefault(a, set()).add(b)
        adj.setdefault(b, set()).add(a)
    for p in circuit.parts:
        for n in p.nodes:
            adj.setdefault(n, set())
    return set(adj) - reach(adj, GROUND)


def branches(circuit: "Circuit", *, current_sources: bool, driven: bool = True,
             load: bool | None = None) -> list[tuple[str, str]]:
    """Node pairs joined by a part's current path (fixtures included, control pins not).

    Parameters
    ----------
    circuit : Circuit
    current_sources : bool
        Whether vccs and cccs outputs join their nodes.
    driven : bool
        The source (or R_s and the source) joins the input to ground.
    load : bool, optional
        The load joins the output to ground (default: when the circuit has one).

    Returns
    -------
    list of (str, str)

    Examples
    --------
    >>> from symfilt.model.circuit import Circuit, Part
    >>> branches(Circuit.build([Part.resistor("R1", "in", "out"), Part.capacitor("C1", "out", "0")]),
    ...          current_sources=True)
    [('in', 'out'), ('out', '0'), ('in', '0')]
    """
    from symfilt.model.circuit import GROUND

    out = []
    for p in circuit.parts:
        if p.kind in _TWO_TERMINAL or p.kind in ("vcvs", "ccvs"):
            out.append((p.nodes[0], p.nodes[1]))
        elif p.kind in ("vccs", "cccs"):
            if current_sources:
                out.append((p.nodes[0], p.nodes[1]))
        elif p.kind == "opamp":
            out.append((p.nodes[2], GROUND))
    if driven:
        out.append((circuit.input, GROUND))
    if load is None:
        load = circuit.load_resistance.present or circuit.load_capacitance.present
    if load:
        out.append((circuit.output, GROUND))
    return out


def reach(adj: dict[str, set[str]], start: str) -> set[str]:
    """Nodes reachable from ``start`` in an adjacency map (``start`` included).

    Parameters
    ----------
    adj : dict of str to set of str
    start : str

    Returns
    -------
    set of str

    Examples
    --------
    >>> sorted(reach({"a": {"b"}, "b": {"a"}, "c": set()}, "a"))
    ['a', 'b']
    """
    reached = {start}
    stack = [start]
    while stack:
        for m in sorted(adj.get(stack.pop(), ())):
            if m not in reached:
                reached.add(m)
                stack.append(m)
    return reached


def structure_warnings(circuit: "Circuit") -> list[str]:
    """Legal but suspicious things about a circuit, one message each.

    A node with a single connection is usually a misspelt node name: whatever
    hangs on it carries no current and changes nothing.

    Parameters
    ----------
    circuit : Circuit

    Returns
    -------
    list of str
        Messages in the form ``<where>: <what>, <what to check>``, in a stable order.

    Examples
    --------
    >>> from symfilt.model.circuit import Circuit, Part
    >>> c = Circuit.build([Part.resistor("R1", "in", "out"), Part.resistor("R2", "out", "0"),
    ...                    Part.capacitor("C1", "out", "outt")])
    >>> structure_warnings(c)
    ['node outt: only one connection (C1), check the spelling of the node name or connect it']
    """
    from symfilt.model.circuit import GROUND

    count: dict[str, list[str]] = {}
    for p in circuit.parts:
        for n in p.nodes:
            count.setdefault(n, []).append(p.name)
    count.setdefault(circuit.input, []).append(_SOURCE)
    if circuit.load_resistance.present or circuit.load_capacitance.present:
        count.setdefault(circuit.output, []).append("the load")
    out = []
    for node in circuit.nodes():
        users = count.get(node, [])
        if node != GROUND and len(users) == 1:
            out.append(f"node {node}: only one connection ({users[0]}), "
                       "check the spelling of the node name or connect it")
    from symfilt.model.ties import unit_warnings, unused_parameters

    out += value_warnings(circuit)
    for name in unused_parameters(circuit):
        out.append(f"parameters {name}: no part's value refers to it, check the spelling or remove it")
    if any(p.tie for p in circuit.parts):
        out += unit_warnings(circuit)
    return out


#: Plausible values of each passive kind (SI base units): outside them a value is read, with a warning.
PLAUSIBLE = {"resistor": (sympy.Rational(1, 100), sympy.Integer(10) ** 12),
             "capacitor": (sympy.Rational(1, 10**16), sympy.Integer(1)),
             "inductor": (sympy.Rational(1, 10**12), sympy.Integer(1000))}
_PREFIX_HINTS = {"resistor": "check the prefix: m is milli, M is mega (1M is 1 MΩ)",
                 "capacitor": "check the prefix: a bare number is in farads (22n is 22 nF, 22u is 22 µF)",
                 "inductor": "check the prefix: a bare number is in henries (10m is 10 mH, 10u is 10 µH)"}


def value_warnings(circuit: "Circuit") -> list[str]:
    """A resistor, capacitor or inductor whose value lies outside :data:`PLAUSIBLE`, one message each.

    Parameters
    ----------
    circuit : Circuit

    Returns
    -------
    list of str
        ``part C1: read as 22 F, above 1 F for a capacitor, check the prefix ...``.

    Examples
    --------
    >>> from symfilt.model.circuit import Circuit, Part
    >>> value_warnings(Circuit.build([Part.resistor("R1", "in", "out", "1m"), Part.capacitor("C1", "out", "0", "22")]))[0]
    'part R1: read as 1 mΩ, below 10 mΩ for a resistor, check the prefix: m is milli, M is mega (1M is 1 MΩ)'
    """
    from symfilt.model.part import KIND_UNITS
    from symfilt.model.values import format_value

    out = []
    for p in circuit.parts:
        if p.kind not in PLAUSIBLE or p.value is None:
            continue
        lo, hi = PLAUSIBLE[p.kind]
        unit = KIND_UNITS[p.kind]
        if p.value < lo or p.value > hi:
            side, bound = ("below", lo) if p.value < lo else ("above", hi)
            out.append(f"part {p.name}: read as {format_value(p.value, unit)}, {side} {format_value(bound, unit)} "
                       f"for a {p.kind}, {_PREFIX_HINTS[p.kind]}")
    return out


def unreached_error(circuit: "Circuit"):
    """The error for a transfer function that is identically zero: the output is not reached from the
    input, with the likely typo (a node with one connection whose name is close to another node's).

    Parameters
    ----------
    circuit : Circuit

    Returns
    -------
    CircuitError

    Examples
    --------
    >>> from symfilt.model.circuit import Circuit, Part
    >>> c = Circuit.build([Part.resistor("R1", "in", "a"), Part.resistor("R2", "a", "0"),
    ...                    Part.capacitor("C1", "ot", "0"), Part.resistor("R3", "out", "0")])
    >>> print(unreached_error(c))
    circuit: H(s) = 0, the output out is not reached from the input in, check node ot (C1): did you mean out?
    """
    import difflib

    count: dict[str, list[str]] = {}
    for p in circuit.parts:
        for n in p.nodes:
            count.setdefault(n, []).append(p.name)
    nodes = circuit.nodes()
    hints = []
    for node in nodes:
        if len(count.get(node, [])) != 1 or node in (circuit.input, circuit.output, "0"):
            continue
        close = difflib.get_close_matches(node, [n for n in nodes if n != node and n != "0"], n=1, cutoff=0.5)
        if close:
            hints.append(f"node {node} ({count[node][0]}): did you mean {close[0]}?")
    fix = ("check " + "; ".join(hints)) if hints else (f"check the parts that should join {circuit.input} "
                                                         f"to {circuit.output} and their node names")
    return CircuitError("circuit", f"H(s) = 0, the output {circuit.output} is not reached from the input "
                        f"{circuit.input}", fix)
