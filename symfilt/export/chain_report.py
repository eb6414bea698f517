"""The output of ``symfilt chain`` for a :class:`~symfilt.design.chain.ChainResult`: text, JSON, Markdown.

Examples
--------
>>> from symfilt import catalogue
>>> from symfilt.design.chain import chain_report
>>> from symfilt.model.chain import Chain, ChainStage
>>> rc = ChainStage("RC", catalogue.build("rc-lowpass"))
>>> chain_dict(chain_report(Chain((rc, rc))))["worst_interface"]
1
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from symfilt.export.note_write import md_text
from symfilt.export.text import unvalued_names
from symfilt.model.values import format_value

#: Rows of the numbers table: label, key, unit ("" for a plain number, "dB" for a level).
_ROWS = (("cutoff", "cutoff_hz", "Hz"), ("low edge", "low_edge_hz", "Hz"), ("high edge", "high_edge_hz", "Hz"),
         ("notch", "notch_hz", "Hz"), ("f0", "f0_hz", "Hz"), ("Q", "q", ""), ("DC gain", "dc_gain", ""),
         ("DC gain (dB)", "dc_gain_db", "dB"), ("group delay", "group_delay_dc_s", "s"), ("peaking", "peaking_db", "dB"))
#: The columns of the numbers table: heading and where the numbers come from.
_COLUMNS = (("connected", "loaded"), ("conn. ideal", "ideal"), ("stages alone", "product"),
            ("all buffered", "buffered"))


def _columns(r) -> dict:
    return {"loaded": r.analysis.numeric["loaded"], "ideal": r.analysis.numeric["ideal"],
            "product": r.product_numeric, "buffered": r.buffered_numeric}


def _cell(d: dict, key: str, unit: str) -> str:
    if key not in d:
        return "—"
    v = d[key]
    if v is None:
        return "none" if key == "cutoff_hz" and d.get("no_cutoff") else "undefined"
    if unit == "dB":
        return f"{v:.3f} dB"
    return format_value(v, unit) if unit else f"{v:.6g}"


def _ratio(x: float | None) -> str:
    if x is None:
        return "—"
    return "∞ (open)" if math.isinf(x) else f"{x:.4g}"


def _number_rows(r) -> list[list[str]]:
    """The rows of the numbers table: a label, then a cell per column of :data:`_COLUMNS`."""
    cols = _columns(r)
    return [[label] + [_cell(cols[k], key, unit) for _h, k in _COLUMNS]
            for label, key, unit in _ROWS if any(key in cols[k] for _h, k in _COLUMNS)]


#: The interface table's columns: key of :func:`_interface_cells` and heading (text report, note).
_INTERFACE_TEXT = (("index", "#"), ("between", "between"), ("node", "node"), ("dc", "|Zout/Zin| DC"),
                   ("at_fc", "at fc"), ("largest", "largest"), ("at", "at"), ("buffered_fc", "buffered fc"),
                   ("dc_gain", "DC gain"), ("share", "share"))
_INTERFACE_NOTE = (("index", "#"), ("between", "between"), ("node", "node"), ("dc", "Zout/Zin DC"),
                   ("at_fc", "at fc"), ("largest", "largest"), ("buffered_fc", "buffered cutoff"),
                   ("dc_gain", "buffer: DC gain"), ("needed", "buffer needed"))


def _interface_cells(r, i) -> dict[str, str]:
    """One interface's cells, as the text report and the note show them."""
    lo, res = i.loading, r.restored(i)
    return {"index": str(i.index), "between": f"{i.upstream} → {i.downstream}", "node": i.node,
            "dc": _ratio(lo["dc"]), "at_fc": _ratio(lo["at_cutoff"]), "largest": _ratio(lo["max"]),
            "at": "—" if lo["max_at_hz"] is None or not lo["max"] else format_value(lo["max_at_hz"], "Hz"),
            "buffered_fc": format_value(i.buffered["cutoff_hz"], "Hz") if i.buffered.get("cutoff_hz") else "—",
            "dc_gain": "—" if res["dc_gain_db"] is None else f"{res['dc_gain_db']:+.3f} dB",
            "share": "—" if res["cutoff_share"] is None else f"{100 * res['cutoff_share']:.0f} %",
            "needed": {True: "yes", False: "no", None: "—"}[r.needs_buffer(i)]}


def _interface_lines(r) -> list[str]:
    """The interface table (one row each), then each interface's buffer verdict."""
    rows = [tuple(h for _k, h in _INTERFACE_TEXT)]
    for i in r.interfaces:
        cells = _interface_cells(r, i)
        rows.append(tuple(cells[k] for k, _h in _INTERFACE_TEXT))
    widths = [max(len(row[k]) for row in rows) for k in range(len(rows[0]))]
    out = ["  " + "  ".join(cell.ljust(w) if k < 3 else cell.rjust(w) for k, (cell, w) in enumerate(zip(row, widths)))
           .rstrip() for row in rows]
    fc = r.interfaces[0].loading["cutoff_hz"] if r.interfaces else None
    if fc is not None:
        out.append(f"  fc: the design cutoff {format_value(fc, 'Hz')} (stages alone); largest: over "
                   f"{format_value(fc / 10**3, 'Hz')} … {format_value(fc, 'Hz')}; buffered fc and DC gain: the loaded chain")
        out.append("  with a unity-gain buffer at that interface alone; share: of what buffering every interface restores")
    for i in r.interfaces:
        verdict = {True: f"a buffer is worth it (it moves the cutoff or DC gain by more than {100 * r.tolerance:g} %)",
                   False: f"no buffer needed (it would move them by less than {100 * r.tolerance:g} %)",
                   None: "no verdict: a symbol has no value (see \"needs values\" above)"}[r.needs_buffer(i)]
        out.append(f"  interface {i.index}: {verdict}")
    return out


def chain_text(r) -> str:
    """The text report of ``symfilt chain``.

    Parameters
    ----------
    r : symfilt.design.chain.ChainResult

    Returns
    -------
    str

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.chain import chain_report
    >>> from symfilt.model.chain import Chain, ChainStage
    >>> rc = ChainStage("RC", catalogue.build("rc-lowpass"))
    >>> print(chain_text(chain_report(Chain((rc, rc)))).splitlines()[2])
      source (ideal) → [1] RC → x1 → [2] RC → out → load (open)
    """
    from symfilt.export.response_text import pole_zero_lines
    from symfilt.export.text import LONG, stage_formulas
    from symfilt.export.transfer_text import transfer_line

    ch = r.chain
    rs = "R_s = " + format_value(ch.source.value, "Ω") if ch.source.value is not None else \
        ("R_s (symbolic)" if ch.source.present else "source (ideal)")
    loads = [f"{n} = {format_value(f.value, u)}" if f.value is not None else f"{n} (symbolic)"
             for n, f, u in (("R_L", ch.load_resistance, "Ω"), ("C_L", ch.load_capacitance, "F")) if f.present]
    path = " → ".join(f"[{k}] {st.name} → {node}" for k, (st, node) in
                      enumerate(zip(ch.stages, ch.interfaces() + ["out"]), start=1))
    out = [f"symfilt chain — {ch.title or 'chain'}", "", f"  {rs} → {path} → load "
           + (", ".join(loads) if loads else "(open)")]
    renames = [(k, old, new) for k, names in enumerate(ch.names(), start=1) for old, new in names.items()]
    if renames:
        out += ["", "Names in the chain (a name an earlier stage uses gets its stage number)"]
        out += [f"  stage {k}: {old} → {new}" for k, old, new in renames]
    out += ["", "Connected chain, H(s) = V(out)/V(source)"]
    for key, st in (("loaded", r.analysis.loaded), ("ideal", r.analysis.ideal)):
        line = transfer_line(st.transfer)
        shown = line if len(line) <= LONG else f"({len(line)}-character expression; see --format json)"
        out += [f"  {key}: {shown}", "  " + stage_formulas(st)[0]]
    views = {"loaded": r.analysis.numeric["loaded"], "ideal": r.analysis.numeric["ideal"]}
    roots = pole_zero_lines(views)
    if roots:
        out += ["", roots[0].replace("Poles and zeros", "Poles and zeros of the connected chain")] + roots[1:]
    out += ["", "Stages designed alone (ideal source, open output)"]
    for k, st in enumerate(r.stages, start=1):
        d = st.numeric
        out.append(f"  [{k}] {st.name} ({st.origin or 'Python'}): {st.view.form.kind}, order {st.view.form.order}, "
                   f"cutoff {_cell(d, 'cutoff_hz', 'Hz')}, DC gain {_cell(d, 'dc_gain', '')}")
        out.append("      H(s) = " + transfer_line(st.view.transfer))
    out += ["", "Numbers at the given values", "  " + f"{'':<14}" + "".join(f"{h:>16}" for h, _k in _COLUMNS)]
    out += [f"  {label:<14}" + "".join(f"{cell:>16}" for cell in cells) for label, *cells in _number_rows(r)]
    missing = unvalued_names(r.analysis.circuit)
    if missing:
        out.append("  —: needs values; give " + ", ".join(missing) + " a value for these numbers")
    out.append("  connected: as wired, with the chain's source and load; conn. ideal: the same with R_s → 0, "
               "R_L → ∞, C_L → 0;")
    out.append("  stages alone: the product of each stage's own ideal response; all buffered: a unity-gain "
               "buffer at every interface (source and load kept)")
    if r.interfaces:
        out += ["", "Interfaces (loaded: Zout looks back with the source, Zin looks forward with the load)"]
        out += _interface_lines(r)
        w = r.worst()
        if w is not None:
            out += ["", f"Worst interface: {w.index} ({w.upstream} → {w.downstream}, node {w.node})"]
            conn = r.analysis.numeric["loaded"]
            if conn.get("cutoff_hz") and w.buffered.get("cutoff_hz"):
                alone = f" (stages alone: {_cell(r.product_numeric, 'cutoff_hz', 'Hz')})" if "cutoff_hz" in r.product_numeric else ""
                out.append(f"  a unity-gain buffer there moves the loaded cutoff from {_cell(conn, 'cutoff_hz', 'Hz')} "
                           f"to {format_value(w.buffered['cutoff_hz'], 'Hz')}{alone}")
    return "\n".join(out) + "\n"


def chain_dict(r) -> dict:
    """The JSON of ``symfilt chain`` as a dict (schema in the README, "Chains").

    Parameters
    ----------
    r : symfilt.design.chain.ChainResult

    Returns
    -------
    dict

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.chain import chain_report
    >>> from symfilt.model.chain import Chain, ChainStage
    >>> rc = ChainStage("RC", catalogue.build("rc-lowpass"))
    >>> sorted(chain_dict(chain_report(Chain((rc, rc)))))[:4]
    ['buffered', 'connected', 'interfaces', 'product']
    """
    from symfilt.export.json import analysis_dict, json_value, numeric_dict, stage_dict

    def view(st, numbers):
        d = stage_dict(st)
        return {**{k: v for k, v in d.items() if k not in ("input_impedance", "output_impedance", "sensitivity")},
                "numeric": numeric_dict({"v": numbers})["v"]}

    interfaces = []
    for i in r.interfaces:
        loading = {k: json_value(v) for k, v in i.loading.items()}
        loading["dc_open"] = i.loading["dc"] is not None and math.isinf(i.loading["dc"])
        interfaces.append({"index": i.index, "node": i.node, "upstream": i.upstream, "downstream": i.downstream,
                           "zout": str(i.zout.as_expr()), "zin": str(i.zin.as_expr()), "loading": loading,
                           "buffered": numeric_dict({"v": i.buffered})["v"],
                           "restored": {k: json_value(v) for k, v in r.restored(i).items()},
                           "needs_buffer": r.needs_buffer(i)})
    w = r.worst()
    return {"title": r.chain.title, "tolerance": r.tolerance,
            "stages": [{"name": st.name, "circuit": st.origin, "renamed": names, "alone": view(st.view, st.numeric)}
                       for st, names in zip(r.stages, r.chain.names())],
            "connected": analysis_dict(r.analysis),
            "product": view(r.product, r.product_numeric),
            "buffered": view(r.buffered, r.buffered_numeric),
            "interfaces": interfaces,
            "worst_interface": None if w is None else w.index}


#: Legend of each curve of the chain plot.
CURVE_LABELS = {"loaded": "connected (source and load)", "ideal": "connected, R_s → 0, R_L → ∞, C_L → 0",
                "product": "stages alone (product)", "buffered": "buffer at every interface"}


def chain_plot_bytes(r, fmt: str = "svg", fmin=None, fmax=None, points: int = 400) -> bytes:
    """The chain's Bode plot: connected (loaded and ideal), the stages alone, all buffered.

    Parameters
    ----------
    r : symfilt.design.chain.ChainResult
    fmt : {"svg", "png"}
    fmin, fmax : float, optional
        Sweep range in Hz.
    points : int

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.chain import chain_report
    >>> from symfilt.model.chain import Chain, ChainStage
    >>> rc = ChainStage("RC", catalogue.build("rc-lowpass"))
    >>> chain_plot_bytes(chain_report(Chain((rc, rc))), "png", points=20)[:4]
    b'\\x89PNG'
    """
    from symfilt.design.chain import SWEEP_VIEWS, chain_sweep
    from symfilt.export.plot import render_curves

    f, curves = chain_sweep(r, fmin, fmax, points)
    return render_curves(f, [(CURVE_LABELS[k], *curves[k]) for k in SWEEP_VIEWS], r.chain.title, fmt)


def _md_table(head: list[str], rows: list[list[str]]) -> list[str]:
    cell = lambda t: md_text(str(t))
    return ["| " + " | ".join(head) + " |", "|" + "---|" * len(head)] + \
        ["| " + " | ".join(cell(c) for c in row) + " |" for row in rows]


def _note_sections(r) -> list[tuple[str, list[str], list[list[str]]]]:
    """The chain note's tables as (heading, column heads, rows) of plain text."""
    out = [("Stages", ["#", "stage", "circuit", "alone: kind, order", "alone: cutoff", "alone: DC gain"],
            [[str(k), st.name, st.origin or "Python", f"{st.view.form.kind}, {st.view.form.order}",
              _cell(st.numeric, "cutoff_hz", "Hz"), _cell(st.numeric, "dc_gain", "")]
             for k, st in enumerate(r.stages, start=1)])]
    out.append(("Numbers at the given values", [""] + [h for h, _k in _COLUMNS], _number_rows(r)))
    if r.interfaces:
        rows = [[cells[k] for k, _h in _INTERFACE_NOTE] for cells in (_interface_cells(r, i) for i in r.interfaces)]
        out.append(("Interfaces", [h for _k, h in _INTERFACE_NOTE], rows))
    return out


def _note_prose(r) -> list[str]:
    out = []
    w = r.worst()
    if w is not None:
        out.append(f"Worst interface: {w.index} ({w.upstream} → {w.downstream}).")
    out.append(f"A buffer is needed where it moves the loaded cutoff or DC gain by more than {100 * r.tolerance:g} %. "
               "The buffer is an ideal unity-gain follower: a real one adds its own output resistance, "
               "bandwidth and noise.")
    return out


def chain_markdown(r, plot_file: str | None = None) -> str:
    """A design note of the chain in Markdown: the stages, the numbers, the interfaces, the plot.

    Parameters
    ----------
    r : symfilt.design.chain.ChainResult
    plot_file : str, optional
        The Bode plot's file name, linked from the note.

    Returns
    -------
    str

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.chain import chain_report
    >>> from symfilt.model.chain import Chain, ChainStage
    >>> rc = ChainStage("RC", catalogue.build("rc-lowpass"))
    >>> chain_markdown(chain_report(Chain((rc, rc)))).splitlines()[0]
    '# Chain: chain'
    """
    out = [f"# Chain: {md_text(r.chain.title or 'chain')}"]
    for heading, head, rows in _note_sections(r):
        out += ["", f"## {heading}", ""] + _md_table(head, rows)
    out += [""] + [md_text(p) + "\n" for p in _note_prose(r)]
    if plot_file:
        out += [f"![Bode plot of the chain]({plot_file})"]
    return "\n".join(out).rstrip("\n") + "\n"


def chain_html(r, svg: str | None = None) -> str:
    """A design note of the chain as one standalone HTML page (tables, inline SVG plot, no scripts).

    Parameters
    ----------
    r : symfilt.design.chain.ChainResult
    svg : str, optional
        The Bode plot as an inline ``<svg>`` element.

    Returns
    -------
    str

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.chain import chain_report
    >>> from symfilt.model.chain import Chain, ChainStage
    >>> rc = ChainStage("RC", catalogue.build("rc-lowpass"))
    >>> page = chain_html(chain_report(Chain((rc, rc))))
    >>> page.startswith("<!DOCTYPE html>"), "<script" in page, page.count("<table>")
    (True, False, 3)
    """
    from html import escape

    from symfilt.export.note_html import NOTE_CSS
    from symfilt.version import __version__

    title = escape(r.chain.title or "Chain")
    body = ["<!DOCTYPE html>", '<html lang="en">', "<head>", '<meta charset="utf-8">',
            '<meta name="viewport" content="width=device-width, initial-scale=1">',
            f"<title>{title} — chain note</title>", f"<style>{NOTE_CSS}</style>", "</head>", "<body>", "<main>",
            f'<header><p class="kicker">Chain note</p><h1>{title}</h1></header>']
    for heading, head, rows in _note_sections(r):
        body += [f"<section><h2>{escape(heading)}</h2>", "<table>",
                 "<tr>" + "".join(f"<th>{escape(h)}</th>" for h in head) + "</tr>"]
        body += ["<tr>" + "".join(f"<td>{escape(str(c))}</td>" for c in row) + "</tr>" for row in rows]
        body += ["</table>", "</section>"]
    body += ["<section>"] + [f"<p>{escape(p)}</p>" for p in _note_prose(r)] + ["</section>"]
    if svg:
        body += ['<section id="bode"><h2>Frequency response</h2>', svg, "</section>"]
    body += [f"<footer>Derived exactly by symfilt {escape(__version__)}.</footer>", "</main>", "</body>", "</html>"]
    return "\n".join(body) + "\n"


@dataclass(frozen=True)
class ChainOutputs:
    """Where ``symfilt chain`` writes its files: the plot (or None) and the note (or None).

    Parameters
    ----------
    plot, note : str or None
        File names; a Markdown note without ``--plot`` gets its plot beside it (``.svg``).
    note_kind : str or None
        ``.md`` or ``.html``.

    Examples
    --------
    >>> chain_outputs("chain.md", None)
    ChainOutputs(plot='chain.svg', note='chain.md', note_kind='.md')
    """

    plot: str | None
    note: str | None
    note_kind: str | None


def chain_outputs(note_file: str | None, plot_file: str | None) -> ChainOutputs:
    """The output files of ``symfilt chain``, checked by name before any work.

    Parameters
    ----------
    note_file, plot_file : str or None
        ``--note`` (.html or .md) and ``--plot`` (.svg or .png).

    Returns
    -------
    ChainOutputs

    Raises
    ------
    UsageError
        A note that is neither HTML nor Markdown, or a plot name without a plot suffix.

    Examples
    --------
    >>> chain_outputs("chain.html", "c.png").plot
    'c.png'
    """
    from pathlib import Path

    from symfilt.errors import UsageError
    from symfilt.export.formats import plot_format

    kind = Path(note_file).suffix.lower() if note_file else None
    if kind not in (None, ".md", ".html"):
        raise UsageError(note_file, "a chain note is Markdown or HTML", "name the note file with .md or .html")
    plot = plot_file or (str(Path(note_file).with_suffix(".svg")) if kind == ".md" else None)
    if plot:
        plot_format(plot, where=plot)
    return ChainOutputs(plot, note_file, kind)


def write_chain_outputs(r, targets: ChainOutputs, *, protect=(), fmin=None, fmax=None) -> None:
    """Write the chain's plot and note (each atomically), the plot first.

    Parameters
    ----------
    r : symfilt.design.chain.ChainResult
    targets : ChainOutputs
    protect : sequence of paths
        Files never to overwrite (the chain file and its stage files).
    fmin, fmax : float, optional
        The plot's frequency range in Hz.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> from symfilt import catalogue
    >>> from symfilt.design.chain import chain_report
    >>> from symfilt.model.chain import Chain, ChainStage
    >>> rc = ChainStage("RC", catalogue.build("rc-lowpass"))
    >>> d = pathlib.Path(tempfile.mkdtemp())
    >>> write_chain_outputs(chain_report(Chain((rc, rc))), chain_outputs(str(d / "c.md"), None))
    >>> sorted(p.name for p in d.iterdir())
    ['c.md', 'c.svg']
    """
    from pathlib import Path

    from symfilt.export.formats import plot_format
    from symfilt.export.outfile import output_target, write_bytes_atomic, write_text_atomic
    from symfilt.export.plot import inline_svg

    for target in (targets.plot, targets.note):  # refused before the first file is written
        if target:
            output_target(target, protect=protect)
    if targets.plot:
        write_bytes_atomic(targets.plot, chain_plot_bytes(r, plot_format(targets.plot), fmin, fmax), protect=protect)
    if targets.note_kind == ".md":
        plot, note = Path(targets.plot), Path(targets.note)
        link = plot.name if plot.parent == note.parent else str(plot.resolve())
        write_text_atomic(targets.note, chain_markdown(r, link), protect=protect)
    elif targets.note_kind == ".html":
        svg = inline_svg(chain_plot_bytes(r, "svg", fmin, fmax))
        write_text_atomic(targets.note, chain_html(r, svg), protect=protect)
