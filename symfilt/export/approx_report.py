"""The words and JSON of ``--approx`` (:mod:`symfilt.analysis.approx`) and the options of
``--keep`` and ``--approx`` shared by ``symfilt derive`` and ``symfilt note``.

Examples
--------
>>> from symfilt import catalogue
>>> from symfilt.design.report import report
>>> r = report(catalogue.build("sallen-key-lowpass"), sensitivity=False, approx=0.05)
>>> d = approx_dict(r.approx)
>>> d["bound"], d["loaded"]["measured_worst"] <= 0.05
(0.05, True)
"""

from __future__ import annotations

import click

from symfilt.errors import UsageError
from symfilt.export.json import json_float
from symfilt.export.text import number_text, one_line
from symfilt.export.transfer_text import transfer_line

METHOD = "simplification after generation: the dominant terms of each coefficient of N(s) and D(s) at the values"
ERROR_FORMULA = "max over the band of | |H_approx(jw)| / |H(jw)| - 1 |"
PHASE_FORMULA = "max over the band of | arg(H_approx(jw) / H(jw)) |, in degrees"


def parse_approx(text) -> float | None:
    """The bound of ``--approx``: ``5%`` or ``0.05``; 0 keeps every term; None stays None.

    Parameters
    ----------
    text : str or None
        The option's text; outside 0..100% is a UsageError.

    Examples
    --------
    >>> parse_approx("5%"), parse_approx("0.01"), parse_approx("0%"), parse_approx(None)
    (0.05, 0.01, 0.0, None)
    """
    if text is None:
        return None
    t = str(text).strip()
    try:
        value = float(t[:-1]) / 100 if t.endswith("%") else float(t)
    except ValueError:
        raise UsageError("--approx", f"{text!r} is not an error bound", "write it as 5% or 0.05") from None
    if not 0 <= value < 1:
        raise UsageError("--approx", f"{text!r} is outside 0..100%", "write a bound such as 5%")
    return value


def keep_or_file(source: str, option):
    """The names of ``--keep``, else the circuit file's top-level ``keep`` key, else None (fully symbolic).

    Parameters
    ----------
    source : str
        The circuit argument (a file, or ``@name``, which has no key).
    option : str or None
        The ``--keep`` text.

    Examples
    --------
    >>> keep_or_file("@rc-lowpass", "R_L,R_s"), keep_or_file("@rc-lowpass", None)
    ('R_L,R_s', None)
    """
    if option is not None:
        return option
    from symfilt.model.keep import load_keep

    return load_keep(source)


def partly_symbolic_options(f):
    """The click options ``--keep NAMES`` and ``--approx BOUND`` of a command.

    Parameters
    ----------
    f : callable
        The command function; it receives ``keep`` and ``approx`` (text or None).

    Examples
    --------
    >>> sorted(p.name for p in click.command()(partly_symbolic_options(lambda keep, approx: None)).params)
    ['approx', 'keep']
    """
    f = click.option("--approx", "approx", metavar="BOUND",
                     help="Also H(s) with only its dominant terms, within BOUND (e.g. 5%) of |H(jw)| as measured "
                          "over the band; 0% keeps every term.")(f)
    return click.option("--keep", "keep", metavar="NAME[,NAME...]",
                        help="Keep only these symbols (and s); every other value goes in before the elimination "
                             "(default: the file's keep key, else fully symbolic).")(f)


def approx_dict(found) -> dict:
    """The ``approx`` entry of the derive JSON: the bound, the method, the formulas, each view.

    Parameters
    ----------
    found : tuple of (str, Approximation)
        :attr:`Report.approx <symfilt.design.report.Report>`.

    Examples
    --------
    >>> approx_dict(())
    {}
    """
    if not found:
        return {}
    out = {"bound": found[0][1].bound, "method": METHOD, "error": ERROR_FORMULA, "phase_error": PHASE_FORMULA}
    for view, x in found:
        form = x.form
        out[view] = {"transfer": str(x.approx.as_expr()),
                     "w0": None if form is None or form.w0 is None else str(form.w0),
                     "q": None if form is None or form.q is None else str(form.q),
                     "measured_worst": json_float(x.measured_worst), "phase_worst_deg": json_float(x.phase_worst_deg),
                     "band_hz": [json_float(x.band_hz[0]), json_float(x.band_hz[1])], "points": x.points,
                     "corners": x.corners, "terms_kept": x.terms_kept, "terms_total": x.terms_total,
                     "coefficient_bound": x.eps}
    return out


def _percent(x: float) -> str:
    """A measured error in per cent; below 1e-9 % (rounding of the float evaluation) it is 0 %."""
    return "0%" if abs(x) < 1e-11 else f"{100 * x:.3g}%"


def approx_text(found) -> str:
    """The ``--approx`` section of the derive text.

    Parameters
    ----------
    found : tuple of (str, Approximation)

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.report import report
    >>> print(approx_text(report(catalogue.build("rc-lowpass"), sensitivity=False, approx=0.05).approx))
    ... # doctest: +ELLIPSIS
    Approximate H(s), within 5% (simplification after generation: ...)
    ...
    """
    if not found:
        return ""
    bound = found[0][1].bound
    lines = [f"Approximate H(s), within {_percent(bound)} ({METHOD})",
             f"  error measured e = {ERROR_FORMULA.replace('max over the band of ', 'max ')}, "
             "worst phase beside it; the exact result is above (and without --approx)"]
    for view, x in found:
        lo, hi = x.band_hz
        lines.append(f"  {view}: {x.terms_kept} of {x.terms_total} terms, e = {_percent(x.measured_worst)}, "
                     f"phase {x.phase_worst_deg:.3g}° over {number_text(lo, 'Hz')} to {number_text(hi, 'Hz')} ({x.points} points"
                     + (f", {x.corners} value sets" if x.corners > 1 else "") + ")"
                     + ("" if x.eps == bound else f"; per-coefficient bound backed off to {_percent(x.eps)}"))
        lines.append(f"    H(s) ≈ {transfer_line(x.approx)}")
        if x.form is not None and x.form.w0 is not None:
            lines.append(f"    w0 ≈ {one_line(x.form.w0)}")
        if x.form is not None and x.form.q is not None:
            lines.append(f"    Q  ≈ {one_line(x.form.q)}")
    return "\n".join(lines) + "\n"


#: Where the approximation goes in each form of the note: before the sensitivities.
_NOTE_MARK = {"markdown": "\n## Sensitivities\n", "html": '<section id="sensitivity">', "latex": "\\section*{Sensitivities}"}


def _note_sentences(view: str, x) -> str:
    lo, hi = x.band_hz
    return (f"{view[:1].upper() + view[1:]}: {x.terms_kept} of {x.terms_total} terms kept; measured worst error of "
            f"|H(jw)| {_percent(x.measured_worst)} and of the phase {x.phase_worst_deg:.3g}° over {number_text(lo, 'Hz')} "
            f"to {number_text(hi, 'Hz')} ({x.points} log-spaced points).")


def _note_equations(x) -> list[str]:
    from symfilt.export.latex import tex, transfer_tex

    eqs = ["H(s) \\approx " + transfer_tex(x.approx)]
    if x.form is not None and x.form.w0 is not None:
        eqs.append("\\omega_0 \\approx " + tex(x.form.w0))
    if x.form is not None and x.form.q is not None:
        eqs.append("Q \\approx " + tex(x.form.q))
    return eqs


def with_approx(note: str, found, form: str) -> str:
    """A design note with an "Approximation" section before its sensitivities (unchanged without one).

    Parameters
    ----------
    note : str
        The note's text (Markdown, HTML or LaTeX).
    found : tuple of (str, Approximation)
    form : {"markdown", "html", "latex"}

    Examples
    --------
    >>> with_approx("# x\\n\\n## Sensitivities\\n", (), "markdown")
    '# x\\n\\n## Sensitivities\\n'
    """
    if not found:
        return note
    from html import escape

    from symfilt.export.mathml import to_mathml
    from symfilt.export.note_tex import tex_text

    head = (f"Approximate H(s) within {_percent(found[0][1].bound)} by {METHOD}; the error e = "
            f"{ERROR_FORMULA} is measured, not assumed. The exact equations are above.")
    if form == "markdown":
        parts = ["", "## Approximation", "", head, ""]
        for view, x in found:
            parts += [_note_sentences(view, x), ""] + [line for eq in _note_equations(x) for line in ("$$", eq, "$$", "")]
    elif form == "html":
        parts = ['<section id="approx"><h2>Approximation</h2>', f"<p>{escape(head)}</p>"]
        for view, x in found:
            parts += [f"<p>{escape(_note_sentences(view, x))}</p>"] + [to_mathml(eq) for eq in _note_equations(x)]
        parts.append("</section>")
    else:
        parts = ["\\section*{Approximation}", tex_text(head)]
        for view, x in found:
            parts += ["", tex_text(_note_sentences(view, x))] + ["\\[" + eq + "\\]" for eq in _note_equations(x)]
    mark = _NOTE_MARK[form]
    return note.replace(mark, "\n".join(parts) + "\n" + mark, 1)


def keep_line(circuit) -> str:
    """The first line of the derive text of a partly symbolic derivation ("" when fully symbolic).

    Parameters
    ----------
    circuit : Circuit

    Examples
    --------
    >>> from symfilt import catalogue
    >>> keep_line(catalogue.build("rc-lowpass").keeping("R_L"))
    'partly symbolic (keep): only R_L and s are symbols; the other values went in before the elimination\\n'
    """
    if circuit.keep is None:
        return ""
    from symfilt.model.keep import unvalued

    names = list(circuit.keep) + list(unvalued(circuit))
    return (f"partly symbolic (keep): only {', '.join(names)} and s are symbols; "
            "the other values went in before the elimination\n")


def keep_dict(circuit) -> dict:
    """The ``keep`` entry of the derive JSON: the names kept and those left symbolic for want of a value.

    Parameters
    ----------
    circuit : Circuit
        A circuit with ``keep`` set.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> keep_dict(catalogue.build("rc-lowpass").keeping("R_L"))
    {'keep': ['R_L'], 'unvalued': []}
    """
    from symfilt.model.keep import unvalued

    return {"keep": list(circuit.keep), "unvalued": list(unvalued(circuit))}
