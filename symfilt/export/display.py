"""Rich display in a notebook: ``_repr_html_`` and ``_repr_latex_`` for symfilt's results.

The classes live in lower layers, which may not build words or markup; so the methods
are written here and put on the classes by :func:`attach`, which ``symfilt/__init__.py``
calls once on import (the same methods every time: no setting a user can change).
An analysis shows the loaded and ideal transfer functions side by side over the
loaded/ideal table of the design note; a network function shows itself, and its ideal
view beside it when it depends on the source or load; a claim check, a sizing, a spread,
a drive check, an op-amp error and a derive report show the text the command prints.
"""

from __future__ import annotations

from html import escape

from symfilt.export.latex import transfer_tex
from symfilt.export.mathml import to_mathml
from symfilt.export.note import kind_words, number_rows, stability_row
from symfilt.export.response_text import word_rows

#: The symbols of the fixtures: a function that has one of them has a separate ideal view.
FIXTURE_NAMES = {"R_s", "R_L", "C_L"}
_CSS = ("border-collapse:collapse;font-size:0.95em", "padding:2px 10px;border-bottom:1px solid #ddd")


def _has_fixture(h) -> bool:
    return any(str(x) in FIXTURE_NAMES for x in h.free_symbols())


def network_latex(h) -> str:
    """A network function as display LaTeX: ``H(s) = ...``, with its ideal view when it has one.

    Parameters
    ----------
    h : NetworkFunction

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> print(network_latex(derive(catalogue.build("rc-lowpass")).ideal()))
    $$H(s) = \\frac{1}{C_{1} R_{1} s + 1}$$
    """
    lhs = {"transfer": "H(s)", "zin": "Z_{\\mathrm{in}}(s)", "zout": "Z_{\\mathrm{out}}(s)"}.get(h.quantity, "H(s)")
    if not _has_fixture(h):
        return f"$${lhs} = {transfer_tex(h)}$$"
    return ("$$\\begin{aligned} " + lhs + "_{\\text{loaded}} &= " + transfer_tex(h) + " \\\\ "
            + lhs + "_{\\text{ideal}} &= " + transfer_tex(h.ideal()) + " \\end{aligned}$$")


def network_html(h) -> str:
    """A network function as HTML (MathML), loaded and ideal side by side when it has an ideal view.

    Parameters
    ----------
    h : NetworkFunction

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> network_html(derive(catalogue.build("rc-lowpass"))).count("<math")
    2
    """
    if not _has_fixture(h):
        return "<div>" + to_mathml("H(s) = " + transfer_tex(h)) + "</div>"
    cells = "".join(f'<td style="{_CSS[1]}">{to_mathml(transfer_tex(v), "inline")}</td>' for v in (h, h.ideal()))
    return (f'<table style="{_CSS[0]}"><tr><th style="{_CSS[1]}">Loaded</th><th style="{_CSS[1]}">Ideal</th></tr>'
            f"<tr>{cells}</tr></table>")


def analysis_html(a) -> str:
    """An analysis as HTML: the transfer functions loaded and ideal side by side, then the numbers table.

    Parameters
    ----------
    a : Analysis

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> page = analysis_html(analyse(catalogue.build("rc-lowpass")))
    >>> "<th" in page and "cutoff frequency" in page and page.count("<math") == 2
    True
    """
    td, th = (f'<td style="{_CSS[1]}">', f'<th style="{_CSS[1]}">')
    title = escape(a.circuit.title or "Untitled stage")
    rows = [f"<tr>{th}</th>{th}Loaded (as connected)</th>{th}Ideal (stage alone)</th>{th}Loaded / ideal</th></tr>",
            f"<tr>{td}H(s)</td>" + "".join(td + to_mathml(transfer_tex(getattr(a, v).transfer), "inline") + "</td>"
                                           for v in ("loaded", "ideal")) + f"{td}—</td></tr>",
            f"<tr>{td}response</td>{td}{escape(kind_words(a.loaded))}</td>{td}{escape(kind_words(a.ideal))}</td>"
            f"{td}—</td></tr>"]
    for w in [w for w in (stability_row(a), *word_rows(a.numeric)) if w]:
        rows.append(f"<tr>{td}{escape(w['label'])}</td>{td}{escape(w['loaded']['text'])}</td>"
                    f"{td}{escape(w['ideal']['text'])}</td>{td}—</td></tr>")
    for r in number_rows(a):
        label = r["label"] + (" (dB)" if r["unit"] == "dB" else "")
        rows.append(f"<tr>{td}{escape(label)}</td>" + "".join(td + escape(r[k]["text"]) + "</td>"
                                                           for k in ("loaded", "ideal", "ratio")) + "</tr>")
    return f'<div><strong>{title}</strong><table style="{_CSS[0]}">' + "".join(rows) + "</table></div>"


def text_html(text: str) -> str:
    """A command's text output as an HTML ``<pre>`` block.

    Parameters
    ----------
    text : str

    Examples
    --------
    >>> text_html("a < b")
    '<pre>a &lt; b</pre>'
    """
    return f"<pre>{escape(text)}</pre>"


def _texts():
    """Result class -> the function that gives the text its command prints."""
    from symfilt.claims.judge import Equivalence
    from symfilt.design.drive import DriveResult
    from symfilt.design.opamp_error import OpampError
    from symfilt.design.report import Report
    from symfilt.design.sizing import SizeResult
    from symfilt.design.spread import SpreadResult
    from symfilt.export.check_report import check_text
    from symfilt.export.derive_report import derive_text
    from symfilt.export.design_report import drive_text, opamp_error_text, size_text, spread_text

    return {Equivalence: check_text, SizeResult: size_text, SpreadResult: spread_text, DriveResult: drive_text,
            OpampError: opamp_error_text, Report: derive_text}


def attach() -> None:
    """Put the display methods on the result classes (idempotent; called by ``import symfilt``).

    Examples
    --------
    >>> import symfilt
    >>> attach()
    >>> a = symfilt.analyse(symfilt.catalogue.build("rc-lowpass"), sensitivity=False)
    >>> "<table" in a._repr_html_() and a.loaded.transfer._repr_latex_().startswith("$$")
    True
    """
    from symfilt.analysis.network import NetworkFunction
    from symfilt.analysis.stage import Analysis

    NetworkFunction._repr_latex_ = network_latex
    NetworkFunction._repr_html_ = network_html
    Analysis._repr_html_ = analysis_html
    for cls, text in _texts().items():
        cls._repr_html_ = lambda self, _text=text: text_html(_text(self))
