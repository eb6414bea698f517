"""A stage's cutoff, f0, Q and DC gain straight from the coefficient polynomials of H(s).

For a command that evaluates the loaded stage thousands of times (``spread``): no sympy
closed form is built or compiled. The response kind and its quantities as products of
coefficients come from :func:`symfilt.analysis.forms.form_factors` (the classification
behind :func:`~symfilt.analysis.forms.standard_form`) applied to the flint polynomials;
the functions evaluate those polynomials in floats at arrays of values
(:func:`~symfilt.analysis.numeric.poly_values`, numpy) and apply the same formulas as
:func:`~symfilt.analysis.forms.cutoff`; a response without a closed-form cutoff gets its
-3 dB point per sample from the coefficients (:func:`~symfilt.analysis.numeric.batch_cutoff`).

The sensitivities S_x^y = sum of e_i (x / p_i) dp_i/dx over y = prod p_i^e_i are taken
exactly at the values (flint rationals, derivatives on the polynomials), the cutoff's by
the same chain rule as the analysis (its one square root in 40-digit decimals), so they
are the numbers :func:`~symfilt.analysis.numbers.numeric_sensitivities` gives for the
closed forms without building them.

numpy is imported inside the functions (an optional dependency of symfilt).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable, Mapping, Sequence

import sympy

from symfilt.analysis.forms import cutoff, cutoff_value, form_factors, standard_form
from symfilt.analysis.network import NetworkFunction
from symfilt.analysis.numbers import numeric_cutoff_sensitivity
from symfilt.analysis.numeric import batch_cutoff, poly_values
from symfilt.analysis.exact_tables import PI_DIGITS, chain_rule_row, floats
from symfilt.analysis.stage import StageResult
from symfilt.engine.polybridge import to_fmpq
from symfilt.model.circuit import S

#: Kinds without a single -3 dB point (a band-pass has two edges).
NO_CUTOFF = ("bandpass", "notch", "allpass")


@dataclass(frozen=True)
class CoefficientForm:
    """A transfer function's kind and quantities as products of its coefficient polynomials.

    Parameters
    ----------
    transfer : NetworkFunction
    order : int
        Order in s.
    kind : str
        As :func:`~symfilt.analysis.forms.standard_form` names it.
    factors : dict
        Quantity (``w0``, ``q``, ``gain``, ``tau``, ``zero``) -> list of (flint polynomial, exponent).
    dc : list or None
        The DC gain b0/a0 as factors; None when it is 0 or infinite.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> f = coefficient_form(derive(catalogue.build("sallen-key-lowpass")))
    >>> f.order, f.kind, sorted(f.factors), f.closed_cutoff
    (2, 'lowpass', ['gain', 'q', 'w0'], True)
    """

    transfer: NetworkFunction
    order: int
    kind: str
    factors: dict
    dc: list | None

    @property
    def closed_cutoff(self) -> bool:
        """True where :func:`~symfilt.analysis.forms.cutoff` has a closed form.

        Examples
        --------
        >>> CoefficientForm(None, 3, "general", {}, None).closed_cutoff
        False
        """
        if self.kind in ("lowpass", "highpass"):
            return self.order in (1, 2)
        return self.order == 1 and "zero" in self.factors

    @property
    def numeric_cutoff(self) -> bool:
        """True where the cutoff is found from the coefficients instead (no closed form, one -3 dB point).

        Examples
        --------
        >>> CoefficientForm(None, 3, "general", {}, None).numeric_cutoff
        True
        """
        return not self.closed_cutoff and self.kind not in NO_CUTOFF and (self.order >= 3 or self.kind == "general")


def coefficient_form(h: NetworkFunction) -> CoefficientForm:
    """The kind and quantities of H(s) from its flint coefficients, with no sympy conversion.

    Parameters
    ----------
    h : NetworkFunction

    Returns
    -------
    CoefficientForm

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> coefficient_form(derive(catalogue.build("rc-highpass"))).kind
    'highpass'
    """
    order = h.order()
    nb, nd = h.ratio.coefficients(S)
    kind, factors = (None, {}) if order > 2 else form_factors(order, nb, nd, zero=lambda e: e == 0)
    dc = [(nb[0], 1), (nd[0], -1)] if not h.infinite and nb[0] != 0 and nd[0] != 0 else None
    return CoefficientForm(h, order, kind or "general", factors, dc)


def quantity_functions(form: CoefficientForm, names: Sequence[str]) -> dict[str, Callable]:
    """Vectorised numpy functions of the cutoff (Hz), f0 (Hz), Q and DC gain, where the stage has them.

    Parameters
    ----------
    form : CoefficientForm
    names : sequence of str
        The symbol names, in the order the functions take their arguments (an array or a number each).

    Returns
    -------
    dict
        ``cutoff_hz``, ``f0_hz``, ``q``, ``dc_gain`` -> callable, in that order.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> fs = quantity_functions(coefficient_form(derive(catalogue.build("rc-lowpass"))), ("C1", "R1", "R_L", "R_s"))
    >>> sorted(fs), round(float(fs["cutoff_hz"](22e-9, 4700.0, 10000.0, 600.0)), 1)
    (['cutoff_hz', 'dc_gain', 'f0_hz'], 2088.4)
    """
    ratio, two_pi = form.transfer.ratio, 2 * math.pi

    def point(args) -> dict:
        given = dict(zip(names, args))
        return {n: (math.pi if sym is sympy.pi else given.get(str(sym), 0.0)) for n, sym in ratio.symbols.items()}

    def wrap(value: Callable, scale: float = 1.0) -> Callable:
        import numpy as np

        return lambda *args: np.asarray(value(point(args)), dtype=float) / scale + 0 * _shape(args)

    out: dict[str, Callable] = {}
    fs = form.factors
    if form.closed_cutoff:
        out["cutoff_hz"] = wrap(lambda pt: _closed_cutoff(form, pt), two_pi)
    elif form.numeric_cutoff:
        out["cutoff_hz"] = _coefficient_cutoff(ratio, names, two_pi)
    if "w0" in fs:
        out["f0_hz"] = wrap(lambda pt: _product(fs["w0"], pt), two_pi)
    if "q" in fs:
        out["q"] = wrap(lambda pt: _product(fs["q"], pt))
    if form.dc is not None:
        out["dc_gain"] = wrap(lambda pt: _product(form.dc, pt))
    return out


def _product(factors: list, pt: dict):
    """prod p_i^e_i in floats (exponents +-1 and +-1/2)."""
    import numpy as np

    out = None
    for p, e in factors:
        v = poly_values(p, pt)
        v = v if e == 1 else 1 / v if e == -1 else np.sqrt(v) if e > 0 else 1 / np.sqrt(v)
        out = v if out is None else out * v
    return out


def _closed_cutoff(form: CoefficientForm, pt: dict):
    """The -3 dB angular frequency by the formulas of :func:`symfilt.analysis.forms.cutoff`, in floats."""
    import numpy as np

    other = "zero" if form.order == 1 and "zero" in form.factors else "q" if form.order == 2 else None
    w0 = _product(form.factors["w0"], pt)
    return cutoff_value(form.order, form.kind, w0, other and _product(form.factors[other], pt), np.sqrt)


def _coefficient_cutoff(ratio, names: Sequence[str], two_pi: float) -> Callable:
    """The -3 dB frequency (Hz) per sample from the flint coefficient polynomials of H(s).

    Evaluated by :func:`poly_values`, never printed as source: a ladder's coefficients
    have thousands of terms, too deep for Python's compiler.
    """
    nb, nd = ratio.coefficients(S)

    def numeric_cut(*args):
        shape = _shape(args)
        given = dict(zip(names, args))
        point = {n: (math.pi if sym is sympy.pi else given.get(str(sym), 0.0)) for n, sym in ratio.symbols.items()}
        cb = [poly_values(c, point) + shape for c in nb]
        cd = [poly_values(c, point) + shape for c in nd]
        return (batch_cutoff(cb, cd) / two_pi).reshape(shape.shape)

    return numeric_cut


def _shape(args):
    import numpy as np

    arrays = [np.asarray(x, dtype=float) for x in args]
    return np.zeros(np.broadcast_shapes(*[x.shape for x in arrays])) if arrays else np.zeros(())


def exact_sensitivities(form: CoefficientForm, values: Mapping) -> dict:
    """S_x of the cutoff, w0, Q and DC gain at the values, exact until the last rounding.

    Parameters
    ----------
    form : CoefficientForm
    values : mapping
        Symbol -> exact number for every symbol of the transfer function.

    Returns
    -------
    dict
        ``cutoff``, ``w0``, ``q``, ``dc_gain`` -> symbol name -> float (None where a
        coefficient it divides by is 0 at the values), for the quantities the stage has.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> c = catalogue.build("rc-lowpass")
    >>> exact_sensitivities(coefficient_form(derive(c).ideal()), c.values())["w0"]
    {'C1': -1.0, 'R1': -1.0}
    """
    ratio = form.transfer.ratio
    names = sorted(str(x) for x in form.transfer.free_symbols() if x != S)
    point = exact_point(ratio.symbols, values)
    row = lambda key: None if key not in form.factors else _exact_row(ratio, form.factors[key], names, point)
    rows = {"w0": row("w0"), "q": row("q"), "zero": row("zero")}
    rows["dc_gain"] = None if form.dc is None else _exact_row(ratio, form.dc, names, point)
    rows["cutoff"] = _cutoff_row(form, rows, point)
    out = {k: floats(rows[k]) for k in ("cutoff", "w0", "q", "dc_gain") if rows[k]}
    if form.numeric_cutoff and names:
        st = standard_form(form.transfer)
        got = numeric_cutoff_sensitivity(StageResult(form.transfer, None, None, st, cutoff(st)), values)
        if got is not None:
            out["cutoff"] = got
    return out


def exact_point(symbols: dict, values: Mapping, *, unvalued_zero: bool = True) -> dict:
    """Generator name -> flint rational: the values, pi to 50 decimals, 0 for s.

    Parameters
    ----------
    symbols : dict
        Generator name -> sympy object (a :class:`~symfilt.engine.rational.Ratio`'s ``symbols``).
    values : mapping
        Symbol or name -> exact value.
    unvalued_zero : bool
        Put 0 for a name without a value (True), or leave it out of the point (False).

    Examples
    --------
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> exact_point({"C": C, "R": R, "s": S}, {R: 1000}), exact_point({"C": C}, {}, unvalued_zero=False)
    ({'C': 0, 'R': 1000, 's': 0}, {})
    """
    import flint

    given = {(k.name if hasattr(k, "name") else str(k)): v for k, v in values.items()}
    out = {}
    for name, sym in symbols.items():
        if sym is sympy.pi:
            out[name] = flint.fmpq(int(PI_DIGITS), 10 ** (len(PI_DIGITS) - 1))
        elif isinstance(sym, sympy.Symbol) and sym != S and sym.name in given:
            q = sympy.Rational(given[sym.name])
            out[name] = flint.fmpq(int(q.p), int(q.q))
        elif unvalued_zero or sym == S:
            out[name] = flint.fmpq(0)
    return out


def _exact_row(ratio, factors: list, names: list, point: dict) -> dict:
    """Symbol name -> S_x of prod p_i^e_i as a flint rational (None where a p_i is 0 at the point)."""
    import flint

    qctx = _rational_ring(ratio)
    order = list(qctx.names())
    at = [point[n] for n in order]
    polys = []
    for p, e in factors:
        qp = to_fmpq(p, qctx)
        e = sympy.Rational(e)
        polys.append((qp, qp(*at), flint.fmpq(int(e.p), int(e.q)), qp.degrees()))
    out = {}
    for name in names:
        gen = ratio.name_of(name)
        k = order.index(gen)
        used = [(qp, v, e) for qp, v, e, deg in polys if deg[k] > 0]
        if any(v == 0 for _qp, v, _e in used):
            out[name] = None
            continue
        total = flint.fmpq(0)
        for qp, v, e in used:
            total += e * point[gen] * qp.derivative(gen)(*at) / v
        out[name] = total
    return out


def _cutoff_row(form: CoefficientForm, rows: dict, point: dict) -> dict | None:
    """S_x^cutoff by the chain rule of the analysis (:func:`~symfilt.analysis.sensitivity.chain_rule_row`)."""
    s_w0 = rows["w0"]
    if not form.closed_cutoff or s_w0 is None:
        return None
    if form.order == 1 and form.kind in ("lowpass", "highpass"):
        return dict(s_w0)
    value = lambda key, i: _exact_value(form, key, i, point)
    if form.order == 1:
        coeffs = [value("w0", 0), value("w0", 1), value("zero", 0), value("zero", 1)]
        return chain_rule_row(1, form.kind, s_w0, rows["zero"], coeffs)
    return chain_rule_row(2, form.kind, s_w0, rows["q"], [value("q", 0), value("q", 1), value("q", 2)])


def _exact_value(form: CoefficientForm, key: str, i: int, point: dict):
    """The i-th polynomial of a quantity's factors at the point, a flint rational."""
    qctx = _rational_ring(form.transfer.ratio)
    return to_fmpq(form.factors[key][i][0], qctx)(*[point[n] for n in qctx.names()])


def _rational_ring(ratio):
    """The rational polynomial ring over the generators of ``ratio`` (to evaluate at flint rationals)."""
    import flint

    return flint.fmpq_mpoly_ctx.get(tuple(ratio.num.context().names()), "degrevlex")


__all__ = ["NO_CUTOFF", "CoefficientForm", "coefficient_form", "exact_point", "exact_sensitivities", "quantity_functions"]
