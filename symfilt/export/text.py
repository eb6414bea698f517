"""Plain-text (unicode) report of an analysis, for the terminal."""

from __future__ import annotations

import functools

import sympy
from sympy.printing.str import StrPrinter

from symfilt.analysis.numeric import tidy
from symfilt.model.circuit import S
from symfilt.analysis.stage import UNSTABLE_DROPS, Analysis, StageResult
from symfilt.model.values import format_value
from symfilt.engine.polybridge import smaller_than
from symfilt.export.common import parallel_display, sensitivity_quantities
from symfilt.export.correction import corrections
from symfilt.export.findings import describe
from symfilt.export.impedance_form import impedance_display
from symfilt.export.readable import readable
from symfilt.export.response_text import kind_rows, pole_zero_lines
from symfilt.export.transfer_text import LONG, transfer_drawing, transfer_line

_UNITS = {"resistor": "Ω", "capacitor": "F", "inductor": "H"}


class _TextPrinter(StrPrinter):
    """sympy's str printer with infinity written ∞ (the only rewrite; names print as they are)."""

    def _print_Infinity(self, expr):
        return "∞"

    def _print_NegativeInfinity(self, expr):
        return "-∞"

    def _print_ComplexInfinity(self, expr):
        return "∞"


@functools.lru_cache(maxsize=1024)
def one_line(expr) -> str:
    """An expression on one line: ``·`` for products, ``^`` for powers, ``||`` for parallel (memoised).

    Parameters
    ----------
    expr : sympy.Expr or None
        The expression (None shows ``—``).

    Examples
    --------
    >>> R, C = sympy.symbols("R1 C1", positive=True)
    >>> one_line(1 / (R * C))
    '1/(C1·R1)'
    >>> one_line(None)
    '—'
    """
    if expr is None:
        return "—"
    if not smaller_than(expr, 4 * LONG):
        return "(large expression; see --format json or latex)"
    # the printer spells infinity ∞; names are never rewritten (a part Rfoo stays Rfoo)
    text = _TextPrinter().doprint(readable(expr))
    text = text.replace("**", "^").replace("*", "·")
    if len(text) > LONG:
        return f"({len(text)}-character expression; see --format json or latex)"
    return text


def pretty(expr) -> str:
    """A 2-D unicode rendering of an expression.

    Parameters
    ----------
    expr : sympy.Expr
        The expression.

    Examples
    --------
    >>> print(pretty(1 / (1 + sympy.Symbol("s"))))
      1  
    ─────
    s + 1
    """
    from sympy.printing.pretty.pretty_symbology import pretty_use_unicode

    from symfilt.export.pretty import Printer

    flag = pretty_use_unicode(True)  # as sympy.pretty does
    try:
        return Printer({"use_unicode": True, "wrap_line": False}).doprint(expr)
    finally:
        pretty_use_unicode(flag)


def _indent(text: str, pad: str = "    ") -> str:
    return "\n".join(pad + line for line in text.splitlines())


def number_text(x, unit: str = "") -> str:
    """A number with its unit in engineering notation; None (a division by zero) said in words.

    Parameters
    ----------
    x : float or None
    unit : str

    Examples
    --------
    >>> number_text(2088.4, "Hz"), number_text(None)
    ('2.088 kHz', 'undefined at these values')
    """
    if x is None:
        return "undefined at these values"
    return format_value(x, unit)


def _symbol_rows(a: Analysis) -> list[str]:
    rows = []
    table = a.circuit.symbols()
    width = max([7] + [len(info["role"]) for info in table.values()])
    for name, info in table.items():
        if info["role"] == "laplace":
            continue
        unit = {"source": "Ω", "load": "F" if name == "C_L" else "Ω"}.get(info["role"], "")
        if info["role"] == "part":
            unit = _UNITS.get(info.get("kind", ""), "")
        if info["role"] in ("opamp", "parameter"):
            unit = info.get("unit") or ""
        value = "symbolic" if info["value"] is None else format_value(info["value"], unit)
        if "tie" in info:  # a tied part: its expression, then the value it gives
            value = f"{name} = {info['tie']}" + ("" if info["value"] is None else f" ({value})")
        rows.append(f"  {name:<10} {info['role']:<{width}} {value}")
    return rows


def unvalued_names(circuit) -> list[str]:
    """The symbols a circuit gives no value (parts, fixtures, parameters; a tied part has its tie's).

    Parameters
    ----------
    circuit : Circuit

    Examples
    --------
    >>> from symfilt import catalogue
    >>> unvalued_names(catalogue.build("rc-lowpass", source="symbol"))
    ['R_s']
    """
    return [n for n, info in circuit.symbols().items()
            if info["value"] is None and info["role"] != "laplace" and "tie" not in info]


def numbers_rows(a: Analysis) -> list[str]:
    """The rows of "Numbers at the given values": loaded, ideal and their ratio.

    Parameters
    ----------
    a : Analysis

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> numbers_rows(analyse(catalogue.build("rc-lowpass"), sensitivity=False))[1]
    '  cutoff               2.088 kHz       1.539 kHz         1.3568'
    """
    lo, hi = a.numeric.get("loaded", {}), a.numeric.get("ideal", {})
    rows = [f"  {'':<14}{'loaded':>16}{'ideal':>16}{'loaded/ideal':>15}"]

    def add(label, key, unit="", raw=False):
        if key not in lo and key not in hi:
            return

        def f(d, st):
            if key not in d:
                if d.get("stability") == "unstable" and key in UNSTABLE_DROPS:
                    return "unstable"
                if (key, None) in (("f0_hz", st.form.w0), ("q", st.form.q)):
                    return "—"
                if key in ("cutoff_hz", "zout_cutoff_ohm") and not (st.transfer.free_symbols() - {S} - set(a.circuit.values())):
                    return "—"  # every value is there: this view has no cutoff (a notch, an all-pass)
                return "needs values"
            v = d[key]
            if v is None and key == "cutoff_hz" and d.get("no_cutoff"):
                return "none"
            if v is None:
                return "undefined"
            return f"{v:.6g}" if raw else format_value(v, unit)

        ratio = a.ratio(key)
        rows.append(f"  {label:<14}{f(lo, a.loaded):>16}{f(hi, a.ideal):>16}{'' if ratio is None else f'{ratio:.4f}':>15}")

    add("cutoff", "cutoff_hz", "Hz")
    add("low edge", "low_edge_hz", "Hz")
    add("high edge", "high_edge_hz", "Hz")
    add("bandwidth", "bandwidth_hz", "Hz")
    add("notch", "notch_hz", "Hz")
    add("f0", "f0_hz", "Hz")
    add("Q", "q", raw=True)
    add("DC gain", "dc_gain", raw=True)
    if "dc_gain_db" in lo or "dc_gain_db" in hi:
        f = lambda v: "—" if v is None else f"{v:.3f} dB"
        rows.append(f"  {'DC gain (dB)':<14}{f(lo.get('dc_gain_db')):>16}{f(hi.get('dc_gain_db')):>16}")
    add("group delay", "group_delay_dc_s", "s")
    add("peaking (dB)", "peaking_db", raw=True)
    add("ripple (dB)", "ripple_db", raw=True)
    add("Zout at DC", "zout_dc_ohm", "Ω")
    add("|Zout| at fc", "zout_cutoff_ohm", "Ω")
    rows += _hf_rows(lo, hi)
    if "stability" in lo or "stability" in hi:
        rows.append(f"  {'poles':<14}{lo.get('stability', '—'):>16}{hi.get('stability', '—'):>16}")
    rows += kind_rows(lo, hi)
    if len(rows) == 1:
        return []
    return rows + _number_notes(a, lo, hi)


def _number_notes(a: Analysis, lo: dict, hi: dict) -> list[str]:
    """The lines under the numbers table: what undefined, none and needs values mean, and warnings."""
    rows = []
    if any(v is None for d in (lo, hi) for k, v in d.items()
           if k not in ("dc_gain_db", "hf_gain_db", "notch_depth_db") and not (k == "cutoff_hz" and d.get("no_cutoff"))):
        rows.append("  undefined: the formula divides by zero at these values (the formulas above still hold)")
    if lo.get("no_cutoff") or hi.get("no_cutoff"):
        rows.append("  none: |H| never falls 3 dB below its pass-band gain at these values (no cutoff)")
    missing = unvalued_names(a.circuit)
    if missing and any(k not in d for d in (lo, hi) for k in ("cutoff_hz", "dc_gain") if k in lo or k in hi):
        rows.append("  needs values: give " + ", ".join(missing) + " a value for these numbers")
    for key, d in (("loaded", lo), ("ideal", hi)):
        if d.get("stability") == "marginal":
            rows.append(f"  WARNING ({key}): poles on the jω axis: the stage oscillates at these values")
    return rows


def _hf_rows(lo: dict, hi: dict) -> list[str]:
    """The high-frequency end: the stop-band floor |H(j∞)| (plain and in dB) and the slope far above the poles."""
    rows = []
    if "hf_gain" in lo or "hf_gain" in hi:
        f = lambda d: f"{d['hf_gain']:.6g}" if "hf_gain" in d else "no floor"
        rows.append(f"  {'HF floor':<14}{f(lo):>16}{f(hi):>16}")
        f = lambda d: f"{d['hf_gain_db']:.3f} dB" if "hf_gain_db" in d else "—"
        rows.append(f"  {'HF floor (dB)':<14}{f(lo):>16}{f(hi):>16}")
    if "hf_slope_db_per_decade" in lo or "hf_slope_db_per_decade" in hi:
        f = lambda d: "—" if "hf_slope_db_per_decade" not in d else f"{d['hf_slope_db_per_decade']} dB/dec"
        rows.append(f"  {'HF slope':<14}{f(lo):>16}{f(hi):>16}")
    return rows


def _sens_table(a: Analysis, st: StageResult, key: str) -> list[str]:
    if not st.sensitivity:
        return []
    numeric = a.numeric.get(key, {}).get("sensitivity", {})
    # a cutoff found numerically has numeric sensitivities only (the implicit derivative of the root)
    quantities = sensitivity_quantities({q: st.sensitivity.get(q) or numeric.get(q) for q in {*st.sensitivity, *numeric}})
    if not quantities:
        return ["  no closed-form quantity to take sensitivities of"]
    out = []
    label = {"gain": "K", "magnitude": "|H(jω)|"}
    if all(q in numeric for q in quantities):
        first = next((q for q in quantities if st.sensitivity.get(q)), quantities[0])
        names = list(numeric[first])
        out.append(f"  {'S_x^y':<10}" + "".join(f"{label.get(q, q):>12}" for q in quantities))
        for n in names:
            out.append(f"  {n:<10}" + "".join(f"{numeric[q][n]:>12.4f}" if numeric[q].get(n) is not None
                                               else f"{'undefined':>12}" for q in quantities))
    else:
        quantities = [q for q in quantities if st.sensitivity.get(q)]
        names = list(st.sensitivity[quantities[0]]) if quantities else []
        for q in quantities:
            out.append(f"  of {label.get(q, q)}:")
            for n in names:
                out.append(f"    S_{n} = {one_line(st.sensitivity[q][n])}")
    keys = [k for k in ("gain", "magnitude") if k in quantities]
    if keys:
        words = {"gain": "K = pass-band gain",
                 "magnitude": "|H(jω)| at " + ("" if a.at_hz is None else format_value(a.at_hz, "Hz"))}
        out.append("  " + "; ".join(words[k] for k in keys))
    return out


def stage_formulas(st: StageResult, ideal: StageResult | None = None) -> list[str]:
    """The formula lines of one view: kind and order, K, w0, Q, cutoff, gains, Zin, Zout.

    Parameters
    ----------
    st : StageResult
        The view, ``analysis.loaded`` or ``analysis.ideal``.
    ideal : StageResult, optional
        For the loaded view, the ideal one: a quantity that reads shorter as the ideal one
        times a factor gets a second line ``= w0 (ideal) · factor``.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> stage_formulas(analyse(catalogue.build("rc-lowpass"), sensitivity=False).ideal)[:2]
    ['  kind: lowpass, order 1', '  K          = 1']
    """
    f = st.form
    rows = [f"  kind: {f.kind}, order {f.order}"]
    if f.order == 2 and f.kind in ("lowpass", "highpass") and st.cutoff.has_value:
        op = "·" if f.kind == "lowpass" else "/"
        rows.append(f"  {'cutoff ωc':<10} = w0{op}√(x + √(x² + 1)), x = 1 − 1/(2·Q²)")
        cut = None  # shown through w0 and Q: the closed form itself is never built here
    else:
        cut = st.cutoff.value
    zero = None
    if f.order == 1 and f.kind == "general" and cut is not None and "zero" in f.factors:
        zero = tidy(sympy.Mul(*[p**e for p, e in f.factors["zero"]]))
        rows.append(f"  {'cutoff ωc':<10} = w0/√(1 − 2·(w0/wz)²), below the DC gain (a first order with a zero)")
        cut = None
    items = [("K", f.gain), ("w0", f.w0), ("wz", zero), ("Q", f.q), ("tau", f.tau), ("cutoff ωc", cut),
             ("DC gain", st.transfer.dc_gain()), ("HF gain", st.transfer.hf_gain()),
             ("Zin", st.zin), ("Zout", st.zout)]
    shown = [label for label, e in items if e is not None]
    factors = corrections(st, ideal, one_line, shown) if ideal is not None else {}
    for label, e in items:
        if label in factors and e is not None:
            rows += [f"  {label:<10} = {one_line(e)}", f"  {'':<10} = {label} (ideal) · {one_line(factors[label])}"]
            continue
        if label in ("Zin", "Zout"):
            if e is None:  # a probe's view has no impedances
                continue
            if not e.infinite and e.ratio.terms > LONG // 4:  # far past one line: not built in sympy
                rows.append(f"  {label:<10} = ({e.ratio.terms}-term expression; see --format json or latex)")
                continue
            e = impedance_display(e)
        if e is not None:
            rows.append(f"  {label:<10} = {one_line(e)}")
    if st.cutoff.edges is not None:
        rows.append(f"  {'band edges':<10} = {one_line(st.cutoff.edges[0])}  …  {one_line(st.cutoff.edges[1])}")
        rows.append(f"  {'bandwidth':<10} = {one_line(st.cutoff.bandwidth)}")
    if not st.cutoff.has_value and st.cutoff.reason:
        rows.append(f"  cutoff: no closed form ({describe(st.cutoff.reason)})")
    return rows


def _fixtures_line(a: Analysis) -> str:
    c = a.circuit
    gone = []
    if c.source.present:
        gone.append("R_s → 0")
    if c.load_resistance.present:
        gone.append("R_L → ∞")
    if c.load_capacitance.present:
        gone.append("C_L → 0")
    return ", ".join(gone) if gone else "no source or load fixtures: loaded and ideal are the same"


def render(a: Analysis, quantity: str | None = None, load_limits=None) -> str:
    """The text report of ``symfilt derive``.

    Parameters
    ----------
    a : Analysis
    quantity : str, optional
        Only this quantity (as ``symfilt derive --quantity`` names it: transfer, dc-gain,
        cutoff, w0, q, zin, zout, sensitivity).
    load_limits : sequence of LoadLimit, optional

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> print(render(analyse(catalogue.build("rc-lowpass")), "cutoff"))
    cutoff ωc, loaded = 1/(C1·((R1 + R_s) || R_L))
    cutoff ωc, ideal  = 1/(C1·R1)
    cutoff (Hz), loaded = 2.088 kHz, ideal = 1.539 kHz
    <BLANKLINE>
    """
    if quantity:
        text = _render_quantity(a, quantity)
        if load_limits:
            text += "Load limits\n" + "".join(line + "\n" for line in _limit_lines(a, load_limits))
        return text
    c = a.circuit
    out = [f"symfilt — {c.title or 'circuit'}", f"input {c.input} → output {c.output}; ideal means {_fixtures_line(a)}", "",
           "Symbols"]
    out += _symbol_rows(a)
    for key, st in (("loaded", a.loaded), ("ideal", a.ideal)):
        out += ["", f"Transfer function H(s) = V({c.output})/V(source), {key}"]
        out.append(_indent(transfer_drawing(st.transfer)))
        out += [""] + stage_formulas(st, a.ideal if key == "loaded" else None)
    rows = numbers_rows(a)
    if rows:
        out += ["", "Numbers at the given values"]
        out += [f"  UNSTABLE ({key}): poles in the right half-plane; the numbers below do not describe a working "
                "circuit, and no cutoff is given" for key in ("loaded", "ideal")
                if a.numeric.get(key, {}).get("stability") == "unstable"]
        out += rows
    poles = pole_zero_lines(a.numeric)
    if poles:
        out += [""] + poles
    for key, st in (("loaded", a.loaded), ("ideal", a.ideal)):
        table = _sens_table(a, st, key)
        if table:
            out += ["", f"Sensitivity S_x^y = (x/y)·∂y/∂x, {key}"] + table
    if a.rules:
        out += ["", "Sum-rule self-check (Schaumann & Van Valkenburg, Design of Analog Filters; loaded)"]
        for r in a.rules:
            out.append(f"  Σ over {r.group} of S^{r.quantity} = {one_line(r.total)} (expected {r.expected}): "
                       + ("holds" if r.holds else "DOES NOT HOLD"))
    elif a.rules_note:
        out += ["", describe(a.rules_note)]
    if load_limits:
        out += ["", "Load limits"] + _limit_lines(a, load_limits)
    return "\n".join(out) + "\n"


def render_limit(lim) -> str:
    """One line for a load limit.

    Parameters
    ----------
    lim : LoadLimit
        One bound from :func:`symfilt.analysis.loading.load_limits`.

    Examples
    --------
    >>> from symfilt.analysis.loading import LoadLimit
    >>> render_limit(LoadLimit("R_L", "min", 0.02, 235000.0, sympy.Symbol("R1") * 50, ""))
    '  R_L ≥ 235 kΩ keeps the cutoff within 2% of ideal  (R_L ≥ 50·R1)'
    """
    unit = "F" if lim.fixture == "C_L" else "Ω"
    if lim.value is None:
        return f"  {lim.fixture}: {describe(lim.note)}" + _against_actual(lim, unit)
    op = "≥" if lim.bound == "min" else "≤"
    text = f"  {lim.fixture} {op} {format_value(lim.value, unit)} keeps the cutoff within {lim.tolerance * 100:g}% of ideal"
    if lim.exact is not None:
        text += f"  ({lim.fixture} {op} {one_line(lim.exact)})"
    if lim.note:
        text += f"; {describe(lim.note)}"
    return text + _against_actual(lim, unit)


def render_combined(shift: float | None) -> str:
    """The last load-limit line: every fixture at its value together.

    Parameters
    ----------
    shift : float or None
        :func:`symfilt.analysis.loading.combined_shift`.

    Examples
    --------
    >>> render_combined(0.3568)
    '  all fixtures at their values together: the cutoff moves +35.7 % from ideal'
    """
    shown = "by an unknown amount (a number is missing)" if shift is None else f"{shift * 100:+.3g} %"
    return f"  all fixtures at their values together: the cutoff moves {shown} from ideal"


def _limit_lines(a: Analysis, load_limits) -> list[str]:
    from symfilt.analysis.loading import combined_shift

    return [render_limit(x) for x in load_limits] + [render_combined(combined_shift(a))]


def _against_actual(lim, unit: str) -> str:
    """``; actual 5 kΩ, 12.9x above the limit, alone it moves the cutoff -20.4 %``."""
    if lim.actual is None:
        return ""
    text = f"; actual {format_value(lim.actual, unit)}"
    if lim.factor is not None:
        text += (f", {lim.factor:.3g}x {'above' if lim.bound == 'max' else 'below'} the limit" if lim.factor > 1
                 else f", within the limit (factor {lim.factor:.3g})")
    if lim.shift is not None:
        text += f", alone it moves the cutoff {lim.shift * 100:+.3g} %"
    return text


def _render_quantity(a: Analysis, quantity: str) -> str:
    key = quantity.replace("-", "_")
    lines = []
    if key == "sensitivity":
        for k, st in (("loaded", a.loaded), ("ideal", a.ideal)):
            lines += [f"Sensitivity, {k}"] + _sens_table(a, st, k)
        return "\n".join(lines) + "\n"
    label = {"transfer": "H(s)", "dc_gain": "DC gain", "cutoff": "cutoff ωc", "w0": "w0", "q": "Q",
             "zin": "Zin", "zout": "Zout"}[key]
    for k, st in (("loaded", a.loaded), ("ideal", a.ideal)):
        e = st.quantities()[key]
        if key == "cutoff" and st.cutoff.edges is not None:
            lo_e, hi_e = st.cutoff.edges
            lines.append(f"band edges, {k:<6} = {one_line(lo_e)}  …  {one_line(hi_e)}")
            lines.append(f"bandwidth, {k:<6}  = {one_line(st.cutoff.bandwidth)}")
            continue
        if key == "cutoff" and e is None:
            lines.append(f"{label}, {k:<6} = no closed form ({describe(st.cutoff.reason)})")
            continue
        if key == "transfer":
            lines.append(f"{label}, {k:<6} = {transfer_line(st.transfer)}")
            continue
        if key in ("zin", "zout"):
            e = impedance_display(getattr(st, key))
        lines.append(f"{label}, {k:<6} = {one_line(e)}")
    if key == "cutoff" and "low_edge_hz" in a.numeric["loaded"]:
        f = lambda d, x: number_text(d.get(x), "Hz")
        lo, hi = a.numeric["loaded"], a.numeric["ideal"]
        lines.append(f"band edges (Hz), loaded = {f(lo, 'low_edge_hz')} … {f(lo, 'high_edge_hz')}, "
                     f"ideal = {f(hi, 'low_edge_hz')} … {f(hi, 'high_edge_hz')}")
    hz = {"cutoff": "cutoff_hz", "w0": "f0_hz", "q": "q", "dc_gain": "dc_gain"}.get(key)
    if hz:
        lo, hi = a.numeric["loaded"].get(hz), a.numeric["ideal"].get(hz)
        if lo is not None or hi is not None:
            unit = "Hz" if hz.endswith("_hz") else ""
            name = {"cutoff_hz": "cutoff (Hz)", "f0_hz": "f0 (Hz)"}.get(hz, label)
            f = (lambda v: number_text(v, unit)) if unit else (lambda v: "undefined" if v is None else f"{v:.6g}")
            lines.append(f"{name}, loaded = {f(lo)}, ideal = {f(hi)}")
    return "\n".join(lines) + "\n"
