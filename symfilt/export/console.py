"""Writing to the console streams: whole results at once, ASCII spellings where needed, clear errors.

A result goes to stdout in one write; a stream that cannot take it (closed, a full device, a
reader gone) is an :class:`~symfilt.errors.OutputError`, which the command line prints as its
one ``error:`` line. A stream whose encoding cannot hold a character (``PYTHONIOENCODING=ascii``,
a C locale) gets the ASCII spelling of it (``·`` as ``*``, ``∞`` as ``oo``, ``Ω`` as ``ohm``).

>>> ascii_spelling("R1·C1 → ∞, 4.7 kΩ, 10 µF")
'R1*C1 -> oo, 4.7 kohm, 10 uF'
"""

from __future__ import annotations

import os
import sys
import unicodedata
from typing import Callable

import click

from symfilt.errors import OutputError

__all__ = ["StatusLine", "ascii_spelling", "fit_encoding", "write_stderr", "write_stdout"]

_SPELLINGS = {
    "·": "*", "⋅": "*", "×": "x", "∞": "oo", "Ω": "ohm", "µ": "u", "μ": "u", "→": "->", "←": "<-",
    "≤": "<=", "≥": ">=", "≠": "!=", "≈": "~", "√": "sqrt", "−": "-", "–": "-", "—": "-", "…": "...",
    "°": " deg", "±": "+/-", "π": "pi", "ω": "w", "β": "beta", "τ": "tau", "Δ": "delta", "‖": "||",
    "─": "-", "│": "|", "┌": "+", "┐": "+", "└": "+", "┘": "+", "├": "+", "┤": "+", "⎛": "(", "⎞": ")",
    "⎜": "|", "⎟": "|", "⎝": "(", "⎠": ")", "²": "^2", "³": "^3", "✓": "ok", "✗": "x", "•": "-",
}


def ascii_spelling(text: str) -> str:
    """The text in ASCII: the trade's spellings for symbols, compatibility forms for the rest.

    Parameters
    ----------
    text : str

    Returns
    -------
    str
        Pure ASCII; a character with no spelling becomes ``?``.

    Examples
    --------
    >>> ascii_spelling("R₁ ≥ 50·R_s, 90°")
    'R1 >= 50*R_s, 90 deg'
    """
    out = []
    for ch in text:
        if ch < "\x80":
            out.append(ch)
            continue
        spelt = _SPELLINGS.get(ch)
        if spelt is None:
            spelt = unicodedata.normalize("NFKD", ch).encode("ascii", "ignore").decode() or "?"
        out.append(spelt)
    return "".join(out)


def fit_encoding(text: str, stream) -> str:
    """The text as it is when the stream's encoding holds it, else its ASCII spelling.

    Parameters
    ----------
    text : str
    stream : io.TextIOBase
        The stream it is for (its ``encoding``; unknown means UTF-8).

    Examples
    --------
    >>> import io
    >>> fit_encoding("∞", io.TextIOWrapper(io.BytesIO(), encoding="ascii"))
    'oo'
    """
    encoding = getattr(stream, "encoding", None) or "utf-8"
    try:
        text.encode(encoding)
        return text
    except (UnicodeEncodeError, LookupError):
        return ascii_spelling(text)


def _why(exc: BaseException) -> str:
    if isinstance(exc, BrokenPipeError):
        return "the reader closed the pipe"
    if isinstance(exc, OSError) and exc.strerror:
        return exc.strerror[0].lower() + exc.strerror[1:]
    return "the stream is closed"


def write_stdout(text: str) -> None:
    """Write a whole result to stdout and flush it.

    Parameters
    ----------
    text : str

    Raises
    ------
    OutputError
        When stdout is closed, full, or its reader has gone.

    Examples
    --------
    >>> write_stdout("ok\\n")
    ok
    """
    stream = sys.stdout
    try:
        if stream is None:
            raise ValueError("no stdout")
        stream.write(fit_encoding(text, stream))
        stream.flush()
    except (OSError, ValueError) as exc:
        _silence_stdout()
        raise OutputError("stdout", f"the result could not be written ({_why(exc)})",
                          "check where stdout goes: a closed stream, a full device or a pipe whose reader ended") from None


def _silence_stdout() -> None:
    """Point stdout at the null device, so that the interpreter's final flush stays quiet."""
    try:
        null = os.open(os.devnull, os.O_WRONLY)
        os.dup2(null, 1)
        os.close(null)
        sys.stdout = open(1, "w", closefd=False)
    except OSError:
        sys.stdout = None


def write_stderr(line: str) -> None:
    """A message line on stderr in its encoding (ASCII spellings when needed); lost quietly if it is closed.

    Parameters
    ----------
    line : str
        The line, without its newline.

    Examples
    --------
    >>> write_stderr("warning: x")
    """
    stream = sys.stderr
    try:
        if stream is not None:
            stream.write(fit_encoding(line, stream) + "\n")
            stream.flush()
    except (OSError, ValueError):
        pass


class StatusLine:
    """One status line on stderr, shown only on a terminal, overwritten in place and cleared.

    Parameters
    ----------
    is_terminal : callable
        Asked before each write whether stderr is a terminal.

    Examples
    --------
    >>> line = StatusLine(lambda: False)
    >>> line.show("elimination step 1 of 9"); line.shown
    False
    """

    def __init__(self, is_terminal: Callable[[], bool]) -> None:
        self.is_terminal = is_terminal
        self.shown = False

    def show(self, text: str) -> None:
        """Show ``text`` on the status line (on a terminal only).

        Parameters
        ----------
        text : str
            The status.

        Examples
        --------
        >>> StatusLine(lambda: False).show("x")
        """
        if self.is_terminal():
            click.echo(f"\r{text}\x1b[K", err=True, nl=False, color=True)
            self.shown = True

    def clear(self) -> None:
        """Clear the status line if it shows anything.

        Examples
        --------
        >>> StatusLine(lambda: False).clear()
        """
        if self.shown:
            click.echo("\r\x1b[K", err=True, nl=False, color=True)
            self.shown = False
