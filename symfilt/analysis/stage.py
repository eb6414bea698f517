"""Loaded versus ideal: the analysis of a circuit.

:func:`analyse` derives everything :mod:`symfilt.export` shows for a circuit:
the transfer function, input and output impedance, the standard form (kind, K,
w0, Q), the -3 dB cutoff and the sensitivities, once for the stage as connected
("loaded") and once alone ("ideal": R_s -> 0, R_L -> oo, C_L -> 0). The standard
forms are in :mod:`symfilt.analysis.forms`, the numbers in :mod:`symfilt.analysis.numbers`.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field
from typing import Callable

import sympy

from symfilt.model.circuit import LOAD_C, LOAD_R, SOURCE_R, Circuit
from symfilt.model.keep import fixed_values, fixture_values
from symfilt.model.opamp import opamp_parameters
from symfilt.model.structure import unreached_error
from symfilt.model.values import parse_value
from symfilt.errors import UsageError
from symfilt.engine.elimination import DEFAULT_MAX_TERMS
from symfilt.analysis.network import NetworkFunction, derive
from symfilt.analysis.exact_tables import ChainedSensitivities
from symfilt.analysis.sensitivity import product_sensitivities, sum_rules
from symfilt.analysis.forms import RESPONSE_KINDS, Cutoff, StandardForm, cutoff, second_order_root, standard_form
from symfilt.analysis.numbers import numeric_sensitivities, numeric_values, stability
from symfilt.analysis.findings import Finding, finding
from symfilt.analysis.numeric import magnitude_squared, numeric_cutoff, tidy as _tidy
from symfilt.analysis.loop import check_polarity, feedback_polarities, loops, refuse_positive_feedback, substitute_loop
from symfilt.model.safe import as_sympy, require

#: Numbers left out of a view whose poles are in the right half-plane.
UNSTABLE_DROPS = ("cutoff_hz", "low_edge_hz", "high_edge_hz", "bandwidth_hz", "notch_hz", "notch_depth_db", "notch_null",
                  "group_delay_dc_s", "peaking_db", "ripple_db")


@dataclass(frozen=True)
class StageResult:
    """Everything derived for one view of the stage (loaded or ideal).

    Parameters
    ----------
    transfer, zin, zout : NetworkFunction
        Voltage transfer H(s), input and output impedance (ohms) of this view (the
        impedances are None in a probe's view, :mod:`symfilt.analysis.probe`).
    form : StandardForm
        The standard form of ``transfer``.
    cutoff : Cutoff
        Its closed-form -3 dB cutoff (rad/s).
    sensitivity : dict
        quantity (``cutoff``, ``w0``, ``q``, ``dc_gain``) -> symbol name -> S_x^y
        (a quantity without a closed form maps to None).
    factors : dict
        quantity (``w0``, ``q``, ``gain``, ``magnitude``) -> the (polynomial, exponent)
        factors of the quantity its sensitivities were taken from (None without a closed
        form); the sum rules read them. Not compared.

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
    factors: dict = field(default_factory=dict, compare=False, repr=False)

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
    at_hz : sympy.Rational or None
        The frequency of the ``magnitude`` sensitivities (S_x^|H(jw)|), when asked for.

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
    at_hz: sympy.Rational | None = None

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


def _cutoff_sensitivity(form: StandardForm, s_w0, s_q, s_wz=None):
    """S_x^cutoff by the chain rule: first order equals S_x^w0 (with a zero wz, see
    :func:`~symfilt.analysis.forms.first_order_zero_cutoff`: S^wp + 2r^2/(1 - 2r^2)(S^wp - S^wz),
    r = wp/wz); second-order low-pass
    S_x^w0 + g S_x^Q and high-pass S_x^w0 - g S_x^Q, with g = Q d(ln r)/dQ =
    1/(2 Q^2 sqrt(x^2 + 1)), x = 1 - 1/(2Q^2), r as in :func:`second_order_root`.
    A table whose entries are built when read and whose numbers need no sympy
    (:class:`~symfilt.analysis.exact_tables.ChainedSensitivities`)."""
    if s_w0 is None:
        return None
    if form.order == 1 and form.kind in ("lowpass", "highpass"):
        return s_w0
    if form.order == 1 and form.kind == "general" and s_wz is not None:
        # ln wc = ln wp - ln(1 - 2 r^2)/2 with r = wp/wz, so S^wc = S^wp + 2 r^2/(1 - 2 r^2) (S^wp - S^wz)
        @functools.cache
        def g1():
            (a0, _), (a1, _) = form.factors["w0"]
            (b0, _), (b1, _) = form.factors["zero"]
            return 2 * (a0 * b1) ** 2 / ((a1 * b0) ** 2 - 2 * (a0 * b1) ** 2)

        build = lambda k: s_w0[k] + g1() * (s_w0[k] - s_wz[k]) if s_w0[k] != s_wz[k] else s_w0[k]
        return ChainedSensitivities(1, "general", s_w0, s_wz, build)
    if form.order == 2 and form.kind in ("lowpass", "highpass") and s_q is not None:
        @functools.cache
        def g2():
            x = 1 - 1 / (2 * form.q**2)
            return 1 / (2 * form.q**2 * sympy.sqrt(x**2 + 1))

        sign = 1 if form.kind == "lowpass" else -1
        build = lambda k: (s_w0[k] + sign * g2() * s_q[k]) if s_q[k] != 0 else s_w0[k]
        return ChainedSensitivities(2, form.kind, s_w0, s_q, build)
    return None


def _stage(transfer: NetworkFunction, zin: NetworkFunction, zout: NetworkFunction, symbols, want_sens: bool,
           at_hz=None) -> StageResult:
    form = standard_form(transfer)
    cut = cutoff(form)
    sens, kept = {}, {}
    if want_sens:
        syms = [x for x in symbols if x in transfer.free_symbols()]
        b, a = transfer.lazy_coefficients()  # only the end coefficients are read: a large one stays unconverted

        def table(factors):
            return product_sensitivities(factors, syms)

        kept = {"w0": form.factors.get("w0"), "q": form.factors.get("q"), "gain": passband_gain_factors(form, b, a)}
        if at_hz is not None:
            kept["magnitude"] = magnitude_factors(transfer, at_hz)
        s_w0, s_q = table(kept["w0"]), table(kept["q"])
        dc_f = None
        if a[0] != 0 and b[0] != 0:
            dc_f = [(b[0], 1), (a[0], -1)]
        s_wz = table(form.factors.get("zero"))
        sens = {"cutoff": _cutoff_sensitivity(form, s_w0, s_q, s_wz), "w0": s_w0, "q": s_q, "dc_gain": table(dc_f),
                "gain": table(kept["gain"])}
        if at_hz is not None:
            sens["magnitude"] = table(kept["magnitude"])
    return StageResult(transfer, zin, zout, form, cut, sens, kept)


def passband_gain_factors(form: StandardForm, b: list, a: list) -> list | None:
    """The pass-band gain K as (polynomial, exponent) factors: the standard form's K (DC gain of
    a low-pass, HF gain of a high-pass, the gain at w0 of a band-pass), else the DC gain when
    it is not zero, else the HF gain; None when there is none (a zero or infinite gain).

    Parameters
    ----------
    form : StandardForm
    b, a : list of sympy.Expr
        Numerator and denominator coefficients, lowest power of s first.

    Returns
    -------
    list of (sympy.Expr, int) or None

    Examples
    --------
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> from symfilt.model.circuit import S
    >>> h = NetworkFunction.from_expr(S * R * C / (1 + S * R * C))
    >>> passband_gain_factors(standard_form(h), *h.coefficients())
    [(C*R, 1), (C*R, -1)]
    """
    if "gain" in form.factors:
        return form.factors["gain"]
    if a and b and a[0] != 0 and b[0] != 0:
        return [(b[0], 1), (a[0], -1)]
    if len(b) == len(a) and b[-1] != 0:
        return [(b[-1], 1), (a[-1], -1)]
    return None


def magnitude_factors(h: NetworkFunction, at_hz) -> list:
    """|H(jw)| at w = 2·pi·at_hz as factors: |N(jw)|^2 to the 1/2 over |D(jw)|^2 to the 1/2.

    |P(jw)|^2 = (p0 - p2 w^2 + p4 w^4 ...)^2 + (p1 w - p3 w^3 + ...)^2 is a polynomial in the
    parts at a fixed frequency, so S_x^|H(jw)| is exact.

    Parameters
    ----------
    h : NetworkFunction
    at_hz : number
        The frequency (Hz), exact.

    Returns
    -------
    list of (sympy.Expr, sympy.Rational)

    Examples
    --------
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> from symfilt.model.circuit import S
    >>> magnitude_factors(NetworkFunction.from_expr(1 / (1 + S * R * C)), sympy.Rational(1, 2) / sympy.pi)
    [(1, 1/2), (C**2*R**2 + 1, -1/2)]
    """
    u = (2 * sympy.pi * as_sympy(at_hz)) ** 2

    def mag2(cs):
        return sympy.expand(sum((d * u**k for k, d in enumerate(magnitude_squared(cs, sympy.Integer(0)))),
                                sympy.Integer(0)))

    b, a = h.coefficients()
    half = sympy.Rational(1, 2)
    return [(mag2(b), half), (mag2(a), -half)]


#: Part kind -> scaling class of its symbol (see :data:`~symfilt.analysis.sensitivity.SCALING`).
_KIND_CLASS = {"resistor": "resistors", "capacitor": "capacitors", "inductor": "inductors", "vcvs": "gains",
               "cccs": "gains", "vccs": "transconductances", "ccvs": "resistors"}
#: Unit of an op-amp parameter or of a [parameters] entry -> scaling class.
_UNIT_CLASS = {"Ω": "resistors", "F": "capacitors", "H": "inductors", "Hz": "bandwidths", "": "gains"}


def scaling_classes(circuit: Circuit) -> dict[str, str]:
    """Every symbol of the circuit -> its class under impedance and frequency scaling.

    Parameters
    ----------
    circuit : Circuit

    Returns
    -------
    dict
        Symbol name -> ``resistors``, ``capacitors``, ``inductors``, ``bandwidths``,
        ``transconductances`` or ``gains`` (a ccvs's transresistance counts as a resistor; a
        parameter by the unit inferred from the parts it sets, left out when that is unknown).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> c = catalogue.build("adc-driver")
    >>> sorted(set(scaling_classes(c).values()))
    ['bandwidths', 'capacitors', 'gains', 'resistors']
    """
    out = {}
    for p in circuit.parts:
        if p.kind == "opamp":
            out.update({n: _UNIT_CLASS[param.unit] for n, param, _v in opamp_parameters(p)})
        else:
            out[p.name] = _KIND_CLASS[p.kind]
    table = circuit.symbol_table()
    out.update({n: ("capacitors" if n == LOAD_C else "resistors") for n in (SOURCE_R, LOAD_R, LOAD_C) if n in table})
    out.update({n: _UNIT_CLASS[info["unit"]] for n, info in circuit.symbols().items()
                if info["role"] == "parameter" and info["unit"] in _UNIT_CLASS})
    return out


def settled_numbers(st: StageResult, values) -> dict:
    """:func:`~symfilt.analysis.numbers.numeric_values` of a view, without the frequencies that only
    a settling circuit has (:data:`UNSTABLE_DROPS`) when its poles are in the right half-plane.

    Parameters
    ----------
    st : StageResult
    values : mapping
        Symbol -> exact number.

    Returns
    -------
    dict

    Examples
    --------
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> s = sympy.Symbol("s")
    >>> h = NetworkFunction.from_expr(1 / (1 - s * R * C))
    >>> f = standard_form(h)
    >>> d = settled_numbers(StageResult(h, None, None, f, cutoff(f)), {R: 1, C: 1})
    >>> d["stability"], "cutoff_hz" in d
    ('unstable', False)
    """
    numbers = numeric_values(st, values)
    if numbers.get("stability") == "unstable":  # a cutoff of a circuit that does not settle means nothing
        for key in UNSTABLE_DROPS:
            numbers.pop(key, None)
    return numbers


def _derived(circuit: Circuit, max_terms: int, progress, whole_loops: bool) -> tuple:
    """H, Zin, Zout and the loops, after the refusals every analysis makes: an output the input
    does not reach, and positive feedback (``whole_loops`` False: the polarities only, no loops)."""
    h = derive(circuit, "transfer", max_terms=max_terms, progress=progress)
    if h.ratio.num == 0:  # the output is not reached from the input: most likely a misspelt node
        raise unreached_error(circuit)
    zin = derive(circuit, "zin", max_terms=max_terms, progress=progress)
    zout = derive(circuit, "zout", max_terms=max_terms, progress=progress)
    if whole_loops:
        found = loops(circuit, max_terms=max_terms, progress=progress)
        check_polarity(circuit, found)
    else:
        found = ()
        refuse_positive_feedback(circuit, feedback_polarities(circuit, max_terms=max_terms, progress=progress))
    return h, zin, zout, found


def loaded_transfer(circuit: Circuit, *, max_terms: int = DEFAULT_MAX_TERMS) -> NetworkFunction:
    """The loaded H(s) of a circuit, refused where :func:`analyse` refuses it, and nothing else derived.

    For a command that evaluates H's coefficient polynomials itself (``spread``): no standard
    forms, sympy views, loops or numbers. The same errors as :func:`analyse`, in the same order
    (the output not reached, positive feedback, an ideal view that grows without bound).

    Parameters
    ----------
    circuit : Circuit
    max_terms : int
        Size budget of the elimination.

    Returns
    -------
    NetworkFunction
        With the fixtures that are not kept put in (a partly symbolic circuit, :mod:`symfilt.model.keep`).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> loaded_transfer(catalogue.build("rc-lowpass")).order()
    1
    """
    require(circuit, Circuit, "loaded_transfer circuit", "build one with Circuit.build or load_circuit")
    h, zin, zout, _found = _derived(circuit, max_terms, None, whole_loops=False)
    for f in (h, zin, zout):
        f.ideal()  # raises as analyse's ideal view does
    put = fixture_values(circuit)
    return h.subs(put) if put else h


def analyse(circuit: Circuit, *, sensitivity: bool = True, max_terms: int = DEFAULT_MAX_TERMS,
            progress: Callable[[str], None] | None = None, at=None, numbers: bool = True) -> Analysis:
    """Derive and analyse a circuit, loaded and ideal.

    Parameters
    ----------
    circuit : Circuit
    sensitivity : bool
        Also derive the sensitivities (and the sum-rule checks): of the cutoff, w0, Q, the
        DC gain and the pass-band gain K (``gain``).
    at : str or number, optional
        A frequency in Hz (``"10k"``): also the sensitivities of |H(jw)| there (``magnitude``).
    max_terms : int
        Size budget of the elimination.
    progress : callable, optional
        Receives stage names.
    numbers : bool
        False: no numbers at the values (``numeric`` holds two empty tables) and no loops
        (``loops`` is empty; positive feedback is still refused), for a caller that measures
        only what it needs (``size``).

    Returns
    -------
    Analysis

    Examples
    --------
    >>> from symfilt import catalogue
    >>> analyse(catalogue.build("rc-lowpass"), sensitivity=False, numbers=False).numeric
    {'loaded': {}, 'ideal': {}}
    >>> a = analyse(catalogue.build("sallen-key-lowpass"))
    >>> a.ideal.form.kind, a.ideal.form.q
    ('lowpass', sqrt(C1)*sqrt(R1)*sqrt(R2)/(sqrt(C2)*(R1 + R2)))
    >>> sorted({r.quantity for r in a.rules}), all(r.holds for r in a.rules)
    (['gain', 'q', 'w0'], True)
    """
    require(circuit, Circuit, "analyse circuit", "build one with Circuit.build or load_circuit")
    h, zin, zout, found = _derived(circuit, max_terms, progress, whole_loops=numbers)
    if progress:
        progress("standard forms and sensitivities")
    table_info = circuit.symbols()
    table = {name: info["symbol"] for name, info in table_info.items()}
    put = fixture_values(circuit)  # partly symbolic: the fixtures not kept, into the loaded view only
    gone = set(fixed_values(circuit)) | {x.name for x in put}
    symbols = [sym for name, sym in table.items() if name != "s" and name not in gone]
    at_hz = None if at is None else _frequency(at)
    loaded = _stage(*(f.subs(put) if put else f for f in (h, zin, zout)), symbols, sensitivity, at_hz)
    ideal = _stage(h.ideal(), zin.ideal(), zout.ideal(), symbols, sensitivity, at_hz)
    values = circuit.values()
    if progress and numbers:
        progress("numbers at the values")
    numeric = {key: settled_numbers(st, values) if numbers else {} for key, st in (("loaded", loaded), ("ideal", ideal))}
    if sensitivity and numbers:
        if progress:
            progress("sensitivities at the values")
        for key, st in (("loaded", loaded), ("ideal", ideal)):
            numeric[key]["sensitivity"] = numeric_sensitivities(st, values)
    rules: tuple = ()
    note = None
    if sensitivity and circuit.keep is None:  # the sum rules need every symbol
        params = {n: info["unit"] for n, info in table_info.items() if info["role"] == "parameter"}
        unknown = tuple(n for n, unit in params.items() if unit is None and table[n] in h.free_symbols())
        if unknown:
            note = finding("sum-rules-parameter-unit", names=unknown)
        else:
            if progress:
                progress("sum-rule checks")
            rules = sum_rules(loaded.sensitivity, scaling_classes(circuit), loaded.factors)
            if not rules:
                note = finding("sum-rules-no-w0")
    return Analysis(circuit, loaded, ideal, numeric, rules, note, found, at_hz)


def _frequency(at) -> sympy.Rational:
    """A positive frequency (Hz) from text or a number, exact."""
    v = parse_value(at, where="--at")
    if not v > 0:
        raise UsageError("--at", f"{at!r} is not a positive frequency", "give a frequency in Hz such as 10k")
    return v


def _root_of_symbols(e) -> bool:
    """True when a fractional power in ``e`` has a symbol in its base."""
    return any(p.exp.is_Rational and not p.exp.is_Integer and p.base.free_symbols for p in e.atoms(sympy.Pow))


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
        e = as_sympy(e).xreplace(values)
        # a large form with sqrt(2) or with symbols under a root stays as substituted: cancel would
        # expand the polynomials under the root
        rooted = e.has(sympy.sqrt(2)) or (e.free_symbols and _root_of_symbols(e))
        return e if rooted and sympy.count_ops(e) >= 200 else _tidy(e)

    def stage(st: StageResult) -> StageResult:
        f = st.form
        form = StandardForm(f.order, f.kind, sub(f.gain), sub(f.w0), sub(f.q), sub(f.tau), {})
        cut = Cutoff(sub(st.cutoff.value), None if st.cutoff.edges is None else tuple(sub(e) for e in st.cutoff.edges),
                     sub(st.cutoff.bandwidth), st.cutoff.reason)
        sens = {k: (None if v is None else {n: sub(e) for n, e in v.items()}) for k, v in st.sensitivity.items()}
        zin, zout = (None if z is None else z.subs(values) for z in (st.zin, st.zout))  # None: a probe's view
        return StageResult(st.transfer.subs(values), zin, zout, form, cut, sens)

    return Analysis(analysis.circuit, stage(analysis.loaded), stage(analysis.ideal), analysis.numeric,
                    analysis.rules, analysis.rules_note, tuple(substitute_loop(x, values) for x in analysis.loops),
                    analysis.at_hz)


__all__ = ["RESPONSE_KINDS", "Analysis", "Cutoff", "StageResult", "StandardForm", "analyse", "cutoff", "loaded_transfer",
           "numeric_cutoff", "numeric_sensitivities", "numeric_values", "second_order_root", "stability",
           "settled_numbers", "standard_form", "substitute"]
