"""The plain approach a user would write without symfilt: nodal equations in sympy, solve, cancel.

Every part's current is written from its impedance (R, 1/(sC), sL), Kirchhoff's
current law is written at each node, voltage-type parts (source, vcvs, ccvs,
op-amp outputs) get a current unknown, and :func:`sympy.solve` solves the lot;
the output voltage is then put over one denominator with :func:`sympy.cancel`.
This is deliberately ordinary sympy: it is the baseline symfilt is timed against.
"""

from __future__ import annotations

import sympy

from symfilt.model.circuit import GROUND, LOAD_C, LOAD_R, SOURCE_R, Circuit, S, part_symbol


def nodal_equations(circuit: Circuit):
    """Equations, unknowns and the output voltage's symbol of the loaded circuit, driven by 1 V.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> eqs, unknowns, out = nodal_equations(catalogue.build("rc-lowpass"))
    >>> len(eqs) == len(unknowns), out
    (True, V_out)
    """
    nodes = circuit.nodes()
    volt = {n: sympy.Symbol(f"V_{n}") for n in nodes}
    volt[GROUND] = sympy.Integer(0)
    unknowns = [volt[n] for n in nodes]
    kcl = {n: sympy.Integer(0) for n in nodes}  # current leaving each node
    eqs = []
    branch_current = {}

    def leave(node, current):
        if node in kcl:
            kcl[node] += current

    def two_terminal(name, kind, a, b):
        sym = part_symbol(name)
        z = {"resistor": sym, "capacitor": 1 / (S * sym), "inductor": S * sym}[kind]
        i = (volt[a] - volt[b]) / z
        branch_current[name] = i
        leave(a, i)
        leave(b, -i)

    for p in circuit.parts:
        if p.kind in ("resistor", "capacitor", "inductor"):
            two_terminal(p.name, p.kind, *p.nodes)
    if circuit.source.present:
        volt["source"] = sympy.Integer(1)
        two_terminal(SOURCE_R, "resistor", "source", circuit.input)
    else:
        i_src = sympy.Symbol("I_source")
        unknowns.append(i_src)
        leave(circuit.input, -i_src)
        eqs.append(sympy.Eq(volt[circuit.input], 1))
    if circuit.load_resistance.present:
        two_terminal(LOAD_R, "resistor", circuit.output, GROUND)
    if circuit.load_capacitance.present:
        two_terminal(LOAD_C, "capacitor", circuit.output, GROUND)
    for p in circuit.parts:
        if p.kind in ("vcvs", "ccvs", "opamp"):
            branch_current[p.name] = sympy.Symbol(f"I_{p.name}")
            unknowns.append(branch_current[p.name])
    for p in circuit.parts:
        gain = part_symbol(p.name, p.kind)
        if p.kind == "vccs":
            op, om, cp, cm = (volt[x] for x in p.nodes)
            i = gain * (cp - cm)
            leave(p.nodes[0], i)
            leave(p.nodes[1], -i)
        elif p.kind == "cccs":
            i = gain * branch_current[p.control]
            leave(p.nodes[0], i)
            leave(p.nodes[1], -i)
        elif p.kind in ("vcvs", "ccvs"):
            i = branch_current[p.name]
            leave(p.nodes[0], i)
            leave(p.nodes[1], -i)
            v = volt[p.nodes[0]] - volt[p.nodes[1]]
            if p.kind == "vcvs":
                eqs.append(sympy.Eq(v, gain * (volt[p.nodes[2]] - volt[p.nodes[3]])))
            else:
                eqs.append(sympy.Eq(v, gain * branch_current[p.control]))
        elif p.kind == "opamp":
            eqs.append(_opamp(p, volt, kcl, unknowns, branch_current[p.name]))
    eqs = [sympy.Eq(current, 0) for current in kcl.values()] + eqs
    # tied values (R3 = R/2) go straight into the equations, as a user would write them
    tied = {circuit.part(name).symbol: expr for name, expr in circuit.ties().items()}
    if tied:
        eqs = [e.xreplace(tied) for e in eqs]
    return eqs, unknowns, volt[circuit.output]


def _opamp(p, volt, kcl, unknowns, current):
    """The op-amp's equation, with Rout (a node of its own behind it), Rin and Cin written in."""
    plus, minus, out = (volt[x] for x in p.nodes)
    sym = {key: part_symbol(f"{prefix}{p.name}") for key, prefix in
           (("rout", "Rout_"), ("rin", "Rin_"), ("cin", "Cin_"))}
    present = {key: getattr(p, key) is not None and getattr(p, key).present for key in sym}
    for node, v in ((p.nodes[0], plus), (p.nodes[1], minus)):
        if present["cin"] and node in kcl:
            kcl[node] += v * S * sym["cin"]
    if present["rin"]:
        for node, i in ((p.nodes[0], (plus - minus) / sym["rin"]), (p.nodes[1], (minus - plus) / sym["rin"])):
            if node in kcl:
                kcl[node] += i
    e = out
    if present["rout"]:
        e = sympy.Symbol(f"V_{p.name}_e")
        unknowns.append(e)
        kcl[p.nodes[2]] += (out - e) / sym["rout"]
        kcl[f"{p.name}_e"] = (e - out) / sym["rout"] + current
    elif p.nodes[2] in kcl:
        kcl[p.nodes[2]] += current
    if p.model == "ideal":
        return sympy.Eq(plus, minus)
    wb = 2 * sympy.pi * part_symbol(f"GBW_{p.name}") if p.model != "gain" else None
    a = {"gain": lambda: part_symbol(f"A_{p.name}"),
         "integrator": lambda: wb / S,
         "single-pole": lambda: part_symbol(f"A_{p.name}") * wb / (part_symbol(f"A_{p.name}") * S + wb),
         "two-pole": lambda: (part_symbol(f"A_{p.name}") * wb / (part_symbol(f"A_{p.name}") * S + wb)
                              * 2 * sympy.pi * part_symbol(f"P2_{p.name}")
                              / (S + 2 * sympy.pi * part_symbol(f"P2_{p.name}")))}[p.model]()
    return sympy.Eq(e, a * (plus - minus))


def plain_transfer(circuit: Circuit) -> sympy.Expr:
    """V(out)/V(source) by sympy.solve on the nodal equations, then sympy.cancel.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> plain_transfer(catalogue.build("rc-lowpass", R1=None, C1=None, source="symbol", load="symbol"))
    R_L/(C1*R1*R_L*s + C1*R_L*R_s*s + R1 + R_L + R_s)
    """
    eqs, unknowns, out = nodal_equations(circuit)
    solution = sympy.solve(eqs, unknowns, dict=True)
    return sympy.cancel(solution[0][out])
