"""Words for the response at the values: the kind and order after exact cancellation, the notch,
group delay, peaking and ripple rows, and the "Poles and zeros at the given values" block."""

from __future__ import annotations

import math

from symfilt.model.values import format_value

#: Rows of the numbers table (JSON key, label, LaTeX label, unit), after the band edges.
RESPONSE_ROWS = (
    ("order", "order at these values", "n", ""),
    ("notch_hz", "notch frequency", "f_{n}", "Hz"),
    ("notch_depth_db", "notch depth", "\\mathrm{depth}_{n}", "dB"),
    ("bandwidth_hz", "bandwidth", "f_{H} - f_{L}", "Hz"),
    ("group_delay_dc_s", "group delay at DC", "\\tau_{g}(0)", "s"),
    ("peaking_db", "peaking above the pass band", "\\mathrm{peak}", "dB"),
    ("ripple_db", "pass-band ripple", "\\mathrm{ripple}", "dB"),
)
#: What an exact null reads as, in place of a depth.
NULL_TEXT = "infinite (exact null)"


def depth_text(d: dict) -> str | None:
    """The notch depth of one view as text: dB below the pass band, or the exact null.

    Parameters
    ----------
    d : dict
        One view's numbers (``Analysis.numeric["loaded"]``).

    Returns
    -------
    str or None
        None when the view has no notch.

    Examples
    --------
    >>> depth_text({"notch_hz": 1e3, "notch_depth_db": None, "notch_null": True}), depth_text({})
    ('infinite (exact null)', None)
    >>> depth_text({"notch_hz": 1e3, "notch_depth_db": 41.237, "notch_null": False})
    '41.24 dB'
    """
    if "notch_hz" not in d:
        return None
    if d.get("notch_null"):
        return NULL_TEXT
    v = d.get("notch_depth_db")
    return "undefined" if v is None else f"{v:.2f} dB"


def kind_rows(lo: dict, hi: dict) -> list[str]:
    """Table rows of the kind and order at the values (after exact cancellation), and the notch depth.

    Parameters
    ----------
    lo, hi : dict
        The loaded and ideal numbers.

    Returns
    -------
    list of str

    Examples
    --------
    >>> kind_rows({"kind": "notch", "order": 2}, {"kind": "notch", "order": 2})[0].split()
    ['kind', '(values)', 'notch', 'notch']
    """
    rows = []
    if "kind" in lo or "kind" in hi:
        rows.append(f"  {'kind (values)':<14}{lo.get('kind', '—'):>16}{hi.get('kind', '—'):>16}")
        rows.append(f"  {'order (values)':<14}{str(lo.get('order', '—')):>16}{str(hi.get('order', '—')):>16}")
    lo_d, hi_d = depth_text(lo), depth_text(hi)
    if lo_d or hi_d:
        rows.append(f"  {'notch depth':<14}loaded {lo_d or '—'}; ideal {hi_d or '—'} (below the pass-band gain)")
    return rows


def _root_words(r: dict) -> str:
    """One real root as a corner frequency, or one complex pair as f0 and Q."""
    f = format_value(r["f_hz"], "Hz")
    if r["imag"] == 0:
        if r["f_hz"] == 0:
            return "at s = 0"
        return f"real, corner {f}" + (" (right half-plane)" if r["real"] > 0 else "")
    if r["real"] == 0:
        return f"pair on the jω axis at {f}"
    side = " (right half-plane)" if r["real"] > 0 else ""
    return f"pair f0 = {f}, Q = {r['q']:.4g}{side}"


def roots_text(roots: list) -> str:
    """A list of root dicts in words: real roots as corners, each conjugate pair once.

    Parameters
    ----------
    roots : list of dict
        ``{"real", "imag", "f_hz", "q"}`` as :func:`symfilt.analysis.response.root_list` gives.

    Returns
    -------
    str

    Examples
    --------
    >>> roots_text([{"real": -1000.0, "imag": 0.0, "f_hz": 1000 / (2 * math.pi), "q": None}])
    'real, corner 159.2 Hz'
    >>> roots_text([])
    'none'
    """
    words = [_root_words(r) for r in roots if r["imag"] >= 0]
    return "; ".join(words) if words else "none"


def pole_zero_lines(numeric: dict) -> list[str]:
    """The block "Poles and zeros at the given values", per view that has them.

    Parameters
    ----------
    numeric : dict
        ``Analysis.numeric``: view -> numbers.

    Returns
    -------
    list of str
        Empty when no view has its poles.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> lines = pole_zero_lines(analyse(catalogue.build("twin-t-notch"), sensitivity=False).numeric)
    >>> lines[0], lines[-1]
    ('Poles and zeros at the given values', '    zeros: pair on the jω axis at 1.061 kHz')
    """
    out = []
    for view in ("loaded", "ideal"):
        d = numeric.get(view, {})
        if "poles" not in d:
            continue
        head = f"  {view}: {d['kind']}, order {d['order']} at these values"
        if d.get("cancelled"):
            head += "; cancelled exactly (a pole on a zero): " + roots_text(d["cancelled"])
        out += [head, "    poles: " + roots_text(d["poles"]), "    zeros: " + roots_text(d["zeros"])]
    return ["Poles and zeros at the given values"] + out if out else []


_ROOT_LISTS = (("poles", "pole", "p"), ("zeros", "zero", "z"), ("cancelled", "cancelled pole-zero", "c"))
_NONE = {"value": None, "text": "—", "key": None}


def word_rows(numeric: dict) -> list[dict]:
    """Rows of words for a note's numbers table: the kind at the values, and whether a notch is an exact null.

    Parameters
    ----------
    numeric : dict
        ``Analysis.numeric``.

    Returns
    -------
    list of dict
        ``{"label", "loaded", "ideal"}``, each cell ``{"value", "text", "key"}`` (key None where absent).

    Examples
    --------
    >>> word_rows({"loaded": {"kind": "notch", "order": 2, "notch_null": True}, "ideal": {}})[1]["loaded"]["text"]
    'yes: infinite depth'
    """
    rows = []
    for key, label, words in (("kind", "kind at these values", None),
                              ("notch_null", "exact null at the notch", {True: "yes: infinite depth",
                                                                         False: "no: finite depth"})):
        cells = {}
        for view in ("loaded", "ideal"):
            v = numeric.get(view, {}).get(key)
            text = "—" if v is None else (words[v] if words else str(v))
            cells[view] = {"value": None if v is None else str(v), "text": text,
                           "key": None if v is None else f"numeric.{view}.{key}"}
        if cells["loaded"]["key"] or cells["ideal"]["key"]:
            rows.append({"label": label, **cells})
    return rows


def root_rows(numeric: dict, show) -> list[dict]:
    """Number rows for a note: each real root's corner frequency and each complex pair's f0 and Q.

    One row per root with ``imag >= 0`` (a conjugate pair once), by position in the lists of
    :func:`symfilt.analysis.response.root_list`, loaded and ideal side by side.

    Parameters
    ----------
    numeric : dict
        ``Analysis.numeric``.
    show : callable
        (number, unit) -> display text.

    Returns
    -------
    list of dict
        Rows shaped as :func:`symfilt.export.note.number_rows` makes them.

    Examples
    --------
    >>> p = {"real": -1.0, "imag": 0.0, "f_hz": 0.159, "q": None}
    >>> [r["label"] for r in root_rows({"loaded": {"poles": [p]}, "ideal": {}}, lambda v, u: f"{v} {u}")]
    ['pole 1 frequency']
    """
    rows = []
    for key, word, tex in _ROOT_LISTS:
        picked = {view: [(i, r) for i, r in enumerate(numeric.get(view, {}).get(key) or []) if r["imag"] >= 0]
                  for view in ("loaded", "ideal")}
        for k in range(max(len(v) for v in picked.values())):
            for field, what, unit, t in (("f_hz", "frequency", "Hz", f"|{tex}_{{{k + 1}}}|/2\\pi"),
                                         ("q", "Q", "", f"Q_{{{tex}{k + 1}}}")):
                cells = {}
                for view, roots in picked.items():
                    i, r = roots[k] if k < len(roots) else (None, {})
                    v = r.get(field)
                    cells[view] = _NONE if v is None else {"value": v, "text": show(v, unit),
                                                           "key": f"numeric.{view}.{key}.{i}.{field}"}
                if cells["loaded"]["key"] or cells["ideal"]["key"]:
                    rows.append({"key": f"{key}.{k}.{field}", "label": f"{word} {k + 1} {what}", "tex": t,
                                 "unit": unit, **cells, "ratio": _NONE})
    return rows


__all__ = ["NULL_TEXT", "RESPONSE_ROWS", "depth_text", "kind_rows", "pole_zero_lines", "root_rows", "roots_text",
           "word_rows"]
