"""Text and JSON of the design commands: size, spread, drive, and the op-amp error.

The JSON dicts carry every key DESIGN.md lists for ``size``, ``spread`` and
``drive`` (plus a few more); numbers are floats in SI base units, expressions are
sympy ``str()`` text, and a number that is not finite becomes null.
"""

from __future__ import annotations

import io
import math
from pathlib import Path

import sympy

from symfilt.errors import OutputError
from symfilt.model.values import format_value
from symfilt.model.stamps import SOURCE_NODE
from symfilt.export.text import one_line
from symfilt.export.findings import describe, describe_all
from symfilt.export.json import json_float

_PART_UNITS = {"resistor": "Ω", "capacitor": "F", "inductor": "H"}
_QUANTITY_UNITS = {"cutoff": "Hz", "w0": "Hz", "q": "", "dc-gain": ""}
_SPREAD_LABELS = {"cutoff_hz": ("cutoff", "Hz"), "f0_hz": ("f0", "Hz"), "q": ("Q", ""), "dc_gain": ("DC gain", "")}


def _s(e):
    return None if e is None else str(e)


def _fmt(x, unit: str = "", digits: int = 4) -> str:
    if x is None or (isinstance(x, float) and not math.isfinite(x)):
        return "—"
    if unit:
        return format_value(x, unit, digits)
    return f"{float(x):.{digits}g}"


def _pct(x, digits: int = 3) -> str:
    return "—" if x is None else f"{x:+.{digits}g} %"


# --- size -------------------------------------------------------------------------

def size_dict(r) -> dict:
    """A :class:`~symfilt.design.sizing.SizeResult` as a JSON-ready dict (DESIGN.md ``size``).

    Parameters
    ----------
    r : SizeResult
        The result of :func:`symfilt.design.sizing.size`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.sizing import size
    >>> d = size_dict(size(catalogue.build("rc-lowpass"), ("cutoff", 2000), "R1"))
    >>> d["vary"], d["target"], d["series"], [n["value"] for n in d["neighbours"]]
    ('R1', {'quantity': 'cutoff', 'value': 2000.0, 'unit': 'Hz'}, 'E24', [4700.0, 5100.0])
    """
    first = r.vary[0]
    return {
        "vary": first,
        "target": {"quantity": r.quantity, "value": float(r.target), "unit": _QUANTITY_UNITS[r.quantity] or None},
        "exact": _s(r.exact),
        "exact_note": describe(r.exact_note) or None,
        "value": json_float(r.value),
        "method": r.method,
        "solutions": [json_float(v) for v in r.solutions],
        "series": r.series,
        "neighbours": [{"value": json_float(n.values[first]), "loaded": json_float(n.loaded),
                        "ideal": json_float(n.ideal), "error_pct": json_float(n.error_pct), "ideal_error_pct": json_float(n.ideal_error_pct),
                        "values": {k: json_float(v) for k, v in n.values.items()}} for n in r.neighbours],
        "held_in_ratio": {k: str(v) for k, v in r.ratio.items()} if len(r.vary) > 1 else None,
        "present": json_float(r.present),
        "notes": describe_all(r.notes),
    }


#: Fixture symbols a sized part's closed form is split over, and the
#: largest expression (characters) tried.
_FIXTURES = ("R_s", "R_L", "C_L")
_SPLIT_LIMIT = 400


def solution_form(expr):
    """The shortest of a closed form and its split over each fixture symbol, checked equal.

    A part sized for a target usually reads best as the ideal part plus or minus what a fixture
    takes: ``R_L/(4000·pi·C1·R_L - 1) - R_s`` rather than one fraction over a negative
    denominator. The split over x is the quotient of the numerator by the denominator as
    polynomials in x, each power's coefficient cancelled, plus the remainder over the
    denominator; a form with a root in it is left as it is. Each candidate is checked equal to
    ``expr`` (``sympy.cancel`` of the difference).

    Parameters
    ----------
    expr : sympy.Expr
        The closed form.

    Returns
    -------
    sympy.Expr
        Equal to ``expr``.

    Examples
    --------
    >>> import sympy
    >>> C1, R_L, R_s = sympy.symbols("C1 R_L R_s", positive=True)
    >>> solution_form(-(4000*sympy.pi*C1*R_L*R_s - R_L - R_s)/(4000*sympy.pi*C1*R_L - 1))
    R_L/(4000*pi*C1*R_L - 1) - R_s
    """
    if len(str(expr)) > _SPLIT_LIMIT or any(not p.exp.is_Integer for p in expr.atoms(sympy.Pow)):
        return expr
    best, size = expr, len(one_line(expr))
    num, den = sympy.fraction(sympy.cancel(expr))
    for x in sorted((x for x in expr.free_symbols if x.name in _FIXTURES), key=lambda x: x.name):
        try:
            quo, rem = sympy.div(sympy.Poly(num, x), sympy.Poly(den, x))
        except sympy.PolynomialError:
            continue
        if quo.is_zero:
            continue
        c = sympy.Add(*[sympy.cancel(k) * x**e for (e,), k in quo.terms()]) + sympy.cancel(rem.as_expr() / den)
        n = len(one_line(c))
        if n < size and sympy.cancel(c - expr) == 0:
            best, size = c, n
    return best


def _exact_target(target) -> str:
    """`` (√2/2)`` after a target that is not a terminating decimal (a recognised or named form)."""
    q = target.q if getattr(target, "is_Rational", False) else None
    while q and q % 2 == 0:
        q //= 2
    while q and q % 5 == 0:
        q //= 5
    return "" if q == 1 else f" ({one_line(target)})"


def size_text(r) -> str:
    """A :class:`~symfilt.design.sizing.SizeResult` as a plain-text report.

    Parameters
    ----------
    r : SizeResult
        The result of :func:`symfilt.design.sizing.size`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.sizing import size
    >>> print(size_text(size(catalogue.build("rc-lowpass"), ("cutoff", 2000), "R1")))  # doctest: +ELLIPSIS
    Size R1 for a loaded cutoff of 2 kHz
      exact      R1 = ...
      value      R1 = 5.067 kΩ  (closed form)
    ...
    """
    first = r.vary[0]
    unit = _PART_UNITS.get(r.kinds.get(first, "resistor"), "")
    qunit = _QUANTITY_UNITS[r.quantity]
    held = ""
    if len(r.vary) > 1:
        held = " (with " + ", ".join(f"{n} = {one_line(r.ratio[n])}·{first}" for n in r.vary[1:]) + ")"
    lines = [f"Size {first}{held} for a loaded {r.quantity} of {_fmt(float(r.target), qunit)}{_exact_target(r.target)}"]
    if r.exact is not None:
        lines.append(f"  exact      {first} = {one_line(solution_form(r.exact))}")
    else:
        lines.append(f"  exact      none: {describe(r.exact_note)}")
    lines.append(f"  value      {first} = {_fmt(r.value, unit)}  ({r.method})")
    if len(r.solutions) > 1:
        lines.append("  also       " + ", ".join(_fmt(v, unit) for v in r.solutions if v != r.value))
    if r.present is not None:
        lines.append(f"  now        {r.quantity} = {_fmt(r.present, qunit)} with the present values")
    lines.append("")
    head = f"  {r.series:<12}{'loaded':>12}{'error':>11}{'ideal':>12}{'error':>11}"
    lines.append(head)
    for n in r.neighbours:
        lines.append(f"  {_fmt(n.values[first], unit):<12}{_fmt(n.loaded, qunit):>12}{_pct(n.error_pct):>11}"
                     f"{_fmt(n.ideal, qunit):>12}{_pct(n.ideal_error_pct):>11}")
        for other in r.vary[1:]:
            lines.append(f"    {other} = {_fmt(n.values[other], _PART_UNITS.get(r.kinds.get(other), ''))}")
    for note in describe_all(r.notes):
        lines.append(f"note: {note}")
    return "\n".join(lines) + "\n"


# --- spread -----------------------------------------------------------------------

_STAT_KEYS = ("nominal", "mean", "std", "p1", "p50", "p99", "worst_low", "worst_high")


def spread_dict(r) -> dict:
    """A :class:`~symfilt.design.spread.SpreadResult` as a JSON-ready dict (DESIGN.md ``spread``).

    Parameters
    ----------
    r : SpreadResult
        The result of :func:`symfilt.design.spread.spread`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.spread import spread
    >>> d = spread_dict(spread(catalogue.build("rc-lowpass"), {"R": 0.01}, runs=500, seed=3))
    >>> d["runs"], d["seed"], sorted(d["quantities"]["cutoff_hz"])[:4]
    (500, 3, ['corner_high', 'corner_low', 'linear_high', 'linear_low'])
    """
    quantities = {}
    for k, q in r.quantities.items():
        row = {key: json_float(getattr(q, key)) for key in _STAT_KEYS}
        row.update({"worst_method": q.worst_method, "linear_low": json_float(q.linear_low),
                    "linear_high": json_float(q.linear_high), "corner_low": json_float(q.corner_low), "corner_high": json_float(q.corner_high),
                    "std_linear": json_float(q.std_linear), "undefined": q.undefined})
        quantities[k] = row
    return {"runs": r.runs, "seed": r.seed, "distribution": r.distribution,
            "tolerances": {k: json_float(v) for k, v in r.tolerances.items()}, "quantities": quantities,
            "sensitivities": {k: {n: json_float(v) for n, v in row.items()} for k, row in r.sensitivities.items()},
            "notes": describe_all(r.notes)}


def spread_text(r) -> str:
    """A :class:`~symfilt.design.spread.SpreadResult` as a plain-text table.

    Parameters
    ----------
    r : SpreadResult
        The result of :func:`symfilt.design.spread.spread`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.spread import spread
    >>> print(spread_text(spread(catalogue.build("rc-lowpass"), {"R": 0.01, "C": 0.05}, runs=500, seed=3)))  # doctest: +ELLIPSIS
    Tolerance spread, loaded: 500 runs, uniform, seed 3
      tolerances  R1 ±1 %, C1 ±5 %
    ...
    """
    dist = "uniform" if r.distribution == "uniform" else "normal (tolerance = 3 sigma)"
    lines = [f"Tolerance spread, loaded: {r.runs} runs, {dist}, seed {r.seed}",
             "  tolerances  " + ", ".join(f"{n} ±{v * 100:g} %" for n, v in r.tolerances.items()), ""]
    cols = ("nominal", "mean", "std", "p1", "p50", "p99", "worst low", "worst high")
    lines.append(f"  {'':<9}" + "".join(f"{c:>12}" for c in cols))
    for k, q in r.quantities.items():
        label, unit = _SPREAD_LABELS[k]
        vals = (q.nominal, q.mean, q.std, q.p1, q.p50, q.p99, q.worst_low, q.worst_high)
        lines.append(f"  {label:<9}" + "".join(f"{_fmt(v, unit):>12}" for v in vals))
    lines.append("")
    lines.append("  worst case     from corners (exact)        from sensitivities (linear)   std estimate")
    for k, q in r.quantities.items():
        label, unit = _SPREAD_LABELS[k]
        corner = f"{_fmt(q.corner_low, unit)} .. {_fmt(q.corner_high, unit)}" if q.corner_low is not None else "not enumerated"
        lin = f"{_fmt(q.linear_low, unit)} .. {_fmt(q.linear_high, unit)}"
        lines.append(f"  {label:<14} {corner:<27} {lin:<29} {_fmt(q.std_linear, unit)}")
        if q.undefined:
            lines.append(f"  {'':<14} {q.undefined} samples without a {label}")
    for note in describe_all(r.notes):
        lines.append(f"note: {note}")
    return "\n".join(lines) + "\n"


def progress_line(done: int, total: int, width: int = 30) -> str:
    """A one-line progress bar for stderr.

    Parameters
    ----------
    done, total : int
        Runs done and runs in all.
    width : int
        Characters of the bar.

    Examples
    --------
    >>> progress_line(5000, 20000, width=8)
    'spread [##......]  25% 5000/20000'
    """
    frac = 0.0 if total <= 0 else min(1.0, done / total)
    filled = int(round(frac * width))
    return f"spread [{'#' * filled}{'.' * (width - filled)}] {frac * 100:3.0f}% {done}/{total}"


def write_histogram(r, path, *, protect=()) -> None:
    """Draw a histogram of each spread quantity and save it atomically (png, svg or pdf by suffix).

    matplotlib is imported here only, its object-oriented interface alone: no pyplot, no
    backend switch.

    Parameters
    ----------
    r : SpreadResult
        The result of :func:`symfilt.design.spread.spread` (with samples).
    path : str or Path
        The image file; its suffix picks the format.
    protect : iterable of path
        Files that must not be overwritten (the inputs).

    Examples
    --------
    >>> import tempfile, pathlib
    >>> from symfilt import catalogue
    >>> from symfilt.design.spread import spread
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "spread.png"
    >>> write_histogram(spread(catalogue.build("rc-lowpass"), {"R": 0.01}, runs=500, seed=3), p)
    >>> p.read_bytes()[:4]
    b'\\x89PNG'
    """
    from symfilt.export.outfile import write_bytes_atomic

    fmt = Path(path).suffix.lower().lstrip(".")
    if fmt not in ("png", "svg", "pdf"):
        raise OutputError(str(path), f"unknown image type {fmt!r}", "end the file name in .png, .svg or .pdf")
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    keys = [k for k, q in r.quantities.items() if q.std > 0 and k in r.samples]
    if not keys:
        raise OutputError(str(path), "no quantity varies", "give tolerances to parts that set the response")
    fig = Figure(figsize=(6.4, 2.4 * len(keys)))
    FigureCanvasAgg(fig)  # our own canvas: the user's pyplot backend is never touched
    for i, k in enumerate(keys):
        ax = fig.add_subplot(len(keys), 1, i + 1)
        q = r.quantities[k]
        data = r.samples[k]
        data = data[[math.isfinite(v) for v in data]]
        ax.hist(data, bins=60, color="0.6")
        for x, style, label in ((q.nominal, "-", "nominal"), (q.p1, ":", "p1/p99"), (q.p99, ":", None),
                                (q.worst_low, "--", f"worst case ({q.worst_method})"), (q.worst_high, "--", None)):
            ax.axvline(x, color="k", linestyle=style, linewidth=1, label=label)
        label, unit = _SPREAD_LABELS[k]
        ax.set_xlabel(f"{label} ({unit})" if unit else label)
        ax.set_ylabel("samples")
        ax.legend(fontsize="small")
    fig.suptitle(f"{r.runs} runs, {r.distribution}, seed {r.seed}")
    fig.tight_layout()
    buf = io.BytesIO()
    fig.savefig(buf, format=fmt)
    write_bytes_atomic(path, buf.getvalue(), protect=protect)


# --- drive ------------------------------------------------------------------------

def drive_warnings(r) -> list[str]:
    """One line per limit an op-amp exceeds.

    Parameters
    ----------
    r : DriveResult
        The result of :func:`symfilt.design.drive.drive`.

    Examples
    --------
    >>> from symfilt.model.circuit import Circuit, Part
    >>> from symfilt.design.drive import drive
    >>> c = Circuit.build([Part.resistor("R1", "in", "n", "10k"), Part.resistor("R2", "n", "out", "22k"),
    ...                    Part.opamp("U1", "0", "n", "out", iout_max="1m")], load="2k")
    >>> drive_warnings(drive(c, 1, "1k"))
    ['U1 must deliver 1.2 mA peak, more than its iout_max of 1 mA']
    """
    out = []
    for d in r.opamps:
        if d.iout_exceeded:
            out.append(f"{d.name} must deliver {_fmt(d.iout_peak_a, 'A')} peak, more than its iout_max of "
                       f"{_fmt(d.iout_max_a, 'A')}")
        if d.slew_exceeded:
            out.append(f"{d.name} must slew {d.slew_v_per_us:.4g} V/µs, more than its slew rate of "
                       f"{d.slew_limit_v_per_us:.4g} V/µs")
    return out


def drive_dict(r) -> dict:
    """A :class:`~symfilt.design.drive.DriveResult` as a JSON-ready dict (DESIGN.md ``drive``).

    Parameters
    ----------
    r : DriveResult
        The result of :func:`symfilt.design.drive.drive`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.drive import drive
    >>> d = drive_dict(drive(catalogue.build("inverting-lowpass"), 1, 1000))
    >>> sorted(d["opamps"]["U1"])[:5]
    ['branches', 'iout_exceeded', 'iout_max_a', 'iout_peak_a', 'node']
    """
    return {
        "amplitude_v": r.amplitude,
        "frequency_hz": r.frequency,
        "opamps": {d.name: {"iout_peak_a": json_float(d.iout_peak_a), "vout_peak_v": json_float(d.vout_peak_v),
                            "slew_v_per_us": json_float(d.slew_v_per_us), "node": d.node,
                            "branches": [{"part": b.part, "to": "source" if b.node == SOURCE_NODE else b.node, "peak_a": json_float(b.peak_a)} for b in d.branches],
                            "other_peak_a": json_float(d.other_peak_a), "iout_max_a": json_float(d.iout_max_a),
                            "slew_limit_v_per_us": json_float(d.slew_limit_v_per_us), "iout_exceeded": d.iout_exceeded,
                            "slew_exceeded": d.slew_exceeded,
                            "vout_transfer": None if d.vout_transfer is None else str(d.vout_transfer.as_expr())}
                   for d in r.opamps},
        "warnings": drive_warnings(r),
    }


def drive_text(r) -> str:
    """A :class:`~symfilt.design.drive.DriveResult` as a plain-text report.

    Parameters
    ----------
    r : DriveResult
        The result of :func:`symfilt.design.drive.drive`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.drive import drive
    >>> print(drive_text(drive(catalogue.build("inverting-lowpass"), 1, 1000)))  # doctest: +ELLIPSIS
    Op-amp drive at 1 V peak (source), 1 kHz
    U1, output node out
      output voltage   1.74 V peak
      output current   950.7 µA peak
    ...
    """
    lines = [f"Op-amp drive at {_fmt(r.amplitude, 'V', 4)} peak (source), {_fmt(r.frequency, 'Hz')}"]
    for d in r.opamps:
        lines.append(f"{d.name}, output node {d.node}")
        lines.append(f"  output voltage   {_fmt(d.vout_peak_v, 'V')} peak")
        limit = "" if d.iout_max_a is None else f"   (iout_max {_fmt(d.iout_max_a, 'A')})"
        lines.append(f"  output current   {_fmt(d.iout_peak_a, 'A')} peak{limit}")
        for b in d.branches:
            to = "ground" if b.node == "0" else "the source" if b.node == SOURCE_NODE else f"node {b.node}"
            lines.append(f"    through {b.part:<8} to {to:<14} {_fmt(b.peak_a, 'A')}")
        if d.other_peak_a:
            lines.append(f"    into other active parts       {_fmt(d.other_peak_a, 'A')}")
        limit = "" if d.slew_limit_v_per_us is None else f"   (slew {d.slew_limit_v_per_us:.4g} V/µs)"
        lines.append(f"  slew rate needed {d.slew_v_per_us:.4g} V/µs{limit}")
    for w in drive_warnings(r):
        lines.append(f"WARNING: {w}")
    return "\n".join(lines) + "\n"


# --- op-amp error -----------------------------------------------------------------

def opamp_error_dict(e) -> dict:
    """A :class:`~symfilt.design.opamp_error.OpampError` as a JSON-ready dict.

    Parameters
    ----------
    e : OpampError
        The result of :func:`symfilt.design.opamp_error.opamp_error`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.opamp_error import opamp_error
    >>> d = opamp_error_dict(opamp_error(catalogue.build("inverting-lowpass"), "gain"))
    >>> d["dc_gain"]["first_order"]
    {'A_U1': '-(R1 + R2 + R_s)/(R1 + R_s)'}
    >>> e = opamp_error(catalogue.build("inverting-lowpass"), "gain", gain="100k")
    >>> n = opamp_error_dict(e)["numeric"]["dc_gain"]
    >>> round(n["error_percent"], 6), round(n["error"], 8)
    (-0.003075, -3.075e-05)
    """
    def block(numeric):
        if numeric is None:
            return None
        out = {k: json_float(v) for k, v in numeric.items()}
        for k in ("error", "first_order"):
            if k in numeric:
                out[f"{k}_percent"] = None if numeric[k] is None else json_float(100 * numeric[k])
        return out

    return {
        "model": e.model,
        "dc_gain": {"ideal": _s(e.dc_ideal), "real": _s(e.dc_real), "error": _s(e.dc_error),
                    "first_order": {k: _s(v) for k, v in e.dc_first_order.items()}},
        "cutoff": {"ideal": _s(e.cutoff_ideal), "real": _s(e.cutoff_real), "error": _s(e.cutoff_error),
                   "first_order": None if e.cutoff_first_order is None else
                   {k: _s(v) for k, v in e.cutoff_first_order.items()}},
        "numeric": {k: block(v) for k, v in e.numeric.items()},
        "notes": describe_all(e.notes),
    }


def _series_line(terms: dict | None) -> str:
    if terms is None:
        return "—"
    if not terms:
        return "0"
    return " + ".join(f"({one_line(c)})/{k}" for k, c in terms.items())


def relative_error_text(x: float | None) -> str:
    """A relative error for display: in % to 4 digits, in ppm when below 0.01 % in size; ``—`` for None.

    Parameters
    ----------
    x : float or None
        The relative error (real/ideal - 1).

    Examples
    --------
    >>> relative_error_text(-0.0123456), relative_error_text(3.075e-5), relative_error_text(None)
    ('-1.235 %', '30.75 ppm', '—')
    """
    if x is None:
        return "—"
    if abs(x) < 1e-4:
        return f"{x * 1e6:.4g} ppm"
    return f"{x * 100:.4g} %"


def opamp_error_text(e) -> str:
    """A :class:`~symfilt.design.opamp_error.OpampError` as a plain-text section.

    Parameters
    ----------
    e : OpampError
        The result of :func:`symfilt.design.opamp_error.opamp_error`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.opamp_error import opamp_error
    >>> print(opamp_error_text(opamp_error(catalogue.build("inverting-lowpass"), "gain", gain="100k")))  # doctest: +ELLIPSIS
    Op-amp error (gain model against ideal op-amps, loaded; relative)
    DC gain
      exact          ...
      first order    (-(R1 + R2 + R_s)/(R1 + R_s))/A_U1
      at the values  ideal -2.075, real -2.075, error -30.75 ppm, first-order estimate -30.75 ppm
    ...
    """
    ppm = relative_error_text
    what = "op-amps as given" if e.model == "as given" else f"{e.model} model"
    exact_only = any(n.kind == "opamp-error-exact-only" for n in e.notes)
    series = (lambda terms: "— (exact error only, see the note)") if exact_only else _series_line
    lines = [f"Op-amp error ({what} against ideal op-amps, loaded; relative)", "DC gain",
             f"  exact          {one_line(e.dc_error)}", f"  first order    {series(e.dc_first_order)}"]
    n = e.numeric.get("dc_gain")
    if n:
        lines.append(f"  at the values  ideal {_fmt(n['ideal'])}, real {_fmt(n['real'])}, error {ppm(n['error'])}, "
                     f"first-order estimate {ppm(n['first_order'])}")
    lines += ["Cutoff", f"  exact          {one_line(e.cutoff_error) if e.cutoff_error is not None else '—'}",
              f"  first order    {series(e.cutoff_first_order)}"]
    n = e.numeric.get("cutoff_hz")
    if n:
        lines.append(f"  at the values  ideal {_fmt(n['ideal'], 'Hz')}, real {_fmt(n['real'], 'Hz')}, "
                     f"error {ppm(n['error'])}, first-order estimate {ppm(n['first_order'])}")
    for note in describe_all(e.notes):
        lines.append(f"note: {note}")
    return "\n".join(lines) + "\n"


__all__ = ["drive_dict", "drive_text", "drive_warnings", "opamp_error_dict", "opamp_error_text", "progress_line",
           "relative_error_text",
           "size_dict", "size_text", "spread_dict", "spread_text", "write_histogram"]
