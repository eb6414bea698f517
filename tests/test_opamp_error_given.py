"""The op-amp error section on its own: the circuit as given against ideal op-amps.

Sources are named beside each check (tests/REFERENCES.md, "Real op-amps").
"""

from dataclasses import replace

import pytest
import sympy

from symfilt import catalogue
from symfilt.design.opamp_error import AS_GIVEN, ideal_opamps, needs_opamp_error, opamp_error
from symfilt.design.report import report
from symfilt.export.design_report import opamp_error_dict, opamp_error_text, relative_error_text


def _follower_lowpass(**values):
    c = catalogue.build("sallen-key-lowpass").with_values({"R_L": "10k"})
    return c.with_opamp_model("single-pole", gain="100k", gbw="1M").with_values(values)


def test_runs_by_itself_only_for_real_opamps():
    ideal = catalogue.build("sallen-key-lowpass")
    assert report(ideal, sensitivity=False).opamp_error is None
    assert not needs_opamp_error(ideal)
    r = report(ideal.with_values({"Rin_U1": "1M"}), sensitivity=False)
    assert r.opamp_error is not None and r.opamp_error.model == AS_GIVEN
    r = report(_follower_lowpass(), sensitivity=False)
    assert r.opamp_error.model == AS_GIVEN
    # the shown analysis is the circuit as given
    assert r.circuit.part("U1").model == "single-pole"


def test_opamp_model_option_keeps_its_meaning():
    r = report(catalogue.build("inverting-lowpass"), opamp_model="gain", sensitivity=False)
    assert r.opamp_error.model == "gain"
    # Sedra & Smith, Microelectronic Circuits, ch. 2 (from memory): inverting gain with
    # open-loop gain A has first-order relative error -(1 + R2/R1)/A; R_s adds to R1
    R1, R2, Rs = sympy.symbols("R1 R2 R_s", positive=True)
    assert sympy.simplify(r.opamp_error.dc_first_order["A_U1"] + (R1 + R2 + Rs) / (R1 + Rs)) == 0


def test_as_given_gain_model_matches_the_switched_model():
    c = catalogue.build("inverting-lowpass").with_opamp_model("gain", gain="100k")
    given, switched = opamp_error(c, None), opamp_error(c, "gain")
    assert given.dc_first_order == switched.dc_first_order
    assert given.numeric["dc_gain"]["error"] == pytest.approx(switched.numeric["dc_gain"]["error"], rel=1e-12)


def test_ideal_view_drops_rout_rin_cin():
    c = _follower_lowpass(Rout_U1="100", Rin_U1="1M", Cin_U1="5p")
    u = ideal_opamps(c).part("U1")
    assert u.model == "ideal" and not (u.rout.present or u.rin.present or u.cin.present)


def test_rout_gives_the_exact_error_only():
    # derived by hand in the test: at DC the capacitors are open and no current flows in R1,
    # R2, so V+ = V_in; the output is A (V+ - V_out) through Rout into R_L:
    # H(0) = A R_L / (A R_L + R_L + Rout), relative error -(R_L + Rout)/(A R_L + R_L + Rout)
    e = opamp_error(_follower_lowpass(Rout_U1="100"), None)
    A, RL, Ro = sympy.symbols("A_U1 R_L Rout_U1", positive=True)
    assert sympy.simplify(e.dc_error + (RL + Ro) / (A * RL + RL + Ro)) == 0
    assert e.numeric["dc_gain"]["error"] == pytest.approx(-(1e4 + 100) / (1e5 * 1e4 + 1e4 + 100), rel=1e-9)
    assert e.dc_first_order == {} and e.cutoff_first_order is None
    assert e.numeric["dc_gain"]["first_order"] is None
    assert any(n.kind == "opamp-error-exact-only" for n in e.notes)
    text = opamp_error_text(e)
    assert "exact error only" in text and "rout stay as the open-loop gain grows" in text
    assert "-10.1 ppm" in text  # -(10100)/(1e9 + 10100) = -10.1 ppm, by hand above


def test_two_pole_first_order_terms():
    # common practice: a unity follower with open-loop gain A gives A/(1 + A), relative
    # error -1/(1 + A), first order -1/A. The second pole P2 enters only with 1/GBW as well
    # (A(s) -> oo as 1/A and 1/GBW -> 0 whatever P2), so no first-order 1/P2 term:
    # derived by hand in the test
    c = catalogue.build("sallen-key-lowpass").with_opamp_model("gain")
    c = c.with_values({"A_U1": "100k"})
    two = replace(c, parts=tuple(replace(p, model="two-pole", gbw=sympy.Integer(10**6), pole2=sympy.Integer(10**7))
                                 if p.kind == "opamp" else p for p in c.parts))
    e = opamp_error(two, None)
    A = sympy.Symbol("A_U1", positive=True)
    assert sympy.simplify(e.dc_error + 1 / (A + 1)) == 0
    assert set(e.dc_first_order) == {"A_U1"}
    assert sympy.simplify(e.dc_first_order["A_U1"] + 1) == 0
    n = e.numeric["cutoff_hz"]
    # first-order estimate near the exact error (the 1/(GBW P2) terms are second order)
    assert n["first_order"] == pytest.approx(n["error"], rel=0.1)


def test_percent_and_ppm():
    assert relative_error_text(-0.0123456) == "-1.235 %"
    assert relative_error_text(0.00009) == "90 ppm"
    assert relative_error_text(0.0001) == "0.01 %"
    d = opamp_error_dict(opamp_error(_follower_lowpass(), None))
    cut = d["numeric"]["cutoff_hz"]
    assert cut["error_percent"] == pytest.approx(100 * cut["error"])
    assert cut["first_order_percent"] == pytest.approx(100 * cut["first_order"])
    assert d["model"] == "as given"


def test_note_has_a_real_opamps_section(tmp_path):
    from symfilt.export.note_write import write_note

    written = write_note(_follower_lowpass(Rout_U1="100"), tmp_path / "sk.md")
    md = written[-1].read_text(encoding="utf-8")
    assert "## Real op-amps" in md
    # derived by hand above (test_rout_gives_the_exact_error_only): -10.1 ppm DC error
    assert "error -10.1 ppm" in md and "exact one, real against ideal" in md
    plain = write_note(catalogue.build("sallen-key-lowpass"), tmp_path / "plain.md")[-1].read_text(encoding="utf-8")
    assert "Real op-amps" not in plain


def test_second_order_cutoff_error_is_a_number_only():
    # A second-order real cutoff over the ideal one has a root inside a root (w_c = w0
    # sqrt(x + sqrt(x^2 + 1)), REFERENCES.md "Second-order low-pass -3 dB frequency"): its exact
    # relative error is not shown, the number is. Unity follower with gain A: H(0) = A/(1 + A)
    # (REFERENCES.md, "Real op-amps and the high-frequency floor").
    e = opamp_error(catalogue.build("sallen-key-lowpass"), "gain", gain="100k")
    assert e.cutoff_error is None
    assert "cutoff-error-too-large" in [n.kind for n in e.notes]
    assert e.numeric["cutoff_hz"]["error"] is not None
    assert abs(e.numeric["dc_gain"]["error"] - (-1 / (1 + 1e5))) < 1e-12
    # a first-order stage keeps its exact error. Inverting amplifier with finite A (Sedra & Smith,
    # REFERENCES.md "First order"), Z2 = R2 || C1 in place of R2 and R1 + R_s in place of R1:
    # the denominator 1 + s C1 R2 + (1 + R2/(R1 + R_s) + s C1 R2)/A has its root at
    # w_c = (1 + (1 + R2/(R1 + R_s))/A)/(C1 R2 (1 + 1/A)), so w_c/w_ideal - 1 = R2/((A + 1)(R1 + R_s)).
    f = opamp_error(catalogue.build("inverting-lowpass"), "gain")
    A, R1, R2, R_s = sympy.symbols("A_U1 R1 R2 R_s", positive=True)
    assert f.cutoff_error is not None
    assert sympy.cancel(f.cutoff_error - R2 / ((A + 1) * (R1 + R_s))) == 0


def test_a_cutoff_the_opamp_does_not_touch_has_a_zero_estimate():
    # An RC low-pass followed by a non-inverting buffer: the cutoff is the RC's alone, 1/(2 pi R C),
    # whatever the op-amp's gain (common practice: the buffer's input draws no current). Exact error
    # and every first-order term are zero, so the first-order estimate is 0 as well, not "missing",
    # even with A left without a value.
    e = opamp_error(catalogue.build("noninverting-lowpass"), "gain")
    assert e.cutoff_error == 0 and e.cutoff_first_order == {}
    n = e.numeric["cutoff_hz"]
    assert n["error"] == 0 and n["first_order"] == 0.0
    assert "first-order estimate 0 ppm" in opamp_error_text(e)
