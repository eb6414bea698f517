"""Numbers of a stage at the circuit's values: cutoff, f0, Q, gains, output impedance, stability,
sensitivities, and the high-frequency end of the response (its stop-band floor or its slope)."""

from __future__ import annotations

import decimal
import math
from typing import TYPE_CHECKING, Mapping

import sympy

from symfilt.model.circuit import S
from symfilt.analysis.network import NetworkFunction
from symfilt.analysis.numeric import band_edges, cutoff_from_coefficients, finite_float, passband_gain, trim
from symfilt.analysis.response import cutoff_sensitivities, pole_values, response_numbers
from symfilt.analysis.roots import exact_roots
from symfilt.analysis.exact_tables import CHAIN_DIGITS, PI_DIGITS, ExactTable
from symfilt.analysis.forms import cutoff_value
from symfilt.model.safe import as_sympy

if TYPE_CHECKING:
    from symfilt.analysis.stage import StageResult


def numeric_values(stage: StageResult, values: Mapping, *, targets_only: bool = False) -> dict:
    """Numbers for a stage at the circuit's values: cutoff_hz, f0_hz, q, dc_gain, dc_gain_db.

    A quantity whose symbols do not all have values is left out; one that is
    undefined at these values (division by zero) is None.

    Parameters
    ----------
    stage : StageResult
        One view (loaded or ideal) of an analysis.
    values : mapping
        Symbol -> exact number, as :meth:`Circuit.values` gives.
    targets_only : bool
        Only what a size target measures (cutoff, f0, Q, DC gain): no band edges, output
        impedance, HF floor or stability, and the response at the values only for a
        response without a standard form. For a solver that calls this hundreds of times.

    Returns
    -------
    dict
        Quantity name -> float or None (``stability`` -> str).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> c = catalogue.build("rc-lowpass")
    >>> a = analyse(c, sensitivity=False)
    >>> round(numeric_values(a.ideal, c.values())["cutoff_hz"], 2)
    1539.22
    """
    out: dict[str, float | None] = {}

    def known(e) -> bool:
        return e is not None and not (as_sympy(e).free_symbols - set(values))

    def num(e):
        return finite_float(as_sympy(e).xreplace(dict(values)))

    full = not targets_only or stage.form.kind == "general"
    if targets_only and not full:  # 30-digit floats: a root of an exact rational factors its integers
        values = {k: sympy.Float(v, 30) for k, v in values.items()}
    response = response_numbers(stage.transfer, values) if full and stage.transfer.order() >= 1 else {}
    out.update(_cutoff_number(stage, values, response))
    if not targets_only and stage.cutoff.edges is not None and all(known(e) for e in stage.cutoff.edges):
        lo, hi = (num(e) for e in stage.cutoff.edges)
        out["low_edge_hz"] = None if lo is None else lo / (2 * math.pi)
        out["high_edge_hz"] = None if hi is None else hi / (2 * math.pi)
    if known(stage.form.w0):
        w0 = num(stage.form.w0)
        out["f0_hz"] = None if w0 is None else w0 / (2 * math.pi)
    if known(stage.form.q):
        out["q"] = num(stage.form.q)
    dc = stage.transfer.dc_gain()
    if known(dc):
        g = num(dc)
        out["dc_gain"] = g
        out["dc_gain_db"] = 20 * math.log10(abs(g)) if g not in (None, 0) else None
    for key, v in response.items():  # the closed forms' f0, Q and band edges win where they exist
        out.setdefault(key, v)
    if out.get("low_edge_hz") is not None and out.get("high_edge_hz") is not None:
        out.setdefault("bandwidth_hz", out["high_edge_hz"] - out["low_edge_hz"])
    if targets_only:
        return out
    if stage.zout is not None:  # None for a probe (an inner node has no load port)
        out.update(output_impedance_values(stage.zout, values, out.get("cutoff_hz")))
    out.update(high_frequency(stage, values))
    stab = stability(stage.transfer, values)
    if stab is not None:
        out["stability"] = stab
    return out


#: Kinds whose -3 dB point is not "the cutoff" (a notch has two edges around its null, an all-pass none).
NO_CUTOFF_KINDS = ("notch", "allpass")


def _cutoff_number(stage: StageResult, values: Mapping, response: Mapping | None = None) -> dict:
    """``cutoff_hz`` from the closed form when it has values, else found numerically.

    Every response of any order gets a numeric cutoff when its transfer function has all
    its values (the pass band by :func:`~symfilt.analysis.numeric.passband_gain`), except a
    band-pass (its two edges, numeric ones for a response with no pass band at DC or HF),
    a notch and an all-pass (by the symbolic kind, or by the kind at the values after exact
    cancellation in ``response``, :func:`~symfilt.analysis.response.response_numbers`: a
    balanced twin-T), and any response with a null on the jw axis. ``cutoff_hz`` None with ``no_cutoff`` True: the response never falls 3 dB below
    its pass-band gain.
    """
    cut = stage.cutoff
    closed, w = cut.has_value, None
    if closed:
        w = _closed_cutoff_number(stage.form, values)  # a float, without building the closed form
    if w is False:  # not every value rational: put the values into the closed form itself
        closed = not (as_sympy(cut.value).free_symbols - set(values))
        w = finite_float(as_sympy(cut.value).xreplace(dict(values))) if closed else None
    if closed:
        if w is not None or stage.form.order != 1:
            return {"cutoff_hz": None if w is None else w / (2 * math.pi)}
    elif cut.edges is not None or stage.form.kind in NO_CUTOFF_KINDS or stage.form.order < 1:
        return {}
    coeffs = stage.transfer.coefficient_values(values)  # None when a symbol it uses has no value
    if coeffs is None:
        return {}
    response = response or {}
    if response.get("kind") in NO_CUTOFF_KINDS or response.get("notch_null"):  # a twin-T: no single cutoff
        return {}
    if passband_gain(*coeffs)[0] is None:  # no pass band at DC or at HF: a band-pass shape
        edges = band_edges(*coeffs)
        if edges is not None:
            return {"low_edge_hz": edges[0] / (2 * math.pi), "high_edge_hz": edges[1] / (2 * math.pi)}
    w = cutoff_from_coefficients(*coeffs)
    if w is None:
        return {"cutoff_hz": None, "no_cutoff": True}
    return {"cutoff_hz": w / (2 * math.pi)}


def _closed_cutoff_number(form, values: Mapping):
    """The closed-form cutoff (rad/s) at rational values, from the exact coefficients in 40-digit
    decimals (:func:`~symfilt.analysis.forms.cutoff_value`), without putting numbers into its
    radicals. False where that does not apply (a value that is not rational, a coefficient
    that is 0 or negative under a root, a root of a negative number): the caller then
    evaluates the closed form itself, which says what such a case gives."""
    ctx = decimal.Context(prec=CHAIN_DIGITS, traps=[decimal.InvalidOperation, decimal.DivisionByZero])
    at = dict(values)
    at[sympy.pi] = sympy.Rational(int(PI_DIGITS), 10 ** (len(PI_DIGITS) - 1))

    def product(key):
        out = decimal.Decimal(1)
        for p, e in form.factors[key]:
            v, e = as_sympy(p).xreplace(at), sympy.Rational(e)
            if not isinstance(v, sympy.Rational) or v <= 0 and e.q != 1 or e.q not in (1, 2):
                raise decimal.InvalidOperation
            d = ctx.divide(decimal.Decimal(int(v.p)), decimal.Decimal(int(v.q)))
            out = ctx.multiply(out, ctx.power(d if e.q == 1 else ctx.sqrt(d), int(e.p)))
        return out

    other = "zero" if form.order == 1 and form.kind == "general" else "q" if form.order == 2 else None
    try:
        with decimal.localcontext(ctx):  # the formula's operators use these digits too
            w = cutoff_value(form.order, form.kind, product("w0"), other and product(other), ctx.sqrt)
    except (ArithmeticError, KeyError):
        return False
    return float(w)


def output_impedance_values(zout: NetworkFunction, values: Mapping, cutoff_hz: float | None) -> dict:
    """Zout at DC and |Zout| at the cutoff, in ohms, when every symbol of Zout has a value.

    An op-amp stage's output impedance is small at DC (Rout/(1 + A·β)) and rises as the
    loop gain falls, so the two numbers say how firmly the stage holds its output.

    Parameters
    ----------
    zout : NetworkFunction
        The output impedance.
    values : mapping
        Symbol -> exact number.
    cutoff_hz : float or None
        The cutoff at the values, when there is one.

    Returns
    -------
    dict
        ``zout_dc_ohm`` (None when infinite, e.g. a series capacitor) and
        ``zout_cutoff_ohm``; empty when a value is missing.

    Examples
    --------
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> z = NetworkFunction.from_expr(R / (1 + S * R * C), "zout")
    >>> d = output_impedance_values(z, {R: 1000, C: sympy.Rational(1, 10**6)}, 1000 / (2 * math.pi))
    >>> d["zout_dc_ohm"], round(d["zout_cutoff_ohm"], 3)
    (1000.0, 707.107)
    """
    cv = zout.coefficient_values(values)
    if cv is None:
        return {}
    num, den = cv
    out = {"zout_dc_ohm": None if den[0] == 0 else abs(num[0] / den[0]) if num[0] != 0 or den[0] != 0 else None}
    if cutoff_hz is not None and cutoff_hz > 0:
        s = 2j * math.pi * cutoff_hz
        d = sum(c * s**k for k, c in enumerate(den))
        out["zout_cutoff_ohm"] = None if d == 0 else abs(sum(c * s**k for k, c in enumerate(num)) / d)
    return out


#: Response kinds whose high-frequency gain is their pass band, not a floor.
PASSBAND_AT_HF = ("highpass", "allpass", "notch")
#: A level at s -> oo this far below the peak of |H| (dB) is a floor, not a pass band.
FLOOR_BELOW_PEAK_DB = 3.0


def high_frequency(stage: StageResult, values: Mapping) -> dict:
    """The high-frequency end of a view: its stop-band floor |H(j oo)|, or its slope.

    With numerator degree m and denominator degree n (in s), |H| falls as
    -20 (n - m) dB/decade far above the last pole or zero (``hf_slope_db_per_decade``;
    0 when m = n). When m = n the response levels off at |H(j oo)| = |hf_gain|. That
    level is a *floor* (``hf_gain``, ``hf_gain_db``) when it is not the response's own
    pass band: the kind is not high-pass, all-pass or notch and, at the values, the
    level lies more than :data:`FLOOR_BELOW_PEAK_DB` below the peak of |H| (as when an
    op-amp's output resistance lets the input feed through a low-pass).

    Parameters
    ----------
    stage : StageResult
        One view (loaded or ideal) of an analysis.
    values : mapping
        Symbol -> exact number, as :meth:`Circuit.values` gives.

    Returns
    -------
    dict
        ``hf_slope_db_per_decade`` (when the order is at least 1), and ``hf_gain`` and
        ``hf_gain_db`` when there is a floor and every symbol has a value.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> c = catalogue.build("sallen-key-lowpass")
    >>> high_frequency(analyse(c, sensitivity=False).ideal, c.values())
    {'hf_slope_db_per_decade': -40}
    >>> c = c.with_opamp_model("single-pole", gain="100k", gbw="1M").with_values({"Rout_U1": "100"})
    >>> hf = high_frequency(analyse(c, sensitivity=False).ideal, c.values())
    >>> hf["hf_slope_db_per_decade"], round(hf["hf_gain_db"], 2)
    (0, -36.83)
    """
    h = stage.transfer
    if h.infinite or h.order() < 1:
        return {}
    m, n = h.degrees()
    if m < 0:
        return {}
    out: dict = {"hf_slope_db_per_decade": int(-20 * (n - m))}
    if n != m or stage.form.kind in PASSBAND_AT_HF or h.free_symbols() - {S} - set(values):
        return out
    level = finite_float(h.hf_gain(), values)
    level = None if level is None else abs(level)
    peak = _peak_magnitude(h, values)
    if level in (None, 0) or peak is None or 20 * math.log10(peak / level) <= FLOOR_BELOW_PEAK_DB:
        return out
    out["hf_gain"] = level
    out["hf_gain_db"] = 20 * math.log10(level)
    return out


#: Points of the log grid :func:`_peak_magnitude` searches.
PEAK_GRID = 4000


def _peak_magnitude(h: NetworkFunction, values: Mapping) -> float | None:
    """The largest |H(jw)| on a log grid three decades past the poles and zeros (None if not finite).

    The roots' sizes come from :func:`~symfilt.analysis.roots.exact_roots` and the grid is
    evaluated by Horner's rule in Python complex floats: no numpy, whose import alone (0.1 s)
    costs more than the 4000 points.
    """
    coeffs = h.coefficient_values(values)
    if coeffs is None:
        return None
    sizes = [abs(r) for c in coeffs for r in _nonzero_roots(c)]
    if not sizes:
        return None
    lo, hi = math.log(min(sizes) / 1e3), math.log(max(sizes) * 1e3)
    num, den = trim(coeffs[0])[::-1], trim(coeffs[1])[::-1]
    peak = None
    for i in range(PEAK_GRID):
        m = _magnitude_at(num, den, math.exp(lo + (hi - lo) * i / (PEAK_GRID - 1)))
        if m is not None and (peak is None or m > peak):
            peak = m
    return peak


def _nonzero_roots(cs: list) -> list[complex]:
    """The roots other than 0 of a polynomial with float coefficients (lowest power first)."""
    cs = trim(cs)
    if len(cs) < 2 or not any(cs):
        return []
    return [r for r in exact_roots(cs) if abs(r) > 0]


def _magnitude_at(num: list, den: list, w: float) -> float | None:
    """|N(jw)/D(jw)| by Horner's rule (coefficients highest power first); None where it is not finite."""
    n = d = 0j
    s = 1j * w
    try:
        for c in num:
            n = n * s + c
        for c in den:
            d = d * s + c
        m = abs(n / d)
    except (ZeroDivisionError, OverflowError):
        return None
    return m if math.isfinite(m) else None


def stability(h: NetworkFunction, values: Mapping) -> str | None:
    """``stable``, ``marginal`` (poles on the jw axis) or ``unstable`` (poles in the right
    half-plane) at the given values; None when a symbol has no value.

    Poles are the roots of the denominator at the values (exact coefficients from the flint
    polynomials, then :func:`pole_values`).

    Parameters
    ----------
    h : NetworkFunction
        A transfer function.
    values : mapping
        Symbol -> number for every symbol but ``s``.

    Returns
    -------
    str or None

    Examples
    --------
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> stability(NetworkFunction.from_expr(1 / (1 + S * R * C)), {R: 1, C: 1})
    'stable'
    >>> stability(NetworkFunction.from_expr(1 / (1 + S**2)), {})
    'marginal'
    """
    cv = h.coefficient_values(values, exact=True)  # None when a value is missing: nothing expanded
    if cv is None:
        return None
    poly = sympy.Poly(trim(cv[1])[::-1], S)
    if poly.degree() < 1:
        return "stable"
    roots = pole_values(poly)
    scale = max(1.0, max(abs(r) for r in roots))
    worst = max(r.real for r in roots)
    if worst > 1e-12 * scale:
        return "unstable"
    if worst > -1e-12 * scale:
        return "marginal"
    return "stable"


def numeric_sensitivities(stage: StageResult, values: Mapping) -> dict:
    """Sensitivities of a stage as numbers at the given values.

    Parameters
    ----------
    stage : StageResult
        One view of an analysis derived with sensitivities.
    values : mapping
        Symbol -> exact number, as :meth:`Circuit.values` gives.

    Returns
    -------
    dict
        Quantity -> symbol name -> float, only for tables whose every symbol has a value.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> c = catalogue.build("rc-lowpass")
    >>> numeric_sensitivities(analyse(c).ideal, c.values())["w0"]
    {'R1': -1.0, 'C1': -1.0}
    """
    out = {}
    for quantity, table in stage.sensitivity.items():
        if not table:
            continue
        row = table.numbers(values) if isinstance(table, ExactTable) else None  # no sympy form built
        if row is not None:
            out[quantity] = row
            continue
        row = {}
        for name, e in table.items():
            e = as_sympy(e)
            if e.free_symbols - set(values):
                row = None
                break
            row[name] = finite_float(e.xreplace(dict(values)))
        if row is not None:
            out[quantity] = row
    if "cutoff" not in out and stage.sensitivity and not stage.cutoff.has_value and stage.cutoff.edges is None:
        row = numeric_cutoff_sensitivity(stage, values)
        if row is not None:
            out["cutoff"] = row
    return out


def numeric_cutoff_sensitivity(stage: StageResult, values: Mapping) -> dict | None:
    """S_x^cutoff where the cutoff is found numerically (no closed form), by the exact
    implicit-function derivative of the root (:func:`~symfilt.analysis.response.cutoff_sensitivities`).

    Parameters
    ----------
    stage : StageResult
        One view; only its transfer function, form and cutoff are read.
    values : mapping
        Symbol -> exact number.

    Returns
    -------
    dict or None
        Symbol name -> float; None when a symbol lacks a value or there is no cutoff.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> c = catalogue.build("rc-ladder")
    >>> round(numeric_cutoff_sensitivity(analyse(c, sensitivity=False).loaded, c.values())["R1"], 4)
    -0.4556
    """
    h = stage.transfer
    if h.free_symbols() - {S} - set(values):
        return None
    hz = _cutoff_number(stage, values, response_numbers(h, values)).get("cutoff_hz")
    if hz is None:
        return None
    return cutoff_sensitivities(h, values, 2 * math.pi * hz)
