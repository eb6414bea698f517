"""Sensitivities of the pass-band gain K and of |H(jw)| at a chosen frequency, and the
integrator op-amp model.

Outside checks: hand-derived gains (nodal analysis, common practice; the MFB band-pass centre
gain as published, see tests/REFERENCES.md "Sensitivity and tolerances"), finite differences of
|H(jw)| evaluated by scipy.signal.freqs, and the integrator model as the A0 -> oo limit of the
single-pole model (Sedra & Smith, from memory; REFERENCES.md "First order").
"""

from __future__ import annotations

import json
import math

import pytest
import sympy
from click.testing import CliRunner
from scipy import signal

from helpers import same
from symfilt import analyse
from symfilt.analysis.network import derive
from symfilt.cli import cli
from symfilt.errors import UsageError
from symfilt.model.circuit import Circuit, Part

R1, R3, C1, C2, Rs, RL = sympy.symbols("R1 R3 C1 C2 R_s R_L", positive=True)


def _s(y, x):
    """S_x^y = (x/y) dy/dx by sympy differentiation of a hand formula."""
    return x * sympy.diff(y, x) / y


def test_high_pass_gain_sensitivity_is_the_hf_gain():
    # RC high-pass (C1 in->out, R1 out->ground) between R_s and R_L: its DC gain is 0, so only the
    # pass-band (HF) gain K = (R1 || R_L)/(R_s + R1 || R_L) has sensitivities (Thevenin; common practice).
    c = Circuit.build([Part.capacitor("C1", "in", "out"), Part.resistor("R1", "out", "0")],
                      source="symbol", load="symbol")
    a = analyse(c)
    assert a.loaded.sensitivity["dc_gain"] is None
    par = R1 * RL / (R1 + RL)
    k = par / (Rs + par)
    table = a.loaded.sensitivity["gain"]
    for x in (R1, Rs, RL):
        assert same(table[str(x)], _s(k, x)), x
    assert same(table["C1"], 0)
    assert {r.quantity for r in a.rules} >= {"gain"} and all(r.holds for r in a.rules)


def test_band_pass_centre_gain_sensitivity():
    # MFB band-pass: R1 in->x, R2 x->ground, C1 x->out, C2 x->n, R3 n->out, op-amp + at ground, - at n.
    # Nodal analysis (common practice): H = -(s C2 R3/R1)/(1/R1 + 1/R2 + s(C1 + C2) + s^2 C1 C2 R3), so
    # the gain at w0 is K = -R3 C2/(R1 (C1 + C2)); -R3/(2 R1) for C1 = C2 as the MFB band-pass design
    # equations give it (Texas Instruments, Op Amps for Everyone, active filter design chapter; from memory).
    c = Circuit.build([Part.resistor("R1", "in", "x"), Part.resistor("R2", "x", "0"),
                       Part.capacitor("C1", "x", "out"), Part.capacitor("C2", "x", "n"),
                       Part.resistor("R3", "n", "out"), Part.opamp("U1", "0", "n", "out")])
    a = analyse(c)
    assert a.ideal.form.kind == "bandpass"
    k = -R3 * C2 / (R1 * (C1 + C2))
    assert same(a.ideal.form.gain, k)
    table = a.ideal.sensitivity["gain"]
    for x in (R1, R3, C1, C2):
        assert same(table[str(x)], _s(k, x)), x
    assert same(table["R2"], 0)


def _magnitude(c: Circuit, f_hz: float) -> float:
    """|H(j 2 pi f)| from the derived coefficients, evaluated by scipy.signal.freqs."""
    num, den = derive(c).coefficient_values(c.values())
    _, h = signal.freqs(num[::-1], den[::-1], worN=[2 * math.pi * f_hz])
    return abs(h[0])


def _sallen_key_highpass(**values):
    """C1 in->a, C2 a->b, R1 a->out (feedback), R2 b->ground, unity follower: + at b, - and out at out."""
    v = {"C1": "10n", "C2": "10n", "R1": "8k2", "R2": "16k"} | values
    return Circuit.build([Part.capacitor("C1", "in", "a", v["C1"]), Part.capacitor("C2", "a", "b", v["C2"]),
                          Part.resistor("R1", "a", "out", v["R1"]), Part.resistor("R2", "b", "0", v["R2"]),
                          Part.opamp("U1", "b", "out", "out")], source="600", load="10k")


def test_magnitude_sensitivity_at_a_frequency_matches_differences():
    c = _sallen_key_highpass()
    f = 1000.0
    a = analyse(c, at="1k")
    assert a.at_hz == 1000
    got = a.numeric["loaded"]["sensitivity"]["magnitude"]
    base = _magnitude(c, f)
    step = 1e-6
    for name in ("C1", "C2", "R1", "R2"):
        value = sympy.Rational(str(c.values()[sympy.Symbol(name, positive=True)]))
        bumped = _sallen_key_highpass(**{name: value * (1 + sympy.Rational(1, 10**6))})
        diff = math.log(_magnitude(bumped, f) / base) / math.log(1 + step)
        assert got[name] == pytest.approx(diff, rel=1e-4), name
    # Impedance scaling leaves |H(jw)| unchanged: sum over R minus sum over C is 0.
    assert sum(got.get(n, 0) for n in ("R1", "R2", "R_s", "R_L")) - got["C1"] - got["C2"] == pytest.approx(0, abs=1e-9)
    assert any(r.quantity == "magnitude" and r.holds for r in a.rules)


def test_at_needs_a_positive_frequency():
    with pytest.raises(UsageError, match="positive frequency"):
        analyse(_sallen_key_highpass(), at="-5")


def test_cli_at_adds_the_magnitude_table():
    result = CliRunner().invoke(cli, ["derive", "@sallen-key-highpass", "--at", "2k", "--format", "json"])
    assert result.exit_code == 0, result.output
    data = json.loads(result.output)
    assert set(data["numeric"]["loaded"]["sensitivity"]["magnitude"]) >= {"C1", "R1"}
    text = CliRunner().invoke(cli, ["derive", "@sallen-key-highpass", "--at", "2k"]).output
    assert "|H(jω)| at 2 kHz" in text
    bad = CliRunner().invoke(cli, ["derive", "@sallen-key-highpass", "--at", "2x"])
    assert bad.exit_code == 2 and bad.output.count("\n") == 1 and "--at" in bad.output


# --- the integrator op-amp model -------------------------------------------------------------

def _inverting_amp(model: str, gain=None):
    """R1 in->n, R2 n->out, op-amp + at ground, - at n: an inverting amplifier of -R2/R1."""
    return Circuit.build([Part.resistor("R1", "in", "n"), Part.resistor("R2", "n", "out"),
                          Part.opamp("U1", "0", "n", "out", model=model, gain=gain)])


def test_integrator_model_is_the_single_pole_limit():
    # Single pole A(s) = A0 wt/(A0 s + wt) -> wt/s as A0 -> oo (README "The op-amp model"); the
    # inverting amplifier's closed-loop bandwidth is then GBW/(1 + R2/R1) (Sedra & Smith, from memory).
    a0 = sympy.Symbol("A_U1", positive=True)
    single = derive(_inverting_amp("single-pole")).as_expr()
    integ = derive(_inverting_amp("integrator")).as_expr()
    assert same(sympy.limit(single, a0, sympy.oo), integ)
    r1, r2, gbw, s = sympy.Symbol("R1", positive=True), sympy.Symbol("R2", positive=True), \
        sympy.Symbol("GBW_U1", positive=True), sympy.Symbol("s")
    wt = 2 * sympy.pi * gbw
    assert same(integ, -(r2 / r1) / (1 + s * (r1 + r2) / (r1 * wt)))
    a = analyse(_inverting_amp("integrator"))
    assert a.ideal.form.kind == "lowpass" and same(a.ideal.form.w0, wt * r1 / (r1 + r2))
    assert same(a.ideal.transfer.dc_gain(), -r2 / r1)  # infinite DC gain: no error at DC


def test_integrator_model_loop_and_file():
    from symfilt.model.circuit_file import parse_circuit_text
    text = """
[ports]
input = "in"
output = "out"
[parts]
R1 = { kind = "resistor", nodes = ["in", "n"], value = "10k" }
R2 = { kind = "resistor", nodes = ["n", "out"], value = "10k" }
U1 = { kind = "opamp", plus = "0", minus = "n", out = "out", model = "integrator", gbw = "1M" }
"""
    c = parse_circuit_text(text)
    a = analyse(c, sensitivity=False)
    # Unity-gain inverting stage, beta = 1/2: crossover at GBW/2, a one-pole loop: 90° margin (common practice).
    loop = a.loops[0]
    assert loop.model == "integrator"
    assert loop.ideal.numbers["crossover_hz"] == pytest.approx(5e5, rel=1e-9)
    assert loop.ideal.numbers["phase_margin_deg"] == pytest.approx(90.0, abs=1e-6)
    assert a.numeric["ideal"]["cutoff_hz"] == pytest.approx(5e5, rel=1e-9)
    assert "A_U1" not in c.symbols()
