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

import math

import flint
import sympy

from symfilt.model.circuit import Circuit, S, part_symbol
from symfilt.model.keep import fixed_values
from symfilt.model.opamp import PARAMETER
from symfilt.model.stamps import MODES, PI, stamp_table

__all__ = ["MODES", "PI", "MnaSystem", "build_system"]


@dataclass(frozen=True)
class MnaSystem:
    """A linear system ``A x = b`` with polynomial entries and one unknown of interest.

    Parameters
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
    keys : tuple of Unknown
        The unknowns themselves (:class:`symfilt.model.stamps.Unknown`), in the order of
        ``unknowns``: labels are for display and may coincide (a part named ``source``),
        keys never do.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> system = build_system(catalogue.build("rc-lowpass"), "transfer")
    >>> system.unknowns[system.target], system.parts
    ('V(out)', 2)
    """

    ctx: object
    rows: tuple
    rhs: dict
    unknowns: tuple
    target: int
    reciprocal: dict
    symbols: dict
    parts: int = 0
    keys: tuple = ()

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


def build_system(circuit: Circuit, mode: str = "transfer", opamp: str | None = None) -> MnaSystem:
    """Stamp the circuit into an MNA system.

    The stamps are the records of :func:`symfilt.model.stamps.stamp_table`; here
    each entry becomes a flint polynomial.

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
        ``loop``: op-amp ``opamp``'s controlled source is replaced by a unit
        voltage; the unknown is its V+ − V− (see :func:`symfilt.model.stamps.stamp_table`).
    opamp : str, optional
        The op-amp of mode ``loop``.

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
    table = stamp_table(circuit, mode, opamp)
    fixed = fixed_values(circuit)  # empty unless the circuit keeps only some symbols
    ctx, factor, reciprocal, symbols = _ring(circuit, table.admittances, fixed)
    ring = factor["s"].context()  # rational coefficients while values are put in, else ctx itself
    zero = ring.from_dict({})
    index = {u: i for i, u in enumerate(table.unknowns)}
    rows: list[dict[int, object]] = [dict() for _ in table.unknowns]
    for st in table.stamps:
        row, c = rows[index[st.row]], index[st.column]
        new = row.get(c, zero) + _poly(st.entry, factor, ring)
        if new == 0:
            row.pop(c, None)
        else:
            row[c] = new
    rhs = {index[u]: _poly(entry, factor, ring) for u, entry in table.rhs}
    if ring is not ctx:
        rows, rhs = _integral_rows(rows, rhs, ctx)
    return MnaSystem(ctx=ctx, rows=tuple(rows), rhs=rhs, unknowns=tuple(u.label for u in table.unknowns),
                     target=index[table.target], reciprocal=reciprocal, symbols=symbols,
                     parts=len(circuit.parts), keys=tuple(table.unknowns))


def _ring(circuit: Circuit, twos, fixed=None):
    """The polynomial ring: (context, factor name -> polynomial, reciprocal generators, symbols).

    Generators: ``s``, the two-terminal parts, the controlled sources' gains, the
    op-amps' ``A_`` and ``GBW_`` (and pi), then the reciprocal generators ``G:R``
    (1/R) and ``Y:L`` (1/(s L)). A name in ``fixed`` (name -> exact value, a partly
    symbolic derivation) is no generator: its factor is the number, the factors are
    polynomials with rational coefficients, and a valued inductor's ``Y:L`` stands for 1/s.
    """
    fixed = fixed or {}
    gen_names: list[str] = []
    symbols: dict[str, object] = {}

    def gen(name: str, sym) -> None:
        if name not in symbols and name not in fixed:
            gen_names.append(name)
            symbols[name] = sym

    gen("s", S)
    for name, _kind, _a, _b in twos:
        gen(name, part_symbol(name))
    for p in circuit.parts:
        if p.kind in ("vcvs", "vccs", "ccvs", "cccs"):
            gen(p.name, part_symbol(p.name, p.kind))
        elif p.kind == "opamp":
            for key in ("gain", "gbw", "pole2"):
                if p.model in PARAMETER[key].models:
                    name = PARAMETER[key].symbol(p.name)
                    gen(name, part_symbol(name))
            if p.model in PARAMETER["gbw"].models:
                gen(PI, sympy.pi)
    reciprocal: dict[str, dict[str, int]] = {}
    for name, kind, _a, _b in twos:
        if kind == "resistor" and name not in fixed:
            reciprocal[f"G:{name}"] = {name: 1}
        elif kind == "inductor":
            reciprocal[f"Y:{name}"] = {"s": 1} if name in fixed else {"s": 1, name: 1}
    all_gens = gen_names + list(reciprocal)
    ctx = flint.fmpz_mpoly_ctx.get(tuple(all_gens), "degrevlex")
    ring = flint.fmpq_mpoly_ctx.get(tuple(all_gens), "degrevlex") if fixed else ctx
    factor = dict(zip(all_gens, ring.gens()))
    one = ring.from_dict({(0,) * ring.nvars(): 1})
    factor.update({nm: one * flint.fmpq(int(v.p), int(v.q)) for nm, v in fixed.items()})

    def inverse(nm):
        return one / factor[nm]

    admittance = {"resistor": lambda nm: inverse(nm) if nm in fixed else factor[f"G:{nm}"],
                  "capacitor": lambda nm: factor["s"] * factor[nm],
                  "inductor": lambda nm: factor[f"Y:{nm}"] * (inverse(nm) if nm in fixed else 1)}
    for name, kind, _a, _b in twos:
        factor[f"Y:{name}"] = admittance[kind](name)
    return ctx, factor, reciprocal, symbols


def _integral_rows(rows: list, rhs: dict, ctx):
    """Each row (with its right-hand side) times the lcm of its coefficients' denominators, on ``ctx``.

    Scaling an equation does not change the solution, so the system stays integral
    (``fmpz_mpoly``) with the values in.
    """
    out_rows, out_rhs = [], {}
    for i, row in enumerate(rows):
        polys = list(row.values()) + ([rhs[i]] if i in rhs else [])
        lcm = 1
        for p in polys:
            for c in p.coeffs():
                lcm = math.lcm(lcm, int(c.q))

        def whole(p):
            return ctx.from_dict({e: int((c * lcm).p) for e, c in p.to_dict().items()})

        out_rows.append({j: whole(p) for j, p in row.items()})
        if i in rhs:
            out_rhs[i] = whole(rhs[i])
    return out_rows, out_rhs


def _poly(entry: tuple, factor: dict, ctx):
    """A stamp entry (terms of coefficient and factor names) as a flint polynomial."""
    out = ctx.from_dict({})
    for coefficient, names in entry:
        term = ctx.from_dict({(0,) * ctx.nvars(): coefficient})
        for name in names:
            term = term * factor[name]
        out += term
    return out
