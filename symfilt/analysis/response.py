"""The response at the values, for any order: exact cancellation, poles and zeros, the kind
found numerically, a notch's frequency, depth and edges, the group delay at DC, peaking and
pass-band ripple, and the numeric cutoff's sensitivities by the implicit-function derivative.

Everything starts from the exact coefficients at the values
(:meth:`~symfilt.analysis.network.NetworkFunction.coefficient_values` with ``exact=True``):
the common factor of N and D is divided out exactly (flint ``fmpq_poly`` gcd), so a pole-zero
pair that cancels only at these values (a balanced twin-T) is gone before anything is
classified or counted.

Conventions (see DEVELOPERS.md): a root is a dict ``{"real", "imag", "f_hz", "q"}`` with
``real`` and ``imag`` in rad/s (the s-plane value), ``f_hz = |p|/(2 pi)`` and, for a complex
root, ``q = |p|/(2 |Re p|)`` (the pair's Q, shared by both members). A real root is a
first-order section with a corner frequency and no Q: ``q`` is None, and so it is for a root
on the jw axis (Q infinite).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Mapping, Sequence

import sympy

from symfilt.model.circuit import S
from symfilt.analysis.network import NetworkFunction
from symfilt.analysis.roots import exact_roots
from symfilt.analysis.numeric import (ROOT_IMAG_TOL, cutoff_polynomial, magnitude_extrema, magnitude_squared,
                                     passband_gain, positive_roots)

#: dB: an end of the band this far below the other is a stop band (a low-pass or high-pass with
#: a floor), and a dip this far below both ends makes a notch.
LEVEL_DB = 3.0
#: dB: peaking or ripple below this is none (rounding of an exactly flat response).
FLAT_DB = 1e-6


@dataclass(frozen=True)
class Reduced:
    """N(s) and D(s) at the values with their common factor divided out exactly.

    Parameters
    ----------
    num, den : tuple of sympy.Rational
        The reduced coefficients, lowest power of s first (H = num/den unchanged).
    common : tuple of sympy.Rational
        The monic common factor that was divided out, lowest power first (``(1,)`` when none).

    Examples
    --------
    >>> r = reduce_pair([1, 1, 1, 1], [1, 5, 5, 1])  # (1 + s)(1 + s^2) / ((1 + s)(1 + 4s + s^2))
    >>> r.num, r.den, r.common, r.order
    ((1, 0, 1), (1, 4, 1), (1, 1), 2)
    """

    num: tuple
    den: tuple
    common: tuple

    @property
    def order(self) -> int:
        """The degree of the reduced denominator: the order at the values.

        Examples
        --------
        >>> reduce_pair([1], [2, 3]).order
        1
        """
        return len(self.den) - 1

    def floats(self) -> tuple[list[float], list[float]]:
        """The reduced coefficients as floats.

        Examples
        --------
        >>> reduce_pair([1], [2, 4]).floats()
        ([1.0], [2.0, 4.0])
        """
        return [float(c) for c in self.num], [float(c) for c in self.den]


def reduce_pair(num: Sequence, den: Sequence) -> Reduced:
    """Divide the exact common factor out of two polynomials in s (coefficients lowest first).

    Parameters
    ----------
    num, den : sequence of int or sympy.Rational
        Exact coefficients of N(s) and D(s), lowest power first; D not zero.

    Returns
    -------
    Reduced

    Examples
    --------
    >>> reduce_pair([0, 2], [0, 1, 1]).den  # 2s/(s + s^2) = 2/(1 + s)
    (1, 1)
    """
    import flint

    to_q = lambda c: flint.fmpq(int(sympy.Rational(c).p), int(sympy.Rational(c).q))
    n = flint.fmpq_poly([to_q(c) for c in num])
    d = flint.fmpq_poly([to_q(c) for c in den])
    g = d.gcd(n) if n != 0 else flint.fmpq_poly([1])
    back = lambda p: tuple(sympy.Rational(int(c.p), int(c.q)) for c in p.coeffs()) or (sympy.Integer(0),)
    return Reduced(back(n // g), back(d // g), back(g))


def reduce_at_values(h: NetworkFunction, values: Mapping) -> Reduced | None:
    """H's exact coefficients at the values with the common factor divided out.

    Parameters
    ----------
    h : NetworkFunction
    values : mapping
        Symbol -> exact number.

    Returns
    -------
    Reduced or None
        None when a symbol has no value, or H is zero or infinite.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> c = catalogue.build("twin-t-notch")
    >>> h = derive(c).ideal()
    >>> h.order(), reduce_at_values(h, c.values()).order
    (3, 2)
    """
    cv = h.coefficient_values(values, exact=True)
    if cv is None or not any(cv[0]) or not any(cv[1]):
        return None
    return reduce_pair(*cv)


def pole_values(poly: sympy.Poly) -> list[complex]:
    """The roots of an exact polynomial in s, found on a scaled variable.

    Circuit coefficients span many decades (picofarads against megohms), which can stop
    sympy's root finder. Rational coefficients go to :func:`~symfilt.analysis.roots.exact_roots`
    (certified, no scaling needed); others (a coefficient with pi or a root in it) are scaled by
    the geometric mean root size (|a0/an|^(1/n)) first, with 40 digits and a numpy fallback.

    Parameters
    ----------
    poly : sympy.Poly
        A polynomial in s with numeric coefficients, degree 1 or more.

    Returns
    -------
    list of complex

    Examples
    --------
    >>> sorted(round(r.real, 9) for r in pole_values(sympy.Poly(S**2 + 3 * S + 2, S)))
    [-2.0, -1.0]
    """
    if all(c.is_Rational for c in poly.all_coeffs()):
        return exact_roots(poly.all_coeffs()[::-1])
    import mpmath

    coeffs = [sympy.N(c, 45) if not c.is_Rational else c for c in poly.all_coeffs()]
    n = len(coeffs) - 1
    while coeffs[-1] == 0:  # roots at s = 0
        coeffs.pop()
    zeros = [0j] * (n - (len(coeffs) - 1))
    n = len(coeffs) - 1
    if n < 1:
        return zeros
    k = sympy.Float(abs(coeffs[-1] / coeffs[0]), 40) ** sympy.Rational(1, n)
    scaled = [c * k ** (n - i) / coeffs[0] for i, c in enumerate(coeffs)]
    try:
        with mpmath.workdps(40):
            found = mpmath.polyroots([mpmath.mpf(str(sympy.N(c, 45))) for c in scaled], maxsteps=400, extraprec=200)
        return zeros + [complex(r) * float(k) for r in found]
    except mpmath.libmp.libhyper.NoConvergence:
        import numpy as np

        return zeros + [complex(r) * float(k) for r in np.roots([float(c) for c in scaled])]


def root_list(coeffs: Sequence) -> list[dict]:
    """The roots of an exact polynomial in s (lowest power first) as root dicts, by frequency.

    A root whose imaginary (real) part is below :data:`~symfilt.analysis.numeric.ROOT_IMAG_TOL`
    of its size counts as real (on the jw axis); see the module's conventions for the keys.

    Parameters
    ----------
    coeffs : sequence of sympy.Rational
        Coefficients, lowest power first.

    Returns
    -------
    list of dict
        ``{"real", "imag", "f_hz", "q"}`` per root (empty for a constant).

    Examples
    --------
    >>> [(round(r["f_hz"] * 2 * math.pi, 6), r["q"]) for r in root_list([1, 1])]  # 1 + s: a real pole at -1
    [(1.0, None)]
    >>> r = root_list([1, 1, 1])[0]  # 1 + s + s^2: w0 = 1, Q = 1
    >>> round(r["f_hz"] * 2 * math.pi, 9), round(r["q"], 9)
    (1.0, 1.0)
    """
    cs = list(coeffs)
    while len(cs) > 1 and cs[-1] == 0:
        cs.pop()
    if len(cs) < 2:
        return []
    out = []
    for r in pole_values(sympy.Poly(cs[::-1], S)):
        size = abs(r)
        re = 0.0 if abs(r.real) <= ROOT_IMAG_TOL * size else r.real
        im = 0.0 if abs(r.imag) <= ROOT_IMAG_TOL * size else r.imag
        q = None if im == 0 or re == 0 else size / (2 * abs(re))
        out.append({"real": re, "imag": im, "f_hz": size / (2 * math.pi), "q": q})
    return sorted(out, key=lambda d: (d["f_hz"], d["imag"]))


def jw_nulls(num: Sequence) -> list[float]:
    """The frequencies w > 0 (rad/s) where N(jw) = 0 exactly, lowest first.

    N(jw) = E(w^2) + jw O(w^2) with E(u) = sum b_2k (-u)^k and O(u) = sum b_2k+1 (-u)^k;
    both vanish at the positive roots of their exact gcd (flint), found numerically.

    Parameters
    ----------
    num : sequence of sympy.Rational
        Exact coefficients of N(s), lowest power first.

    Returns
    -------
    list of float

    Examples
    --------
    >>> [round(w, 9) for w in jw_nulls([1, 0, 1])], jw_nulls([1, 1])  # 1 + s^2 is zero at w = 1
    ([1.0], [])
    """
    import flint

    def part(parity):
        return flint.fmpq_poly([flint.fmpq(int(sympy.Rational(c).p), int(sympy.Rational(c).q)) * (-1) ** (k // 2)
                                for k, c in enumerate(num) if k % 2 == parity])

    even, odd = part(0), part(1)
    g = even.gcd(odd) if odd != 0 else even
    if g.degree() < 1:
        return []
    return [math.sqrt(u) for u in positive_roots([float(int(c.p)) / int(c.q) for c in g.coeffs()])]


def response_kind(red: Reduced) -> str:
    """The kind of a reduced response at the values, found numerically.

    With r zeros at s = 0 and e = n - m zeros at infinity (degrees m of N, n of D): a
    low-pass has r = 0 < e, a high-pass r > 0 = e, a band-pass r > 0 and e > 0. With
    r = e = 0: an all-pass when |N(jw)|^2 is a constant times |D(jw)|^2 (exactly); a
    low-pass (high-pass) when the HF (DC) level is more than :data:`LEVEL_DB` below the
    other end; a notch when |H| dips more than :data:`LEVEL_DB` below both ends; else
    general (and so is a pole at s = 0 or an order below 1).

    Parameters
    ----------
    red : Reduced

    Returns
    -------
    str
        One of ``lowpass``, ``highpass``, ``bandpass``, ``notch``, ``allpass``, ``general``.

    Examples
    --------
    >>> response_kind(reduce_pair([1, 0, 1], [1, 4, 1])), response_kind(reduce_pair([1, -1], [1, 1]))
    ('notch', 'allpass')
    """
    num, den = list(red.num), list(red.den)
    m, n = len(num) - 1, red.order
    if n < 1 or den[0] == 0 or m > n:
        return "general"
    r = next(k for k, c in enumerate(num) if c != 0)
    e = n - m
    if r or e:
        return {(False, True): "lowpass", (True, False): "highpass"}.get((bool(r), bool(e)), "bandpass")
    mn, md = magnitude_squared(num, sympy.Integer(0)), magnitude_squared(den, sympy.Integer(0))
    if all(a * md[0] == b * mn[0] for a, b in zip(mn, md)):
        return "allpass"
    dc, hf = abs(float(num[0] / den[0])), abs(float(num[-1] / den[-1]))
    if 20 * math.log10(dc / hf) > LEVEL_DB:
        return "lowpass"
    if 20 * math.log10(hf / dc) > LEVEL_DB:
        return "highpass"
    low = min(dc, hf) ** 2 * 10 ** (-LEVEL_DB / 10)
    if jw_nulls(num) or any(v < low for _u, v in magnitude_extrema(*red.floats())):
        return "notch"
    return "general"


def notch_numbers(red: Reduced) -> dict:
    """A notch's frequency, depth and -3 dB edges (relative to the pass-band gain).

    Also used for a null on the jw axis in a response of another kind (a heavily loaded
    twin-T is a high-pass with a null); its caller keeps only frequency and depth there.

    The frequency is the exact jw-axis zero when N has one (``notch_null`` True, depth None:
    infinite), else the deepest minimum of |H(jw)|. The pass-band gain is the DC gain when it
    is not zero, else the HF gain (:func:`~symfilt.analysis.numeric.passband_gain`); the edges
    are the -3 dB crossings nearest below and above the notch.

    Parameters
    ----------
    red : Reduced
        A response whose kind is ``notch``.

    Returns
    -------
    dict
        ``notch_hz``, ``notch_depth_db`` (dB below the pass-band gain), ``notch_null`` and, when
        both edges exist, ``low_edge_hz``, ``high_edge_hz``, ``bandwidth_hz``.

    Examples
    --------
    >>> d = notch_numbers(reduce_pair([1, 0, 1], [1, 4, 1]))  # w0 = 1, Q = 1/4
    >>> round(d["notch_hz"] * 2 * math.pi, 9), d["notch_null"], round(d["bandwidth_hz"] * 2 * math.pi, 9)
    (1.0, True, 4.0)
    """
    num, den = red.floats()
    gain, _at_dc = passband_gain(num, den)
    if gain is None:
        return {}
    nulls = jw_nulls(red.num)
    if nulls:
        u0, depth = nulls[0] ** 2, None
    else:
        dips = [(v, u) for u, v in magnitude_extrema(num, den)]
        if not dips:
            return {}
        v0, u0 = min(dips)
        depth = -10 * math.log10(v0 / gain**2) if v0 > 0 else None
    out = {"notch_hz": math.sqrt(u0) / (2 * math.pi), "notch_depth_db": depth, "notch_null": depth is None}
    roots = positive_roots(cutoff_polynomial(num, den, gain))
    below, above = [u for u in roots if u < u0], [u for u in roots if u > u0]
    if below and above:
        lo, hi = math.sqrt(below[-1]) / (2 * math.pi), math.sqrt(above[0]) / (2 * math.pi)
        out.update({"low_edge_hz": lo, "high_edge_hz": hi, "bandwidth_hz": hi - lo})
    return out


def group_delay_dc(red: Reduced) -> float | None:
    """The group delay at DC in seconds: tau(0) = a1/a0 - b1/b0 (exact, then rounded).

    From the phase arg N(jw) - arg D(jw) near w = 0; None when N(0) or D(0) is zero.

    Parameters
    ----------
    red : Reduced

    Returns
    -------
    float or None

    Examples
    --------
    >>> group_delay_dc(reduce_pair([1], [1, sympy.Rational(1, 1000)]))  # 1/(1 + s tau): tau
    0.001
    """
    b, a = list(red.num) + [0], list(red.den) + [0]
    if b[0] == 0 or a[0] == 0:
        return None
    return float(a[1] / a[0] - b[1] / b[0])


def peaking_ripple(red: Reduced, kind: str) -> dict:
    """How far |H| rises above its pass-band gain (``peaking_db``) and the pass-band ripple.

    ``peaking_db`` = 20 log10(max |H(jw)| / |H_pass|), given when above :data:`FLAT_DB`;
    ``ripple_db`` (low-pass and high-pass only) = 20 log10(max/min) over the pass-band gain
    and the stationary points of |H| inside the pass band (below the -3 dB point for a pass
    band at DC, above it for one at HF), given when there is such a point.

    Parameters
    ----------
    red : Reduced
    kind : str
        Its :func:`response_kind`.

    Returns
    -------
    dict

    Examples
    --------
    >>> d = peaking_ripple(reduce_pair([1], [1, sympy.Rational(1, 2), 1]), "lowpass")  # Q = 2
    >>> round(d["peaking_db"], 4), round(d["ripple_db"], 4)
    (6.3009, 6.3009)
    """
    num, den = red.floats()
    gain, at_dc = passband_gain(num, den)
    if gain is None or kind in ("bandpass", "allpass"):
        return {}
    ext = magnitude_extrema(num, den)
    out = {}
    top = max([v for _u, v in ext], default=0.0)
    if top > 0 and 10 * math.log10(top / gain**2) > FLAT_DB:
        out["peaking_db"] = 10 * math.log10(top / gain**2)
    roots = positive_roots(cutoff_polynomial(num, den, gain))
    if kind in ("lowpass", "highpass") and roots:
        edge = roots[0] if at_dc else roots[-1]
        band = [v for u, v in ext if (u < edge if at_dc else u > edge)] + [gain**2]
        ripple = 10 * math.log10(max(band) / min(band))
        if len(band) > 1 and ripple > FLAT_DB:
            out["ripple_db"] = ripple
    return out


def response_numbers(h: NetworkFunction, values: Mapping) -> dict:
    """Everything this module finds for one view at the values, as one dict of numbers.

    Parameters
    ----------
    h : NetworkFunction
        The view's transfer function.
    values : mapping
        Symbol -> exact number.

    Returns
    -------
    dict
        ``kind``, ``order`` (at the values), ``poles``, ``zeros``, ``cancelled`` (roots of the
        common factor), ``f0_hz`` and ``q`` for order 2, the notch numbers for a notch,
        ``group_delay_dc_s``, ``peaking_db``, ``ripple_db``; empty when a value is missing.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> c = catalogue.build("twin-t-notch")
    >>> d = response_numbers(derive(c).ideal(), c.values())
    >>> d["kind"], d["order"], round(d["notch_hz"], 3), d["notch_null"], len(d["cancelled"])
    ('notch', 2, 1061.033, True, 1)
    """
    red = reduce_at_values(h, values)
    if red is None:
        return {}
    kind = response_kind(red)
    out = {"kind": kind, "order": red.order, "poles": root_list(red.den), "zeros": root_list(red.num),
           "cancelled": root_list(red.common)}
    if red.order == 2 and red.den[0] != 0 and red.den[1] != 0:
        a0, a1, a2 = (float(c) for c in red.den)
        if a0 * a2 > 0:
            out["f0_hz"] = math.sqrt(a0 / a2) / (2 * math.pi)
            out["q"] = math.sqrt(a0 * a2) / a1
    if kind == "notch" or jw_nulls(red.num):  # a null on the jw axis is a notch in any shape
        notch = notch_numbers(red)
        out.update(notch if kind == "notch" else {k: v for k, v in notch.items() if k.startswith("notch")})
    tau = group_delay_dc(red)
    if tau is not None:
        out["group_delay_dc_s"] = tau
    out.update(peaking_ripple(red, kind))
    return out


def cutoff_sensitivities(h: NetworkFunction, values: Mapping, w_c: float) -> dict | None:
    """S_x^wc for every symbol of H at a numeric cutoff w_c, by the implicit-function derivative.

    At the cutoff F(w, x) = 2 |N(jw)|^2 - g(x)^2 |D(jw)|^2 = 0 (g the pass-band gain, DC or
    HF, which moves with x too), so dw/dx = -F_x/F_w and S_x^wc = (x/w) dw/dx. F_x uses the
    coefficients' exact partial derivatives (flint, at the values):
    d|N|^2/dx = 2 Re(conj N · N_x), d|N|^2/dw = 2 Re(conj N · j N'(jw)).

    Parameters
    ----------
    h : NetworkFunction
    values : mapping
        Symbol -> exact number, for every symbol of H.
    w_c : float
        The cutoff (rad/s) at these values.

    Returns
    -------
    dict or None
        Symbol name -> float (None where F_w vanishes); None when the pass band has no gain.

    Examples
    --------
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> h = NetworkFunction.from_expr(1 / (1 + S * R * C))
    >>> {k: round(v, 9) for k, v in cutoff_sensitivities(h, {R: 1000, C: sympy.Rational(1, 10**6)}, 1000.0).items()}
    {'C': -1.0, 'R': -1.0}
    """
    num, den = h.coefficient_values(values)
    gain, at_dc = passband_gain(num, den)
    if gain is None:
        return None
    jw = 1j * w_c
    ev = lambda cs: sum(c * jw**k for k, c in enumerate(cs))
    slope = lambda cs: sum(k * c * jw ** (k - 1) for k, c in enumerate(cs) if k)
    n_, d_ = ev(num), ev(den)
    f_w = 2 * 2 * (n_.conjugate() * 1j * slope(num)).real - gain**2 * 2 * (d_.conjugate() * 1j * slope(den)).real
    top = lambda cs: max(k for k, c in enumerate(cs) if c != 0)
    ib, ia = (0, 0) if at_dc else (top(num), top(den))
    given = {(k.name if hasattr(k, "name") else str(k)): v for k, v in values.items()}
    out = {}
    for x in sorted(h.free_symbols() - {S}, key=str):
        dn, dd = h.coefficient_values(values, derivative=x.name)
        g2_x = 2 * gain**2 * (dn[ib] / num[ib] - dd[ia] / den[ia])
        f_x = 2 * 2 * (n_.conjugate() * ev(dn)).real - g2_x * abs(d_) ** 2 - gain**2 * 2 * (d_.conjugate() * ev(dd)).real
        out[x.name] = None if f_w == 0 else -f_x / f_w * float(given[x.name]) / w_c
    return out


__all__ = ["FLAT_DB", "LEVEL_DB", "Reduced", "cutoff_sensitivities", "group_delay_dc", "jw_nulls", "notch_numbers",
           "peaking_ripple", "pole_values", "reduce_at_values", "reduce_pair", "response_kind", "response_numbers",
           "root_list"]
