"""Bad circuits get one clear message: structure, solvability, values, limits, atomic outputs.

One test per error class, each checking the message word for word. The solvability
checks are also held against the outside: whenever the structural analysis calls a
circuit singular, the determinant of the MNA matrix built by ``symfilt.engine.mna`` must
vanish at random values (a structurally singular matrix has a zero determinant for
every value of its entries: Duff, Erisman and Reid, "Direct Methods for Sparse
Matrices", 2nd ed., Oxford 2017, section 6.2, structural rank).
"""

from __future__ import annotations

import os
import random
import socket
import stat
from fractions import Fraction

import pytest

from symfilt import catalogue
from symfilt.model.circuit import Circuit, Fixture, Part
from symfilt.errors import (CircuitError, OutputError, SingularCircuitError, SizeLimitError, SymfiltError,
                            ValueParseError)
from symfilt.engine.mna import build_system
from symfilt.export.outfile import write_bytes_atomic, write_text_atomic
from symfilt.model.solvability import MODES, check_solvable, structural_pattern, structural_rank
from symfilt.model.structure import structure_warnings

R, C, L, U, M = Part.resistor, Part.capacitor, Part.inductor, Part.opamp, Part.make


def message(exc_type, fn, *args, **kwargs) -> str:
    with pytest.raises(exc_type) as info:
        fn(*args, **kwargs)
    text = str(info.value)
    assert "\n" not in text
    return text


def raw(*parts, **fixtures) -> Circuit:
    """A circuit without the checks of Circuit.build, for check_solvable alone."""
    return Circuit(parts=tuple(parts), source=Fixture.parse(fixtures.get("source"), "source"),
                   load_resistance=Fixture.parse(fixtures.get("load"), "load"))


# --- parts ----------------------------------------------------------------------------------


def test_unknown_kind():
    assert message(CircuitError, M, "R1", "resistr", ["a", "b"]) == (
        "part R1: unknown kind 'resistr', did you mean resistor? use one of resistor, capacitor, inductor, "
        "opamp, vcvs, vccs, ccvs, cccs")


def test_missing_and_extra_pins():
    assert message(CircuitError, M, "R1", "resistor", ["a"]) == (
        "part R1: a resistor has 2 pins (a, b), got 1, list exactly those pins")
    assert message(CircuitError, M, "E1", "vcvs", ["a", "0", "b"]) == (
        "part E1: a vcvs has 4 pins (out+, out-, ctrl+, ctrl-), got 3, list exactly those pins")


def test_bad_part_names():
    assert message(CircuitError, R, "1R", "a", "b") == (
        "part 1R: a part name must start with an ASCII letter and hold only ASCII letters, digits and _, "
        "rename it, e.g. R1 or C_in")
    assert message(CircuitError, R, "R_s", "a", "b") == (
        "part R_s: the name R_s is reserved for a symbol of symfilt, rename the part "
        "(R_s, R_L, C_L, s, A_*, GBW_* are taken)")
    # the JSON output is read back with sympify, which parses Python: keywords cannot be symbols
    assert message(CircuitError, R, "lambda", "a", "b") == (
        "part lambda: the name lambda is a reserved word of Python, which reads the formulas back, "
        "rename the part, e.g. R_lambda")


def test_bad_node_names():
    assert message(CircuitError, R, "R1", "a", "") == (
        "part R1: node is not a name, write node names as non-empty text such as \"in\" or \"gnd\"")
    assert message(CircuitError, R, "R1", "a", "b\x1b[2J") == (
        "part R1: node name 'b\\x1b[2J' holds a control or invisible character, "
        "write node names with visible characters only")


def test_duplicate_names():
    assert message(CircuitError, Circuit.build, [R("R1", "in", "out"), R("R1", "out", "0")]) == (
        "part R1: the name is used twice, give each part its own name")


def test_both_ends_on_one_node():
    assert message(CircuitError, Circuit.build, [R("R1", "in", "in"), R("R2", "in", "0")]) == (
        "part R1: both ends are on node in, connect it between two different nodes")
    assert message(CircuitError, Circuit.build, [R("R1", "in", "0"), M("E1", "vcvs", ["o", "o", "in", "0"])]) == (
        "part E1: both outputs are on node o, connect out+ and out- to two different nodes")
    assert message(CircuitError, Circuit.build, [R("R1", "in", "0"), M("G1", "vccs", ["o", "0", "in", "in"])]) == (
        "part G1: both control pins are on node in, so the control voltage is always 0, "
        "connect ctrl+ and ctrl- to two different nodes")
    assert message(CircuitError, Circuit.build, [R("R1", "in", "out"), U("U1", "out", "out", "out")]) == (
        "part U1: both inputs are on node out, connect plus and minus to two different nodes")


def test_port_that_does_not_exist():
    assert message(CircuitError, Circuit.build, [R("R1", "in", "out"), C("C1", "out", "0")], output="outt") == (
        "ports output: node outt is not connected to any part, name a node that a part uses")


def test_control_part_that_does_not_exist():
    parts = [R("R1", "in", "out"), R("R2", "out", "0"), M("F1", "cccs", ["out", "0"], control="Rx")]
    assert message(CircuitError, Circuit.build, parts) == (
        "part F1: control part 'Rx' does not exist, name one of the circuit's parts: R1, R2, F1")
    own = [R("R1", "in", "out"), R("R2", "out", "0"), M("H1", "ccvs", ["a", "0"], control="H1"), R("R3", "a", "0")]
    assert message(CircuitError, Circuit.build, own) == (
        "part H1: a source cannot be controlled by its own current, "
        "name another part as the control (a ccvs controlled by itself is a resistor)")


def test_no_ground_anywhere():
    assert message(CircuitError, Circuit.build, [R("R1", "in", "out"), C("C1", "out", "x")]) == (
        "parts: no part connects to ground, connect a part to gnd (or 0)")


def test_floating_nodes_are_named():
    parts = [R("R1", "in", "out"), C("C1", "out", "0"), R("R2", "p", "q"), C("C2", "q", "p")]
    assert message(CircuitError, Circuit.build, parts) == (
        "nodes p, q: no path to ground through any part, connect them to the rest of the circuit")


def test_single_connection_is_a_warning_not_an_error():
    c = Circuit.build([R("R1", "in", "out"), C("C1", "out", "0"), R("R2", "out", "tset")])
    assert structure_warnings(c) == [
        "node tset: only one connection (R2), check the spelling of the node name or connect it"]
    # a healthy circuit warns about nothing (the input counts the source, the output its load)
    assert structure_warnings(catalogue.build("sallen-key-lowpass")) == []


# --- solvability --------------------------------------------------------------------------------


def test_opamp_without_feedback():
    parts = [R("R1", "in", "a"), R("R2", "a", "0"), U("U1", "a", "0", "out"), R("R3", "out", "0")]
    assert message(SingularCircuitError, Circuit.build, parts) == (
        "part U1: the ideal op-amp has no feedback from its output out to its inputs (+ a, - 0), so its output "
        "is undetermined (nodes a, in, out; parts R1, R2, R3, U1, the source), connect a part from out back "
        "to the - input, or give the op-amp model = \"gain\"")
    # common practice: with a finite open-loop gain the same stage is a plain amplifier, A * V(a)
    Circuit.build([R("R1", "in", "a"), R("R2", "a", "0"), U("U1", "a", "0", "out", model="gain"),
                   R("R3", "out", "0")])


def test_loop_of_voltage_sources():
    parts = [R("R1", "in", "a"), U("U1", "a", "out", "out"), U("U2", "a", "out", "out"), R("R2", "out", "0")]
    assert message(SingularCircuitError, Circuit.build, parts) == (
        "parts U1, U2: a loop of voltage sources (U1 output, U2 output) over nodes 0, out leaves the current "
        "around it undetermined, break the loop: put a resistor in series with one of them, or remove one")
    ring = [R("R1", "in", "0"), M("E1", "vcvs", ["a", "0", "in", "0"]), M("E2", "vcvs", ["a", "b", "in", "0"]),
            M("E3", "vcvs", ["b", "0", "in", "0"]), R("R2", "a", "out"), R("R3", "out", "0")]
    assert message(SingularCircuitError, Circuit.build, ring) == (
        "parts E1, E2, E3: a loop of voltage sources (E1, E2, E3) over nodes 0, a, b leaves the current "
        "around it undetermined, break the loop: put a resistor in series with one of them, or remove one")


def test_loop_through_the_source_only_stops_the_transfer_function():
    # a follower output on the input port: no transfer function, but an input impedance (zero)
    c = Circuit.build([R("R1", "a", "0"), U("U1", "a", "in", "in"), R("R2", "in", "out"), R("R3", "out", "0")])
    check_solvable(c, modes=("zin",))
    assert message(SingularCircuitError, check_solvable, c, modes=("transfer",)) == (
        "parts U1, the source: a loop of voltage sources (U1 output, the ideal source at the input) over nodes "
        "0, in leaves the current around it undetermined, break the loop: put a resistor in series with one "
        "of them, or remove one")


def test_cut_set_of_current_sources():
    parts = [R("R1", "in", "0"), M("G1", "vccs", ["x", "0", "in", "0"]), R("R2", "x", "out"),
             M("G2", "vccs", ["out", "0", "in", "0"])]
    assert message(SingularCircuitError, Circuit.build, parts) == (
        "nodes out, x: connected to the rest only through the current sources G1, G2 (a cut-set of current "
        "sources), so their voltage is undetermined, add a resistor from one of them to ground, or join them "
        "to the circuit through a passive part")
    # common practice: a vccs controlled by its own output voltage is a conductance, not a cut-set
    Circuit.build([R("R1", "in", "out"), M("G1", "vccs", ["out", "0", "out", "0"])])


def test_structurally_singular_by_matching_alone():
    # E1 and E2 both hold node a (a loop), but H1 is controlled by E1's current, so the loop check
    # leaves it to the matching, which still finds three equations on the two unknowns V(a), V(in);
    # the loop current, and with it H1's output and all it drives, stays undetermined
    parts = [M("E1", "vcvs", ["a", "0", "in", "0"]), M("E2", "vcvs", ["a", "0", "in", "0"]),
             M("H1", "ccvs", ["h", "0"], control="E1"), R("R1", "h", "out"), R("R2", "out", "0"),
             R("R3", "in", "0")]
    assert message(SingularCircuitError, Circuit.build, parts) == (
        "circuit: the equations have no unique solution for any values (nodes a, h, in, out; parts E1, E2, H1, "
        "R1, R2, R3, the source), check for a loop of voltage sources, nodes held only by current sources, or an op-amp whose "
        "inputs are fixed by other sources")


def test_catalogue_circuits_are_solvable_and_full_rank():
    for name in catalogue.CATALOGUE:
        c = catalogue.build(name)
        for mode in MODES:
            rank, size = structural_rank(c, mode)
            if mode == "transfer":
                assert rank == size, name


def _numeric_matrix(circuit, mode, rng):
    """The MNA matrix of symfilt.engine.mna at random positive integers, as exact fractions."""
    system = build_system(circuit, mode)
    names = system.ctx.names()
    point = [rng.randint(2, 97) for _ in names]
    n = system.size
    return [[Fraction(int(row[c](*point))) if c in row else Fraction(0) for c in range(n)] for row in system.rows]


def _det_is_zero(a) -> bool:
    a = [r[:] for r in a]
    n = len(a)
    for k in range(n):
        piv = next((i for i in range(k, n) if a[i][k] != 0), None)
        if piv is None:
            return True
        a[k], a[piv] = a[piv], a[k]
        for i in range(k + 1, n):
            f = a[i][k] / a[k][k]
            if f:
                for j in range(k, n):
                    a[i][j] -= f * a[k][j]
    return False


def _random_circuit(rng) -> Circuit:
    nodes = ["in", "out", "a", "b", "0"]
    parts = []
    for i in range(rng.randint(2, 7)):
        kind = rng.choice(["resistor", "resistor", "capacitor", "opamp", "vcvs", "vccs", "cccs", "ccvs"])
        pick = lambda k: rng.sample(nodes, k)  # noqa: E731 - distinct nodes
        name = f"X{i}"
        if kind in ("resistor", "capacitor"):
            parts.append(M(name, kind, pick(2)))
        elif kind == "opamp":
            plus, minus = pick(2)
            out = rng.choice([n for n in nodes if n != "0"])
            parts.append(M(name, kind, [plus, minus, out], model=rng.choice(["ideal", "gain"])))
        elif kind in ("vcvs", "vccs"):
            parts.append(M(name, kind, pick(2) + pick(2)))
        else:
            controls = [p.name for p in parts if p.kind in ("resistor", "capacitor", "vcvs", "ccvs")]
            if not controls:
                continue
            parts.append(M(name, kind, pick(2), control=rng.choice(controls)))
    return Circuit(parts=tuple(parts), source=Fixture.parse(rng.choice([None, "symbol"]), "s"),
                   load_resistance=Fixture.parse(rng.choice([None, "symbol"]), "l"))


def test_a_circuit_called_singular_has_a_zero_determinant():
    # structural singularity implies det = 0 for every value; check it on random circuits with the
    # matrix that symfilt.engine.mna builds (an independent implementation of the stamps)
    rng = random.Random(20240611)
    singular = regular = 0
    for _ in range(400):
        c = _random_circuit(rng)
        if not c.parts or c.input not in {n for p in c.parts for n in p.nodes} \
                or c.output not in {n for p in c.parts for n in p.nodes}:
            continue
        for mode in MODES:
            try:
                check_solvable(c, modes=(mode,))
            except SingularCircuitError:
                singular += 1
                assert all(_det_is_zero(_numeric_matrix(c, mode, rng)) for _ in range(2)), (c, mode)
            else:
                regular += 1
    assert singular > 50 and regular > 50  # both branches were exercised


def test_the_pattern_is_the_pattern_of_the_mna_stamps():
    rng = random.Random(7)
    circuits = [catalogue.build(name) for name in catalogue.CATALOGUE]
    circuits += [c for c in (_random_circuit(rng) for _ in range(60))
                 if c.parts and {c.input, c.output} <= {n for p in c.parts for n in p.nodes}]
    for c in circuits:
        for mode in MODES:
            labels, rows = structural_pattern(c, mode)
            system = build_system(c, mode)
            assert len(labels) == system.size
            mine = {(r, col) for r, cols in enumerate(rows) for col in cols}
            theirs = {(r, col) for r, row in enumerate(system.rows) for col in row}
            # every entry the stamps make is in the pattern; the pattern may only hold entries that cancel
            assert theirs <= mine, (c, mode)
            assert len(mine - theirs) <= 2, (c, mode)


def test_structural_pattern_is_the_matrix_pattern_for_the_catalogue():
    # one stamp table gives both: for the catalogue (no stamps that cancel) they agree entry for entry
    for name in catalogue.CATALOGUE:
        for c in (catalogue.build(name), catalogue.build(name).with_opamp_model("single-pole")):
            for mode in MODES:
                unknowns, rows = structural_pattern(c, mode)
                system = build_system(c, mode)
                assert tuple(u.label for u in unknowns) == system.unknowns, (name, mode)
                assert rows == [set(row) for row in system.rows], (name, mode)


def test_structure_checks_stay_cheap_on_the_largest_circuit():
    # 200 parts, the limit: a ladder of 100 sections; the checks run without algebra
    parts = []
    prev = "in"
    for k in range(100):
        node = "out" if k == 99 else f"n{k}"
        parts += [R(f"R{k}", prev, node), C(f"C{k}", node, "0")]
        prev = node
    c = Circuit.build(parts)
    assert structural_rank(c) == (102, 102)  # 101 node voltages and the source current


# --- values ---------------------------------------------------------------------------------------


def test_zero_resistance():
    assert message(CircuitError, R, "R1", "a", "b", "0") == (
        "part R1: a resistance of 0 is a short circuit, use a wire, or remove the part")
    assert message(CircuitError, L, "L1", "a", "b", "0") == (
        "part L1: an inductance of 0 is a short circuit, use a wire, or remove the part")
    assert message(CircuitError, C, "C1", "a", "b", "0") == (
        "part C1: a capacitance of 0 is an open circuit, remove the part")


def test_negative_values():
    assert message(CircuitError, R, "R1", "a", "b", "-4k7") == (
        "part R1: a negative resistance (-4.7k) is not a real part, give its magnitude")
    assert message(CircuitError, U, "U1", "a", "b", "c", model="gain", gain="-100k") == (
        "part U1: the op-amp's gain must be positive, got -100k, give a positive gain")
    # a controlled source's gain may be negative (an inverting gain block)
    assert M("E1", "vcvs", ["o", "0", "i", "0"], value="-2").value == -2


def test_nan_and_infinite_values():
    assert message(ValueParseError, R, "R1", "a", "b", float("nan")) == (
        "part R1: value nan is not finite, write a number with an optional SI prefix (p n u µ m k M G), "
        "e.g. 4.7k, 4k7, 22n, 1R5, 2.2e-9")
    assert message(ValueParseError, Fixture.parse, float("inf"), "[load] resistance") == (
        "[load] resistance: value inf is not finite, write a positive value, \"symbol\" to keep it symbolic, "
        "or \"none\" to leave it out")
    assert message(CircuitError, Fixture.parse, "0", "[source] resistance") == (
        "[source] resistance: value 0 must be positive, write a positive value, \"symbol\" to keep it "
        "symbolic, or \"none\" to leave it out")


def test_unknown_suffix_names_the_accepted_ones():
    assert message(ValueParseError, C, "C1", "a", "b", "22q") == (
        "part C1: value '22q' has an unknown suffix 'q', use an SI prefix (f p n u µ m k M G T), an RKM letter "
        "(R, as in 1R5) and optionally a unit (Ω ohm F H Hz V A)")


# --- limits ---------------------------------------------------------------------------------------


def test_part_count_limit():
    parts = [R(f"R{k}", "in", "0") for k in range(201)]
    assert message(SizeLimitError, Circuit.build, parts) == (
        "parts: 201 parts is over the limit of 200, split the circuit into stages and derive each one")


def test_name_length_limit():
    assert message(SizeLimitError, R, "R" * 33, "a", "b") == (
        "part RRRRRRRRRRRRRRRRRRRRRRRRRRRRRRRR...: the name is 33 characters long, over the limit of 32, "
        "use a shorter name such as R1 or C_in")
    assert message(SizeLimitError, R, "R1", "a", "n" * 33) == (
        "part R1: a node name is 33 characters long, over the limit of 32, use a shorter node name")
    R("R" * 32, "a", "n" * 32)  # the limit itself is allowed


def test_every_error_is_a_symfilt_error_and_a_builtin():
    for cls, builtin in ((CircuitError, ValueError), (SingularCircuitError, ArithmeticError),
                         (SizeLimitError, OverflowError), (OutputError, OSError)):
        assert issubclass(cls, SymfiltError) and issubclass(cls, builtin)


# --- atomic outputs -------------------------------------------------------------------------------


def _leftovers(folder) -> list[str]:
    return sorted(p.name for p in folder.iterdir() if p.name.endswith(".tmp"))


def test_interrupted_rename_leaves_the_old_file(tmp_path, monkeypatch):
    target = tmp_path / "note.html"
    target.write_text("old note")

    def fail(*_args):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr("symfilt.export.outfile.os.replace", fail)
    assert message(OutputError, write_text_atomic, target, "new note " * 1000) == (
        f"{target}: cannot be written (No space left on device), check the folder exists, is writable and has space")
    assert target.read_text() == "old note"
    assert _leftovers(tmp_path) == []


def test_interrupt_in_the_middle_of_the_write_leaves_the_old_file(tmp_path, monkeypatch):
    # Ctrl-C after the data went out but before it reached the disc
    target = tmp_path / "plot.png"
    target.write_bytes(b"old plot")

    def interrupt(_fd):
        raise KeyboardInterrupt

    monkeypatch.setattr("symfilt.export.outfile.os.fsync", interrupt)
    with pytest.raises(KeyboardInterrupt):
        write_bytes_atomic(target, b"\x89PNG" + b"\x00" * 100_000)
    assert target.read_bytes() == b"old plot"
    assert _leftovers(tmp_path) == []


def test_refuses_the_input_file_and_folders(tmp_path):
    circuit_file = tmp_path / "stage.toml"
    circuit_file.write_text("[parts]\n")
    assert message(OutputError, write_text_atomic, circuit_file, "x", protect=[circuit_file]) == (
        "stage.toml: is the input circuit file, write the output to another file")
    link = tmp_path / "link.toml"
    link.symlink_to(circuit_file)
    assert message(OutputError, write_text_atomic, link, "x", protect=[str(circuit_file)]) == (
        "link.toml: is the input circuit file, write the output to another file")
    assert circuit_file.read_text() == "[parts]\n"
    assert message(OutputError, write_text_atomic, tmp_path, "x") == (
        f"{tmp_path}: is a folder, give a file name to write")
    assert message(OutputError, write_text_atomic, tmp_path / "missing" / "a.txt", "x") == (
        f"{tmp_path / 'missing' / 'a.txt'}: folder {tmp_path / 'missing'} does not exist, "
        "create the folder first or choose another path")
    if os.path.exists("/dev/null"):  # issue 20: a character device is written as a stream, never renamed over
        write_text_atomic("/dev/null", "x")
        assert stat.S_ISCHR(os.stat("/dev/null").st_mode)
    if hasattr(socket, "AF_UNIX"):
        with socket.socket(socket.AF_UNIX) as sock:
            sock.bind(str(tmp_path / "s.sock"))
            assert message(OutputError, write_text_atomic, tmp_path / "s.sock", "x") == (
                f"{tmp_path / 's.sock'}: is a socket, give the name of an ordinary file to write")


def test_replacing_keeps_permissions_and_writes_everything(tmp_path):
    target = tmp_path / "out.tex"
    target.write_text("old")
    target.chmod(0o640)
    write_text_atomic(target, "Ω" * 10_000)
    assert target.read_text(encoding="utf-8") == "Ω" * 10_000
    assert target.stat().st_mode & 0o777 == 0o640
    assert _leftovers(tmp_path) == []
