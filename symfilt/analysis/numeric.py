"""The numeric helpers, once: |P(jw)|^2, the -3 dB search, log-x differences, finite floats, tidying.

Every layer above uses these (analysis, design): one rule for the pass band of a
numeric cutoff, one central difference for a numeric sensitivity, one test of
"a finite real float or None", one way of tidying an exact expression.

The pass-band rule (:func:`passband_gain`): the pass band is at DC when the DC gain
exists and is not zero, else at infinity (the HF gain); the cutoff is the lowest
crossing of |H|^2 = |H_pass|^2 / 2 for a pass band at DC and the highest one for a
pass band at infinity.

numpy is imported only inside :func:`batch_cutoff` and :func:`poly_values` (it is an optional dependency).
"""

from __future__ import annotations

import functools
import math
from typing import Callable, Mapping, Sequence

import sympy

from symfilt.analysis.fastfactor import cancel_rational, factor, factor_power_product
from symfilt.analysis.roots import exact_roots
from symfilt.model.safe import as_sympy

#: Relative imaginary part below which a complex value counts as real.
IMAG_TOL = 1e-12
#: Relative imaginary part below which a polynomial root counts as real.
ROOT_IMAG_TOL = 1e-9


def trim(cs: Sequence[float]) -> list[float]:
    """The coefficients (lowest power first) without trailing exact zeros (one is kept).

    Parameters
    ----------
    cs : sequence of float
        Polynomial coefficients, lowest power first.

    Returns
    -------
    list of float

    Examples
    --------
    >>> trim([1.0, 2.0, 0.0, 0.0]), trim([0.0])
    ([1.0, 2.0], [0.0])
    """
    cs = list(cs)
    while len(cs) > 1 and cs[-1] == 0:
        cs.pop()
    return cs


def magnitude_squared(coeffs: Sequence, zero=0.0) -> list:
    """|P(jw)|^2 as coefficients in u = w^2 (lowest first) for P(s) = sum c_k s^k.

    Works on floats, numpy arrays (one sample per element) and sympy expressions
    alike: only + and * are used. Exact scalar zeros are skipped.

    Parameters
    ----------
    coeffs : sequence
        c_0, c_1, ... of P(s).
    zero : object
        The zero the sums start from (``sympy.Integer(0)`` for exact coefficients).

    Returns
    -------
    list
        d_0, d_1, ... with |P(jw)|^2 = sum d_k u^k (as many as ``coeffs``).

    Examples
    --------
    >>> magnitude_squared([1.0, 2.0])  # |1 + 2jw|^2 = 1 + 4 w^2
    [1.0, 4.0]
    """
    signed = [c if k % 4 in (0, 1) else -c for k, c in enumerate(coeffs)]
    out = [zero] * len(signed)
    for parity in (0, 1):
        part = [(k, c) for k, c in enumerate(signed) if k % 2 == parity and not _exact_zero(c)]
        for i, a in part:
            for j, b in part:
                out[(i + j) // 2] += a * b
    return out


def _exact_zero(c) -> bool:
    return isinstance(c, (int, float)) and c == 0


def passband_gain(num: Sequence[float], den: Sequence[float]) -> tuple[float | None, bool]:
    """The pass-band gain of H = N/D and whether the pass band is at DC.

    At DC when the DC gain exists and is not zero; else the HF gain (0 when the
    numerator's degree is lower, none when it is higher). The gain is None when it
    is zero, infinite or undefined (then there is no -3 dB point).

    Parameters
    ----------
    num, den : sequence of float
        Coefficients, lowest power of s first.

    Returns
    -------
    (gain, at_dc) : (float or None, bool)

    Examples
    --------
    >>> passband_gain([2.0], [1.0, 1.0]), passband_gain([0.0, 3.0], [1.0, 1.0])
    ((2.0, True), (3.0, False))
    """
    ncs, dcs = trim(num), trim(den)
    if not any(ncs) or not any(dcs):
        return None, True
    dc = None if dcs[0] == 0 else ncs[0] / dcs[0]
    hf = None if len(ncs) > len(dcs) else (ncs[-1] / dcs[-1] if len(ncs) == len(dcs) else 0.0)
    at_dc = dc not in (None, 0.0)
    gain = dc if at_dc else hf
    if gain in (None, 0.0) or not math.isfinite(gain):
        return None, at_dc
    return gain, at_dc


def cutoff_polynomial(num: Sequence, den: Sequence, gain) -> list:
    """P(u) = 2 |N(jw)|^2 - gain^2 |D(jw)|^2 in u = w^2, lowest power first: its positive
    roots are the -3 dB points.

    Parameters
    ----------
    num, den : sequence
        Coefficients of N(s) and D(s), lowest power first.
    gain : float
        The pass-band gain (from :func:`passband_gain`).

    Returns
    -------
    list
        Coefficients of P(u), lowest power first.

    Examples
    --------
    >>> cutoff_polynomial([1.0], [1.0, 1.0], 1.0)  # 2 - (1 + u)
    [1.0, -1.0]
    """
    mag_n, mag_d = magnitude_squared(num), magnitude_squared(den)
    size = max(len(mag_n), len(mag_d))
    return [2 * (mag_n[k] if k < len(mag_n) else 0.0) - gain**2 * (mag_d[k] if k < len(mag_d) else 0.0)
            for k in range(size)]


def positive_roots(p: Sequence[float]) -> list[float]:
    """Positive real roots of a polynomial (lowest coefficient first), sorted, each as often as its multiplicity.

    The roots come from :func:`exact_roots` on the coefficients taken exactly; a root whose
    imaginary part is below :data:`ROOT_IMAG_TOL` of its size counts as real.

    Parameters
    ----------
    p : sequence of float
        Coefficients, lowest power first.

    Returns
    -------
    list of float
        Empty when there is none (or a coefficient is not finite).

    Examples
    --------
    >>> [round(r, 9) for r in positive_roots([-2.0, 1.0, 1.0])]  # (u - 1)(u + 2)
    [1.0]
    """
    p = trim(p)
    while p and p[0] == 0:
        p = p[1:]
    if len(p) < 2:
        return []
    try:
        roots = exact_roots(p)
    except ValueError:
        return []
    return sorted(r.real for r in roots if abs(r.imag) <= ROOT_IMAG_TOL * abs(r) and r.real > 0)


def cutoff_from_coefficients(num: Sequence[float], den: Sequence[float]) -> float | None:
    """-3 dB angular frequency (rad/s) of H = N/D from float coefficients (lowest power
    first), by the pass-band rule of :func:`passband_gain`; None when there is none.

    Parameters
    ----------
    num, den : sequence of float
        Coefficients of N(s) and D(s), lowest power first.

    Returns
    -------
    float or None

    Examples
    --------
    >>> round(cutoff_from_coefficients([1.0], [1.0, 1e-3]), 6)
    1000.0
    """
    ncs, dcs = trim(num), trim(den)
    gain, at_dc = passband_gain(ncs, dcs)
    if gain is None:
        return None
    roots = positive_roots(cutoff_polynomial(ncs, dcs, gain))
    if not roots:
        return None
    return math.sqrt(roots[0] if at_dc else roots[-1])


def band_edges(num: Sequence[float], den: Sequence[float]) -> tuple[float, float] | None:
    """The -3 dB edges (rad/s) around the peak of a response with no pass band at DC or at
    high frequency (a band-pass of any order); None when there is no finite peak.

    The peak of |H(jw)|^2 = P(u)/Q(u), u = w^2, is at a positive root of P'Q - PQ' (mpmath,
    scaled as in :func:`positive_roots`); the edges are the nearest roots of
    2 P(u) - peak^2 Q(u) below and above it.

    Parameters
    ----------
    num, den : sequence of float
        Coefficients of N(s) and D(s), lowest power first.

    Returns
    -------
    (float, float) or None

    Examples
    --------
    >>> lo, hi = band_edges([0.0, 1.0], [1.0, 1.0, 1.0])  # s/(s^2 + s + 1): Q = 1, w0 = 1
    >>> round(lo, 6), round(hi, 6), round(hi - lo, 6)
    (0.618034, 1.618034, 1.0)
    """
    peaks = [(v, u) for u, v in magnitude_extrema(num, den)]
    if not peaks:
        return None
    top, u0 = max(peaks)
    roots = positive_roots(cutoff_polynomial(num, den, math.sqrt(top)))
    below, above = [u for u in roots if u < u0], [u for u in roots if u > u0]
    if not below or not above:
        return None
    return math.sqrt(below[-1]), math.sqrt(above[0])


def magnitude_extrema(num: Sequence[float], den: Sequence[float]) -> list[tuple[float, float]]:
    """The stationary points (u = w^2 > 0, |H(jw)|^2) of H = N/D on the jw axis, by u.

    |H(jw)|^2 = P(u)/Q(u); they are the positive roots of P'Q - PQ' (mpmath, scaled as in
    :func:`positive_roots`), where |H|^2 is finite.

    Parameters
    ----------
    num, den : sequence of float
        Coefficients of N(s) and D(s), lowest power first.

    Returns
    -------
    list of (float, float)

    Examples
    --------
    >>> [(round(u, 6), round(v, 6)) for u, v in magnitude_extrema([1.0], [1.0, 0.5, 1.0])]  # Q = 2 low-pass
    [(0.875, 4.266667)]
    """
    p, q = trim(magnitude_squared(trim(num))), trim(magnitude_squared(trim(den)))
    if not any(p) or not any(q):
        return []
    dp = [k * c for k, c in enumerate(p)][1:] or [0.0]
    dq = [k * c for k, c in enumerate(q)][1:] or [0.0]
    crit = [0.0] * (len(p) + len(q))
    for i, a in enumerate(dp):
        for j, b in enumerate(q):
            crit[i + j] += a * b
    for i, a in enumerate(p):
        for j, b in enumerate(dq):
            crit[i + j] -= a * b
    at = lambda cs, u: sum(c * u**k for k, c in enumerate(cs))
    return [(u, at(p, u) / at(q, u)) for u in positive_roots(crit) if at(q, u) != 0 and math.isfinite(at(p, u) / at(q, u))]


def numeric_cutoff(h, values: Mapping) -> float | None:
    """-3 dB angular frequency (rad/s) of a network function found numerically.

    The coefficients are evaluated at the values (compiled once per function), then
    :func:`cutoff_from_coefficients` finds the crossing (mpmath, no numpy). None when
    a symbol has no value or there is no such frequency.

    Parameters
    ----------
    h : NetworkFunction
    values : mapping
        Symbol -> value.

    Returns
    -------
    float or None

    Examples
    --------
    >>> from symfilt.analysis.network import NetworkFunction
    >>> from symfilt.model.circuit import S
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> h = NetworkFunction.from_expr(1 / (1 + S * R * C))
    >>> round(numeric_cutoff(h, {R: 1000, C: sympy.Rational(1, 10**6)}), 6)
    1000.0
    """
    coeffs = h.coefficient_values(values)
    if coeffs is None:
        return None
    return cutoff_from_coefficients(*coeffs)


def batch_cutoff(num_coeffs, den_coeffs):
    """-3 dB angular frequency per sample from arrays of H(s) coefficients (lowest power first).

    The same pass-band rule as :func:`numeric_cutoff` (:func:`passband_gain`, per
    sample); NaN where there is no crossing. Roots from batched companion matrices (numpy).

    Parameters
    ----------
    num_coeffs, den_coeffs : sequence of array_like
        One array (a value per sample) per coefficient.

    Returns
    -------
    numpy.ndarray

    Examples
    --------
    >>> import numpy as np
    >>> w = batch_cutoff([np.array([1.0, 1.0])], [np.array([1.0, 2.0]), np.array([1e-3, 1e-3])])
    >>> [round(float(v), 3) for v in w]
    [1000.0, 2000.0]
    """
    import numpy as np

    num = [np.atleast_1d(np.asarray(c, dtype=float)) for c in num_coeffs]
    den = [np.atleast_1d(np.asarray(c, dtype=float)) for c in den_coeffs]
    size = max(c.shape[0] for c in num + den)
    num = [np.broadcast_to(c, (size,)).astype(float) for c in num]
    den = [np.broadcast_to(c, (size,)).astype(float) for c in den]
    rows = [passband_gain(n, d) for n, d in zip(np.array(num).T.tolist(), np.array(den).T.tolist())]
    gain = np.array([np.nan if g is None else g for g, _dc in rows])
    at_dc = np.array([dc for _g, dc in rows], dtype=bool)
    p = cutoff_polynomial(num, den, gain)
    p = np.array([np.broadcast_to(c, (size,)) for c in p]).T  # samples x (degree + 1), lowest first
    out = np.full(size, np.nan)
    pending = np.isfinite(gain)
    for deg in range(p.shape[1] - 1, 0, -1):
        rows_ = np.where(pending & (p[:, deg] != 0))[0]
        if rows_.size:
            out[rows_] = _companion_pick(np, p[rows_, : deg + 1], deg, at_dc[rows_])
            pending[rows_] = False
        if not pending.any():
            break
    return out


def _companion_pick(np, q, deg: int, at_dc):
    """sqrt of the lowest (pass band at DC) or highest positive real root of each row of q."""
    # scale u = sigma t so that the roots are near 1, then normalise the coefficients
    low = np.where(q[:, 0] != 0, np.abs(q[:, 0]), 1.0)
    sigma = (low / np.abs(q[:, deg])) ** (1.0 / deg)
    q = q * sigma[:, None] ** np.arange(deg + 1)
    comp = np.zeros((q.shape[0], deg, deg))
    if deg > 1:
        comp[:, 1:, :-1] = np.eye(deg - 1)
    comp[:, :, -1] = -q[:, :deg] / q[:, deg : deg + 1]
    roots = np.linalg.eigvals(comp)
    real = np.abs(roots.imag) <= ROOT_IMAG_TOL * np.maximum(1.0, np.abs(roots.real))
    ok = real & (roots.real > 0)
    highest = np.where(ok, roots.real, -np.inf).max(axis=1)
    lowest = np.where(ok, roots.real, np.inf).min(axis=1)
    pick = np.where(at_dc, lowest, highest)
    return np.where(np.isfinite(pick), np.sqrt(np.abs(pick) * sigma), np.nan)


def log_difference(hi, lo, rel_step: float) -> float | None:
    """d ln|y| / d ln x from y at x (1 + rel_step) and x (1 - rel_step); None unless both are non-zero.

    Parameters
    ----------
    hi, lo : float or None
        y at x (1 + rel_step) and at x (1 - rel_step).
    rel_step : float
        The relative step in x (0 < rel_step < 1).

    Returns
    -------
    float or None

    Examples
    --------
    >>> round(log_difference(1 / 1.01**2, 1 / 0.99**2, 0.01), 6)
    -2.0
    """
    if hi is None or lo is None:
        return None
    hi, lo = abs(float(hi)), abs(float(lo))
    if not (hi > 0 and lo > 0):
        return None
    return (math.log(hi) - math.log(lo)) / (math.log1p(rel_step) - math.log1p(-rel_step))


def numeric_sensitivity(f: Callable[[float], float | None], x0: float, rel_step: float = 1e-6) -> float | None:
    """Normalized sensitivity of a numeric function at x0 by a central difference in log x.

    A second opinion where a quantity has no closed form (the tests check the numeric cutoff's
    implicit derivative, :func:`symfilt.analysis.response.cutoff_sensitivities`, against it).

    Parameters
    ----------
    f : callable
        x -> y (or None where undefined).
    x0 : float
    rel_step : float

    Returns
    -------
    float or None

    Examples
    --------
    >>> round(numeric_sensitivity(lambda x: 1 / x**2, 3.0), 6)
    -2.0
    """
    lo, hi = f(x0 * (1 - rel_step)), f(x0 * (1 + rel_step))
    mid = f(x0)
    if lo is None or hi is None or mid in (None, 0):
        return None
    return log_difference(hi, lo, rel_step)


def finite_float(e, values: Mapping | None = None) -> float | None:
    """A number as a finite real float (30 digits, then rounded), or None.

    None when the expression keeps a symbol (after putting in ``values``), is not
    finite, or has an imaginary part above :data:`IMAG_TOL` relative.

    Parameters
    ----------
    e : sympy.Expr or number or None
    values : mapping, optional
        Symbol -> value put in first.

    Returns
    -------
    float or None

    Examples
    --------
    >>> x = sympy.Symbol("x")
    >>> finite_float(sympy.sqrt(2)), finite_float(x), finite_float(1 / x, {x: 0}), finite_float(x + 1, {x: 1})
    (1.4142135623730951, None, None, 2.0)
    """
    if e is None:
        return None
    e = as_sympy(e)
    if e.free_symbols - set(values or ()):  # a symbol without a value: no number (found before evaluating)
        return None
    if values is not None:
        e = e.xreplace(dict(values))
    try:
        v = complex(sympy.N(e, 30))
    except (TypeError, ValueError, ZeroDivisionError):
        return None
    if abs(v.imag) > IMAG_TOL * max(1.0, abs(v.real)) or not math.isfinite(v.real):
        return None
    return v.real


@functools.lru_cache(maxsize=2048)
def tidy(e, *, radicals: bool = False, cancel_below: int = 400, factor_below: int = 120):
    """An exact expression cancelled and factored when small enough to be worth it.

    Parameters
    ----------
    e : sympy.Expr or None
    radicals : bool
        Rationalise denominators with radicals (``radsimp``, below 200 operations) instead of cancelling.
    cancel_below, factor_below : int
        Operation counts below which it is cancelled, then factored (by :mod:`~symfilt.analysis.fastfactor`); a
        product of powers of polynomials factored below ``factor_below`` is given that form without cancelling.

    Returns
    -------
    sympy.Expr or None

    Examples
    --------
    >>> x = sympy.Symbol("x")
    >>> tidy((x**2 - 1) / (x - 1)), tidy(1 / (1 + sympy.sqrt(2)), radicals=True)
    (x + 1, -1 + sqrt(2))
    """
    if e is None:
        return None
    ops = sympy.count_ops(e)
    fast = None if radicals or ops >= cancel_below else factor_power_product(e)  # sympy.factor's, by flint
    if fast is not None and sympy.count_ops(fast) < factor_below:
        return fast  # a short product of powers: cancelling would only expand it first
    if radicals:
        e = sympy.radsimp(e) if ops < 200 else e
    elif ops < cancel_below:
        e = sympy.cancel(e) if (done := cancel_rational(e)) is None else done  # the same expression, by flint
    return e if sympy.count_ops(e) >= factor_below else factor(e) if fast is None else fast


#: Most floats one step of :func:`poly_values` holds at once (terms x samples).
POLY_BLOCK = 2_000_000


def poly_values(p, values: Mapping[str, object]):
    """A flint polynomial evaluated in floats at an array (or a number) per generator, without recursion.

    Multivariate Horner one generator at a time, last first: the terms are multiplied by
    that generator's powers, then the terms equal in the remaining generators are summed
    (sorted, ``numpy.add.reduceat``). The work is the size of the terms' prefix tree
    times the samples, in a few dozen numpy calls, however many terms the polynomial
    has (a printed expression of thousands of terms is too deep for Python's compiler).

    Parameters
    ----------
    p : flint.fmpz_mpoly or flint.fmpq_mpoly
        The polynomial.
    values : mapping
        Generator name -> number or numpy array, for every generator that occurs in ``p``.

    Returns
    -------
    numpy.ndarray
        The broadcast shape of the values given.

    Examples
    --------
    >>> import flint, numpy as np
    >>> ctx = flint.fmpz_mpoly_ctx.get(("x", "y"), "lex")
    >>> x, y = ctx.gens()
    >>> poly_values(3 * x * y + x**2 + 1, {"x": np.array([1.0, 2.0]), "y": 0.5}).tolist()
    [3.5, 8.0]
    """
    import numpy as np

    names = list(p.context().names())
    terms = p.to_dict()
    exps = np.array(list(terms), dtype=np.int64).reshape(len(terms), len(names))
    coef = np.array([_mp_float(c) for c in terms.values()], dtype=float)
    used = [k for k in range(len(names)) if exps.size and exps[:, k].any()]
    arrays = [np.asarray(values[names[k]], dtype=float) for k in used]
    shape = np.broadcast_shapes(*[a.shape for a in arrays]) if arrays else ()
    flat = [np.broadcast_to(a, shape).ravel() for a in arrays]
    size = int(np.prod(shape, dtype=np.int64))
    out = np.zeros(size)
    step = max(1, POLY_BLOCK // max(1, len(terms)))
    plan = _horner_plan(np, exps[:, used])
    for start in range(0, size, step):
        out[start : start + step] = _horner(np, plan, coef, [x[start : start + step] for x in flat])
    return out.reshape(shape)


def _horner_plan(np, exps) -> list:
    """Per generator, last first: its exponent per row, then the row order and group starts after it."""
    plan = []
    keys = exps
    for v in range(exps.shape[1] - 1, -1, -1):
        e = keys[:, v][:, None]
        keys = keys[:, :v]
        if v == 0 or keys.shape[0] == 1:
            plan.append((e, None, None))
            continue
        order = np.lexsort(keys.T[::-1])
        keys = keys[order]
        starts = np.concatenate(([0], np.nonzero(np.any(keys[1:] != keys[:-1], axis=1))[0] + 1))
        keys = keys[starts]
        plan.append((e, order, starts))
    return plan


def _horner(np, plan: list, coef, xs):
    """Sum of coef * prod x**exps over the terms, for one block of samples, following the plan."""
    n = xs[0].size if xs else 1
    acc = np.repeat(coef[:, None], n, axis=1)
    for (e, order, starts), x in zip(plan, xs[::-1]):
        acc = acc * np.power(x[None, :], e) if e.any() else acc
        if order is not None:
            acc = np.add.reduceat(acc[order], starts, axis=0)
    return acc.sum(axis=0)


def _mp_float(c) -> float:
    """A flint integer or rational as a float."""
    return int(c.p) / int(c.q) if hasattr(c, "q") else float(int(c))


__all__ = ["IMAG_TOL", "ROOT_IMAG_TOL", "band_edges", "batch_cutoff", "cutoff_from_coefficients", "cutoff_polynomial",
           "finite_float", "log_difference", "magnitude_extrema", "magnitude_squared", "numeric_cutoff", "numeric_sensitivity",
           "passband_gain", "poly_values", "positive_roots", "tidy", "trim"]
