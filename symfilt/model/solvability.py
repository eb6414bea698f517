"""Structural solvability: circuits whose equations have no unique solution for any values.

:func:`check_solvable` runs three checks per drive mode, each naming the nodes
and parts involved:

* a loop of voltage-type parts (the source, vcvs and ccvs outputs, op-amp
  outputs): the current around the loop is undetermined;
* a cut-set of current-type parts (vccs and cccs outputs): the voltage of the
  nodes behind it is undetermined;
* anything else the MNA pattern reveals, by a maximum bipartite matching between
  equations and unknowns (the structural rank). When it falls short, a
  Dulmage-Mendelsohn walk from the unmatched equations and unknowns names the
  nodes and parts involved (an ideal op-amp without feedback is the usual case).

The pattern is :func:`structural_pattern`, made from the same stamp records as
the engine's polynomial matrix (:mod:`symfilt.model.stamps`). Each check finds
only circuits whose determinant vanishes for every value, so nothing solvable is
ever refused; rarer singular circuits are left to the elimination.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from symfilt.errors import SingularCircuitError
from symfilt.model.stamps import MODES, SOURCE_BRANCH, SOURCE_NODE, Unknown, stamp_table
from symfilt.model.structure import branches, reach

if TYPE_CHECKING:  # pragma: no cover
    from symfilt.model.circuit import Circuit

__all__ = ["MODES", "check_solvable", "max_matching", "structural_pattern", "structural_rank"]

_TWO_TERMINAL = ("resistor", "capacitor", "inductor")
_SOURCE = "the source"  # label of the signal source in messages


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

    :func:`symfilt.model.structure.check_structure` calls it with every mode, so that a circuit is refused
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
    sources: list[tuple[str, str, str]] = []  # (label, a, b)
    if driven and not rs:
        sources.append((_SOURCE, circuit.input, GROUND))
    for p in circuit.parts:
        if p.kind in ("vcvs", "ccvs"):
            sources.append((p.name, p.nodes[0], p.nodes[1]))
        elif p.kind == "opamp" and not p.rout.present:  # behind Rout the source is at its own node
            sources.append((p.name, p.nodes[2], GROUND))
    # a ccvs or cccs controlled by a loop's current may pin that current: leave those to the matching
    controls = {p.control for p in circuit.parts if p.control is not None}
    forest: dict[str, list[tuple[str, str]]] = {}
    for label, a, b in sources:
        path = _path(forest, a, b)
        if path is not None:
            loop = sorted([label] + path, key=lambda lbl: (lbl == _SOURCE, lbl))
            if controls.isdisjoint(loop):
                nodes = sorted({a, b} | {n for lbl, x, y in sources if lbl in path for n in (x, y)},
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
    for a, b in branches(circuit, current_sources=False, driven=driven, load=load):
        adj.setdefault(a, set()).add(b)
        adj.setdefault(b, set()).add(a)
    reached = reach(adj, GROUND)
    pairs = [(p.nodes[2], p.nodes[3]) for p in circuit.parts if p.kind in ("vcvs", "vccs")]
    pairs += [(p.nodes[0], p.nodes[1]) for p in circuit.parts if p.kind == "opamp"]
    done: set[str] = set()
    for start in circuit.nodes():
        if start in reached or start in done:
            continue
        group = reach(adj, start)
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


def max_matching(rows: list[set[int]], ncols: int) -> list[int | None]:
    """Row matched to each column (None when unmatched): augmenting paths, iterative.

    Parameters
    ----------
    rows : list of set of int
        Each row's columns.
    ncols : int

    Returns
    -------
    list of int or None
        The row matched to each column.

    Examples
    --------
    >>> max_matching([{0, 1}, {0}], 2)
    [1, 0]
    """
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


def structural_pattern(circuit: "Circuit", mode: str = "transfer") -> tuple[list[Unknown], list[set[int]]]:
    """Unknowns and sparsity pattern of the MNA system of ``mode``.

    Made from :func:`symfilt.model.stamps.stamp_table`, the records the engine's
    matrix is made from: row ``i`` is the equation named by unknown ``i`` (KCL at
    a node, or a voltage-type part's constraint), and holds the columns it touches.
    An entry whose stamps cancel is still in the pattern.

    Parameters
    ----------
    circuit : Circuit
    mode : {"transfer", "zin", "zout"}

    Returns
    -------
    (list of Unknown, list of set of int)

    Examples
    --------
    >>> from symfilt import catalogue
    >>> unknowns, rows = structural_pattern(catalogue.build("rc-lowpass"))
    >>> [u.label for u in unknowns], rows
    (['V(in)', 'V(out)', 'V(source)', 'I(source)'], [{0, 1, 2}, {0, 1}, {0, 2, 3}, {2}])
    """
    table = stamp_table(circuit, mode)
    return list(table.unknowns), table.pattern()


def structural_rank(circuit: "Circuit", mode: str = "transfer") -> tuple[int, int]:
    """(structural rank, size) of the circuit's MNA system in ``mode``.

    The structural rank is the size of a maximum matching between equations and
    unknowns over the nonzero pattern; below the size, the determinant is zero
    whatever the values.

    Parameters
    ----------
    circuit : Circuit
    mode : {"transfer", "zin", "zout"}

    Returns
    -------
    (int, int)

    Examples
    --------
    >>> from symfilt import catalogue
    >>> structural_rank(catalogue.build("rc-lowpass"))
    (4, 4)
    """
    labels, rows = structural_pattern(circuit, mode)
    return sum(r is not None for r in max_matching(rows, len(labels))), len(labels)


def _check_structural_rank(circuit: "Circuit", mode: str) -> None:
    """Maximum matching of equations to unknowns; a shortfall names what is involved."""
    labels, rows = structural_pattern(circuit, mode)
    col_row = max_matching(rows, len(rows))
    if all(r is not None for r in col_row):
        return
    over_rows, under_cols = _dulmage_mendelsohn(rows, col_row)
    involved = {labels[i] for i in over_rows | under_cols} | {labels[c] for r in over_rows for c in rows[r]}
    node_names = sorted({u.name for u in involved if u.kind == "V" and u.name != SOURCE_NODE})
    part_names = {u.name for u in involved if u.kind == "I" and u.name != SOURCE_BRANCH}
    part_names |= {p.name for p in circuit.parts if p.kind in _TWO_TERMINAL and any(x in node_names for x in p.nodes)}
    source = Unknown("I", SOURCE_BRANCH)
    shown_parts = sorted(part_names) + ([_SOURCE] if source in involved else [])
    scope = (f"nodes {', '.join(node_names)}; " if node_names else "") + f"parts {', '.join(shown_parts)}"
    by_name = {p.name: p for p in circuit.parts}
    stuck = [name for name in sorted(part_names) if name in by_name and by_name[name].kind == "opamp"
             and by_name[name].model == "ideal"
             and (any(labels[r] == Unknown("I", name) for r in over_rows)
                  or any(labels[c] == Unknown("I", name) for c in under_cols))]
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


def _dulmage_mendelsohn(rows: list[set[int]], col_row: list[int | None]) -> tuple[set[int], set[int]]:
    """(over-determined rows, under-determined columns) of a matching that falls short.

    Over-determined: equations reachable from an unmatched equation by alternating
    paths; under-determined: unknowns reachable from an unmatched unknown.
    """
    n = len(rows)
    row_col: list[int | None] = [None] * n
    for c, r in enumerate(col_row):
        if r is not None:
            row_col[r] = c
    rows_of_col: list[list[int]] = [[] for _ in range(n)]
    for r, cols in enumerate(rows):
        for c in cols:
            rows_of_col[c].append(r)
    over_rows = {r for r in range(n) if row_col[r] is None}
    stack = list(over_rows)
    while stack:
        for c in rows[stack.pop()]:
            r = col_row[c]
            if r is not None and r not in over_rows:
                over_rows.add(r)
                stack.append(r)
    under_cols = {c for c in range(n) if col_row[c] is None}
    stack = list(under_cols)
    while stack:
        for r in rows_of_col[stack.pop()]:
            c = row_col[r]
            if c is not None and c not in under_cols:
                under_cols.add(c)
                stack.append(c)
    return over_rows, under_cols
