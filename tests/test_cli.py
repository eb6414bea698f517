"""The command line as a user meets it: every format, errors as one line and exit 2."""

from __future__ import annotations

import json
import xml.dom.minidom

import pytest
import sympy

from symfilt import catalogue
from symfilt.model.circuit_file import load_circuit

FORMATS = ["text", "latex", "mathml", "json"]


@pytest.mark.parametrize("fmt", FORMATS)
def test_derive_every_format(run_cli, fmt):
    code, out, err = run_cli("derive", "@rc-lowpass", "--format", fmt)
    assert code == 0, err
    assert out.strip()
    if fmt == "json":
        data = json.loads(out)
        assert data["title"] == "RC low-pass"
    if fmt == "mathml":
        assert xml.dom.minidom.parseString(out).documentElement.tagName == "div"
    if fmt == "latex":
        assert out.count("\\begin{align*}") == out.count("\\end{align*}") == 2


def test_sallen_key_mathml_is_well_formed(run_cli):
    code, out, _ = run_cli("derive", "@sallen-key-lowpass", "--format", "mathml")
    assert code == 0
    doc = xml.dom.minidom.parseString(out)
    assert len(doc.getElementsByTagName("math")) >= 10


def test_json_transfer_reads_back_and_keeps_fixtures_symbolic(run_cli):
    from symfilt.export.json import read_symbols

    code, out, _ = run_cli("derive", "@rc-lowpass", "--format", "json")
    data = json.loads(out)
    syms = read_symbols(data)
    h = sympy.sympify(data["loaded"]["transfer"], locals=syms)
    R1, C1, Rs, RL, s = (syms[n] for n in ("R1", "C1", "R_s", "R_L", "s"))
    # Thevenin's theorem (common practice): H = R_L / (R_s + R1 + R_L + s C1 R_L (R_s + R1))
    assert sympy.cancel(h - RL / (Rs + R1 + RL + s * C1 * RL * (Rs + R1))) == 0
    assert data["symbols"]["R_s"] == {"role": "source", "value": "600"}
    assert data["symbols"]["s"]["role"] == "laplace"


def test_substitute_puts_numbers_in(run_cli):
    code, out, _ = run_cli("derive", "@rc-lowpass", "--format", "json", "--substitute", "--quantity", "cutoff")
    data = json.loads(out)
    # 1/(R1 C1) (Horowitz & Hill, 3rd ed., ch. 1, from memory) with R1 = 4k7, C1 = 22n:
    # 1/(4700 * 22e-9) rad/s, exactly 5000000/517
    assert sympy.sympify(data["ideal"]) == sympy.Rational(5000000, 517)


def test_quantity_prints_only_that(run_cli):
    code, out, _ = run_cli("derive", "@rc-lowpass", "--quantity", "dc-gain")
    assert code == 0
    assert "DC gain, loaded" in out and "Zin" not in out


def test_catalogue_lists_and_writes(run_cli, tmp_path):
    code, out, _ = run_cli("catalogue")
    assert code == 0
    for name in catalogue.names():
        assert f"@{name}" in out
    target = tmp_path / "sk.toml"
    code, _, err = run_cli("catalogue", "sallen-key-lowpass", "--write", str(target))
    assert code == 0, err
    assert load_circuit(target) == catalogue.build("sallen-key-lowpass")


def test_file_and_builtin_give_the_same_result(run_cli, tmp_path):
    target = tmp_path / "mfb.toml"
    run_cli("catalogue", "mfb-lowpass", "--write", str(target))
    a = json.loads(run_cli("derive", str(target), "--format", "json")[1])
    b = json.loads(run_cli("derive", "@mfb-lowpass", "--format", "json")[1])
    assert a["loaded"] == b["loaded"] and a["numeric"] == b["numeric"]


def test_demo_shows_passive_and_buffered(run_cli):
    code, out, _ = run_cli("demo")
    assert code == 0
    assert "passive RC" in out and "buffered RC" in out
    assert "+0.0%" in out  # the buffered stage holds its cutoff


@pytest.mark.parametrize("args, start", [
    (["derive", "missing.toml"], "error: missing.toml: no such file"),
    (["derive", "@no-such-circuit"], "error: @no-such-circuit: no built-in circuit of that name"),
    (["derive", "@rc-lowpass", "--format", "pdf"], "error: symfilt derive: "),
    (["derive", "@rc-lowpass", "--load-limit", "abc"], "error: --load-limit: 'abc' is not a tolerance"),
    (["frobnicate"], "error: symfilt: "),
])
def test_bad_input_is_one_error_line(run_cli, args, start):
    code, out, err = run_cli(*args)
    assert code == 2
    assert out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith(start), err
    assert "Traceback" not in err


def test_malformed_file_is_one_error_line(run_cli, tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text('[parts]\nR1 = { kind = "resistor", nodes = ["in", "out"], value = "4x7" }\n'
                   'C1 = { kind = "capacitor", nodes = ["out", "gnd"] }\n')
    code, out, err = run_cli("derive", str(bad))
    assert code == 2 and out == ""
    assert err.strip() == ("error: bad.toml [parts] R1: value '4x7' has an unknown suffix 'x7', use an SI prefix "
                           "(f p n u µ m k M G T), an RKM letter (R, as in 1R5) and optionally a unit (Ω ohm F H Hz V A)")


def test_broken_toml_is_one_error_line(run_cli, tmp_path):
    bad = tmp_path / "broken.toml"
    bad.write_text("[parts\nR1 = 3\n")
    code, _, err = run_cli("derive", str(bad))
    assert code == 2
    assert err.startswith("error: broken.toml line 1: not valid TOML") and len(err.strip().splitlines()) == 1


def test_load_limit_line(run_cli):
    code, out, _ = run_cli("derive", "@rc-lowpass", "--load-limit", "2%")
    assert code == 0
    # with R_s -> 0 the cutoff ratio is 1 + R1/R_L, so R_L >= R1/0.02 = 235 kΩ (Thevenin; common practice)
    assert "R_L ≥ 235 kΩ" in out


# --- symfilt check ------------------------------------------------------------------
# RC low-pass with R_s and R_L: H = R_L / (R_s + R1 + R_L + s C1 R_L (R_s + R1)) (Thevenin; common practice).

def test_check_right_claim_exits_0(run_cli):
    code, out, _ = run_cli("check", "@rc-lowpass", "R_L/(R_s + R1 + R_L + s*C1*R_L*(R_s + R1))")
    assert code == 0 and out.startswith("equal")


def test_check_claim_missing_the_load_names_the_load(run_cli):
    code, out, _ = run_cli("check", "@rc-lowpass", "1/(1 + s*(R_s + R1)*C1)")
    assert code == 1
    assert "agrees when R_L -> oo" in out and "load" in out


def test_check_json(run_cli):
    code, out, _ = run_cli("check", "@rc-lowpass", "1/(C1*((R1 + R_s) || R_L))", "--quantity", "cutoff",
                           "--format", "json")
    data = json.loads(out)
    assert code == 0
    assert data == {"equivalent": True, "method": "exact", "points": 0, "diagnosis": [], "counterexample": None}


def test_check_ideal_latex_claim(run_cli):
    # Unity-gain Sallen-Key: w0 = 1/sqrt(R1 R2 C1 C2) (TI SLOA024, from memory)
    code, out, _ = run_cli("check", "@sallen-key-lowpass", r"\frac{1}{\sqrt{R_{1} R_{2} C_{1} C_{2}}}",
                           "--quantity", "w0", "--ideal")
    assert code == 0, out


@pytest.mark.parametrize("claim", ["__import__('os').system('touch pwned')", "(lambda: 1)()", "10**10**10",
                                   "x" * 100_000, "(" * 5000 + "1" + ")" * 5000])
def test_check_hostile_claim_exits_2_and_runs_nothing(run_cli, claim, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    code, out, err = run_cli("check", "@rc-lowpass", claim)
    assert code == 2 and out == ""
    assert err.startswith("error: ") and len(err.strip().splitlines()) == 1
    assert list(tmp_path.iterdir()) == []


K3 = '''title = "Equal-component Sallen-Key at K = 3"
[parts]
R1 = { kind = "resistor", nodes = ["in", "a"], value = "10k" }
R2 = { kind = "resistor", nodes = ["a", "b"], value = "10k" }
C1 = { kind = "capacitor", nodes = ["a", "out"], value = "10n" }
C2 = { kind = "capacitor", nodes = ["b", "0"], value = "10n" }
U1 = { kind = "opamp", plus = "b", minus = "f", out = "out" }
Rf = { kind = "resistor", nodes = ["out", "f"], value = "20k" }
Rg = { kind = "resistor", nodes = ["f", "0"], value = "10k" }
'''


def test_undefined_at_these_values(run_cli, tmp_path):
    # Equal-component Sallen-Key, Q = 1/(3 - K) (Horowitz & Hill, 3rd ed., ch. 6; from memory):
    # K = 1 + Rf/Rg = 3 makes Q infinite and puts the poles on the jw axis. The formulas stay;
    # the number is reported as undefined, with a warning, and nothing crashes.
    f = tmp_path / "k3.toml"
    f.write_text(K3)
    code, out, err = run_cli("derive", str(f))
    assert code == 0, err
    assert "undefined" in out and "poles on the jω axis" in out
    code, out, _ = run_cli("derive", str(f), "--format", "json")
    data = json.loads(out)
    assert data["numeric"]["ideal"]["q"] is None
    assert data["numeric"]["ideal"]["stability"] == "marginal"
    assert data["ideal"]["q"] is not None  # the closed form is still there


def test_large_functions_are_written_from_the_engine_and_read_back(run_cli, monkeypatch):
    # Above LARGE_TERMS the JSON is written straight from the flint polynomials; it must still
    # be exact: the RC ladder's transfer, numerator/denominator and impedances read back equal.
    from symfilt import analyse
    from symfilt import catalogue
    from symfilt.export import json as jx

    monkeypatch.setattr(jx, "LARGE_TERMS", 5)
    code, out, _ = run_cli("derive", "@rc-ladder", "--format", "json")
    assert code == 0
    data = json.loads(out)
    syms = jx.read_symbols(data)
    a = analyse(catalogue.build("rc-ladder"), sensitivity=False)
    for key in ("loaded", "ideal"):
        st = getattr(a, key)
        d = data[key]
        read = lambda text: sympy.sympify(text, locals=syms)
        assert sympy.cancel(read(d["transfer"]) - st.transfer.as_expr()) == 0
        assert sympy.cancel(read(d["numerator"]) / read(d["denominator"]) - st.transfer.as_expr()) == 0
        assert sympy.cancel(read(d["input_impedance"]) - st.zin.as_expr()) == 0
        assert sympy.cancel(read(d["output_impedance"]) - st.zout.as_expr()) == 0


# --- symfilt.report: what the CLI prints, from Python ----------------------------------

@pytest.mark.parametrize("fmt", ["json", "text"])
def test_derive_prints_the_exporter_of_symfilt_report(run_cli, fmt):
    # The CLI is a thin layer: its output is the exporter applied to symfilt.report().
    import symfilt
    from symfilt.export.formats import DERIVE_FORMATS

    args = ["derive", "@inverting-lowpass", "--format", fmt, "--load-limit", "5%", "--opamp-model", "gain"]
    code, out, err = run_cli(*args)
    assert code == 0, err
    r = symfilt.report(catalogue.build("inverting-lowpass"), load_limit=0.05, opamp_model="gain")
    assert isinstance(r, symfilt.Report) and r.opamp_error is not None and r.load_limits is not None
    expected = DERIVE_FORMATS[fmt](r)
    assert out == expected
    if fmt == "json":
        data = json.loads(out)
        assert "opamp_error" in data and "load_limit" in data


def test_report_rejects_a_bad_load_limit_and_model():
    import symfilt
    from symfilt.errors import UsageError

    with pytest.raises(UsageError, match="load_limit"):
        symfilt.report(catalogue.build("rc-lowpass"), load_limit=2.0)
    with pytest.raises(UsageError, match="opamp_model"):
        symfilt.report(catalogue.build("rc-lowpass"), opamp_model="perfect")


def test_drawing_leaves_the_users_matplotlib_backend_alone(tmp_path, run_cli):
    # A notebook's backend must survive symfilt's plots, histograms and notes: symfilt draws on
    # its own Figure and canvas and never calls matplotlib.use.
    import matplotlib

    before = matplotlib.get_backend()
    try:
        matplotlib.use("svg")
        for args in (["plot", "@rc-lowpass", "-o", str(tmp_path / "b.png")],
                     ["note", "@rc-lowpass", "-o", str(tmp_path / "n.md")],
                     ["spread", "@rc-lowpass", "--tol", "R=1%", "--runs", "200", "--seed", "1",
                      "--plot", str(tmp_path / "h.png")]):
            code, _, err = run_cli(*args)
            assert code == 0, err
            assert matplotlib.get_backend() == "svg"
    finally:
        matplotlib.use(before)
    assert matplotlib.get_backend() == before


def test_demo_shows_the_real_op_amps_limits(run_cli):
    # The follower U2 drives the ADC's 100 pF through its 50 Ω output resistance: the load
    # pole sits at 1/(2π·50 Ω·100 pF) = 31.8 MHz, far above the 1 MHz crossover, so the
    # margin stays near 90° − atan(1 MHz/31.8 MHz) ≈ 88.2° (one pole plus the load pole;
    # common practice, tests/REFERENCES.md "Real op-amps", op-amp loop gain).
    code, out, _ = run_cli("demo")
    assert code == 0
    line = next(x for x in out.splitlines() if "phase margin loaded" in x)
    assert "U1 90.0°" in line and "U2 88.2°" in line
