"""The probe section of ``symfilt derive``: V(node)/V(source) at inner nodes, in each format.

Examples
--------
>>> from symfilt import catalogue
>>> from symfilt.design.report import report
>>> r = report(catalogue.build("sallen-key-lowpass"), sensitivity=False, probes=["a"])
>>> sorted(probe_dict(r)["a"])
['ideal', 'loaded', 'node', 'numeric']
"""

from __future__ import annotations

#: Keys of a view's JSON that a probe does not have (no impedances, no sensitivities).
_NOT_FOR_PROBES = ("input_impedance", "output_impedance", "sensitivity")


def probe_text(report) -> str:
    """The text section of every probe of a report ("" when it has none).

    Parameters
    ----------
    report : symfilt.design.report.Report

    Returns
    -------
    str

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.report import report
    >>> r = report(catalogue.build("rc-lowpass"), sensitivity=False, probes=["out"])
    >>> print(probe_text(r).splitlines()[0])
    Probe out: H(s) = V(out)/V(source), with the load on out
    """
    from symfilt.export.text import numbers_rows, stage_formulas
    from symfilt.export.transfer_text import transfer_drawing

    c = report.circuit
    out = []
    for p in report.probes:
        out.append(f"Probe {p.label}: H(s) = V({p.node})/V(source), with the load on {c.output}")
        for key, st in (("loaded", p.loaded), ("ideal", p.ideal)):
            out += [f"  {key}:"] + ["    " + line for line in transfer_drawing(st.transfer).splitlines()]
            out += [""] + stage_formulas(st) + [""]
        rows = numbers_rows(p.analysis(c))
        if rows:
            out += [f"  Numbers at the given values (probe {p.label})"] + rows + [""]
    return "\n".join(out)


def probe_dict(report) -> dict:
    """The ``"probes"`` entry of the derive JSON: label -> node, loaded, ideal, numeric.

    Each view has the keys of the derive JSON's ``"loaded"`` (transfer, numerator,
    denominator, order, kind, dc_gain, hf_gain, gain_k, w0, q, tau, cutoff, ...) but no
    impedances and no sensitivities; ``numeric`` is as the derive JSON's.

    Parameters
    ----------
    report : symfilt.design.report.Report

    Returns
    -------
    dict

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.report import report
    >>> d = probe_dict(report(catalogue.build("rc-lowpass"), sensitivity=False, probes=["out"]))
    >>> d["out"]["ideal"]["transfer"], round(d["out"]["numeric"]["ideal"]["cutoff_hz"], 2)
    ('1/(C1*R1*s + 1)', 1539.22)
    """
    from symfilt.export.json import numeric_dict, stage_dict

    out = {}
    for p in report.probes:
        views = {}
        for key, st in (("loaded", p.loaded), ("ideal", p.ideal)):
            d = stage_dict(st)
            views[key] = {k: v for k, v in d.items() if k not in _NOT_FOR_PROBES}
        out[p.label] = {"node": p.node, **views, "numeric": numeric_dict(p.numeric)}
    return out


def probe_latex(report) -> str:
    """The probes as LaTeX ``align*`` environments, H_{label}(s) loaded then ideal ("" when none).

    Parameters
    ----------
    report : symfilt.design.report.Report

    Returns
    -------
    str

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.report import report
    >>> tex = probe_latex(report(catalogue.build("rc-lowpass"), sensitivity=False, probes=["out"]))
    >>> tex.count("\\\\begin{align*}")
    2
    """
    from symfilt.export.common import latex_name
    from symfilt.export.latex import stage_equations

    parts = []
    for p in report.probes:
        sub = latex_name(p.label)
        for key, st in (("loaded", p.loaded), ("ideal", p.ideal)):
            label = "loaded (as connected)" if key == "loaded" else "ideal (the stage alone)"
            rows = [(lhs.replace("H(", f"H_{{{sub}}}(", 1) if lhs.startswith("H(") else lhs, rhs)
                    for lhs, rhs in stage_equations(st)]
            parts.append("\\begin{align*}")
            parts.append(f"  \\intertext{{probe {_tex_text(p.label)} at node {_tex_text(p.node)}, {label}}}")
            parts.append(" \\\\\n".join(f"  {lhs} &= {rhs}" for lhs, rhs in rows))
            parts.append("\\end{align*}")
    return "\n".join(parts) + ("\n" if parts else "")


def _tex_text(text: str) -> str:
    """Text safe inside \\intertext (LaTeX's special characters escaped)."""
    special = {"\\": "\\textbackslash{}", "{": "\\{", "}": "\\}", "_": "\\_", "%": "\\%", "&": "\\&",
               "#": "\\#", "$": "\\$", "^": "\\^{}", "~": "\\~{}"}
    return "".join(special.get(ch, ch) for ch in text)
