"""H(s) as the text report prints it: drawn in 2-D, on one line, or a pointer when too long."""

from __future__ import annotations

import sympy

from symfilt.export.common import transfer_parts

LONG = 400  # one-line expressions longer than this are not printed in the text report


def transfer_pretty(h) -> str:
    """H(s) drawn as ``K ⋅ N(s)/D(s)`` in 2-D unicode.

    Parameters
    ----------
    h : NetworkFunction
        The transfer function.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> print(transfer_pretty(derive(catalogue.build("inverting-lowpass")).ideal()))  # doctest: +NORMALIZE_WHITESPACE
    -R₂       1
    ────⋅───────────
     R₁  C₁⋅R₂⋅s + 1
    """
    return _shortcut(h) or _drawn(transfer_parts(h))


def _shortcut(h) -> str | None:
    """What H(s) prints as without its parts: infinite, or too many terms to show."""
    if h.infinite:
        return "∞"
    if h.ratio is not None and h.ratio.terms > 10 * LONG:
        return f"({h.ratio.terms}-term transfer function; see --format json or latex)"
    return None


def _drawn(parts) -> str:
    """The 2-D drawing of (K, N, D)."""
    from sympy.printing.pretty.stringpict import prettyForm

    from symfilt.export.pretty import Printer

    k, n, d = parts
    pp = Printer({"use_unicode": True, "order": "none", "wrap_line": False})
    if d == 1:
        ratio = n
    elif n == 1:
        ratio = sympy.Pow(d, -1, evaluate=False)
    else:
        ratio = sympy.Mul(n, sympy.Pow(d, -1, evaluate=False), evaluate=False)
    form = pp._print(ratio)
    if k != 1:
        form = prettyForm(*pp._print(k).right("⋅", form))
    return form.render(wrap_line=False)


def transfer_line(h) -> str:
    """H(s) on one line as ``K · (N)/(D)``.

    Parameters
    ----------
    h : NetworkFunction
        The transfer function.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> transfer_line(derive(catalogue.build("rc-lowpass")))
    'R_L/(R1 + R_L + R_s) · 1/(C1·((R1 + R_s) || R_L)·s + 1)'
    """
    return _shortcut(h) or _one_line(transfer_parts(h))[0]


def _one_line(parts) -> tuple[str, bool]:
    """(K · (N)/(D) on one line, or a pointer when longer than 10·LONG; whether it fits)."""
    k, n, d = parts
    fmt = lambda e: sympy.sstr(e, order="none").replace("**", "^").replace("*", "·")
    body = fmt(n) if d == 1 else (f"({fmt(n)})" if isinstance(n, sympy.Add) else fmt(n)) + f"/({fmt(d)})"
    text = body if k == 1 else f"{fmt(k)} · {body}"
    if len(text) > 10 * LONG:
        return f"({len(text)}-character expression; see --format json or latex)", False
    return text, True


#: Widest 2-D drawing of H(s), in characters; a wider one is written on one line instead.
DRAWING_WIDTH = 140


def transfer_drawing(h) -> str:
    """H(s) drawn in 2-D (:func:`transfer_pretty`), or on one line when the drawing would be too wide.

    Parameters
    ----------
    h : NetworkFunction

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> transfer_drawing(derive(catalogue.build("rc-lowpass")).ideal()).splitlines()[1]
    '───────────'
    """
    short = _shortcut(h)
    if short:
        return short
    parts = transfer_parts(h)
    line, fits = _one_line(parts)
    if not fits:  # far wider than any drawing shown: not drawn at all (seconds for a large H)
        return line
    drawn = _drawn(parts)
    return line if max(len(row) for row in drawn.splitlines()) > DRAWING_WIDTH else drawn
