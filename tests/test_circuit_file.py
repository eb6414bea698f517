"""Circuit files: every mistake a person makes gets one message naming the file, the place and the fix."""

from __future__ import annotations

import os

import pytest

from symfilt import catalogue
from symfilt.model.circuit_file import MAX_FILE_BYTES, circuit_to_text, load_circuit, parse_circuit_text
from symfilt.errors import CircuitError, CircuitFileError, SingularCircuitError, SizeLimitError, ValueParseError

GOOD = """title = "Anti-alias stage"
[ports]
input = "in"
output = "out"
[parts]
R1 = { kind = "resistor", nodes = ["in", "out"], value = "4k7" }
C1 = { kind = "capacitor", nodes = ["out", "gnd"], value = "22n" }
"""


def message(exc_type, text: str) -> str:
    with pytest.raises(exc_type) as info:
        parse_circuit_text(text, "stage.toml")
    out = str(info.value)
    assert "\n" not in out
    return out


def test_the_good_file_reads():
    c = parse_circuit_text(GOOD, "stage.toml")
    assert c.title == "Anti-alias stage" and c.part("R1").value == 4700


def test_every_catalogue_circuit_round_trips():
    for name in catalogue.CATALOGUE:
        c = catalogue.build(name)
        assert parse_circuit_text(circuit_to_text(c)) == c


# --- TOML itself ------------------------------------------------------------------------------------


def test_duplicate_part_name():
    # TOML (toml.io, v1.0.0, "Keys": defining a key multiple times is invalid) refuses it before we see it
    text = GOOD + 'R1 = { kind = "resistor", nodes = ["out", "0"], value = "1k" }\n'
    assert message(CircuitFileError, text) == (
        "stage.toml line 8: part R1 is defined twice (first on line 6), give each part its own name")
    # the same at the very end of the file, where TOML reports no line
    assert message(CircuitFileError, text.rstrip("\n")) == (
        "stage.toml line 8: part R1 is defined twice (first on line 6), give each part its own name")


def test_duplicate_table_and_key():
    assert message(CircuitFileError, GOOD + "[parts]\n") == (
        "stage.toml line 8: the table [parts] appears twice (first on line 5), "
        "keep one header and put everything of that table under it")
    assert message(CircuitFileError, 'title = "x"\n' + GOOD) == (
        "stage.toml line 2: title is given twice (first on line 1), keep one of them")
    text = GOOD + 'R2 = { kind = "resistor", kind = "capacitor", nodes = ["out", "0"] }\n'
    assert message(CircuitFileError, text) == "stage.toml line 8: a part lists 'kind' twice, keep one of them"


def test_syntax_error_names_the_line():
    text = GOOD + 'R2 = { kind = "resistor" nodes = ["out", "0"] }\n'
    assert message(CircuitFileError, text) == (
        "stage.toml line 8: not valid TOML: unclosed inline table at column 26, "
        "fix the syntax there (see the circuit file format in the README)")


def test_byte_order_mark_is_accepted():
    assert parse_circuit_text("\ufeff" + GOOD).part("C1").value == parse_circuit_text(GOOD).part("C1").value


# --- schema -----------------------------------------------------------------------------------------


def test_unknown_section_and_keys():
    assert message(CircuitFileError, GOOD + "[part]\n") == (
        "stage.toml: unknown section or key 'part', did you mean parts? use only title, keep, [ports], [source], "
        "[load], [parameters], [parts], [probes], [noise], [note]")
    assert message(CircuitFileError, GOOD.replace('value = "4k7"', 'valeu = "4k7"')) == (
        "stage.toml [parts] R1: unknown key 'valeu' for a resistor, did you mean value? use kind, nodes, value")
    assert message(CircuitFileError, GOOD + '[load]\nresistence = "10k"\n') == (
        "stage.toml [load]: unknown key 'resistence', did you mean resistance? use capacitance and resistance")


def test_unknown_kind_in_a_file():
    assert message(CircuitFileError, GOOD.replace('"resistor"', '"resistr"')) == (
        "stage.toml [parts] R1: unknown kind 'resistr', did you mean resistor? use one of resistor, capacitor, "
        "inductor, opamp, vcvs, vccs, ccvs, cccs")
    assert message(CircuitFileError, GOOD.replace('kind = "resistor", ', "")) == (
        "stage.toml [parts] R1: no kind given, use one of resistor, capacitor, inductor, opamp, vcvs, vccs, "
        "ccvs, cccs")


def test_missing_and_extra_pins_in_a_file():
    assert message(CircuitError, GOOD.replace('["in", "out"]', '["in", "out", "x"]')) == (
        "stage.toml [parts] R1: a resistor has 2 pins (a, b), got 3, list exactly those pins")
    assert message(CircuitFileError, GOOD + 'U1 = { kind = "opamp", plus = "out", minus = "n" }\n') == (
        "stage.toml [parts] U1: missing pin out, give plus, minus and out")
    assert message(CircuitFileError, GOOD.replace('["in", "out"]', '"in"')) == (
        "stage.toml [parts] R1: no nodes list, write nodes = ['a', 'b']")


def test_structure_errors_name_the_file_and_the_part():
    assert message(CircuitError, GOOD.replace('["in", "out"]', '["out", "out"]')) == (
        "stage.toml [parts] R1: both ends are on node out, connect it between two different nodes")
    assert message(CircuitError, GOOD.replace('output = "out"', 'output = "outt"')) == (
        "stage.toml [ports] output: node outt is not connected to any part, name a node that a part uses")
    assert message(CircuitError, GOOD + 'R2 = { kind = "resistor", nodes = ["p", "q"] }\n') == (
        "stage.toml nodes p, q: no path to ground through any part, connect them to the rest of the circuit")
    assert message(CircuitError, GOOD.replace('"gnd"', '"x"')) == (
        "stage.toml parts: no part connects to ground, connect a part to gnd (or 0)")


def test_singular_circuit_in_a_file():
    text = GOOD + ('U1 = { kind = "opamp", plus = "out", minus = "0", out = "o2" }\n'
                   'R9 = { kind = "resistor", nodes = ["o2", "0"] }\n')
    assert message(SingularCircuitError, text) == (
        "stage.toml [parts] U1: the ideal op-amp has no feedback from its output o2 to its inputs (+ out, - 0), "
        "so its output is undetermined (nodes in, o2, out; parts C1, R1, R9, U1, the source), connect a part "
        "from o2 back to the - input, or give the op-amp model = \"gain\"")


def test_values_in_a_file():
    assert message(CircuitError, GOOD.replace('"4k7"', '"0"')) == (
        "stage.toml [parts] R1: a resistance of 0 is a short circuit, use a wire, or remove the part")
    # TOML floats nan and inf (toml.io v1.0.0, "Float": special float values)
    assert message(ValueParseError, GOOD.replace('"22n"', "nan")) == (
        "stage.toml [parts] C1: value nan is not finite, write a number with an optional SI prefix "
        "(p n u µ m k M G), e.g. 4.7k, 4k7, 22n, 1R5, 2.2e-9")
    assert message(ValueParseError, GOOD.replace('"22n"', "-inf")) == (
        "stage.toml [parts] C1: value -inf is not finite, write a number with an optional SI prefix "
        "(p n u µ m k M G), e.g. 4.7k, 4k7, 22n, 1R5, 2.2e-9")
    assert message(ValueParseError, GOOD + "[source]\nresistance = inf\n") == (
        "stage.toml [source] resistance: value inf is not finite, write a positive value, \"symbol\" to keep "
        "it symbolic, or \"none\" to leave it out")
    assert message(ValueParseError, GOOD.replace('"22n"', "1e300")) == (
        "stage.toml [parts] C1: value '1e+300' is out of range, use a value between 1e-24 and 1e24 in "
        "magnitude (the SI prefix range)")


# --- limits -----------------------------------------------------------------------------------------


def test_part_count_limit_in_a_file():
    text = "[parts]\n" + "".join(f'R{k} = {{ kind = "resistor", nodes = ["in", "0"] }}\n' for k in range(201))
    assert message(SizeLimitError, text) == (
        "stage.toml [parts]: 201 parts is over the limit of 200, split the circuit into stages and derive each one")


def test_name_and_title_limits_in_a_file():
    assert message(SizeLimitError, GOOD.replace("R1 =", "R" + "x" * 40 + " =")) == (
        "stage.toml [parts] Rxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxx...: the name is 41 characters long, over the "
        "limit of 32, use a shorter name such as R1 or C_in")
    assert message(SizeLimitError, GOOD.replace('"Anti-alias stage"', '"' + "t" * 201 + '"')) == (
        "stage.toml title: the title is 201 characters long, over the limit of 200, shorten it")
    assert message(CircuitFileError, GOOD.replace('"Anti-alias stage"', '"a\\nb"')) == (
        "stage.toml title: the title holds a line break, control or invisible character, write the title on "
        "one line with visible characters only")


def test_file_size_limit(tmp_path):
    big = tmp_path / "big.toml"
    big.write_text(GOOD + "#" * MAX_FILE_BYTES)
    with pytest.raises(SizeLimitError) as info:
        load_circuit(big)
    assert str(info.value) == ("big.toml: the file is over the size limit of 262144 bytes, a circuit file of 200 "
                               "parts fits well below it; check the file")


@pytest.mark.skipif(not os.path.exists("/dev/zero"), reason="needs /dev/zero")
def test_an_endless_device_is_refused_before_reading():
    # was: cut at the size limit; since issue 19 no device or pipe is read at all
    with pytest.raises(CircuitFileError, match="is a character device"):
        load_circuit("/dev/zero")


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs named pipes")
def test_a_named_pipe_is_refused_before_it_is_opened(tmp_path):
    fifo = tmp_path / "stage.toml"
    os.mkfifo(fifo)  # opening it for reading would block until a writer comes: never here
    with pytest.raises(CircuitFileError, match="named pipe"):
        load_circuit(fifo)
    from symfilt.model.chain_file import load_chain
    with pytest.raises(CircuitFileError, match="named pipe"):
        load_chain(fifo)


def test_unreadable_inputs(tmp_path):
    with pytest.raises(CircuitFileError) as info:
        load_circuit(tmp_path / "nope.toml")
    assert str(info.value) == f"{tmp_path / 'nope.toml'}: no such file, check the path, or use @NAME for a built-in circuit"
    with pytest.raises(CircuitFileError) as info:
        load_circuit(tmp_path)
    assert str(info.value) == f"{tmp_path}: is a folder, not a circuit file, give the path of a .toml circuit file"
    latin = tmp_path / "latin.toml"
    latin.write_bytes(GOOD.replace('"22n"', '"22µ"').encode("latin-1"))  # µ is byte 0xb5 in Latin-1
    at = GOOD.index('"22n"') + 3
    with pytest.raises(CircuitFileError) as info:
        load_circuit(latin)
    assert str(info.value) == f"latin.toml line 7: not UTF-8 text (byte {at} is 0xb5), save the file as UTF-8 text"
    nul = tmp_path / "nul.toml"
    nul.write_bytes(GOOD.encode() + b"\x00")
    with pytest.raises(CircuitFileError) as info:
        load_circuit(nul)
    assert str(info.value) == "nul.toml: contains NUL bytes, save the file as plain UTF-8 text"
