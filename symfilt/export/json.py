"""JSON per the DESIGN.md contract.

Expressions are sympy ``str()`` text; ``sympy.sympify(text, locals=symbols)`` reads
them back, with ``symbols`` built from the ``"symbols"`` table (:func:`read_symbols`).
"""

from __future__ import annotations

import json as _json
import math

import sympy

from symfilt.analysis.stage import Analysis, StageResult
from symfilt.export.findings import describe


def _s(e):
    if e is None:
        return None
    return str(e)


def json_value(x):
    """A number for JSON as it is, a float that is not finite as None (JSON has no infinity).

    Parameters
    ----------
    x : number or None

    Examples
    --------
    >>> json_value(3), json_value(float("inf")), json_value(None)
    (3, None, None)
    """
    if x is None:
        return None
    if isinstance(x, float) and not math.isfinite(x):
        return None
    return x


def json_float(x) -> float | None:
    """A number for JSON as a float, None when it is None or not finite.

    Parameters
    ----------
    x : number or None

    Examples
    --------
    >>> json_float(3), json_float(float("nan"))
    (3.0, None)
    """
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None


def transfer_text(h) -> str:
    """H(s) as sympy-readable text ``(K)*(N)/(D)`` with N and D starting at 1.

    Parameters
    ----------
    h : NetworkFunction
        The transfer function.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> transfer_text(derive(catalogue.build("rc-lowpass")))
    '(R_L/(R1 + R_L + R_s))*1/(C1*R_L*(R1 + R_s)*s/(R1 + R_L + R_s) + 1)'
    """
    from symfilt.export.common import transfer_parts

    if h.infinite:
        return "oo"
    k, n, d = transfer_parts(h, parallel=False)
    p = lambda e: sympy.sstr(e, order="none")
    body = p(n) if n == 1 else f"({p(n)})"
    if d != 1:
        body += f"/({p(d)})"
    return body if k == 1 else f"({p(k)})*{body}"


#: Network functions with more terms than this are written straight from the engine's
#: flint polynomials (exact and sympy-readable, without the K·N/D layout): printing a
#: sympy expression of tens of thousands of terms would take most of a minute.
LARGE_TERMS = 2000


def _large(h) -> bool:
    return h.ratio is not None and not h.infinite and h.ratio.terms > LARGE_TERMS


#: Terms per innermost group of a large sum in JSON (see :func:`_grouped_sum`).
GROUP_TERMS = 50


def _poly_text(p) -> str:
    text = p.str().replace("^", "**")
    terms = text.replace(" - ", " + -").split(" + ")
    return "(" + _grouped_sum(terms) + ")"


def _grouped_sum(terms: list[str]) -> str:
    """``t1 + t2 + ...`` with the terms in nested groups of at most :data:`GROUP_TERMS`, halved
    level by level, so that a sum of 100 000 terms parses (``sympy.sympify``, Python's own
    parser) at a nesting depth of a few dozen instead of one level per term.

    Examples
    --------
    >>> _grouped_sum(["a", "b"])
    'a + b'
    >>> _grouped_sum([f"x{i}" for i in range(120)]).count("(")  # halves, then quarters of 30
    6
    """
    if len(terms) <= GROUP_TERMS:
        return " + ".join(terms).replace("+ -", "- ")
    half = len(terms) // 2
    return f"({_grouped_sum(terms[:half])}) + ({_grouped_sum(terms[half:])})"


def _ratio_text(h) -> str:
    """num/den of a large function as text, from the flint polynomials."""
    return f"{_poly_text(h.ratio.num)}/{_poly_text(h.ratio.den)}"


def _function_fields(h) -> tuple[str, str, str]:
    """transfer, numerator, denominator texts (the denominator's lowest coefficient made 1)."""
    if _large(h):
        _ncs, dcs = h.ratio.coefficients("s")
        low = _poly_text(next(c for c in dcs if c != 0))
        return _ratio_text(h), f"{_poly_text(h.ratio.num)}/{low}", f"{_poly_text(h.ratio.den)}/{low}"
    num, den = h.normalized()
    return transfer_text(h), _s(num), _s(den)


def _impedance_text(z) -> str:
    return _ratio_text(z) if _large(z) else _s(z.as_expr())


def stage_dict(st: StageResult) -> dict:
    """One view (loaded or ideal) as a JSON-ready dict.

    Parameters
    ----------
    st : StageResult
        The view, ``analysis.loaded`` or ``analysis.ideal``.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> d = stage_dict(analyse(catalogue.build("rc-lowpass"), sensitivity=False).ideal)
    >>> d["transfer"], d["kind"], d["cutoff"]
    ('1/(C1*R1*s + 1)', 'lowpass', '1/(C1*R1)')
    """
    transfer, numerator, denominator = _function_fields(st.transfer)
    dc, hf = st.transfer.dc_gain(), st.transfer.hf_gain()
    out = {
        "transfer": transfer,
        "numerator": numerator,
        "denominator": denominator,
        "order": int(st.transfer.order()),
        "kind": st.form.kind,
        "dc_gain": _s(dc),
        "hf_gain": _s(hf),
        "gain_k": _s(st.form.gain),
        "w0": _s(st.form.w0),
        "q": _s(st.form.q),
        "tau": _s(st.form.tau),
        "cutoff": _s(st.cutoff.value),
        "cutoff_note": describe(st.cutoff.reason) or None,
        "band_edges": None if st.cutoff.edges is None else [_s(e) for e in st.cutoff.edges],
        "bandwidth": _s(st.cutoff.bandwidth),
        "input_impedance": None if st.zin is None else _impedance_text(st.zin),
        "output_impedance": None if st.zout is None else _impedance_text(st.zout),
        "sensitivity": {q: (None if t is None else {k: _s(v) for k, v in t.items()})
                        for q, t in st.sensitivity.items()} if st.sensitivity else
        {"cutoff": None, "w0": None, "q": None, "dc_gain": None},
    }
    return out


def numeric_dict(numeric: dict) -> dict:
    """The ``"numeric"`` entry: ``{"loaded": {...}, "ideal": {...}}`` with non-finite numbers as null.

    Parameters
    ----------
    numeric : dict
        ``Analysis.numeric`` (or a probe's).

    Examples
    --------
    >>> numeric_dict({"loaded": {"dc_gain": float("inf")}, "ideal": {"dc_gain": 1.0}})
    {'loaded': {'dc_gain': None}, 'ideal': {'dc_gain': 1.0}}
    """
    return {k: {kk: (json_value(vv) if not isinstance(vv, (dict, list)) else vv) for kk, vv in v.items()}
            for k, v in numeric.items()}


def analysis_dict(a: Analysis, extra: dict | None = None) -> dict:
    """The whole ``derive`` result as a JSON-ready dict (DESIGN.md contract).

    Parameters
    ----------
    a : Analysis
        The result of :func:`symfilt.analysis.stage.analyse`.
    extra : dict, optional
        More top-level keys to add (such as the load limits).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> d = analysis_dict(analyse(catalogue.build("rc-lowpass")))
    >>> sorted(d)
    ['ideal', 'input', 'loaded', 'numeric', 'output', 'ratios', 'sum_rules', 'symbols', 'title']
    >>> d["symbols"]["R1"]
    {'role': 'part', 'value': '4700', 'kind': 'resistor'}
    """
    c = a.circuit
    symbols = {name: {"role": info["role"], "value": None if info["value"] is None else str(info["value"]),
                      **{key: info[key] for key in ("kind", "tie") if key in info},
                      **({"unit": info["unit"]} if info["role"] == "parameter" else {})}
               for name, info in c.symbols().items()}
    numeric = numeric_dict(a.numeric)
    out = {
        "title": c.title,
        "input": c.input,
        "output": c.output,
        "symbols": symbols,
        "loaded": stage_dict(a.loaded),
        "ideal": stage_dict(a.ideal),
        "numeric": numeric,
        "ratios": {key: json_value(a.ratio(key)) for key in ("cutoff_hz", "f0_hz", "q", "dc_gain")
                   if a.ratio(key) is not None},
        "sum_rules": {"checked": [{"quantity": r.quantity, "group": r.group, "expected": r.expected,
                                   "sum": _s(r.total), "holds": r.holds} for r in a.rules],
                      "note": describe(a.rules_note) or None},
    }
    if extra:
        out.update(extra)
    return out


def dumps(data) -> str:
    """JSON text, two-space indented, finite numbers only.

    Parameters
    ----------
    data : dict
        JSON-ready data (no NaN or infinity).

    Examples
    --------
    >>> dumps({"a": 1})
    '{\\n  "a": 1\\n}'
    """
    return _json.dumps(data, indent=2, ensure_ascii=False, allow_nan=False)


def read_symbols(data: dict) -> dict:
    """Name -> sympy Symbol with the right assumptions, from a JSON result's ``symbols`` table.

    Parameters
    ----------
    data : dict
        A JSON result, as :func:`analysis_dict` makes it.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> d = analysis_dict(analyse(catalogue.build("rc-lowpass"), sensitivity=False))
    >>> syms = read_symbols(d)
    >>> sympy.sympify(d["ideal"]["transfer"], locals=syms) == analyse(catalogue.build("rc-lowpass")).ideal.transfer.as_expr()
    True
    """
    out = {}
    for name, info in data["symbols"].items():
        if info["role"] == "laplace":
            out[name] = sympy.Symbol(name)
        elif info.get("kind") in ("vcvs", "vccs", "ccvs", "cccs"):
            out[name] = sympy.Symbol(name, real=True)
        else:
            out[name] = sympy.Symbol(name, positive=True)
    return out
