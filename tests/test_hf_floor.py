"""The high-frequency end of a stage: stop-band floor |H(j oo)| or the asymptotic slope, and the Bode plot's floor.

Sources are named beside each check (tests/REFERENCES.md, "High-frequency floor").
"""

import math

import numpy as np
import pytest

from symfilt import catalogue
from symfilt.analysis.bode import bode_data, default_range, flattening_hz
from symfilt.analysis.stage import analyse
from symfilt.export.json import analysis_dict
from symfilt.export.note import number_rows
from symfilt.export.plot import render_bode
from symfilt.export.text import render

R1, R2, C1, C2 = 6800.0, 15000.0, 10e-9, 3.3e-9  # catalogue sallen-key-lowpass values
ROUT, A0, GBW = 100.0, 1e5, 1e6


def _floor_circuit(load_capacitance="1n"):
    """Unity-gain Sallen-Key low-pass, single-pole op-amp with Rout = 100 ohm, into 10 k (|| 1 nF)."""
    c = catalogue.build("sallen-key-lowpass").with_values({"R_L": "10k", "C_L": load_capacitance})
    return c.with_opamp_model("single-pole", gain="100k", gbw="1M").with_values({"Rout_U1": "100"})


@pytest.fixture(scope="module")
def floor_analysis():
    return analyse(_floor_circuit(), sensitivity=False)


def _par(*rs):
    return 1.0 / sum(1.0 / r for r in rs)


def _hand_ideal_view(f_hz):
    """|H(j 2 pi f)| of the ideal view (R_s = 0, open output), by our own nodal equations in numpy.

    Nodes a (R1, R2, C1 meet), b (R2, C2, op-amp +), out (C1, Rout, op-amp -); the op-amp's
    internal source E = A(s) (V_b - V_out), A(s) = A0 wt / (A0 s + wt), behind Rout to out.
    """
    s = 2j * math.pi * f_hz
    wt = 2 * math.pi * GBW
    a = A0 * wt / (A0 * s + wt)
    g1, g2, y1, y2, go = 1 / R1, 1 / R2, s * C1, s * C2, 1 / ROUT
    m = np.array([[g1 + g2 + y1, -g2, -y1],
                  [-g2, g2 + y2, 0],
                  [-y1, -go * a, y1 + go + go * a]], dtype=complex)
    rhs = np.array([g1, 0, 0], dtype=complex)
    return abs(np.linalg.solve(m, rhs)[2])


def test_ideal_opamp_lowpass_has_no_floor_and_falls_40_db_per_decade():
    # common practice: a second-order low-pass (numerator degree 0, denominator 2) falls
    # 40 dB/decade far above its poles and has no floor; REFERENCES.md "High-frequency floor"
    a = analyse(catalogue.build("sallen-key-lowpass"), sensitivity=False)
    for view in ("loaded", "ideal"):
        assert a.numeric[view]["hf_slope_db_per_decade"] == -40
        assert "hf_gain" not in a.numeric[view] and "hf_gain_db" not in a.numeric[view]
    assert "HF floor" not in render(a)


def test_highpass_level_is_its_pass_band_not_a_floor():
    # common practice: a high-pass passes high frequencies, |H(j oo)| is its pass-band gain
    a = analyse(catalogue.build("sallen-key-highpass"), sensitivity=False)
    assert a.numeric["ideal"]["hf_slope_db_per_decade"] == 0
    assert "hf_gain" not in a.numeric["ideal"]


def test_rout_floor_closed_form_and_value(floor_analysis):
    # derived by hand in the test: far above every pole C1 joins a to out, C2 grounds b and
    # A(s) -> 0, so the internal source is at 0 V: out sees R1 from the input and Rout || R2
    # to ground, |H(j oo)| = (Rout || R2) / (R1 + Rout || R2)
    hand = _par(ROUT, R2) / (R1 + _par(ROUT, R2))
    ideal = floor_analysis.numeric["ideal"]
    assert ideal["hf_gain"] == pytest.approx(hand, rel=1e-12)
    assert ideal["hf_gain_db"] == pytest.approx(20 * math.log10(hand), rel=1e-12)
    assert -40 < ideal["hf_gain_db"] < -35  # "near -40 dB": -36.83 dB
    assert ideal["hf_slope_db_per_decade"] == 0
    # the same floor from our own numpy nodal solve, far above the last pole (1 THz)
    assert 20 * math.log10(_hand_ideal_view(1e12)) == pytest.approx(ideal["hf_gain_db"], abs=1e-3)
    # the closed form of the floor is the view's hf_gain
    assert str(floor_analysis.ideal.transfer.hf_gain()) == "R2*Rout_U1/(R1*R2 + R1*Rout_U1 + R2*Rout_U1)"


def test_load_capacitance_takes_the_floor_away_in_the_loaded_view(floor_analysis):
    # derived by hand in the test: C_L shorts the output at s -> oo, so the loaded view has
    # numerator degree one below the denominator: -20 dB/decade, no floor
    loaded = floor_analysis.numeric["loaded"]
    assert loaded["hf_slope_db_per_decade"] == -20
    assert "hf_gain" not in loaded


def test_loaded_floor_without_load_capacitance():
    # derived by hand in the test: with R_s = 50 and R_L = 10 k and no C_L the loaded floor is
    # (Rout || R2 || R_L) / (R_s + R1 + Rout || R2 || R_L)
    a = analyse(_floor_circuit("none"), sensitivity=False)
    p = _par(ROUT, R2, 1e4)
    assert a.numeric["loaded"]["hf_gain"] == pytest.approx(p / (50 + R1 + p), rel=1e-12)


def test_floor_in_text_json_and_note(floor_analysis):
    text = render(floor_analysis)
    assert "HF floor (dB)" in text and "-36.834 dB" in text  # computed regression value
    d = analysis_dict(floor_analysis)
    assert d["numeric"]["ideal"]["hf_gain_db"] == pytest.approx(-36.8338619, abs=1e-6)  # computed regression value
    assert d["numeric"]["loaded"]["hf_slope_db_per_decade"] == -20
    labels = [(r["label"], r["unit"]) for r in number_rows(floor_analysis)]
    assert ("stop-band floor", "dB") in labels and ("slope far above the poles", "dB/decade") in labels


def test_bode_reaches_the_floor(floor_analysis):
    d = bode_data(floor_analysis, points=400)
    assert d.floors == {"ideal": pytest.approx(floor_analysis.numeric["ideal"]["hf_gain_db"])}
    flat = flattening_hz(floor_analysis.ideal.transfer, floor_analysis.circuit.values())
    assert d.f[-1] >= 10 * flat * 0.999
    assert d.f[-1] > default_range(d.marks)[1]  # extended past the usual two decades
    # the sweep ends on the floor (within 0.1 dB)
    assert float(d.ideal_db[-1]) == pytest.approx(d.floors["ideal"], abs=0.1)
    assert render_bode(d, "png")[:8] == b"\x89PNG\r\n\x1a\n"
    # an explicit fmax is kept
    assert bode_data(floor_analysis, fmax=1e5, points=10).f[-1] == pytest.approx(1e5)


def test_no_floor_keeps_the_range():
    a = analyse(catalogue.build("sallen-key-lowpass"), sensitivity=False)
    d = bode_data(a, points=10)
    assert d.floors == {}
    assert d.f[-1] == pytest.approx(default_range(d.marks)[1])


@pytest.mark.parametrize("ratio, floor", [(1.42, True), (1.40, False)])
def test_floor_needs_the_peak_3_db_above_the_level(ratio, floor):
    # REFERENCES.md ("Biquad with equal pole and zero frequencies"): the peak is Qp/Qz at w0 over a
    # level of 1 at DC and infinity; 1.42 is 3.05 dB, 1.40 is 2.92 dB, either side of the 3 dB rule.
    import sympy

    from symfilt.analysis.forms import cutoff, standard_form
    from symfilt.analysis.network import NetworkFunction
    from symfilt.analysis.numbers import high_frequency
    from symfilt.analysis.stage import StageResult

    s, w0, qz = sympy.Symbol("s"), sympy.Integer(1000), sympy.Rational(1, 2)
    qp = qz * sympy.Rational(ratio)
    h = NetworkFunction.from_expr((s**2 + s * w0 / qz + w0**2) / (s**2 + s * w0 / qp + w0**2))
    form = standard_form(h)
    assert form.kind == "general"
    out = high_frequency(StageResult(h, None, None, form, cutoff(form)), {})
    assert out["hf_slope_db_per_decade"] == 0
    assert ("hf_gain" in out) is floor
    if floor:
        assert out["hf_gain"] == pytest.approx(1.0, rel=1e-12)
