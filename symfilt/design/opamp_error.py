"""The error a real op-amp adds: DC gain and cutoff against the ideal op-amp.

Every op-amp is switched to the ``gain`` model (open-loop gain A_U) or the
``single-pole`` model (A(s) = A0 2 pi GBW / (A0 s + 2 pi GBW)), or (``model=None``)
each op-amp keeps its own model and its own ``rout``/``rin``/``cin``; the circuit is
derived again, and the DC gain and the cutoff are compared with the ideal-op-amp
circuit (every op-amp ideal, its ``rout``/``rin``/``cin`` removed), loaded both times:

* exactly, as the relative error ``real/ideal - 1`` in closed form (where the
  cutoff has one: order <= 2);
* to first order in 1/A_U and 1/GBW_U: the relative error is approximately
  ``sum c_U / A_U + sum d_U / GBW_U``. For the DC gain, c_U is the derivative at
  eps = 0 of H(0) with A_U = 1/eps, over the ideal H(0). For the cutoff (pass band
  at DC), the cutoff solves F(u, eps) = 2 |N(jw)|^2 D(0)^2 - N(0)^2 |D(jw)|^2 = 0
  with u = w^2; implicit differentiation at the ideal cutoff u0 gives
  d(ln w_c)/d eps = -F_eps / (2 u0 F_u). The small parameters are 1/A_U, and
  1/GBW_U and 1/P2_U for the models that have them.

An op-amp's ``rout``, ``rin`` or ``cin`` does not vanish as A_U grows, so with any
of them present there are no first-order terms: the exact error (closed form, and
at the values) is all that is given, and a note says so.

Reference for the check in the tests: an inverting amplifier with open-loop gain A
has G = -(R2/R1) / (1 + (1 + R2/R1)/A), whose first-order relative error is
-(1 + R2/R1)/A (Sedra & Smith, *Microelectronic Circuits*, ch. 2; from memory).

Examples
--------
>>> from symfilt import catalogue
>>> e = opamp_error(catalogue.build("inverting-lowpass"), "gain", gain="100k")
>>> e.dc_first_order
{'A_U1': -(R1 + R2 + R_s)/(R1 + R_s)}
>>> round(e.numeric["dc_gain"]["error"] * 1e5, 4)
-3.0754
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass, field, replace

import flint
import sympy

from symfilt.analysis.forms import cutoff as cutoff_of
from symfilt.analysis.forms import nested_radical, standard_form
from symfilt.analysis.fastfactor import cancel_rational, factor
from symfilt.analysis.findings import finding
from symfilt.analysis.numeric import finite_float, numeric_cutoff, tidy
from symfilt.design.opamp_eps import EpsPolys, eps_polys, same_ratio, value_at
from symfilt.model.circuit import Circuit, S
from symfilt.model.fixture import Fixture
from symfilt.model.opamp import model_parameters
from symfilt.engine.elimination import DEFAULT_MAX_TERMS
from symfilt.engine.rational import cancel_pair, coefficients_in
from symfilt.errors import UsageError
from symfilt.analysis.network import NetworkFunction, derive

_BIG = 400  # operations above which an exact expression is left unsimplified
_SHOWN = 250  # operations above which a first-order coefficient is given as a number only


@dataclass(frozen=True)
class OpampError:
    """DC gain and cutoff of a circuit with real op-amps against ideal ones (loaded).

    Parameters
    ----------
    model : str
        ``gain``, ``single-pole``, or ``as given`` (each op-amp its own model and parameters).
    dc_ideal, dc_real : sympy.Expr
        H(0) with ideal and with real op-amps.
    dc_error : sympy.Expr or None
        Exact relative error dc_real/dc_ideal - 1.
    dc_first_order : dict
        Symbol name (A_U1, ...) -> c: the relative error is about sum c / symbol.
    cutoff_ideal, cutoff_real : sympy.Expr or None
        Closed-form cutoffs (rad/s), where they exist.
    cutoff_error : sympy.Expr or None
        Exact relative error of the cutoff, where both closed forms exist.
    cutoff_first_order : dict or None
        Symbol name (A_U1, GBW_U1, ...) -> coefficient, as for the DC gain; None when the
        ideal cutoff has no closed form or the coefficients are too large to show.
    numeric : dict
        ``{"dc_gain": {...}, "cutoff_hz": {...}}`` with ``ideal``, ``real``, ``error``
        (exact relative) and ``first_order`` (the first-order estimate), where values allow.
    notes : tuple of Finding
        What was left out, worded by :mod:`symfilt.export.findings`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> e = opamp_error(catalogue.build("inverting-lowpass"), "gain", gain="100k")
    >>> e.model, e.cutoff_ideal, e.cutoff_first_order
    ('gain', 1/(C1*R2), {'A_U1': R2/(R1 + R_s)})
    """

    model: str
    dc_ideal: sympy.Expr
    dc_real: sympy.Expr
    dc_error: sympy.Expr | None
    dc_first_order: dict
    cutoff_ideal: sympy.Expr | None
    cutoff_real: sympy.Expr | None
    cutoff_error: sympy.Expr | None
    cutoff_first_order: dict | None
    numeric: dict = field(default_factory=dict)
    notes: tuple = ()


def _second_order_coefficient(polys: EpsPolys, f_ideal, name: str):
    """d(ln w_c)/d(1/X) at 1/X = 0 for a second-order low-pass or high-pass, through w0 and Q:
    w_c = w0 r(Q)^(+-1) (analysis.second_order_root), so d ln w_c = d ln w0 +- g d ln Q with
    g = 1/(2 Q^2 sqrt(x^2 + 1)), x = 1 - 1/(2 Q^2), Q the ideal one. With a_k the
    denominator's coefficients of s^k in e = 1/X, w0^2 = a0/a2 and Q^2 = a0 a2/a1^2, so
    d ln w0 = (a0'/a0 - a2'/a2)/2 and d ln Q = (a0'/a0 + a2'/a2)/2 - a1'/a1 at e = 0 (flint).
    None when a term is too large to show (its polynomials alone have more than _SHOWN additions)."""
    a0, a1, a2 = (coefficients_in(polys.den, "s") + [polys.den * 0] * 3)[:3]
    (n0, d0), (n1, d1), (n2, d2) = (polys.log_slope(a, name) for a in (a0, a1, a2))
    a_pair = cancel_pair(n0 * d2 - n2 * d0, 2 * d0 * d2)
    b_pair = cancel_pair(n0 * d2 * d1 + n2 * d0 * d1 - 2 * n1 * d0 * d2, 2 * d0 * d1 * d2)
    if any(len(n) + len(d) - 2 > _SHOWN for n, d in (a_pair, b_pair)):
        return None  # more additions than a shown coefficient has operations, whatever tidy makes of it
    a = tidy(polys.to_sympy(a_pair[0]) / polys.to_sympy(a_pair[1]))
    if b_pair[0] == 0:
        return a
    b = tidy(polys.to_sympy(b_pair[0]) / polys.to_sympy(b_pair[1]))
    sign = 1 if f_ideal.kind == "lowpass" else -1
    return a + sign * b * _q_weight(f_ideal.q)


@functools.lru_cache(maxsize=64)
def _q_weight(q):
    """g = 1/(2 Q^2 sqrt(x^2 + 1)), x = 1 - 1/(2 Q^2): the weight of d ln Q in d ln w_c (one per ideal Q)."""
    q2 = _cancel(q**2)
    x = 1 - 1 / (2 * q2)
    # sympy.factor's own answer, each polynomial factored by flint (3.7 s -> 20 ms for state-variable)
    return 1 / (2 * q2 * sympy.sqrt(factor(_cancel(x**2 + 1))))


def _cancel(e):
    """``sympy.cancel(e)``, by flint where :func:`cancel_rational` takes the shape."""
    done = cancel_rational(e)
    return sympy.cancel(e) if done is None else done


#: The ``model`` of an :class:`OpampError` of the circuit as given.
AS_GIVEN = "as given"
#: The models ``--opamp-model`` switches every op-amp to for the error against ideal ones.
OPAMP_ERROR_MODELS = ("gain", "integrator", "single-pole")


def needs_opamp_error(circuit: Circuit) -> bool:
    """True when an op-amp of the circuit is not ideal: a finite model, or ``rout``/``rin``/``cin`` present.

    Parameters
    ----------
    circuit : Circuit
        Any circuit.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> c = catalogue.build("sallen-key-lowpass")
    >>> needs_opamp_error(c), needs_opamp_error(c.with_values({"Rout_U1": "50"}))
    (False, True)
    """
    return any(p.kind == "opamp" and (p.model != "ideal" or _extras(p)) for p in circuit.parts)


def _extras(part) -> list[str]:
    """The op-amp parameters of ``part`` that stay as A grows: rout, rin, cin when present."""
    return [k for k in ("rout", "rin", "cin") if getattr(part, k).present]


def ideal_opamps(circuit: Circuit) -> Circuit:
    """Every op-amp ideal, with its ``rout``, ``rin`` and ``cin`` removed.

    Parameters
    ----------
    circuit : Circuit
        Any circuit.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> c = catalogue.build("sallen-key-lowpass").with_values({"Rout_U1": "50"})
    >>> ideal_opamps(c).part("U1").rout.present
    False
    """
    parts = tuple(replace(p, model="ideal", rout=Fixture(), rin=Fixture(), cin=Fixture())
                  if p.kind == "opamp" else p for p in circuit.parts)
    return replace(circuit, parts=parts)


def opamp_error(circuit: Circuit, model: str | None = "gain", *, gain=None, gbw=None,
                max_terms: int = DEFAULT_MAX_TERMS) -> OpampError:
    """DC gain and cutoff error of real op-amps against ideal ones, exact and to first order.

    Parameters
    ----------
    circuit : Circuit
        With at least one op-amp.
    model : {"gain", "integrator", "single-pole"} or None
        Switch every op-amp to this model; None keeps the circuit as given (each
        op-amp's own model, gain, gbw, pole2, rout, rin and cin).
    gain, gbw : value, optional
        Open-loop gain and gain-bandwidth product (Hz) for op-amps that have none.
    max_terms : int

    Returns
    -------
    OpampError

    Examples
    --------
    >>> from symfilt import catalogue
    >>> e = opamp_error(catalogue.build("inverting-lowpass"), "single-pole", gain="100k", gbw="1M")
    >>> sorted(e.cutoff_first_order)
    ['A_U1', 'GBW_U1']
    >>> n = e.numeric["cutoff_hz"]
    >>> abs(n["first_order"] / n["error"] - 1) < 0.01
    True
    """
    if model is not None and model not in OPAMP_ERROR_MODELS:
        raise UsageError("--opamp-model", f"{model!r} is not a model the op-amp error compares",
                         "use " + ", ".join(OPAMP_ERROR_MODELS))
    opamps = [p for p in circuit.parts if p.kind == "opamp"]
    if not opamps:
        raise UsageError("opamp error", "the circuit has no op-amp", "add one, or leave out --opamp-model")
    real = circuit if model is None else circuit.with_opamp_model(model, gain=gain, gbw=gbw)
    ideal = ideal_opamps(circuit)
    h_real = derive(real, max_terms=max_terms)
    h_ideal = derive(ideal, max_terms=max_terms)
    notes: list = []
    extras = sorted({k for p in real.parts if p.kind == "opamp" for k in _extras(p)})
    if extras:
        notes.append(finding("opamp-error-exact-only", parameters=tuple(extras)))
    eps = {} if extras else _eps_symbols([p for p in real.parts if p.kind == "opamp"])
    polys = eps_polys(h_real, [str(sym) for sym in eps])
    n0, d0 = polys.at_zero(polys.num), polys.at_zero(polys.den)
    if not extras and (d0 == 0 or not same_ratio(polys, n0, d0, h_ideal)):
        raise UsageError("opamp error", "the circuit does not tend to its ideal-op-amp form as A grows",
                         "check every op-amp has negative feedback")
    model = AS_GIVEN if model is None else model
    dc_ideal, dc_real = h_ideal.dc_gain(), h_real.dc_gain()
    dc_error, dc_first = _dc_terms(dc_ideal, dc_real, polys, eps, notes)
    f_real, f_ideal = standard_form(h_real), standard_form(h_ideal)
    c_real, c_ideal = cutoff_of(f_real).value, cutoff_of(f_ideal).value
    cut_error = _cutoff_error(c_real, c_ideal, f_real, bool(extras), notes)
    if c_real is None:
        notes.append(finding("no-closed-form-real-cutoff", model=model, order=h_real.order()))
    values = dict(real.values())
    cut_first = cut_first_num = None
    if extras:
        pass
    elif dc_ideal not in (0, sympy.oo, sympy.zoo):
        implicit = _implicit(polys)
        if c_ideal is not None:
            cut_first = _cutoff_first_order((f_real, f_ideal), polys, implicit, c_ideal, eps, notes)
        w_ideal = finite_float(c_ideal, values) if c_ideal is not None else numeric_cutoff(h_ideal, values)
        if w_ideal is not None and all(sym in values for sym in eps):
            cut_first_num = _cutoff_first_order_number(polys, implicit, w_ideal, values)
        elif cut_first == {}:  # every first-order term is zero: so is the estimate, whatever A is
            cut_first_num = 0.0
    else:
        notes.append(finding("first-order-needs-dc-passband"))
    numeric = _numbers((dc_ideal, dc_real, dc_first), (c_ideal, c_real, h_ideal, h_real, f_real), cut_first_num,
                       eps, values)
    return OpampError(model, dc_ideal, dc_real, dc_error, dc_first, c_ideal, c_real, cut_error, cut_first, numeric,
                      tuple(notes))


def _eps_symbols(opamps) -> dict:
    """Each op-amp symbol of its model (A_U; GBW_U; P2_U) -> the small parameter e = 1/symbol."""
    eps = {}
    for p in opamps:
        for param in model_parameters(p.model):
            name = param.symbol(p.name)
            eps[sympy.Symbol(name, positive=True)] = sympy.Symbol(f"eps_{name}", positive=True)
    return eps


def _dc_terms(dc_ideal, dc_real, polys: EpsPolys, eps: dict, notes: list) -> tuple:
    """(exact relative DC error or None, first-order coefficients by symbol name)."""
    if dc_ideal in (0, sympy.oo, sympy.zoo):
        notes.append(finding("ideal-dc-gain-zero"))
        return None, {}
    dc_error = tidy(dc_real / dc_ideal - 1)
    dc_first = {}
    ndc, ddc = polys.at_dc(polys.num), polys.at_dc(polys.den)
    n00, d00 = polys.at_zero(ndc), polys.at_zero(ddc)
    for name in (str(sym) for sym in eps):
        if name not in polys.eps:
            continue
        # d/de (n/d) at e = 0 over the ideal n/d: (n' d - n d') / (n d)
        dn, dd = polys.slope(ndc, name), polys.slope(ddc, name)
        c = tidy(polys.quotient(dn * d00 - n00 * dd, n00 * d00))
        if c != 0:
            dc_first[name] = c
    return dc_error, dc_first


def _cutoff_error(c_real, c_ideal, f_real, exact_only: bool, notes: list):
    """The exact relative cutoff error in closed form, or None (with a note when too large)."""
    cut_error = c_real / c_ideal - 1 if c_real is not None and c_ideal is not None else None
    nested = cut_error is not None and nested_radical(cut_error)
    if cut_error is not None and f_real.kind != "general" and not nested and sympy.count_ops(cut_error) <= _BIG:
        cut_error = tidy(cut_error)
    if cut_error is not None and (f_real.kind == "general" or nested or sympy.count_ops(cut_error) > _SHOWN):
        cut_error = None
        notes.append(finding("cutoff-error-too-large", exact_only=exact_only))
    return cut_error


def _implicit(polys: EpsPolys) -> tuple:
    """(F_u, {X: F_e}) at e = 0 (flint) for F(u, e) = 2 |N(jw)|^2 D(0)^2 - N(0)^2 |D(jw)|^2, u = w^2."""
    num, den = polys.num, polys.den
    big = (2 * polys.magnitude_squared(num) * polys.at_dc(den) ** 2
           - polys.at_dc(num) ** 2 * polys.magnitude_squared(den))
    return polys.at_zero(big.derivative(polys.u)), {name: polys.slope(big, name) for name in polys.eps}


def _cutoff_first_order(forms: tuple, polys: EpsPolys, implicit: tuple, c_ideal, eps: dict,
                        notes: list) -> dict | None:
    """d(ln w_c)/d(1/X) per symbol X: through w0 and Q at second order, else by implicit differentiation."""
    f_real, f_ideal = forms
    f_u, f_eps = implicit
    u, u0 = polys.symbols[polys.u], c_ideal**2
    f_u_expr = None  # F_u in sympy, made once if the implicit route is taken
    cut_first = {}
    second = f_real.order == f_ideal.order == 2 and f_real.kind == f_ideal.kind in ("lowpass", "highpass")
    for name in (str(sym) for sym in eps):
        if name not in polys.eps:
            continue
        if second:
            c = _second_order_coefficient(polys, f_ideal, name)
            if c is None:
                notes.append(finding("first-order-cutoff-too-large"))
                return None
        else:
            f_u_expr = polys.to_sympy(f_u) if f_u_expr is None else f_u_expr
            c = -(polys.to_sympy(f_eps[name]) / f_u_expr).xreplace({u: u0}) / (2 * u0)
            c = tidy(c) if sympy.count_ops(c) < _BIG else c
        if sympy.count_ops(c) > _SHOWN:
            notes.append(finding("first-order-cutoff-too-large"))
            return None
        if c != 0:
            cut_first[name] = c
    return cut_first


def _cutoff_first_order_number(polys: EpsPolys, implicit: tuple, w_ideal: float, values: dict) -> float | None:
    """The first-order relative cutoff error at the values: sum of -F_e / (2 u0 F_u) / X (exact, then float)."""
    f_u, f_eps = implicit
    u0n = w_ideal**2
    from symfilt.analysis.vectorised import exact_point  # loaded only where an op-amp error is worked out

    u0 = sympy.Rational(u0n)
    point = exact_point(polys.symbols, values, unvalued_zero=False)  # an unvalued symbol: value_at gives None
    point |= {name: flint.fmpq(0) for name in polys.eps} | {polys.u: flint.fmpq(int(u0.p), int(u0.q))}
    fu = value_at(f_u, point)
    if fu in (None, 0):
        return None
    total = 0.0
    for name, fe in f_eps.items():
        fen = value_at(fe, point)
        if fen is None:
            return None
        total += -fen / fu / (2 * u0n) / float(values[polys.symbols[name]])
    return total


def _numbers(dc: tuple, cut: tuple, cut_first_num, eps: dict, values: dict) -> dict:
    """``{"dc_gain": {...}, "cutoff_hz": {...}}``: ideal, real, exact and first-order error, where values allow."""
    dc_ideal, dc_real, dc_first = dc
    c_ideal, c_real, h_ideal, h_real, f_real = cut
    numeric: dict = {}
    h_at = h_real.subs(values)
    valued = not (h_at.free_symbols() - {S})
    dci = finite_float(dc_ideal, values)
    dcr = finite_float(h_at.dc_gain()) if valued else finite_float(dc_real, values)
    if dci is not None and dcr is not None and dci != 0:
        fo = None
        if eps and all(sym in values for sym in eps):
            fo = sum(finite_float(c, values) / float(values[sympy.Symbol(k, positive=True)]) for k, c in dc_first.items())
        numeric["dc_gain"] = {"ideal": dci, "real": dcr, "error": dcr / dci - 1, "first_order": fo}
    wi = finite_float(c_ideal, values) if c_ideal is not None else numeric_cutoff(h_ideal, values)
    if c_real is None:
        wr = numeric_cutoff(h_real, values)
    else:
        wr = _closed_at(c_real, h_at, f_real, values) if valued else finite_float(c_real, values)
    if wi is not None and wr is not None:
        numeric["cutoff_hz"] = {"ideal": wi / (2 * math.pi), "real": wr / (2 * math.pi), "error": wr / wi - 1,
                                "first_order": cut_first_num}
    return numeric


def _closed_at(closed, h_at: NetworkFunction, form, values: dict) -> float | None:
    """The float of a closed-form cutoff at the values, from the closed form of ``h_at`` (the function
    with the values put in: a short exact number) when its standard form is the same kind, else by
    putting the values into ``closed`` (the same number; slow for a large closed form)."""
    f_at = standard_form(h_at)
    if (f_at.order, f_at.kind) == (form.order, form.kind):
        return finite_float(cutoff_of(f_at).value)
    return finite_float(closed, values)


__all__ = ["AS_GIVEN", "OPAMP_ERROR_MODELS", "OpampError", "ideal_opamps", "needs_opamp_error", "opamp_error"]
