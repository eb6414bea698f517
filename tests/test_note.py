"""Design notes (HTML, Markdown, LaTeX), Bode sweep data and plots.

The notes must parse, stand alone, and show only numbers of the analysis: every
number in a note is checked against the JSON that ``symfilt derive --format json``
writes (built by the same ``analysis_dict``; one test pins the CLI output to it).
The sweep data is checked against scipy.signal.freqs, an independent evaluation.
"""

from __future__ import annotations

import json
import math
import re
import subprocess
import sys
import xml.dom.minidom
from html.parser import HTMLParser

import numpy as np
import pytest
import sympy

from symfilt import catalogue
from symfilt.analysis.stage import analyse
from symfilt.analysis.bode import bode_data, csv_text
from symfilt.errors import OutputError, UsageError
from symfilt.export import json as jx
from symfilt.export.note_write import note_latex, note_markdown, write_note
from symfilt.export.note_html import note_html
from symfilt.export.plot import bode_svg, plot_bode, render_bode

NOTE_CIRCUITS = ["sallen-key-lowpass", "rc-lowpass", "mfb-bandpass", "twin-t-notch", "state-variable", "twin-t-notch-tied"]
VOID = {"meta", "br", "hr", "img", "input", "link", "col", "area", "base", "source", "wbr", "mspace",
        "path", "use", "stop", "rect", "circle", "ellipse", "line", "polyline", "polygon"}
PREFIX = {"p": 1e-12, "n": 1e-9, "u": 1e-6, "µ": 1e-6, "m": 1e-3, "": 1.0, "k": 1e3, "M": 1e6, "G": 1e9}
NUMBER = re.compile(r"(?<![\w.(])(-?\d+(?:\.\d+)?(?:e[-+]?\d+)?)(?:\s?([pnuµmkMG]?)(?:Hz|Ω|F|H|dB|s))?(?![\w.])")


@pytest.fixture(scope="module")
def analyses():
    return {name: analyse(catalogue.build(name)) for name in NOTE_CIRCUITS}


def derive_json(a) -> dict:
    """What `symfilt derive --format json` prints, read back."""
    return json.loads(jx.dumps(jx.analysis_dict(a)))


def json_numbers(data: dict) -> list[float]:
    """Every number of a derive JSON document: numeric results, ratios, sum rules, part values."""
    out = []

    def walk(x):
        if isinstance(x, bool):
            return
        if isinstance(x, (int, float)):
            out.append(float(x))
        elif isinstance(x, dict):
            for v in x.values():
                walk(v)
        elif isinstance(x, list):
            for v in x:
                walk(v)

    walk(data["numeric"])
    walk(data["ratios"])
    walk([r["expected"] for r in data["sum_rules"]["checked"]])
    for info in data["symbols"].values():
        if info["value"] is not None:
            out.append(float(sympy.Rational(info["value"])))
    return out


def shown_value(token: re.Match) -> float:
    return float(token.group(1)) * PREFIX[token.group(2) or ""]


def rounds_from(shown: float, exact: float) -> bool:
    """True when `shown` is `exact` rounded to 4 significant digits (the notes' display precision)."""
    if exact == 0:
        return shown == 0
    return abs(shown - exact) <= 5.0001e-4 * abs(exact)


def at(data: dict, path: str):
    x = data
    for part in path.split("."):
        x = x[int(part)] if isinstance(x, list) else x[part]
    return x


class Page(HTMLParser):
    """Collects table cells (text and attributes) and checks that tags nest."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.stack: list[str] = []
        self.errors: list[str] = []
        self.cells: list[tuple[dict, str]] = []
        self.tags: dict[str, int] = {}
        self._cell = None
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags[tag] = self.tags.get(tag, 0) + 1
        if tag not in VOID:
            self.stack.append(tag)
        if tag == "td":
            self._cell = (dict(attrs), [])

    def handle_startendtag(self, tag, attrs):
        self.tags[tag] = self.tags.get(tag, 0) + 1

    def handle_endtag(self, tag):
        if tag in VOID:
            return
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"</{tag}> closes <{self.stack[-1] if self.stack else None}>")
            return
        self.stack.pop()
        if tag == "td" and self._cell is not None:
            self.cells.append((self._cell[0], "".join(self._cell[1]).strip()))
            self._cell = None

    def handle_data(self, data):
        self.text.append(data)
        if self._cell is not None:
            self._cell[1].append(data)


def parse_page(page: str) -> Page:
    p = Page()
    p.feed(page)
    p.close()
    return p


# --- HTML --------------------------------------------------------------------------

@pytest.mark.parametrize("name", NOTE_CIRCUITS)
def test_html_parses_and_stands_alone(analyses, name):
    page = note_html(analyses[name])
    p = parse_page(page)
    assert p.errors == [] and p.stack == [], (p.errors, p.stack)
    assert page.startswith("<!DOCTYPE html>")
    # no scripts, no external resources: the only URLs are XML namespace names
    assert "<script" not in page.lower()
    assert not re.search(r"\b(src|href)\s*=\s*[\"'](?!#)", page)  # only links within the page
    urls = set(re.findall(r"https?://[^\s\"'<>]+", page))
    assert urls <= {"http://www.w3.org/1998/Math/MathML", "http://www.w3.org/2000/svg",
                    "http://www.w3.org/1999/xlink", "http://purl.org/dc/elements/1.1/",
                    "http://creativecommons.org/ns#", "http://www.w3.org/1999/02/22-rdf-syntax-ns#"}, urls
    assert p.tags.get("h1") == 1 and p.tags.get("math", 0) >= 8 and p.tags.get("svg") == 1
    text = " ".join(p.text)
    for phrase in ("bench", "supply", "output swing", "output current", "mains", "local codes", "licensed practice"):
        assert phrase in text, phrase
    assert "R_s → 0" not in text  # fixture names are written with subscripts, not underscores


@pytest.mark.parametrize("name", NOTE_CIRCUITS)
def test_every_html_number_equals_derive_json(analyses, name):
    a = analyses[name]
    data = derive_json(a)
    p = parse_page(note_html(a))
    keyed = 0
    pool = json_numbers(data)
    for attrs, text in p.cells:
        if attrs.get("data-key", "").endswith(".stability"):  # a word: stable, marginal, unstable
            assert attrs["data-value"] == at(data, attrs["data-key"]) and text.startswith(attrs["data-value"])
            continue
        tokens = list(NUMBER.finditer(text))
        if not tokens:
            continue
        assert len(tokens) == 1, text
        shown = shown_value(tokens[0])
        if "data-key" in attrs:
            keyed += 1
            expected = at(data, attrs["data-key"])
            if attrs["data-key"].startswith("symbols."):
                assert sympy.Rational(attrs["data-value"]) == sympy.Rational(expected)
                assert rounds_from(shown, float(sympy.Rational(expected))), (text, expected)
            else:
                assert float(attrs["data-value"]) == expected, attrs
                assert rounds_from(shown, expected), (text, expected)
        else:  # a number without a key must still be one of derive's numbers
            assert any(rounds_from(shown, x) for x in pool), text
    assert keyed >= 5
    # and the other way: every numeric result of derive is in the note
    keys = {attrs.get("data-key") for attrs, _ in p.cells}
    for view in ("loaded", "ideal"):
        for quantity, value in data["numeric"][view].items():
            if isinstance(value, list):  # poles, zeros, cancelled: each root once per conjugate pair
                for i, r in enumerate(value):
                    if r["imag"] >= 0:
                        assert f"numeric.{view}.{quantity}.{i}.f_hz" in keys, (view, quantity, i)
                        assert r["q"] is None or f"numeric.{view}.{quantity}.{i}.q" in keys, (view, quantity, i)
            elif quantity != "sensitivity" and value is not None:  # numbers and the words (stability, kind)
                assert f"numeric.{view}.{quantity}" in keys, (view, quantity)
            if quantity == "sensitivity":
                for q, table in value.items():
                    if q == "gain" and table == value.get("dc_gain"):
                        continue  # K of a low-pass is its DC gain: one column (README "JSON output")
                    for sym, v in table.items():
                        if v is not None:
                            assert f"numeric.{view}.sensitivity.{q}.{sym}" in keys


def test_derive_cli_json_is_the_note_json(run_cli, analyses):
    # The notes are checked against analysis_dict; this pins that to the CLI's output.
    code, out, err = run_cli("derive", "@sallen-key-lowpass", "--format", "json")
    assert code == 0, err
    cli_data = json.loads(out)
    mine = derive_json(analyses["sallen-key-lowpass"])
    assert cli_data["numeric"] == mine["numeric"]
    assert cli_data["ratios"] == mine["ratios"]
    assert cli_data["symbols"] == mine["symbols"]


def test_html_of_a_symbolic_circuit_has_formulas_and_no_numbers():
    c = catalogue.build("sallen-key-lowpass", R1=None, R2=None, C1=None, C2=None, source="symbol", load="none")
    page = note_html(analyse(c))
    p = parse_page(page)
    assert p.errors == []
    keys = [attrs["data-key"] for attrs, _ in p.cells if "data-key" in attrs]
    # only the numbers that need no part value remain (DC gain 1 and the constant sensitivities)
    assert "numeric.ideal.dc_gain" in keys and "numeric.ideal.sensitivity.w0.R1" in keys
    assert not [k for k in keys if k.endswith(("cutoff_hz", "f0_hz", ".q")) or k.startswith("symbols.")]
    assert "No plot" in page and "<svg" not in page
    assert page.count("<math") >= 8


def test_html_mathml_is_well_formed_xml(analyses):
    page = note_html(analyses["mfb-bandpass"])
    for m in re.findall(r"<math.*?</math>", page, flags=re.S):
        xml.dom.minidom.parseString(m)
    svg = re.search(r"<svg.*</svg>", page, flags=re.S).group(0)
    assert xml.dom.minidom.parseString(svg).documentElement.tagName == "svg"


# --- Markdown and LaTeX ---------------------------------------------------------------

def table_rows(md: str) -> list[list[str]]:
    """Body rows of every pipe table (header and separator rows dropped); checks column counts."""
    rows, lines = [], md.splitlines()
    for i, line in enumerate(lines):
        if re.fullmatch(r"\|(\s*-+:?\s*\|)+", line):
            width = lines[i - 1].count("|")
            j = i + 1
            while j < len(lines) and lines[j].startswith("|"):
                assert lines[j].replace("\\|", "").count("|") == width, lines[j]
                rows.append([c.strip() for c in lines[j].strip("|").split("|")])
                j += 1
    return rows


@pytest.mark.parametrize("name", NOTE_CIRCUITS)
def test_markdown_note_parses_and_its_numbers_are_derive_numbers(analyses, name):
    a = analyses[name]
    md = note_markdown(a, plot_file="stage-bode.svg")
    assert md.count("$$") % 2 == 0 and md.count("$$") >= 10
    assert md.startswith("# ")
    pool = json_numbers(derive_json(a))
    rows = table_rows(md)
    assert len(rows) >= 5
    seen = 0
    for row in rows:
        for cell in row[1:]:
            for tok in NUMBER.finditer(cell):
                seen += 1
                assert any(rounds_from(shown_value(tok), x) for x in pool), (cell, row)
    assert seen >= 5
    for block in re.findall(r"\$\$\n(.*?)\n\$\$", md, flags=re.S):
        import latex2mathml.converter

        latex2mathml.converter.convert(block)  # each equation is valid LaTeX to a LaTeX reader


def balanced_environments(tex: str) -> bool:
    stack = []
    for kind, env in re.findall(r"\\(begin|end)\{([^}]*)\}", tex):
        if kind == "begin":
            stack.append(env)
        elif not stack or stack.pop() != env:
            return False
    return not stack


def balanced_braces(tex: str) -> bool:
    depth = 0
    for i, ch in enumerate(tex):
        if ch in "{}" and (i == 0 or tex[i - 1] != "\\"):
            depth += 1 if ch == "{" else -1
            if depth < 0:
                return False
    return depth == 0


@pytest.mark.parametrize("name", NOTE_CIRCUITS)
def test_latex_fragment_is_balanced_and_its_numbers_are_derive_numbers(analyses, name):
    a = analyses[name]
    tex = note_latex(a)
    body = "\n".join(line for line in tex.splitlines() if not line.startswith("%"))
    assert balanced_environments(body) and body.count("\\begin{align}") == 1
    assert balanced_braces(body)
    assert body.count("\\left") == body.count("\\right")
    pool = json_numbers(derive_json(a))
    numbers = 0
    for line in body.splitlines():
        m = re.fullmatch(r"\s*(f_\{[^}]*\}|Q|H\(0\)|20 \\log_\{10\} \\left\|H\(0\)\\right\|"
                         r"|(?:20 \\log_\{10\} )?\\left\|H\(j\\infty\)\\right\||\\mathrm\{slope\}_\{\\infty\}"
                         r"|Z_\{\\mathrm\{out\}\}\(0\)|\\left\|Z_\{\\mathrm\{out\}\}\(j\\omega_c\)\\right\|"  # upright label
                         # the response at the values: order, notch, bandwidth, delay, peaking, ripple, roots
                         r"|n|f_\{H\} - f_\{L\}|\\mathrm\{depth\}_\{n\}|\\tau_\{g\}\(0\)|\\mathrm\{peak\}"
                         r"|\\mathrm\{ripple\}|\|[pzc]_\{\d+\}\|/2\\pi|Q_\{[pzc]\d+\}) "
                         r"&\\approx (-?[\d.e+-]+)(?:\\,\\mathrm\{(\\mu |[pnmkMG])?(Hz|dB/decade|dB|\\Omega|s)\})?( \\\\)?", line)
        if m:
            numbers += 1
            prefix = {"\\mu ": 1e-6}.get(m.group(3), PREFIX.get(m.group(3) or "", 1.0))
            assert any(rounds_from(float(m.group(2)) * prefix, x) for x in pool), line
    assert numbers >= 4 and numbers == body.count("&\\approx")


def test_latex_fragment_shows_the_worked_cutoffs(analyses):
    # RC low-pass 4.7k/22n with R_s = 600 and R_L = 10k: 2088.40 Hz loaded, 1539.22 Hz alone
    # (REFERENCES.md worked numbers: computed regression values, computed two independent ways).
    tex = note_latex(analyses["rc-lowpass"])
    assert "f_{c} &\\approx 2.088\\,\\mathrm{kHz}" in tex and "f_{c} &\\approx 1.539\\,\\mathrm{kHz}" in tex


# --- files ------------------------------------------------------------------------------

def test_write_note_in_each_format(tmp_path):
    c = catalogue.build("sallen-key-lowpass")
    written = write_note(c, tmp_path / "stage.md")
    assert [p.name for p in written] == ["stage-bode.svg", "stage.md"]
    assert "](stage-bode.svg)" in (tmp_path / "stage.md").read_text()
    assert xml.dom.minidom.parse(str(tmp_path / "stage-bode.svg")).documentElement.tagName == "svg"
    assert write_note(c, tmp_path / "stage.html") == [tmp_path / "stage.html"]
    # a .tex note is a standalone document with its Bode plot as a PDF beside it; --fragment keeps the old form
    assert write_note(c, tmp_path / "stage.tex") == [tmp_path / "stage-bode.pdf", tmp_path / "stage.tex"]
    assert (tmp_path / "stage-bode.pdf").read_bytes()[:5] == b"%PDF-"
    assert write_note(c, tmp_path / "frag.tex", fragment=True) == [tmp_path / "frag.tex"]
    assert (tmp_path / "frag.tex").read_text() == note_latex(analyse(c))
    # without values there is nothing to plot: the Markdown note says so and no SVG is written
    symbolic = catalogue.build("rc-lowpass", R1=None)
    assert write_note(symbolic, tmp_path / "symbolic.md") == [tmp_path / "symbolic.md"]
    assert "No plot" in (tmp_path / "symbolic.md").read_text()


def test_write_note_refuses_unknown_suffix_and_the_input_file(tmp_path):
    c = catalogue.build("rc-lowpass")
    with pytest.raises(UsageError, match=r"name the note \.html, \.md or \.tex"):
        write_note(c, tmp_path / "stage.pdf")
    src = tmp_path / "stage.html"
    src.write_text("input")
    with pytest.raises(OutputError):
        write_note(c, src, protect=[src])
    assert src.read_text() == "input"


# --- Bode data and plots ------------------------------------------------------------------

def test_bode_data_matches_scipy_freqs():
    from scipy.signal import freqs

    a = analyse(catalogue.build("sallen-key-lowpass"), sensitivity=False)
    d = bode_data(a, fmin=10, fmax=1e6, points=200)
    values = a.circuit.values()
    for h, db, phase in ((a.loaded.transfer, d.loaded_db, d.loaded_phase),
                         (a.ideal.transfer, d.ideal_db, d.ideal_phase)):
        b_c, a_c = h.subs(values).coefficients()
        _, resp = freqs([float(x) for x in b_c[::-1]], [float(x) for x in a_c[::-1]], worN=2 * np.pi * d.f)
        np.testing.assert_allclose(db, 20 * np.log10(np.abs(resp)), rtol=1e-9, atol=1e-9)
        np.testing.assert_allclose(phase, np.degrees(np.unwrap(np.angle(resp))), atol=1e-7)


def test_rc_lowpass_is_3db_down_and_45_degrees_at_its_cutoff():
    # First-order low-pass: |H| = 1/sqrt(2) (-3.0103 dB) and phase -45 degrees at f_c (common practice).
    c = catalogue.build("rc-lowpass", source="none", load="none")
    a = analyse(c, sensitivity=False)
    fc = a.numeric["ideal"]["cutoff_hz"]
    d = bode_data(a, fmin=fc, fmax=10 * fc, points=2)
    assert d.ideal_db[0] == pytest.approx(-10 * math.log10(2), abs=1e-9)
    assert d.ideal_phase[0] == pytest.approx(-45.0, abs=1e-9)
    assert d.marks["ideal"]["cutoff"] == pytest.approx(fc)


def test_bode_data_from_a_network_function_and_its_errors():
    h = analyse(catalogue.build("rc-lowpass"), sensitivity=False).loaded.transfer
    values = catalogue.build("rc-lowpass").values()
    d = bode_data(h, values, 100, 1e4, 3)
    assert d.loaded_db[0] < d.ideal_db[0] < 0
    with pytest.raises(UsageError, match="no value for"):
        bode_data(h, {}, 100, 1e4, 3)
    with pytest.raises(UsageError, match="0 < fmin < fmax"):
        bode_data(h, values, 1e4, 100, 3)
    with pytest.raises(UsageError, match="points"):
        bode_data(h, values, 100, 1e4, 1)


def test_csv_has_the_sweep():
    a = analyse(catalogue.build("mfb-bandpass"), sensitivity=False)
    d = bode_data(a, points=50)
    lines = csv_text(d).splitlines()
    assert lines[0] == "frequency_hz,loaded_db,loaded_phase_deg,ideal_db,ideal_phase_deg"
    rows = np.array([[float(x) for x in line.split(",")] for line in lines[1:]])
    assert rows.shape == (50, 5)
    np.testing.assert_allclose(rows[:, 0], d.f, rtol=1e-9)
    np.testing.assert_allclose(rows[:, 3], d.ideal_db, rtol=1e-8, atol=1e-8)


def test_plots_are_svg_and_png(tmp_path):
    d = bode_data(analyse(catalogue.build("twin-t-notch"), sensitivity=False), points=100)
    assert render_bode(d, "png").startswith(b"\x89PNG\r\n\x1a\n")
    svg = bode_svg(d)
    assert xml.dom.minidom.parseString(svg).documentElement.getAttribute("viewBox")
    p = plot_bode(d, tmp_path / "b.png")
    assert p.read_bytes()[:4] == b"\x89PNG"
    with pytest.raises(UsageError, match=r"\.svg or \.png"):
        plot_bode(d, tmp_path / "b.jpg")


# --- command line (the commands live in symfilt/cli.py) -------------------------------------

def test_cli_note_writes_html(run_cli, tmp_path):
    out = tmp_path / "note.html"
    code, _, err = run_cli("note", "@sallen-key-lowpass", "-o", str(out))
    assert code == 0, err
    assert parse_page(out.read_text()).tags.get("math", 0) >= 8


def test_cli_note_refuses_to_overwrite_its_input(run_cli, tmp_path):
    src = tmp_path / "stage.html"
    code, _, _ = run_cli("catalogue", "rc-lowpass", "--write", str(src))
    assert code == 0
    before = src.read_text()
    code, _, err = run_cli("note", str(src), "-o", str(src))
    assert code == 2 and err.startswith("error: ") and "is the input circuit file" in err
    assert src.read_text() == before


def test_cli_plot_writes_png_svg_and_csv(run_cli, tmp_path):
    code, _, err = run_cli("plot", "@rc-lowpass", "-o", str(tmp_path / "b.png"), "--csv", str(tmp_path / "b.csv"),
                           "--fmin", "10", "--fmax", "100k")
    assert code == 0, err
    assert (tmp_path / "b.png").read_bytes()[:4] == b"\x89PNG"
    lines = (tmp_path / "b.csv").read_text().splitlines()
    assert float(lines[1].split(",")[0]) == pytest.approx(10) and float(lines[-1].split(",")[0]) == pytest.approx(1e5)
    code, _, err = run_cli("plot", "@rc-lowpass", "-o", str(tmp_path / "b.svg"))
    assert code == 0, err
    code, _, err = run_cli("plot", "@rc-lowpass", "-o", str(tmp_path / "b.gif"))
    assert code == 2 and err.startswith("error: ") and ".svg or .png" in err
    code, _, err = run_cli("plot", "@rc-lowpass")
    assert code == 2 and "nothing to write" in err


def test_derive_never_imports_matplotlib():
    code = (
        "import sys\n"
        "from click.testing import CliRunner\n"
        "import symfilt.cli\n"
        "r = CliRunner().invoke(symfilt.cli.cli, ['derive', '@sallen-key-lowpass', '--format', 'json'])\n"
        "assert r.exit_code == 0, r.output\n"
        "r = CliRunner().invoke(symfilt.cli.cli, ['derive', '@rc-lowpass'])\n"
        "assert r.exit_code == 0, r.output\n"
        "assert 'matplotlib' not in sys.modules, 'derive imported matplotlib'\n"
        "print('ok')\n"
    )
    res = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=600)
    assert res.returncode == 0, res.stderr
    assert res.stdout.strip() == "ok"
