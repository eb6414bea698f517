"""Partly symbolic derivation (--keep) and approximate formulas with a measured error (--approx).

Sources (tests/REFERENCES.md, "Partly symbolic derivation and approximation"):
- putting values in before or after solving a linear system gives the same result wherever the
  determinant is not zero (Cramer's rule is a ratio of polynomials; evaluation is a ring
  homomorphism): common practice (linear algebra);
- the transmission (ABCD) matrix of a series impedance Z is [[1, Z], [0, 1]] and of a shunt
  admittance Y is [[1, 0], [Y, 1]]; a cascade multiplies them; V_out/V_s = 1/(A + B/R_L) behind
  the source resistance folded into the first section: D. M. Pozar, *Microwave Engineering*,
  section on ABCD parameters (from memory), common practice;
- simplification after generation (term pruning by magnitude at the nominal values): G. Gielen and
  W. Sansen, *Symbolic Analysis for Automated Design of Analog Integrated Circuits*, Kluwer 1991,
  the chapter on approximation (from memory). The error is checked here by our own numpy evaluation.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
import sympy

from symfilt import approximate, catalogue, report
from symfilt.analysis.network import derive
from symfilt.analysis.stage import analyse
from symfilt.errors import CircuitError, UsageError
from symfilt.model.circuit import Circuit, Part
from symfilt.model.keep import FIXTURES

S = sympy.Symbol("s")


def _put(circuit, keep):
    """The values of every symbol that is not kept (the fixtures too: the loaded view)."""
    return {k: v for k, v in circuit.values().items() if k.name not in keep}


CASES = [("rc-lowpass", ["R_L"]), ("rc-lowpass", ["R1", "R_s"]), ("sallen-key-lowpass", ["R_s", "R_L"]),
         ("sallen-key-lowpass", ["R1"]), ("mfb-lowpass", ["R_s", "R3"]), ("twin-t-notch-tied", ["R"]),
         ("twin-t-notch-tied", ["R_L"]), ("state-variable", ["R4"]), ("adc-driver", ["C_L", "A_U1"]),
         ("mfb-bandpass", ["C1"])]


@pytest.mark.parametrize("name,keep", CASES)
def test_keep_equals_full_result_with_values_put_in(name, keep):
    # linear algebra: substitution commutes with solving (see the module docstring); exact equality
    c = catalogue.build(name)
    full, part = analyse(c, sensitivity=False), analyse(c.keeping(keep), sensitivity=False)
    put = _put(c, keep)
    ideal_put = {k: v for k, v in put.items() if k.name not in FIXTURES}
    for q in ("transfer", "zin", "zout"):
        assert getattr(part.loaded, q) == getattr(full.loaded, q).subs(put), (name, keep, q)
        assert getattr(part.ideal, q) == getattr(full.ideal, q).subs(ideal_put), (name, keep, q)
    free = {x.name for x in part.loaded.transfer.free_symbols()} - {"s"}
    assert free <= set(keep)
    assert part.numeric["loaded"]["dc_gain"] == pytest.approx(full.numeric["loaded"]["dc_gain"], rel=1e-12)


def test_keep_with_inductors_and_single_pole_opamps():
    # an RLC section (inductors go in as values: their 1/(sL) becomes a number times 1/s) and a
    # single-pole op-amp (2*pi*GBW with pi kept exact)
    parts = [Part.resistor("R1", "in", "a", "1k"), Part.inductor("L1", "a", "out", "10m"),
             Part.capacitor("C1", "out", "0", "100n"), Part.inductor("L2", "out", "0", "47m")]
    c = Circuit.build(parts, source="50", load="1k")
    full = derive(c)
    for keep in (["R1"], ["R_L"], ["L1"]):
        assert derive(c.keeping(keep)).ideal() == full.ideal().subs(
            {k: v for k, v in c.values().items() if k.name not in keep and k.name not in FIXTURES})
    sk = catalogue.build("sallen-key-lowpass").with_opamp_model("single-pole", gain="100k", gbw="1M")
    keep = ["R2"]
    assert derive(sk.keeping(keep)) == derive(sk).subs(
        {k: v for k, v in sk.values().items() if k.name not in keep and k.name not in FIXTURES})


def test_keep_40_part_ladder_against_abcd_cascade():
    # 20 RC sections (40 parts), R_L kept; H(jw) against the ABCD cascade evaluated by numpy
    r, cap, n = 1000.0, 10e-9, 20
    nodes = ["in"] + [f"n{k}" for k in range(1, n)] + ["out"]
    parts = [p for k in range(n) for p in (Part.resistor(f"R{k + 1}", nodes[k], nodes[k + 1], "1k"),
                                           Part.capacitor(f"C{k + 1}", nodes[k + 1], "0", "10n"))]
    c = Circuit.build(parts, source="50", load="10k")
    assert len(c.parts) == 40
    h = derive(c.keeping(["R_L"]))
    assert {x.name for x in h.free_symbols()} == {"s", "R_L", "R_s"}  # fixtures stay for the ideal limit
    rs, rl = 50.0, 10e3
    for f in (10.0, 300.0, 3e3, 3e4):
        s = 2j * np.pi * f
        m = np.eye(2, dtype=complex)
        for k in range(n):
            series = r + (rs if k == 0 else 0.0)
            m = m @ np.array([[1, series], [0, 1]]) @ np.array([[1, 0], [s * cap, 1]])
        expected = 1 / (m[0, 0] + m[0, 1] / rl)
        num, den = h.coefficient_values({"R_L": rl, "R_s": rs})
        got = np.polyval(num[::-1], s) / np.polyval(den[::-1], s)
        assert abs(got - expected) <= 1e-9 * abs(expected)


def test_keep_report_api_and_cli_agree(run_cli):
    c = catalogue.build("mfb-lowpass")
    r = report(c, keep="R_s", sensitivity=False)
    assert r.circuit.keep == ("R_s",)
    assert r.analysis.loaded.transfer == analyse(c.keeping(["R_s"]), sensitivity=False).loaded.transfer
    code, out, err = run_cli("derive", "@mfb-lowpass", "--keep", "R_s", "--format", "json")
    assert code == 0
    data = json.loads(out)
    assert data["keep"] == {"keep": ["R_s"], "unvalued": []}
    loaded = sympy.sympify(data["loaded"]["transfer"], locals={"R_s": sympy.Symbol("R_s", positive=True)})
    assert sympy.simplify(loaded - r.analysis.loaded.transfer.as_expr()) == 0
    code, out, _ = run_cli("derive", "@mfb-lowpass", "--keep", "R_s")
    assert code == 0 and out.startswith("partly symbolic (keep): only R_s and s are symbols")


def test_keep_unknown_name_is_exit_2_with_a_suggestion(run_cli):
    code, out, err = run_cli("derive", "@rc-lowpass", "--keep", "R_LL")
    assert code == 2 and out == ""
    assert err.strip() == ("error: --keep: R_LL is not a symbol of the circuit, did you mean R_L? "
                           "keep one of C1, R1, R_L, R_s")
    with pytest.raises(CircuitError, match="tied to R"):
        catalogue.build("twin-t-notch-tied").keeping(["R1"])


def test_keep_file_key(run_cli, tmp_path):
    text = ('keep = ["R_L"]\n[source]\nresistance = "600"\n[load]\nresistance = "10k"\n[parts]\n'
            'R1 = { kind = "resistor", nodes = ["in", "out"], value = "4k7" }\n'
            'C1 = { kind = "capacitor", nodes = ["out", "0"] }\n')
    p = tmp_path / "rc.toml"
    p.write_text(text)
    code, out, err = run_cli("derive", str(p), "--format", "json")
    assert code == 0
    data = json.loads(out)
    assert data["keep"] == {"keep": ["R_L"], "unvalued": ["C1"]}  # C1 has no value: it stays a symbol
    assert "C1 has no value and stays a symbol" in err
    assert "R1" not in data["loaded"]["transfer"] and "C1" in data["loaded"]["transfer"]
    code, out, _ = run_cli("derive", str(p), "--keep", "R1", "--format", "json")  # the option wins
    assert json.loads(out)["keep"]["keep"] == ["R1"]
    p.write_text(text.replace('keep = ["R_L"]', 'keep = ["R_X"]'))
    code, out, err = run_cli("derive", str(p))
    assert code == 2 and out == "" and err.startswith("error: rc.toml keep: R_X is not a symbol of the circuit")
    p.write_text(text.replace('keep = ["R_L"]', "keep = 5"))
    code, out, err = run_cli("derive", str(p))
    assert code == 2 and "is not a list of names" in err


def test_keep_without_fixtures_has_ideal_view():
    c = catalogue.build("sallen-key-lowpass").without_fixtures()
    a = analyse(c.keeping(["C1"]), sensitivity=True)
    assert a.loaded.transfer == a.ideal.transfer
    assert set(a.loaded.sensitivity["w0"]) == {"C1"}  # only kept symbols get sensitivities


# --- approximation --------------------------------------------------------------------------------

def _numpy_error(exact, approx, values, band, points=4000):
    """Our own measurement: worst | |Ha(jw)|/|H(jw)| - 1 | over a log band, by sympy lambdify and numpy."""
    syms = sorted((exact.free_symbols() | approx.free_symbols()) - {S}, key=lambda x: x.name)
    subs = {x: values[x] for x in syms}
    w = 2 * np.pi * np.logspace(np.log10(band[0]), np.log10(band[1]), points)
    fe = sympy.lambdify(S, exact.as_expr().xreplace(subs), "numpy")
    fa = sympy.lambdify(S, approx.as_expr().xreplace(subs), "numpy")
    return float(np.max(np.abs(np.abs(fa(1j * w) / fe(1j * w)) - 1)))


APPROX = ["rc-lowpass", "sallen-key-lowpass", "mfb-lowpass", "mfb-bandpass", "twin-t-notch", "rc-ladder",
          "state-variable", "adc-driver", "sallen-key-lowpass-gain"]


@pytest.mark.parametrize("name", APPROX)
@pytest.mark.parametrize("bound", [0.05, 0.01])
def test_approx_error_measured_independently_is_within_the_bound(name, bound):
    c = catalogue.build(name)
    h = derive(c)
    x = approximate(h, c.values(), bound, numbers=analyse(c, sensitivity=False).numeric["loaded"])
    assert x.measured_worst <= bound
    assert _numpy_error(h, x.approx, c.values(), x.band_hz) <= bound * 1.01  # a denser grid than the tool's
    assert x.terms_kept + len(x.dropped) == x.terms_total


@pytest.mark.parametrize("name", APPROX)
def test_approx_drops_the_small_terms(name):
    c = catalogue.build(name)
    h = derive(c)
    x = approximate(h, c.values(), 0.05)
    vals = c.values()
    num, den = (sympy.Poly(sympy.expand(p), S) for p in (h.ratio.to_sympy()))
    exact_terms = {"num": num, "den": den}
    for which, power, term in x.dropped:
        coef = exact_terms[which].coeff_monomial(S ** power)
        terms = sympy.Add.make_args(sympy.expand(coef))
        size = lambda t: abs(float(t.xreplace(vals).evalf()))
        dropped_here = [t / S ** power for w, k, t in x.dropped if w == which and k == power]
        kept_here = [t for t in terms if t not in dropped_here]
        assert kept_here, "a coefficient keeps its largest term"
        assert size(term / S ** power) <= min(size(t) for t in kept_here)
        assert sum(size(t) for t in dropped_here) <= x.eps * size(coef) * (1 + 1e-12)


def test_approx_zero_bound_is_exact_and_back_off_holds():
    for name in APPROX:
        c = catalogue.build(name)
        h = derive(c)
        x = approximate(h, c.values(), 0.0)
        assert x.approx == h and x.dropped == () and x.terms_kept == x.terms_total
    c = catalogue.build("rc-highpass")  # dropping at 5% per coefficient overshoots: the bound is halved
    x = approximate(derive(c), c.values(), 0.05)
    assert x.eps < 0.05 and x.measured_worst <= 0.05


def test_approx_over_value_ranges():
    c = catalogue.build("sallen-key-lowpass")
    h = derive(c)
    ranges = {"R_s": (0, 600), "R_L": (1000, 100000)}
    x = approximate(h, c.values(), 0.05, ranges=ranges)
    assert x.corners == 5
    vals = c.values()
    for rs in ranges["R_s"]:
        for rl in ranges["R_L"]:
            at = {**vals, sympy.Symbol("R_s", positive=True): rs, sympy.Symbol("R_L", positive=True): rl}
            assert _numpy_error(h, x.approx, at, x.band_hz) <= 0.05 * 1.01


def test_approx_needs_values(run_cli, tmp_path):
    c = catalogue.build("rc-lowpass", R1=None)
    with pytest.raises(UsageError, match="R1 has none"):
        approximate(derive(c), c.values(), 0.05)
    p = tmp_path / "rc.toml"
    p.write_text('[parts]\nR1 = { kind = "resistor", nodes = ["in", "out"] }\n'
                 'C1 = { kind = "capacitor", nodes = ["out", "0"], value = "1n" }\n')
    code, out, err = run_cli("derive", str(p), "--approx", "5%")
    assert code == 2 and out == ""
    assert err.strip().startswith("error: --approx: the terms are weighed at the values, and R1 has none")
    code, _, err = run_cli("derive", "@rc-lowpass", "--approx", "5x")
    assert code == 2 and "is not an error bound" in err


def test_approx_in_text_json_and_note(run_cli, tmp_path):
    code, out, _ = run_cli("derive", "@sallen-key-lowpass", "--approx", "5%", "--format", "json")
    assert code == 0
    a = json.loads(out)["approx"]
    assert a["bound"] == 0.05 and a["loaded"]["measured_worst"] <= 0.05
    assert a["loaded"]["terms_kept"] < a["loaded"]["terms_total"]
    syms = {n: sympy.Symbol(n, positive=True) for n in ("R1", "R2", "C1", "C2")}
    w0 = sympy.sympify(a["loaded"]["w0"], locals=syms)
    # the dominant terms of the loaded Sallen-Key are the ideal ones: w0 = 1/sqrt(R1 R2 C1 C2)
    # (TI SLOA024, from memory; as under "Second order" in tests/REFERENCES.md)
    assert sympy.simplify(w0 - 1 / sympy.sqrt(syms["R1"] * syms["R2"] * syms["C1"] * syms["C2"])) == 0
    code, out, _ = run_cli("derive", "@sallen-key-lowpass", "--approx", "5%")
    assert "Approximate H(s), within 5%" in out and "simplification after generation" in out
    code, out, _ = run_cli("derive", "@sallen-key-lowpass")
    assert "Approximate" not in out  # the exact result is one flag away
    note = tmp_path / "n.md"
    code, _, _ = run_cli("note", "@sallen-key-lowpass", "--approx", "5%", "--keep", "R_s", "-o", str(note))
    assert code == 0
    md = note.read_text()
    assert "## Approximation" in md and md.index("## Approximation") < md.index("## Sensitivities")


def test_keep_load_limit_needs_the_fixtures(run_cli):
    code, out, err = run_cli("derive", "@rc-lowpass", "--keep", "R1", "--load-limit", "2%")
    assert code == 2 and out == ""
    assert err.strip() == ("error: --load-limit: the load limits need R_L, R_s as symbols, "
                           "keep them too: --keep R1,R_L,R_s")
    full = report(catalogue.build("rc-lowpass"), load_limit=0.02, sensitivity=False)
    part = report(catalogue.build("rc-lowpass"), keep="R1,R_L,R_s", load_limit=0.02, sensitivity=False)
    assert [x.value for x in part.load_limits] == pytest.approx([x.value for x in full.load_limits], rel=1e-12)


def test_keep_leaves_out_the_opamp_error_and_keeps_opamp_symbols():
    c = catalogue.build("sallen-key-lowpass").with_opamp_model("single-pole", gain="100k", gbw="1M")
    full = report(c, sensitivity=False)
    r = report(c, keep="R1,GBW_U1", sensitivity=False)
    assert full.opamp_error is not None and r.opamp_error is None  # documented: needs every symbol
    assert {x.name for x in r.analysis.ideal.transfer.free_symbols()} == {"s", "R1", "GBW_U1"}
    assert r.analysis.numeric["loaded"]["cutoff_hz"] == pytest.approx(full.analysis.numeric["loaded"]["cutoff_hz"],
                                                                      rel=1e-9)
