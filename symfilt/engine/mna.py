"""Modified nodal analysis: stamps into a system whose entries are polynomials.

Every entry of the matrix is a polynomial with integer coefficients over the
circuit's symbols (python-flint ``fmpz_mpoly``). Fractions never appear:

* a resistor ``R`` stamps a *conductance generator* ``G:R`` that stands for ``1/R``,
  and an inductor ``L`` stamps ``Y:L`` that stands for ``1/(s L)``; the elimination
  turns them back into ``R`` and ``s L`` at the end (:mod:`symfilt.engine.elimination`);
* a capacitor stamps ``s C``;
* voltage-type parts (the source, vcvs, ccvs, op-amp outputs) add a branch current
  unknown and a constraint row; an ideal op-amp is a nullor (its constraint row is
  ``V+ - V- = 0`` and its output current is free).

Rows are Kirchhoff's current law at each non-ground node (currents leaving the node
through parts equal the current injected by a test source), then one constraint
row per voltage-type part.
"""

from __future__ import annotations

from dataclasses import dataclass

import flint
import sympy

from symfilt.model.circuit import GROUND, LOAD_C, LOAD_R, SOURCE_R, Circuit, S, part_symbol

#: What the system is set up to find.
MODES = ("transfer", "zin", "zout")
PI = "pi"  # generator name standing for the number pi (single-pole op-amps)
_SOURCE_NODE = "\x00source"


@dataclass(frozen=True)
class MnaSystem:
    """A linear system ``A x = b`` with polynomial entries and one unknown of interest.

    Attributes
    ----------
    ctx : flint.fmpz_mpoly_ctx
        The polynomial ring; its generators are the circuit's symbols, ``pi`` when
        needed, and the reciprocal generators.
    rows : tuple of dict
        Sparse rows of ``A``: column index -> polynomial.
    rhs : dict
        Row index -> polynomial of ``b`` (absent means zero).
    unknowns : tuple of str
        Names of the unknowns (``V(node)`` and ``I(part)``).
    target : int
        Index of the unknown the mode asks for.
    reciprocal : dict
        Reciprocal generator name -> {generator name: exponent} of the monomial it stands for.
    symbols : dict
        Generator name -> sympy object it means (``pi`` maps to :data:`sympy.pi`).
    parts : int
        Number of parts of the circuit (fixtures not counted), for messages.
    """

    ctx: object
    rows: tuple
    rhs: dict
    unknowns: tuple
    target: int
    reciprocal: dict
    symbols: dict
    parts: int = 0

    @property
    def size(self) -> int:
        """Number of unknowns.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> build_system(catalogue.build("rc-lowpass"), "transfer").size
        4
        """
        return len(self.unknowns)


def _two_terminal(circuit: Circuit, mode: str) -> list[tuple[str, str, str, str]]:
    """(name, kind, a, b) of every two-terminal admittance, fixtures included per mode."""
    items = [(p.name, p.kind, p.nodes[0], p.nodes[1]) for p in circuit.parts
             if p.kind in ("resistor", "capacitor", "inductor")]
    if circuit.source.present and mode in ("transfer", "zout"):
        items.append((SOURCE_R, "resistor", _SOURCE_NODE, circuit.input))
    if mode in ("transfer", "zin"):
        if circuit.load_resistance.present:
            items.append((LOAD_R, "resistor", circuit.output, GROUND))
        if circuit.load_capacitance.present:
            items.append((LOAD_C, "capacitor", circuit.output, GROUND))
    return items


def build_system(circuit: Circuit, mode: str = "transfer") -> MnaSystem:
    """Stamp the circuit into an MNA system.

    Parameters
    ----------
    circuit : Circuit
    mode : {"transfer", "zin", "zout"}
        ``transfer``: a unit voltage source behind ``R_s`` drives the input, the
        unknown of interest is the output voltage. ``zin``: a unit current is
        injected into the input node (source and ``R_s`` removed, load kept); the
        unknown is the input voltage, i.e. the input impedance. ``zout``: the
        source is set to zero (``R_s`` kept, load removed) and a unit current is
        injected into the output node; the unknown is the output impedance.

    Returns
    -------
    MnaSystem

    Examples
    --------
    >>> from symfilt import catalogue
    >>> sys = build_system(catalogue.build("rc-lowpass"), "transfer")
    >>> sys.unknowns
    ('V(in)', 'V(out)', 'V(source)', 'I(source)')
    """
    if mode not in MODES:
        raise ValueError(f"mode must be one of {MODES}")
    twos = _two_terminal(circuit, mode)
    # generators: circuit symbols, then reciprocal ones
    gen_names: list[str] = []
    symbols: dict[str, object] = {}

    def gen(name: str, sym) -> None:
        if name not in symbols:
            gen_names.append(name)
            symbols[name] = sym

    gen("s", S)
    for name, kind, _a, _b in twos:
        gen(name, part_symbol(name))
    for p in circuit.parts:
        if p.kind in ("vcvs", "vccs", "ccvs", "cccs"):
            gen(p.name, part_symbol(p.name, p.kind))
        elif p.kind == "opamp" and p.model != "ideal":
            gen(f"A_{p.name}", part_symbol(f"A_{p.name}"))
            if p.model == "single-pole":
                gen(f"GBW_{p.name}", part_symbol(f"GBW_{p.name}"))
                gen(PI, sympy.pi)
    reciprocal: dict[str, dict[str, int]] = {}
    for name, kind, _a, _b in twos:
        if kind == "resistor":
            reciprocal[f"G:{name}"] = {name: 1}
        elif kind == "inductor":
            reciprocal[f"Y:{name}"] = {"s": 1, name: 1}
    all_gens = gen_names + list(reciprocal)
    ctx = flint.fmpz_mpoly_ctx.get(tuple(all_gens), "degrevlex")
    g = dict(zip(all_gens, ctx.gens()))
    zero, one = ctx.from_dict({}), ctx.from_dict({(0,) * len(all_gens): 1})

    # unknowns: node voltages, then branch currents
    nodes = circuit.nodes()
    if mode in ("transfer", "zout") and circuit.source.present:
        nodes.append(_SOURCE_NODE)
    unknowns = [f"V({'source' if n == _SOURCE_NODE else n})" for n in nodes]
    index = {n: i for i, n in enumerate(nodes)}
    branches: list[str] = []
    if mode in ("transfer", "zout"):
        branches.append("source")
    for p in circuit.parts:
        if p.kind in ("vcvs", "ccvs", "opamp"):
            branches.append(p.name)
    bindex = {b: len(nodes) + i for i, b in enumerate(branches)}
    unknowns += [f"I({b})" for b in branches]
    n = len(unknowns)
    rows: list[dict[int, object]] = [dict() for _ in range(n)]
    rhs: dict[int, object] = {}

    def add(r: int | None, c: int | None, v) -> None:
        if r is None or c is None:
            return
        new = rows[r].get(c, zero) + v
        if new == 0:
            rows[r].pop(c, None)
        else:
            rows[r][c] = new

    def vi(node: str) -> int | None:
        return None if node == GROUND else index[node]

    admittance = {"resistor": lambda nm: g[f"G:{nm}"], "capacitor": lambda nm: g["s"] * g[nm],
                  "inductor": lambda nm: g[f"Y:{nm}"]}
    branch_admittance: dict[str, tuple] = {}
    for name, kind, a, b in twos:
        y = admittance[kind](name)
        branch_admittance[name] = (y, a, b)
        ia, ib = vi(a), vi(b)
        add(ia, ia, y)
        add(ib, ib, y)
        add(ia, ib, -y)
        add(ib, ia, -y)

    def control_current(name: str) -> list[tuple[int, object]]:
        """The controlling current as a list of (column, coefficient)."""
        if name in bindex:
            return [(bindex[name], one)]
        y, a, b = branch_admittance[name]
        out = []
        if vi(a) is not None:
            out.append((vi(a), y))
        if vi(b) is not None:
            out.append((vi(b), -y))
        return out

    for p in circuit.parts:
        if p.kind == "vccs":
            gm = g[p.name]
            op, om, cp, cm = (vi(x) for x in p.nodes)
            for row, sign in ((op, 1), (om, -1)):
                add(row, cp, sign * gm)
                add(row, cm, -sign * gm)
        elif p.kind == "cccs":
            f = g[p.name]
            op, om = vi(p.nodes[0]), vi(p.nodes[1])
            for col, coef in control_current(p.control):
                add(op, col, f * coef)
                add(om, col, -f * coef)
    for p in circuit.parts:
        if p.kind not in ("vcvs", "ccvs", "opamp"):
            continue
        k = bindex[p.name]
        if p.kind == "opamp":
            plus, minus, out = (vi(x) for x in p.nodes)
            add(out, k, one)  # output current leaves the node into the op-amp's output branch
            if p.model == "ideal":
                add(k, plus, one)
                add(k, minus, -one)
            elif p.model == "gain":
                a0 = g[f"A_{p.name}"]
                add(k, out, one)
                add(k, plus, -a0)
                add(k, minus, a0)
            else:
                a0, gbw = g[f"A_{p.name}"], g[f"GBW_{p.name}"]
                wb = 2 * g[PI] * gbw
                add(k, out, a0 * g["s"] + wb)
                add(k, plus, -a0 * wb)
                add(k, minus, a0 * wb)
        else:
            op, om = vi(p.nodes[0]), vi(p.nodes[1])
            add(op, k, one)
            add(om, k, -one)
            add(k, op, one)
            add(k, om, -one)
            gain = g[p.name]
            if p.kind == "vcvs":
                add(k, vi(p.nodes[2]), -gain)
                add(k, vi(p.nodes[3]), gain)
            else:
                for col, coef in control_current(p.control):
                    add(k, col, -gain * coef)
    if mode in ("transfer", "zout"):
        k = bindex["source"]
        src = index[_SOURCE_NODE] if circuit.source.present else index[circuit.input]
        add(src, k, one)
        add(k, src, one)
        if mode == "transfer":
            rhs[k] = one
    if mode == "zin":
        rhs[index[circuit.input]] = one
        target = index[circuit.input]
    else:
        target = index[circuit.output]
    if mode == "zout":
        rhs[index[circuit.output]] = one
    return MnaSystem(ctx=ctx, rows=tuple(rows), rhs=rhs, unknowns=tuple(unknowns), target=target,
                     reciprocal=reciprocal, symbols=symbols, parts=len(circuit.parts))
