"""Chains of stages against published results and an independent numeric solve.

- Two RC sections in cascade: the two-section RC ladder, H = 1/(s^2 R1 R2 C1 C2 +
  s (R1 C1 + R1 C2 + R2 C2) + 1) (nodal analysis of the ladder; common practice, e.g. Van
  Valkenburg, Analog Filter Design, the RC ladder examples (from memory)).
- The interface's loading: the voltage divider Zin/(Zout + Zin) between a Thevenin source
  and the next stage's input (common practice), with Zout of an RC section driven through R_s
  equal to (R1 + R_s) || 1/(s C1) and Zin of an RC section loaded by R_L equal to
  R2 + (1/(s C2) || R_L) (series and parallel impedances, common practice).
- A unity-gain buffer isolates the stages: the buffered chain is the product of the stages
  with their own source and load (common practice).
- The three-stage example in examples/geophone_chain against a small complex nodal solve
  written here in numpy (KCL at every node, ideal op-amps as nullors; REFERENCES.md "Circuit
  analysis method"), which shares no code with symfilt's engine.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest
import sympy
from click.testing import CliRunner
from scipy.optimize import brentq

from helpers import parallel, same
from symfilt.cli import cli
from symfilt.design.chain import chain_report
from symfilt.errors import SymfiltError
from symfilt.export.chain_report import chain_dict, chain_text
from symfilt.export.json import read_symbols
from symfilt.model.chain import Chain, ChainStage, connect
from symfilt.model.chain_file import load_chain, parse_chain_text
from symfilt.model.circuit import Circuit, Fixture, Part

S = sympy.Symbol("s")
EXAMPLE = Path(__file__).resolve().parent.parent / "examples" / "geophone_chain" / "chain.toml"
R1, R2, C1, C2, RS, RL = (sympy.Symbol(n, positive=True) for n in ("R1", "R2", "C1", "C2", "R_s", "R_L"))


def rc(r: str, c: str, values=(None, None)) -> Circuit:
    return Circuit.build([Part.resistor(r, "in", "out", values[0]), Part.capacitor(c, "out", "0", values[1])])


def two_rc(**fixtures) -> Chain:
    return Chain((ChainStage("first", rc("R1", "C1")), ChainStage("second", rc("R2", "C2"))),
                 **{k: Fixture.parse(v, k) for k, v in fixtures.items()})


# --- the independent numeric solve ---------------------------------------------------------------

def nodal(parts, opamps, sv: complex, drive: str, rs=None, rl=None, cl=None) -> dict:
    """Node voltages for a unit drive: ``transfer`` (1 V behind rs at node "in"), or a unit
    current into node ``drive`` with nothing else driving (an impedance). parts: (kind, a, b,
    value) with kind R or C; opamps: (plus, minus, out), ideal (V+ = V-, output current free)."""
    two = list(parts)
    if drive == "transfer":
        two.append(("R", "src", "in", rs) if rs else ("W", "src", "in", None))
    if rl:
        two.append(("R", "out", "0", rl))
    if cl:
        two.append(("C", "out", "0", cl))
    wires = [(a, b) for k, a, b, _ in two if k == "W"]
    two = [t for t in two if t[0] != "W"]
    nodes = sorted({n for _, a, b, _ in two for n in (a, b)} | {n for o in opamps for n in o} | {a for a, b in wires}
                   | {b for a, b in wires} - {"0"})
    nodes = [n for n in nodes if n != "0"]
    idx = {n: i for i, n in enumerate(nodes)}
    extra = len(opamps) + len(wires) + (1 if drive == "transfer" else 0)
    m = np.zeros((len(nodes) + extra,) * 2, dtype=complex)
    rhs = np.zeros(len(nodes) + extra, dtype=complex)

    def put(r, c, v):
        if r != "0" and c != "0":
            m[idx[r] if isinstance(r, str) else r, idx[c] if isinstance(c, str) else c] += v

    for kind, a, b, v in two:
        y = 1 / v if kind == "R" else sv * v
        put(a, a, y), put(b, b, y), put(a, b, -y), put(b, a, -y)
    k = len(nodes)
    for plus, minus, out in opamps:  # output current k into out; row k: V+ - V- = 0
        put(out, k, 1), put(k, plus, 1), put(k, minus, -1)
        k += 1
    for a, b in wires:
        put(a, k, 1), put(b, k, -1), put(k, a, 1), put(k, b, -1)
        k += 1
    if drive == "transfer":
        put("src", k, 1), put(k, "src", 1)
        rhs[k] = 1
    else:
        rhs[idx[drive]] = 1
    x = np.linalg.solve(m, rhs)
    return {n: x[i] for n, i in idx.items()} | {"0": 0}


def cutoff_of(h, f_hi: float) -> float:
    """The -3 dB frequency below f_hi of a low-pass h(f) with its DC level h(1e-3)."""
    ref = abs(h(1e-3))
    return brentq(lambda f: abs(h(f)) - ref / math.sqrt(2), 1e-2, f_hi)


# --- published forms ------------------------------------------------------------------------------

def test_two_rc_sections_are_the_two_section_ladder():
    r = chain_report(two_rc())
    ladder = 1 / (S**2 * R1 * R2 * C1 * C2 + S * (R1 * C1 + R1 * C2 + R2 * C2) + 1)
    assert same(r.analysis.ideal.transfer.as_expr(), ladder)
    # the stages alone multiply: 1/((1 + s R1 C1)(1 + s R2 C2))
    assert same(r.product.transfer.as_expr(), 1 / ((1 + S * R1 * C1) * (1 + S * R2 * C2)))


def test_interface_impedances_are_the_hand_formulas():
    r = chain_report(two_rc(source="symbol", load_resistance="symbol"))
    (i,) = r.interfaces
    assert same(i.zout.as_expr(), parallel(R1 + RS, 1 / (S * C1)))
    assert same(i.zin.as_expr(), R2 + parallel(1 / (S * C2), RL))


def test_buffered_chain_is_the_product_with_the_fixtures():
    ch = two_rc(source="symbol", load_resistance="symbol")
    r = chain_report(ch)
    h1 = 1 / (1 + S * C1 * (R1 + RS))  # first section driven through R_s, open (the buffer draws nothing)
    h2 = parallel(1 / (S * C2), RL) / (R2 + parallel(1 / (S * C2), RL))  # second driven ideally, loaded
    assert same(r.buffered.transfer.as_expr(), h1 * h2)


def test_thevenin_divider_gives_the_connected_chain():
    # V(x1)/V(source) = Voc(x1) * Zin/(Zout + Zin), with Voc the open-circuit voltage of stage 1
    r = chain_report(two_rc(source="symbol", load_resistance="symbol"))
    (i,) = r.interfaces
    voc = 1 / (1 + S * C1 * (R1 + RS))
    h2 = parallel(1 / (S * C2), RL) / (R2 + parallel(1 / (S * C2), RL))
    zo, zi = i.zout.as_expr(), i.zin.as_expr()
    assert same(r.analysis.loaded.transfer.as_expr(), voc * zi / (zo + zi) * h2)


def test_loading_ratio_at_the_cutoff_is_the_hand_formula():
    ch = Chain((ChainStage("a", rc("R1", "C1", ("1k", "100n"))), ChainStage("b", rc("R2", "C2", ("10k", "10n")))),
               source=Fixture.parse("500", "s"), load_resistance=Fixture.parse("100k", "l"))
    r = chain_report(ch)
    (i,) = r.interfaces
    fc = r.product_numeric["cutoff_hz"]
    w = 2 * math.pi * fc
    zo = 1 / (1 / 1500 + 1j * w * 100e-9)
    zi = 10e3 + 1 / (1 / 100e3 + 1j * w * 10e-9)
    assert i.loading["at_cutoff"] == pytest.approx(abs(zo / zi), rel=1e-9)
    assert i.loading["dc"] == pytest.approx(1500 / 110e3, rel=1e-12)  # both resistive at DC
    assert i.loading["max"] >= i.loading["at_cutoff"]


# --- the three-stage example against the numeric solve -----------------------------------------

def example_parts(buffers=()):
    """The geophone chain written out by hand: EMI RC, Sallen-Key (R1 in-a, C1 a-out, R2 a-b,
    C2 b-gnd, follower), ADC RC; a buffer at interface k splits its node into k and kb."""
    x1 = "x1b" if 1 in buffers else "x1"
    x2 = "x2b" if 2 in buffers else "x2"
    parts = [("R", "in", "x1", 1e3), ("C", "x1", "0", 10e-9),
             ("R", x1, "a", 11e3), ("R", "a", "b", 11e3), ("C", "a", "x2", 100e-9), ("C", "b", "0", 47e-9),
             ("R", x2, "out", 100.0), ("C", "out", "0", 10e-9)]
    opamps = [("b", "x2", "x2")] + [(f"x{k}", f"x{k}b", f"x{k}b") for k in buffers]
    return parts, opamps


def example_h(buffers=()):
    parts, opamps = example_parts(buffers)
    return lambda f: nodal(parts, opamps, 2j * math.pi * f, "transfer", rs=2e3, rl=1e6, cl=20e-12)["out"]


def test_example_numbers_match_the_numeric_solve():
    r = chain_report(load_chain(EXAMPLE))
    conn = r.analysis.numeric["loaded"]
    assert conn["cutoff_hz"] == pytest.approx(cutoff_of(example_h(), 1e4), rel=1e-6)
    assert conn["dc_gain"] == pytest.approx(abs(example_h()(1e-6)), rel=1e-9)
    for i in r.interfaces:
        assert i.buffered["cutoff_hz"] == pytest.approx(cutoff_of(example_h([i.index]), 1e4), rel=1e-6)
    assert r.buffered_numeric["cutoff_hz"] == pytest.approx(cutoff_of(example_h([1, 2]), 1e4), rel=1e-6)
    # interface 1: Zout looking back into the EMI RC with the source; Zin into the Sallen-Key and what follows
    parts, opamps = example_parts()
    fc = r.product_numeric["cutoff_hz"]
    sv = 2j * math.pi * fc
    up = [p for p in parts[:2]] + [("R", "in", "0", 2e3)]  # the source zeroed: R_s to ground
    zo = nodal(up, [], sv, "x1")["x1"]
    down = [p for p in parts[2:]]
    zi = nodal(down, [("b", "x2", "x2")], sv, "x1", rl=1e6, cl=20e-12)["x1"]
    assert r.interfaces[0].loading["at_cutoff"] == pytest.approx(abs(zo / zi), rel=1e-8)
    assert r.interfaces[1].loading["at_cutoff"] == 0.0  # an ideal op-amp's output
    assert r.worst().index == 1 and r.needs_buffer(r.interfaces[0]) and not r.needs_buffer(r.interfaces[1])


# --- names, files, the command --------------------------------------------------------------------

def test_colliding_names_get_their_stage_number_and_ties_follow():
    tied = Circuit.build([Part.resistor("R1", "in", "out", "R"), Part.capacitor("C1", "out", "0", "C/2")],
                         parameters={"R": "1k", "C": "20n"})
    ch = Chain((ChainStage("a", tied), ChainStage("b", tied)))
    assert ch.names() == [{}, {"R1": "R1_2", "C1": "C1_2", "R": "R_2", "C": "C_2"}]
    c = connect(ch)
    assert c.ties() == {"R1": sympy.Symbol("R", positive=True), "C1": sympy.Symbol("C", positive=True) / 2,
                        "R1_2": sympy.Symbol("R_2", positive=True), "C1_2": sympy.Symbol("C_2", positive=True) / 2}


@pytest.mark.parametrize("text, message", [
    ('[[stage]]\nfile = "x.toml"\n', "unknown key 'file'"),
    ('[[stage]]\ncircuit = "@no-such"\n', "stage 1"),
    ('[[stage]]\ncircuit = "missing.toml"\n', "stage 1 (missing.toml)"),
    ('title = "x"\n', "no [[stage]] tables"),
    ('[[stage]]\ncircuit = "@rc-lowpass"\nvalues = { R9 = "1k" }\n', "stage 1"),
    ('[stages]\n', "did you mean stage?"),
])
def test_bad_chain_files_are_one_line_errors(text, message, tmp_path):
    with pytest.raises(SymfiltError, match=message.replace("(", r"\(").replace(")", r"\)").replace("[", r"\[")) as exc:
        parse_chain_text(text, "chain.toml", tmp_path)
    assert "\n" not in str(exc.value) and str(exc.value).startswith("chain.toml")


def test_cli_chain_text_json_note_and_plot(tmp_path):
    run = CliRunner().invoke
    r = run(cli, ["chain", str(EXAMPLE)])
    assert r.exit_code == 0, r.output
    assert "Worst interface: 1 (EMI RC → anti-alias Sallen-Key, node x1)" in r.output
    assert "interface 1: a buffer is worth it" in r.output and "interface 2: no buffer needed" in r.output
    r = run(cli, ["chain", str(EXAMPLE), "--format", "json"])
    data = json.loads(r.output)
    assert data["worst_interface"] == 1 and [i["needs_buffer"] for i in data["interfaces"]] == [True, False]
    syms = read_symbols(data["connected"])
    got = sympy.sympify(data["connected"]["ideal"]["transfer"], locals=syms)
    assert same(got, chain_report(load_chain(EXAMPLE)).analysis.ideal.transfer.as_expr())
    note = tmp_path / "chain.md"
    r = run(cli, ["chain", str(EXAMPLE), "--note", str(note)])
    assert r.exit_code == 0 and note.exists() and (tmp_path / "chain.svg").exists()
    assert "![Bode plot of the chain](chain.svg)" in note.read_text()
    r = run(cli, ["chain", str(EXAMPLE), "--note", str(tmp_path / "x.html")])
    assert r.exit_code == 0 and "<svg" in (tmp_path / "x.html").read_text()
    r = run(cli, ["chain", str(EXAMPLE), "--note", str(tmp_path / "x.tex")])
    assert r.exit_code == 2 and "a chain note is Markdown or HTML" in r.output


def test_text_report_of_a_single_stage_has_no_interfaces():
    r = chain_report(Chain((ChainStage("only", rc("R1", "C1", ("1k", "1u"))),)))
    text = chain_text(r)
    assert "Interfaces" not in text and chain_dict(r)["worst_interface"] is None


def test_a_shunt_stage_is_refused_with_a_hint():
    shunt = Circuit.build([Part.resistor("R9", "a", "0", "1k")], input="a", output="a")
    with pytest.raises(SymfiltError, match="its input and output are the same node, put a shunt part into the stage"):
        Chain((ChainStage("RC", rc("R1", "C1")), ChainStage("shunt", shunt)))

