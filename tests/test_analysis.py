"""The analysis layer (standard forms, cutoff, loaded vs ideal, sensitivities, load
limits, the JSON contract) against published formulas, worked numbers and scipy.

Every check names its source beside it (see tests/REFERENCES.md): a book,
an application note, "common practice" for a fact of the trade, "from memory" for
a recalled formula. Circuits are built here part by part with their connections
written out. Expressions are compared exactly by ``sympy.cancel(a - b) == 0`` or,
where square roots make that undecidable for ``cancel``, at random positive points
with 30-digit arithmetic; never by printed strings. Numeric cutoffs used as a
second opinion come from ``scipy.optimize.brentq`` on |H(jw)|^2 of the derived H,
never from a symfilt cutoff function.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
import sympy
from click.testing import CliRunner
from scipy import signal
from scipy.optimize import brentq

from helpers import (close_to, equal, mfb_lowpass, parallel, rc_highpass, rc_lowpass, same, sallen_key_highpass,
                     sallen_key_lowpass, sallen_key_lowpass_gain, w0_q_squared)

from symfilt import catalogue
from symfilt.analysis.forms import StandardForm, cutoff, second_order_root, standard_form
from symfilt.analysis.stage import analyse
from symfilt.analysis.loading import load_limits
from symfilt.model.circuit import Circuit, Part
from symfilt.cli import cli
from symfilt.export.json import read_symbols
from symfilt.analysis.network import NetworkFunction, derive

s = sympy.Symbol("s")
R, C = sympy.symbols("R C", positive=True)
R0, R1, R2, R3, C0, C1, C2, Rf, Rg = sympy.symbols("R0 R1 R2 R3 C0 C1 C2 Rf Rg", positive=True)
R_s, R_L, C_L = sympy.symbols("R_s R_L C_L", positive=True)
V = sympy.Rational


# --- comparison helpers ---------------------------------------------------------------

def coefficient_arrays(h: NetworkFunction, values):
    """Numerator and denominator coefficients (highest power first) as floats."""
    sub = {k: sympy.Rational(v) if isinstance(v, float) else v for k, v in values.items()}
    num = [float(c) for c in sympy.Poly(sympy.expand(h.num.xreplace(sub)), s).all_coeffs()]
    den = [float(c) for c in sympy.Poly(sympy.expand(h.den.xreplace(sub)), s).all_coeffs()]
    return num, den


def brentq_cutoff(h: NetworkFunction, values, passband: str = "low") -> float:
    """-3 dB angular frequency relative to the passband gain, by brentq on
    |H(jw)|^2 - |H_pass|^2/2 in log w (common practice: the -3 dB definition)."""
    num, den = coefficient_arrays(h, values)
    if passband == "low":
        ref = abs(num[-1] / den[-1])
    else:
        assert len(num) == len(den)
        ref = abs(num[0] / den[0])

    def g(logw):
        jw = 1j * np.exp(logw)
        return np.abs(np.polyval(num, jw) / np.polyval(den, jw)) ** 2 - ref**2 / 2

    grid = np.linspace(math.log(1e-2), math.log(1e10), 1201)
    gv = g(grid)
    if passband == "low":
        i = next(k for k in range(len(grid) - 1) if gv[k] > 0 >= gv[k + 1])
    else:
        i = max(k for k in range(len(grid) - 1) if gv[k] <= 0 < gv[k + 1])
    return math.exp(brentq(g, grid[i], grid[i + 1], xtol=1e-15, rtol=1e-15, maxiter=500))


# --- circuits, with their connections -------------------------------------------------

def rc_ladder(r1=None, c1=None, r2=None, c2=None, **fixtures) -> Circuit:
    # Passive second order: R1 in->a, C1 a->ground, R2 a->out, C2 out->ground.
    return Circuit.build([Part.resistor("R1", "in", "a", r1), Part.capacitor("C1", "a", "0", c1),
                          Part.resistor("R2", "a", "out", r2), Part.capacitor("C2", "out", "0", c2)], **fixtures)


def rc_into_sallen_key(**fixtures) -> Circuit:
    # Third order: R0 in->p, C0 p->ground, then the unity Sallen-Key low-pass from p
    # (R1 p->a, R2 a->b, C1 a->out, C2 b->ground, follower b->out). All values given.
    return Circuit.build([Part.resistor("R0", "in", "p", "1k"), Part.capacitor("C0", "p", "0", "10n"),
                          Part.resistor("R1", "p", "a", "10k"), Part.resistor("R2", "a", "b", "10k"),
                          Part.capacitor("C1", "a", "out", "20n"), Part.capacitor("C2", "b", "0", "10n"),
                          Part.opamp("U1", "b", "out", "out")], **fixtures)


# --- first order: RC low-pass and high-pass, loaded and ideal ---------------------------

def test_rc_lowpass_loaded_cutoff_closed_form():
    # Thevenin's theorem; common practice (REFERENCES.md): the capacitor sees
    # (R_s + R1) || R_L, so w_c = 1/(C1 ((R_s + R1) || R_L)), H(0) = R_L/(R_s + R1 + R_L).
    a = analyse(rc_lowpass(source="symbol", load="symbol"), sensitivity=False)
    rth = parallel(R_s + R1, R_L)
    assert a.loaded.form.kind == "lowpass" and a.loaded.form.order == 1
    assert same(a.loaded.cutoff.value, 1 / (C1 * rth))
    assert same(a.loaded.form.w0, 1 / (C1 * rth))
    assert same(a.loaded.form.tau, C1 * rth)
    assert same(a.loaded.form.gain, R_L / (R_s + R1 + R_L))
    assert same(a.loaded.dc_gain(), R_L / (R_s + R1 + R_L))
    # Horowitz & Hill, The Art of Electronics, 3rd ed., ch. 1, RC filters (from memory): f_c = 1/(2 pi R C).
    assert same(a.ideal.cutoff.value, 1 / (R1 * C1))
    assert a.ideal.dc_gain() == 1


def test_rc_lowpass_load_capacitance():
    # Common practice: a capacitive load is in parallel with C1, so w_c = 1/((C1 + C_L) Rth).
    a = analyse(rc_lowpass(source="symbol", load="symbol", load_capacitance="symbol"), sensitivity=False)
    assert same(a.loaded.cutoff.value, 1 / ((C1 + C_L) * parallel(R_s + R1, R_L)))
    assert same(a.ideal.cutoff.value, 1 / (R1 * C1))


def test_rc_highpass_loaded_cutoff_closed_form():
    # Thevenin's theorem; common practice: the capacitor sees R_s + (R1 || R_L); the passband
    # (high-frequency) gain is (R1 || R_L)/(R_s + R1 || R_L).
    a = analyse(rc_highpass(source="symbol", load="symbol"), sensitivity=False)
    rp = parallel(R1, R_L)
    assert a.loaded.form.kind == "highpass"
    assert same(a.loaded.cutoff.value, 1 / (C1 * (R_s + rp)))
    assert same(a.loaded.form.gain, rp / (R_s + rp))
    # Horowitz & Hill, 3rd ed., ch. 1 (from memory): the stage alone has w_c = 1/(R C).
    assert same(a.ideal.cutoff.value, 1 / (R1 * C1))


# REFERENCES.md worked numbers, computed regression values (closed form and a numeric root, computed two ways there):
# RC low-pass, R1 = 4.7k, C1 = 22n.
@pytest.mark.parametrize("fixtures, expected", [
    ({}, "1539.22"),
    ({"source": "600"}, "1364.97"),
    ({"load": "10k"}, "2262.65"),
    ({"source": "600", "load": "10k"}, "2088.40"),
])
def test_rc_lowpass_worked_numbers(fixtures, expected):
    a = analyse(rc_lowpass("4k7", "22n", **fixtures), sensitivity=False)
    assert close_to(a.numeric["loaded"]["cutoff_hz"], expected)
    assert close_to(a.numeric["ideal"]["cutoff_hz"], "1539.22")
    # Cross-check the same number from the derived H by brentq (common practice: the -3 dB
    # point is relative to the loaded DC gain, REFERENCES.md cautions).
    values = a.circuit.values()
    assert close_to(brentq_cutoff(a.loaded.transfer, values) / (2 * math.pi), expected)


def test_rc_lowpass_worked_dc_gain_and_ratios():
    # REFERENCES.md worked numbers (computed regression values):
    # R_s = 600, R_L = 10k gives DC gain 0.653595 and 2088.40 Hz
    # against 1539.22 Hz alone; the ratios follow from Thevenin's theorem (common practice).
    a = analyse(rc_lowpass("4k7", "22n", source="600", load="10k"), sensitivity=False)
    assert close_to(a.numeric["loaded"]["dc_gain"], "0.653595")
    assert a.numeric["ideal"]["dc_gain"] == pytest.approx(1.0, abs=1e-15)
    rth = parallel(600 + V(4700), V(10000))
    assert a.ratio("cutoff_hz") == pytest.approx(float(4700 / rth), rel=1e-12)
    assert a.ratio("dc_gain") == pytest.approx(10000 / (600 + 4700 + 10000), rel=1e-12)
    assert a.numeric["loaded"]["dc_gain_db"] == pytest.approx(20 * math.log10(10000 / 15300), rel=1e-12)


def test_rc_highpass_worked_numbers():
    # REFERENCES.md worked numbers, computed regression values: C1 = 68n, R1 = 3.9k, R_s = 600, R_L = 10k:
    # cutoff 687.223 Hz relative to the HF gain 0.823828.
    a = analyse(rc_highpass("68n", "3k9", source="600", load="10k"), sensitivity=False)
    assert close_to(a.numeric["loaded"]["cutoff_hz"], "687.223")
    hf = a.loaded.transfer.hf_gain().xreplace(a.circuit.values())
    assert close_to(float(hf), "0.823828")
    assert close_to(float(a.loaded.form.gain.xreplace(a.circuit.values())), "0.823828")
    assert close_to(brentq_cutoff(a.loaded.transfer, a.circuit.values(), "high") / (2 * math.pi), "687.223")


# --- second order with ideal op-amps -------------------------------------------------------

def test_unity_sallen_key_lowpass_hand_nodal():
    # Common practice (Kirchhoff's current law at a and b, ideal follower V(out) = V(b)),
    # an independent check of TI SLOA024's formulas used below.
    va, vb = sympy.symbols("va vb")
    vin = 1
    eqs = [(vin - va) / R1 + (vb - va) / R2 + s * C1 * (vb - va),   # node a (C1 to out = b)
           (va - vb) / R2 - s * C2 * vb]                             # node b (op-amp input draws nothing)
    sol = sympy.solve(eqs, [va, vb], dict=True)[0]
    a = analyse(sallen_key_lowpass(), sensitivity=False)
    assert same(a.ideal.transfer.as_expr(), sol[vb])


def test_unity_sallen_key_lowpass_w0_q():
    # TI application report SLOA024, Analysis of the Sallen-Key Architecture (from memory):
    # w0 = 1/sqrt(R1 R2 C1 C2), Q = sqrt(R1 R2 C1 C2)/(C2 (R1 + R2)), K = 1.
    a = analyse(sallen_key_lowpass(source="symbol", load="symbol"), sensitivity=False)
    f = a.ideal.form
    assert (f.order, f.kind, f.gain) == (2, "lowpass", 1)
    assert equal(f.w0, 1 / sympy.sqrt(R1 * R2 * C1 * C2))
    assert equal(f.q, sympy.sqrt(R1 * R2 * C1 * C2) / (C2 * (R1 + R2)))
    assert same(f.zeta, 1 / (2 * f.q))
    # Common practice: R_s is in series with R1, and the ideal follower hides R_L.
    g = a.loaded.form
    assert equal(g.w0, 1 / sympy.sqrt((R1 + R_s) * R2 * C1 * C2))
    assert equal(g.q, sympy.sqrt((R1 + R_s) * R2 * C1 * C2) / (C2 * (R1 + R_s + R2)))


def test_unity_sallen_key_lowpass_worked_numbers():
    # REFERENCES.md worked numbers (computed regression values):
    # R1 = 6.8k, R2 = 15k, C1 = 10n, C2 = 3.3n, R_s = 50, no load:
    # f0 = 2733.21 Hz, Q = 0.807574, cutoff 3068.26 Hz.
    a = analyse(sallen_key_lowpass("6k8", "15k", "10n", "3n3", source="50"), sensitivity=False)
    n = a.numeric["loaded"]
    assert close_to(n["cutoff_hz"], "3068.26")
    assert close_to(n["f0_hz"], "2733.21")
    assert close_to(n["q"], "0.807574")
    assert n["dc_gain"] == pytest.approx(1.0, abs=1e-15)
    assert close_to(brentq_cutoff(a.loaded.transfer, a.circuit.values()) / (2 * math.pi), "3068.26")


def test_equal_component_sallen_key_gain():
    # Horowitz & Hill, 3rd ed., ch. 6, active filters (from memory): with R1 = R2 = R and
    # C1 = C2 = C, K = 1 + Rf/Rg, w0 = 1/(RC), Q = 1/(3 - K), i.e. K = 3 - 1/Q.
    a = analyse(sallen_key_lowpass_gain(), sensitivity=False)
    f = a.ideal.form
    assert f.kind == "lowpass"
    eq = {R1: R, R2: R, C1: C, C2: C}
    k = 1 + Rf / Rg
    w0, q, gain = (sympy.sympify(e).xreplace(eq) for e in (f.w0, f.q, f.gain))
    assert equal(w0, 1 / (R * C))
    assert equal(q, 1 / (3 - k))
    assert same(gain, k)
    # K = 3 - 1/Q, for K < 3 (the stable range): Rf/Rg = 1/2 gives K = 1.5 and Q = 2/3.
    half = {Rf: 1, Rg: 2}
    assert same((3 - 1 / q).xreplace(half), k.xreplace(half))
    assert same(q.xreplace(half), V(2, 3))


def test_equal_component_sallen_key_worked_numbers():
    # REFERENCES.md worked numbers, computed regression values: R = 8.2k, C = 6.8n, K = 1.56 (Rf = 5.6k, Rg = 10k):
    # f0 = 2854.29 Hz, Q = 0.694444, cutoff 2802.26 Hz; Horowitz & Hill ch. 6 (from memory): K = 3 - 1/Q.
    a = analyse(sallen_key_lowpass_gain("8k2", "8k2", "6n8", "6n8", "5k6", "10k"), sensitivity=False)
    n = a.numeric["ideal"]
    assert close_to(n["cutoff_hz"], "2802.26")
    assert close_to(n["f0_hz"], "2854.29")
    assert close_to(n["q"], "0.694444")
    assert n["dc_gain"] == pytest.approx(1.56, rel=1e-14)
    assert 3 - 1 / n["q"] == pytest.approx(n["dc_gain"], rel=1e-12)


def test_mfb_lowpass_hand_nodal():
    # Common practice (KCL at x and at the virtual ground y = 0 of the ideal op-amp); an
    # independent check of TI's MFB formulas (REFERENCES.md: "verified here by a nodal derivation").
    vx, vo = sympy.symbols("vx vo")
    vin = 1
    eqs = [(vin - vx) / R1 - s * C1 * vx + (vo - vx) / R2 + (0 - vx) / R3,   # node x
           (vx - 0) / R3 + s * C2 * (vo - 0)]                                # node y (virtual ground)
    sol = sympy.solve(eqs, [vx, vo], dict=True)[0]
    a = analyse(mfb_lowpass(), sensitivity=False)
    assert same(a.ideal.transfer.as_expr(), sol[vo])


def test_mfb_lowpass_w0_q_dc_gain():
    # TI, Op Amps for Everyone, active-filter chapter (from memory): H(0) = -R2/R1,
    # w0 = 1/sqrt(R2 R3 C1 C2), Q = sqrt(R2 R3 C1 C2)/(C2 (R2 + R3 + R2 R3/R1)).
    a = analyse(mfb_lowpass(source="symbol", load="symbol"), sensitivity=False)
    f = a.ideal.form
    assert (f.order, f.kind) == (2, "lowpass")
    assert same(a.ideal.dc_gain(), -R2 / R1)
    assert same(f.gain, -R2 / R1)
    assert equal(f.w0, 1 / sympy.sqrt(R2 * R3 * C1 * C2))
    assert equal(f.q, sympy.sqrt(R2 * R3 * C1 * C2) / (C2 * (R2 + R3 + R2 * R3 / R1)))
    # Common practice: R_s adds to R1 (it is in series with it); R_L is hidden by the op-amp.
    assert same(a.loaded.dc_gain(), -R2 / (R1 + R_s))
    assert equal(a.loaded.form.q, sympy.sqrt(R2 * R3 * C1 * C2) / (C2 * (R2 + R3 + R2 * R3 / (R1 + R_s))))


def test_mfb_lowpass_worked_numbers():
    # REFERENCES.md worked numbers (computed regression values):
    # R1 = 5.6k, R2 = 12k, R3 = 8.2k, C1 = 47n, C2 = 2.2n, R_s = 600:
    # f0 = 1577.84 Hz, Q = 1.27109, DC gain -1.93548, cutoff 2178.21 Hz.
    a = analyse(mfb_lowpass("5k6", "12k", "8k2", "47n", "2n2", source="600"), sensitivity=False)
    n = a.numeric["loaded"]
    assert close_to(n["cutoff_hz"], "2178.21")
    assert close_to(n["f0_hz"], "1577.84")
    assert close_to(n["q"], "1.27109")
    assert close_to(n["dc_gain"], "-1.93548")
    # Q > 1/sqrt(2): the response peaks, and the -3 dB point lies above f0 (common practice).
    assert close_to(brentq_cutoff(a.loaded.transfer, a.circuit.values()) / (2 * math.pi), "2178.21")


def _sallen_key_highpass_by_hand():
    """Nodal analysis by hand (common practice, KCL): source V = 1 behind R_s into node p,
    C1 p->a, C2 a->b, R1 a->out, R2 b->ground, follower V(out) = V(b)."""
    vp, va, vb = sympy.symbols("vp va vb")
    vin = 1
    eqs = [(vin - vp) / R_s - s * C1 * (vp - va),                          # node p
           s * C1 * (vp - va) + (vb - va) / R1 + s * C2 * (vb - va),        # node a (R1 to out = b)
           s * C2 * (va - vb) - vb / R2]                                    # node b
    return sympy.cancel(sympy.solve(eqs, [vp, va, vb], dict=True)[0][vb])


def test_sallen_key_highpass_hand_nodal_and_formulas():
    hand = _sallen_key_highpass_by_hand()
    hand_ideal = sympy.cancel(hand.subs(R_s, 0))
    a = analyse(sallen_key_highpass(source="symbol", load="symbol"), sensitivity=False)
    assert same(a.loaded.transfer.as_expr(), hand)
    assert same(a.ideal.transfer.as_expr(), hand_ideal)
    # The unity-gain high-pass formulas (as given in issue 3 and REFERENCES.md):
    # w0 = 1/sqrt(R1 R2 C1 C2), Q = sqrt(R1 R2 C1 C2)/(R1 (C1 + C2)), R1 the feedback resistor.
    # First from the hand result's denominator, then from the analysis.
    w02, q2 = w0_q_squared(NetworkFunction.from_expr(hand_ideal))
    assert same(w02, 1 / (R1 * R2 * C1 * C2))
    assert same(q2, R1 * R2 * C1 * C2 / (R1 * (C1 + C2)) ** 2)
    f = a.ideal.form
    assert (f.order, f.kind, f.gain) == (2, "highpass", 1)
    assert equal(f.w0, 1 / sympy.sqrt(R1 * R2 * C1 * C2))
    assert equal(f.q, sympy.sqrt(R1 * R2 * C1 * C2) / (R1 * (C1 + C2)))
    # REFERENCES.md cautions: with R_s the HF gain is R2/(R2 + R_s) (capacitors shorted: a divider).
    assert same(sympy.limit(hand, s, sympy.oo), R2 / (R2 + R_s))
    assert same(a.loaded.transfer.hf_gain(), R2 / (R2 + R_s))
    assert same(a.loaded.form.gain, R2 / (R2 + R_s))


def test_sallen_key_highpass_worked_numbers():
    # REFERENCES.md worked numbers (computed regression values):
    # C1 = C2 = 15n, R1 = 5.1k (feedback), R2 = 10k, ideal source:
    # f0 = 1485.74 Hz, Q = 0.700140, cutoff 1500.67 Hz.
    a = analyse(sallen_key_highpass("15n", "15n", "5k1", "10k"), sensitivity=False)
    n = a.numeric["ideal"]
    assert close_to(n["cutoff_hz"], "1500.67")
    assert close_to(n["f0_hz"], "1485.74")
    assert close_to(n["q"], "0.700140")
    assert close_to(brentq_cutoff(a.ideal.transfer, a.circuit.values(), "high") / (2 * math.pi), "1500.67")


def test_twin_t_notch_ideal():
    # Twin-T with R, R, R/2 and C, C, 2C: notch at w0 = 1/(R C) (common practice, REFERENCES.md).
    # Unloaded its H is (1 + (sRC)^2)/(1 + 4 sRC + (sRC)^2), so Q = 1/4 (from memory).
    # R1 in->m, R2 m->out, C3 m->ground (2C); C1 in->n, C2 n->out, R3 n->ground (R/2).
    c = Circuit.build([Part.resistor("R1", "in", "m", "10k"), Part.resistor("R2", "m", "out", "10k"),
                       Part.capacitor("C3", "m", "0", "20n"), Part.capacitor("C1", "in", "n", "10n"),
                       Part.capacitor("C2", "n", "out", "10n"), Part.resistor("R3", "n", "0", "5k")])
    a = analyse(c, sensitivity=False)
    values = c.values()
    # Symbolically (any six values) a twin-T is third order; at these values a factor cancels.
    f = standard_form(a.ideal.transfer.subs(values))
    assert (f.order, f.kind) == (2, "notch")
    assert same(f.w0, 1 / (V(10**4) * V(1, 10**8)))
    assert same(f.q, V(1, 4))
    assert same(f.gain, 1)
    assert cutoff(f).value is None and cutoff(f).reason


# --- the second-order cutoff formula ---------------------------------------------------------

Q_VALUES = [V(3, 10), V(1, 2), V(6, 10), 1 / sympy.sqrt(2), V(8, 10), 1, V(13, 10), 2, 3, 5]


@pytest.mark.parametrize("kind", ["lowpass", "highpass"])
@pytest.mark.parametrize("q", Q_VALUES, ids=str)
def test_second_order_cutoff_against_numeric_root(kind, q):
    # Common practice (REFERENCES.md): |H(jw)|^2 = |K|^2/2 with x = 1 - 1/(2Q^2) gives
    # w_c = w0 sqrt(x + sqrt(x^2 + 1)) for a low-pass, w0 divided by that root for a high-pass,
    # for every Q (peaking included). Here checked against brentq on the response itself.
    w0 = 2 * sympy.pi * 1000
    qf = float(q)

    def g(w):
        u = w / float(w0)
        d = 1 - u**2 + 1j * u / qf
        h = 1 / d if kind == "lowpass" else -(u**2) / d
        return abs(h) ** 2 - 0.5

    w_num = brentq(g, 1e-3, 1e9, xtol=1e-12, rtol=1e-15, maxiter=500)
    cut = cutoff(StandardForm(2, kind, 1, w0, q))
    assert float(cut.value) == pytest.approx(w_num, rel=1e-11)
    root = float(second_order_root(q))
    assert (root if kind == "lowpass" else 1 / root) == pytest.approx(w_num / float(w0), rel=1e-11)


@pytest.mark.parametrize("q", [V(1, 2), 1, V(7, 2), 10], ids=str)
def test_bandpass_edges_against_numeric_roots(q):
    # Common practice: a band-pass K s/(w0 Q) / (1 + s/(w0 Q) + s^2/w0^2) is -3 dB at
    # w0 (sqrt(1 + 4Q^2) -+ 1)/(2Q); the bandwidth is w0/Q. Checked with brentq on |H|^2 = 1/2.
    w0 = 1000
    qf = float(q)
    g = lambda w: abs((1j * w / (w0 * qf)) / (1 - (w / w0) ** 2 + 1j * w / (w0 * qf))) ** 2 - 0.5  # noqa: E731
    lo = brentq(g, 1e-3, w0, xtol=1e-12, rtol=1e-15)
    hi = brentq(g, w0, 1e9, xtol=1e-12, rtol=1e-15)
    cut = cutoff(StandardForm(2, "bandpass", 1, sympy.Integer(w0), q))
    assert cut.value is None and cut.reason
    assert float(cut.edges[0]) == pytest.approx(lo, rel=1e-11)
    assert float(cut.edges[1]) == pytest.approx(hi, rel=1e-11)
    assert float(cut.bandwidth) == pytest.approx(hi - lo, rel=1e-10)


def mfb_bandpass(r1=None, r2=None, r3=None, c1=None, c2=None, **fixtures) -> Circuit:
    # R1 in->x, R2 x->ground, C1 x->out, C2 x->y, R3 y->out (feedback), op-amp + at ground, - at y.
    return Circuit.build([Part.resistor("R1", "in", "x", r1), Part.resistor("R2", "x", "0", r2),
                          Part.capacitor("C1", "x", "out", c1), Part.capacitor("C2", "x", "y", c2),
                          Part.resistor("R3", "y", "out", r3), Part.opamp("U1", "0", "y", "out")], **fixtures)


def test_mfb_bandpass_equal_capacitors():
    # TI, Op Amps for Everyone, active-filter chapter, MFB band-pass with equal C (from memory; there
    # the feedback resistor is called R2, here R3): w0 = (1/C) sqrt((R1 + R2)/(R1 R2 R3)),
    # gain at w0 = -R3/(2 R1), Q = pi f0 R3 C = w0 R3 C / 2.
    a = analyse(mfb_bandpass(), sensitivity=False)
    f = a.ideal.form
    assert (f.order, f.kind) == (2, "bandpass")
    eq = {C1: C, C2: C}
    w0, q, k = (sympy.sympify(e).xreplace(eq) for e in (f.w0, f.q, f.gain))
    assert equal(w0, sympy.sqrt((R1 + R2) / (R1 * R2 * R3)) / C)
    assert same(k, -R3 / (2 * R1))
    assert equal(q, w0 * R3 * C / 2)
    # Common practice: the -3 dB bandwidth of a second-order band-pass is w0/Q.
    assert equal(a.ideal.cutoff.bandwidth, f.w0 / f.q)


def test_mfb_bandpass_edges_against_numeric_roots():
    # Common practice: the band edges are where |H(jw)|^2 = |H(j w0)|^2/2, one below and one above w0;
    # found here by brentq on the derived, loaded H (R_s = 600 in series with R1).
    c = mfb_bandpass("10k", "1k", "100k", "10n", "10n", source="600", load="2k")
    a = analyse(c, sensitivity=False)
    num, den = coefficient_arrays(a.loaded.transfer, c.values())
    w0 = a.numeric["loaded"]["f0_hz"] * 2 * math.pi
    peak2 = abs(np.polyval(num, 1j * w0) / np.polyval(den, 1j * w0)) ** 2
    g = lambda w: abs(np.polyval(num, 1j * w) / np.polyval(den, 1j * w)) ** 2 - peak2 / 2  # noqa: E731
    lo = brentq(g, w0 / 100, w0, xtol=1e-12, rtol=1e-15)
    hi = brentq(g, w0, w0 * 100, xtol=1e-12, rtol=1e-15)
    assert a.numeric["loaded"]["low_edge_hz"] * 2 * math.pi == pytest.approx(lo, rel=1e-10)
    assert a.numeric["loaded"]["high_edge_hz"] * 2 * math.pi == pytest.approx(hi, rel=1e-10)
    assert a.loaded.cutoff.value is None and a.loaded.cutoff.reason


def test_third_order_cutoff_is_numeric_with_a_reason():
    # Issue 3: beyond second order the cutoff has no closed form here; it is the numeric root of
    # |H(jw)|^2 = |H(0)|^2/2 (common practice), checked against brentq on the derived H.
    a = analyse(rc_into_sallen_key(), sensitivity=False)
    assert a.ideal.transfer.order() == 3
    assert a.ideal.cutoff.value is None and a.ideal.cutoff.reason
    assert a.ideal.form.w0 is None
    expected = brentq_cutoff(a.ideal.transfer, a.circuit.values()) / (2 * math.pi)
    assert a.numeric["ideal"]["cutoff_hz"] == pytest.approx(expected, rel=1e-9)


def test_third_order_without_values_has_no_number():
    # README "JSON output": numeric results only for quantities whose symbols all have values.
    c = rc_into_sallen_key().with_values({"R0": None})
    a = analyse(c, sensitivity=False)
    assert a.numeric["ideal"].get("cutoff_hz") is None


# --- Butterworth ------------------------------------------------------------------------------

def test_butterworth_symbolic_cutoff_is_w0():
    # Common practice (REFERENCES.md): a second-order Butterworth has Q = 1/sqrt(2) and w_c = w0.
    w = sympy.Symbol("w0", positive=True)
    assert same(cutoff(StandardForm(2, "lowpass", 1, w, 1 / sympy.sqrt(2))).value, w)
    assert same(cutoff(StandardForm(2, "highpass", 1, w, 1 / sympy.sqrt(2))).value, w)


def test_butterworth_sallen_key_against_scipy():
    # Unity Sallen-Key with R1 = R2 = 10k, C1 = 20n (feedback), C2 = 10n (ground):
    # by TI SLOA024 (from memory) Q = sqrt(2 C2^2 R^2)/(2 R C2) = 1/sqrt(2), a Butterworth,
    # w0 = 1/(sqrt(2) R C2). Cross-checked with scipy.signal.butter(2, w0, analog=True).
    a = analyse(sallen_key_lowpass("10k", "10k", "20n", "10n"), sensitivity=False)
    values = a.circuit.values()
    q = a.ideal.form.q.xreplace(values)
    w0 = a.ideal.form.w0.xreplace(values)
    assert sympy.simplify(q - 1 / sympy.sqrt(2)) == 0
    assert sympy.simplify(w0 - 1 / (sympy.sqrt(2) * V(10**4) * V(1, 10**8))) == 0
    assert sympy.simplify(a.ideal.cutoff.value.xreplace(values) - w0) == 0
    w0f = float(w0)
    b_ref, a_ref = signal.butter(2, w0f, analog=True)
    num, den = coefficient_arrays(a.ideal.transfer, values)
    lead = den[0]
    np.testing.assert_allclose(np.array(den) / lead, a_ref / a_ref[0], rtol=1e-12)
    np.testing.assert_allclose(np.array(num) / lead, b_ref / a_ref[0], rtol=1e-12)
    # -3 dB at w0, for ours and for scipy's (scipy.signal.freqs).
    cut = a.numeric["ideal"]["cutoff_hz"] * 2 * math.pi
    assert cut == pytest.approx(w0f, rel=1e-12)
    for b_, a_ in ((num, den), (b_ref, a_ref)):
        _, h = signal.freqs(b_, a_, worN=[cut])
        assert 20 * math.log10(abs(h[0])) == pytest.approx(10 * math.log10(0.5), abs=1e-9)


# --- sensitivities ------------------------------------------------------------------------------

#: Impedance and frequency scaling exponents by class (REFERENCES.md, "Sensitivity and tolerances"):
#: R, L, Rout, Rin and transresistances scale with impedance, C against it; C and L with time,
#: bandwidths (GBW, P2) against it.
_SCALING = {"R": (1, 0), "C": (-1, 1), "L": (1, 1), "BW": (0, -1), "G": (0, 0)}


def _scaling_class(name: str, info: dict) -> str:
    """The test's own classification of a symbol, from its kind or op-amp parameter prefix."""
    if name in ("R_s", "R_L"):
        return "R"
    if name == "C_L":
        return "C"
    if info["role"] == "parameter":  # a tied circuit's free symbols: by the unit the ties give
        return {"Ω": "R", "F": "C", "H": "L", "": "G"}[info["unit"]]
    kind = info.get("kind")
    if kind in ("resistor", "ccvs"):
        return "R"
    if kind == "capacitor":
        return "C"
    if kind == "inductor":
        return "L"
    for prefix, cls in (("Rout_", "R"), ("Rin_", "R"), ("Cin_", "C"), ("GBW_", "BW"), ("P2_", "BW"), ("A_", "G")):
        if name.startswith(prefix):
            return cls
    return "G"


def _check_scaling_sums(c: Circuit, view) -> int:
    """Form both scaling sums from the per-symbol sensitivities; return how many were checked."""
    classes = {n: _scaling_class(n, info) for n, info in c.symbols().items() if info["role"] != "laplace"}
    checked = 0
    for quantity, freq_sum in (("w0", -1), ("cutoff", -1), ("q", 0), ("gain", 0), ("dc_gain", 0)):
        table = view.sensitivity.get(quantity)
        if not table:
            continue
        for k, expected in ((0, 0), (1, freq_sum)):
            total = sum((_SCALING[classes[n]][k] * e for n, e in table.items()), sympy.Integer(0))
            assert equal(total, expected), (c.title, quantity, k, total)
            checked += 1
    return checked


@pytest.mark.parametrize("name", catalogue.names())
def test_sum_rules_on_every_catalogue_circuit(name):
    # Schaumann & Van Valkenburg, Design of Analog Filters, sensitivity chapter (from memory):
    # impedance scaling leaves a voltage transfer unchanged and frequency scaling turns H(s)
    # into H(ks), so sum of e_imp S_x^y = 0 and sum of e_freq S_x^y = -1 for w0 and the cutoff,
    # 0 for Q and gains, counting every resistor (R_s, R_L, gain-setting ones, Rout), every
    # capacitor (C_L) and, with real op-amps, every bandwidth. For RC circuits with dimensionless
    # gains this is the classical pair sum_R S_R^w0 = sum_C S_C^w0 = -1. The sums are formed here
    # from the per-symbol sensitivities, not taken from the analysis's own self-check.
    c = catalogue.build(name)
    a = analyse(c)
    checked = sum(_check_scaling_sums(c, view) for view in (a.loaded, a.ideal))
    assert checked >= 4
    assert a.rules and all(r.holds for r in a.rules)
    assert {r.quantity for r in a.rules} >= {"gain"}
    if a.loaded.form.w0 is not None:
        assert {r.quantity for r in a.rules} >= {"w0"}


@pytest.mark.parametrize("name", catalogue.names())
def test_sum_rules_by_euler_match_the_cancelled_sums(name, monkeypatch):
    # Euler's theorem on homogeneous functions (REFERENCES.md, "Sensitivity and tolerances"): for
    # p homogeneous of weighted degree d, sum_x w_x x dp/dx = d p, so the scaling sums of
    # y = prod p_i^e_i are sum_i e_i d_i. The analysis takes its sums that way from the factor
    # polynomials; here the same sums are formed from the per-symbol sensitivities and
    # cancelled, as the rules were checked before, and the two must agree exactly.
    from symfilt.analysis import sensitivity
    from symfilt.analysis.stage import scaling_classes

    c = catalogue.build(name)
    a = analyse(c)
    classes = scaling_classes(c)
    by_cancel = sensitivity.sum_rules(a.loaded.sensitivity, classes)
    seen = []
    euler = sensitivity.scaling_sum
    monkeypatch.setattr(sensitivity, "scaling_sum", lambda f, w: seen.append(euler(f, w)) or seen[-1])
    by_euler = sensitivity.sum_rules(a.loaded.sensitivity, classes, a.loaded.factors)
    assert by_euler == by_cancel == a.rules and a.rules
    assert len(seen) == len(a.rules) and None not in seen  # each catalogue sum was Euler's, not the fallback


def test_scaling_sum_needs_homogeneous_factors():
    # Euler's theorem needs each factor homogeneous: R + C is not (degrees 1 and 0 in the
    # resistors), so the sum is left to the cancelled form, which still decides the rule.
    from symfilt.analysis.sensitivity import product_sensitivities, scaling_sum, sum_rules

    assert scaling_sum([(R + C, 1)], {"R": 1}) is None
    assert scaling_sum([(R * C + R**2, -1), (R, 1)], {"R": 1, "C": 1}) == -1  # degrees 2 and 1: -2 + 1
    classes = {"R": "resistors", "C": "capacitors"}
    for y in ([(R + C, 1)], [(R * C**2, 1)]):  # neither is a w0 (the first is not even homogeneous)
        sens = {"w0": product_sensitivities(y, [R, C])}
        rules = sum_rules(sens, classes, {"w0": y})
        assert rules == sum_rules(sens, classes)
        assert [r.holds for r in rules] == [False, False]
    assert [r.total for r in sum_rules({"w0": product_sensitivities([(R * C**2, 1)], [R, C])}, classes,
                                       {"w0": [(R * C**2, 1)]})] == [1, 2]


def test_sum_rules_with_a_finite_gain_opamp():
    # Schaumann & Van Valkenburg (from memory; REFERENCES.md): the rules hold for op-amps of a pure,
    # dimensionless gain A. Sallen-Key with gain (R1, R2, C1, C2, Rf, Rg as above), A = 100k.
    c = sallen_key_lowpass_gain("8k2", "8k2", "6n8", "6n8", "5k6", "10k", source="600", load="2k")
    a = analyse(c.with_opamp_model("gain", gain="100k"))
    t = a.loaded.sensitivity
    assert "A_U1" in t["w0"]
    assert same(sum(t["w0"][n] for n in ("R1", "R2", "Rf", "Rg", "R_s", "R_L") if n in t["w0"]), -1)
    assert same(t["w0"]["C1"] + t["w0"]["C2"], -1)
    assert same(sum(t["q"][n] for n in ("R1", "R2", "Rf", "Rg", "R_s", "R_L") if n in t["q"]), 0)
    assert same(t["q"]["C1"] + t["q"]["C2"], 0)
    assert a.rules and all(r.holds for r in a.rules)


@pytest.mark.parametrize("model", ["single-pole", "integrator", "two-pole"])
def test_sum_rules_with_op_amp_bandwidths(model):
    # The op-amp's GBW (and P2) is itself a frequency: frequency scaling gives
    # sum_C S_C^w0 - sum_GBW S^w0 = -1 (REFERENCES.md, "Sensitivity and tolerances"). With a second
    # pole the response is third order, so only the gains are checked there.
    # Inverting low-pass: R1 in->n, R2 and C1 in parallel n->out, op-amp + at ground, - at n;
    # with an op-amp pole it is second order (w0 and Q exist), with two poles third order.
    c = Circuit.build([Part.resistor("R1", "in", "n", "10k"), Part.resistor("R2", "n", "out", "22k"),
                       Part.capacitor("C1", "n", "out", "4n7"), Part.opamp("U1", "0", "n", "out")],
                      source="600", load="2k")
    c = c.with_opamp_model(model, gain="100k", gbw="1M")
    if model == "two-pole":
        c = c.with_values({"P2_U1": "5M"})
    a = analyse(c)
    assert a.rules and all(r.holds for r in a.rules)
    assert any("bandwidths" in r.group for r in a.rules)
    assert _check_scaling_sums(c, a.loaded) >= 2
    if model != "two-pole":
        t = a.loaded.sensitivity["w0"]
        assert equal(t["C1"] - t["GBW_U1"], -1)
        assert not same(t["GBW_U1"], 0)


def test_sum_rules_with_an_inductor():
    # Series RLC low-pass (R1 in->a, L1 a->out, C1 out->ground): w0 = 1/sqrt(L1 C1),
    # Q = sqrt(L1/C1)/R1 (common practice). Impedance scaling: S_R + S_L - S_C = 0; frequency
    # scaling: S_L + S_C = -1 for w0 and 0 for Q.
    c = Circuit.build([Part.resistor("R1", "in", "a", "100"), Part.inductor("L1", "a", "out", "10m"),
                       Part.capacitor("C1", "out", "0", "1u")])
    a = analyse(c)
    t = a.ideal.sensitivity
    assert same(t["w0"]["L1"], V(-1, 2)) and same(t["w0"]["C1"], V(-1, 2))
    assert same(t["q"]["R1"], -1) and same(t["q"]["L1"], V(1, 2)) and same(t["q"]["C1"], V(-1, 2))
    assert [r.group for r in a.rules][:2] == ["resistors + inductors − capacitors", "capacitors + inductors"]
    assert a.rules and all(r.holds for r in a.rules)
    assert _check_scaling_sums(c, a.ideal) >= 6


def test_sum_rules_count_the_fixtures():
    # Schaumann & Van Valkenburg (from memory), with REFERENCES.md's caution: R_s, R_L and C_L
    # are counted. RC low-pass loaded: S^w0 of R1, R_s, R_L sum to -1; C1, C_L sum to -1.
    a = analyse(rc_lowpass(source="symbol", load="symbol", load_capacitance="symbol"))
    t = a.loaded.sensitivity["w0"]
    assert same(t["R1"] + t["R_s"] + t["R_L"], -1)
    assert same(t["C1"] + t["C_L"], -1)
    assert not same(t["R1"], -1)  # R1 alone does not carry the whole sum once loaded
    assert all(r.holds for r in a.rules)


def test_unity_sallen_key_sensitivities():
    # REFERENCES.md, following from TI SLOA024's w0 = 1/sqrt(R1 R2 C1 C2):
    # S_R1^w0 = S_R2^w0 = S_C1^w0 = S_C2^w0 = -1/2 (ideal).
    a = analyse(sallen_key_lowpass(source="symbol", load="symbol"))
    sw0 = a.ideal.sensitivity["w0"]
    for name in ("R1", "R2", "C1", "C2"):
        assert same(sw0[name], V(-1, 2)), name
    # S_x^Q by differentiating SLOA024's Q here (S_x^y = (x/y) dy/dx, REFERENCES.md).
    q = sympy.sqrt(R1 * R2 * C1 * C2) / (C2 * (R1 + R2))
    for x in (R1, R2, C1, C2):
        assert same(a.ideal.sensitivity["q"][str(x)], sympy.cancel(x * sympy.diff(q, x) / q)), x
    # Loaded with R_s (in series with R1): S_R1^w0 = -R1/(2 (R1 + R_s)); common practice.
    assert same(a.loaded.sensitivity["w0"]["R1"], -R1 / (2 * (R1 + R_s)))
    assert "R_L" not in a.loaded.sensitivity["w0"]  # the ideal follower hides R_L


def test_mfb_dc_gain_sensitivities():
    # TI Op Amps for Everyone (from memory): H(0) = -R2/R1, so S_R2^H0 = 1, S_R1^H0 = -1, others 0.
    a = analyse(mfb_lowpass())
    t = a.ideal.sensitivity["dc_gain"]
    assert (same(t["R2"], 1), same(t["R1"], -1), same(t["R3"], 0), same(t["C1"], 0)) == (True,) * 4


FD_CIRCUITS = {
    "rc-lowpass": (lambda: rc_lowpass("4k7", "22n", source="600", load="10k"), "low"),
    "rc-highpass": (lambda: rc_highpass("68n", "3k9", source="600", load="10k"), "high"),
    "sallen-key-lowpass": (lambda: sallen_key_lowpass("6k8", "15k", "10n", "3n3", source="50", load="2k"), "low"),
    "sallen-key-gain": (lambda: sallen_key_lowpass_gain("8k2", "8k2", "6n8", "6n8", "5k6", "10k", source="600"), "low"),
    "sallen-key-highpass": (lambda: sallen_key_highpass("15n", "15n", "5k1", "10k", source="600"), "high"),
    "mfb-lowpass": (lambda: mfb_lowpass("5k6", "12k", "8k2", "47n", "2n2", source="600"), "low"),
}


@pytest.mark.parametrize("name", list(FD_CIRCUITS))
def test_numeric_sensitivities_against_finite_differences(name):
    # S_x^y = (x/y) dy/dx = d ln y / d ln x (REFERENCES.md), approximated by a central difference
    # of ln(cutoff) found by brentq on the derived H (common practice), and of ln|H(0)|.
    build, passband = FD_CIRCUITS[name]
    c = build()
    a = analyse(c)
    values = c.values()
    step = 1e-4
    for view_name in ("loaded", "ideal"):
        view = getattr(a, view_name)
        table = a.numeric[view_name]["sensitivity"]
        for x in sorted(values, key=str):
            if x not in view.transfer.free_symbols():
                assert str(x) not in table["cutoff"]
                continue
            up = {**values, x: values[x] * (1 + V(1, 10**4))}
            dn = {**values, x: values[x] * (1 - V(1, 10**4))}
            span = math.log1p(step) - math.log1p(-step)
            fd = (math.log(brentq_cutoff(view.transfer, up, passband))
                  - math.log(brentq_cutoff(view.transfer, dn, passband))) / span
            assert table["cutoff"][str(x)] == pytest.approx(fd, abs=1e-6), (view_name, x)
            if "dc_gain" in table:
                g = lambda vals: abs(float(view.transfer.dc_gain().xreplace(vals)))  # noqa: E731
                fd_dc = (math.log(g(up)) - math.log(g(dn))) / span
                assert table["dc_gain"][str(x)] == pytest.approx(fd_dc, abs=1e-6), (view_name, x)


# --- load limits --------------------------------------------------------------------------------

@pytest.mark.parametrize("tol", [0.01, 0.02, 0.05, 0.1])
def test_load_limits_rc_lowpass_closed_form(tol):
    # Derived here by hand from Thevenin's theorem (common practice): w_c = 1/(C1 ((R_s + R1) || R_L)).
    # R_L alone (R_s -> 0): w_c/w_ideal = R1/(R1 || R_L) = 1 + R1/R_L <= 1 + tol  =>  R_L >= R1/tol.
    # R_s alone (R_L -> oo): w_c/w_ideal = R1/(R1 + R_s) >= 1 - tol  =>  R_s <= R1 tol/(1 - tol).
    t = sympy.nsimplify(tol)
    ratio_rl = sympy.cancel((1 / (C1 * parallel(R1, R_L))) / (1 / (R1 * C1)))
    assert same(ratio_rl, 1 + R1 / R_L)
    (rl_min,) = sympy.solve(sympy.Eq(ratio_rl, 1 + t), R_L)
    ratio_rs = sympy.cancel((1 / (C1 * (R1 + R_s))) / (1 / (R1 * C1)))
    (rs_max,) = sympy.solve(sympy.Eq(ratio_rs, 1 - t), R_s)
    assert same(rl_min, R1 / t) and same(rs_max, R1 * t / (1 - t))

    a = analyse(rc_lowpass("4k7", "22n", source="600", load="10k"), sensitivity=False)
    lims = {x.fixture: x for x in load_limits(a, tol)}
    assert lims["R_L"].bound == "min" and lims["R_s"].bound == "max"
    assert same(lims["R_L"].exact, rl_min)
    assert same(lims["R_s"].exact, rs_max)
    assert lims["R_L"].value == pytest.approx(4700 / tol, rel=1e-12)
    assert lims["R_s"].value == pytest.approx(4700 * tol / (1 - tol), rel=1e-12)


@pytest.mark.parametrize("tol", [0.02, 0.1])
def test_load_limits_rc_highpass_closed_form(tol):
    # Thevenin's theorem, common practice: the capacitor sees R_s + (R1 || R_L). R_L alone:
    # w_c/w_ideal = R1/(R1 || R_L) = 1 + R1/R_L, so R_L >= R1/tol; R_s alone: R1/(R1 + R_s) >= 1 - tol.
    t = sympy.nsimplify(tol)
    a = analyse(rc_highpass("68n", "3k9", source="600", load="10k"), sensitivity=False)
    lims = {x.fixture: x for x in load_limits(a, tol)}
    assert same(lims["R_L"].exact, R1 / t) and lims["R_L"].bound == "min"
    assert same(lims["R_s"].exact, R1 * t / (1 - t)) and lims["R_s"].bound == "max"
    assert lims["R_L"].value == pytest.approx(3900 / tol, rel=1e-12)


def test_load_limits_when_the_cutoff_does_not_move():
    # Common practice: in the inverting low-pass (R1 in->n, R2 and C1 n->out, + at ground) the pole
    # is 1/(R2 C1) whatever R_s (it only adds to R1, the gain changes) and the ideal op-amp hides R_L.
    c = Circuit.build([Part.resistor("R1", "in", "n", "10k"), Part.resistor("R2", "n", "out", "22k"),
                       Part.capacitor("C1", "n", "out", "4n7"), Part.opamp("U1", "0", "n", "out")],
                      source="600", load="2k")
    a = analyse(c, sensitivity=False)
    assert same(a.loaded.cutoff.value, 1 / (R2 * C1))
    for lim in load_limits(a, 0.02):
        assert lim.value is None and lim.exact is None and lim.note, lim


def test_load_limit_load_capacitance_closed_form():
    # Common practice: C_L is in parallel with C1, so alone w_c/w_ideal = C1/(C1 + C_L) >= 1 - tol
    # => C_L <= C1 tol/(1 - tol).
    a = analyse(rc_lowpass("4k7", "22n", load_capacitance="100p"), sensitivity=False)
    (lim,) = [x for x in load_limits(a, 0.05) if x.fixture == "C_L"]
    assert lim.bound == "max"
    assert same(lim.exact, C1 * V(5, 100) / (1 - V(5, 100)))
    assert lim.value == pytest.approx(22e-9 * 0.05 / 0.95, rel=1e-12)


def _fixture_alone_cutoff(circuit: Circuit, fixture: str, value: float, passband="low") -> float:
    """Cutoff (rad/s) with only ``fixture`` present at ``value``, by brentq (independent of load_limits)."""
    fx = {"R_s": "source", "R_L": "load", "C_L": "load_capacitance"}[fixture]
    c = Circuit.build(circuit.parts, input=circuit.input, output=circuit.output, **{fx: "symbol"})
    h = derive(c)
    return brentq_cutoff(h, {**c.values(), sympy.Symbol(fixture, positive=True): sympy.Rational(value)}, passband)


@pytest.mark.parametrize("build, tol", [
    (lambda: rc_ladder("10k", "10n", "10k", "1n", source="600", load="100k"), 0.02),
    (lambda: sallen_key_lowpass("6k8", "15k", "10n", "3n3", source="50", load="2k"), 0.02),
], ids=["rc-ladder-2%", "sallen-key-2%"])
def test_numeric_load_limits_second_order(build, tol):
    # Issue 3: beyond first order the bound is numeric. Recompute the cutoff at the returned
    # bound with that fixture alone (brentq on a fresh derivation) and compare with the tolerance.
    c = build()
    a = analyse(c, sensitivity=False)
    ideal = brentq_cutoff(derive(c.without_fixtures()), c.values())
    lims = load_limits(a, tol)
    assert lims
    checked = 0
    for lim in lims:
        h_alone = derive(Circuit.build(c.parts, **{{"R_s": "source", "R_L": "load"}[lim.fixture]: "symbol"}))
        if sympy.Symbol(lim.fixture, positive=True) not in h_alone.free_symbols():
            # Common practice: an ideal op-amp output is a voltage source, so R_L changes nothing.
            assert lim.value is None and lim.note
            continue
        assert lim.exact is None and lim.value is not None
        dev = abs(_fixture_alone_cutoff(c, lim.fixture, lim.value) / ideal - 1)
        assert abs(dev - tol) <= 1e-6, (lim, dev)
        inside = lim.value * (1.01 if lim.bound == "min" else 0.99)
        outside = lim.value * (0.99 if lim.bound == "min" else 1.01)
        assert abs(_fixture_alone_cutoff(c, lim.fixture, inside) / ideal - 1) < tol
        assert abs(_fixture_alone_cutoff(c, lim.fixture, outside) / ideal - 1) > tol
        checked += 1
    assert checked >= 1


# --- JSON contract through the command line ------------------------------------------------------

STAGE_KEYS = {"transfer", "numerator", "denominator", "order", "kind", "dc_gain", "hf_gain", "w0", "q",
              "cutoff", "input_impedance", "output_impedance", "sensitivity"}
NUMERIC_KEYS = {"cutoff_hz", "f0_hz", "q", "dc_gain", "dc_gain_db"}
#: Numbers present only where they exist (README "JSON output").
OPTIONAL_NUMERIC_KEYS = {"sensitivity", "low_edge_hz", "high_edge_hz", "stability", "hf_slope_db_per_decade", "hf_gain",
                         "hf_gain_db", "kind", "order", "poles", "zeros", "cancelled", "bandwidth_hz", "notch_hz",
                         "notch_depth_db", "notch_null", "group_delay_dc_s", "peaking_db", "ripple_db", "no_cutoff"}


def _run(args):
    result = CliRunner().invoke(cli, args)
    assert result.exit_code == 0, (args, result.exit_code, result.stderr if hasattr(result, "stderr") else "",
                                   result.exception)
    return result.stdout


@pytest.fixture(scope="module")
def sk_json():
    return json.loads(_run(["derive", "@sallen-key-lowpass", "--format", "json"]))


def test_json_has_every_key_of_the_contract(sk_json):
    # README "JSON output".
    d = sk_json
    assert {"title", "input", "output", "symbols", "loaded", "ideal", "numeric"} <= set(d)
    for view in ("loaded", "ideal"):
        assert STAGE_KEYS <= set(d[view]), STAGE_KEYS - set(d[view])
        assert set(d[view]["sensitivity"]) >= {"cutoff", "w0", "q", "dc_gain"}
        assert NUMERIC_KEYS <= set(d["numeric"][view]), NUMERIC_KEYS - set(d["numeric"][view])
        assert d[view]["kind"] == "lowpass" and d[view]["order"] == 2
    for name, info in d["symbols"].items():
        assert info["role"] in ("part", "source", "load", "opamp", "laplace")
        assert info["value"] is None or isinstance(info["value"], str)
    assert d["symbols"]["s"]["role"] == "laplace"
    assert d["symbols"]["R_s"]["role"] == "source" and d["symbols"]["R_L"]["role"] == "load"


def test_json_expressions_read_back(sk_json):
    # README "JSON output": every expression is sympy str() text that sympify(text, locals=symbols) reads back;
    # here it must equal the analysis's own expression.
    d = sk_json
    syms = read_symbols(d)
    a = analyse(catalogue.build("sallen-key-lowpass"))
    back = lambda text: sympy.sympify(text, locals=syms)  # noqa: E731
    for key in ("loaded", "ideal"):
        st, j = getattr(a, key), d[key]
        h = st.transfer.as_expr()
        assert same(back(j["transfer"]), h)
        assert same(back(j["numerator"]) / back(j["denominator"]), h)
        num, den = st.transfer.normalized()
        assert same(back(j["numerator"]), num) and same(back(j["denominator"]), den)
        assert same(back(j["dc_gain"]), st.transfer.dc_gain())
        assert same(back(j["hf_gain"]), st.transfer.hf_gain())
        assert equal(back(j["w0"]), st.form.w0)
        assert equal(back(j["q"]), st.form.q)
        assert equal(back(j["cutoff"]), st.cutoff.value)
        assert same(back(j["input_impedance"]), st.zin.as_expr())
        assert same(back(j["output_impedance"]), st.zout.as_expr())
        for quantity, table in st.sensitivity.items():
            assert set(j["sensitivity"][quantity]) == set(table)
            for name, e in table.items():
                assert equal(back(j["sensitivity"][quantity][name]), e), (key, quantity, name)
        for k, v in a.numeric[key].items():
            if k != "sensitivity":
                assert d["numeric"][key][k] == v  # JSON floats round-trip exactly
    # The catalogue's values read back exactly (README "JSON output": "value": "4700" | null).
    values = {str(k): v for k, v in catalogue.build("sallen-key-lowpass").values().items()}
    for name, info in d["symbols"].items():
        if info["value"] is not None:
            assert sympy.Rational(info["value"]) == values[name], name
    # The worked numbers again (computed regression values), through the whole command
    # (REFERENCES.md: R_s = 50; the ideal follower makes the catalogue's 2k load irrelevant).
    assert close_to(d["numeric"]["loaded"]["cutoff_hz"], "3068.26")
    assert close_to(d["numeric"]["loaded"]["q"], "0.807574")


@pytest.mark.parametrize("name", ["@rc-lowpass", "@mfb-lowpass"])
def test_json_other_circuits_read_back(name):
    # README "JSON output": keys present (null where a quantity does not exist), text reads back.
    d = json.loads(_run(["derive", name, "--format", "json"]))
    syms = read_symbols(d)
    a = analyse(catalogue.build(name))
    for key in ("loaded", "ideal"):
        assert STAGE_KEYS <= set(d[key])
        st = getattr(a, key)
        assert same(sympy.sympify(d[key]["transfer"], locals=syms), st.transfer.as_expr())
        assert equal(sympy.sympify(d[key]["cutoff"], locals=syms), st.cutoff.value)
        if st.form.q is None:
            assert d[key]["q"] is None
        assert set(d["numeric"][key]) <= NUMERIC_KEYS | OPTIONAL_NUMERIC_KEYS | {"zout_dc_ohm", "zout_cutoff_ohm"}


QUANTITY_KEYS = {"transfer": "transfer", "dc-gain": "dc_gain", "cutoff": "cutoff", "w0": "w0", "q": "q",
                 "zin": "input_impedance", "zout": "output_impedance", "sensitivity": "sensitivity"}


@pytest.fixture(scope="module")
def full_outputs():
    return {fmt: _run(["derive", "@sallen-key-lowpass", "--format", fmt]) for fmt in ("text", "latex", "mathml")}


@pytest.mark.parametrize("quantity", list(QUANTITY_KEYS))
def test_quantity_json(quantity, sk_json):
    # Issue 3: --quantity prints only that quantity; in JSON it is the contract's value for it.
    d = json.loads(_run(["derive", "@sallen-key-lowpass", "--format", "json", "--quantity", quantity]))
    key = QUANTITY_KEYS[quantity]
    for view in ("loaded", "ideal"):
        assert d[view] == sk_json[view][key]
    assert "numeric" not in d


@pytest.mark.parametrize("fmt", ["text", "latex", "mathml"])
@pytest.mark.parametrize("quantity", list(QUANTITY_KEYS))
def test_quantity_other_formats(quantity, fmt, full_outputs):
    # Issue 3: --quantity works in any --format and prints that quantity, not the whole result
    # (the full LaTeX and MathML results leave the sensitivity table out, so that one may be longer).
    out = _run(["derive", "@sallen-key-lowpass", "--format", fmt, "--quantity", quantity])
    assert out.strip()
    assert out != full_outputs[fmt]
    if quantity != "sensitivity":
        assert len(out) < len(full_outputs[fmt])


def test_load_limit_in_json():
    # Issue 3 (--load-limit 2%) with the closed forms derived above (Thevenin, common practice):
    # R_s <= R1/49, R_L >= 50 R1 for R1 = 4.7k.
    d = json.loads(_run(["derive", "@rc-lowpass", "--format", "json", "--load-limit", "2%"]))
    syms = read_symbols(d)
    lims = {x["fixture"]: x for x in d["load_limit"]}
    assert same(sympy.sympify(lims["R_s"]["exact"], locals=syms), R1 / 49)
    assert same(sympy.sympify(lims["R_L"]["exact"], locals=syms), 50 * R1)
    assert lims["R_L"]["value"] == pytest.approx(235000, rel=1e-12)
    assert lims["R_s"]["value"] == pytest.approx(4700 / 49, rel=1e-12)


def test_standard_form_classifies():
    # Common practice (standard second-order forms, e.g. Schaumann & Van Valkenburg, ch. on
    # second-order sections, from memory): numerators 1, s^2, s, 1 + s^2/w0^2, 1 - s/(w0 Q) + s^2/w0^2.
    w, q = sympy.symbols("w q", positive=True)
    d = 1 + s / (w * q) + s**2 / w**2
    cases = {"lowpass": 3 / d, "highpass": 3 * s**2 / w**2 / d, "bandpass": 3 * s / (w * q) / d,
             "notch": 3 * (1 + s**2 / w**2) / d, "allpass": 3 * (1 - s / (w * q) + s**2 / w**2) / d}
    for kind, expr in cases.items():
        f = standard_form(NetworkFunction.from_expr(expr))
        assert f.kind == kind
        assert same(f.w0, w) and same(f.q, q) and same(f.gain, 3), kind
    assert standard_form(NetworkFunction.from_expr((1 + s) / d)).kind == "general"


def _ladder_cutoff(h, values):
    """-3 dB angular frequency relative to |H(0)|, brentq on |H(jw)|^2 (common practice)."""
    num = [float(c) for c in sympy.Poly(h.num.xreplace(values), s).all_coeffs()]
    den = [float(c) for c in sympy.Poly(h.den.xreplace(values), s).all_coeffs()]
    ref = abs(num[-1] / den[-1])
    g = lambda lw: abs(np.polyval(num, 1j * math.exp(lw)) / np.polyval(den, 1j * math.exp(lw))) ** 2 - ref**2 / 2
    return math.exp(brentq(g, math.log(1e-2), math.log(1e10), xtol=1e-15, rtol=1e-15))


def test_third_order_numeric_cutoff_sensitivity():
    # Issue 3, item 4: "S_x^y for y in cutoff, w0, Q, DC gain, to every symbol, symbolic and numeric
    # at the given values". A third-order circuit with every value known gets a numeric cutoff
    # (numeric["loaded"]["cutoff_hz"]) but no numeric cutoff sensitivity, although
    # symfilt.analysis.sensitivity.numeric_sensitivity says it is "used where a quantity has no closed form
    # (cutoff beyond second order)" -- it is not called anywhere.
    # Circuit: RC ladder, R1 in->a, C1 a->0, R2 a->b, C2 b->0, R3 b->out, C3 out->0, R_s = 600, R_L = 10k.
    c = Circuit.build([Part.resistor("R1", "in", "a", "1k"), Part.capacitor("C1", "a", "0", "100n"),
                       Part.resistor("R2", "a", "b", "1k"), Part.capacitor("C2", "b", "0", "100n"),
                       Part.resistor("R3", "b", "out", "1k"), Part.capacitor("C3", "out", "0", "100n")],
                      source="600", load="10k")
    a = analyse(c)
    assert "cutoff_hz" in a.numeric["loaded"]
    table = a.numeric["loaded"]["sensitivity"].get("cutoff")
    assert table is not None, "no numeric cutoff sensitivity for a third-order circuit with all values"
    values = c.values()
    step = sympy.Rational(1, 10**4)
    for x in values:
        up = _ladder_cutoff(a.loaded.transfer, {**values, x: values[x] * (1 + step)})
        dn = _ladder_cutoff(a.loaded.transfer, {**values, x: values[x] * (1 - step)})
        fd = (math.log(up) - math.log(dn)) / (math.log1p(1e-4) - math.log1p(-1e-4))
        assert table[str(x)] == pytest.approx(fd, abs=1e-6)
