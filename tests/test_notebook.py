"""Issue 16: at home in a notebook and a report.

scipy systems and poles against outside references (scipy.signal.freqs, the published w0
and Q of the catalogue's second-order stages), the swept family against the ordinary
Bode data, the ideal curve of a circuit with a symbolic fixture, the standalone LaTeX
note compiled by pdflatex, and the notebook display.
"""

from __future__ import annotations

import cmath
import json
import math
import random
import re
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest
import sympy
from scipy import signal

from symfilt import analyse, catalogue
from symfilt.analysis.bode import bode_data
from symfilt.analysis.family import family_data, versus_data
from symfilt.analysis.network import derive
from symfilt.analysis.response import response_numbers
from symfilt.errors import UsageError
from symfilt.export.note_html import note_html
from symfilt.export.note_write import write_note
from symfilt.model.circuit import S
from symfilt.model.circuit_file import load_circuit
from symfilt.model.sweep import load_note_sweep, parse_sweep

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


def _random_values(c, rng: random.Random) -> dict:
    """The circuit's values, each part moved by a random factor between 1/2 and 2."""
    return {k: v * sympy.Rational(rng.randint(50, 200), 100) for k, v in c.values().items()}


def _exact_response(h, values, w: float) -> complex:
    """H(jw) evaluated exactly by sympy on the symbolic function (no float coefficients)."""
    e = h.as_expr().xreplace({k: sympy.Rational(v) for k, v in values.items()})
    return complex(sympy.N(e.xreplace({S: sympy.I * sympy.Rational(w)}), 30))


# --- scipy interop --------------------------------------------------------------------------------

@pytest.mark.parametrize("name", sorted(catalogue.CATALOGUE))
def test_to_scipy_against_scipy_freqs_at_random_values(name):
    # The outside check: scipy.signal.freqs (SciPy reference, scipy.signal.freqs: "compute
    # frequency response of analog filter", b and a highest power first) evaluates the system
    # to_scipy gives; it must equal H(jw) evaluated exactly by sympy from the derived formula.
    rng = random.Random(name)
    c = catalogue.build(name)
    h = derive(c)
    for _ in range(2):
        values = _random_values(c, rng)
        sys = h.to_scipy(values)
        poles = [abs(p) for p in h.poles(values)] or [2 * math.pi * 1e3]
        ws = [min(poles) / 10, float(np.sqrt(min(poles) * max(poles))), max(poles) * 10]
        _, resp = signal.freqs(sys.num, sys.den, worN=ws)
        for w, got in zip(ws, resp):
            want = _exact_response(h, values, w)
            assert abs(got - want) <= 1e-9 * max(abs(want), 1e-12), (name, w)


def test_scipy_coefficients_are_highest_power_first_and_coefficient_values_lowest_first():
    # 1/(1 + s R C): scipy's b = [1], a = [RC, 1]; coefficient_values keeps [1, RC] (JSON contract)
    c = catalogue.build("rc-lowpass")
    h = derive(c).ideal()
    b, a = h.scipy_coefficients(c.values())
    rc = float(c.values()[sympy.Symbol("R1", positive=True)] * c.values()[sympy.Symbol("C1", positive=True)])
    assert b == [1.0] and a == pytest.approx([rc, 1.0], rel=1e-15)
    assert h.coefficient_values(c.values())[1] == pytest.approx([1.0, rc], rel=1e-15)


def _w0_q_by_hand(name: str, v: dict) -> tuple[float, float]:
    g = {str(k): float(x) for k, x in v.items()}
    if name == "sallen-key-lowpass":
        # TI application report SLOA024, Analysis of the Sallen-Key Architecture (from memory), as in
        # tests/REFERENCES.md: w0 = 1/sqrt(R1 R2 C1 C2), Q = sqrt(R1 R2 C1 C2) / (C2 (R1 + R2))
        m = g["R1"] * g["R2"] * g["C1"] * g["C2"]
        return 1 / math.sqrt(m), math.sqrt(m) / (g["C2"] * (g["R1"] + g["R2"]))
    if name == "mfb-lowpass":
        # TI, Op Amps for Everyone, active-filter chapter (from memory), as in tests/REFERENCES.md:
        # w0 = 1/sqrt(R2 R3 C1 C2), Q = sqrt(R2 R3 C1 C2) / (C2 (R2 + R3 + R2 R3 / R1))
        m = g["R2"] * g["R3"] * g["C1"] * g["C2"]
        return 1 / math.sqrt(m), math.sqrt(m) / (g["C2"] * (g["R2"] + g["R3"] + g["R2"] * g["R3"] / g["R1"]))
    # sallen-key-lowpass-gain: Horowitz & Hill, The Art of Electronics, 3rd ed., ch. 6 (from memory):
    # equal components, w0 = 1/(RC), Q = 1/(3 - K) with K = 1 + Rf/Rg
    k = 1 + g["Rf"] / g["Rg"]
    return 1 / (g["R1"] * g["C1"]), 1 / (3 - k)


@pytest.mark.parametrize("name", ["sallen-key-lowpass", "mfb-lowpass", "sallen-key-lowpass-gain"])
def test_poles_of_second_order_stages_against_w0_and_q(name):
    # poles of 1 + s/(w0 Q) + s^2/w0^2: -w0/(2Q) ± w0 sqrt(1/(4Q^2) - 1) (common practice)
    rng = random.Random(name)
    c = catalogue.build(name)
    h = derive(c).ideal()
    for _ in range(5):
        values = _random_values(c, rng)
        if name == "sallen-key-lowpass-gain":  # keep K below 3 (a stable stage)
            rg = sympy.Symbol("Rg", positive=True)
            rf = sympy.Symbol("Rf", positive=True)
            values[rf] = values[rg] * sympy.Rational(rng.randint(10, 150), 100)
            sym = {str(k): k for k in values}
            values[sym["R2"]], values[sym["C2"]] = values[sym["R1"]], values[sym["C1"]]  # equal components
        w0, q = _w0_q_by_hand(name, values)
        root = cmath.sqrt(1 / (4 * q * q) - 1)
        want = sorted([-w0 / (2 * q) + w0 * root, -w0 / (2 * q) - w0 * root], key=lambda z: (abs(z), z.imag))
        got = h.poles(values)
        assert len(got) == 2
        for p, r in zip(got, want):
            assert abs(p - r) <= 1e-9 * w0
        # the same list as the response numbers of analysis/response.py
        listed = response_numbers(h, values)["poles"]
        assert [complex(d["real"], d["imag"]) for d in listed] == got


def test_zeros_lambdify_and_frequency_response():
    # RC high-pass sC R/(1 + sCR): one zero at s = 0, |H| = 1/sqrt(2) at f = 1/(2 pi R C) (common practice)
    c = catalogue.build("rc-highpass")
    h = derive(c).ideal()
    vals = {str(k): float(v) for k, v in c.values().items()}
    assert h.zeros(c.values()) == [0j]
    fc = 1 / (2 * math.pi * vals["R1"] * vals["C1"])
    fn = h.lambdify(c.values())
    assert abs(fn([fc])[0]) == pytest.approx(1 / math.sqrt(2), rel=1e-12)
    assert np.allclose(h.frequency_response([fc, 10 * fc], c.values()), fn([fc, 10 * fc]))
    with pytest.raises(UsageError, match="no value for C1, R1, R_L, R_s"):
        derive(c).poles({})
    text_values = {**{k: v for k, v in c.values().items() if str(k) != "R_s"}, "R_s": "600"}
    assert derive(c).poles(text_values) == derive(c).poles(c.values())  # value text is read exactly


# --- sweeps ---------------------------------------------------------------------------------------

def test_sweep_text():
    assert parse_sweep("R_L=1k,10k,100k").values == (1000, 10000, 100000)
    assert parse_sweep("R_L=1k..100k/3").values == (1000, 10000, 100000)
    assert len(parse_sweep("R_L=1k..1M", max_values=None, points=61).values) == 61
    for bad in ("R_L", "R_L=", "R_L=0,1k", "R_L=10k..1k", "R_L=1k..10k/x", "R_L=" + ",".join(["1k"] * 9)):
        with pytest.raises(UsageError):
            parse_sweep(bad)


def test_sweep_curves_equal_the_loaded_response_at_each_value():
    # data level: each curve of the family is bode_data of the loaded transfer with the symbol at its value
    a = analyse(catalogue.build("rc-lowpass"), sensitivity=False)
    sw = parse_sweep("R_L=1k,10k,100k")
    fam = family_data(a, sw, fmin=10, fmax=1e6, points=50)
    assert len(fam.curves) == 3 and fam.ideal_db is not None
    for v, (db, phase) in zip(sw.values, fam.curves):
        vals = {**a.circuit.values(), sympy.Symbol("R_L", positive=True): v}
        ref = bode_data(a.loaded.transfer, vals, 10, 1e6, 50)
        assert np.array_equal(ref.f, fam.f)
        assert np.allclose(db, ref.loaded_db, rtol=0, atol=1e-12)
        assert np.allclose(phase, ref.loaded_phase, rtol=0, atol=1e-9)
    assert np.allclose(fam.ideal_db, bode_data(a, None, 10, 1e6, 50).ideal_db, rtol=0, atol=1e-12)
    # the curves move the right way: a heavier load loses more DC gain (divider R_L/(R_s+R1+R_L))
    assert fam.curves[0][0][0] < fam.curves[1][0][0] < fam.curves[2][0][0] < 0


def test_versus_against_the_thevenin_formula():
    # RC low-pass with source and load: H(0) = R_L/(R_s + R1 + R_L), w_c = 1/(C1 ((R_s + R1) || R_L))
    # (Thevenin's theorem; common practice, tests/REFERENCES.md "First order")
    a = analyse(catalogue.build("rc-lowpass"), sensitivity=False)
    v = versus_data(a, parse_sweep("R_L=1k..1M/7"))
    g = {str(k): float(x) for k, x in a.circuit.values().items()}
    for rl, fc, dc in zip(v.x, v.cutoff_hz, v.dc_gain):
        r = g["R_s"] + g["R1"]
        assert dc == pytest.approx(rl / (r + rl), rel=1e-12)
        assert fc == pytest.approx(1 / (2 * math.pi * g["C1"] * (r * rl / (r + rl))), rel=1e-9)
    assert v.ideal_cutoff_hz == pytest.approx(1 / (2 * math.pi * g["C1"] * g["R1"]), rel=1e-9)


def test_sweep_of_a_symbol_the_circuit_lacks_is_refused():
    a = analyse(catalogue.build("rc-lowpass"), sensitivity=False)
    with pytest.raises(UsageError, match="sweep one of C1, R1, R_L, R_s"):
        family_data(a, parse_sweep("R9=1k"))


def test_cli_sweep_draws_four_curves(run_cli, tmp_path):
    out = tmp_path / "fan.svg"
    code, _, err = run_cli("plot", "@rc-lowpass", "--sweep", "R_L=1k,10k,100k", "-o", str(out))
    assert code == 0, err
    svg = out.read_text()
    # three loaded curves and the ideal one: four lines in the magnitude legend
    # (text is drawn as paths; the curves are <path> elements with the family's colours)
    from symfilt.export.family_plot import FAMILY_COLOURS
    from symfilt.export.plot import COLOURS

    for colour in (*FAMILY_COLOURS[:3], COLOURS["ideal"]):
        assert svg.count(f"stroke: {colour}") >= 2, colour  # magnitude and phase
    assert f"stroke: {FAMILY_COLOURS[3]}" not in svg
    code, _, err = run_cli("plot", "@rc-lowpass", "--versus", "R_L", "-o", str(tmp_path / "vs.svg"))
    assert code == 0, err
    code, _, err = run_cli("plot", "@rc-lowpass", "--sweep", "R_L=1k", "--csv", str(tmp_path / "x.csv"))
    assert code == 2 and err.startswith("error:")


# --- symbolic fixtures: the ideal curve is still drawn ---------------------------------------------

def test_html_note_of_a_symbolic_source_resistance_plots_the_ideal_response():
    a = analyse(catalogue.build("rc-lowpass", source="symbol"))
    page = note_html(a)
    assert '<figure class="bode">' in page and "<svg" in page
    assert "Loaded curve left out: no value for R_s" in page
    d = bode_data(a, points=20)
    assert d.loaded_db is None and d.left_out == {"loaded": ["R_s"]}
    # the ideal curve is the stage alone: 1/(1 + s R1 C1) at its corner is -3.0103 dB (common practice)
    g = {str(k): float(x) for k, x in a.circuit.values().items()}
    fc = 1 / (2 * math.pi * g["R1"] * g["C1"])
    at = bode_data(a, fmin=fc, fmax=10 * fc, points=2)
    assert at.ideal_db[0] == pytest.approx(-10 * math.log10(2), abs=1e-9)


# --- the LaTeX note --------------------------------------------------------------------------------

def _pdflatex() -> str:
    exe = shutil.which("pdflatex")
    if exe is None:
        pytest.skip("SKIPPED LOUDLY: pdflatex not found (install the Debian package texlive-latex-base; "
                    ".ci/run installs it)")
    return exe


def _compile(tex: Path) -> subprocess.CompletedProcess:
    return subprocess.run([_pdflatex(), "-interaction=nonstopmode", "-halt-on-error", tex.name],
                          cwd=tex.parent, capture_output=True, text=True, timeout=300)


@pytest.mark.slow
@pytest.mark.parametrize("case", ["sallen-key-lowpass", "twin-t-notch", "symbolic-source", "sweep-file"])
def test_latex_note_compiles_with_pdflatex(case, tmp_path):
    if case == "symbolic-source":
        c, sweep = catalogue.build("rc-lowpass", source="symbol"), None
    elif case == "sweep-file":
        path = EXAMPLES / "meter_drive_passive.toml"
        c, sweep = load_circuit(path), load_note_sweep(path)
        assert sweep is not None  # the example asks for the family in its [note] table
    else:
        c, sweep = catalogue.build(case), None
    written = write_note(c, tmp_path / "note.tex", source="test & 100% (R_s)", sweep=sweep)
    tex = tmp_path / "note.tex"
    assert tex in written and (tmp_path / "note-bode.pdf") in written
    text = tex.read_text()
    for part in ("\\documentclass", "\\section*{Parts}", "\\section*{Loaded and ideal}", "\\section*{Equations}",
                 "\\section*{Sensitivities}", "\\section*{Assumptions}", "\\section*{Cautions}",
                 "\\includegraphics[width=\\textwidth]{note-bode.pdf}", "\\end{document}"):
        assert part in text, part
    res = _compile(tex)
    assert res.returncode == 0, res.stdout[-2000:]
    assert (tmp_path / "note.pdf").read_bytes()[:5] == b"%PDF-"
    assert re.search(r"Output written on note\.pdf \([2-9] pages", res.stdout), res.stdout[-500:]
    log = (tmp_path / "note.log").read_text(errors="replace")
    assert "pk>" not in log  # Type 1 fonts only: no bitmap font generated


def test_fragment_keeps_the_align_fragment(run_cli, tmp_path):
    code, _, err = run_cli("note", "@rc-lowpass", "-o", str(tmp_path / "eq.tex"), "--fragment")
    assert code == 0, err
    text = (tmp_path / "eq.tex").read_text()
    assert text.count("\\begin{align}") == 1 and "\\documentclass" not in text
    assert not (tmp_path / "eq-bode.pdf").exists()
    code, _, err = run_cli("note", "@rc-lowpass", "-o", str(tmp_path / "eq.html"), "--fragment")
    assert code == 2 and "only a .tex note" in err


# --- display ----------------------------------------------------------------------------------------

def test_rich_display_shows_loaded_and_ideal():
    a = analyse(catalogue.build("rc-lowpass"))
    page = a._repr_html_()
    assert "Loaded (as connected)" in page and "Ideal (stage alone)" in page
    assert "cutoff frequency" in page and "2.088 kHz" in page and "1.539 kHz" in page
    tex = a.loaded.transfer._repr_latex_()
    assert "_{\\text{loaded}}" in tex and "_{\\text{ideal}}" in tex
    assert a.ideal.transfer._repr_latex_() == "$$H(s) = \\frac{1}{C_{1} R_{1} s + 1}$$"


def test_example_notebook_runs(tmp_path, monkeypatch):
    # the notebook's code cells, run in order as one script (a script export, no Jupyter needed)
    nb = json.loads((EXAMPLES / "loading_notebook.ipynb").read_text())
    code = "\n".join("".join(cell["source"]) for cell in nb["cells"] if cell["cell_type"] == "code")
    monkeypatch.chdir(tmp_path)
    scope: dict = {}
    exec(compile(code, "loading_notebook.ipynb", "exec"), scope)
    assert (tmp_path / "fan.svg").is_file()


# --- MathML: multi-letter subscripts upright -------------------------------------------------------

def test_multi_letter_subscripts_are_upright():
    # the trade writes labels upright and variables in italics: A_{U1}, GBW_{U1}, Z_{out} have upright
    # subscripts (ISO 80000-2, italic for variables, roman for descriptive subscripts; common practice)
    from symfilt.export.latex import transfer_tex
    from symfilt.export.mathml import to_mathml

    c = catalogue.build("inverting-lowpass").with_opamp_model("gain", gain="100k")
    tex = transfer_tex(derive(c))
    assert "A_{\\mathrm{U1}}" in tex and "R_{1}" in tex and "R_{s}" in tex
    ml = to_mathml(tex)
    assert '<mi mathvariant="normal">U</mi><mn>1</mn>' in ml
    from symfilt.export.common import latex_name

    assert '<mi mathvariant="normal">GBW</mi>' in to_mathml(latex_name("GBW_U1"))
    assert '<mi mathvariant="normal">out</mi>' in to_mathml("Z_{\\mathrm{out}}")
    assert latex_name("R_L") == "R_{L}" and latex_name("R12") == "R_{12}"  # one letter or digits: as they are


def test_cli_plot_of_a_symbolic_source_draws_the_ideal_curve_and_says_so(run_cli, tmp_path):
    src = tmp_path / "sym.toml"
    src.write_text('title = "t"\n[ports]\ninput = "in"\noutput = "out"\n[source]\nresistance = "symbol"\n'
                   '[load]\nresistance = "10k"\n[parts]\n'
                   'R1 = {kind = "resistor", nodes = ["in", "out"], value = "4k7"}\n'
                   'C1 = {kind = "capacitor", nodes = ["out", "0"], value = "22n"}\n')
    code, _, err = run_cli("plot", str(src), "-o", str(tmp_path / "b.svg"), "--csv", str(tmp_path / "b.csv"))
    assert code == 0, err
    assert "note: Loaded curve left out: no value for R_s" in err
    rows = (tmp_path / "b.csv").read_text().splitlines()
    assert rows[1].split(",")[1] == "nan" and rows[1].split(",")[3] != "nan"


def test_note_sweep_of_the_meter_example_in_html_and_markdown(tmp_path):
    path = EXAMPLES / "meter_drive_passive.toml"
    c, sw = load_circuit(path), load_note_sweep(path)
    assert sw.name == "R_L" and sw.values == (500, 2000, 10000, 100000)
    page = note_html(analyse(c), family=family_data(analyse(c, sensitivity=False), sw))
    assert page.count('<figure class="bode') == 2 and "each value of R_L" in page
    written = write_note(c, tmp_path / "m.md", sweep=sw)
    assert [p.name for p in written] == ["m-bode.svg", "m-sweep.svg", "m.md"]
    assert "](m-sweep.svg)" in (tmp_path / "m.md").read_text()


def test_a_bad_note_table_is_refused(tmp_path):
    from symfilt.errors import CircuitFileError

    src = tmp_path / "c.toml"
    body = '[parts]\nR1 = {kind = "resistor", nodes = ["in", "out"]}\nC1 = {kind = "capacitor", nodes = ["out", "0"]}\n'
    src.write_text('[note]\nswep = "R_L=1k"\n' + body)
    with pytest.raises(CircuitFileError, match=r"\[note\] swep: is not a note option"):
        load_circuit(src)
    src.write_text('[note]\nsweep = "R_L=1k..x"\n' + body)
    with pytest.raises(Exception, match=r"\[note\] sweep"):
        load_circuit(src)


def test_a_note_sweep_of_an_unknown_symbol_names_the_file(run_cli, tmp_path):
    src = tmp_path / "m.toml"
    text = (EXAMPLES / "meter_drive_passive.toml").read_text().replace('sweep = "R_L=500,2k,10k,100k"',
                                                                        'sweep = "R9=1k,2k"')
    src.write_text(text)
    code, _, err = run_cli("note", str(src), "-o", str(tmp_path / "m.html"))
    assert code == 2 and err.startswith(f"error: {src} [note] sweep: 'R9' is not a symbol")
    assert not (tmp_path / "m.html").exists()
