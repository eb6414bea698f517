"""The Markdown and LaTeX design notes, and :func:`write_note`, which picks the form by suffix.

The rows come from :mod:`symfilt.export.note` (shared with the HTML page of
:mod:`symfilt.export.note_html`); the suffix -> form table is
:data:`symfilt.export.formats.NOTE_FORMATS`.

Examples
--------
>>> from symfilt import catalogue
>>> from symfilt.analysis.stage import analyse
>>> note_latex(analyse(catalogue.build("rc-lowpass"), sensitivity=False)).startswith("%")
True
"""

from __future__ import annotations

from pathlib import Path

from symfilt.analysis.stage import Analysis
from symfilt.export.approx_report import with_approx
from symfilt.export.formats import note_kind
from symfilt.export.latex import stage_equations
from symfilt.export.noise_note import noise_markdown
from symfilt.export.response_text import word_rows
from symfilt.export.outfile import output_target, write_bytes_atomic, write_text_atomic
from symfilt.export.note import (SENS_COLUMNS, assumptions, cautions, equations, kind_words, node_name,
                                 number_rows, part_rows, sensitivity_table, tie_lines, show_number, stability_row,
                                 opamp_error_lines, standard_form_tex, sweep, views)


_MD_SPECIAL = set("\\`*_{}[]()<>#+!|~&")


def md_text(text: str) -> str:
    """User text (a title, a name) for Markdown: every character Markdown or HTML gives a meaning escaped.

    Parameters
    ----------
    text : str

    Returns
    -------
    str
        The text with ``\\`` before each of ``\\ ` * _ { } [ ] ( ) < > # + ! | ~`` and ``&`` as ``&amp;``,
        so a renderer shows it as written and no HTML in it runs.

    Examples
    --------
    >>> print(md_text("<b>x</b> *y* R_s"))
    \\<b\\>x\\</b\\> \\*y\\* R\\_s
    """
    return "".join("&amp;" if ch == "&" else "\\" + ch if ch in _MD_SPECIAL else ch for ch in text)


def _md_cell(text: str) -> str:
    return md_text(text)


def note_markdown(a: Analysis, *, plot_file: str | None = None, source: str = "", opamp_error=None,
                  noise=None) -> str:
    """The design note as Markdown: tables, ``$$`` LaTeX equations, and a link to the plot file.

    Parameters
    ----------
    a : Analysis
    plot_file : str, optional
        Relative path of the SVG plot written beside the note (no plot when None).
    source : str
        Where the circuit came from, for the footer.
    opamp_error : OpampError, optional
        Real against ideal op-amps, shown under "Real op-amps".
    noise : NoiseReport, optional
        Shown under "Noise" (:mod:`symfilt.export.noise_note`).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> md = note_markdown(analyse(catalogue.build("rc-lowpass")), plot_file="rc-bode.svg")
    >>> md.splitlines()[0], md.count("$$") % 2, "](rc-bode.svg)" in md
    ('# RC low-pass', 0, True)
    """
    from symfilt.version import __version__

    title = a.circuit.title or "Untitled stage"
    out = [f"# {md_text(title)}", "", f"Design note: {kind_words(a.ideal)} from {md_text(node_name(a.circuit.input))} "
           f"to {md_text(node_name(a.circuit.output))}.", ""]
    rows = number_rows(a)
    out += ["## Loaded and ideal", ""]
    if rows:
        out += ["| Quantity | Loaded | Ideal | Loaded / ideal |", "|---|---:|---:|---:|",
                f"| response | {kind_words(a.loaded)} | {kind_words(a.ideal)} | — |"]
        for stab in [w for w in (stability_row(a), *word_rows(a.numeric)) if w]:
            out.append(f"| {stab['label']} | {stab['loaded']['text']} | {stab['ideal']['text']} | — |")
        for r in rows:
            label = r["label"] + (" (dB)" if r["unit"] == "dB" else "")
            out.append(f"| {label} | {r['loaded']['text']} | {r['ideal']['text']} | {r['ratio']['text']} |")
    else:
        out.append("No numbers: some parts have no value.")
    real = opamp_error_lines(opamp_error)
    if real:
        out += ["", "## Real op-amps", "", *[f"- {x}" for x in real]]
    out += ["", "## Parts", "", "| Part | Kind | Connection | Value |", "|---|---|---|---:|"]
    for r in part_rows(a):
        out.append(f"| {md_text(r['name'])} | {_md_cell(r['kind'])} | {_md_cell(r['connection'])} | {r['value']} |")
    if tie_lines(a):
        out += ["", "Tied values (each follows from the parameters and parts it names): "
                + ", ".join(md_text(t) for t in tie_lines(a)) + "."]
    out += ["", "## Equations", ""]
    for view, vtitle in views(a):
        st = getattr(a, view)
        out += [f"### {vtitle}: {kind_words(st)}", ""]
        std = standard_form_tex(st)
        if std:
            out += ["Standard form:", "", "$$", std, "$$", ""]
        for words, eq in equations(st, a.ideal if st is a.loaded else None):
            out += [f"{words[:1].upper() + words[1:]}:", "", "$$", eq, "$$", ""]
    out += ["## Frequency response", ""]
    if plot_file:
        out += [f"![Bode plot: magnitude and phase, loaded and ideal]({plot_file})", ""]
    else:
        out += ["No plot: give every part a value to draw the response.", ""]
    out += ["## Sensitivities", ""]
    labels = {k: v for k, v, _ in SENS_COLUMNS}
    for view, vtitle in views(a):
        cols, srows = sensitivity_table(a, view)
        if not srows:
            continue
        out += [f"### {vtitle}", "", "| Part | " + " | ".join(f"S of {labels[k]}" for k in cols) + " |",
                "|---|" + "---:|" * len(cols)]
        for name, cells in srows:
            out.append(f"| {md_text(name)} | " + " | ".join(c["text"] for c in cells) + " |")
        out.append("")
    out += noise_markdown(noise)
    out += ["## Assumptions", "", *[f"- {x}" for x in assumptions(a)], "",
            "## Cautions", "", *[f"- {x}" for x in cautions(a)], "",
            f"*Derived exactly by symfilt {__version__}" + (f" from {md_text(source)}" if source else "")
            + ". Numbers are rounded to 4 significant digits.*", ""]
    return "\n".join(out)


def _tex_number(x: float, unit: str) -> str:
    text = show_number(x, unit).replace("°", "^{\\circ}")
    if " " not in text:
        return text
    num, unit_text = text.split(" ", 1)
    unit_text = unit_text.replace("µ", "\\mu ").replace("Ω", "\\Omega")
    return f"{num}\\,\\mathrm{{{unit_text}}}"


def note_latex(a: Analysis) -> str:
    """The equations and numbers as a LaTeX fragment: one ``align`` environment (needs amsmath).

    Parameters
    ----------
    a : Analysis
        The result of :func:`symfilt.analysis.stage.analyse`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> tex = note_latex(analyse(catalogue.build("rc-lowpass")))
    >>> tex.count("\\\\begin{align}"), tex.count("\\\\end{align}"), "f_{c} &\\\\approx 2.088\\\\,\\\\mathrm{kHz}" in tex
    (1, 1, True)
    """
    title = a.circuit.title or "Untitled stage"
    lines = [f"% {title}: design equations written by symfilt. Needs \\usepackage{{amsmath}}.",
             "% Loaded: as connected, with the circuit's source and load. Ideal: the stage alone.",
             "\\begin{align}"]
    body = []
    for view, vtitle in views(a):
        st = getattr(a, view)
        rows = [f"  {lhs} &= {rhs}" for lhs, rhs in stage_equations(st, a.ideal if st is a.loaded else None) if rhs is not None]
        nums = []
        for r in number_rows(a):
            v = r[view]["value"]
            if v is not None:
                nums.append(f"  {r['tex']} &\\approx {_tex_number(v, r['unit'])}")
        intro = f"  \\intertext{{{vtitle}:}}"
        block = rows[:]
        if nums:
            block += nums
        body.append(intro + "\n" + " \\\\\n".join(block))
    lines.append(" \\\\\n".join(body))
    lines.append("\\end{align}")
    return "\n".join(lines) + "\n"


# --- files ------------------------------------------------------------------------------


def write_note(circuit, path, *, protect=(), source: str = "", fmin=None, fmax=None, points=None,
               progress=None, noise=None, sweep=None, fragment: bool = False, approx: float | None = None) -> list[Path]:
    """Analyse a circuit and write its design note; the format follows the suffix (.html, .md, .tex).

    A Markdown note gets its Bode plot as ``<name>-bode.svg`` beside it, a LaTeX note (a
    standalone document) as ``<name>-bode.pdf``; a swept family is ``<name>-sweep.svg`` / ``.pdf``
    (inline in the HTML page).

    Parameters
    ----------
    circuit : Circuit or Analysis
    path : str or Path
    protect : sequence of paths
        Files never to overwrite (the input circuit file).
    source : str
        Where the circuit came from, for the footer.
    fmin, fmax, points
        Bode plot range (Hz) and number of frequencies.
    progress : callable, optional
        Receives stage names while deriving.
    noise : NoiseReport, optional
        Adds a "Noise" section to the HTML and Markdown notes.
    sweep : Sweep, optional
        A symbol and its values (``[note] sweep``): the note adds the family of loaded curves.
    fragment : bool
        LaTeX only: today's equations-only ``align`` fragment (:func:`note_latex`), no figure.
    approx : float, optional
        Adds an "Approximation" section: H(s) within this measured error (:mod:`symfilt.analysis.approx`).

    Returns
    -------
    list of Path
        The files written.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> from symfilt import catalogue
    >>> d = pathlib.Path(tempfile.mkdtemp())
    >>> [p.name for p in write_note(catalogue.build("rc-lowpass"), d / "rc.md")]
    ['rc-bode.svg', 'rc.md']
    """
    from symfilt.analysis.stage import analyse

    p = Path(path)
    write = _WRITERS[note_kind(p)]
    if fragment and write is not _write_latex:  # refused before the derivation
        from symfilt.errors import UsageError

        raise UsageError("--fragment", "only a .tex note has a fragment form", "name the note .tex or leave out --fragment")
    a = circuit if isinstance(circuit, Analysis) else analyse(circuit, progress=progress)
    if fragment:
        write_text_atomic(p, note_latex(a), protect=protect)
        return [p]
    family = None
    if sweep is not None:
        from symfilt.analysis.family import family_data

        family = family_data(a, sweep, fmin, fmax, points or 400, where=f"{source or p.name} [note] sweep")
    from symfilt.analysis.approx import approximations

    found = approximations(a, approx) if approx is not None else ()
    return write(a, p, protect=protect, source=source, fmin=fmin, fmax=fmax, points=points, error=_opamp_error(a),
                 noise=noise, family=family, approx=found)


def _opamp_error(a: Analysis):
    """The op-amp error of the circuit as given, when an op-amp is not ideal (None when it has no ideal form)."""
    from symfilt.design.opamp_error import needs_opamp_error, opamp_error
    from symfilt.errors import SingularCircuitError, SizeLimitError, UsageError

    if not needs_opamp_error(a.circuit):
        return None
    try:
        return opamp_error(a.circuit, None)
    except (UsageError, SingularCircuitError, SizeLimitError):
        return None


def _write_html(a: Analysis, p: Path, *, protect, source, fmin, fmax, points, error=None, noise=None,
                family=None, approx=()) -> list[Path]:
    from symfilt.export.note_html import note_html

    write_text_atomic(p, with_approx(note_html(a, source=source, fmin=fmin, fmax=fmax, points=points, opamp_error=error,
                                               noise=noise, family=family), approx, "html"), protect=protect)
    return [p]


def svg_file(data, fmt: str = "svg") -> bytes:
    """The note's Bode plot as a standalone SVG file (:mod:`symfilt.export.svgplot`).

    Parameters
    ----------
    data : symfilt.analysis.bode.BodeData
    fmt : str
        ``"svg"`` (the only format; the argument matches the other renderers).

    Examples
    --------
    >>> from symfilt import catalogue, analyse
    >>> from symfilt.analysis.bode import bode_data
    >>> svg_file(bode_data(analyse(catalogue.build("rc-lowpass"), sensitivity=False), points=5))[:5]
    b'<?xml'
    """
    from symfilt.export.svgplot import bode_svg

    return ('<?xml version="1.0" encoding="utf-8"?>\n' + bode_svg(data) + "\n").encode("utf-8")


def _figures(a: Analysis, p: Path, fmt: str, protect, fmin, fmax, points, family) -> tuple:
    """Write the Bode plot and the family beside the note: (written, plot name, family name, words)."""
    from symfilt.export.family_plot import render_family
    from symfilt.export.plot import left_out_words, render_bode

    data, reason = sweep(a, fmin, fmax, points)
    written, names = [], {}
    if output_target(p, protect=protect).mode != "atomic":  # a pipe or stdout has no "beside"
        data, family, reason = None, None, "the note went to a stream, so no figure file was written beside it"
    bode = render_bode if fmt != "svg" else svg_file  # an SVG beside a note needs no matplotlib
    for key, stem, render, d in (("bode", "-bode", bode, data), ("family", "-sweep", render_family, family)):
        if d is not None:
            target = p.with_name(p.stem + f"{stem}.{fmt}")
            write_bytes_atomic(target, render(d, fmt), protect=protect)
            written.append(target)
            names[key] = target.name
    words = left_out_words(data) if data is not None else \
        (f"{reason}; give every part a value to draw the response." if reason.startswith("no value") else reason + ".")
    return written, names.get("bode"), names.get("family"), words


def _write_latex(a: Analysis, p: Path, *, protect, source, fmin, fmax, points, error=None, noise=None,
                 family=None, approx=()) -> list[Path]:
    from symfilt.export.note_tex import note_latex_document

    written, plot_name, family_name, words = _figures(a, p, "pdf", protect, fmin, fmax, points, family)
    write_text_atomic(p, with_approx(note_latex_document(a, plot_file=plot_name, family_file=family_name,
                                                         plot_words=words, source=source, opamp_error=error),
                                     approx, "latex"), protect=protect)
    return written + [p]


def _write_markdown(a: Analysis, p: Path, *, protect, source, fmin, fmax, points, error=None, noise=None,
                    family=None, approx=()) -> list[Path]:
    written, plot_name, family_name, words = _figures(a, p, "svg", protect, fmin, fmax, points, family)
    md = with_approx(note_markdown(a, plot_file=plot_name, source=source, opamp_error=error, noise=noise), approx,
                     "markdown")
    extra = ([words] if plot_name and words else []) + \
        ([f"![The loaded response at each swept value, with the ideal one]({family_name})"] if family_name else [])
    if extra:
        md = md.replace("\n## Sensitivities\n", "\n" + "\n\n".join(extra) + "\n\n## Sensitivities\n", 1)
    write_text_atomic(p, md, protect=protect)
    return written + [p]


#: Note writer by form (the forms of :data:`symfilt.export.formats.NOTE_FORMATS`).
_WRITERS = {"html": _write_html, "latex": _write_latex, "markdown": _write_markdown}
