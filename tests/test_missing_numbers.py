"""Numbers that must not go missing: a view's numbers need only the symbols that view uses,
every response with values gets a cutoff, and a first order with a zero has a closed form.

Outside checks: scipy.signal.freqs (an independent evaluation of |H(jw)| from the
coefficients) and a bisection on it; the first-order-with-zero cutoff derived by hand
(tests/REFERENCES.md, "Numbers at the values").
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import sympy
from scipy import signal

from symfilt import analyse, catalogue
from symfilt.analysis.forms import first_order_zero_cutoff, standard_form
from symfilt.analysis.network import NetworkFunction
from symfilt.model.circuit import S, Circuit, Part


def _minus_3db(num_high_first, den_high_first, w_lo, w_hi, gain):
    """Bisection on log w for |H(jw)| = gain/sqrt(2), |H| from scipy.signal.freqs."""
    def excess(w):
        _, h = signal.freqs(num_high_first, den_high_first, worN=[w])
        return abs(h[0]) - abs(gain) / math.sqrt(2)
    lo, hi = math.log(w_lo), math.log(w_hi)
    assert excess(w_lo) > 0 > excess(w_hi)
    for _ in range(200):
        mid = (lo + hi) / 2
        if excess(math.exp(mid)) > 0:
            lo = mid
        else:
            hi = mid
    return math.exp((lo + hi) / 2)


def _ladder(source, load):
    """Three equal sections R = 1k, C = 1u: Rk from node k-1 to node k, Ck from node k to ground."""
    nodes = ["in", "n1", "n2", "out"]
    parts = []
    for k in range(1, 4):
        parts += [Part.resistor(f"R{k}", nodes[k - 1], nodes[k], "1k"), Part.capacitor(f"C{k}", nodes[k], "0", "1u")]
    return Circuit.build(parts, source=source, load=load)


def test_ladder_ideal_cutoff_needs_no_fixture_values():
    # The ideal view has R_s -> 0 and R_L -> oo: it holds neither, so symbolic fixtures
    # must not block its numbers.
    given = analyse(_ladder("600", "100k"), sensitivity=False).numeric["ideal"]
    symbolic = analyse(_ladder("symbol", "symbol"), sensitivity=False)
    ideal = symbolic.numeric["ideal"]
    assert ideal["cutoff_hz"] == pytest.approx(given["cutoff_hz"], rel=1e-12)
    # Independent: the unloaded 3-section ladder has D = 1 + 6x + 5x^2 + x^3, x = sRC
    # (common practice: nodal analysis by hand), |H| from scipy.signal.freqs.
    rc = 1e-3
    w = _minus_3db([1.0], [rc**3, 5 * rc**2, 6 * rc, 1.0], 1.0, 1e4, 1.0)
    assert ideal["cutoff_hz"] == pytest.approx(w / (2 * math.pi), rel=1e-9)
    # 0.19429/(2 pi R C): computed regression value (this bisection), 30.92 Hz at 1k, 1u.
    assert ideal["cutoff_hz"] * 2 * math.pi * rc == pytest.approx(0.19429, abs=5e-6)
    assert ideal["zout_dc_ohm"] == pytest.approx(3000.0)  # R1 + R2 + R3 with the source shorted
    assert "cutoff_hz" not in symbolic.numeric["loaded"]  # the loaded view does need R_s, R_L


def test_coefficient_values_skip_names_the_function_does_not_use():
    a = analyse(_ladder("symbol", "symbol"), sensitivity=False)
    values = a.circuit.values()
    assert a.ideal.transfer.coefficient_values(values) is not None
    assert a.loaded.transfer.coefficient_values(values) is None


def _inverting(rout="100", gain="100k"):
    """R1 in->n, R2 and C1 in parallel n->out, op-amp + at ground, - at n, output out (gain model, Rout)."""
    return Circuit.build([Part.resistor("R1", "in", "n", "10k"), Part.resistor("R2", "n", "out", "22k"),
                          Part.capacitor("C1", "n", "out", "4n7"),
                          Part.opamp("U1", "0", "n", "out", model="gain", gain=gain, rout=rout)],
                         source="600", load="2k")


def test_first_order_with_zero_has_a_closed_form_cutoff():
    a = analyse(_inverting(), sensitivity=False)
    for view in ("loaded", "ideal"):
        st = getattr(a, view)
        assert (st.form.order, st.form.kind) == (1, "general")  # Rout adds a far zero
        assert st.cutoff.value is not None
        num, den = st.transfer.coefficient_values(a.circuit.values())
        dc = num[0] / den[0]
        w = _minus_3db(num[::-1], den[::-1], 10.0, 1e7, dc)
        assert a.numeric[view]["cutoff_hz"] == pytest.approx(w / (2 * math.pi), rel=1e-9)
        # The closed form, w^2 = a0^2 b0^2 / (a1^2 b0^2 - 2 a0^2 b1^2):
        (b0, b1), (a0, a1) = num, den
        assert w == pytest.approx(math.sqrt(a0**2 * b0**2 / (a1**2 * b0**2 - 2 * a0**2 * b1**2)), rel=1e-9)


def test_first_order_zero_cutoff_formula():
    # H = (1 + s/wz)/(1 + s/wp): |H|^2 = 1/2 at w = wp/sqrt(1 - 2 wp^2/wz^2) (derived by hand).
    wp, wz = sympy.symbols("w_p w_z", positive=True)
    w = first_order_zero_cutoff(wp, wz)
    mag2 = (1 + w**2 / wz**2) / (1 + w**2 / wp**2)  # |H(jw)|^2 for real w
    assert sympy.simplify(mag2 - sympy.Rational(1, 2)) == 0


def test_a_shelf_that_never_falls_3db_has_no_cutoff():
    # (1 + s/100)/(1 + s/200)... DC gain 1, HF gain 2: the gain rises, never falls 3 dB.
    R1, R2 = sympy.symbols("R1 R2", positive=True)
    h = NetworkFunction.from_expr((1 + S * R1) / (1 + S * R2))
    f = standard_form(h)
    assert f.kind == "general"
    c = analyse(Circuit.build([Part.resistor("R1", "in", "a", "1k"), Part.capacitor("C1", "a", "out", "1u"),
                               Part.resistor("R2", "in", "out", "1k"), Part.resistor("R3", "out", "0", "1k")],
                              source="none", load="none"), sensitivity=False)
    # R1 + C1 in series parallel to R2, into R3: DC gain 1/2, HF gain 2/3 (> 1/2): rises.
    assert c.ideal.form.kind == "general" and c.ideal.form.order == 1
    assert c.numeric["ideal"]["cutoff_hz"] is None and c.numeric["ideal"]["no_cutoff"] is True


def test_first_order_with_zero_cutoff_sensitivity_matches_a_difference():
    base = analyse(_inverting(), sensitivity=True)
    s = base.numeric["loaded"]["sensitivity"]["cutoff"]
    f0 = base.numeric["loaded"]["cutoff_hz"]
    for name, value in (("R2", "22k"), ("Rout_U1", "100")):
        step = 1e-6
        if name == "R2":
            c = Circuit.build([Part.resistor("R1", "in", "n", "10k"),
                               Part.resistor("R2", "n", "out", sympy.Rational(22000) * (1 + sympy.Rational(1, 10**6))),
                               Part.capacitor("C1", "n", "out", "4n7"),
                               Part.opamp("U1", "0", "n", "out", model="gain", gain="100k", rout="100")],
                              source="600", load="2k")
        else:
            c = _inverting(rout=sympy.Rational(100) * (1 + sympy.Rational(1, 10**6)))
        f1 = analyse(c, sensitivity=False).numeric["loaded"]["cutoff_hz"]
        assert s[name] == pytest.approx(math.log(f1 / f0) / math.log(1 + step), rel=1e-4, abs=1e-9)
    assert np.isfinite(s["Rout_U1"]) and abs(s["Rout_U1"]) < 1e-3  # the far zero moves the cutoff a little


@pytest.mark.parametrize("name", ["twin-t-notch", "rc-ladder", "state-variable"])
def test_catalogue_responses_with_values_have_a_cutoff_or_a_reason(name):
    a = analyse(catalogue.build(name), sensitivity=False)
    for view in ("loaded", "ideal"):
        st = getattr(a, view)
        nums = a.numeric[view]
        # the kind at the values counts too: the twin-T at its equal values is a notch once the
        # common factor cancels (README "JSON output", the response at the values), so it has a notch frequency and no cutoff
        if nums["kind"] in ("notch", "allpass"):
            assert "cutoff_hz" not in nums and ("notch_hz" in nums or nums["kind"] == "allpass"), (name, view)
        elif st.form.kind not in ("notch", "allpass", "bandpass") and st.cutoff.edges is None:
            assert "cutoff_hz" in nums, (name, view)


def test_numeric_cutoff_sensitivities_are_shown_and_scale():
    # A general third-order response (the RC ladder) has no closed-form cutoff; its numeric cutoff sensitivities (the implicit derivative of the root, was central differences) are reported and
    # obey the classical sums (REFERENCES.md "Sensitivity and tolerances"): sum_R = sum_C = -1.
    from click.testing import CliRunner
    from symfilt.cli import cli

    a = analyse(catalogue.build("rc-ladder"))
    row = a.numeric["loaded"]["sensitivity"]["cutoff"]
    assert a.loaded.sensitivity["cutoff"] is None
    resistors = [n for n in row if n.startswith("R")]
    capacitors = [n for n in row if n.startswith("C")]
    assert sum(row[n] for n in resistors) == pytest.approx(-1, abs=1e-6)
    assert sum(row[n] for n in capacitors) == pytest.approx(-1, abs=1e-6)
    text = CliRunner().invoke(cli, ["derive", "@rc-ladder"]).output
    table = text.split("Sensitivity S_x^y = (x/y)·∂y/∂x, loaded")[1].splitlines()[1]
    assert "cutoff" in table.split()


def test_band_pass_of_order_three_gets_numeric_edges():
    # MFB band-pass (R1 in->x, R2 x->ground, C1 x->out, C2 x->n, R3 n->out, op-amp + ground, - n)
    # with a single-pole op-amp is third order with no pass band at DC or HF: its -3 dB edges
    # around the peak are found numerically and checked here by bisection on scipy.signal.freqs.
    def build(model, **amp):
        return Circuit.build([Part.resistor("R1", "in", "x", "22k"), Part.resistor("R2", "x", "0", "2k2"),
                              Part.capacitor("C1", "x", "out", "10n"), Part.capacitor("C2", "x", "n", "10n"),
                              Part.resistor("R3", "n", "out", "100k"),
                              Part.opamp("U1", "0", "n", "out", model=model, **amp)], source="600", load="10k")
    real = analyse(build("single-pole", gain="100k", gbw="1M"), sensitivity=False)
    assert (real.ideal.form.order, real.ideal.form.kind) == (3, "general")
    nums = real.numeric["ideal"]
    num, den = real.ideal.transfer.coefficient_values(real.circuit.values())
    grid = np.geomspace(10, 1e6, 20001)
    _, h = signal.freqs(num[::-1], den[::-1], worN=2 * np.pi * grid)
    k = int(np.argmax(abs(h)))
    peak = abs(h[k])

    def edge(lo, hi):
        def excess(w):
            return abs(signal.freqs(num[::-1], den[::-1], worN=[w])[1][0]) - peak / math.sqrt(2)
        a, b = math.log(lo), math.log(hi)
        for _ in range(200):
            m = (a + b) / 2
            if (excess(math.exp(m)) > 0) == (excess(math.exp(a)) > 0):
                a = m
            else:
                b = m
        return math.exp((a + b) / 2) / (2 * math.pi)

    w_peak = 2 * np.pi * grid[k]
    assert nums["low_edge_hz"] == pytest.approx(edge(w_peak / 100, w_peak), rel=1e-6)
    assert nums["high_edge_hz"] == pytest.approx(edge(w_peak, w_peak * 100), rel=1e-6)
    assert "cutoff_hz" not in nums
    # With an ideal op-amp the closed-form edges w0 (sqrt(1 + 4Q^2) -+ 1)/(2Q) agree with the
    # numeric search on the same coefficients (common practice, README "JSON output").
    from symfilt.analysis.numeric import band_edges
    ideal = analyse(build("ideal"), sensitivity=False)
    num, den = ideal.ideal.transfer.coefficient_values(ideal.circuit.values())
    lo, hi = band_edges(num, den)
    assert lo / (2 * math.pi) == pytest.approx(ideal.numeric["ideal"]["low_edge_hz"], rel=1e-9)
    assert hi / (2 * math.pi) == pytest.approx(ideal.numeric["ideal"]["high_edge_hz"], rel=1e-9)


def test_a_loaded_notch_gets_no_cutoff():
    # The tied twin-T loaded by R_s and R_L keeps its null at 1/(RC) (numerator C^2 R^2 s^2 + 1) but
    # no longer has equal DC and HF gains, so it is classed general; a -3 dB "cutoff" below the DC
    # gain would be the lower edge of the notch, so none is given (a notch has no single cutoff,
    # common practice), and the text says "—", not "needs values", where every value is there.
    from click.testing import CliRunner
    from symfilt.cli import cli

    a = analyse(catalogue.build("twin-t-notch-tied"), sensitivity=False)
    assert a.loaded.form.kind == "general" and a.ideal.form.kind == "notch"
    assert "cutoff_hz" not in a.numeric["loaded"] and "cutoff_hz" not in a.numeric["ideal"]
    text = CliRunner().invoke(cli, ["derive", "@twin-t-notch-tied"]).output
    numbers = text.split("Numbers at the given values")[1].split("\n\n")[0]
    assert "needs values" not in numbers and "cutoff" not in numbers
    # A zero off the jw axis (R1 in->out, C1 out->m, R2 m->ground: zero at -1/(R2 C1)) keeps its cutoff.
    shelf = analyse(Circuit.build([Part.resistor("R1", "in", "out", "1k"), Part.capacitor("C1", "out", "m", "1u"),
                                   Part.resistor("R2", "m", "0", "1k")], source="none", load="none"),
                    sensitivity=False)
    assert shelf.numeric["ideal"]["cutoff_hz"] is not None
