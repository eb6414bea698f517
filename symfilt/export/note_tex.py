"""The design note as a standalone LaTeX document that compiles with pdflatex.

Parts table, loaded/ideal table, equations, sensitivities, assumptions and cautions, and
the Bode plot (and the swept family, when asked for) as PDF figures included with
``graphicx``. Only packages of Debian's ``texlive-latex-base`` are used: ``amsmath``,
``geometry``, ``graphicx`` and ``array`` (from ``tools``); the tables are plain ``tabular``.
The default OT1 encoding keeps to the Type 1 Computer Modern fonts of that install (T1 would
make pdflatex generate bitmap EC fonts, and so would the text bullet, hence ``$\bullet$``). All text goes through :func:`tex_text`, so that a title or part name with ``_``, ``&``,
``%``, ``Ω`` or ``µ`` still compiles.
"""

from __future__ import annotations

from symfilt.analysis.stage import Analysis
from symfilt.export.latex import stage_equations
from symfilt.export.note import (SENS_COLUMNS, assumptions, cautions, equations, kind_words, node_name, number_rows,
                                 opamp_error_lines, part_rows, sensitivity_table, stability_row, standard_form_tex,
                                 tie_lines, views)
from symfilt.export.response_text import word_rows

#: Characters with a meaning in LaTeX text, and what stands for them.
_SPECIAL = {"\\": r"\textbackslash{}", "&": r"\&", "%": r"\%", "$": r"\$", "#": r"\#", "_": r"\_",
            "{": r"\{", "}": r"\}", "~": r"\textasciitilde{}", "^": r"\textasciicircum{}",
            "<": "$<$", ">": "$>$", "|": "$|$"}
#: Characters outside ASCII that the notes' words use, as text-mode LaTeX.
_UNICODE = {"Ω": r"$\Omega$", "µ": r"$\mu$", "μ": r"$\mu$", "°": r"$^\circ$", "—": "---", "–": "--",
            "−": "$-$", "≈": r"$\approx$", "·": r"$\cdot$", "×": r"$\times$", "∞": r"$\infty$", "±": r"$\pm$",
            "≤": r"$\le$", "≥": r"$\ge$", "√": r"$\surd$", "ω": r"$\omega$", "∂": r"$\partial$", "Δ": r"$\Delta$", "π": r"$\pi$", "β": r"$\beta$",
            "φ": r"$\varphi$", "τ": r"$\tau$", "‖": r"$\parallel$", "→": r"$\to$", "²": r"$^2$", "’": "'",
            "‘": "`", "“": "``", "”": "''", "…": r"\dots{}", "\u00a0": "~", "\u2009": r"\,", "\u202f": r"\,"}


def tex_text(text: str) -> str:
    """Plain words as LaTeX text: specials escaped, the notes' Unicode as LaTeX, anything else as ``?``.

    Parameters
    ----------
    text : str

    Examples
    --------
    >>> tex_text("R_L & 4.7 kΩ, 50% — ok")
    'R\\\\_L \\\\& 4.7 k$\\\\Omega$, 50\\\\% --- ok'
    """
    out = []
    for ch in str(text):
        if ch in _SPECIAL:
            out.append(_SPECIAL[ch])
        elif ch in _UNICODE:
            out.append(_UNICODE[ch])
        elif ord(ch) < 128:
            out.append(ch)
        else:
            out.append("?")
    return "".join(out)


_PREAMBLE = r"""\documentclass[a4paper,10pt]{article}
\usepackage[margin=22mm]{geometry}
\usepackage{amsmath}
\usepackage{graphicx}
\usepackage{array}
\renewcommand{\labelitemi}{$\bullet$}
\setlength{\parindent}{0pt}
\setlength{\parskip}{0.5em}
\allowdisplaybreaks
"""


def _table(head: list[str], rows: list[list[str]], align: str) -> list[str]:
    out = [r"\begin{center}", r"\begin{tabular}{" + align + "}", r"\hline",
           " & ".join(head) + r" \\", r"\hline"]
    out += [" & ".join(r) + r" \\" for r in rows]
    return out + [r"\hline", r"\end{tabular}", r"\end{center}"]


def _numbers(a: Analysis) -> list[str]:
    rows = number_rows(a)
    if not rows:
        return ["No numbers: some parts have no value, so only the closed forms below apply."]
    body = [["response", tex_text(kind_words(a.loaded)), tex_text(kind_words(a.ideal)), "---"]]
    for w in [w for w in (stability_row(a), *word_rows(a.numeric)) if w]:
        body.append([tex_text(w["label"]), tex_text(w["loaded"]["text"]), tex_text(w["ideal"]["text"]), "---"])
    for r in rows:
        label = tex_text(r["label"] + (" (dB)" if r["unit"] == "dB" else ""))
        body.append([label, *(tex_text(r[k]["text"]) for k in ("loaded", "ideal", "ratio"))])
    return _table(["Quantity", "Loaded", "Ideal", "Loaded / ideal"], body, "l r r r")


def _parts(a: Analysis) -> list[str]:
    body = [[tex_text(r[k]) for k in ("name", "kind", "connection", "value")] for r in part_rows(a)]
    out = _table(["Part", "Kind", "Connection", "Value"], body, "l l p{0.45\\textwidth} r")
    ties = tie_lines(a)
    if ties:
        out.append("Tied values (each follows from the parameters and parts it names): "
                   + tex_text(", ".join(ties)) + ".")
    return out


def _equations(a: Analysis) -> list[str]:
    out = []
    for view, title in views(a):
        st = getattr(a, view)
        out.append(r"\subsection*{" + tex_text(f"{title}: {kind_words(st)}") + "}")
        std = standard_form_tex(st)
        if std:
            out += ["Standard form:", r"\begin{equation*}", std, r"\end{equation*}"]
        rows = [f"{lhs} &= {rhs}" for lhs, rhs in stage_equations(st, a.ideal if st is a.loaded else None) if rhs is not None]
        if rows:
            out += [r"\begin{align*}", " \\\\\n".join(rows), r"\end{align*}"]
        elif equations(st, a.ideal if st is a.loaded else None):
            for words, eq in equations(st, a.ideal if st is a.loaded else None):
                out += [tex_text(words[:1].upper() + words[1:]) + ":", r"\begin{equation*}", eq, r"\end{equation*}"]
    return out


def _sensitivities(a: Analysis) -> list[str]:
    labels = {k: v for k, v, _ in SENS_COLUMNS}
    out = []
    for view, title in views(a):
        cols, rows = sensitivity_table(a, view)
        if not rows:
            continue
        out.append(r"\subsection*{" + tex_text(title) + "}")
        body = [[tex_text(name), *(tex_text(c["text"]) for c in cells)] for name, cells in rows]
        out += _table(["Part", *(tex_text(f"S of {labels[k]}") for k in cols)], body, "l" + " r" * len(cols))
    return out or ["No numeric sensitivities: some parts have no value."]


def _figure(name: str | None, caption: str, missing: str) -> list[str]:
    if not name:
        return [tex_text(missing)]
    return [r"\begin{figure}[htbp]", r"\centering", r"\includegraphics[width=\textwidth]{" + name + "}",
            r"\caption{" + tex_text(caption) + "}", r"\end{figure}"]


def note_latex_document(a: Analysis, *, plot_file: str | None = None, family_file: str | None = None,
                        plot_words: str = "", source: str = "", opamp_error=None) -> str:
    """The design note as a standalone LaTeX document (pdflatex; packages of texlive-latex-base only).

    Parameters
    ----------
    a : Analysis
    plot_file : str, optional
        The Bode plot's PDF, relative to the note (no figure when None).
    family_file : str, optional
        The swept family's PDF (``[note] sweep``), relative to the note.
    plot_words : str
        A sentence under the plot (what it left out, or why there is none).
    source : str
        Where the circuit came from, for the footer.
    opamp_error : OpampError, optional
        Real against ideal op-amps.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> doc = note_latex_document(analyse(catalogue.build("rc-lowpass")), plot_file="rc-bode.pdf")
    >>> doc.startswith("\\\\documentclass"), doc.rstrip().endswith("\\\\end{document}"), "rc-bode.pdf" in doc
    (True, True, True)
    """
    from symfilt.version import __version__

    title = a.circuit.title or "Untitled stage"
    out = [_PREAMBLE, r"\title{" + tex_text(title) + "}", r"\author{Design note}", r"\date{}",
           r"\begin{document}", r"\maketitle",
           tex_text(f"Design note: {kind_words(a.ideal)} from {node_name(a.circuit.input)} to "
                    f"{node_name(a.circuit.output)}. Loaded: as connected, with the circuit's source and load. "
                    "Ideal: the stage alone."),
           r"\section*{Loaded and ideal}", *_numbers(a)]
    real = opamp_error_lines(opamp_error)
    if real:
        out += [r"\section*{Real op-amps}", r"\begin{itemize}", *[r"\item " + tex_text(x) for x in real], r"\end{itemize}"]
    out += [r"\section*{Parts}", *_parts(a), r"\section*{Equations}", *_equations(a),
            r"\section*{Frequency response}",
            *_figure(plot_file, "Magnitude and phase of H(j2 pi f), loaded (solid) and ideal (dashed); dotted "
                     "lines mark the cutoffs, band edges or natural frequency.", "No plot: " + plot_words)]
    if plot_file and plot_words:
        out.append(tex_text(plot_words))
    if family_file:
        out += _figure(family_file, "The loaded response at each value of the swept symbol, with the ideal one "
                       "(dashed).", "")
    out += [r"\section*{Sensitivities}", *_sensitivities(a),
            r"\section*{Assumptions}", r"\begin{itemize}", *[r"\item " + tex_text(x) for x in assumptions(a)],
            r"\end{itemize}", r"\section*{Cautions}", r"\begin{itemize}",
            *[r"\item " + tex_text(x) for x in cautions(a)], r"\end{itemize}",
            r"\vfill\emph{" + tex_text(f"Derived exactly by symfilt {__version__}" + (f" from {source}" if source else "")
                                        + ". Numbers are rounded to 4 significant digits.") + "}",
            r"\end{document}", ""]
    return "\n".join(out)
