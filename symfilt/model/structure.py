"""Structural checks on a circuit, before any algebra.

:func:`check_structure` looks at names, kinds, pins, ports, control parts, ground
and floating nodes, then calls :func:`check_solvable`, which finds circuits whose
equations can have no unique solution whatever the values:

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
derive one quantity can ask :func:`check_solvable` about that one alone.

:func:`structure_warnings` lists what is legal but suspicious (a node with one
connection only). Every check is linear or near-linear in the circuit's size.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from symfilt.errors import CircuitError, SingularCircuitError, SizeLimitError

if TYPE_CHECKING:  # pragma: no cover
    from symfilt.model.circuit import Circuit

#: Most parts a circuit may have.
MAX_PARTS = 200

_TWO_TERMINAL = ("resistor", "capacitor", "inductor")
_CONTROLLED = ("vcvs", "vccs", "ccvs", "cccs")
_SOURCE = "the source"  # label of the signal source in messages
_SOURCE_NODE = "\x00source"  # internal node between the source and R_s (control characters are refused in names)


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
        Equations that have no unique solution (see :func:`check_solvable`).

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
    by_name = {p.name: p for p in parts}
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
    check_solvable(circuit)


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
    for a, b in _branches(circuit, current_sources=True):
        adj.setdefault(a, set()).add(b)
        adj.setdefault(b, set()).add(a)
    for p in circuit.parts:
        for n in p.nodes:
            adj.setdefault(n, set())
    return set(adj) - _reach(adj, GROUND)


def _branches(circuit: "Circuit", *, current_sources: bool, driven: bool = True,
              load: bool | None = None) -> list[tuple[str, str]]:
    """Node pairs joined by a part's current path (fixtures included, control pins not).

    ``driven``: the source (or R_s and the source) joins the input to ground.
    ``load``: the load joins the output to ground (default: when the circuit has one).
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


def _reach(adj: dict[str, set[str]], start: str) -> set[str]:
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
    return out


# --- solvability --------------------------------------------------------------------------

#: The ways the circuit is driven, as in :func:`symfilt.engine.mna.build_system`.
MODES = ("transfer", "zin", "zout")


def _setup(circuit: "Circuit", mode: str) -> tuple[bool, bool, bool]:
    """(voltage source at the input, R_s present, load present) in a mode.

    ``transfer``: the source (through R_s) drives the input, the load is on.
    ``zin``: a test current drives the input; no source, no R_s; the load is on.
    ``zout``: the source is zeroed (R_s kept), a test current drives the output, no load.
    """
    load = circuit.load_resistance.present or circuit.load_capacitance.present
    if mode == "transfer":
        return True, circuit.source.present, load
    if mode == "zin":
        return False, False, load
    return True, circuit.source.present, False


def check_solvable(circuit: "Circuit", modes=MODES) -> None:
    """Raise SingularCircuitError when the equations cannot have a unique solution in any of ``modes``.

    Three checks per mode, each naming the nodes and parts involved: a loop of
    voltage-type parts, a cut-set of current-type parts, and the structural rank
    of the MNA pattern (maximum bipartite matching of equations to unknowns).
    Each finds only circuits whose determinant is zero for every value of every
    symbol, so a circuit that passes may still be singular at particular values,
    never the other way round.

    :func:`check_structure` calls it with every mode, so that a circuit is refused
    only when no quantity can be derived from it (a follower whose output is the
    input port still has an input impedance). A caller about to derive one
    quantity may call it with that mode alone, before the algebra.

    Parameters
    ----------
    circuit : Circuit
        A circuit that has passed the other structural checks.
    modes : sequence of {"transfer", "zin", "zout"}
        The error is raised when the circuit is singular in every one of them;
        its message is the first mode's.

    Examples
    --------
    >>> from symfilt.model.circuit import Circuit, Part
    >>> c = Circuit(parts=(Part.opamp("U1", "in", "0", "out"), Part.resistor("R1", "out", "0")))
    >>> check_solvable(c)
    Traceback (most recent call last):
    ...
    symfilt.errors.SingularCircuitError: part U1: the ideal op-amp has no feedback from its output out to its inputs (+ in, - 0), so its output is undetermined (nodes in, out; parts R1, U1, the source), connect a part from out back to the - input, or give the op-amp model = "gain"
    """
    first: SingularCircuitError | None = None
    for mode in modes:
        if mode not in MODES:
            raise ValueError(f"mode must be one of {MODES}")
        try:
            _check_voltage_loops(circuit, mode)
            _check_current_cutsets(circuit, mode)
            _check_structural_rank(circuit, mode)
        except SingularCircuitError as exc:
            first = first or exc
            continue
        return
    if first is not None:
        raise first


def _check_voltage_loops(circuit: "Circuit", mode: str) -> None:
    """A loop of voltage-type branches: its circulating current is in the null space."""
    from symfilt.model.circuit import GROUND

    driven, rs, _load = _setup(circuit, mode)
    branches: list[tuple[str, str, str]] = []  # (label, a, b)
    if driven and not rs:
        branches.append((_SOURCE, circuit.input, GROUND))
    for p in circuit.parts:
        if p.kind in ("vcvs", "ccvs"):
            branches.append((p.name, p.nodes[0], p.nodes[1]))
        elif p.kind == "opamp":
            branches.append((p.name, p.nodes[2], GROUND))
    # a ccvs or cccs controlled by a loop's current may pin that current: leave those to the matching
    controls = {p.control for p in circuit.parts if p.control is not None}
    forest: dict[str, list[tuple[str, str]]] = {}
    for label, a, b in branches:
        path = _path(forest, a, b)
        if path is not None:
            loop = sorted([label] + path, key=lambda lbl: (lbl == _SOURCE, lbl))
            if controls.isdisjoint(loop):
                nodes = sorted({a, b} | {n for lbl, x, y in branches if lbl in path for n in (x, y)},
                               key=lambda n: (n != GROUND, n))
                names = ", ".join(_describe(circuit, lbl) for lbl in loop)
                raise SingularCircuitError(
                    "parts " + ", ".join(loop),
                    f"a loop of voltage sources ({names}) over nodes {', '.join(nodes)} "
                    "leaves the current around it undetermined",
                    "break the loop: put a resistor in series with one of them, or remove one")
        forest.setdefault(a, []).append((b, label))
        forest.setdefault(b, []).append((a, label))


def _path(forest: dict[str, list[tuple[str, str]]], a: str, b: str) -> list[str] | None:
    """Labels of the branches on the path from a to b in the forest, or None."""
    if a == b:
        return []
    previous: dict[str, tuple[str, str] | None] = {a: None}
    stack = [a]
    while stack:
        n = stack.pop()
        for m, label in forest.get(n, ()):
            if m not in previous:
                previous[m] = (n, label)
                if m == b:
                    labels = []
                    while previous[m] is not None:
                        m, label = previous[m]
                        labels.append(label)
                    return labels
                stack.append(m)
    return None


def _describe(circuit: "Circuit", label: str) -> str:
    if label == _SOURCE:
        return "the ideal source at the input"
    part = next(p for p in circuit.parts if p.name == label)
    return f"{label} output" if part.kind == "opamp" else label


def _check_current_cutsets(circuit: "Circuit", mode: str) -> None:
    """Nodes reached from ground only through current sources: their common voltage is free.

    Shifting every voltage of such a group by the same amount changes no branch
    current and no constraint, unless a control pair (vcvs/vccs control pins,
    op-amp inputs) straddles the group; groups with such a pair are left to the
    matching.
    """
    from symfilt.model.circuit import GROUND

    driven, _rs, load = _setup(circuit, mode)
    adj: dict[str, set[str]] = {}
    for a, b in _branches(circuit, current_sources=False, driven=driven, load=load):
        adj.setdefault(a, set()).add(b)
        adj.setdefault(b, set()).add(a)
    reached = _reach(adj, GROUND)
    pairs = [(p.nodes[2], p.nodes[3]) for p in circuit.parts if p.kind in ("vcvs", "vccs")]
    pairs += [(p.nodes[0], p.nodes[1]) for p in circuit.parts if p.kind == "opamp"]
    done: set[str] = set()
    for start in circuit.nodes():
        if start in reached or start in done:
            continue
        group = _reach(adj, start)
        done |= group
        if any((x in group) != (y in group) for x, y in pairs):
            continue
        sources = sorted(p.name for p in circuit.parts if p.kind in ("vccs", "cccs")
                         and (p.nodes[0] in group) != (p.nodes[1] in group))
        if mode == "zin" and circuit.input in group:
            sources.append("the test current at the input")
        if mode == "zout" and circuit.output in group:
            sources.append("the test current at the output")
        raise SingularCircuitError(
            "nodes " + ", ".join(sorted(group)),
            f"connected to the rest only through the current sources {', '.join(sources)} "
            "(a cut-set of current sources), so their voltage is undetermined",
            "add a resistor from one of them to ground, or join them to the circuit through a passive part")


def _mna_pattern(circuit: "Circuit", mode: str) -> tuple[list[tuple[str, str]], list[set[int]]]:
    """Labels and sparsity pattern of the MNA system of ``mode``.

    The same stamps as :func:`symfilt.engine.mna.build_system`: KCL at each node, then one
    constraint per voltage-type part; unknowns are node voltages, then branch
    currents, so row ``i`` and column ``i`` share the label ``("node", n)`` or
    ``("part", name)``.
    """
    from symfilt.model.circuit import GROUND

    driven, rs, load = _setup(circuit, mode)
    nodes = circuit.nodes()
    if rs:
        nodes.append(_SOURCE_NODE)
    index = {n: i for i, n in enumerate(nodes)}
    branches = ([_SOURCE] if driven else []) + [p.name for p in circuit.parts if p.kind in ("vcvs", "ccvs", "opamp")]
    bindex = {b: len(nodes) + i for i, b in enumerate(branches)}
    rows: list[set[int]] = [set() for _ in range(len(nodes) + len(branches))]

    def vi(node: str) -> int | None:
        return None if node == GROUND else index[node]

    def add(r: int | None, c: int | None) -> None:
        if r is not None and c is not None:
            rows[r].add(c)

    twos = [(p.name, p.nodes[0], p.nodes[1]) for p in circuit.parts if p.kind in _TWO_TERMINAL]
    if rs:
        twos.append(("R_s", _SOURCE_NODE, circuit.input))
    if load and circuit.load_resistance.present:
        twos.append(("R_L", circuit.output, GROUND))
    if load and circuit.load_capacitance.present:
        twos.append(("C_L", circuit.output, GROUND))
    ends = {}
    for name, a, b in twos:
        ends[name] = (vi(a), vi(b))
        for r in (vi(a), vi(b)):
            add(r, vi(a))
            add(r, vi(b))

    def control_columns(name: str) -> list[int | None]:
        return [bindex[name]] if name in bindex else list(ends[name])

    for p in circuit.parts:
        if p.kind == "vccs":
            for r in (vi(p.nodes[0]), vi(p.nodes[1])):
                add(r, vi(p.nodes[2]))
                add(r, vi(p.nodes[3]))
        elif p.kind == "cccs":
            for r in (vi(p.nodes[0]), vi(p.nodes[1])):
                for c in control_columns(p.control):
                    add(r, c)
        elif p.kind == "opamp":
            k = bindex[p.name]
            plus, minus, out = (vi(x) for x in p.nodes)
            add(out, k)
            add(k, plus)
            add(k, minus)
            if p.model != "ideal":
                add(k, out)
        elif p.kind in ("vcvs", "ccvs"):
            k = bindex[p.name]
            for node in p.nodes[:2]:
                add(vi(node), k)
                add(k, vi(node))
            if p.kind == "vcvs":
                add(k, vi(p.nodes[2]))
                add(k, vi(p.nodes[3]))
            else:
                for c in control_columns(p.control):
                    add(k, c)
    if driven:
        k = bindex[_SOURCE]
        src = index[_SOURCE_NODE] if rs else index[circuit.input]
        add(src, k)
        add(k, src)
    labels = [("node", n) for n in nodes] + [("part", b) for b in branches]
    return labels, rows


def _max_matching(rows: list[set[int]], ncols: int) -> list[int | None]:
    """Row matched to each column (None when unmatched): augmenting paths, iterative."""
    col_row: list[int | None] = [None] * ncols
    row_col: list[int | None] = [None] * len(rows)
    adj = [sorted(r) for r in rows]
    for r0 in range(len(rows)):
        free = next((c for c in adj[r0] if col_row[c] is None), None)
        if free is not None:  # the cheap greedy step first
            col_row[free], row_col[r0] = r0, free
            continue
        parent: dict[int, int] = {}  # column -> row it was reached from
        stack = [(r0, iter(adj[r0]))]
        found = None
        while stack and found is None:
            _r, it = stack[-1]
            for c in it:
                if c in parent:
                    continue
                parent[c] = stack[-1][0]
                if col_row[c] is None:
                    found = c
                else:
                    stack.append((col_row[c], iter(adj[col_row[c]])))
                break
            else:
                stack.pop()
        c = found
        while c is not None:  # flip the augmenting path
            r = parent[c]
            prev = row_col[r]
            col_row[c], row_col[r] = r, c
            c = prev
    return col_row


def structural_rank(circuit: "Circuit", mode: str = "transfer") -> tuple[int, int]:
    """(structural rank, size) of the circuit's MNA system in ``mode``.

    The structural rank is the size of a maximum matching between equations and
    unknowns over the nonzero pattern; below the size, the determinant is zero
    whatever the values.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> structural_rank(catalogue.build("rc-lowpass"))
    (4, 4)
    """
    labels, rows = _mna_pattern(circuit, mode)
    return sum(r is not None for r in _max_matching(rows, len(labels))), len(labels)


def _check_structural_rank(circuit: "Circuit", mode: str) -> None:
    """Maximum matching of equations to unknowns; a shortfall names what is involved."""
    labels, rows = _mna_pattern(circuit, mode)
    n = len(rows)
    col_row = _max_matching(rows, n)
    if all(r is not None for r in col_row):
        return
    row_col: list[int | None] = [None] * n
    for c, r in enumerate(col_row):
        if r is not None:
            row_col[r] = c
    rows_of_col: list[list[int]] = [[] for _ in range(n)]
    for r, cols in enumerate(rows):
        for c in cols:
            rows_of_col[c].append(r)
    # over-determined part: equations reachable from an unmatched equation by alternating paths
    over_rows = {r for r in range(n) if row_col[r] is None}
    stack = list(over_rows)
    while stack:
        for c in rows[stack.pop()]:
            r = col_row[c]
            if r is not None and r not in over_rows:
                over_rows.add(r)
                stack.append(r)
    # under-determined part: unknowns reachable from an unmatched unknown
    under_cols = {c for c in range(n) if col_row[c] is None}
    stack = list(under_cols)
    while stack:
        for r in rows_of_col[stack.pop()]:
            c = row_col[r]
            if c is not None and c not in under_cols:
                under_cols.add(c)
                stack.append(c)
    involved = {labels[i] for i in over_rows | under_cols} | {labels[c] for r in over_rows for c in rows[r]}
    node_names = sorted({v for k, v in involved if k == "node" and v != _SOURCE_NODE})
    part_names = {v for k, v in involved if k == "part" and v != _SOURCE}
    part_names |= {p.name for p in circuit.parts if p.kind in _TWO_TERMINAL and any(x in node_names for x in p.nodes)}
    shown_parts = sorted(part_names) + ([_SOURCE] if ("part", _SOURCE) in involved else [])
    scope = (f"nodes {', '.join(node_names)}; " if node_names else "") + f"parts {', '.join(shown_parts)}"
    by_name = {p.name: p for p in circuit.parts}
    stuck = [name for name in sorted(part_names) if name in by_name and by_name[name].kind == "opamp"
             and by_name[name].model == "ideal"
             and (any(labels[r] == ("part", name) for r in over_rows)
                  or any(labels[c] == ("part", name) for c in under_cols))]
    if stuck:
        plus, minus, out = by_name[stuck[0]].nodes
        raise SingularCircuitError(
            f"part {stuck[0]}",
            f"the ideal op-amp has no feedback from its output {out} to its inputs (+ {plus}, - {minus}), "
            f"so its output is undetermined ({scope})",
            f"connect a part from {out} back to the - input, or give the op-amp model = \"gain\"")
    raise SingularCircuitError(
        "circuit", f"the equations have no unique solution for any values ({scope})",
        "check for a loop of voltage sources, nodes held only by current sources, "
        "or an op-amp whose inputs are fixed by other sources")
