"""Hostile and mistaken circuit files: every case ends in a result or one clear error, never a crash.

Valid circuit files are mutated at random (deleted, repeated or swapped lines,
unknown or swapped nodes, junk values, unicode and very long names, huge and tiny
numbers, TOML nan/inf, binary bytes, truncation). Each mutated file must either
derive, or raise a :class:`~symfilt.errors.SymfiltError` with a one-line message;
through the command line it must exit 0 with JSON, or exit 2 with one ``error:``
line on stderr and no traceback.

Bounded: a fixed number of examples, derandomized, and a wall-clock budget after
which the remaining examples are skipped (a budget, not an assertion). A watchdog
turns a hang into a failure.
"""

from __future__ import annotations

import contextlib
import json
import shutil
import signal
import tempfile
import time
from pathlib import Path

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from symfilt import catalogue
from symfilt.model.circuit_file import circuit_to_text, load_circuit
from symfilt.errors import SymfiltError
from symfilt.analysis.network import derive

EXAMPLES = 150
BUDGET_SECONDS = 240.0  # after this, remaining examples are skipped
HANG_SECONDS = 120  # one example running this long is a hang

HANDMADE = """title = "Controlled sources and fixtures"
[ports]
input = "in"
output = "out"
[source]
resistance = "50"
[load]
resistance = "symbol"
capacitance = "100p"
[parts]
R1 = { kind = "resistor", nodes = ["in", "a"], value = "1k" }
E1 = { kind = "vcvs", nodes = ["b", "0", "a", "0"], gain = "2" }
R2 = { kind = "resistor", nodes = ["a", "0"], value = "10k" }
R3 = { kind = "resistor", nodes = ["b", "out"], value = "4k7" }
L1 = { kind = "inductor", nodes = ["out", "0"], value = "10m" }
F1 = { kind = "cccs", nodes = ["out", "0"], control = "R3", gain = "-0.5" }
U1 = { kind = "opamp", plus = "a", minus = "c", out = "c", model = "gain", gain = "100k" }
R4 = { kind = "resistor", nodes = ["c", "0"], value = "1M" }
"""

SEEDS = [circuit_to_text(catalogue.build(name)) for name in
         ("rc-lowpass", "inverting-lowpass", "sallen-key-lowpass", "mfb-bandpass", "twin-t-notch")] + [HANDMADE]

NODES = ["in", "out", "a", "b", "n", "0", "gnd", "GND", "zz", "", " ", "outt", "Ω", "naïve", "\u202eevil",
         "x" * 33, "x" * 300, "0 ", "\\u0000source", "\\u001b[2J", "😀"]
VALUES = ["4x7", "", "-1", "0", "-0", "1e300", "1e-300", "1e24", "1e-24", "1e999999999", "0e999999999", "nan",
          "inf", "-inf", "٣", "k", "1/0", "1/3", "4k7k", "R47", "2n2", "1.5 MΩ", "symbol", "none", "1" * 70,
          "-4k7", "1e-30", "3.3 ohms", "22nF", "lots"]
NAMES = ["R1", "R_s", "lambda", "s", "A_U1", "1R", "R" * 33, "R" * 5000, "Rä", '"R 1"', '"R\\u001b"', '"😀"',
         "pi", "E", "I", "oo", "x"]
KINDS = ["resistor", "capacitor", "inductor", "opamp", "vcvs", "vccs", "ccvs", "cccs", "resistr", "", "Resistor"]
BARE = ["nan", "inf", "-inf", "1e300", "1e-300", "0", "-0.0", "99999999999999999999999999",
        "1" + "0" * 5000, "true", "[]", "{}", "[[1]]", "1979-05-27", '"""\n"""']


PRINTABLE = st.characters(blacklist_categories=("Cc", "Cs"))  # raw control bytes come from the binary step


def _quoted_spans(text: str) -> list[tuple[int, int]]:
    """Start and end of the contents of every double-quoted string (no escapes in the seeds)."""
    spans, i = [], 0
    while (start := text.find('"', i)) != -1:
        end = text.find('"', start + 1)
        if end == -1:
            break
        spans.append((start + 1, end))
        i = end + 1
    return spans


@st.composite
def mutated(draw) -> bytes:
    text = draw(st.sampled_from(SEEDS))
    for _ in range(draw(st.integers(1, 4))):
        lines = text.split("\n")
        op = draw(st.sampled_from(["delete", "repeat", "swap", "quoted", "quoted", "quoted", "quoted", "name",
                                   "bare", "bare", "swap_nodes", "swap_nodes"]))
        i = draw(st.integers(0, len(lines) - 1))
        if op == "delete":
            del lines[i]
        elif op == "repeat":
            lines.insert(i, lines[i])
        elif op == "swap":
            j = draw(st.integers(0, len(lines) - 1))
            lines[i], lines[j] = lines[j], lines[i]
        elif op == "name" and " = {" in lines[i]:
            lines[i] = draw(st.sampled_from(NAMES + [draw(st.text(PRINTABLE, min_size=1, max_size=40))]))\
                + lines[i][lines[i].index(" = {"):]
        elif op == "bare" and '"' in lines[i]:
            spans = _quoted_spans(lines[i])
            a, b = draw(st.sampled_from(spans))
            lines[i] = lines[i][: a - 1] + draw(st.sampled_from(BARE)) + lines[i][b + 1:]
        elif op == "swap_nodes" and "nodes = [" in lines[i]:
            head, _, rest = lines[i].partition("nodes = [")
            inner, _, tail = rest.partition("]")
            items = inner.split(", ")
            lines[i] = head + "nodes = [" + ", ".join(draw(st.permutations(items))) + "]" + tail
        text = "\n".join(lines)
        if op == "quoted":
            spans = _quoted_spans(text)
            if spans:
                a, b = draw(st.sampled_from(spans))
                pool = draw(st.sampled_from([NODES, VALUES, KINDS]))
                new = draw(st.one_of(st.sampled_from(pool), st.text(PRINTABLE, max_size=20)))
                new = new.replace("\\", "\\\\").replace('"', '\\"').replace("\n", "\\n")
                text = text[:a] + new + text[b:]
    data = text.encode("utf-8")
    if draw(st.integers(0, 7)) == 0:
        at = draw(st.integers(0, len(data)))
        blob = draw(st.one_of(st.binary(min_size=1, max_size=16),
                              st.sampled_from([b"\xff\xfe", b"\xc3", b"\x1b[2J", b"\r", b"\x0b", b"\xef\xbb\xbf"])))
        data = data[:at] + blob + data[at:]
    if draw(st.integers(0, 9)) == 0:
        data = data[: draw(st.integers(0, len(data)))]
    return data


class _Hang(BaseException):
    """Raised by the watchdog; a BaseException so that no ``except Exception`` swallows it."""


@contextlib.contextmanager
def _watchdog(seconds: int):
    if not hasattr(signal, "SIGALRM"):
        yield
        return

    def ring(_signum, _frame):
        raise _Hang(f"one example ran for more than {seconds} s")

    old = signal.signal(signal.SIGALRM, ring)
    signal.alarm(seconds)
    try:
        yield
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, old)


def _one_line(message: str) -> None:
    assert message and "\n" not in message and "\r" not in message
    assert "Traceback" not in message


def _fuzz_settings():
    return settings(max_examples=EXAMPLES, deadline=None, derandomize=True, database=None,
                    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large,
                                           HealthCheck.filter_too_much])


def test_mutated_files_derive_or_fail_cleanly():
    folder = Path(tempfile.mkdtemp(prefix="symfilt-fuzz-"))
    stop_at = time.monotonic() + BUDGET_SECONDS
    outcomes = {"derived": 0, "refused": 0}

    @_fuzz_settings()
    @given(mutated())
    def run(data: bytes):
        if time.monotonic() > stop_at:
            return
        path = folder / "mutated.toml"
        path.write_bytes(data)
        with _watchdog(HANG_SECONDS):
            try:
                circuit = load_circuit(path)
                for quantity in ("transfer", "zin"):
                    derive(circuit, quantity)
            except SymfiltError as exc:
                _one_line(str(exc))
                outcomes["refused"] += 1
                return
        outcomes["derived"] += 1

    try:
        run()
    finally:
        shutil.rmtree(folder, ignore_errors=True)
    assert outcomes["refused"] > 0 and outcomes["derived"] > 0  # both ends were reached


def test_mutated_files_through_the_command_line():
    from click.testing import CliRunner

    from symfilt.cli import cli as group

    folder = Path(tempfile.mkdtemp(prefix="symfilt-fuzz-cli-"))
    stop_at = time.monotonic() + BUDGET_SECONDS
    codes = {0: 0, 2: 0}

    @_fuzz_settings()
    @given(mutated())
    def run(data: bytes):
        if time.monotonic() > stop_at:
            return
        path = folder / "mutated.toml"
        path.write_bytes(data)
        with _watchdog(HANG_SECONDS):
            result = CliRunner().invoke(group, ["derive", str(path), "--format", "json"])
        assert result.exception is None or isinstance(result.exception, SystemExit), repr(result.exception)
        assert result.exit_code in (0, 2), (result.exit_code, result.stderr)
        codes[result.exit_code] += 1
        assert "Traceback" not in result.stderr and "Traceback" not in result.stdout
        lines = result.stderr.splitlines()
        if result.exit_code == 0:
            json.loads(result.stdout)
            assert all(not ln.startswith("error:") for ln in lines)
            return
        # exactly one error line, the last one; anything before it is a warning or a progress note
        assert [ln for ln in lines if ln.startswith("error: ")] == lines[-1:], result.stderr
        assert all(ln.startswith(("warning: ", "symfilt: ")) for ln in lines[:-1]), result.stderr
        assert "internal error" not in lines[-1], lines[-1]
        assert result.stdout == ""

    try:
        run()
    finally:
        shutil.rmtree(folder, ignore_errors=True)
    assert codes[0] > 0 and codes[2] > 0
