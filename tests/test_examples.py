"""The worked examples run, print what examples/README.md shows, and their circuit files derive."""

from __future__ import annotations

import json
import math
import re
import subprocess
import sys
from pathlib import Path

import pytest

from symfilt import analyse
from symfilt import load_circuit

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
SCRIPTS = sorted(EXAMPLES.glob("*.py"))
CIRCUITS = sorted(EXAMPLES.glob("*.toml"))
CHAINS = sorted(EXAMPLES.glob("*/chain.toml"))  # a chain scenario keeps its stage files in its own folder


def readme_outputs() -> dict[str, str]:
    text = (EXAMPLES / "README.md").read_text(encoding="utf-8")
    found = re.findall(r"Output of `python examples/(\w+)\.py`:\n\n```text\n(.*?)```", text, flags=re.S)
    return {name: body for name, body in found}


def test_there_are_three_to_five_scenarios():
    assert 3 <= len(SCRIPTS) <= 5 and len(CIRCUITS) + len(CHAINS) >= len(SCRIPTS)
    assert set(readme_outputs()) == {p.stem for p in SCRIPTS}


@pytest.mark.parametrize("script", SCRIPTS, ids=lambda p: p.stem)
def test_example_script_runs_and_prints_what_the_readme_shows(script, tmp_path):
    # run from another folder: a script finds its circuit file beside itself
    res = subprocess.run([sys.executable, str(script)], capture_output=True, text=True, cwd=tmp_path, timeout=600)
    assert res.returncode == 0, res.stderr
    assert res.stdout == readme_outputs()[script.stem]


@pytest.mark.parametrize("path", CIRCUITS, ids=lambda p: p.stem)
def test_example_circuit_derives(path, run_cli):
    c = load_circuit(path)
    assert c.title
    a = analyse(c)
    assert a.numeric["loaded"].get("cutoff_hz") and a.numeric["ideal"].get("cutoff_hz")
    code, out, err = run_cli("derive", str(path), "--format", "json")
    assert code == 0, err
    assert json.loads(out)["title"] == c.title


def test_accelerometer_corner_against_thevenin():
    # Series C into shunt R1, source R_s, load R_L: the capacitor sees R_s + (R1 || R_L), so
    # f_c = 1/(2 pi C (R_s + R1 R_L/(R1 + R_L))); alone 1/(2 pi R1 C) (Thevenin; common practice).
    a = analyse(load_circuit(EXAMPLES / "accelerometer_highpass.toml"), sensitivity=False)
    c, r1, rs, rl = 4.7e-6, 1e6, 100.0, 1e6
    assert a.numeric["ideal"]["cutoff_hz"] == pytest.approx(1 / (2 * math.pi * r1 * c), rel=1e-12)
    assert a.numeric["loaded"]["cutoff_hz"] == pytest.approx(1 / (2 * math.pi * c * (rs + r1 * rl / (r1 + rl))), rel=1e-12)
