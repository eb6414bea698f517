"""Design notes: one analysed stage as a document for a design review.

Three forms, written from the same rows so that they say the same thing:

* HTML (:func:`symfilt.export.note_html.note_html`): one standalone page, no scripts and no network; equations
  as MathML, the Bode plot as inline SVG.
* Markdown (:func:`symfilt.export.note_write.note_markdown`): tables, ``$$`` LaTeX equations and the plot as an
  SVG file beside the note.
* LaTeX (:func:`symfilt.export.note_write.note_latex`): an ``align`` fragment to paste into a report.

Every number shown is a number of the analysis (the same floats that
``symfilt derive --format json`` writes), rounded for display to 4 significant digits.
In the HTML each one carries its JSON path and exact value in ``data-key`` and
``data-value`` attributes.
"""

from __future__ import annotations

import math

from symfilt.analysis.stage import Analysis, StageResult
from symfilt.model.opamp import opamp_parameters
from symfilt.model.values import format_value
from symfilt.export.common import sensitivity_quantities
from symfilt.export.latex import stage_equations
from symfilt.export.response_text import RESPONSE_ROWS, root_rows

#: Numeric quantities of the loaded-versus-ideal table: JSON key, label, LaTeX label, unit.
NUMBER_ROWS = (
    ("cutoff_hz", "cutoff frequency", "f_{c}", "Hz"),
    ("low_edge_hz", "lower band edge", "f_{L}", "Hz"),
    ("high_edge_hz", "upper band edge", "f_{H}", "Hz"),
    ("f0_hz", "natural frequency", "f_{0}", "Hz"),
    ("q", "quality factor", "Q", ""),
    ("dc_gain", "DC gain", "H(0)", ""),
    ("dc_gain_db", "DC gain", "20 \\log_{10} \\left|H(0)\\right|", "dB"),
    ("zout_dc_ohm", "output impedance at DC", "Z_{\\mathrm{out}}(0)", "Ω"),
    ("zout_cutoff_ohm", "output impedance at the cutoff", "\\left|Z_{\\mathrm{out}}(j\\omega_c)\\right|", "Ω"),
    ("hf_gain", "stop-band floor", "\\left|H(j\\infty)\\right|", ""),
    ("hf_gain_db", "stop-band floor", "20 \\log_{10} \\left|H(j\\infty)\\right|", "dB"),
    ("hf_slope_db_per_decade", "slope far above the poles", "\\mathrm{slope}_{\\infty}", "dB/decade"),
) + RESPONSE_ROWS
#: Quantities whose loaded/ideal ratio the analysis reports.
RATIO_KEYS = ("cutoff_hz", "f0_hz", "q", "dc_gain")
#: Sensitivity columns: key, plain label, LaTeX of the quantity.
SENS_COLUMNS = (("cutoff", "ω_c", "\\omega_{c}"), ("w0", "ω_0", "\\omega_{0}"), ("q", "Q", "Q"),
                ("dc_gain", "H(0)", "H(0)"), ("gain", "K", "K"), ("magnitude", "|H(jω)|", "\\left|H(j\\omega)\\right|"))
_UNITS = {"resistor": "Ω", "capacitor": "F", "inductor": "H"}
_ORDINALS = ("zeroth", "first", "second", "third", "fourth", "fifth", "sixth", "seventh", "eighth",
             "ninth", "tenth", "eleventh", "twelfth")
_KINDS = {"lowpass": "low-pass", "highpass": "high-pass", "bandpass": "band-pass", "notch": "notch",
          "allpass": "all-pass", "general": "response"}
_VIEWS = (("loaded", "Loaded (as connected)"), ("ideal", "Ideal (the stage alone)"))


# --- numbers -------------------------------------------------------------------

def plain_number(x: float) -> str:
    """A dimensionless number to 4 significant digits (``-0.4964``, ``1.936``, ``0``).

    Parameters
    ----------
    x : float
        The number.

    Examples
    --------
    >>> plain_number(0.80757432), plain_number(-1.935483), plain_number(0.0), plain_number(-0.5)
    ('0.8076', '-1.935', '0', '-0.5')
    """
    if x == 0:
        return "0"
    return f"{x:.4g}"


def show_number(x: float | None, unit: str = "") -> str:
    """A number for display: engineering prefix with a unit (Hz, Ω, F), plain otherwise; ``—`` for None.

    Parameters
    ----------
    x : float or None
        The number (None, infinity or NaN shows ``—``).
    unit : str
        Its unit; ``""``, ``"dB"`` and ``"dB/decade"`` take no prefix.

    Examples
    --------
    >>> show_number(3068.2566, "Hz"), show_number(-3.69398, "dB"), show_number(None)
    ('3.068 kHz', '-3.694 dB', '—')
    """
    if x is None or (isinstance(x, float) and not math.isfinite(x)):
        return "—"
    if unit in ("", "dB", "dB/decade", "°"):
        return plain_number(float(x)) + ("" if unit in ("", "°") else f" {unit}") + ("°" if unit == "°" else "")
    return format_value(x, unit)


def kind_words(st: StageResult) -> str:
    """The response in words: ``second-order low-pass``.

    Parameters
    ----------
    st : StageResult
        The view, ``analysis.loaded`` or ``analysis.ideal``.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> kind_words(analyse(catalogue.build("rc-ladder"), sensitivity=False).ideal)
    'third-order response'
    """
    order = st.transfer.order()
    ordinal = _ORDINALS[order] if order < len(_ORDINALS) else f"order-{_ORDINALS[-1]}-plus"
    return f"{ordinal}-order {_KINDS.get(st.form.kind, st.form.kind)}"


def _symbol_unit(name: str, info: dict) -> str:
    if info["role"] == "part":
        return _UNITS.get(info.get("kind", ""), "")
    if name == "C_L":
        return "F"
    if info["role"] in ("source", "load"):
        return "Ω"
    return (info.get("unit") or "") if info["role"] in ("opamp", "parameter") else ""


def node_name(n: str) -> str:
    """A node's name for a reader: ground is ``ground``.

    Parameters
    ----------
    n : str
        The node's name in the circuit.

    Examples
    --------
    >>> node_name("0"), node_name("out")
    ('ground', 'out')
    """
    return "ground" if n == "0" else n


def tie_lines(a: Analysis) -> list[str]:
    """The tied parts as ``R3 = R/2``, for the line under the parts table (empty without ties).

    A tie's numbers are part of its expression, not results, so they stay out of the tables.

    Parameters
    ----------
    a : Analysis
        The result of :func:`symfilt.analysis.stage.analyse`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> tie_lines(analyse(catalogue.build("twin-t-notch-tied"), sensitivity=False))[-1]
    'R3 = R/2'
    """
    return [f"{p.name} = {p.tie}" for p in a.circuit.parts if p.tie is not None]


def part_rows(a: Analysis) -> list[dict]:
    """One row per part and fixture: name, kind, connection, value text and its JSON path.

    Parameters
    ----------
    a : Analysis
        The result of :func:`symfilt.analysis.stage.analyse`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> r = part_rows(analyse(catalogue.build("rc-lowpass"), sensitivity=False))[0]
    >>> r["name"], r["connection"], r["value"], r["key"]
    ('R1', 'in → out', '4.7 kΩ', 'symbols.R1.value')
    """
    c = a.circuit
    symbols = c.symbols()
    rows = []

    def value_row(name, kind, connection):
        info = symbols.get(name)
        v = None if info is None else info["value"]
        text = "symbolic" if v is None else format_value(v, _symbol_unit(name, info))
        if info is not None and "tie" in info:
            kind = f"{kind}, tied"
        rows.append({"name": name, "kind": kind, "connection": connection, "value": text,
                     "key": None if v is None else f"symbols.{name}.value", "exact": None if v is None else str(v)})

    for q in c.parameters:
        value_row(q.name, "parameter", "—")
    for p in c.parts:
        if p.kind == "opamp":
            plus, minus, out = (node_name(n) for n in p.nodes)
            conn = f"+ at {plus}, − at {minus}, output at {out}"
            if p.model == "ideal":
                rows.append({"name": p.name, "kind": "op-amp, ideal model", "connection": conn,
                             "value": "—", "key": None, "exact": None})
            else:
                rows.append({"name": p.name, "kind": f"op-amp, {p.model} model", "connection": conn,
                             "value": "", "key": None, "exact": None})
            for name, param, _value in opamp_parameters(p):
                value_row(name, f"{param.meaning} of {p.name}", "—")
        elif p.kind in ("resistor", "capacitor", "inductor"):
            value_row(p.name, p.kind, " → ".join(node_name(n) for n in p.nodes))
        else:
            conn = " → ".join(node_name(n) for n in p.nodes[:2])
            if p.control:
                conn += f", controlled by the current in {p.control}"
            else:
                conn += f", controlled by {node_name(p.nodes[2])} − {node_name(p.nodes[3])}"
            value_row(p.name, p.kind, conn)
    if c.source.present:
        value_row("R_s", "source resistance", f"in series with the source, into {node_name(c.input)}")
    if c.load_resistance.present:
        value_row("R_L", "load resistance", f"{node_name(c.output)} → ground")
    if c.load_capacitance.present:
        value_row("C_L", "load capacitance", f"{node_name(c.output)} → ground")
    return rows


#: Words for the stability of the poles at the parts' values.
STABILITY_WORDS = {"stable": "stable", "marginal": "marginal (poles on the jω axis)",
                   "unstable": "unstable (poles in the right half-plane)"}


def stability_row(a: Analysis) -> dict | None:
    """The poles' stability at the parts' values, loaded and ideal (None when a value is missing).

    Parameters
    ----------
    a : Analysis
        The result of :func:`symfilt.analysis.stage.analyse`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> r = stability_row(analyse(catalogue.build("rc-lowpass"), sensitivity=False))
    >>> r["loaded"]["text"], r["loaded"]["key"]
    ('stable', 'numeric.loaded.stability')
    """
    cells = {}
    for view in ("loaded", "ideal"):
        v = a.numeric.get(view, {}).get("stability")
        cells[view] = {"value": v, "text": STABILITY_WORDS.get(v, "—") if v else "—",
                       "key": f"numeric.{view}.stability" if v else None}
    if cells["loaded"]["value"] is None and cells["ideal"]["value"] is None:
        return None
    return {"label": "poles at these values", **cells}


def number_rows(a: Analysis) -> list[dict]:
    """Rows of the loaded-versus-ideal table: label, unit, and for each of loaded, ideal and
    ratio the value, its display text and its JSON path (None where absent).

    Parameters
    ----------
    a : Analysis
        The result of :func:`symfilt.analysis.stage.analyse`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> r = number_rows(analyse(catalogue.build("rc-lowpass"), sensitivity=False))[0]
    >>> r["label"], r["loaded"]["text"], r["ideal"]["text"], r["ratio"]["text"]
    ('cutoff frequency', '2.088 kHz', '1.539 kHz', '1.357')
    """
    rows = []
    for key, label, tex_label, unit in NUMBER_ROWS:
        lo, hi = a.numeric.get("loaded", {}), a.numeric.get("ideal", {})
        if key not in lo and key not in hi:
            continue
        if lo.get(key) is None and hi.get(key) is None:
            continue
        row = {"key": key, "label": label, "tex": tex_label, "unit": unit}
        for view, table in (("loaded", lo), ("ideal", hi)):
            v = table.get(key)
            ok = v is not None and math.isfinite(v)
            row[view] = {"value": v if ok else None, "text": show_number(v if ok else None, unit),
                         "key": f"numeric.{view}.{key}" if ok else None}
        r = a.ratio(key) if key in RATIO_KEYS else None
        ok = r is not None and math.isfinite(r)
        row["ratio"] = {"value": r if ok else None, "text": plain_number(r) if ok else "—",
                        "key": f"ratios.{key}" if ok else None}
        rows.append(row)
    return rows + _margin_rows(a) + root_rows(a.numeric, show_number)


def _margin_rows(a: Analysis) -> list[dict]:
    """Phase margin and crossover of each op-amp's loop, loaded and ideal (finite-gain models with values)."""
    rows = []
    for loop in a.loops:
        for key, label, tex, unit in (("phase_margin_deg", f"phase margin of {loop.opamp}", r"\varphi_m", "°"),
                                      ("crossover_hz", f"loop crossover of {loop.opamp}", r"f_{t}", "Hz")):
            cells = {view: getattr(loop, view).numbers.get(key) for view in ("loaded", "ideal")}
            if all(v is None for v in cells.values()):
                continue
            row = {"key": key, "label": label, "tex": tex, "unit": unit,
                   "ratio": {"value": None, "text": "—", "key": None}}
            for view, v in cells.items():
                row[view] = {"value": v, "text": show_number(v, unit),
                             "key": f"loops.{loop.opamp}.{view}.numbers.{key}" if v is not None else None}
            rows.append(row)
    return rows


def sensitivity_table(a: Analysis, view: str) -> tuple[list[str], list[tuple[str, list[dict]]]]:
    """Numeric sensitivities of one view: the quantity columns and, per symbol, one cell per column.

    Parameters
    ----------
    a : Analysis
        The result of :func:`symfilt.analysis.stage.analyse`.
    view : {"loaded", "ideal"}
        The view.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> cols, rows = sensitivity_table(analyse(catalogue.build("rc-lowpass")), "ideal")
    >>> cols, rows[0][0], [c["text"] for c in rows[0][1]]
    (['cutoff', 'w0', 'dc_gain'], 'R1', ['-1', '-1', '0'])
    """
    tables = a.numeric.get(view, {}).get("sensitivity", {})
    cols = sensitivity_quantities(tables)
    names: list[str] = []
    for k in cols:
        for n in tables[k]:
            if n not in names:
                names.append(n)
    rows = []
    for n in names:
        cells = []
        for k in cols:
            v = tables[k].get(n)
            ok = v is not None and math.isfinite(v)
            cells.append({"value": v if ok else None, "text": plain_number(v) if ok else "—",
                          "key": f"numeric.{view}.sensitivity.{k}.{n}" if ok else None})
        rows.append((n, cells))
    return cols, rows


def standard_form_tex(st: StageResult) -> str | None:
    """The trade's standard form of this view's response, in LaTeX (None for a general response).

    Parameters
    ----------
    st : StageResult
        The view, ``analysis.loaded`` or ``analysis.ideal``.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> standard_form_tex(analyse(catalogue.build("rc-lowpass"), sensitivity=False).ideal)
    'H(s) = \\\\frac{K}{1 + s \\\\tau}, \\\\quad \\\\omega_{0} = \\\\frac{1}{\\\\tau}'
    """
    f = st.form
    if f.order == 1:
        num = {"lowpass": "K", "highpass": "K s \\tau", "allpass": "K \\left(1 - s \\tau\\right)"}.get(f.kind)
        if num is None:
            return None
        return f"H(s) = \\frac{{{num}}}{{1 + s \\tau}}, \\quad \\omega_{{0}} = \\frac{{1}}{{\\tau}}"
    if f.order == 2:
        den = "1 + \\frac{s}{\\omega_{0} Q} + \\frac{s^{2}}{\\omega_{0}^{2}}"
        num = {"lowpass": "K", "highpass": "K \\frac{s^{2}}{\\omega_{0}^{2}}",
               "bandpass": "K \\frac{s}{\\omega_{0} Q}",
               "notch": "K \\left(1 + \\frac{s^{2}}{\\omega_{0}^{2}}\\right)",
               "allpass": "K \\left(1 - \\frac{s}{\\omega_{0} Q} + \\frac{s^{2}}{\\omega_{0}^{2}}\\right)"}.get(f.kind)
        if num is None:
            return None
        return f"H(s) = \\frac{{{num}}}{{{den}}}"
    return None


#: Words for the left-hand sides of :func:`symfilt.export.latex.stage_equations`.
EQUATION_WORDS = {"H(s)": "transfer function", "\\omega_{c}": "cutoff (rad/s)", "K": "gain K",
                  "\\omega_{0}": "natural frequency (rad/s)", "Q": "quality factor", "\\tau": "time constant",
                  "B": "bandwidth (rad/s)", "H(0)": "DC gain", "H(\\infty)": "high-frequency gain",
                  "Z_{\\mathrm{in}}": "input impedance", "Z_{\\mathrm{out}}": "output impedance"}


def equations(st: StageResult, ideal: StageResult | None = None) -> list[tuple[str, str]]:
    """(words, LaTeX equation) for each closed form of one view, in report order.

    Parameters
    ----------
    st : StageResult
        The view, ``analysis.loaded`` or ``analysis.ideal``.
    ideal : StageResult, optional
        For the loaded view, the ideal one (a quantity may read as the ideal one times a factor).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> equations(analyse(catalogue.build("rc-lowpass"), sensitivity=False).ideal)[0]
    ('transfer function', 'H(s) = \\\\frac{1}{C_{1} R_{1} s + 1}')
    """
    return [(EQUATION_WORDS.get(lhs, ""), f"{lhs} = {rhs}") for lhs, rhs in stage_equations(st, ideal) if rhs is not None]


def has_fixtures(a: Analysis) -> bool:
    """True when the circuit has a source resistance or a load (loaded and ideal differ in principle).

    Parameters
    ----------
    a : Analysis
        The result of :func:`symfilt.analysis.stage.analyse`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> has_fixtures(analyse(catalogue.build("rc-lowpass", source="none", load="none"), sensitivity=False))
    False
    """
    c = a.circuit
    return c.source.present or c.load_resistance.present or c.load_capacitance.present


def views(a: Analysis) -> tuple:
    """The views a note shows, as (key, heading): loaded and ideal, or one when there are no fixtures.

    Parameters
    ----------
    a : Analysis
        The result of :func:`symfilt.analysis.stage.analyse`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> [k for k, _ in views(analyse(catalogue.build("rc-lowpass"), sensitivity=False))]
    ['loaded', 'ideal']
    """
    return _VIEWS if has_fixtures(a) else (("ideal", "The stage (no source or load fixtures)"),)


def assumptions(a: Analysis) -> list[str]:
    """The assumptions behind the numbers, as sentences.

    Parameters
    ----------
    a : Analysis
        The result of :func:`symfilt.analysis.stage.analyse`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> assumptions(analyse(catalogue.build("rc-lowpass"), sensitivity=False))[0]
    'Passive stage: no op-amps.'
    """
    c = a.circuit
    out = []
    amps = [p for p in c.parts if p.kind == "opamp"]
    if not amps:
        out.append("Passive stage: no op-amps.")
    for p in amps:
        if p.model == "ideal":
            plain = not any(param.optional for _n, param, _v in opamp_parameters(p))
            out.append(f"{p.name} is an ideal op-amp: infinite open-loop gain and bandwidth, "
                       + ("no input current, zero output impedance, " if plain else "")
                       + "and no supply, swing, current or slew limits.")
        elif p.model == "gain":
            out.append(f"{p.name} has a finite open-loop gain A_{p.name}, flat with frequency; otherwise ideal.")
        elif p.model == "integrator":
            out.append(f"{p.name} has an integrator open-loop gain A(s) = 2π·GBW/s (infinite at DC), "
                       f"with GBW = GBW_{p.name}; otherwise ideal.")
        else:
            second = f" · 2π·P2/(s + 2π·P2), P2 = P2_{p.name}" if p.model == "two-pole" else ""
            out.append(f"{p.name} has a {p.model} open-loop gain A(s) = A0·2π·GBW/(A0·s + 2π·GBW){second}, "
                       f"with A0 = A_{p.name} and GBW = GBW_{p.name}; otherwise ideal.")
        extras = [f"{param.meaning} {name}" for name, param, _v in opamp_parameters(p) if param.optional]
        if extras:
            out.append(f"{p.name} also has its " + ", ".join(extras) + " (the output resistance sits between "
                       "the op-amp's internal source and its output pin, inside the feedback loop).")
    fixtures = [name for name, on in (("source resistance R_s", c.source.present),
                                      ("load resistance R_L", c.load_resistance.present),
                                      ("load capacitance C_L", c.load_capacitance.present)) if on]
    if fixtures:
        listed = fixtures[0] if len(fixtures) == 1 else ", ".join(fixtures[:-1]) + " and " + fixtures[-1]
        out.append("Loaded means as connected, with the " + listed + " of the circuit. "
                   "Ideal means the stage alone: R_s → 0, R_L → ∞, C_L → 0, taken as exact limits.")
    else:
        out.append("The circuit has no source resistance and no load: it is driven by an ideal source into "
                   "an open output, so loaded and ideal are the same.")
    out.append("Parts are linear and exact at their nominal values: no tolerance, drift or parasitics.")
    out.append("The cutoff is the frequency where the gain has fallen by a factor √2 from the pass-band gain "
               "(the DC gain, or the high-frequency gain of a high-pass).")
    out.append("The sensitivity of a quantity y to a part x is S = (x/y)·∂y/∂x: the per-cent change of y "
               "for a one per-cent change of x.")
    return out


def cautions(a: Analysis) -> list[str]:
    """The cautions every note carries.

    Parameters
    ----------
    a : Analysis
        The result of :func:`symfilt.analysis.stage.analyse`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> any("bench" in c for c in cautions(analyse(catalogue.build("rc-lowpass"), sensitivity=False)))
    True
    """
    amps = any(p.kind == "opamp" for p in a.circuit.parts)
    out = []
    shaky = [view for view in ("loaded", "ideal") if a.numeric.get(view, {}).get("stability") in ("marginal", "unstable")]
    if shaky:
        out.append("At these values the " + " and ".join(shaky) + " stage has poles on or to the right of the "
                   "jω axis: it would oscillate or latch, and its gains and cutoff do not describe a filter.")
    for loop in a.loops:
        if loop.loaded.margin_low or loop.ideal.margin_low:
            pm = min(v.numbers["phase_margin_deg"] for v in (loop.loaded, loop.ideal) if v.margin_low)
            out.append(f"{loop.opamp}'s loop has a phase margin of {pm:.1f}°, below the 45° of common practice: "
                       "expect peaking and ringing, or oscillation at 0° or less.")
    out.append("Verify the stage on the bench, with the real source and load, before committing the design.")
    if amps:
        out.append("Respect each op-amp's supply range, output swing and output current limit: a heavy "
                   "load or a large load capacitance can exceed them where the small-signal model sees no problem.")
    else:
        out.append("A passive stage takes its drive from the source and passes its load back to it: respect "
                   "the supply, output swing and output current limits of the amplifiers around it.")
    out.append("For mains-connected or high-voltage equipment, follow local codes and licensed practice.")
    return out


def sweep(a: Analysis, fmin=None, fmax=None, points=None):
    """Bode sweep data for a note, or ``(None, reason)`` when a symbol has no value.

    Parameters
    ----------
    a : Analysis
        The result of :func:`symfilt.analysis.stage.analyse`.
    fmin, fmax : float, optional
        Sweep range in Hz (default: around the marked frequencies).
    points : int, optional
        Number of frequencies (default ``DEFAULT_POINTS``).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> sweep(analyse(catalogue.build("rc-lowpass", R1=None), sensitivity=False))
    (None, 'no value for R1')
    """
    from symfilt.analysis.bode import DEFAULT_POINTS, bode_data, missing_values

    missing = missing_values(a.ideal.transfer, a.circuit.values())  # a symbolic fixture leaves out the loaded curve only
    if missing:
        return None, "no value for " + ", ".join(missing)
    return bode_data(a, None, fmin, fmax, points or DEFAULT_POINTS), ""


def opamp_error_lines(e) -> list[str]:
    """The op-amp error as sentences for a note: DC gain and cutoff, real against ideal, errors in % (ppm when tiny).

    Parameters
    ----------
    e : OpampError or None
        The result of :func:`symfilt.design.opamp_error.opamp_error` (None gives no lines).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.opamp_error import opamp_error
    >>> c = catalogue.build("inverting-lowpass").with_opamp_model("gain", gain="100k")
    >>> opamp_error_lines(opamp_error(c, None))[1]
    'DC gain: -2.075 with real op-amps against -2.075 with ideal ones, error -30.75 ppm (first-order estimate -30.75 ppm).'
    """
    from symfilt.export.design_report import relative_error_text
    from symfilt.export.findings import describe_all

    if e is None:
        return []
    what = "the op-amps as given" if e.model == "as given" else f"every op-amp on the {e.model} model"
    out = [f"Real against ideal op-amps ({what} against ideal op-amps without rout, rin or cin), loaded."]
    for key, label, unit in (("dc_gain", "DC gain", ""), ("cutoff_hz", "Cutoff", "Hz")):
        n = e.numeric.get(key)
        if not n:
            continue
        fo = "" if n.get("first_order") is None else f" (first-order estimate {relative_error_text(n['first_order'])})"
        out.append(f"{label}: {show_number(n['real'], unit)} with real op-amps against {show_number(n['ideal'], unit)} "
                   f"with ideal ones, error {relative_error_text(n['error'])}{fo}.")
    out += [x[:1].upper() + x[1:] + "." for x in describe_all(e.notes)]
    return out

