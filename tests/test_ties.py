"""Tied values and the [parameters] table (issue 18, item 3).

Outside checks name their source (tests/REFERENCES.md); the other checks compare the tied
derivation with the untied one with the ties put in by hand (exact) and with an own numpy
nodal solve at the values.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
import sympy

from helpers import same
from symfilt import catalogue
from symfilt.analysis.network import derive
from symfilt.analysis.stage import analyse
from symfilt.errors import CircuitError, CircuitFileError, SymfiltError
from symfilt.export.json import analysis_dict, read_symbols
from symfilt.export.text import render
from symfilt.model.circuit import Circuit, Part, S
from symfilt.model.circuit_file import circuit_to_text, parse_circuit_text
from symfilt.model.structure import structure_warnings
from symfilt.model.expression import parse_tie
from symfilt.model.ties import parameter_units, untied

pos = lambda names: sympy.symbols(names, positive=True)
R, C, k = pos("R C k")
s = S
R_s, R_L = pos("R_s R_L")

TWIN_T = '''
title = "Twin-T, tied"
[source]
resistance = "{source}"
[load]
resistance = "{load}"
[parameters]
R = "{R}"
C = "{C}"
[parts]
R1 = {{ kind = "resistor",  nodes = ["in", "a"], value = "R" }}
R2 = {{ kind = "resistor",  nodes = ["a", "out"], value = "R" }}
C3 = {{ kind = "capacitor", nodes = ["a", "gnd"], value = "2*C" }}
C1 = {{ kind = "capacitor", nodes = ["in", "m"], value = "C" }}
C2 = {{ kind = "capacitor", nodes = ["m", "out"], value = "C" }}
R3 = {{ kind = "resistor",  nodes = ["m", "gnd"], value = "R/2" }}
'''


def twin_t(R="10k", C="15n", source="symbol", load="symbol") -> Circuit:
    return parse_circuit_text(TWIN_T.format(R=R, C=C, source=source, load=load), "twin.toml")


# --- the twin-T from the file alone -------------------------------------------------------------

def test_tied_twin_t_is_the_second_order_notch_of_the_handbook():
    # Twin-T with R, R, R/2 and C, C, 2C: a notch at w0 = 1/(R C) with Q = 1/4 unloaded
    # (Williams & Taylor, Electronic Filter Design Handbook, band-reject networks; from memory;
    # REFERENCES.md "Twin-T notch").
    a = analyse(twin_t(R="symbol", C="symbol"))
    form = a.ideal.form
    assert (form.order, form.kind) == (2, "notch")
    assert same(form.w0, 1 / (R * C)) and form.q == sympy.Rational(1, 4) and form.gain == 1
    assert a.ideal.transfer.free_symbols() == {R, C, s}
    # the same file with values: the numbers follow
    n = analyse(twin_t()).numeric["ideal"]
    assert n["f0_hz"] == pytest.approx(1 / (2 * math.pi * 10e3 * 15e-9), rel=1e-12)
    assert n["q"] == pytest.approx(0.25, rel=1e-12)


def test_untied_twin_t_stays_third_order():
    # the same six parts without ties are third order for any values (computed regression value)
    assert derive(catalogue.build("twin-t-notch", R=None, C=None)).ideal().order() == 3
    assert derive(catalogue.build("twin-t-notch-tied", R=None, C=None)).ideal().order() == 2


@pytest.mark.parametrize("quantity", ["transfer", "zin", "zout"])
def test_tied_equals_untied_with_the_ties_put_in(quantity):
    # exact: the untied derivation with R1 = R2 = R, R3 = R/2, C1 = C2 = C, C3 = 2C, cancelled
    tied = derive(twin_t(R="symbol", C="symbol"), quantity)
    free = derive(catalogue.build("twin-t-notch", R=None, C=None, source="symbol", load="symbol"), quantity)
    R1, R2, R3, C1, C2, C3 = pos("R1 R2 R3 C1 C2 C3")
    balanced = {R1: R, R2: R, R3: R / 2, C1: C, C2: C, C3: 2 * C}
    assert same(tied.as_expr(), free.as_expr().xreplace(balanced))
    assert not ({R1, R2, R3, C1, C2, C3} & tied.free_symbols())


def nodal_twin_t(values: dict, w: float) -> complex:
    """Own numpy nodal solve of the twin-T with R_s and R_L: unit source behind R_s (Norton)."""
    nodes = {"in": 0, "a": 1, "m": 2, "out": 3}
    jw = 1j * w
    parts = [("in", "a", 1 / values["R1"]), ("a", "out", 1 / values["R2"]), ("a", None, jw * values["C3"]),
             ("in", "m", jw * values["C1"]), ("m", "out", jw * values["C2"]), ("m", None, 1 / values["R3"]),
             ("in", None, 1 / values["R_s"]), ("out", None, 1 / values["R_L"])]
    Y = np.zeros((4, 4), dtype=complex)
    for a, b, y in parts:
        i = nodes[a]
        Y[i, i] += y
        if b is not None:
            j = nodes[b]
            Y[j, j] += y
            Y[i, j] -= y
            Y[j, i] -= y
    rhs = np.zeros(4, dtype=complex)
    rhs[0] = 1 / values["R_s"]
    return complex(np.linalg.solve(Y, rhs)[3])


def test_tied_twin_t_against_an_own_nodal_solve():
    c = twin_t(R="10k", C="15n", source="600", load="47k")
    h = derive(c)
    values = {"R_s": 600.0, "R_L": 47e3, "R1": 10e3, "R2": 10e3, "R3": 5e3, "C1": 15e-9, "C2": 15e-9, "C3": 30e-9}
    sym = {x: sympy.Rational(v) for x, v in c.values().items()}
    for f in (10.0, 500.0, 1061.0, 3000.0, 1e5):
        w = 2 * math.pi * f
        exact = complex(sympy.N(h.as_expr().xreplace(sym).subs(s, sympy.I * sympy.Float(w, 30)), 20))
        ref = nodal_twin_t(values, w)
        assert abs(exact - ref) <= 1e-9 * max(1.0, abs(ref))
    # the tied parts' values follow from the parameters (listed with the symbols)
    assert c.symbols()["R3"]["value"] == 5000 and c.symbols()["C3"]["value"] == sympy.Rational(3, 10**8)


def test_sensitivities_are_to_the_parameters_and_the_sum_rules_hold():
    # w0 = 1/(R C) (handbook formula above): S_R^w0 = S_C^w0 = -1, S^Q = 0; the tied parts are
    # no symbols of their own any more. Sum rules: Schaumann & Van Valkenburg (REFERENCES.md).
    a = analyse(twin_t(source="none", load="none"))
    table = a.ideal.sensitivity
    assert set(table["w0"]) == {"R", "C"}
    assert table["w0"] == {"R": -1, "C": -1} and table["q"] == {"R": 0, "C": 0}
    assert a.rules and all(r.holds for r in a.rules)
    assert a.numeric["ideal"]["sensitivity"]["w0"]["R"] == pytest.approx(-1.0, rel=1e-12)


def test_equal_component_sallen_key_with_a_gain_parameter():
    # Equal-component Sallen-Key low-pass with K = 1 + Rf/Rg: w0 = 1/(RC), Q = 1/(3 - K)
    # (REFERENCES.md, Second order). Tied: Rf = k*Rg, so K = 1 + k and Q = 1/(2 - k).
    parts = [Part.resistor("R1", "in", "a", "R"), Part.resistor("R2", "a", "b", "R"),
             Part.capacitor("C1", "a", "out", "C"), Part.capacitor("C2", "b", "0", "C"),
             Part.opamp("U1", "b", "n", "out"), Part.resistor("Rg", "n", "0", "10k"),
             Part.resistor("Rf", "out", "n", "Rg*k")]
    c = Circuit.build(parts, parameters={"R": "10k", "C": "10n", "k": "symbol"})
    a = analyse(c)
    assert same(a.ideal.form.w0, 1 / (R * C)) and same(a.ideal.form.q, 1 / (2 - k))
    assert parameter_units(c) == {"R": "Ω", "C": "F", "k": ""}
    assert a.rules and all(r.holds for r in a.rules)
    assert len(a.loops) == 1 and a.loops[0].feedback == "negative"


# --- the file schema, the Python API and the round trip -----------------------------------------

def test_python_api_and_file_agree():
    parts = [Part.resistor("R1", "in", "a", "R"), Part.resistor("R2", "a", "out", "R"),
             Part.capacitor("C3", "a", "0", "2*C"), Part.capacitor("C1", "in", "m", "C"),
             Part.capacitor("C2", "m", "out", "C"), Part.resistor("R3", "m", "0", "R/2")]
    c = Circuit.build(parts, parameters={"R": "10k", "C": "15n"}, source="symbol", load="symbol", title="Twin-T, tied")
    assert c == twin_t()
    assert c.part("R3").tie == "R/2" and c.part("R3").value is None


@pytest.mark.parametrize("circuit", [
    twin_t(), twin_t(R="symbol"), catalogue.build("twin-t-notch-tied"),
    Circuit.build([Part.resistor("R1", "in", "out", "(R + 4k7)/2"), Part.capacitor("C1", "out", "0", "22n"),
                   Part.make("E1", "vcvs", ["o", "0", "out", "0"], value="-k"), Part.resistor("R9", "o", "0", "2*R1")],
                  output="o", parameters={"R": "1k", "k": "symbol"}),
])
def test_circuit_to_text_round_trips_parameters_and_ties(circuit):
    text = circuit_to_text(circuit)
    assert "[parameters]" in text
    assert parse_circuit_text(text) == circuit


def test_bare_rkm_word_is_a_value_unless_the_circuit_has_that_name():
    # IEC 60062 RKM code: R47 is 0.47 ohm (REFERENCES.md, Standards)
    plain = Circuit.build([Part.resistor("R1", "in", "out", "R47"), Part.capacitor("C1", "out", "0", "1n")])
    assert plain.part("R1").value == sympy.Rational(47, 100) and plain.part("R1").tie is None
    tied = Circuit.build([Part.resistor("R1", "in", "out", "R47"), Part.capacitor("C1", "out", "0", "1n")],
                         parameters={"R47": "10k"})
    assert tied.part("R1").tie == "R47" and tied.symbols()["R1"]["value"] == 10000


def test_expression_reader_is_exact_and_evaluates_nothing():
    expr, names = parse_tie("(R1 + 4k7) * k / 3 - 2.2e-9*C")
    R1 = sympy.Symbol("R1")
    assert names == ("R1", "k", "C")
    assert sympy.expand(expr - ((R1 + 4700) * sympy.Symbol("k") / 3
                                - sympy.Rational(22, 10**10) * sympy.Symbol("C"))) == 0
    for bad in ("__import__('os')", "R**2", "R ^ 2", "R1.value", "R(2)", "2C"):
        with pytest.raises(SymfiltError):
            Circuit.build([Part.resistor("R1", "in", "out", bad), Part.capacitor("C1", "out", "0", "1n")],
                          parameters={"R": "1k", "C": "1n"})


def test_with_values_sets_a_parameter_and_unties_a_part():
    c = twin_t(R="10k")
    d = c.with_values({"R": "20k"})
    assert d.symbols()["R3"]["value"] == 10000
    e = c.with_values({"R3": "4k7"})
    assert e.part("R3").tie is None and e.part("R3").value == 4700
    assert analyse(e, sensitivity=False).ideal.transfer.order() == 3  # unbalanced: third order again


def test_untied_keeps_each_tied_part_as_a_part_of_its_own():
    u = untied(twin_t())
    assert not u.parameters and not any(p.tie for p in u.parts)
    assert u.part("R3").value == 5000 and u.part("C3").value == sympy.Rational(3, 10**8)


# --- reports -------------------------------------------------------------------------------------

def test_symbols_section_and_json():
    a = analyse(twin_t(source="50", load="100k"))
    text = render(a)
    assert "R3 = R/2 (5 kΩ)" in text and "C3 = 2*C (30 nF)" in text
    assert any(line.split()[:2] == ["R", "parameter"] and line.endswith("10 kΩ") for line in text.splitlines())
    data = json.loads(json.dumps(analysis_dict(a)))
    assert data["symbols"]["R"] == {"role": "parameter", "value": "10000", "unit": "Ω"}
    assert data["symbols"]["R3"]["tie"] == "R/2" and data["symbols"]["R3"]["value"] == "5000"
    back = sympy.sympify(data["ideal"]["transfer"], locals=read_symbols(data))
    assert same(back, a.ideal.transfer.as_expr())


def test_bode_data_of_the_tied_notch_dips_at_f0():
    from symfilt.analysis.bode import bode_data

    d = bode_data(analyse(twin_t(source="none", load="none"), sensitivity=False), points=400)
    f0 = 1 / (2 * math.pi * 10e3 * 15e-9)
    freqs = np.asarray(d.f)
    mags = np.where(np.isfinite(d.ideal_db), d.ideal_db, -400.0)
    assert abs(math.log10(freqs[int(np.argmin(mags))] / f0)) < 0.02
    assert mags.min() < -30
    assert d.marks["ideal"]  # the notch frequency is marked


def test_note_lists_parameters_and_ties(tmp_path):
    from symfilt.export.note_write import write_note

    written = write_note(twin_t(), tmp_path / "note.md")
    assert written[-1] == tmp_path / "note.md"  # after the ideal Bode plot, drawn though R_s has no value
    text = written[-1].read_text()
    assert "Tied values (each follows from the parameters and parts it names): R1 = R," in text
    assert "R3 = R/2." in text and "| R | parameter |" in text and "resistor, tied" in text


# --- errors --------------------------------------------------------------------------------------

def file_with(parameters: str, r1: str, r2: str = "1k") -> str:
    return (f"[parameters]\n{parameters}\n[parts]\n"
            f'R1 = {{ kind = "resistor", nodes = ["in", "out"], value = "{r1}" }}\n'
            f'R2 = {{ kind = "resistor", nodes = ["out", "gnd"], value = "{r2}" }}\n'
            'C1 = { kind = "capacitor", nodes = ["out", "gnd"], value = "1n" }\n')


@pytest.mark.parametrize("parameters, r1, r2, kind, words", [
    ('R = "10k"', "Rr", "1k", CircuitError, "[parts] R1: the value refers to Rr, which is no parameter or part, did you mean R?"),
    ('R = "10k"', "R2", "R1", CircuitError, "the ties form a cycle (R1 -> R2 -> R1)"),
    ('R1 = "10k"', "1k", "R1", CircuitError, "[parameters] R1: the parameter has the name of a part"),
    ('R = "10k"', "2*(R", "1k", CircuitError, "ends before the expression is complete"),
    ('R = "10k"', "R % 2", "1k", CircuitError, "which a tie expression does not take"),
    ('R = "10k"', "R - 20k", "1k", CircuitError, "the tied value R - 20k is -10 kΩ, not positive"),
    ('R = "-10k"', "R", "1k", CircuitError, "[parameters] R: the value -10k is not positive"),
    ('R = { a = 1 }', "R", "1k", CircuitFileError, "[parameters] R: a parameter is a value or \"symbol\""),
    ('s = "1k"', "s", "1k", CircuitError, "[parameters] s: the name s is reserved"),
    ('R = "10k"', "2*R_s", "1k", CircuitError, "[parts] R1: the value refers to R_s, the source or load"),
])
def test_bad_ties_are_one_line_errors(run_cli, tmp_path, parameters, r1, r2, kind, words):
    text = file_with(parameters, r1, r2)
    with pytest.raises(kind) as info:
        parse_circuit_text(text, "stage.toml")
    assert words in str(info.value)
    path = tmp_path / "stage.toml"
    path.write_text(text)
    code, out, err = run_cli("derive", str(path))
    assert code == 2 and out == "" and err.count("\n") == 1 and err.startswith("error: stage.toml")


def test_unused_parameter_is_a_warning(run_cli, tmp_path):
    c = parse_circuit_text(file_with('R = "10k"\nk = "2"', "R"))
    assert structure_warnings(c) == ["parameters k: no part's value refers to it, check the spelling or remove it"]
    path = tmp_path / "stage.toml"
    path.write_text(file_with('R = "10k"\nk = "2"', "R"))
    code, out, err = run_cli("derive", str(path), "--quantity", "cutoff")
    assert code == 0 and "warning: parameters k: no part's value refers to it" in err


def test_check_reads_a_tied_part_in_a_claim_as_its_tie(run_cli):
    # w0 = 1/(R C) (handbook, above); C3 R3 = 2C R/2 = R C, so 1/(C3 R3) is the same claim
    code, out, _err = run_cli("check", "@twin-t-notch-tied", "1/(C3*R3)", "--quantity", "w0", "--ideal")
    assert code == 0 and out.startswith("equal")
    code, out, _err = run_cli("check", "@twin-t-notch-tied", "1/(2*C3*R3)", "--quantity", "w0", "--ideal")
    assert code == 1 and out.startswith("different")


@pytest.mark.parametrize("quantity", ["transfer", "zin", "zout"])
def test_ties_with_sums_and_quotients_equal_the_untied_derivation(quantity):
    # a tie with a polynomial denominator (R1 || R2), with rational constants, and one on a
    # controlled source's gain; checked exactly against the untied derivation with the ties put in
    def parts(v):
        return [Part.resistor("R1", "in", "a", v["R1"]), Part.resistor("R2", "a", "b", v["R2"]),
                Part.resistor("R3", "b", "0", v["R3"]), Part.capacitor("C1", "a", "0", v["C1"]),
                Part.capacitor("C2", "b", "out", v["C2"]), Part.make("E1", "vcvs", ["out", "0", "b", "0"], value=v["E1"]),
                Part.resistor("R4", "out", "0", "1k")]
    ties = {"R1": "R/3", "R2": "2*R", "R3": "R1*R2/(R1 + R2)", "C1": "C/3 + 1n", "C2": "C1", "E1": "-k/7"}
    tied = Circuit.build(parts(ties), source="symbol", load="symbol", parameters={"R": "symbol", "C": "symbol", "k": "symbol"})
    free = Circuit.build(parts(dict.fromkeys(ties)), source="symbol", load="symbol")
    by_symbol = {free.part(n).symbol: e for n, e in tied.ties().items()}
    h_tied, h_free = derive(tied, quantity), derive(free, quantity)
    assert not ({free.part(n).symbol for n in ties} & h_tied.free_symbols())
    assert same(h_tied.as_expr(), h_free.as_expr().xreplace(by_symbol))


def test_a_tie_of_the_wrong_unit_is_a_warning():
    # R1 = 2*C1 mixes a resistance with a capacitance; R2 = R + 100 adds 100 ohm (no warning)
    c = Circuit.build([Part.resistor("R1", "in", "out", "2*C1"), Part.capacitor("C1", "out", "0", "1n"),
                       Part.resistor("R2", "out", "0", "R + 100"), Part.resistor("R3", "out", "0", "R1*k")],
                      parameters={"R": "1k", "k": "3"})
    assert structure_warnings(c) == [
        "part R1: its tie 2*C1 is no resistance (a term of it is a capacitance), check the names in it"]
    assert parameter_units(c) == {"R": "Ω", "k": ""}


from hypothesis import given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402


@settings(max_examples=300, deadline=None, derandomize=True, database=None)
@given(st.text(alphabet="RCk12.e-+*/()% ^nu_", max_size=30))
def test_any_tie_text_is_a_circuit_or_one_symfilt_error(text):
    # bad input is a SymfiltError (one line at the command line), never another exception
    try:
        c = Circuit.build([Part.resistor("R1", "in", "out", text), Part.capacitor("C1", "out", "0", "1n")],
                          parameters={"R": "1k", "C": "1n", "k": "symbol"})
    except SymfiltError as exc:
        assert "\n" not in str(exc)
        return
    derive(c)  # and a circuit that was accepted derives
