"""Loaded versus ideal: the analysis of a circuit.

:func:`analyse` derives everything :mod:`symfilt.export` shows for a circuit:
the transfer function, input and output impedance, the standard form (kind, K,
w0, Q), the -3 dB cutoff and the sensitivities, once for the stage as connected
("loaded") and once alone ("ideal": R_s -> 0, R_L -> oo, C_L -> 0). The standard
forms are in :mod:`symfilt.analysis.forms`, the numbers in :mod:`symfilt.analysis.numbers`.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable

import sympy

from symfilt.model.circuit import LOAD_C, LOAD_R, SOURCE_R, Circuit
from symfilt.model.opamp import opamp_parameters
from symfilt.engine.elimination import DEFAULT_MAX_TERMS
from symfilt.analysis.network import NetworkFunction, derive
from symfilt.analysis.sensitivity import product_sensitivities, sum_rules
from symfilt.analysis.forms import RESPONSE_KINDS, Cutoff, StandardForm, cutoff, second_order_root, standard_form
from symfilt.analysis.numbers import numeric_sensitivities, numeric_values, stability
from symfilt.analysis.findings import Finding, finding
from symfilt.analysis.numeric import numeric_cutoff, tidy as _tidy
from symfilt.analysis.loop import check_polarity, loops, substitute_loop

#: Numbers left out of a view whose poles are in the right half-plane.
UNSTABLE_DROPS = ("cutoff_hz", "low_edge_hz", "high_edge_hz")


@dataclass(frozen=True)
class StageResult:
    """Everything derived for one view of the stage (loaded or ideal).

    Parameters
    ----------
    transfer, zin, zout : NetworkFunction
        Voltage transfer H(s), input and output impedance (ohms) of this view.
    form : StandardForm
        The standard form of ``transfer``.
    cutoff : Cutoff
        Its closed-form -3 dB cutoff (rad/s).
    sensitivity : dict
        quantity (``cutoff``, ``w0``, ``q``, ``dc_gain``) -> symbol name -> S_x^y
        (a quantity without a closed form maps to None).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> st = analyse(catalogue.build("rc-lowpass"), sensitivity=False).ideal
    >>> st.form.kind, st.cutoff.value
    ('lowpass', 1/(C1*R1))
    """

    transfer: NetworkFunction
    zin: NetworkFunction
    zout: NetworkFunction
    form: StandardForm
    cutoff: Cutoff
    sensitivity: dict = field(default_factory=dict)

    def dc_gain(self):
        """H(0) of this view.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> analyse(catalogue.build("rc-lowpass"), sensitivity=False).ideal.dc_gain()
        1
        """
        return self.transfer.dc_gain()

    def quantities(self) -> dict:
        """Closed forms by quantity name: transfer, dc_gain, hf_gain, w0, q, cutoff, zin, zout.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> analyse(catalogue.build("rc-lowpass"), sensitivity=False).ideal.quantities()["cutoff"]
        1/(C1*R1)
        """
        return {"transfer": self.transfer.as_expr(), "dc_gain": self.transfer.dc_gain(),
                "hf_gain": self.transfer.hf_gain(), "w0": self.form.w0, "q": self.form.q,
                "cutoff": self.cutoff.value, "zin": self.zin.as_expr(), "zout": self.zout.as_expr()}


@dataclass(frozen=True)
class Analysis:
    """A circuit analysed loaded and ideal, side by side.

    Parameters
    ----------
    circuit : Circuit
        The circuit analysed.
    loaded, ideal : StageResult
        With the source and load fixtures, and with them at their ideal limits.
    numeric : dict
        ``{"loaded": {...}, "ideal": {...}}`` from :func:`numeric_values`.
    rules : tuple of SumRule
        Sum-rule self-checks on the loaded w0 and Q sensitivities (empty when they do not apply).
    rules_note : Finding or None
        Why the sum rules do not apply, when they do not.
    loops : tuple of Loop
        The loop around each op-amp (:mod:`symfilt.analysis.loop`), loaded and ideal.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> a = analyse(catalogue.build("rc-lowpass"), sensitivity=False)
    >>> round(a.numeric["loaded"]["cutoff_hz"], 2), round(a.numeric["ideal"]["cutoff_hz"], 2)
    (2088.4, 1539.22)
    """

    circuit: Circuit
    loaded: StageResult
    ideal: StageResult
    numeric: dict
    rules: tuple = ()
    rules_note: Finding | None = None
    loops: tuple = ()

    def ratio(self, key: str) -> float | None:
        """Loaded over ideal of a numeric quantity (``cutoff_hz``, ``dc_gain``, ``f0_hz``, ``q``).

        Parameters
        ----------
        key : str
            A key of ``numeric["loaded"]`` and ``numeric["ideal"]``.

        Returns
        -------
        float or None
            None when either value is missing or the ideal one is zero.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> a = analyse(catalogue.build("rc-lowpass", source="600", load="none"), sensitivity=False)
        >>> round(a.ratio("cutoff_hz"), 4)
        0.8868
        """
        lo, hi = self.numeric["loaded"].get(key), self.numeric["ideal"].get(key)
        if lo is None or hi in (None, 0):
            return None
        return lo / hi


def _cutoff_sensitivity(form: StandardForm, s_w0, s_q):
    """S_x^cutoff by the chain rule: first order equals S_x^w0; second-order low-pass
    S_x^w0 + g S_x^Q and high-pass S_x^w0 - g S_x^Q, with g = Q d(ln r)/dQ =
    1/(2 Q^2 sqrt(x^2 + 1)), x = 1 - 1/(2Q^2), r as in :func:`second_order_root`."""
    if s_w0 is None:
        return None
    if form.order == 1 and form.kind in ("lowpass", "highpass"):
        return dict(s_w0)
    if form.order == 2 and form.kind in ("lowpass", "highpass") and s_q is not None:
        x = 1 - 1 / (2 * form.q**2)
        g = 1 / (2 * form.q**2 * sympy.sqrt(x**2 + 1))
        sign = 1 if form.kind == "lowpass" else -1
        return {k: (s_w0[k] + sign * g * s_q[k]) if s_q[k] != 0 else s_w0[k] for k in s_w0}
    return None


def _stage(transfer: NetworkFunction, zin: NetworkFunction, zout: NetworkFunction, symbols, want_sens: bool) -> StageResult:
    form = standard_form(transfer)
    cut = cutoff(form)
    sens = {}
    if want_sens:
        syms = [x for x in symbols if x in transfer.free_symbols()]
        b, a = transfer.coefficients()

        def table(factors):
            return product_sensitivities(factors, syms)

        s_w0, s_q = table(form.factors.get("w0")), table(form.factors.get("q"))
        dc_f = None
        if a[0] != 0 and b[0] != 0:
            dc_f = [(b[0], 1), (a[0], -1)]
        sens = {"cutoff": _cutoff_sensitivity(form, s_w0, s_q), "w0": s_w0, "q": s_q, "dc_gain": table(dc_f)}
    return StageResult(transfer, zin, zout, form, cut, sens)


def analyse(circuit: Circuit, *, sensitivity: bool = True, max_terms: int = DEFAULT_MAX_TERMS,
            progress: Callable[[str], None] | None = None) -> Analysis:
    """Derive and analyse a circuit, loaded and ideal.

    Parameters
    ----------
    circuit : Circuit
    sensitivity : bool
        Also derive the sensitivities (and the sum-rule checks).
    max_terms : int
        Size budget of the elimination.
    progress : callable, optional
        Receives stage names.

    Returns
    -------
    Analysis

    Examples
    --------
    >>> from symfilt import catalogue
    >>> a = analyse(catalogue.build("sallen-key-lowpass"))
    >>> a.ideal.form.kind, a.ideal.form.q
    ('lowpass', sqrt(C1)*sqrt(R1)*sqrt(R2)/(sqrt(C2)*(R1 + R2)))
    >>> [r.holds for r in a.rules]
    [True, True, True, True]
    """
    h = derive(circuit, "transfer", max_terms=max_terms, progress=progress)
    zin = derive(circuit, "zin", max_terms=max_terms, progress=progress)
    zout = derive(circuit, "zout", max_terms=max_terms, progress=progress)
    found = loops(circuit, max_terms=max_terms, progress=progress)
    check_polarity(circuit, found)
    if progress:
        progress("standard forms and sensitivities")
    table_info = circuit.symbols()
    table = {name: info["symbol"] for name, info in table_info.items()}
    symbols = [sym for name, sym in table.items() if name != "s"]
    loaded = _stage(h, zin, zout, symbols, sensitivity)
    ideal = _stage(h.ideal(), zin.ideal(), zout.ideal(), symbols, sensitivity)
    values = circuit.values()
    numeric = {"loaded": numeric_values(loaded, values), "ideal": numeric_values(ideal, values)}
    for numbers in numeric.values():
        if numbers.get("stability") == "unstable":  # a cutoff of a circuit that does not settle means nothing
            for key in UNSTABLE_DROPS:
                numbers.pop(key, None)
    if sensitivity:
        for key, st in (("loaded", loaded), ("ideal", ideal)):
            numeric[key]["sensitivity"] = numeric_sensitivities(st, values)
    rules: tuple = ()
    note = None
    if sensitivity:
        blockers = [p.name for p in circuit.parts if p.kind == "inductor" or (p.kind == "opamp" and p.model in ("single-pole", "two-pole"))]
        params = {n: info["unit"] for n, info in table_info.items() if info["role"] == "parameter"}
        unknown = tuple(n for n, unit in params.items() if unit is None and table[n] in h.free_symbols())
        if blockers:
            note = finding("sum-rules-own-frequency", parts=tuple(blockers))
        elif unknown:
            note = finding("sum-rules-parameter-unit", names=unknown)
        elif loaded.form.w0 is None:
            note = finding("sum-rules-no-w0")
        else:
            amp = [(n, param.unit) for p in circuit.parts for n, param, _v in opamp_parameters(p)]
            res = [p.name for p in circuit.parts if p.kind == "resistor"] + [n for n in (SOURCE_R, LOAD_R) if n in table]
            res += [n for n, unit in amp + list(params.items()) if unit == "Ω"]
            caps = [p.name for p in circuit.parts if p.kind == "capacitor"] + [n for n in (LOAD_C,) if n in table]
            caps += [n for n, unit in amp + list(params.items()) if unit == "F"]
            rules = sum_rules(loaded.sensitivity, res, caps)
    return Analysis(circuit, loaded, ideal, numeric, rules, note, found)


def substitute(analysis: Analysis) -> Analysis:
    """The same analysis with the circuit's values put into every formula.

    Symbols without a value stay symbols. Numbers stay exact.

    Parameters
    ----------
    analysis : Analysis
        From :func:`analyse`; its circuit gives the values.

    Returns
    -------
    Analysis
        Same numeric results, rule checks and notes.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> a = substitute(analyse(catalogue.build("rc-lowpass"), sensitivity=False))
    >>> a.ideal.form.w0
    5000000/517
    """
    values = dict(analysis.circuit.values())

    def sub(e):
        if e is None:
            return None
        e = sympy.sympify(e).xreplace(values)
        return _tidy(e) if not e.has(sympy.sqrt(2)) or sympy.count_ops(e) < 200 else e

    def stage(st: StageResult) -> StageResult:
        f = st.form
        form = StandardForm(f.order, f.kind, sub(f.gain), sub(f.w0), sub(f.q), sub(f.tau), {})
        cut = Cutoff(sub(st.cutoff.value), None if st.cutoff.edges is None else tuple(sub(e) for e in st.cutoff.edges),
                     sub(st.cutoff.bandwidth), st.cutoff.reason)
        sens = {k: (None if v is None else {n: sub(e) for n, e in v.items()}) for k, v in st.sensitivity.items()}
        return StageResult(st.transfer.subs(values), st.zin.subs(values), st.zout.subs(values), form, cut, sens)

    return Analysis(analysis.circuit, stage(analysis.loaded), stage(analysis.ideal), analysis.numeric,
                    analysis.rules, analysis.rules_note, tuple(substitute_loop(x, values) for x in analysis.loops))


__all__ = ["RESPONSE_KINDS", "Analysis", "Cutoff", "StageResult", "StandardForm", "analyse", "cutoff",
           "numeric_cutoff", "numeric_sensitivities", "numeric_values", "second_order_root", "stability",
           "standard_form", "substitute"]
