"""Issue 15: inputs that make sense. Each case of the issue, its message word for word, exit 2
(or the warning on stderr and exit 0). The SI prefixes and unit symbols are those of the SI
brochure (BIPM, The International System of Units, 9th ed., 2019, tables of prefixes and
derived units; from memory); the RKM code (4k7) is IEC 60062 (from memory)."""

from __future__ import annotations

import pytest

HEAD = '[ports]\ninput = "in"\noutput = "out"\n[parts]\n'


def rc(tmp_path, r="1k", c="22n", name="c.toml"):
    p = tmp_path / name
    p.write_text(HEAD + f'R1 = {{ kind = "resistor", nodes = ["in", "out"], value = "{r}" }}\n'
                        f'C1 = {{ kind = "capacitor", nodes = ["out", "0"], value = "{c}" }}\n')
    return str(p)


@pytest.mark.parametrize("c, words", [
    ("22nH", "value '22nH' is in henries (an inductance), but C1 is a capacitor"),
    ("10kΩ", "value '10kΩ' is in ohms (a resistance), but C1 is a capacitor"),
])
def test_a_unit_that_contradicts_the_kind(run_cli, tmp_path, c, words):
    path = rc(tmp_path, c=c)
    code, out, err = run_cli("derive", path)
    assert (code, out) == (2, "")
    assert err == (f"error: c.toml [parts] C1: {words}, give a capacitor its value in farads, "
                   "or check the part's kind\n")


def test_a_resistor_given_in_farads(run_cli, tmp_path):
    code, _out, err = run_cli("derive", rc(tmp_path, r="1kF"))
    assert code == 2
    assert err == ("error: c.toml [parts] R1: value '1kF' is in farads (a capacitance), but R1 is a resistor, "
                   "give a resistor its value in ohms, or check the part's kind\n")


@pytest.mark.parametrize("r, c, warning", [
    ("1k", "22", "warning: part C1: read as 22 F, above 1 F for a capacitor, check the prefix: a bare number is "
                 "in farads (22n is 22 nF, 22u is 22 µF)\n"),
    ("1m", "22n", "warning: part R1: read as 1 mΩ, below 10 mΩ for a resistor, check the prefix: m is milli, "
                  "M is mega (1M is 1 MΩ)\n"),
    ("2T", "22n", "warning: part R1: read as 2 TΩ, above 1 TΩ for a resistor, check the prefix: m is milli, "
                  "M is mega (1M is 1 MΩ)\n"),
])
def test_an_implausible_value_is_a_warning_saying_what_was_read(run_cli, tmp_path, r, c, warning):
    code, out, err = run_cli("derive", rc(tmp_path, r=r, c=c), "--quantity", "cutoff")
    assert code == 0 and out.startswith("cutoff")
    assert err == warning


def test_plausible_values_are_silent(run_cli, tmp_path):
    code, _out, err = run_cli("derive", rc(tmp_path, r="4k7", c="100p"), "--quantity", "cutoff")
    assert (code, err) == (0, "")


def test_an_output_not_reached_is_an_error_with_the_likely_typo(run_cli, tmp_path):
    p = tmp_path / "typo.toml"
    p.write_text(HEAD + 'R1 = { kind = "resistor", nodes = ["in", "a"], value = "10k" }\n'
                        'R2 = { kind = "resistor", nodes = ["a", "0"], value = "10k" }\n'
                        'C1 = { kind = "capacitor", nodes = ["ot", "0"], value = "10n" }\n'
                        'R3 = { kind = "resistor", nodes = ["out", "0"], value = "10k" }\n')
    code, out, err = run_cli("derive", str(p))
    assert (code, out) == (2, "")
    assert err == ("error: circuit: H(s) = 0, the output out is not reached from the input in, "
                   "check node ot (C1): did you mean out?\n")
    for command in (("size", str(p), "--target", "cutoff=1k", "--vary", "R1"), ("check", str(p), "0")):
        code, _out, err2 = run_cli(*command)
        assert (code, err2) == (2, err)


@pytest.mark.parametrize("value, words", [
    ("1meg", "value '1meg' is not understood (mega is M; m is milli), write 1M"),
    ("22nf", "value '22nf' is not understood (the farad is a capital F; f is femto), write 22n (or 22nF)"),
    ("4,7k", "value '4,7k' is not understood (the decimal mark is a point), write 4.7k or 4k7"),
])
def test_suffix_messages_name_the_near_miss(run_cli, tmp_path, value, words):
    code, out, err = run_cli("derive", rc(tmp_path, r=value if value != "22nf" else "1k",
                                          c=value if value == "22nf" else "22n"))
    assert (code, out) == (2, "")
    part = "C1" if value == "22nf" else "R1"
    assert err == f"error: c.toml [parts] {part}: {words}\n"
