"""The noise section of the design note (Markdown and HTML), from a :class:`NoiseReport`.

Shown when the circuit file has noise data (a ``[noise]`` table or an op-amp's ``en``/``in``);
the rows and sentences come from :mod:`symfilt.export.noise_report`.

>>> from symfilt import catalogue
>>> from symfilt.analysis.noise_numbers import noise_report
>>> noise_markdown(noise_report(catalogue.build("rc-lowpass")))[0]
'## Noise'
"""

from __future__ import annotations

import html

from symfilt.export.noise_report import note_lines, number_text, summary_rows


def _cell(text: str) -> str:
    return text.replace("|", "\\|")


def _contributor_rows(r) -> list[tuple[str, str, str]]:
    return [(c.name, "—" if c.share is None else f"{100 * c.share:.1f} %", number_text(c.rms, "V"))
            for c in r.loaded.contributions]


def noise_markdown(r) -> list[str]:
    """The noise section as Markdown lines (empty for None).

    Parameters
    ----------
    r : NoiseReport or None

    Examples
    --------
    >>> noise_markdown(None)
    []
    """
    if r is None:
        return []
    out = ["## Noise", "", "| Quantity | Loaded | Ideal |", "|---|---:|---:|"]
    out += [f"| {_cell(a)} | {b} | {c} |" for a, b, c in summary_rows(r)]
    out += ["", "| Contributor (loaded) | Share | RMS |", "|---|---:|---:|"]
    out += [f"| {a} | {b} | {c} |" for a, b, c in _contributor_rows(r)]
    out += ["", *[f"- {x.replace('|', '/')}" for x in note_lines(r)], ""]
    return out


def noise_html(r) -> list[str]:
    """The noise section as HTML lines (empty for None).

    Parameters
    ----------
    r : NoiseReport or None

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.noise_numbers import noise_report
    >>> noise_html(noise_report(catalogue.build("rc-lowpass")))[0]
    '<section id="noise"><h2>Noise</h2>'
    """
    if r is None:
        return []
    e = html.escape
    out = ['<section id="noise"><h2>Noise</h2>', "<table><thead><tr><th>Quantity</th><th>Loaded</th><th>Ideal</th></tr></thead><tbody>"]
    out += [f'<tr><td>{e(a)}</td><td class="num">{e(b)}</td><td class="num">{e(c)}</td></tr>' for a, b, c in summary_rows(r)]
    out += ["</tbody></table>", "<table><thead><tr><th>Contributor (loaded)</th><th>Share</th><th>RMS</th></tr></thead><tbody>"]
    out += [f'<tr><td>{e(a)}</td><td class="num">{e(b)}</td><td class="num">{e(c)}</td></tr>' for a, b, c in _contributor_rows(r)]
    out += ["</tbody></table>", "<ul>", *[f"<li>{e(x)}</li>" for x in note_lines(r)], "</ul>", "</section>"]
    return out
