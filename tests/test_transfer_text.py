"""H(s) in the text report: drawn, on one line, or a pointer (symfilt's own display rules)."""

import pathlib
import sys

sys.path.insert(0, str(pathlib.Path(__file__).resolve().parents[1] / "benchmarks"))

from cases import rc_ladder  # noqa: E402

from symfilt import catalogue  # noqa: E402
from symfilt.analysis.network import derive  # noqa: E402
from symfilt.export import transfer_text  # noqa: E402


def test_a_small_transfer_function_is_drawn_in_two_dimensions():
    drawn = transfer_text.transfer_drawing(derive(catalogue.build("sallen-key-lowpass")).ideal())
    assert len(drawn.splitlines()) >= 3 and "─" in drawn  # numerator, bar, denominator (with its powers raised)


def test_a_transfer_function_too_long_for_one_line_is_never_drawn(monkeypatch):
    # six-section ladder: 611 terms, under the term limit but thousands of characters on one line
    h = derive(rc_ladder(6))
    assert h.ratio.terms <= 10 * transfer_text.LONG

    def refuse(parts):
        raise AssertionError("drawn although the one-line form was already too long")

    monkeypatch.setattr(transfer_text, "_drawn", refuse)
    text = transfer_text.transfer_drawing(h)
    assert text.endswith("-character expression; see --format json or latex)")


def test_a_drawing_wider_than_the_limit_falls_back_to_one_line():
    h = derive(rc_ladder(2))
    drawn = transfer_text.transfer_pretty(h)
    width = max(len(row) for row in drawn.splitlines())
    line = transfer_text.transfer_line(h)
    shown = transfer_text.transfer_drawing(h)
    assert shown == (line if width > transfer_text.DRAWING_WIDTH else drawn)
