"""The modified nodal equations of a circuit, written once, as records.

Each part kind (and the source, the load and the test drive of each mode) is a
list of :class:`Stamp` records: the equation (row) and the unknown (column) it
touches, named by :class:`Unknown` (node voltages ``V(n)``, branch currents
``I(name)``), and the entry it adds there as a small exact polynomial over
named factors. :func:`stamp_table` lists them for a circuit and a drive mode.

Two things are made from the same records: the polynomial matrix of
:func:`symfilt.engine.mna.build_system` (each factor becomes a flint generator;
``Y:<part>`` the part's admittance) and the structural pattern of
:func:`symfilt.model.solvability.structural_pattern` (which columns each row
touches). Rows are Kirchhoff's current law at each non-ground node, then one
constraint row per voltage-type part (the source, vcvs, ccvs, op-amp outputs);
an ideal op-amp is a nullor, and its output resistance, input resistance and
input capacitance (:mod:`symfilt.model.opamp`) are two-terminal admittances.

The table lives in the model layer because :meth:`Circuit.check
<symfilt.model.circuit.Circuit.check>` refuses structurally singular circuits
with it; it needs no algebra.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

if TYPE_CHECKING:  # pragma: no cover
    from symfilt.model.circuit import Circuit

#: The ways the circuit is driven (see :func:`stamp_table`).
MODES = ("transfer", "zin", "zout")
#: The drive modes and the broken loop of one op-amp.
DRIVES = MODES + ("loop",)
#: Internal node between the source and R_s (control characters are refused in names).
SOURCE_NODE = "\x00source"
#: Internal name of the source's branch current.
SOURCE_BRANCH = "\x00source"
#: Generator name standing for the number pi (single-pole op-amps).
PI = "pi"

_TWO_TERMINAL = ("resistor", "capacitor", "inductor")
_VOLTAGE_TYPE = ("vcvs", "ccvs", "opamp")

ONE = ((1, ()),)


@dataclass(frozen=True)
class Unknown:
    """An unknown of the MNA system, which also names its equation (row).

    Parameters
    ----------
    kind : {"V", "I"}
        A node voltage or a branch current.
    name : str
        The node or the part (:data:`SOURCE_NODE`, :data:`SOURCE_BRANCH` for the source).

    Examples
    --------
    >>> Unknown("V", "out").label, Unknown("I", SOURCE_BRANCH).label
    ('V(out)', 'I(source)')
    """

    kind: str
    name: str

    @property
    def label(self) -> str:
        """``V(node)`` or ``I(part)``, the source's own ones as ``V(source)`` and ``I(source)``.

        Examples
        --------
        >>> Unknown("V", SOURCE_NODE).label
        'V(source)'
        """
        name = "source" if self.name in (SOURCE_NODE, SOURCE_BRANCH) else self.name
        return f"{self.kind}({name})"


@dataclass(frozen=True)
class Stamp:
    """One entry added to the MNA matrix.

    Parameters
    ----------
    row, column : Unknown
        The equation and the unknown.
    entry : tuple of (int, tuple of str)
        A polynomial: terms of (integer coefficient, factor names). Factors are
        ``s``, circuit symbols (gains, ``A_U1``, ``GBW_U1``), :data:`PI`, and
        ``Y:<part>``, the admittance of a two-terminal part (1/R, s C, 1/(s L)).

    Examples
    --------
    >>> Stamp(Unknown("V", "a"), Unknown("V", "a"), ((1, ("Y:R1",)),)).entry
    ((1, ('Y:R1',)),)
    """

    row: Unknown
    column: Unknown
    entry: tuple


@dataclass(frozen=True)
class StampTable:
    """The MNA equations of a circuit in one drive mode, as records.

    Parameters
    ----------
    unknowns : tuple of Unknown
        Node voltages (the circuit's nodes, then the source node), then branch
        currents (the source, then voltage-type parts in order).
    stamps : tuple of Stamp
        In the order they are added.
    rhs : tuple of (Unknown, entry)
        Nonzero right-hand side entries, by row.
    target : Unknown
        The unknown the mode asks for.
    admittances : tuple of (str, str, str, str)
        (name, kind, node a, node b) of every two-terminal admittance, fixtures included.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> [u.label for u in stamp_table(catalogue.build("rc-lowpass"), "transfer").unknowns]
    ['V(in)', 'V(out)', 'V(source)', 'I(source)']
    """

    unknowns: tuple
    stamps: tuple
    rhs: tuple
    target: Unknown
    admittances: tuple

    def pattern(self) -> list[set[int]]:
        """Rows as sets of column indices, in the order of :attr:`unknowns`.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> stamp_table(catalogue.build("rc-lowpass"), "zin").pattern()
        [{0, 1}, {0, 1}]
        """
        index = {u: i for i, u in enumerate(self.unknowns)}
        rows: list[set[int]] = [set() for _ in self.unknowns]
        for st in self.stamps:
            rows[index[st.row]].add(index[st.column])
        return rows


def admittances(circuit: "Circuit", mode: str) -> list[tuple[str, str, str, str]]:
    """(name, kind, a, b) of every two-terminal admittance, fixtures included per mode.

    Parameters
    ----------
    circuit : Circuit
    mode : {"transfer", "zin", "zout"}

    Returns
    -------
    list of tuple

    Examples
    --------
    >>> from symfilt import catalogue
    >>> [a[0] for a in admittances(catalogue.build("rc-lowpass"), "zout")]
    ['R1', 'C1', 'R_s']
    """
    from symfilt.model.circuit import GROUND, LOAD_C, LOAD_R, SOURCE_R

    items = [(p.name, p.kind, p.nodes[0], p.nodes[1]) for p in circuit.parts if p.kind in _TWO_TERMINAL]
    for p in circuit.parts:
        if p.kind == "opamp":
            items += _opamp_admittances(p, GROUND)
    if circuit.source.present and mode in ("transfer", "zout", "loop"):
        items.append((SOURCE_R, "resistor", SOURCE_NODE, circuit.input))
    if mode in ("transfer", "zin", "loop"):
        if circuit.load_resistance.present:
            items.append((LOAD_R, "resistor", circuit.output, GROUND))
        if circuit.load_capacitance.present:
            items.append((LOAD_C, "capacitor", circuit.output, GROUND))
    return items


def _opamp_admittances(p, ground: str) -> list[tuple[str, str, str, str]]:
    """The op-amp's own two-terminal parts: Rout to its output, Rin across its inputs, Cin on each."""
    from symfilt.model.opamp import internal_node

    plus, minus, out = p.nodes
    items = []
    if p.rout.present:
        items.append((f"Rout_{p.name}", "resistor", internal_node(p.name), out))
    if p.rin.present:
        items.append((f"Rin_{p.name}", "resistor", plus, minus))
    if p.cin.present:
        items += [(f"Cin_{p.name}", "capacitor", node, ground) for node in (plus, minus) if node != ground]
    return items


def stamp_table(circuit: "Circuit", mode: str = "transfer", opamp: str | None = None) -> StampTable:
    """The MNA stamps of ``circuit`` driven as ``mode`` says.

    Parameters
    ----------
    circuit : Circuit
    opamp : str, optional
        For ``loop``: the op-amp whose loop is broken.
    mode : {"transfer", "zin", "zout", "loop"}
        ``transfer``: a unit voltage source behind ``R_s`` drives the input, the
        target is the output voltage. ``zin``: a unit current is injected into the
        input node (source and ``R_s`` removed, load kept); the target is the input
        voltage. ``zout``: the source is set to zero (``R_s`` kept, load removed) and
        a unit current is injected into the output node; the target is the output
        voltage. ``loop``: the loop of op-amp ``opamp`` is broken at its controlled
        source, which is replaced by a unit voltage (source zeroed, ``R_s`` and the
        load kept); the target is its input voltage V+ − V−, so the return ratio is
        ``T(s) = −A(s)·target`` and the feedback factor ``β(s) = −target``.

    Returns
    -------
    StampTable

    Examples
    --------
    >>> from symfilt import catalogue
    >>> t = stamp_table(catalogue.build("rc-lowpass"), "transfer")
    >>> t.target.label, len(t.stamps)
    ('V(out)', 12)
    """
    if mode not in DRIVES:
        raise ValueError(f"mode must be one of {DRIVES}")
    if (mode == "loop") != (opamp is not None):
        raise ValueError("name the op-amp for mode 'loop', and only for it")
    unknowns, voltage = _unknowns(circuit, mode, opamp)
    twos = admittances(circuit, mode)
    out: list[Stamp] = []
    for name, _kind, a, b in twos:
        _stamp_admittance(out, voltage(a), voltage(b), ((1, (f"Y:{name}",)),))
    control = _control_current(circuit, twos, voltage)
    for p in circuit.parts:
        if p.kind in ("vccs", "cccs"):
            _stamp_current_source(out, p, voltage, control)
    for p in circuit.parts:
        if p.kind == "opamp":
            _stamp_opamp(out, p, voltage, broken=p.name == opamp)
        elif p.kind in ("vcvs", "ccvs"):
            _stamp_voltage_source(out, p, voltage, control)
    rhs, target = _stamp_drive(out, circuit, mode, voltage, opamp)
    return StampTable(unknowns=tuple(unknowns), stamps=tuple(out), rhs=tuple(rhs), target=target,
                      admittances=tuple(twos))


def _unknowns(circuit: "Circuit", mode: str, opamp: str | None = None):
    """The unknowns in order, and node -> its voltage unknown (None for ground)."""
    from symfilt.model.circuit import GROUND
    from symfilt.model.opamp import internal_node

    nodes = circuit.nodes()
    nodes += [internal_node(p.name) for p in circuit.parts if p.kind == "opamp" and p.rout.present]
    if mode in ("transfer", "zout", "loop") and circuit.source.present:
        nodes.append(SOURCE_NODE)
    unknowns = [Unknown("V", n) for n in nodes]
    if mode in ("transfer", "zout", "loop"):
        unknowns.append(Unknown("I", SOURCE_BRANCH))
    unknowns += [Unknown("I", p.name) for p in circuit.parts if p.kind in _VOLTAGE_TYPE]
    if mode == "loop":
        unknowns.append(Unknown("V", loop_node(opamp)))

    def voltage(node: str) -> Unknown | None:
        return None if node == GROUND else Unknown("V", node)

    return unknowns, voltage


def _scaled(entry: tuple, factor: int = 1, extra: tuple = ()) -> tuple:
    """An entry times an integer and times more factors."""
    return tuple((factor * c, extra + f) for c, f in entry)


def _add(out: list, row: Unknown | None, column: Unknown | None, entry: tuple) -> None:
    if row is not None and column is not None:
        out.append(Stamp(row, column, entry))


def _stamp_admittance(out: list, a: Unknown | None, b: Unknown | None, y: tuple) -> None:
    """An admittance between two nodes: +y on the diagonal, -y off it."""
    _add(out, a, a, y)
    _add(out, b, b, y)
    _add(out, a, b, _scaled(y, -1))
    _add(out, b, a, _scaled(y, -1))


def _control_current(circuit: "Circuit", twos, voltage):
    """name -> the current of a control part as [(column, entry)]: its branch, or y (V(a) - V(b))."""
    branches = {p.name for p in circuit.parts if p.kind in _VOLTAGE_TYPE}
    ends = {name: (a, b) for name, _kind, a, b in twos}

    def control(name: str) -> list[tuple[Unknown, tuple]]:
        if name in branches:
            return [(Unknown("I", name), ONE)]
        a, b = ends[name]
        y = ((1, (f"Y:{name}",)),)
        out = []
        if voltage(a) is not None:
            out.append((voltage(a), y))
        if voltage(b) is not None:
            out.append((voltage(b), _scaled(y, -1)))
        return out

    return control


def _stamp_current_source(out: list, p, voltage, control) -> None:
    """vccs (gain p.name times the control voltage) or cccs (times the control current)."""
    op, om = voltage(p.nodes[0]), voltage(p.nodes[1])
    if p.kind == "vccs":
        cp, cm = voltage(p.nodes[2]), voltage(p.nodes[3])
        for row, sign in ((op, 1), (om, -1)):
            _add(out, row, cp, ((sign, (p.name,)),))
            _add(out, row, cm, ((-sign, (p.name,)),))
        return
    for col, coef in control(p.control):
        _add(out, op, col, _scaled(coef, 1, (p.name,)))
        _add(out, om, col, _scaled(coef, -1, (p.name,)))


def loop_node(opamp: str) -> str:
    """The pseudo-node whose unknown is the input voltage V+ − V− of a broken loop.

    Parameters
    ----------
    opamp : str
        The op-amp's part name.

    Examples
    --------
    >>> Unknown("V", loop_node("U1")).name == "\\x00U1:d"
    True
    """
    return f"\x00{opamp}:d"


def _opamp_rows(p) -> tuple[tuple, tuple]:
    """(entry on the controlled node, entry on V+ (V− takes minus it)) of the constraint row.

    ``den(s)·V_e = num·(V+ − V−)`` with A(s) = num/den: gain A; integrator
    s V_e = 2πGBW (V+ − V−); single pole
    (A s + 2πGBW) V_e = 2πGBW A (V+ − V−); two poles times (s + 2πP2) on the left
    and 2πP2 on the right.
    """
    a0, gbw, p2 = f"A_{p.name}", f"GBW_{p.name}", f"P2_{p.name}"
    if p.model == "gain":
        return ONE, ((1, (a0,)),)
    if p.model == "integrator":
        return ((1, ("s",)),), ((2, (PI, gbw)),)
    left, right = ((1, (a0, "s")), (2, (PI, gbw))), ((2, (a0, PI, gbw)),)
    if p.model == "two-pole":
        left = tuple((c * c2, f + f2) for c, f in left for c2, f2 in ((1, ("s",)), (2, (PI, p2))))
        right = _scaled(right, 2, (PI, p2))
    return left, right


def _stamp_opamp(out: list, p, voltage, broken: bool = False) -> None:
    """Output current into the op-amp's branch; its constraint row by model.

    With an output resistance the controlled source sits at the internal node
    behind ``Rout``. A broken op-amp (mode ``loop``) gets the row ``V_e = 1``.
    """
    from symfilt.model.opamp import internal_node

    k = Unknown("I", p.name)
    plus, minus, node = (voltage(x) for x in p.nodes)
    if p.rout.present:
        node = voltage(internal_node(p.name))
    _add(out, node, k, ONE)  # output current leaves the node into the op-amp's output branch
    if broken:
        _add(out, k, node, ONE)
    elif p.model == "ideal":
        _add(out, k, plus, ONE)
        _add(out, k, minus, ((-1, ()),))
    else:
        left, right = _opamp_rows(p)
        _add(out, k, node, left)
        _add(out, k, plus, _scaled(right, -1))
        _add(out, k, minus, right)


def _stamp_voltage_source(out: list, p, voltage, control) -> None:
    """vcvs or ccvs: branch current between its outputs, V+ - V- = gain * control."""
    k = Unknown("I", p.name)
    op, om = voltage(p.nodes[0]), voltage(p.nodes[1])
    _add(out, op, k, ONE)
    _add(out, om, k, ((-1, ()),))
    _add(out, k, op, ONE)
    _add(out, k, om, ((-1, ()),))
    if p.kind == "vcvs":
        _add(out, k, voltage(p.nodes[2]), ((-1, (p.name,)),))
        _add(out, k, voltage(p.nodes[3]), ((1, (p.name,)),))
    else:
        for col, coef in control(p.control):
            _add(out, k, col, _scaled(coef, -1, (p.name,)))


def _stamp_drive(out: list, circuit: "Circuit", mode: str, voltage, opamp: str | None = None):
    """The source branch and the right-hand side of the mode; returns (rhs, target)."""
    rhs = []
    if mode == "loop":
        amp = circuit.part(opamp)
        diff = Unknown("V", loop_node(opamp))
        _add(out, diff, diff, ONE)
        _add(out, diff, voltage(amp.nodes[0]), ((-1, ()),))
        _add(out, diff, voltage(amp.nodes[1]), ONE)
        rhs.append((Unknown("I", opamp), ONE))
    if mode in ("transfer", "zout", "loop"):
        k = Unknown("I", SOURCE_BRANCH)
        src = Unknown("V", SOURCE_NODE) if circuit.source.present else voltage(circuit.input)
        _add(out, src, k, ONE)
        _add(out, k, src, ONE)
        if mode == "transfer":
            rhs.append((k, ONE))
    if mode == "zin":
        rhs.append((voltage(circuit.input), ONE))
        target = voltage(circuit.input)
    elif mode == "loop":
        target = Unknown("V", loop_node(opamp))
    else:
        target = voltage(circuit.output)
    if mode == "zout":
        rhs.append((voltage(circuit.output), ONE))
    return rhs, target
