"""Probes: V(node)/V(source) at any node, with the load staying on the output port.

The check the issue asks for: a probe equals a re-derivation of the same circuit with the
output port moved to the probed node and the load kept where it was (written there as
ordinary parts, so the fixtures do not move with the port). Loading of an RC section by
what follows it: the voltage divider and the two-section ladder results are common practice.
"""

from __future__ import annotations

import json

import pytest
import sympy
from click.testing import CliRunner

import symfilt
from helpers import same
from symfilt.analysis.network import derive
from symfilt.analysis.probe import probe, probes
from symfilt.cli import cli
from symfilt.errors import SymfiltError
from symfilt.export.json import read_symbols
from symfilt.model.circuit import Circuit, Part
from symfilt.model.circuit_file import circuit_to_text, parse_circuit_text

S = sympy.Symbol("s")


def two_section(**fixtures) -> Circuit:
    """in -R1- mid -R2- out, C1 at mid, C2 at out (a two-section RC ladder)."""
    return Circuit.build([Part.resistor("R1", "in", "mid"), Part.capacitor("C1", "mid", "0"),
                          Part.resistor("R2", "mid", "out"), Part.capacitor("C2", "out", "0")], **fixtures)


def moved_port(node: str) -> Circuit:
    """The same ladder with the output port on ``node`` and the load written as parts at ``out``."""
    return Circuit.build([Part.resistor("R1", "in", "mid"), Part.capacitor("C1", "mid", "0"),
                          Part.resistor("R2", "mid", "out"), Part.capacitor("C2", "out", "0"),
                          Part.resistor("RL", "out", "0"), Part.capacitor("CL", "out", "0"),
                          Part.resistor("RS", "src", "in")],
                         input="src", output=node)


@pytest.mark.parametrize("node", ["mid", "in", "out"])
def test_probe_equals_rederivation_with_the_port_moved(node):
    c = two_section(source="symbol", load="symbol", load_capacitance="symbol")
    got = probe(c, node).loaded.transfer.as_expr()
    ref = derive(moved_port(node)).as_expr()  # driven at src by an ideal source, through RS
    names = {sympy.Symbol("RL", positive=True): sympy.Symbol("R_L", positive=True),
             sympy.Symbol("CL", positive=True): sympy.Symbol("C_L", positive=True),
             sympy.Symbol("RS", positive=True): sympy.Symbol("R_s", positive=True)}
    assert same(got, ref.xreplace(names))


def test_probe_on_the_output_is_the_transfer_function():
    c = two_section(source="600", load="10k").with_values({"R1": "1k", "R2": "10k", "C1": "10n", "C2": "1n"})
    a = symfilt.analyse(c, sensitivity=False)
    p = probe(c, "out")
    assert same(p.loaded.transfer.as_expr(), a.loaded.transfer.as_expr())
    assert p.numeric["loaded"]["cutoff_hz"] == pytest.approx(a.numeric["loaded"]["cutoff_hz"])


def test_inner_node_dc_gain_is_the_divider():
    # at DC the capacitors are open: V(mid)/V(source) = (R2 + R_L)/(R_s + R1 + R2 + R_L) (voltage divider,
    # common practice); ideal (R_s -> 0, R_L -> oo): 1
    c = two_section(source="symbol", load="symbol")
    p = probe(c, "mid")
    r1, r2, rs, rl = (sympy.Symbol(n, positive=True) for n in ("R1", "R2", "R_s", "R_L"))
    assert same(p.loaded.transfer.dc_gain(), (r2 + rl) / (rs + r1 + r2 + rl))
    assert p.ideal.transfer.dc_gain() == 1


def test_ideal_inner_node_of_the_ladder():
    # unloaded two-section ladder, first node: (1 + s C2 R2)/(s^2 C1 C2 R1 R2 + s (C1 R1 + C2 R1 + C2 R2) + 1)
    # (nodal analysis by hand, common practice)
    p = probe(two_section(load="symbol"), "mid")
    r1, r2, c1, c2 = (sympy.Symbol(n, positive=True) for n in ("R1", "R2", "C1", "C2"))
    ref = (1 + S * c2 * r2) / (S**2 * c1 * c2 * r1 * r2 + S * (c1 * r1 + c2 * r1 + c2 * r2) + 1)
    assert same(p.ideal.transfer.as_expr(), ref)


def test_probes_table_in_the_circuit_file_round_trips():
    text = circuit_to_text(two_section(load="10k")).replace("[parts]", "[probes]\nfirst = \"mid\"\n\n[parts]")
    c = parse_circuit_text(text, "ladder.toml")
    assert c.probes == (("first", "mid"),)
    assert parse_circuit_text(circuit_to_text(c)) == c
    assert [p.label for p in probes(c, ["in", "mid"])] == ["first", "in"]  # mid is probed already


@pytest.mark.parametrize("table, message", [
    ('first = "mdi"', "did you mean mid?"),
    ('first = "gnd"', "on ground"),
    ('first = 3', "a probe names one node"),
])
def test_bad_probes_are_one_line_errors(table, message):
    text = circuit_to_text(two_section()).replace("[parts]", f"[probes]\n{table}\n\n[parts]")
    with pytest.raises(SymfiltError, match=message) as exc:
        parse_circuit_text(text, "ladder.toml")
    assert str(exc.value).startswith("ladder.toml [probes] first")


def test_cli_probe_text_json_and_errors(tmp_path):
    f = tmp_path / "ladder.toml"
    c = two_section(source="5k", load="10k").with_values({"R1": "1k", "C1": "4n7", "R2": "10k", "C2": "1n"})
    f.write_text(circuit_to_text(c))
    run = CliRunner().invoke
    r = run(cli, ["derive", str(f), "--probe", "mid", "--format", "json"])
    assert r.exit_code == 0, r.output
    data = json.loads(r.output)
    entry = data["probes"]["mid"]
    assert entry["node"] == "mid" and entry["loaded"]["order"] == 2
    syms = read_symbols(data)
    got = sympy.sympify(entry["loaded"]["transfer"], locals=syms)
    assert same(got, probe(c, "mid").loaded.transfer.as_expr())
    r = run(cli, ["derive", str(f), "--probe", "mid"])
    assert r.exit_code == 0 and "Probe mid: H(s) = V(mid)/V(source), with the load on out" in r.output
    r = run(cli, ["derive", str(f), "--probe", "nowhere"])
    assert r.exit_code == 2 and r.output.count("\n") == 1 and "probe nowhere" in r.output


def test_report_probes_with_values_substituted():
    c = two_section(source="600", load="10k").with_values({"R1": "1k", "R2": "10k", "C1": "10n", "C2": "1n"})
    r = symfilt.report(c, sensitivity=False, probes=["mid"], substitute=True)
    (p,) = r.probes
    assert not (p.loaded.transfer.free_symbols() - {S})
    assert p.numeric["ideal"]["dc_gain"] == 1
