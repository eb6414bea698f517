"""LaTeX of an analysis: the trade's subscripts (R_{1}, R_{s}, R_{L}), ``\\parallel`` for
parallel combinations, one ``align*`` environment per view."""

from __future__ import annotations

import sympy

from symfilt.analysis.stage import Analysis, StageResult
from symfilt.export.common import symbol_names, transfer_parts
from symfilt.export.correction import corrections
from symfilt.export.impedance_form import impedance_display
from symfilt.export.readable import readable


def transfer_tex(h) -> str:
    """LaTeX of H(s) as ``K \\cdot \\frac{N(s)}{D(s)}``.

    Parameters
    ----------
    h : NetworkFunction
        The transfer function.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> print(transfer_tex(derive(catalogue.build("rc-lowpass")).ideal()))
    \\frac{1}{C_{1} R_{1} s + 1}
    """
    if h.infinite:
        return "\\infty"
    names = symbol_names(h.as_expr())
    k, n, d = transfer_parts(h)
    p = lambda e: sympy.latex(e, symbol_names=names, order="none")
    body = p(n) if d == 1 else "\\frac{" + p(n) + "}{" + p(d) + "}"
    if k == 1:
        return body
    if k == -1:
        return "-" + body
    return p(k) + " \\cdot " + body


def tex(expr, *, keep_parallel: bool = True) -> str:
    """LaTeX of one expression with symfilt's symbol names.

    Parameters
    ----------
    expr : sympy.Expr or None
        The expression (None is written as a dash).
    keep_parallel : bool
        Write parallel combinations as ``a \\parallel b``.

    Examples
    --------
    >>> R1, C1 = sympy.symbols("R1 C1", positive=True)
    >>> tex(1 / (R1 * C1))
    '\\\\frac{1}{C_{1} R_{1}}'
    >>> tex(None)
    '\\\\text{---}'
    """
    if expr is None:
        return "\\text{---}"
    e = readable(expr) if keep_parallel else expr
    return sympy.latex(e, symbol_names=symbol_names(expr), ln_notation=False)


#: LaTeX left-hand side of each quantity.
LABELS = {"transfer": "H(s)", "gain": "K", "w0": "\\omega_{0}", "q": "Q", "tau": "\\tau",
           "cutoff": "\\omega_{c}", "dc_gain": "H(0)", "hf_gain": "H(\\infty)", "zin": "Z_{\\mathrm{in}}",
           "zout": "Z_{\\mathrm{out}}", "bandwidth": "B"}


def stage_equations(st: StageResult, ideal: StageResult | None = None) -> list[tuple[str, str]]:
    """(LaTeX left-hand side, right-hand side) pairs for one view, in report order.

    Parameters
    ----------
    st : StageResult
        The view, ``analysis.loaded`` or ``analysis.ideal``.
    ideal : StageResult, optional
        For the loaded view, the ideal one: a quantity that reads shorter as the ideal one
        times a factor is written ``... = \\omega_{0,\\mathrm{ideal}} \\cdot factor``
        (:mod:`symfilt.export.correction`).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> dict(stage_equations(analyse(catalogue.build("rc-lowpass"), sensitivity=False).ideal))["\\\\omega_{c}"]
    '\\\\frac{1}{C_{1} R_{1}}'
    """
    f = st.form
    eqs = [(LABELS["transfer"], transfer_tex(st.transfer))]
    if f.order == 2 and f.kind in ("lowpass", "highpass") and st.cutoff.has_value:
        root = "\\sqrt{x + \\sqrt{x^{2} + 1}}"
        rhs = "\\omega_{0} " + root if f.kind == "lowpass" else "\\frac{\\omega_{0}}{" + root + "}"
        eqs.append(("\\omega_{c}", rhs + ", \\quad x = 1 - \\frac{1}{2 Q^{2}}"))
        cut = None  # shown through w0 and Q: the closed form itself is never built here
    else:
        cut = st.cutoff.value
    shown = [label for key, label in _TEXT_LABEL.items() if key != "cutoff" or cut is not None]
    factors = corrections(st, ideal, lambda e: str(readable(e)), shown) if ideal is not None else {}
    for key, e in (("gain", f.gain), ("w0", f.w0), ("q", f.q), ("tau", f.tau), ("cutoff", cut),
                   ("bandwidth", st.cutoff.bandwidth), ("dc_gain", st.transfer.dc_gain()),
                   ("hf_gain", st.transfer.hf_gain()),
                   *((key, impedance_display(z)) for key, z in (("zin", st.zin), ("zout", st.zout)) if z is not None)):
        if e is not None:
            eqs.append((LABELS[key], tex(e) + _ideal_times(key, factors)))
    return eqs


#: Text-report label of each quantity a correction factor is looked for.
_TEXT_LABEL = {"gain": "K", "w0": "w0", "q": "Q", "tau": "tau", "cutoff": "cutoff ωc", "dc_gain": "DC gain"}


def _ideal_times(key: str, factors: dict) -> str:
    factor = factors.get(_TEXT_LABEL.get(key))
    if factor is None:
        return ""
    lhs = LABELS[key]
    ideal = (lhs[:-1] + ",\\mathrm{ideal}}") if lhs.endswith("}") else lhs + "_{\\mathrm{ideal}}"
    return f" = {ideal} \\cdot {tex(factor)}"


def quantity_latex(st: StageResult, quantity: str) -> str | None:
    """LaTeX of one named quantity (``transfer``, ``dc-gain``, ``cutoff``, ``w0``, ``q``, ``zin``, ``zout``).

    Parameters
    ----------
    st : StageResult
        The view, ``analysis.loaded`` or ``analysis.ideal``.
    quantity : str
        The quantity's name.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> quantity_latex(analyse(catalogue.build("rc-lowpass"), sensitivity=False).ideal, "dc-gain")
    '1'
    """
    key = quantity.replace("-", "_")
    if key == "transfer":
        return transfer_tex(st.transfer)
    if key in ("zin", "zout"):
        return tex(impedance_display(getattr(st, key)))
    e = st.quantities().get(key)
    return None if e is None else tex(e)


def sensitivity_rows(st: StageResult) -> list[tuple[str, str]]:
    """(LaTeX lhs, rhs) for every sensitivity of a view.

    Parameters
    ----------
    st : StageResult
        The view, ``analysis.loaded`` or ``analysis.ideal``.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> sensitivity_rows(analyse(catalogue.build("rc-lowpass")).ideal)[0]
    ('S_{R_{1}}^{\\\\omega_{c}}', '-1')
    """
    rows = []
    from symfilt.export.common import latex_name, sensitivity_quantities

    names = {"cutoff": "\\omega_{c}", "w0": "\\omega_{0}", "q": "Q", "dc_gain": "H(0)", "gain": "K",
             "magnitude": "\\left|H(j\\omega)\\right|"}
    quantities = sensitivity_quantities(st.sensitivity)
    through = _cutoff_through_w0_q(st) if {"w0", "q"} <= set(quantities) else None
    for q in quantities:
        if q == "cutoff" and through:
            rows.append(("S_{p}^{\\omega_{c}}", through))
            continue
        for name, e in st.sensitivity[q].items():
            rows.append((f"S_{{{latex_name(name)}}}^{{{names[q]}}}", tex(e, keep_parallel=False)))
    return rows


def _cutoff_through_w0_q(st: StageResult) -> str | None:
    """The cutoff sensitivity of a second-order low- or high-pass through those of w0 and Q.

    With wc = w0 g(Q), g = sqrt(x + sqrt(x^2 + 1)), x = 1 - 1/(2 Q^2) (1/g for a high-pass),
    the chain rule gives S^wc = S^w0 + (d ln g/d ln Q) S^Q, and d ln g/d ln Q reduces to
    1/(2 Q^2 sqrt(x^2 + 1)). Written once for every part instead of each sensitivity expanded.
    """
    f = st.form
    if f.order != 2 or f.kind not in ("lowpass", "highpass") or not st.cutoff.has_value:
        return None
    sign = "+" if f.kind == "lowpass" else "-"
    return (f"S_{{p}}^{{\\omega_{{0}}}} {sign} \\kappa \\, S_{{p}}^{{Q}}, \\quad \\kappa = "
            "\\frac{1}{2 Q^{2} \\sqrt{x^{2} + 1}}, \\quad x = 1 - \\frac{1}{2 Q^{2}}, "
            "\\quad \\text{for each part } p")


def render(a: Analysis, quantity: str | None = None) -> str:
    """LaTeX for ``symfilt derive --format latex``: align* environments, loaded then ideal.

    Parameters
    ----------
    a : Analysis
        The result of :func:`symfilt.analysis.stage.analyse`.
    quantity : str, optional
        Only this quantity (a ``--quantity`` name); every equation when None.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> out = render(analyse(catalogue.build("rc-lowpass"), sensitivity=False))
    >>> out.count("\\\\begin{align*}") == out.count("\\\\end{align*}") == 2
    True
    """
    parts = []
    for key, st in (("loaded", a.loaded), ("ideal", a.ideal)):
        if quantity and quantity != "sensitivity":
            body = quantity_latex(st, quantity)
            lhs = LABELS.get(quantity.replace("-", "_"), quantity)
            rows = [(lhs, body)]
        elif quantity == "sensitivity":
            rows = sensitivity_rows(st)
        else:
            rows = stage_equations(st, a.ideal if key == "loaded" else None)
        parts.append("\\begin{align*}")
        label = "loaded (as connected)" if key == "loaded" else "ideal (the stage alone)"
        parts.append(f"  \\intertext{{{label}}}")
        lines = [f"  {lhs} &= {rhs}" for lhs, rhs in rows if rhs is not None]
        parts.append(" \\\\\n".join(lines))
        parts.append("\\end{align*}")
    return "\n".join(parts) + "\n"
