"""The output of ``symfilt derive`` for a :class:`~symfilt.design.report.Report`, in each format.

Examples
--------
>>> from symfilt import catalogue
>>> from symfilt.design.report import report
>>> r = report(catalogue.build("rc-lowpass"), sensitivity=False)
>>> derive_dict(r)["title"]
'RC low-pass'
"""

from __future__ import annotations

from typing import Any

from symfilt.analysis.loading import combined_shift
from symfilt.design.opamp_error import AS_GIVEN
from symfilt.export.approx_report import approx_dict, approx_text, keep_dict, keep_line
from symfilt.export.findings import describe
from symfilt.export.loop_report import loop_dict, loop_text
from symfilt.export.probe_report import probe_dict, probe_latex, probe_text

QUANTITY_KEYS = {"transfer": "transfer", "dc-gain": "dc_gain", "cutoff": "cutoff", "w0": "w0", "q": "q",
                 "zin": "input_impedance", "zout": "output_impedance", "sensitivity": "sensitivity"}


def load_limit_dicts(limits) -> list[dict[str, Any]]:
    """The ``load_limit`` entries of the derive JSON.

    Parameters
    ----------
    limits : iterable of symfilt.analysis.loading.LoadLimit

    Returns
    -------
    list of dict
        ``fixture``, ``bound``, ``tolerance``, ``value``, ``exact`` (text or None), ``note`` (or None),
        ``actual``, ``factor`` and ``shift`` (None where unknown).

    Examples
    --------
    >>> from symfilt.analysis.loading import LoadLimit
    >>> load_limit_dicts([LoadLimit("R_L", "min", 0.02, 235000.0, None)])[0]["exact"] is None
    True
    """
    return [{"fixture": x.fixture, "bound": x.bound, "tolerance": x.tolerance, "value": x.value,
             "exact": None if x.exact is None else str(x.exact), "note": describe(x.note) or None,
             "actual": x.actual, "factor": x.factor, "shift": x.shift} for x in limits]


def _select_json(data: dict, quantity: str) -> dict:
    key = QUANTITY_KEYS[quantity]
    return {"title": data["title"], "quantity": quantity, "loaded": data["loaded"][key], "ideal": data["ideal"][key],
            "symbols": data["symbols"], **({"approx": data["approx"]} if "approx" in data and key == "transfer" else {})}


def derive_dict(report, quantity: str | None = None) -> dict:
    """The derive JSON of a report, as a dict.

    Parameters
    ----------
    report : symfilt.design.report.Report
    quantity : str, optional
        Only this quantity (as ``symfilt derive --quantity`` names it).

    Returns
    -------
    dict

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.report import report
    >>> sorted(derive_dict(report(catalogue.build("rc-lowpass"), sensitivity=False), "cutoff"))
    ['ideal', 'loaded', 'quantity', 'symbols', 'title']
    """
    from symfilt.export import design_report, json as jx

    extra = {}
    if report.load_limits is not None:
        extra["load_limit"] = load_limit_dicts(report.load_limits)
        extra["load_limit_combined"] = {"shift": combined_shift(report.analysis)}
    if report.opamp_error is not None:
        extra["opamp_error"] = design_report.opamp_error_dict(report.opamp_error)
    if report.analysis.loops:
        extra["loops"] = loop_dict(report.analysis.loops)
    if report.probes:
        extra["probes"] = probe_dict(report)
    if report.approx:
        extra["approx"] = approx_dict(report.approx)
    if report.circuit.keep is not None:
        extra["keep"] = keep_dict(report.circuit)
    data = jx.analysis_dict(report.analysis, extra)
    return _select_json(data, quantity) if quantity else data


def derive_json(report, quantity: str | None = None) -> str:
    """The derive JSON of a report, ending in a newline.

    Parameters
    ----------
    report : symfilt.design.report.Report
    quantity : str, optional

    Returns
    -------
    str

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.report import report
    >>> derive_json(report(catalogue.build("rc-lowpass"), sensitivity=False)).startswith("{")
    True
    """
    from symfilt.export.json import dumps

    return dumps(derive_dict(report, quantity)) + "\n"


def derive_text(report, quantity: str | None = None) -> str:
    """The derive text report, with the op-amp error section at the end.

    Parameters
    ----------
    report : symfilt.design.report.Report
    quantity : str, optional

    Returns
    -------
    str

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.report import report
    >>> "RC low-pass" in derive_text(report(catalogue.build("rc-lowpass"), sensitivity=False))
    True
    """
    from symfilt.export import design_report, text

    out = keep_line(report.circuit) + text.render(report.analysis, quantity, report.load_limits)
    if report.analysis.loops and not quantity:
        out += "\n" + loop_text(report.analysis.loops)
    if report.opamp_error is not None and not (quantity and report.opamp_error.model == AS_GIVEN):
        out += "\n" + design_report.opamp_error_text(report.opamp_error)
    if report.probes and not quantity:
        out += "\n" + probe_text(report)
    if report.approx and quantity in (None, "transfer"):
        out += "\n" + approx_text(report.approx)
    return out


def derive_latex(report, quantity: str | None = None) -> str:
    """The derive LaTeX of a report.

    Parameters
    ----------
    report : symfilt.design.report.Report
    quantity : str, optional

    Returns
    -------
    str

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.report import report
    >>> "align*" in derive_latex(report(catalogue.build("rc-lowpass"), sensitivity=False))
    True
    """
    from symfilt.export import latex

    return latex.render(report.analysis, quantity) + ("" if quantity else probe_latex(report))


def derive_mathml(report, quantity: str | None = None) -> str:
    """The derive MathML of a report.

    Parameters
    ----------
    report : symfilt.design.report.Report
    quantity : str, optional

    Returns
    -------
    str

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.report import report
    >>> "<math" in derive_mathml(report(catalogue.build("rc-lowpass"), sensitivity=False))
    True
    """
    from symfilt.export import mathml

    return mathml.render(report.analysis, quantity)
