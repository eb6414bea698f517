"""MathML (via latex2mathml) of an analysis: one well-formed XHTML fragment."""

from __future__ import annotations

import re

from html import escape

from symfilt.analysis.stage import Analysis
from symfilt.export import latex


def to_mathml(tex_text: str, display: str = "block") -> str:
    """Convert one LaTeX expression to a ``<math>`` element.

    Parameters
    ----------
    tex_text : str
        One LaTeX expression.
    display : {"block", "inline"}
        The ``display`` attribute of the element.

    Examples
    --------
    >>> to_mathml("R_{1}").startswith('<math xmlns="http://www.w3.org/1998/Math/MathML" display="block">')
    True
    >>> '<mi mathvariant="normal">out</mi>' in to_mathml("Z_{\\\\mathrm{out}}")
    True
    """
    import latex2mathml.converter

    out = latex2mathml.converter.convert(tex_text, display=display)
    # \\mathrm{out} comes back one <mi> per letter: one upright identifier reads (and spaces) as a label
    return re.sub(r'(?:<mi mathvariant="normal">[A-Za-z0-9]</mi>){2,}',
                  lambda m: '<mi mathvariant="normal">' + "".join(re.findall(r">([A-Za-z0-9])<", m[0])) + "</mi>", out)


def render(a: Analysis, quantity: str | None = None) -> str:
    """A ``<div>`` holding each equation as MathML, loaded then ideal (parses as XML).

    Parameters
    ----------
    a : Analysis
        The result of :func:`symfilt.analysis.stage.analyse`.
    quantity : str, optional
        Only this quantity (a ``--quantity`` name); every equation when None.

    Examples
    --------
    >>> import xml.dom.minidom
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> doc = render(analyse(catalogue.build("rc-lowpass"), sensitivity=False))
    >>> xml.dom.minidom.parseString(doc).documentElement.tagName
    'div'
    """
    out = ['<div xmlns="http://www.w3.org/1999/xhtml" class="symfilt-derivation">']
    out.append(f"<h2>{escape(a.circuit.title or 'circuit')}</h2>")
    for key, st in (("loaded", a.loaded), ("ideal", a.ideal)):
        out.append(f'<section class="{key}"><h3>{key}</h3>')
        if quantity == "sensitivity":
            rows = latex.sensitivity_rows(st)
        elif quantity:
            rows = [(latex.LABELS.get(quantity.replace("-", "_"), quantity), latex.quantity_latex(st, quantity))]
        else:
            rows = latex.stage_equations(st, a.ideal if key == "loaded" else None)
        for lhs, rhs in rows:
            if rhs is None:
                continue
            out.append(to_mathml(f"{lhs} = {rhs}"))
        out.append("</section>")
    out.append("</div>")
    return "\n".join(out) + "\n"
