"""The HTML design note: one standalone page, no scripts, no network.

Equations are MathML (latex2mathml), which current browsers lay out without
scripts; the Bode plot is inline SVG. Every number cell carries the JSON path of its
number (``data-key``, as in ``symfilt derive --format json``) and its exact value
(``data-value``). The rows come from :mod:`symfilt.export.note`, shared with the
Markdown and LaTeX notes.
"""

from __future__ import annotations

import re
from html import escape

from symfilt.analysis.stage import Analysis
from symfilt.export.findings import describe
from symfilt.export.response_text import word_rows
from symfilt.export.latex import sensitivity_rows
from symfilt.export.noise_note import noise_html
from symfilt.export.note import (SENS_COLUMNS, assumptions, cautions, equations, has_fixtures, kind_words, node_name, number_rows,
                   opamp_error_lines, part_rows, plain_number, tie_lines, sensitivity_table, stability_row, standard_form_tex,
                   sweep, views)

#: The notes' style sheet (the chain note uses it too).
NOTE_CSS = """
:root { --ink: #1d2433; --muted: #5b6475; --rule: #d9dde5; --loaded: #a23b2a; --ideal: #2f5d8a;
        --paper: #fbfaf7; --band: #f1efe9; }
* { box-sizing: border-box; }
body { margin: 0; background: var(--paper); color: var(--ink);
       font: 16px/1.5 "DejaVu Sans", "Segoe UI", Helvetica, Arial, sans-serif; }
main { max-width: 62rem; margin: 0 auto; padding: 2rem 1.5rem 3rem; }
header { border-left: 6px solid var(--loaded); padding: 0.2rem 0 0.2rem 1rem; margin-bottom: 1.5rem; }
header .kicker { margin: 0; color: var(--muted); font-size: 0.85rem; letter-spacing: 0.06em; text-transform: uppercase; }
h1 { margin: 0.2rem 0 0.3rem; font-size: 1.7rem; font-weight: 600; }
header .lede { margin: 0; color: var(--muted); }
h2 { font-size: 1.2rem; font-weight: 600; margin: 2.2rem 0 0.6rem; padding-bottom: 0.25rem;
     border-bottom: 1px solid var(--rule); }
h3 { font-size: 1rem; font-weight: 600; margin: 1.2rem 0 0.4rem; }
table { border-collapse: collapse; width: 100%; font-size: 0.95rem; }
th, td { padding: 0.35rem 0.6rem; text-align: left; border-bottom: 1px solid var(--rule); vertical-align: top; }
thead th { font-weight: 600; color: var(--muted); font-size: 0.85rem; border-bottom: 2px solid var(--rule); }
tbody tr:nth-child(even) { background: var(--band); }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
.tag-loaded { color: var(--loaded); } .tag-ideal { color: var(--ideal); }
.eqs { display: grid; grid-template-columns: 11rem 1fr; gap: 0.2rem 1rem; align-items: center; }
.eqs .label { color: var(--muted); font-size: 0.9rem; }
.formula { overflow-x: auto; overflow-y: hidden; padding: 0.3rem 0; }
.eqlist { display: grid; grid-template-columns: repeat(auto-fill, minmax(14rem, 1fr)); gap: 0.2rem 1.5rem; }
.eqlist .wide { grid-column: 1 / -1; }
math { font-size: 1.05rem; font-family: "STIX Two Math", "Cambria Math", "Latin Modern Math", math; }
.formula math, .std math { math-style: normal; }
.std { background: var(--band); padding: 0.4rem 0.8rem; border-radius: 4px; margin: 0.4rem 0 0.8rem; overflow-x: auto; }
figure { margin: 0.5rem 0; background: #ffffff; border: 1px solid var(--rule); padding: 0.5rem; }
figure svg { display: block; width: 100%; height: auto; }
figcaption { color: var(--muted); font-size: 0.9rem; margin-top: 0.4rem; }
details { margin-top: 0.8rem; } summary { cursor: pointer; color: var(--muted); }
ul { padding-left: 1.3rem; } li { margin: 0.25rem 0; }
.cautions { border: 1px solid #e3c9a8; background: #fdf5ea; padding: 0.6rem 1rem; border-radius: 4px; }
.cautions h2 { border: none; margin-top: 0.4rem; }
footer { margin-top: 2.5rem; color: var(--muted); font-size: 0.85rem; border-top: 1px solid var(--rule); padding-top: 0.6rem; }
@media print { body { background: #fff; } main { padding: 0; } figure { break-inside: avoid; } }
"""


def html_name(name: str) -> str:
    """A symbol name as HTML with the trade's subscript: R1 -> R<sub>1</sub>, R_s -> R<sub>s</sub>.

    Parameters
    ----------
    name : str
        The symbol's name.

    Examples
    --------
    >>> html_name("R1"), html_name("R_L"), html_name("GBW_U1"), html_name("U1")
    ('R<sub>1</sub>', 'R<sub>L</sub>', 'GBW<sub>U1</sub>', 'U<sub>1</sub>')
    """
    if "_" in name:
        head, tail = name.split("_", 1)
        return f"{escape(head)}<sub>{escape(tail)}</sub>"
    if len(name) > 1 and name[0].isalpha() and name[0].isupper():
        return f"{escape(name[0])}<sub>{escape(name[1:])}</sub>"
    return escape(name)


_SUBSCRIPTED = re.compile(r"\b([A-Za-zωτ]+)_([A-Za-z0-9]+)\b")


def _html_prose(text: str) -> str:
    """Escape prose and write symbol names with subscripts: R_s -> R<sub>s</sub>, ω_0 -> ω<sub>0</sub>."""
    out, pos = [], 0
    for m in _SUBSCRIPTED.finditer(text):
        head, tail = m.group(1), m.group(2)
        out.append(escape(text[pos:m.start()]) + f"{escape(head)}<sub>{escape(tail)}</sub>")
        pos = m.end()
    return "".join(out) + escape(text[pos:])


def _mathml(tex_text: str, display: str = "block") -> str:
    from symfilt.export.mathml import to_mathml

    return to_mathml(tex_text, display=display)


def _cell(c: dict) -> str:
    if c.get("key") is None:
        return f'<td class="num">{escape(c["text"])}</td>'
    value = c["exact"] if c.get("exact") is not None else repr(float(c["value"]))
    return (f'<td class="num" data-key="{escape(c["key"])}" data-value="{escape(value)}">'
            f'{escape(c["text"])}</td>')


def _word_cell(c: dict) -> str:
    if c.get("key") is None:
        return f'<td class="num">{escape(c["text"])}</td>'
    return (f'<td class="num" data-key="{escape(c["key"])}" data-value="{escape(c["value"])}">'
            f'{escape(c["text"])}</td>')


def _html_parts(a: Analysis) -> list[str]:
    out = ['<table class="parts"><thead><tr><th>Part</th><th>Kind</th><th>Connection</th>'
           '<th class="num">Value</th></tr></thead><tbody>']
    for r in part_rows(a):
        cell = _cell({"text": r["value"], "key": r["key"], "exact": r["exact"]})
        out.append(f'<tr><td>{html_name(r["name"])}</td><td>{escape(r["kind"])}</td>'
                   f'<td>{escape(r["connection"])}</td>{cell}</tr>')
    out.append("</tbody></table>")
    ties = tie_lines(a)
    if ties:
        out.append("<p>Tied values (each follows from the parameters and parts it names): "
                   + escape(", ".join(ties)) + ".</p>")
    return out


def _html_numbers(a: Analysis) -> list[str]:
    rows = number_rows(a)
    if not rows:
        return ["<p>No numbers: some parts have no value, so only the closed forms below apply.</p>"]
    out = ['<table class="numbers"><thead><tr><th>Quantity</th><th class="num tag-loaded">Loaded</th>'
           '<th class="num tag-ideal">Ideal</th><th class="num">Loaded / ideal</th></tr></thead><tbody>']
    out.append(f'<tr><td>response</td><td class="num">{escape(kind_words(a.loaded))}</td>'
               f'<td class="num">{escape(kind_words(a.ideal))}</td><td class="num">—</td></tr>')
    for stab in [w for w in (stability_row(a), *word_rows(a.numeric)) if w]:
        out.append(f"<tr><td>{escape(stab['label'])}</td>{_word_cell(stab['loaded'])}{_word_cell(stab['ideal'])}"
                   '<td class="num">—</td></tr>')
    for r in rows:
        label = escape(r["label"]) + (f' ({escape(r["unit"])})' if r["unit"] == "dB" else "")
        out.append(f"<tr><td>{label}</td>{_cell(r['loaded'])}{_cell(r['ideal'])}{_cell(r['ratio'])}</tr>")
    out.append("</tbody></table>")
    return out


def _html_equations(a: Analysis) -> list[str]:
    out = []
    for view, title in views(a):
        st = getattr(a, view)
        out.append(f'<h3 class="tag-{view}">{escape(title)}: {escape(kind_words(st))}</h3>')
        std = standard_form_tex(st)
        if std:
            out.append(f'<div class="std">{_mathml(std, "inline")}</div>')
        elif st.form.kind == "general":
            out.append("<p>No first- or second-order standard form: the cutoff is found numerically "
                       "from the exact H(s).</p>")
        out.append('<div class="eqs">')
        for words, eq in equations(st, a.ideal if st is a.loaded else None):
            out.append(f'<div class="label">{escape(words)}</div><div class="formula">{_mathml(eq, "inline")}</div>')
        out.append("</div>")
    return out


def _html_sensitivity(a: Analysis) -> list[str]:
    labels = {k: v for k, v, _ in SENS_COLUMNS}
    out = []
    shown = False
    for view, title in views(a):
        cols, rows = sensitivity_table(a, view)
        if not rows:
            continue
        shown = True
        out.append(f'<h3 class="tag-{view}">{escape(title)}</h3>')
        head = "".join(f'<th class="num">S of {_html_prose(labels[k])}</th>' for k in cols)
        out.append(f'<table class="sensitivity"><thead><tr><th>Part</th>{head}</tr></thead><tbody>')
        for name, cells in rows:
            out.append(f"<tr><td>{html_name(name)}</td>" + "".join(_cell(c) for c in cells) + "</tr>")
        out.append("</tbody></table>")
    if not shown:
        out.append("<p>No numbers: some parts have no value. The closed forms are below.</p>")
    formulas = sensitivity_rows(a.ideal)
    if formulas:
        out.append(f"<details{'' if shown else ' open'}><summary>Closed forms, ideal view</summary>"
                   '<div class="eqlist">')
        for lhs, rhs in formulas:
            wide = " wide" if len(rhs) > 80 else ""
            out.append(f'<div class="formula{wide}">{_mathml(lhs + " = " + rhs, "inline")}</div>')
        out.append("</div></details>")
    if a.rules:
        out.append('<h3>Sum-rule self-check</h3><table class="rules"><thead><tr><th>Sum</th>'
                   '<th class="num">Expected</th><th>Result</th></tr></thead><tbody>')
        for i, r in enumerate(a.rules):
            group = "resistors" if r.group.startswith("resist") else r.group
            what = f"S of {labels.get(r.quantity, r.quantity)} summed over all {group}, fixtures included"
            cell = _cell({"text": plain_number(float(r.expected)), "key": f"sum_rules.checked.{i}.expected",
                          "value": float(r.expected)})
            out.append(f"<tr><td>{_html_prose(what)}</td>{cell}<td>{'holds' if r.holds else 'does not hold'}</td></tr>")
        out.append("</tbody></table>")
    elif a.rules_note:
        note = describe(a.rules_note)
        out.append(f"<p>{escape(note[0].upper() + note[1:])}.</p>")
    return out


def _html_plot(a: Analysis, fmin=None, fmax=None, points=None, family=None) -> list[str]:
    from symfilt.export.family_plot import family_svg
    from symfilt.export.plot import left_out_words
    from symfilt.export.svgplot import bode_svg

    data, reason = sweep(a, fmin, fmax, points)
    if data is None:
        return [f"<p>No plot: {escape(reason)}; give every part a value to draw the response.</p>"]
    curves = "loaded (solid) and ideal (dashed)" if has_fixtures(a) and not data.left_out else \
        ("the ideal response" if data.left_out else "the stage")
    out = ['<figure class="bode">', bode_svg(data),
           f"<figcaption>Magnitude and phase of H(j2πf), {curves}; dotted lines mark the cutoffs, "
           f"band edges or natural frequency. {escape(left_out_words(data))}</figcaption>", "</figure>"]
    if family is not None:
        out += ['<figure class="bode sweep">', family_svg(family), f"<figcaption>The loaded response at each "
                f"value of {escape(family.name)}, with the ideal one (dashed).</figcaption>", "</figure>"]
    return out


def _html_real_opamps(e) -> list[str]:
    lines = opamp_error_lines(e)
    if not lines:
        return []
    return ['<section id="real-opamps"><h2>Real op-amps</h2><ul>', *[f"<li>{_html_prose(x)}</li>" for x in lines],
            "</ul></section>"]


def note_html(a: Analysis, *, source: str = "", fmin=None, fmax=None, points=None, opamp_error=None,
              noise=None, family=None) -> str:
    """The design note as one standalone HTML page (MathML equations, inline SVG plot, no scripts).

    Parameters
    ----------
    a : Analysis
        With sensitivities (``analyse(circuit)``).
    source : str
        Where the circuit came from (a file name or ``@name``), for the footer.
    fmin, fmax : float, optional
        Range of the Bode plot in Hz.
    points : int, optional
        Frequencies in the Bode plot.
    opamp_error : OpampError, optional
        Real against ideal op-amps, shown as a "Real op-amps" section.
    noise : NoiseReport, optional
        Shown as a "Noise" section (:mod:`symfilt.export.noise_note`).
    family : FamilyData, optional
        The loaded response at each value of a swept symbol (``[note] sweep``), drawn under the Bode plot.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> page = note_html(analyse(catalogue.build("rc-lowpass")))
    >>> page.startswith("<!DOCTYPE html>"), "<script" in page, page.count("<math") > 10, "<svg" in page
    (True, False, True, True)
    """
    from symfilt.version import __version__

    title = a.circuit.title or "Untitled stage"
    fix = " with its source and load, and alone" if has_fixtures(a) else ""
    lede = f"{kind_words(a.ideal).capitalize()} from {node_name(a.circuit.input)} to {node_name(a.circuit.output)}{fix}."
    body = [
        "<!DOCTYPE html>", '<html lang="en">', "<head>", '<meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{escape(title)} — design note</title>", f"<style>{NOTE_CSS}</style>", "</head>", "<body>", "<main>",
        f'<header><p class="kicker">Design note</p><h1>{escape(title)}</h1><p class="lede">{escape(lede)}</p></header>',
        '<section id="numbers"><h2>Loaded and ideal</h2>', *_html_numbers(a), "</section>",
        *_html_real_opamps(opamp_error),
        '<section id="parts"><h2>Parts</h2>', *_html_parts(a), "</section>",
        '<section id="equations"><h2>Equations</h2>', *_html_equations(a), "</section>",
        '<section id="bode"><h2>Frequency response</h2>', *_html_plot(a, fmin, fmax, points, family), "</section>",
        '<section id="sensitivity"><h2>Sensitivities</h2>', *_html_sensitivity(a), "</section>",
        *noise_html(noise),
        '<section id="assumptions"><h2>Assumptions</h2><ul>',
        *[f"<li>{_html_prose(x)}</li>" for x in assumptions(a)], "</ul></section>",
        '<section id="cautions" class="cautions"><h2>Cautions</h2><ul>',
        *[f"<li>{_html_prose(x)}</li>" for x in cautions(a)], "</ul></section>",
        f"<footer>Derived exactly by symfilt {escape(__version__)}"
        + (f" from {escape(source)}" if source else "")
        + ". Numbers are rounded to 4 significant digits for display.</footer>",
        "</main>", "</body>", "</html>",
    ]
    return "\n".join(body) + "\n"
