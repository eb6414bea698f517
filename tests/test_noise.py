"""Noise through the stage: sources, exact transfers, densities, band RMS, the converter.

Outside checks, each with its source (tests/REFERENCES.md, "Noise"):
kT/C of an RC (Horowitz & Hill, ch. 8, from memory; equipartition, common practice),
√(4kTR) of 1 kΩ at 300 K ≈ 4.07 nV/√Hz (common practice), the non-inverting amplifier's
output noise (TI, *Op Amps for Everyone*, noise chapter, from memory) against a numpy
nodal solution written here, and the demo's passive and buffered stages against
densities derived by hand and integrated with scipy.integrate.quad.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import integrate

from symfilt.analysis.noise import derive_noise, injected_circuit, noise_sources
from symfilt.analysis.noise_numbers import noise_report, spectrum_integral
from symfilt.errors import CircuitError, CircuitFileError, UsageError
from symfilt.model.circuit import Circuit, Part
from symfilt.model.circuit_file import load_circuit, parse_circuit_text
from symfilt.model.noise import BOLTZMANN, NoiseSpec, OpampNoise, load_noise, parse_adc, parse_band

K_B = 1.380649e-23  # J/K, exact SI value (BIPM SI brochure, 9th ed., 2019)
EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
C1, R1 = sympy.symbols("C1 R1", positive=True)


def rc(r="10k", c="10n", **fixtures) -> Circuit:
    return Circuit.build([Part.resistor("R1", "in", "out", r), Part.capacitor("C1", "out", "0", c)], **fixtures)


# --- kT/C -----------------------------------------------------------------------------

def test_rc_noise_over_all_frequencies_is_kt_over_c_in_closed_form():
    # Horowitz & Hill, The Art of Electronics, 3rd ed., ch. 8 (noise; kT/C) (from memory)
    r = noise_report(Circuit.build([Part.resistor("R1", "in", "out"), Part.capacitor("C1", "out", "0")]))
    assert dict(r.loaded.whole_closed) == {"kT": 1 / C1}


@settings(max_examples=15, deadline=None)
@given(st.integers(min_value=0, max_value=6), st.integers(min_value=-12, max_value=-6))
def test_rc_noise_is_kt_over_c_for_any_r(r_exp, c_exp):
    # the same published result: independent of R; numbers at 300 K
    r = noise_report(rc(r=str(10**r_exp), c=f"1e{c_exp}"))
    assert r.loaded.whole_power == pytest.approx(K_B * 300 / 10.0**c_exp, rel=1e-9)
    assert r.loaded.method == "exact"


def test_loaded_rc_with_a_thermal_load_is_kt_over_the_total_capacitance():
    # equipartition: kT/2 on the one capacitance of a passive RC network, common practice
    c = rc(source="symbol", load="symbol", load_capacitance="symbol")
    r = noise_report(c, NoiseSpec(load_thermal=True))
    (key, form), = r.loaded.whole_closed
    assert key == "kT" and sympy.simplify(form - 1 / (C1 + sympy.Symbol("C_L", positive=True))) == 0


@settings(max_examples=10, deadline=None)
@given(st.lists(st.integers(min_value=2, max_value=6), min_size=4, max_size=4))
def test_rc_ladder_output_capacitor_holds_kt_over_c2(exps):
    # equipartition (common practice): a capacitor of a passive RC network in equilibrium has
    # <V²> = kT/C, whatever the resistors; here the output capacitor of a two-section ladder
    r1, r2, c1, c2 = (f"1e{exps[0]}", f"1e{exps[1]}", f"1e-{exps[2] + 4}", f"1e-{exps[3] + 4}")
    c = Circuit.build([Part.resistor("R1", "in", "a", r1), Part.capacitor("C1", "a", "0", c1),
                       Part.resistor("R2", "a", "out", r2), Part.capacitor("C2", "out", "0", c2)], source="1k")
    r = noise_report(c)
    assert r.loaded.whole_power == pytest.approx(K_B * 300 / float(c2), rel=1e-9)


def test_spectrum_integral_against_scipy_for_a_second_order():
    # Åström, Introduction to Stochastic Control Theory, ch. 5 (table I_n) (from memory);
    # ∫0^∞ |1/(1 + s/(w0 Q) + s²/w0²)|² df against scipy.integrate.quad (independent numeric)
    w0, q = 2 * math.pi * 1000, sympy.Rational(7, 10)
    exact = spectrum_integral([1], [1, 1 / (sympy.Float(w0) * q), 1 / sympy.Float(w0) ** 2])
    def h2(f):
        s = 2j * math.pi * f
        return abs(1 / (1 + s / (w0 * 0.7) + (s / w0) ** 2)) ** 2
    num = integrate.quad(h2, 0, 1e3)[0] + integrate.quad(h2, 1e3, np.inf)[0]
    assert float(exact) == pytest.approx(num, rel=1e-7)


# --- resistor density -----------------------------------------------------------------

def test_resistor_density_of_1k_at_300k():
    # √(4kTR) for 1 kΩ at 300 K ≈ 4.07 nV/√Hz, common practice
    r = noise_report(rc(r="1k", c="1p"), at=(1.0,))
    assert r.loaded.density[0] == pytest.approx(4.07e-9, rel=1e-3)
    assert r.loaded.density[0] == pytest.approx(math.sqrt(4 * K_B * 300 * 1000), rel=1e-12)


def test_boltzmann_constant_is_the_exact_si_value():
    # BIPM, The International System of Units, 9th ed. (2019): k = 1.380649e-23 J/K exactly
    assert BOLTZMANN == sympy.Rational("1.380649e-23")


# --- non-inverting amplifier ------------------------------------------------------------

def noninverting(cf=None):
    parts = [Part.opamp("U1", "in", "m", "out"), Part.resistor("Rf", "out", "m", "9k"), Part.resistor("Rg", "m", "0", "1k")]
    if cf:
        parts.append(Part.capacitor("Cf", "out", "m", cf))
    return Circuit.build(parts, source="2k")


EN, IN = 8e-9, 2e-12
AMP = NoiseSpec(opamps=(OpampNoise("U1", en=sympy.Rational(8, 10**9), in_=sympy.Rational(2, 10**12)),))


def test_noninverting_amplifier_against_the_textbook_formula():
    # TI, Op Amps for Everyone (R. Mancini, ed.), noise chapter (from memory):
    # e_o² = (en² + 4kT Rs + (in Rs)²)(1 + Rf/Rg)² + 4kT Rf + 4kT Rg (Rf/Rg)² + (in Rf)²
    r = noise_report(noninverting(), AMP, at=(1000.0,))
    kt4, rs, rf, rg = 4 * K_B * 300, 2e3, 9e3, 1e3
    g = 1 + rf / rg
    expected = (EN**2 + kt4 * rs + (IN * rs) ** 2) * g**2 + kt4 * rf + kt4 * rg * (rf / rg) ** 2 + (IN * rf) ** 2
    assert r.loaded.density[0] == pytest.approx(math.sqrt(expected), rel=1e-12)
    en_term = next(t for t in r.analysis.loaded if t.source.name == "U1 en")
    assert sympy.simplify(en_term.transfer.as_expr() - (1 + sympy.Symbol("Rf", positive=True) / sympy.Symbol("Rg", positive=True))) == 0


def _nodal_noise_density(f: float) -> float:
    """Independent numpy nodal solution of the non-inverting amplifier with Cf across Rf.

    Unknowns: V(in), V(m), V(out), I_opamp; ideal op-amp V(in) + e = V(m). Each source alone.
    """
    kt4, rs, rf, rg, cf = 4 * K_B * 300, 2e3, 9e3, 1e3, 1e-9
    yf = 1 / rf + 2j * math.pi * f * cf

    def solve(current_at: dict, e_plus: float) -> complex:
        a = np.zeros((4, 4), complex)
        b = np.zeros(4, complex)
        a[0, 0] = 1 / rs                                 # KCL in: through Rs to ground (op-amp input draws none)
        a[1, 1], a[1, 2] = 1 / rg + yf, -yf              # KCL m
        a[2, 1], a[2, 2], a[2, 3] = -yf, yf, 1           # KCL out: op-amp output current I
        a[3, 0], a[3, 1], b[3] = 1, -1, -e_plus          # V(in) + e = V(m)
        for node, i in current_at.items():
            b[node] += i
        return np.linalg.solve(a, b)[2]

    total = abs(solve({}, 1.0)) ** 2 * EN**2
    for node_pair, level in (((0, None), kt4 / rs), ((1, None), kt4 / rg), ((1, 2), kt4 / rf)):
        inject = {node_pair[0]: 1.0} if node_pair[1] is None else {node_pair[0]: 1.0, node_pair[1]: -1.0}
        total += abs(solve(inject, 0.0)) ** 2 * level
    total += (abs(solve({0: 1.0}, 0.0)) ** 2 + abs(solve({1: 1.0}, 0.0)) ** 2) * IN**2
    return math.sqrt(total)


@pytest.mark.parametrize("f", [10.0, 10e3, 50e3, 1e6])
def test_noninverting_amplifier_with_cf_against_a_numpy_nodal_solution(f):
    # independent numpy computation of the same circuit (no symfilt code)
    r = noise_report(noninverting("1n"), AMP, at=(f,))
    assert r.loaded.density[0] == pytest.approx(_nodal_noise_density(f), rel=1e-9)


# --- the demo's passive and buffered stages ------------------------------------------------

def _quad_band(fn, lo, hi) -> float:
    """scipy.integrate.quad over [lo, hi], split at each decade (independent of symfilt's mpmath)."""
    edges = [lo] + [10.0**k for k in range(math.ceil(math.log10(lo)), math.ceil(math.log10(hi))) if lo < 10.0**k < hi] + [hi]
    return sum(integrate.quad(fn, a, b, limit=200, epsabs=0)[0] for a, b in zip(edges, edges[1:]))


def passive_density(f: float) -> float:
    # by hand: (R_s + R1) in series from the grounded probe into R_L || (C1 + C_L); R_L noiseless
    kt4, rser, rl, c = 4 * K_B * 300, 11.5e3, 22e3, 100e-9 + 100e-12
    zp = rl / (1 + 2j * math.pi * f * rl * c)
    return kt4 * rser * abs(zp / (rser + zp)) ** 2


def buffered_density(f: float) -> float:
    # by hand: the followers isolate; U1 passes R_s's 4kTR_s, (in R_s)² and en²(1 + fc/f) into the RC,
    # R1 adds 4kTR1 there; U2 adds en²(1 + fc/f) flat and in² |Z_b|², Z_b = R1/(1 + sR1C1)
    kt4, rs, r1, c1, en, i_n, fc = 4 * K_B * 300, 10e3, 1.5e3, 100e-9, 10e-9, 1e-12, 10.0
    h = 1 / abs(1 + 2j * math.pi * f * r1 * c1) ** 2
    e2 = en**2 * (1 + fc / f)
    return (kt4 * rs + (i_n * rs) ** 2 + e2 + kt4 * r1) * h + e2 + (i_n * r1) ** 2 * h


@pytest.mark.parametrize("name, density", [("demo_noise_passive", passive_density), ("demo_noise_buffered", buffered_density)])
def test_demo_stages_against_scipy_integration(name, density):
    path = EXAMPLES / f"{name}.toml"
    c = load_circuit(path)
    r = noise_report(c, load_noise(path, c), at=(10.0, 1000.0))
    assert r.loaded.band == (0.1, 20000.0)
    assert r.loaded.power == pytest.approx(_quad_band(density, 0.1, 20000.0), rel=1e-8)
    assert r.loaded.density == pytest.approx([math.sqrt(density(f)) for f in (10.0, 1000.0)], rel=1e-10)
    assert sum(x.share for x in r.loaded.contributions) == pytest.approx(1.0)
    assert r.adc.lsb == 4.096 / 2**16 and r.adc.below["loaded"]  # 16-bit LSB: full scale / 2^16, common practice


def test_passive_stage_all_frequencies_against_scipy():
    c = load_circuit(EXAMPLES / "demo_noise_passive.toml")
    r = noise_report(c)
    assert r.loaded.whole_power == pytest.approx(integrate.quad(passive_density, 0, np.inf, limit=400)[0], rel=1e-6)


def test_quantisation_noise_is_lsb_over_root_12():
    # uniform quantisation error over one LSB has RMS LSB/√12: Bennett, Bell System Technical
    # Journal 1948 (from memory); common practice
    r = noise_report(rc(), NoiseSpec(adc=parse_adc("12bit,2.5V")))
    assert r.adc.quantisation_rms == pytest.approx(2.5 / 4096 / math.sqrt(12))


def test_band_to_nyquist_of_a_sample_rate():
    r = noise_report(rc(), NoiseSpec(sample_rate=sympy.Integer(48000)))
    assert r.loaded.band == (0.0, 24000.0)
    want = integrate.quad(lambda f: 4 * K_B * 300 * 1e4 / (1 + (2 * math.pi * f * 1e-4) ** 2), 0, 24000, limit=200)[0]
    assert r.loaded.power == pytest.approx(want, rel=1e-8)


def test_input_referred_density_of_a_passive_rc_is_flat():
    # every source of a plain RC passes the same pole as the signal: the input-referred density is √(4kT(R_s + R1))
    r = noise_report(rc(source="1k"), at=(10.0, 1e4, 1e6))
    assert r.loaded.input_density == pytest.approx([math.sqrt(4 * K_B * 300 * 11e3)] * 3, rel=1e-9)


# --- sources, names, parsing, errors ----------------------------------------------------------

def test_injected_names_cannot_meet_user_names():
    c = Circuit.build([Part.opamp("U1", "in", "m", "out"), Part.resistor("Rf", "out", "m", "9k"),
                       Part.resistor("Rg", "m", "0", "1k")])
    spec = NoiseSpec(opamps=(OpampNoise("U1", en=sympy.Integer(1)),))
    for s in noise_sources(c, spec):
        inj = injected_circuit(c, s)
        new = {p.name for p in inj.parts} - {p.name for p in c.parts}
        assert all(":" in n for n in new)
        assert all("\x00" in n for n in set(inj.nodes()) - set(c.nodes()) - {"0"})


def test_tied_resistor_noise_uses_its_tie():
    c = Circuit.build([Part.resistor("R1", "in", "out", "R/2"), Part.capacitor("C1", "out", "0", "1n")],
                      parameters={"R": "2k"})
    r = noise_report(c, at=(1.0,))
    assert r.loaded.density[0] == pytest.approx(math.sqrt(4 * K_B * 300 * 1000), rel=1e-6)


def test_grounded_input_shorts_a_shunt_resistor():
    c = Circuit.build([Part.resistor("R0", "in", "0", "1k"), Part.resistor("R1", "in", "out", "1k"),
                       Part.capacitor("C1", "out", "0", "1n")])
    assert [t.source.name for t in derive_noise(c).loaded] == ["R1"]


def test_noise_table_and_keys_from_a_file():
    text = ('[noise]\ntemperature = "310 K"\nsample_rate = "48k"\nadc = "24bit,5V"\nload = "thermal"\n'
            '[parts]\nU1 = { kind = "opamp", plus = "in", minus = "out", out = "out", en = "4nV/rtHz", in = "0.5p", fc_in = "100" }\n'
            'R1 = { kind = "resistor", nodes = ["out", "0"], value = "1k" }\n')
    parse_circuit_text(text)  # the circuit reader accepts the noise keys
    import tomllib
    from symfilt.model.noise import noise_from_dict
    spec = noise_from_dict(tomllib.loads(text))
    assert (spec.temperature, spec.sample_rate, spec.adc.bits, spec.load_thermal) == (310, 48000, 24, True)
    assert spec.opamp("U1").en == sympy.Rational(4, 10**9) and spec.opamp("U1").fc_in == 100 and spec.given


@pytest.mark.parametrize("table, words", [
    ('[noise]\nband = "20k,1"\n', "upper edge"),
    ('[noise]\nbandd = "1,2"\n', "unknown key"),
    ('[noise]\nband = "1,2"\nsample_rate = "48k"\n', "both band and sample_rate"),
    ('[noise]\nload = "hot"\n', "unknown load noise"),
    ('[noise]\ntemperature = "-4"\n', "must be positive"),
])
def test_bad_noise_table_is_one_file_error(table, words):
    text = table + ('[parts]\nR1 = { kind = "resistor", nodes = ["in", "out"], value = "1k" }\n'
            'R2 = { kind = "resistor", nodes = ["out", "0"], value = "1k" }\n')
    with pytest.raises(CircuitFileError, match=words):
        parse_circuit_text(text, "f.toml")


def test_noise_symbol_clash_is_refused():
    text = ('[parts]\nU1 = { kind = "opamp", plus = "in", minus = "out", out = "out", en = "4n" }\n'
            'en_U1 = { kind = "resistor", nodes = ["out", "0"], value = "1k" }\n')
    with pytest.raises(CircuitError, match="noise symbol"):
        parse_circuit_text(text, "f.toml")


def test_band_and_adc_option_words():
    assert parse_band("0,20k") == (0, 20000)
    with pytest.raises(UsageError):
        parse_band("20k")
    with pytest.raises(UsageError):
        parse_adc("64bit,5V")


def test_one_over_f_from_zero_hz_is_an_error():
    c = noninverting()
    spec = NoiseSpec(opamps=(OpampNoise("U1", en=sympy.Integer(1), fc_en=sympy.Integer(10)),), band=(0, 100))
    with pytest.raises(UsageError, match="1/f"):
        noise_report(c, spec)


def test_flat_noise_without_a_band_has_no_total_and_says_so():
    spec = NoiseSpec(opamps=(OpampNoise("U1", en=sympy.Integer(1)),))
    r = noise_report(noninverting(), spec)
    assert r.loaded.rms is None and [f.kind for f in r.findings] == ["noise-no-total"]


# --- the command ------------------------------------------------------------------------

def test_cli_noise_text_on_the_demo_stages(run_cli):
    for name in ("demo_noise_passive", "demo_noise_buffered"):
        code, out, err = run_cli("noise", str(EXAMPLES / f"{name}.toml"))
        assert code == 0, err
        for words in ("Output noise density", "RMS over 100 mHz to 20 kHz", "Contributors, loaded",
                      "Converter 16 bit", "below one LSB"):
            assert words in out


def test_cli_noise_json_matches_the_library(run_cli):
    code, out, err = run_cli("noise", str(EXAMPLES / "demo_noise_passive.toml"), "--format", "json", "--at", "1k")
    assert code == 0, err
    data = json.loads(out)
    assert data["loaded"]["rms_v"] == pytest.approx(math.sqrt(_quad_band(passive_density, 0.1, 2e4)), rel=1e-8)
    assert data["frequencies_hz"] == [1000.0]
    assert data["adc"]["lsb_v"] == 4.096 / 65536
    locals_ = {n: sympy.Symbol(n, positive=True) for n in ("R1", "R_s", "R_L", "C1", "C_L")}
    assert sympy.simplify(sympy.sympify(data["ideal"]["whole_form"]["kT"], locals=locals_) - 1 / locals_["C1"]) == 0


@pytest.mark.parametrize("args, words", [
    (["--band", "1,x"], "--band"),
    (["--band", "1,2", "--sample-rate", "48k"], "both --band and --sample-rate"),
    (["--adc", "16bit"], "--adc"),
    (["--temperature", "0"], "temperature"),
])
def test_cli_noise_bad_options_are_one_line(run_cli, args, words):
    code, out, err = run_cli("noise", "@rc-lowpass", *args)
    assert code == 2 and not out
    assert err.startswith("error: ") and words in err and err.count("\n") == 1


# --- the design note ------------------------------------------------------------------

def test_note_has_a_noise_section_only_with_noise_data(run_cli, tmp_path):
    code, _out, err = run_cli("note", str(EXAMPLES / "demo_noise_buffered.toml"), "-o", str(tmp_path / "b.md"))
    assert code == 0, err
    md = (tmp_path / "b.md").read_text(encoding="utf-8")
    section = md.split("## Noise", 1)[1].split("## Assumptions", 1)[0]
    rms = noise_report(load_circuit(EXAMPLES / "demo_noise_buffered.toml"),
                       load_noise(EXAMPLES / "demo_noise_buffered.toml")).loaded.rms
    assert f"{rms * 1e6:.4g} µV" in section and "U2 en" in section and "RMS in LSB of 16 bit" in section
    assert all(line.count("|") - line.count("\\|") == 4 for line in section.splitlines() if line.startswith("| "))
    code, _out, err = run_cli("note", str(EXAMPLES / "demo_noise_passive.toml"), "-o", str(tmp_path / "p.html"))
    assert code == 0, err
    assert 'id="noise"' in (tmp_path / "p.html").read_text(encoding="utf-8")
    code, _out, err = run_cli("note", "@rc-lowpass", "-o", str(tmp_path / "r.html"))
    assert code == 0, err
    assert 'id="noise"' not in (tmp_path / "r.html").read_text(encoding="utf-8")


def test_readme_noise_example_is_what_the_command_prints(run_cli):
    readme = (Path(__file__).resolve().parent.parent / "README.md").read_text(encoding="utf-8")
    block = readme.split("$ symfilt noise examples/demo_noise_passive.toml\n", 1)[1].split("```", 1)[0]
    code, out, err = run_cli("noise", str(EXAMPLES / "demo_noise_passive.toml"))
    assert code == 0, err
    shown = [line for line in block.splitlines() if line != "..."]
    assert len(shown) > 10 and all(line in out.splitlines() for line in shown)
