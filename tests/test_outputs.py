"""Output targets that are not plain files (issue 20): links, pipes, stdout, devices; one stderr line on failure.

Every command runs in a subprocess as the current user, with a private temporary folder
standing in for ``/dev`` paths. When the test runs as root, ``/dev/stdout`` itself is used
too, and must still be a symbolic link afterwards.
"""

from __future__ import annotations

import os
import subprocess
import sys
import threading
import warnings
from pathlib import Path

import pytest
from click.testing import CliRunner

import symfilt.cli as cli_module

REPO = Path(__file__).resolve().parents[1]

#: Each command writing to TARGET, with a text its output must hold.
COMMANDS = {
    "plot-csv": (["plot", "@rc-lowpass", "--points", "5", "--csv"], "frequency_hz,loaded_db"),
    "catalogue-write": (["catalogue", "rc-lowpass", "--write"], 'title = "RC low-pass"'),
    # a .tex note is a standalone document; into a pipe it writes no figure file beside it
    "note": (["note", "@rc-lowpass", "-o"], "\\documentclass"),
}
SUFFIX = {"plot-csv": ".csv", "catalogue-write": ".toml", "note": ".tex"}


def run(args, **kwargs) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "symfilt.cli", *args], cwd=REPO, capture_output=True,
                          text=True, timeout=300, **kwargs)


def command(name: str, target) -> list:
    args, _ = COMMANDS[name]
    return [*args, str(target)]


def stderr_lines(result) -> list:
    return [ln for ln in result.stderr.splitlines() if ln.strip()]


def run_into_fifo(args, fifo: Path) -> tuple:
    """Run the command with a reader thread on ``fifo``; return (result, what the reader got)."""
    got = []
    reader = threading.Thread(target=lambda: got.append(fifo.read_bytes()), daemon=True)
    reader.start()
    try:
        result = run(args)
    finally:
        if reader.is_alive():  # the command wrote nothing into the pipe: let the reader see an end
            try:
                os.close(os.open(fifo, os.O_WRONLY | os.O_NONBLOCK))
            except OSError:
                pass
        reader.join(timeout=60)
    return result, b"".join(got).decode("utf-8")


@pytest.mark.parametrize("name", sorted(COMMANDS))
def test_symlink_to_a_fifo_gets_a_stream_write(tmp_path, name):
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    link = tmp_path / f"out{SUFFIX[name]}"
    link.symlink_to(fifo)
    result, got = run_into_fifo(command(name, link), fifo)
    assert result.returncode == 0, result.stderr
    assert COMMANDS[name][1] in got
    assert link.is_symlink() and os.readlink(link) == str(fifo)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out" + SUFFIX[name], "pipe"]  # no temporary left


@pytest.mark.parametrize("name", sorted(COMMANDS))
def test_fifo_itself_gets_a_stream_write(tmp_path, name):
    fifo = tmp_path / f"pipe{SUFFIX[name]}"
    os.mkfifo(fifo)
    result, got = run_into_fifo(command(name, fifo), fifo)
    assert result.returncode == 0, result.stderr
    assert COMMANDS[name][1] in got
    assert [p.name for p in tmp_path.iterdir()] == [fifo.name]


@pytest.mark.parametrize("name", sorted(COMMANDS))
def test_symlink_to_a_regular_file_replaces_the_file_and_keeps_the_link(tmp_path, name):
    real = tmp_path / "real" / f"file{SUFFIX[name]}"
    real.parent.mkdir()
    real.write_text("old")
    link = tmp_path / f"link{SUFFIX[name]}"
    link.symlink_to(real)
    result = run(command(name, link))
    assert result.returncode == 0, result.stderr
    assert link.is_symlink() and os.readlink(link) == str(real)
    assert COMMANDS[name][1] in real.read_text(encoding="utf-8")
    assert sorted(p.name for p in real.parent.iterdir()) == [real.name]


@pytest.mark.parametrize("name", sorted(COMMANDS))
def test_dangling_symlink_is_refused_with_one_line(tmp_path, name):
    link = tmp_path / f"link{SUFFIX[name]}"
    link.symlink_to(tmp_path / "missing" / "nothing")
    result = run(command(name, link))
    assert result.returncode == 2
    assert stderr_lines(result) == [
        f"error: {link}: is a symbolic link to a missing file, point it at an existing file or give another path"]
    assert link.is_symlink() and not (tmp_path / "missing").exists()


@pytest.mark.parametrize("name", ["plot-csv", "catalogue-write"])
def test_dash_is_stdout(tmp_path, name):
    result = run(command(name, "-"), env={**os.environ, "TMPDIR": str(tmp_path)})
    assert result.returncode == 0, result.stderr
    assert COMMANDS[name][1] in result.stdout
    assert "wrote" not in result.stderr
    assert not (REPO / "-").exists()


def test_unix_socket_is_refused(tmp_path):
    import socket

    path = tmp_path / "s.csv"
    with socket.socket(socket.AF_UNIX) as sock:
        sock.bind(str(path))
        result = run(command("plot-csv", path))
    assert result.returncode == 2
    assert stderr_lines(result) == [f"error: {path}: is a socket, give the name of an ordinary file to write"]


AS_ROOT = pytest.mark.skipif(not hasattr(os, "geteuid") or os.geteuid() != 0,
                             reason="only root could replace /dev/stdout")


@AS_ROOT
@pytest.mark.parametrize("name", ["plot-csv", "catalogue-write"])
def test_dev_stdout_as_root_stays_a_symlink(tmp_path, name):
    assert os.path.islink("/dev/stdout")
    before = os.readlink("/dev/stdout")
    out = tmp_path / "captured"
    with open(out, "w", encoding="utf-8") as fh:
        result = subprocess.run([sys.executable, "-m", "symfilt.cli", *command(name, "/dev/stdout")], cwd=REPO,
                                stdout=fh, stderr=subprocess.PIPE, text=True, timeout=300)
    assert result.returncode == 0, result.stderr
    assert os.path.islink("/dev/stdout") and os.readlink("/dev/stdout") == before
    assert COMMANDS[name][1] in out.read_text(encoding="utf-8")
    assert [p.name for p in tmp_path.iterdir()] == ["captured"]


@AS_ROOT
def test_note_to_dev_stdout_as_root_is_refused_and_stays_a_symlink():
    before = os.readlink("/dev/stdout")
    result = run(command("note", "/dev/stdout"))  # the note's form is named by its suffix
    assert result.returncode == 2
    assert stderr_lines(result) == ["error: /dev/stdout: cannot write a note to a suffix-less file, "
                                    "name the note .html, .md or .tex"]
    assert os.path.islink("/dev/stdout") and os.readlink("/dev/stdout") == before


def test_new_file_in_a_system_folder_is_refused():
    if not os.path.isdir("/proc/self"):
        pytest.skip("no /proc here")
    result = run(command("plot-csv", "/proc/self/symfilt-out.csv"))
    assert result.returncode == 2
    assert stderr_lines(result) == ["error: /proc/self/symfilt-out.csv: is inside a system folder "
                                    "(/dev, /proc or /sys), write the output to an ordinary folder"]


def test_a_bad_second_target_is_refused_before_anything_is_written(tmp_path):
    csv = tmp_path / "sweep.csv"
    link = tmp_path / "plot.svg"
    link.symlink_to(tmp_path / "nowhere.svg")
    result = run(["plot", "@rc-lowpass", "--points", "5", "--csv", str(csv), "-o", str(link)])
    assert result.returncode == 2
    assert len(stderr_lines(result)) == 1 and stderr_lines(result)[0].startswith(f"error: {link}: ")
    assert not csv.exists()


# --- one stderr line on failure ------------------------------------------------------------------

def test_failing_derivation_prints_one_line_in_a_subprocess():
    result = run(["derive", "@state-variable", "--max-terms", "10"])
    assert result.returncode == 2
    lines = stderr_lines(result)
    assert len(lines) == 1 and lines[0].startswith("error: ") and "size budget" in lines[0]
    assert "RuntimeWarning" not in result.stderr


def visible_lines(stderr: str) -> list:
    """The lines a terminal shows: a carriage return and erase-line overwrite the line."""
    shown = []
    for raw in stderr.split("\n"):
        line = raw.split("\r")[-1].replace("\x1b[K", "")
        if line.strip():
            shown.append(line)
    return shown


def test_progress_on_a_terminal_is_cleared_when_the_command_fails(monkeypatch):
    monkeypatch.setattr(cli_module, "_stderr_is_terminal", lambda: True)
    monkeypatch.setattr(cli_module, "PROGRESS_DELAY", 0.0)  # every stage is past the delay
    result = CliRunner().invoke(cli_module.cli, ["derive", "@state-variable", "--max-terms", "10"])
    assert result.exit_code == 2
    assert "symfilt: elimination step" in result.stderr  # the status line was shown ...
    assert result.stderr.count("\n") == 1  # ... never as a line of its own
    lines = visible_lines(result.stderr)
    assert len(lines) == 1 and lines[0].startswith("error: ")


def test_progress_is_not_printed_when_stderr_is_not_a_terminal(monkeypatch):
    monkeypatch.setattr(cli_module, "_stderr_is_terminal", lambda: False)
    monkeypatch.setattr(cli_module, "PROGRESS_DELAY", 0.0)
    result = CliRunner().invoke(cli_module.cli, ["derive", "@state-variable", "--max-terms", "10"])
    assert result.exit_code == 2
    assert result.stderr.splitlines() == [result.stderr.strip()] and result.stderr.startswith("error: ")


def test_warnings_are_dropped_and_no_wrote_line_before_the_error(monkeypatch, tmp_path):
    import symfilt.analysis.bode as bode
    from symfilt.errors import OutputError

    real_bode_data = bode.bode_data

    def noisy(*args, **kwargs):
        warnings.warn("overflow encountered in exp", RuntimeWarning)
        return real_bode_data(*args, **kwargs)

    import symfilt.export.outfile as outfile_module

    real_write = outfile_module._write_replacing

    def failing_write(p, data, *, shown):  # the plot's write fails (since issue 19 the plot is rendered first)
        if str(p).endswith(".svg"):
            warnings.warn("invalid value encountered in divide", RuntimeWarning)
            raise OutputError(shown, "cannot be written (disc full)", "check the folder has space")
        return real_write(p, data, shown=shown)

    monkeypatch.setattr(bode, "bode_data", noisy)
    monkeypatch.setattr(outfile_module, "_write_replacing", failing_write)
    csv, svg = tmp_path / "sweep.csv", tmp_path / "plot.svg"
    result = CliRunner().invoke(cli_module.cli, ["plot", "@rc-lowpass", "--points", "5",
                                                 "--csv", str(csv), "-o", str(svg)])
    assert result.exit_code == 2
    assert result.stderr.splitlines() == [f"error: {svg}: cannot be written (disc full), check the folder has space"]
    assert "RuntimeWarning" not in result.stderr and "wrote" not in result.stderr
    assert not csv.exists()  # all outputs or none: the CSV written first was taken back


def test_wrote_lines_come_after_every_output(tmp_path):
    csv, svg = tmp_path / "sweep.csv", tmp_path / "plot.svg"
    result = run(["plot", "@rc-lowpass", "--points", "5", "--csv", str(csv), "-o", str(svg)])
    assert result.returncode == 0, result.stderr
    assert stderr_lines(result) == [f"wrote {csv}", f"wrote {svg}"]


def test_status_line_is_cleared_before_the_result_on_stdout(monkeypatch):
    monkeypatch.setattr(cli_module, "_stderr_is_terminal", lambda: True)
    monkeypatch.setattr(cli_module, "PROGRESS_DELAY", 0.0)
    result = CliRunner().invoke(cli_module.cli, ["plot", "@rc-lowpass", "--points", "5", "--csv", "-"])
    assert result.exit_code == 0, result.stderr
    assert result.stderr.startswith("\r") and result.stderr.endswith("\r\x1b[K")  # shown, then cleared
    assert visible_lines(result.stderr) == []
    assert result.stdout.startswith("frequency_hz,")
