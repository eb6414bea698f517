"""Standard forms, cutoff, loaded versus ideal, and load limits.

:func:`analyse` derives everything :mod:`symfilt.export` shows for a circuit:
the transfer function, input and output impedance, the standard form (kind, K,
w0, Q), the -3 dB cutoff and the sensitivities, once for the stage as connected
("loaded") and once alone ("ideal": R_s -> 0, R_L -> oo, C_L -> 0).

Standard forms used (common practice; e.g. Schaumann & Van Valkenburg, *Design of
Analog Filters*, ch. on second-order sections):

* first order: ``K / (1 + s tau)`` (low-pass), ``K s tau / (1 + s tau)`` (high-pass), w0 = 1/tau;
* second order: denominator ``1 + s/(w0 Q) + s^2/w0^2``; low-pass ``K``, high-pass
  ``K s^2/w0^2``, band-pass ``K s/(w0 Q)``, notch ``K (1 + s^2/w0^2)``, all-pass
  ``K (1 - s/(w0 Q) + s^2/w0^2)``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Callable, Mapping

import sympy

from symfilt.model.circuit import LOAD_C, LOAD_R, SOURCE_R, Circuit, S
from symfilt.engine.elimination import DEFAULT_MAX_TERMS
from symfilt.analysis.network import NetworkFunction, derive
from symfilt.analysis.sensitivity import product_sensitivities, sum_rules

RESPONSE_KINDS = ("lowpass", "highpass", "bandpass", "notch", "allpass", "general")
_SMALL = 120  # simplify expressions up to this many operations


def _tidy(e):
    if e is None:
        return None
    e = sympy.cancel(e) if sympy.count_ops(e) < 400 else e
    return sympy.factor(e) if sympy.count_ops(e) < _SMALL else e


def _zero(e) -> bool:
    return e == 0 or sympy.cancel(e) == 0


@dataclass(frozen=True)
class StandardForm:
    """A transfer function in the trade's standard form (order 1 or 2).

    Attributes
    ----------
    order : int
    kind : str
        One of :data:`RESPONSE_KINDS`.
    gain : sympy.Expr or None
        K: the pass-band gain of the standard form (DC gain of a low-pass, HF gain of a
        high-pass, the gain at w0 of a band-pass).
    w0 : sympy.Expr or None
        Natural (pole) angular frequency, rad/s.
    q : sympy.Expr or None
        Quality factor (second order only).
    tau : sympy.Expr or None
        Time constant (first order only).

    Examples
    --------
    >>> StandardForm(1, "lowpass", 1, sympy.Integer(1000)).w0
    1000
    """

    order: int
    kind: str
    gain: sympy.Expr | None = None
    w0: sympy.Expr | None = None
    q: sympy.Expr | None = None
    tau: sympy.Expr | None = None
    factors: dict = field(default_factory=dict, compare=False, repr=False)

    @property
    def zeta(self):
        """Damping ratio 1/(2Q), or None.

        Examples
        --------
        >>> StandardForm(2, "lowpass", 1, 1, sympy.Rational(1, 2)).zeta
        1
        """
        return None if self.q is None else _tidy(1 / (2 * self.q))


def standard_form(h: NetworkFunction) -> StandardForm:
    """Classify a transfer function of order <= 2 and read off K, w0, Q.

    Parameters
    ----------
    h : NetworkFunction

    Returns
    -------
    StandardForm
        kind ``general`` (and no K, w0, Q) when it fits none of the forms.

    Examples
    --------
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> f = standard_form(NetworkFunction.from_expr(1 / (1 + S * R * C)))
    >>> f.kind, f.gain, f.w0, f.tau
    ('lowpass', 1, 1/(C*R), C*R)
    """
    order = h.order()
    b, a = h.coefficients()
    b = b + [sympy.Integer(0)] * (3 - len(b))
    a = a + [sympy.Integer(0)] * (3 - len(a))
    half = sympy.Rational(1, 2)

    def make(kind, gain_f, w0_f, q_f=None, tau_f=None):
        factors = {"w0": w0_f}
        if q_f is not None:
            factors["q"] = q_f
        if gain_f is not None:
            factors["gain"] = gain_f
        ev = lambda fs: None if fs is None else _tidy(sympy.Mul(*[p**e for p, e in fs]))
        return StandardForm(order, kind, ev(gain_f), ev(w0_f), ev(q_f), ev(tau_f), factors)

    if order == 1 and a[0] != 0 and a[1] != 0 and a[2] == 0 and b[2] == 0:
        w0_f, tau_f = [(a[0], 1), (a[1], -1)], [(a[1], 1), (a[0], -1)]
        if b[1] == 0:
            return make("lowpass", [(b[0], 1), (a[0], -1)], w0_f, None, tau_f)
        if b[0] == 0:
            return make("highpass", [(b[1], 1), (a[1], -1)], w0_f, None, tau_f)
        if _zero(b[0] * a[1] + b[1] * a[0]):
            return make("allpass", [(b[0], 1), (a[0], -1)], w0_f, None, tau_f)
        return make("general", None, w0_f, None, tau_f)
    if order == 2 and a[0] != 0 and a[1] != 0 and a[2] != 0:
        w0_f = [(a[0], half), (a[2], -half)]
        q_f = [(a[0], half), (a[2], half), (a[1], -1)]
        nz = [k for k in range(3) if b[k] != 0]
        if nz == [0]:
            return make("lowpass", [(b[0], 1), (a[0], -1)], w0_f, q_f)
        if nz == [2]:
            return make("highpass", [(b[2], 1), (a[2], -1)], w0_f, q_f)
        if nz == [1]:
            return make("bandpass", [(b[1], 1), (a[1], -1)], w0_f, q_f)
        if nz == [0, 2] and _zero(b[0] * a[2] - b[2] * a[0]):
            return make("notch", [(b[0], 1), (a[0], -1)], w0_f, q_f)
        if nz == [0, 1, 2] and _zero(b[0] * a[2] - b[2] * a[0]) and _zero(b[1] * a[0] + b[0] * a[1]):
            return make("allpass", [(b[0], 1), (a[0], -1)], w0_f, q_f)
        return make("general", None, w0_f, q_f)
    return StandardForm(order, "general")


@dataclass(frozen=True)
class Cutoff:
    """The -3 dB angular frequency (rad/s) relative to the pass-band gain.

    Attributes
    ----------
    value : sympy.Expr or None
        Closed form, when one exists.
    edges : tuple or None
        Band-pass: the lower and upper -3 dB edges (closed forms).
    bandwidth : sympy.Expr or None
        Band-pass: upper minus lower edge (w0/Q).
    reason : str
        Why there is no closed form (empty when there is one).

    Examples
    --------
    >>> Cutoff(None, reason="an all-pass has no cutoff").value is None
    True
    """

    value: sympy.Expr | None
    edges: tuple | None = None
    bandwidth: sympy.Expr | None = None
    reason: str = ""


def second_order_root(q):
    """sqrt(x + sqrt(x^2 + 1)) with x = 1 - 1/(2 Q^2): the -3 dB point of a second-order low-pass over w0.

    From |H(jw)|^2 = 1/2 (common practice). For Q = 1/sqrt(2) it is 1.

    Examples
    --------
    >>> sympy.simplify(second_order_root(1 / sympy.sqrt(2)))
    1
    """
    x = 1 - 1 / (2 * q**2)
    return sympy.sqrt(x + sympy.sqrt(x**2 + 1))


def cutoff(form: StandardForm) -> Cutoff:
    """Closed-form -3 dB cutoff from a standard form.

    First order: w0. Second-order low-pass: w0 * sqrt(x + sqrt(x^2 + 1)) with
    x = 1 - 1/(2 Q^2), valid for every Q (peaking included); high-pass: w0 divided
    by the same root; band-pass: edges w0 (sqrt(1 + 4Q^2) -+ 1)/(2Q).

    Examples
    --------
    >>> w, q = sympy.symbols("w0 Q", positive=True)
    >>> cutoff(StandardForm(2, "bandpass", 1, w, q)).bandwidth
    w0/Q
    """
    if form.order == 1 and form.kind in ("lowpass", "highpass"):
        return Cutoff(form.w0)
    if form.order == 2 and form.kind in ("lowpass", "highpass"):
        root = second_order_root(form.q)
        value = form.w0 * root if form.kind == "lowpass" else form.w0 / root
        return Cutoff(value)
    if form.order == 2 and form.kind == "bandpass":
        w0, q = form.w0, form.q
        lo = w0 * (sympy.sqrt(1 + 4 * q**2) - 1) / (2 * q)
        hi = w0 * (sympy.sqrt(1 + 4 * q**2) + 1) / (2 * q)
        return Cutoff(None, (lo, hi), _tidy(w0 / q), "a band-pass has two edges")
    if form.kind in ("allpass",):
        return Cutoff(None, reason="an all-pass has no cutoff")
    if form.kind == "notch":
        return Cutoff(None, reason="a notch is described by w0 and Q")
    return Cutoff(None, reason=f"no closed form for a {form.kind} response of order {form.order}")


def numeric_cutoff(h: NetworkFunction, values: Mapping) -> float | None:
    """-3 dB angular frequency (rad/s) found numerically: the lowest w > 0 where
    |H(jw)|^2 = |H_pass|^2 / 2, with H_pass the DC gain (or the HF gain when the DC gain is 0).

    The coefficients are evaluated at the values (compiled once per function), the
    polynomial in w^2 is scaled so its roots lie near 1, and mpmath's polyroots
    finds them (no numpy). None when a symbol has no value or there is no such
    frequency.

    Examples
    --------
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> h = NetworkFunction.from_expr(1 / (1 + S * R * C))
    >>> round(numeric_cutoff(h, {R: 1000, C: sympy.Rational(1, 10**6)}), 6)
    1000.0
    """
    coeffs = h.coefficient_values(values)
    if coeffs is None:
        return None
    ncs, dcs = (_trim(cs) for cs in coeffs)
    if not any(ncs) or not any(dcs):
        return None
    dc = None if dcs[0] == 0 else ncs[0] / dcs[0]
    hf = None if len(ncs) > len(dcs) else (ncs[-1] / dcs[-1] if len(ncs) == len(dcs) else 0.0)
    passband = dc if dc not in (None, 0.0) else hf
    if passband in (None, 0.0) or not math.isfinite(passband):
        return None
    # P(u) = 2 |N(jw)|^2 - |H_pass|^2 |D(jw)|^2 with u = w^2, lowest power first
    mag_n, mag_d = _magnitude_squared(ncs), _magnitude_squared(dcs)
    size = max(len(mag_n), len(mag_d))
    p = [2 * (mag_n[k] if k < len(mag_n) else 0.0) - passband**2 * (mag_d[k] if k < len(mag_d) else 0.0)
         for k in range(size)]
    roots = _positive_roots(p)
    if not roots:
        return None
    if dc in (None, 0.0):  # high-pass-like: the edge is the highest crossing
        return math.sqrt(roots[-1])
    return math.sqrt(roots[0])


def _trim(cs: list[float]) -> list[float]:
    cs = list(cs)
    while len(cs) > 1 and cs[-1] == 0:
        cs.pop()
    return cs


def _magnitude_squared(cs: list[float]) -> list[float]:
    """|sum c_k (jw)^k|^2 as coefficients in u = w^2, lowest first."""
    re = [c * (1 if k % 4 == 0 else -1) if k % 2 == 0 else 0.0 for k, c in enumerate(cs)]
    im = [c * (1 if k % 4 == 1 else -1) if k % 2 == 1 else 0.0 for k, c in enumerate(cs)]
    out = [0.0] * (2 * len(cs) - 1)
    for poly in (re, im):
        for i, a in enumerate(poly):
            if a:
                for j, b in enumerate(poly):
                    if b:
                        out[i + j] += a * b
    return out[::2]


def _positive_roots(p: list[float]) -> list[float]:
    """Positive real roots of a polynomial (lowest coefficient first), sorted.

    The variable is scaled so that the roots are near 1 before mpmath's polyroots
    runs, since circuit coefficients span many decades.
    """
    import mpmath

    p = _trim(p)
    while p and p[0] == 0:
        p = p[1:]
    n = len(p) - 1
    if n < 1:
        return []
    scale = (abs(p[0]) / abs(p[-1])) ** (1.0 / n)
    q = [c * scale**k for k, c in enumerate(p)]
    top = max(abs(c) for c in q)
    q = [c / top for c in q]
    try:
        roots = mpmath.polyroots(q[::-1], maxsteps=200, extraprec=200)
    except mpmath.libmp.NoConvergence:
        return []
    out = []
    for r in roots if isinstance(roots, list) else [roots]:
        r = complex(r)
        if abs(r.imag) <= 1e-9 * max(1.0, abs(r.real)) and r.real > 0:
            out.append(r.real * scale)
    return sorted(out)


@dataclass(frozen=True)
class StageResult:
    """Everything derived for one view of the stage (loaded or ideal).

    Attributes
    ----------
    transfer, zin, zout : NetworkFunction
    form : StandardForm
    cutoff : Cutoff
    sensitivity : dict
        quantity (``cutoff``, ``w0``, ``q``, ``dc_gain``) -> symbol name -> S_x^y
        (a quantity without a closed form maps to None).
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


def _finite(x) -> float | None:
    try:
        v = complex(sympy.N(x, 30))
    except (TypeError, ValueError):
        return None
    if abs(v.imag) > 1e-12 * max(1.0, abs(v.real)) or not math.isfinite(v.real):
        return None
    return v.real


def numeric_values(stage: StageResult, values: Mapping) -> dict:
    """Numbers for a stage at the circuit's values: cutoff_hz, f0_hz, q, dc_gain, dc_gain_db.

    A quantity whose symbols do not all have values is left out; one that is
    undefined at these values (division by zero) is None.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> c = catalogue.build("rc-lowpass")
    >>> a = analyse(c, sensitivity=False)
    >>> round(numeric_values(a.ideal, c.values())["cutoff_hz"], 2)
    1539.22
    """
    out: dict[str, float | None] = {}

    def known(e) -> bool:
        return e is not None and not (sympy.sympify(e).free_symbols - set(values))

    def num(e):
        return _finite(sympy.sympify(e).xreplace(dict(values)))

    if stage.cutoff.value is not None and known(stage.cutoff.value):
        w = num(stage.cutoff.value)
        out["cutoff_hz"] = None if w is None else w / (2 * math.pi)
    elif stage.form.order >= 2 and stage.cutoff.edges is None and stage.form.kind == "general" or stage.form.order >= 3:
        if not (stage.transfer.free_symbols() - {S} - set(values)):
            w = numeric_cutoff(stage.transfer, values)
            out["cutoff_hz"] = None if w is None else w / (2 * math.pi)
    if stage.cutoff.edges is not None and all(known(e) for e in stage.cutoff.edges):
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
    stab = stability(stage.transfer, values)
    if stab is not None:
        out["stability"] = stab
    return out


def stability(h: NetworkFunction, values: Mapping) -> str | None:
    """``stable``, ``marginal`` (poles on the jw axis) or ``unstable`` (poles in the right
    half-plane) at the given values; None when a symbol has no value.

    Poles are the roots of the denominator at the values (sympy nroots, 30 digits).

    Examples
    --------
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> stability(NetworkFunction.from_expr(1 / (1 + S * R * C)), {R: 1, C: 1})
    'stable'
    >>> stability(NetworkFunction.from_expr(1 / (1 + S**2)), {})
    'marginal'
    """
    if h.infinite:
        return None
    den = sympy.expand(h.den.xreplace(dict(values)))
    if den.free_symbols - {S}:
        return None
    poly = sympy.Poly(den, S)
    if poly.degree() < 1:
        return "stable"
    roots = [complex(r) for r in poly.nroots(n=30, maxsteps=200)]
    scale = max(1.0, max(abs(r) for r in roots))
    worst = max(r.real for r in roots)
    if worst > 1e-12 * scale:
        return "unstable"
    if worst > -1e-12 * scale:
        return "marginal"
    return "stable"


@dataclass(frozen=True)
class Analysis:
    """A circuit analysed loaded and ideal, side by side.

    Attributes
    ----------
    circuit : Circuit
    loaded, ideal : StageResult
    numeric : dict
        ``{"loaded": {...}, "ideal": {...}}`` from :func:`numeric_values`.
    rules : tuple of SumRule
        Sum-rule self-checks on the loaded w0 and Q sensitivities (empty when they do not apply).
    rules_note : str
        Why the sum rules do not apply, when they do not.

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
    rules_note: str = ""

    def ratio(self, key: str) -> float | None:
        """Loaded over ideal of a numeric quantity (``cutoff_hz``, ``dc_gain``, ``f0_hz``, ``q``).

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
    if progress:
        progress("standard forms and sensitivities")
    table = circuit.symbol_table()
    symbols = [sym for name, sym in table.items() if name != "s"]
    loaded = _stage(h, zin, zout, symbols, sensitivity)
    ideal = _stage(h.ideal(), zin.ideal(), zout.ideal(), symbols, sensitivity)
    values = circuit.values()
    numeric = {"loaded": numeric_values(loaded, values), "ideal": numeric_values(ideal, values)}
    if sensitivity:
        for key, st in (("loaded", loaded), ("ideal", ideal)):
            numeric[key]["sensitivity"] = numeric_sensitivities(st, values)
    rules: tuple = ()
    note = ""
    if sensitivity:
        blockers = [p.name for p in circuit.parts if p.kind == "inductor" or (p.kind == "opamp" and p.model == "single-pole")]
        if blockers:
            one = len(blockers) == 1
            note = (f"sum rules not checked: {', '.join(blockers)} {'has a frequency of its' if one else 'have frequencies of their'}"
                    " own (an inductor or a single-pole op-amp)")
        elif loaded.form.w0 is None:
            note = "sum rules not checked: no w0 (not a first- or second-order standard form)"
        else:
            res = [p.name for p in circuit.parts if p.kind == "resistor"] + [n for n in (SOURCE_R, LOAD_R) if n in table]
            caps = [p.name for p in circuit.parts if p.kind == "capacitor"] + [n for n in (LOAD_C,) if n in table]
            rules = sum_rules(loaded.sensitivity, res, caps)
    return Analysis(circuit, loaded, ideal, numeric, rules, note)


def numeric_sensitivities(stage: StageResult, values: Mapping) -> dict:
    """Sensitivities of a stage as numbers at the given values.

    Returns quantity -> symbol name -> float, only for tables whose every symbol has a value.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> c = catalogue.build("rc-lowpass")
    >>> numeric_sensitivities(analyse(c).ideal, c.values())["w0"]
    {'R1': -1.0, 'C1': -1.0}
    """
    out = {}
    for quantity, table in stage.sensitivity.items():
        if not table:
            continue
        row = {}
        for name, e in table.items():
            e = sympy.sympify(e)
            if e.free_symbols - set(values):
                row = None
                break
            row[name] = _finite(e.xreplace(dict(values)))
        if row is not None:
            out[quantity] = row
    if "cutoff" not in out and stage.sensitivity and stage.cutoff.value is None and stage.cutoff.edges is None:
        row = _numeric_cutoff_sensitivity(stage.transfer, values)
        if row is not None:
            out["cutoff"] = row
    return out


def _numeric_cutoff_sensitivity(h: NetworkFunction, values: Mapping) -> dict | None:
    """S_x^cutoff by a central difference in log x of the numeric cutoff (no closed form)."""
    from symfilt.analysis.sensitivity import numeric_sensitivity

    if h.free_symbols() - {S} - set(values) or numeric_cutoff(h, values) is None:
        return None
    row = {}
    for x in sorted(h.free_symbols() - {S}, key=str):
        x0 = values[x]

        def f(v, x=x):
            return numeric_cutoff(h, {**values, x: sympy.Rational(repr(v))})

        row[str(x)] = numeric_sensitivity(f, float(x0))
    return row


def substitute(analysis: Analysis) -> Analysis:
    """The same analysis with the circuit's values put into every formula.

    Symbols without a value stay symbols. Numbers stay exact.

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
                    analysis.rules, analysis.rules_note)
