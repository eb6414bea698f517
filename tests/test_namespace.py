"""One namespace: user part and node names never collide with symfilt's internal names.

Every catalogue circuit is rebuilt with one part, or one node, renamed to a name that looks
like one of symfilt's own (the source, ground, branch currents ``I(...)``, node voltages
``V(...)``, probes, the noise and op-amp internals) or holds brackets; the derived transfer,
Zin and Zout, the probe at every node and the op-amp drive must be exactly the same functions
after the symbols are renamed back. The expected results are the circuit's own under its
original names (a renaming is a symmetry of the equations: common practice, nothing
published), so the check is exact equality, not closeness.
"""

from __future__ import annotations

from dataclasses import replace

import pytest
import sympy

import symfilt
from symfilt import catalogue
from symfilt.design.drive import drive
from symfilt.model.names import GROUND

#: Part names (identifiers, so they pass the part-name rule) that spell internal names.
PART_NAMES = ["source", "ground", "gnd_", "I", "V", "e", "d", "noise", "N", "Y", "G", "probe", "U_buffer1"]
#: Node names: internal labels, brackets and the words the engine uses.
NODE_NAMES = ["source", "V(source)", "I(source)", "I(U1)", "V(out)", "I(R1)", "[a]", "x)(", "noise",
              "e", "d", "U1:e", "N:R1", "s1.a", "x1", "R1", "ground"]


def rename_part(c: symfilt.Circuit, old: str, new: str) -> symfilt.Circuit:
    parts = tuple(replace(p, name=new if p.name == old else p.name,
                          control=new if p.control == old else p.control) for p in c.parts)
    return replace(c, parts=parts)


def rename_node(c: symfilt.Circuit, old: str, new: str) -> symfilt.Circuit:
    def n(x):
        return new if x == old else x
    parts = tuple(replace(p, nodes=tuple(n(x) for x in p.nodes)) for p in c.parts)
    return replace(c, parts=parts, input=n(c.input), output=n(c.output),
                   probes=tuple((label, n(node)) for label, node in c.probes))


def back_map(new: symfilt.Circuit, old: symfilt.Circuit) -> dict:
    a, b = new.symbols(), old.symbols()
    assert [v["role"] for v in a.values()] == [v["role"] for v in b.values()]
    return {v["symbol"]: w["symbol"] for v, w in zip(a.values(), b.values())}


def same_function(h_new, h_old, names: dict) -> None:
    got = (h_new.num.xreplace(names), h_new.den.xreplace(names))
    # exact: identical polynomials in the original names, up to the common sign rule
    assert sympy.expand(got[0] * h_old.den - got[1] * h_old.num) == 0


def compare(new: symfilt.Circuit, old: symfilt.Circuit) -> None:
    new.check()
    names = back_map(new, old)
    for quantity in ("transfer", "zin", "zout"):
        same_function(symfilt.derive(new, quantity), symfilt.derive(old, quantity), names)


CASES = sorted(catalogue.CATALOGUE)


@pytest.mark.parametrize("name", CASES)
def test_renaming_a_part_to_an_internal_looking_name_changes_nothing(name):
    old = catalogue.build(name)
    for part in old.parts:
        for new_name in PART_NAMES:
            if any(p.name == new_name for p in old.parts) or part.tie is not None:
                continue
            if any(new_name in (q.tie or "") for q in old.parts):
                continue
            compare(rename_part(old, part.name, new_name), old)


@pytest.mark.parametrize("name", CASES)
def test_renaming_a_node_to_an_internal_looking_name_changes_nothing(name):
    old = catalogue.build(name)
    for node in old.nodes():
        if node == GROUND:
            continue
        for new_name in NODE_NAMES:
            if new_name in old.nodes():
                continue
            compare(rename_node(old, node, new_name), old)


def controlled_sources() -> symfilt.Circuit:
    """Every controlled-source kind, a ccvs and a cccs sensing a resistor's current."""
    P = symfilt.Part
    return symfilt.Circuit.build([
        P.resistor("R1", "in", "a", "1k"), P.resistor("R2", "a", "0", "2k"),
        P.make("H1", "ccvs", ["b", "0"], value="3k", control="R1"),
        P.resistor("R3", "b", "c", "1k"), P.make("F1", "cccs", ["c", "0"], value="2", control="R3"),
        P.make("E1", "vcvs", ["d", "0", "c", "0"], value="5"), P.resistor("R4", "d", "out", "4k7"),
        P.make("G1", "vccs", ["out", "0", "a", "0"], value="1m"), P.capacitor("C1", "out", "0", "10n"),
        P.resistor("R5", "c", "0", "10k")], source="symbol", load="10k", title="controlled sources")


def test_renaming_in_a_circuit_of_every_controlled_source():
    old = controlled_sources()
    for part in old.parts:
        for new_name in PART_NAMES:
            compare(rename_part(old, part.name, new_name), old)
    for node in old.nodes():
        for new_name in NODE_NAMES:
            if node != GROUND and new_name not in old.nodes():
                compare(rename_node(old, node, new_name), old)


OPAMP_CASES = [n for n in CASES if any(p.kind == "opamp" for p in catalogue.build(n).parts)]


@pytest.mark.parametrize("name", OPAMP_CASES)
def test_drive_is_the_same_under_any_names(name):
    old = catalogue.build(name)
    want = drive(old, 1, 1000)
    for new in [rename_node(old, old.parts[-1].nodes[-1] if old.parts[-1].kind == "opamp" else old.output,
                            "I(" + next(p.name for p in old.parts if p.kind == "opamp") + ")"),
                rename_node(old, old.output, "source"),
                rename_part(old, next(p.name for p in old.parts if p.kind == "opamp"), "source")]:
        got = drive(new, 1, 1000)
        for a, b in zip(got.opamps, want.opamps):
            assert (a.vout_peak_v, a.iout_peak_a, a.slew_v_per_us) == (b.vout_peak_v, b.iout_peak_a, b.slew_v_per_us)
            assert [x.peak_a for x in a.branches] == [x.peak_a for x in b.branches]


@pytest.mark.parametrize("name", ["Rfoo", "Cboost", "Rhat", "Cbar", "Rdot", "Ralpha", "R_tilde", "Rzoo"])
def test_display_never_rewrites_part_of_a_name(name):
    from symfilt.export.derive_report import derive_text
    c = rename_part(catalogue.build("rc-lowpass"), "R1", name)
    text = derive_text(symfilt.report(c))
    assert name in text.split("Symbols")[1].split("\n")[1]
    cutoff = next(line for line in text.splitlines() if line.strip().startswith("cutoff ωc"))
    assert name in cutoff and "∞" not in cutoff  # the loaded cutoff, the name intact
    from symfilt.export.text import one_line, pretty
    sym = symfilt.Part.resistor(name, "a", "b").symbol
    assert one_line(sym + 1) == f"{name} + 1"
    assert name in pretty(1 / (1 + sym))
