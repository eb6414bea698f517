"""Issue 15: every hand-derivation slip of the list gets a named diagnosis, from the command
line and from assert_equivalent. The derived formulas the slips are made on are the published
ones named beside each test (tests/REFERENCES.md)."""

from __future__ import annotations

import pytest
import sympy

from symfilt import catalogue
from symfilt.analysis.stage import analyse
from symfilt.claims.parse import parse_claim
from symfilt.export.check_report import assert_equivalent

DIVIDER = """title = "divider"
[ports]
input = "in"
output = "out"
[parts]
R1 = { kind = "resistor", nodes = ["in", "out"], value = "10k" }
R2 = { kind = "resistor", nodes = ["out", "0"], value = "10k" }
"""

INVERTING = """title = "inverting amplifier with a bias resistor"
[ports]
input = "in"
output = "out"
[parts]
R1 = { kind = "resistor", nodes = ["in", "n"], value = "10k" }
R2 = { kind = "resistor", nodes = ["n", "out"], value = "47k" }
R3 = { kind = "resistor", nodes = ["p", "0"], value = "8k2" }
U1 = { kind = "opamp", plus = "p", minus = "n", out = "out" }
"""


@pytest.fixture
def files(tmp_path):
    out = {}
    for name, text in (("divider", DIVIDER), ("inverting", INVERTING)):
        p = tmp_path / f"{name}.toml"
        p.write_text(text)
        out[name] = str(p)
    return out


def derived(circuit, quantity: str):
    stage = analyse(circuit, sensitivity=False).loaded
    return stage.quantities()[quantity]


def api_lines(claim, circuit, quantity: str) -> str:
    """The diagnosis assert_equivalent raises, as text."""
    values = {str(k): v for k, v in circuit.values().items()}
    with pytest.raises(AssertionError) as e:
        assert_equivalent(claim, derived(circuit, quantity), symbols=circuit.symbol_table(), values=values,
                          quantity=quantity.replace("_", "-"))
    return str(e.value)


SK_ROOT = "(compared as squares: the quantity has a root)"


def test_sallen_key_w0_and_q_without_r_s(run_cli):
    # Unity-gain Sallen-Key with a source resistance: R_s adds to R1 under the root of
    # w0 = 1/sqrt(R1 R2 C1 C2) and of Q = sqrt(R1 R2 C1 C2)/(C2 (R1 + R2)) (TI SLOA024, from memory)
    wanted = f"agrees when R_s -> 0: the source resistance was left out {SK_ROOT}"
    for quantity, claim in (("w0", "1/sqrt(R1*R2*C1*C2)"), ("q", "sqrt(R1*R2*C1*C2)/(C2*(R1 + R2))")):
        code, out, err = run_cli("check", "@sallen-key-lowpass", claim, "--quantity", quantity)
        assert code == 1, err
        assert f"  - {wanted}\n" in out
        # w0 and Q differences are relative, not in dB (dB is for gains)
        assert "% apart" in out and "dB" not in out
        assert wanted in api_lines(claim, catalogue.build("sallen-key-lowpass"), quantity)


def test_equal_at_the_values_but_not_in_general(run_cli, files):
    # Voltage divider H = R2/(R1 + R2) (common practice) with R1 = R2: writing R1 on top agrees at
    # the values only; the point where they differ is drawn elsewhere.
    code, out, _ = run_cli("check", files["divider"], "R1/(R1 + R2)")
    assert code == 1
    assert "  - agrees when R1 and R2 are exchanged\n" in out
    assert "  - equal at your values of R1, R2 but not in general: they differ at other values\n" in out
    line = next(ln for ln in out.splitlines() if ln.startswith("  - at "))
    assert "1e+04, R2 = 1e+04" not in line and "0 dB apart" not in line
    from symfilt.model.circuit_file import load_circuit

    assert "equal at your values of R1, R2 but not in general" in api_lines("R1/(R1 + R2)",
                                                                          load_circuit(files["divider"]), "transfer")


def test_a_name_written_for_another(run_cli, files):
    # Inverting amplifier, ideal op-amp: H = -R2/R1 (common practice); R3 (+ input to ground) is not in it.
    code, out, _ = run_cli("check", files["inverting"], "-R3/R1")
    assert code == 1
    assert "  - agrees when R3 is read as R2: R3 was written for R2\n" in out
    from symfilt.model.circuit_file import load_circuit

    inv = load_circuit(files["inverting"])
    assert "agrees when R3 is read as R2: R3 was written for R2" in api_lines("-R3/R1", inv, "transfer")
    text = api_lines("R1/R2", inv, "transfer")
    assert "a sign was lost (together with the next slip)" in text
    assert "agrees when R1 and R2 are exchanged (together with the slip above)" in text


def test_a_claim_may_start_with_a_minus_sign_and_sign_plus_exchange_is_a_pair(run_cli, files):
    code, out, err = run_cli("check", files["inverting"], "-R2/R1")
    assert (code, err) == (0, "") and out.startswith("equal:")
    code, out, _ = run_cli("check", files["inverting"], "R1/R2")
    assert code == 1
    assert "  - agrees up to sign: a sign was lost (together with the next slip)\n" in out
    assert "  - agrees when R1 and R2 are exchanged (together with the slip above)\n" in out


def test_one_wrong_coefficient_is_named_by_power_of_s(run_cli):
    # Sallen-Key denominator 1 + s C2 (R1 + R2 + R_s) + s^2 C1 C2 R2 (R1 + R_s) (TI SLOA024, from
    # memory, R_s in series with R1): the claim leaves R_s out of the s^2 term only.
    claim = "1/(1 + s*C2*(R1 + R2 + R_s) + s^2*C1*C2*R1*R2)"
    code, out, _ = run_cli("check", "@sallen-key-lowpass", claim)
    assert code == 1
    wanted = ("first difference in the denominator's coefficient of s^2 (N(s)/D(s) with D's lowest "
              "coefficient 1): expected C1*C2*R2*(R1 + R_s), got C1*C2*R1*R2")
    assert f"  - {wanted}\n" in out
    assert wanted in api_lines(claim, catalogue.build("sallen-key-lowpass"), "transfer")


def test_two_pi_and_a_left_out_load_together(run_cli):
    # Loaded RC low-pass: w_c = 1/(C1 ((R_s + R1) || R_L)) in rad/s (Thevenin, common practice).
    # The claim is in Hz and without the load: two slips at once.
    claim = "1/(2*pi*C1*(R1 + R_s))"
    code, out, _ = run_cli("check", "@rc-lowpass", claim, "--quantity", "cutoff")
    assert code == 1
    assert "  - agrees when R_L -> oo: the load was left out (together with the next slip)\n" in out
    assert ("  - differs by a factor 2*pi: Hz vs rad/s mixed up (the claim is the derived result divided "
            "by 2*pi) (together with the slip above)\n") in out
    text = api_lines(claim, catalogue.build("rc-lowpass"), "cutoff")
    assert "the load was left out" in text and "Hz vs rad/s" in text


def test_prefixes_are_dropped(run_cli):
    code, out, _ = run_cli("check", "@rc-lowpass", "H(s) = R_L/(R_s + R1 + R_L + s*C1*R_L*(R_s + R1))")
    assert code == 0, out
    code, out, _ = run_cli("check", "@rc-lowpass", "ωc = 1/(C1*((R1 + R_s) || R_L))", "--quantity", "cutoff")
    assert code == 0, out


def test_parallel_binds_like_a_product_tighter_than_a_sum():
    a, b, c = sympy.symbols("a b c", positive=True)
    t = {"a": a, "b": b, "c": c}
    par = lambda x, y: x * y / (x + y)
    for text, want in (("a + b || c", a + par(b, c)), ("a || b + c", par(a, b) + c), ("2*a || b", par(2 * a, b)),
                       (r"a + b \parallel c", a + par(b, c)), (r"\frac{a}{2} \parallel b - c", par(a / 2, b) - c)):
        assert sympy.cancel(parse_claim(text, t) - want) == 0, text


def test_gains_keep_their_decibels(run_cli, files):
    code, out, _ = run_cli("check", files["inverting"], "-R2/(R1 + R3)", "--quantity", "dc-gain")
    assert code == 1
    assert "dB apart" in out
