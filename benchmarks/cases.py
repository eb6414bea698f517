"""The circuits the benchmark times, by case name.

Every part is kept symbolic (the derivation is symbolic in every symbol anyway);
the source and load resistances are symbols R_s and R_L.
"""

from __future__ import annotations

from symfilt import catalogue
from symfilt.model.circuit import Circuit, Part

R, C, U = Part.resistor, Part.capacitor, Part.opamp


def rc_ladder(n: int) -> Circuit:
    """n RC sections: R_k from node k-1 to node k, C_k from node k to ground; in -> ... -> out.

    Examples
    --------
    >>> [p.name for p in rc_ladder(2).parts]
    ['R1', 'C1', 'R2', 'C2']
    """
    return catalogue.rc_ladder(n, R=None, C=None, source="symbol", load="symbol")


def sallen_key_cascade() -> Circuit:
    """Two unity-gain Sallen-Key low-pass stages in cascade, single-pole op-amps.

    Stage k: R(2k-1) from its input to a_k, R(2k) a_k -> b_k, C(2k-1) a_k -> stage
    output, C(2k) b_k -> ground, op-amp U_k a follower from b_k to the stage output.

    Examples
    --------
    >>> sorted(sallen_key_cascade().symbols())[:4]
    ['A_U1', 'A_U2', 'C1', 'C2']
    """
    parts = []
    for k, (src, out) in enumerate((("in", "mid"), ("mid", "out")), start=1):
        a, b = f"a{k}", f"b{k}"
        parts += [R(f"R{2 * k - 1}", src, a), R(f"R{2 * k}", a, b), C(f"C{2 * k - 1}", a, out),
                  C(f"C{2 * k}", b, "0"), U(f"U{k}", b, out, out, model="single-pole")]
    return Circuit.build(parts, source="symbol", load="symbol", title="Two Sallen-Key stages, single-pole op-amps")


def state_variable() -> Circuit:
    """Three-op-amp state-variable filter with single-pole op-amps, low-pass output.

    U1 is a summing/difference amplifier whose output is the high-pass node ``hp``:
    the input through R1 and the low-pass output through R2 into its inverting input
    ``n1`` with feedback Rf from ``hp``; the band-pass output through R3 into its
    non-inverting input ``p1``, with R4 from ``p1`` to ground. U2 (R5, C1) and U3
    (R6, C2) are inverting integrators: ``hp`` -> ``bp`` -> ``out`` (low-pass).

    Examples
    --------
    >>> len(state_variable().parts)
    12
    """
    parts = [R("R1", "in", "n1"), R("R2", "out", "n1"), R("Rf", "hp", "n1"), R("R3", "bp", "p1"),
             R("R4", "p1", "0"), U("U1", "p1", "n1", "hp", model="single-pole"),
             R("R5", "hp", "n2"), C("C1", "n2", "bp"), U("U2", "0", "n2", "bp", model="single-pole"),
             R("R6", "bp", "n3"), C("C2", "n3", "out"), U("U3", "0", "n3", "out", model="single-pole")]
    return Circuit.build(parts, source="symbol", load="symbol", title="State-variable filter, single-pole op-amps")


def valued_cascade_40() -> Circuit:
    """A 40-part circuit with values (for ``--keep``): four gain Sallen-Key low-pass stages in cascade.

    A scenario of our own: an input guard (R_in, C_in), then four stages, each an RC section
    (Rp, Cp) into a Sallen-Key low-pass with gain (R_a, R_b, C_a, C_b, Rf, Rg and a single-pole
    op-amp U with its gain and gain-bandwidth), and an output isolation resistor with a
    snubber (R_iso, C_snub). Source 50 Ω, load 10 kΩ, every part valued.

    Examples
    --------
    >>> c = valued_cascade_40()
    >>> len(c.parts), all(p.value is not None for p in c.parts if p.kind != "opamp")
    (40, True)
    """
    parts = [R("R_in", "in", "g", "100"), C("C_in", "g", "0", "1n")]
    node = "g"
    for k in range(1, 5):
        p_, a, b, o, n = f"p{k}", f"a{k}", f"b{k}", f"o{k}", f"n{k}"
        parts += [R(f"Rp{k}", node, p_, "1k"), C(f"Cp{k}", p_, "0", "1n"),
                  R(f"Ra{k}", p_, a, "10k"), R(f"Rb{k}", a, b, "12k"), C(f"Ca{k}", a, o, f"{10 + 5 * k}n"),
                  C(f"Cb{k}", b, "0", "4.7n"), R(f"Rf{k}", o, n, "5.6k"), R(f"Rg{k}", n, "0", "10k"),
                  U(f"U{k}", b, n, o, model="single-pole", gain="200k", gbw="10M")]
        node = o
    parts += [R("R_iso", node, "out", "47"), C("C_snub", "out", "0", "100p")]
    return Circuit.build(parts, source="50", load="10k", title="Four gain Sallen-Key stages, valued (40 parts)")


def catalogue_circuit(name: str) -> Circuit:
    """A catalogue circuit as built by default (its values do not enter the symbolic derivation).

    Examples
    --------
    >>> catalogue_circuit("rc-lowpass").part("R1").value
    4700
    """
    return catalogue.build(name)


def case_names(quick: bool = False) -> list[str]:
    """Names of the benchmark cases, in table order.

    Examples
    --------
    >>> case_names()[:2]
    ['ladder-2', 'ladder-3']
    """
    return ([f"ladder-{n}" for n in range(2, 11)] + [f"@{name}" for name in catalogue.names()]
            + ["sk-cascade-1pole", "state-variable-1pole"])


def build_case(name: str) -> Circuit:
    """The circuit of a case name (``ladder-N``, ``@catalogue-name``, ``sk-cascade-1pole``, ``state-variable-1pole``).

    Examples
    --------
    >>> build_case("ladder-3").title
    'RC ladder, 3 sections'
    """
    if name.startswith("ladder-"):
        return rc_ladder(int(name.split("-", 1)[1]))
    if name.startswith("@"):
        return catalogue_circuit(name[1:])
    return {"sk-cascade-1pole": sallen_key_cascade, "state-variable-1pole": state_variable,
            "valued-cascade-40": valued_cascade_40}[name]()
