"""The doors: wrong Python arguments, stream failures and output paths end in one clear error.

Python API: every case raises a SymfiltError that is also a TypeError or ValueError, with the
``where: what, fix`` message, never an AttributeError from inside. Console: each stream or
path case runs the real command in a subprocess and expects one ``error:`` line and exit 2
(the behaviour the README's "Troubleshooting" promises; common practice for command-line
tools, no published source).
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

import symfilt
from symfilt import Part, catalogue
from symfilt.errors import SymfiltError

REPO = Path(__file__).resolve().parent.parent
RC = catalogue.build("rc-lowpass")

API_CASES = {
    "Circuit.build(None)": lambda: symfilt.Circuit.build(None),
    "Circuit.build([1, 2])": lambda: symfilt.Circuit.build([1, 2]),
    "Circuit.build(parameters=[])": lambda: symfilt.Circuit.build([Part.resistor("R1", "in", "out")], parameters=[1]),
    "Circuit(parts=None)": lambda: symfilt.Circuit(parts=None),
    "analyse('text')": lambda: symfilt.analyse("text"),
    "derive(quantity='bogus')": lambda: symfilt.derive(RC, quantity="bogus"),
    "derive(max_terms='x')": lambda: symfilt.derive(RC, max_terms="x"),
    "derive(max_terms=3)": lambda: symfilt.derive(RC, max_terms=3),
    "report(None)": lambda: symfilt.report(None),
    "probe(node=3)": lambda: symfilt.probe(RC, 3),
    "probe('text')": lambda: symfilt.probe("rc", "out"),
    "noise_report('text')": lambda: symfilt.noise_report("rc"),
    "Part name 'R 1'": lambda: Part("R 1", "resistor", ("a", "b")),
    "Part value -5": lambda: Part("R1", "resistor", ("a", "b"), value=symfilt.parse_value("-5")),
    "Part value int": lambda: Part("R1", "resistor", ("a", "b"), value=5),
    "Part kind 'resistr'": lambda: Part("R1", "resistr", ("a", "b")),
    "Part nodes list of 3": lambda: Part("R1", "resistor", ("a", "b", "c")),
    "Part.resistor(None, ...)": lambda: Part.resistor(None, "a", "b"),
    "catalogue.build(None)": lambda: catalogue.build(None),
    "load_circuit(None)": lambda: symfilt.load_circuit(None),
    "with_values(None)": lambda: RC.with_values(None),
    "parse_value(None)": lambda: symfilt.parse_value(None),
    "equivalent(None, None)": lambda: symfilt.equivalent(None, None),
    "from_expr(text)": lambda: symfilt.NetworkFunction.from_expr("1/(1+s)"),
    "from_expr(object)": lambda: symfilt.NetworkFunction.from_expr(object()),
}


@pytest.mark.parametrize("case", sorted(API_CASES))
def test_api_type_errors_are_symfilt_errors_with_a_message(case):
    with pytest.raises(SymfiltError) as info:
        API_CASES[case]()
    assert isinstance(info.value, (TypeError, ValueError))
    assert info.value.where and info.value.what and "Traceback" not in str(info.value)


def run(args, **kwargs) -> subprocess.CompletedProcess:
    code = "import sys; from symfilt.cli import main; sys.exit(main())"
    env = {**os.environ, **kwargs.pop("env", {})}
    return subprocess.run([sys.executable, "-c", code, *args], cwd=REPO, capture_output=True, timeout=300,
                          env=env, **kwargs)


def one_error_line(result) -> str:
    lines = result.stderr.decode("utf-8", "replace").splitlines()
    assert result.returncode == 2 and len(lines) == 1 and lines[0].startswith("error: "), result.stderr
    return lines[0]


def test_ascii_stdout_gets_ascii_spellings():
    result = run(["derive", "@rc-lowpass", "--quantity", "cutoff"], env={"PYTHONIOENCODING": "ascii"})
    assert result.returncode == 0 and result.stderr == b""
    text = result.stdout.decode("ascii")  # pure ASCII: no ω, ·, kΩ
    assert "cutoff wc, loaded = 1/(C1*((R1 + R_s) || R_L))" in text


def test_closed_stdout_is_one_error_line():
    assert "stdout" in one_error_line(run(["catalogue"], preexec_fn=lambda: os.close(1)))


@pytest.mark.skipif(not os.path.exists("/dev/full"), reason="needs /dev/full")
def test_a_full_device_is_one_error_line():
    with open("/dev/full", "wb") as full:
        result = subprocess.run([sys.executable, "-c", "import sys; from symfilt.cli import main; sys.exit(main())",
                                 "catalogue"], cwd=REPO, stdout=full, stderr=subprocess.PIPE, timeout=300)
    assert "no space left" in one_error_line(result).lower()


def test_a_reader_that_goes_away_is_one_error_line():
    code = "import sys; from symfilt.cli import main; sys.exit(main())"
    p = subprocess.Popen([sys.executable, "-c", code, "derive", "@state-variable"], cwd=REPO,
                         stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    p.stdout.close()  # the reader is gone before the result comes
    err = p.stderr.read().decode()
    assert p.wait(timeout=300) == 2 and len(err.splitlines()) == 1 and "pipe" in err


PATH_CASES = {
    "a trailing slash": lambda d: ["plot", "@rc-lowpass", "--csv", str(d / "out.csv") + "/", "-o", str(d / "x.svg")],
    "a 304-character name": lambda d: ["plot", "@rc-lowpass", "-o", str(d / ("x" * 300 + ".svg"))],
    "a missing folder": lambda d: ["plot", "@rc-lowpass", "--csv", str(d / "keep.csv"), "-o", str(d / "no" / "x.svg")],
    "a folder": lambda d: ["note", "@rc-lowpass", "-o", str(d)],
}


@pytest.mark.parametrize("case", sorted(PATH_CASES))
def test_output_path_cases_write_nothing(case, tmp_path):
    one_error_line(run(PATH_CASES[case](tmp_path)))
    assert list(tmp_path.iterdir()) == []  # all outputs or none


def test_an_empty_load_limit_is_refused():
    assert "--load-limit" in one_error_line(run(["derive", "@rc-lowpass", "--load-limit", ""]))
