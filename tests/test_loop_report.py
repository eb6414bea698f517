"""The loop-gain section of `symfilt derive`: margins, the unstable statement and the polarity error.

The loop is broken at the op-amp's controlled source (the return-ratio method);
the phase margin is 180° + arg T(jωc) at |T(jωc)| = 1 (common practice: the
definition in every feedback textbook, e.g. Franco, *Design with Operational
Amplifiers and Analog Integrated Circuits*, stability chapter, from memory; see
tests/REFERENCES.md, "Real op-amps", op-amp loop gain).
"""

from __future__ import annotations

import json
import math

import pytest
from scipy.optimize import brentq

FOLLOWER = """
title = "Follower into a cable"
[load]
resistance = "{rl}"
capacitance = "{cl}"
[parts]
R1 = {{ kind = "resistor", nodes = ["in", "p"], value = "1k" }}
U1 = {{ kind = "opamp", plus = "p", minus = "out", out = "out", model = "{model}", gain = "100k", gbw = "{gbw}"{extra} }}
"""


def _file(tmp_path, name="c.toml", **kw):
    kw.setdefault("rl", "none")
    kw.setdefault("cl", "none")
    kw.setdefault("model", "single-pole")
    kw.setdefault("gbw", "1M")
    kw.setdefault("extra", ', rout = "50"')
    path = tmp_path / name
    path.write_text(FOLLOWER.format(**kw))
    return str(path)


def _follower_margin(a0, gbw, rout, cl, rl=math.inf):
    """Closed form: T(s) = A0·ωa/(s + ωa) · k/(1 + s·Cl·(Rout || Rl)), k = Rl/(Rl + Rout),
    ωa = 2π·GBW/A0 (a single-pole op-amp whose output resistance and the load form a
    second pole; common practice). Returns (crossover Hz, phase margin in degrees)."""
    wa = 2 * math.pi * gbw / a0
    k = 1.0 if math.isinf(rl) else rl / (rl + rout)
    rpar = rout if math.isinf(rl) else rout * rl / (rout + rl)
    wl = 1 / (cl * rpar)
    mag = lambda w: a0 * k / math.hypot(1, w / wa) / math.hypot(1, w / wl)
    wc = brentq(lambda w: mag(w) - 1, wa, 1e3 * 2 * math.pi * gbw)
    return wc / (2 * math.pi), 180 - math.degrees(math.atan(wc / wa)) - math.degrees(math.atan(wc / wl))


def test_phase_margin_of_a_follower_into_a_capacitor_matches_the_closed_form(run_cli, tmp_path):
    code, out, _err = run_cli("derive", _file(tmp_path, rl="10k", cl="10n"), "--format", "json")
    assert code == 0
    loop = json.loads(out)["loops"]["U1"]
    fc, pm = _follower_margin(1e5, 1e6, 50, 10e-9, 10e3)
    got = loop["loaded"]["numbers"]
    assert got["crossover_hz"] == pytest.approx(fc, rel=1e-6)
    assert got["phase_margin_deg"] == pytest.approx(pm, abs=1e-6)
    # Alone (C_L -> 0, R_L -> oo) the load pole is gone: one pole, about 90° (common practice).
    assert loop["ideal"]["numbers"]["phase_margin_deg"] == pytest.approx(90.0, abs=0.6)
    assert loop["feedback"] == "negative" and loop["loaded"]["margin_warning"] is True
    assert loop["ideal"]["margin_warning"] is False


def test_low_phase_margin_is_warned_in_the_text_and_names_the_op_amp(run_cli, tmp_path):
    code, out, _err = run_cli("derive", _file(tmp_path, cl="10n"))
    assert code == 0
    _fc, pm = _follower_margin(1e5, 1e6, 50, 10e-9)
    assert pm < 45
    assert f"WARNING (loaded): U1's phase margin is {pm:.1f}°, below the 45° of common practice" in out
    assert "phase margin" in out and "crossover" in out


def test_no_capacitive_load_gives_no_margin_warning(run_cli, tmp_path):
    code, out, _err = run_cli("derive", _file(tmp_path, rl="10k"))
    assert code == 0
    assert "Loop gain at each op-amp" in out and "WARNING" not in out


def test_an_unstable_loaded_stage_says_so_and_gives_no_cutoff(run_cli, tmp_path):
    # Two poles (GBW 10 MHz, second pole 5 MHz) and Rout·C_L = 10 µs: far past the
    # crossover budget, the loaded loop's phase margin is negative.
    path = _file(tmp_path, cl="100n", model="two-pole", gbw="10M", extra=', pole2 = "5M", rout = "100"')
    code, out, _err = run_cli("derive", path)
    assert code == 0
    assert "UNSTABLE (loaded): poles in the right half-plane; the numbers below do not describe a working circuit" in out
    numbers = out.split("Numbers at the given values")[1]
    cutoff_row = next(line for line in numbers.splitlines() if line.strip().startswith("cutoff "))
    assert cutoff_row.split()[1:3] == ["unstable", "10"]
    code, out, _err = run_cli("derive", path, "--format", "json")
    data = json.loads(out)
    assert data["numeric"]["loaded"]["stability"] == "unstable"
    assert "cutoff_hz" not in data["numeric"]["loaded"]
    assert data["numeric"]["ideal"]["stability"] == "stable" and data["numeric"]["ideal"]["cutoff_hz"] > 0
    assert data["loops"]["U1"]["loaded"]["numbers"]["phase_margin_deg"] < 0


def test_an_ideal_op_amp_has_no_margins_but_its_polarity_is_checked(run_cli, tmp_path):
    code, out, _err = run_cli("derive", "@sallen-key-lowpass")
    assert code == 0
    assert "U1 (ideal model): negative feedback" in out
    assert "the ideal op-amp's loop gain is unbounded: no margins" in out
    code, out, _err = run_cli("derive", "@sallen-key-lowpass", "--format", "json")
    loop = json.loads(out)["loops"]["U1"]
    assert loop["loaded"]["loop_gain"] is None and loop["loaded"]["numbers"] == {}


SWAPPED = """
[source]
resistance = "1k"
[parts]
R1 = { kind = "resistor", nodes = ["in", "a"], value = "10k" }
R2 = { kind = "resistor", nodes = ["a", "b"], value = "10k" }
C1 = { kind = "capacitor", nodes = ["a", "out"], value = "22n" }
C2 = { kind = "capacitor", nodes = ["b", "0"], value = "10n" }
U1 = { kind = "opamp", plus = "out", minus = "b", out = "out" }
"""


def test_swapped_inputs_are_one_error_line_and_exit_2(run_cli, tmp_path):
    path = tmp_path / "swapped.toml"
    path.write_text(SWAPPED)
    code, out, err = run_cli("derive", str(path))
    assert code == 2 and out == ""
    assert err == ("error: part U1: the feedback is positive: the output returns to the + input (node out) more "
                   "than to the - input (node b), so the stage latches instead of settling, swap plus and minus, "
                   "or take the feedback to the - input\n")
    path.write_text(SWAPPED.replace('plus = "out", minus = "b"', 'plus = "b", minus = "out"'))
    assert run_cli("derive", str(path))[0] == 0


def test_substitute_puts_values_into_the_loop_formulas(run_cli, tmp_path):
    code, out, _err = run_cli("derive", _file(tmp_path, cl="10n"), "--substitute", "--format", "json")
    assert code == 0
    loop = json.loads(out)["loops"]["U1"]["loaded"]
    assert "Rout_U1" not in loop["beta"] and "C_L" not in loop["loop_gain"]


def test_margins_that_need_values_name_the_missing_symbol(run_cli, tmp_path):
    code, out, _err = run_cli("derive", _file(tmp_path, cl="10n"), "--opamp-model", "two-pole")
    assert code == 0
    assert "U1 (two-pole model): negative feedback" in out
    assert "margins need values: give P2_U1 a value" in out


def test_an_open_loop_op_amp_is_said_to_have_no_feedback(run_cli, tmp_path):
    path = tmp_path / "open.toml"
    path.write_text('[parts]\nR1 = { kind = "resistor", nodes = ["out", "0"], value = "1k" }\n'
                    'U1 = { kind = "opamp", plus = "in", minus = "0", out = "out", model = "gain", gain = "1k" }\n')
    code, out, _err = run_cli("derive", str(path))
    assert code == 0
    assert "U1 (gain model): no feedback: nothing of the output returns to the inputs (open loop)" in out
    assert "crossover                   none" in out


def test_zout_numbers_of_a_real_follower(run_cli, tmp_path):
    # Closed-loop output resistance of a follower: Rout/(1 + A·β) with β = 1 at DC (a standard
    # feedback result; Sedra & Smith, Microelectronic Circuits, feedback chapter, from memory;
    # tests/REFERENCES.md "Real op-amps", op-amp output resistance). Here 50/(1 + 100k).
    code, out, _err = run_cli("derive", _file(tmp_path, rl="10k"), "--format", "json")
    assert code == 0
    numeric = json.loads(out)["numeric"]
    assert numeric["ideal"]["zout_dc_ohm"] == pytest.approx(50 / (1 + 1e5), rel=1e-9)
    # Derived by hand: with A(s) = A0·ωa/(s + ωa), ωa = 2π·GBW/A0, the follower alone has
    # H = A/(1 + A) = A0·ωa/(s + ωc), ωc = ωa·(1 + A0), and Zout = Rout/(1 + A) = Rout·(s + ωa)/(s + ωc),
    # so at its cutoff |Zout(jωc)| = Rout·√(ωc² + ωa²)/(√2·ωc).
    wa = 2 * math.pi * 1e6 / 1e5
    wc = wa * (1 + 1e5)
    assert numeric["ideal"]["zout_cutoff_ohm"] == pytest.approx(50 * math.hypot(wc, wa) / (math.sqrt(2) * wc), rel=1e-6)


def test_one_quantity_asked_for_prints_only_that(run_cli, tmp_path):
    # The automatic op-amp error and the loop section belong to the full report only.
    code, out, _err = run_cli("derive", _file(tmp_path, cl="10n"), "--quantity", "zout")
    assert code == 0
    assert out.startswith("Zout, loaded = ") and "Op-amp error" not in out and "Loop gain" not in out


def test_a_negative_op_amp_parameter_is_named_with_its_key_and_shown_as_written(run_cli, tmp_path):
    path = _file(tmp_path, extra=', cin = "-1p"')
    code, out, err = run_cli("derive", path)
    assert code == 2 and out == ""
    assert err.startswith("error: ") and "U1 cin: value -1p must be positive" in err and err.count("\n") == 1
