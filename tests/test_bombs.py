"""Size bombs: claims and circuits that would exhaust memory or time end in one error line.

Each case runs the console command in a subprocess under an address-space limit of 2.5 GB
(``resource.RLIMIT_AS``), so a case that still grew without bound would fail here with a
C library's abort (exit 134) or Python's MemoryError instead of taking the machine. The
expected outcome is one ``error:`` line and exit 2 (or a verdict, exit 0/1, where the case
turns out small enough). The subprocess timeout is a guard against a hang, not an assertion
about speed. The limits themselves (degree 256, 4000 digits, 1 GB) are symfilt's own
choices (DEVELOPERS.md), not published values.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parent.parent
LIMIT = int(2.5 * 2**30)


def _limit():
    import resource

    resource.setrlimit(resource.RLIMIT_AS, (LIMIT, LIMIT))


def run(*args: str) -> subprocess.CompletedProcess:
    code = "import sys; from symfilt.cli import main; sys.exit(main())"
    return subprocess.run([sys.executable, "-c", code, *args], cwd=REPO, capture_output=True, text=True,
                          timeout=300, preexec_fn=_limit, env={**os.environ, "PYTHONWARNINGS": "ignore"})


def one_error_line(result) -> str:
    lines = result.stderr.splitlines()
    assert result.returncode == 2 and len(lines) == 1 and lines[0].startswith("error: "), result.stderr
    return lines[0]


CLAIM_BOMBS = {
    "((((1+s)**16)**16)**16)**16": "degree 65536",
    "(((1e300+s)**16)**16)**16": "degree 4096",
    "(1e300+s)**64": "digits",
    "(1e300)**64": "digits",
    "(1e300)**16*(1e300)**16": "digits",
    "((R1+C1+R_s+R_L+s)**40)**2": "terms",
}


@pytest.mark.parametrize("claim", sorted(CLAIM_BOMBS))
def test_claim_bombs_are_refused_before_expanding(claim):
    line = one_error_line(run("check", "@rc-lowpass", claim))
    assert CLAIM_BOMBS[claim] in line


@pytest.mark.parametrize("claim", ["(R1+C1+R_s+R_L+s)**30", "R1||C1||R_s||R_L||" * 7 + "R1"])
def test_large_claims_within_the_limits_get_a_verdict(claim):
    result = run("check", "@rc-lowpass", claim)
    assert result.returncode == 1 and result.stderr == "" and result.stdout.startswith("different")


def write(tmp_path, name: str, lines: list[str]) -> str:
    path = tmp_path / name
    path.write_text("\n".join(lines) + "\n")
    return str(path)


def mesh(tmp_path, rows: int, cols: int) -> str:
    """A rows x cols grid of symbolic resistors, each node also to ground through one."""
    lines, k = ['[ports]', 'input = "n0_0"', f'output = "n{rows - 1}_{cols - 1}"', "[parts]"], 0
    for i in range(rows):
        for j in range(cols):
            for a, b in ((i, j + 1), (i + 1, j)):
                if a < rows and b < cols:
                    k += 1
                    lines.append(f'R{k} = {{ kind = "resistor", nodes = ["n{i}_{j}", "n{a}_{b}"] }}')
            k += 1
            lines.append(f'R{k} = {{ kind = "resistor", nodes = ["n{i}_{j}", "gnd"] }}')
    return write(tmp_path, "mesh.toml", lines)


def ladder(tmp_path, sections: int) -> str:
    lines = ['[ports]', 'input = "n0"', f'output = "n{sections}"', "[parts]"]
    for i in range(sections):
        lines += [f'R{i} = {{ kind = "resistor", nodes = ["n{i}", "n{i + 1}"] }}',
                  f'C{i} = {{ kind = "capacitor", nodes = ["n{i + 1}", "gnd"] }}']
    return write(tmp_path, "ladder.toml", lines)


def test_a_resistor_mesh_stops_at_the_memory_budget(tmp_path):
    line = one_error_line(run("derive", mesh(tmp_path, 3, 4), "--quantity", "transfer"))
    assert "memory budget" in line and "--max-memory" in line


def test_a_long_ladder_with_a_huge_term_budget_stops_at_the_memory_budget(tmp_path):
    line = one_error_line(run("derive", ladder(tmp_path, 75), "--quantity", "transfer", "--max-terms", "100000000"))
    assert "memory budget" in line


def test_the_watchdog_stops_a_run_past_max_memory():
    # the claim is within the claim limits; the watchdog's lower limit stops the whole run first
    line = one_error_line(run("check", "@rc-lowpass", "(R1+C1+R_s+R_L+s)**30", "--max-memory", "60M"))
    assert "memory limit of 0.06 GB" in line


def test_a_bad_max_memory_is_one_error_line():
    assert "--max-memory" in one_error_line(run("catalogue", "--max-memory", "lots"))


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs named pipes")
def test_a_fifo_as_the_circuit_file_is_refused(tmp_path):
    fifo = tmp_path / "c.toml"
    os.mkfifo(fifo)
    assert "named pipe" in one_error_line(run("derive", str(fifo)))
