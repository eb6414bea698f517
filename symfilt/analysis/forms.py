"""Standard forms (kind, K, w0, Q) and the closed-form -3 dB cutoff.

Standard forms used (common practice; e.g. Schaumann & Van Valkenburg, *Design of
Analog Filters*, ch. on second-order sections):

* first order: ``K / (1 + s tau)`` (low-pass), ``K s tau / (1 + s tau)`` (high-pass), w0 = 1/tau;
* second order: denominator ``1 + s/(w0 Q) + s^2/w0^2``; low-pass ``K``, high-pass
  ``K s^2/w0^2``, band-pass ``K s/(w0 Q)``, notch ``K (1 + s^2/w0^2)``, all-pass
  ``K (1 - s/(w0 Q) + s^2/w0^2)``.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field
from typing import Callable

import sympy

from symfilt.model.circuit import S
from symfilt.analysis.network import NetworkFunction
from symfilt.analysis.findings import Finding, finding
from symfilt.analysis.numeric import tidy as _tidy

RESPONSE_KINDS = ("lowpass", "highpass", "bandpass", "notch", "allpass", "general")


def _zero(e) -> bool:
    return e == 0 or sympy.cancel(e) == 0


@dataclass(frozen=True)
class StandardForm:
    """A transfer function in the trade's standard form (order 1 or 2).

    Parameters
    ----------
    order : int
        Order of the denominator in s.
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
        Time constant (first order only), s.
    factors : dict
        Quantity name (``w0``, ``q``, ``gain``) -> list of (coefficient, exponent) pairs
        whose product it is (used for sensitivities); not compared.

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
    if order > 2:  # no standard form: the coefficients are not converted to sympy
        return StandardForm(order, "general")
    b, a = h.coefficients()
    kind, fs = form_factors(order, b, a)
    if kind is None:
        return StandardForm(order, "general")
    ev = lambda key: None if key not in fs else _tidy(sympy.Mul(*[p**e for p, e in fs[key]]))
    factors = {key: fs[key] for key in ("w0", "q", "gain", "zero") if key in fs}
    return StandardForm(order, kind, ev("gain"), ev("w0"), ev("q"), ev("tau"), factors)


def form_factors(order: int, b, a, zero=_zero) -> tuple[str | None, dict]:
    """The kind of a first- or second-order response and its quantities as products of its coefficients.

    The one classification behind :func:`standard_form`, for coefficients of any exact type
    that multiply, subtract and compare with 0: sympy expressions, or the flint polynomials
    of :meth:`~symfilt.engine.rational.Ratio.coefficients` (with ``zero=lambda e: e == 0``).

    Parameters
    ----------
    order : int
        Order of the response in s.
    b, a : sequence
        Numerator and denominator coefficients, lowest power of s first.
    zero : callable
        True when a coefficient expression is exactly zero.

    Returns
    -------
    (str or None, dict)
        The kind (None when no standard form fits: ``general`` without K, w0, Q) and
        quantity (``w0``, ``q``, ``gain``, ``tau``, ``zero``: the zero b0/b1 of a first order
        that is none of the named kinds) -> list of (coefficient, exponent) pairs.

    Examples
    --------
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> form_factors(1, [sympy.Integer(1)], [sympy.Integer(1), R * C])
    ('lowpass', {'w0': [(1, 1), (C*R, -1)], 'tau': [(C*R, 1), (1, -1)], 'gain': [(1, 1), (1, -1)]})
    """
    b = list(b) + [0] * (3 - len(b))
    a = list(a) + [0] * (3 - len(a))
    half = sympy.Rational(1, 2)
    if order == 1 and a[0] != 0 and a[1] != 0 and a[2] == 0 and b[2] == 0:
        fs = {"w0": [(a[0], 1), (a[1], -1)], "tau": [(a[1], 1), (a[0], -1)]}
        if b[1] == 0:
            return "lowpass", {**fs, "gain": [(b[0], 1), (a[0], -1)]}
        if b[0] == 0:
            return "highpass", {**fs, "gain": [(b[1], 1), (a[1], -1)]}
        if zero(b[0] * a[1] + b[1] * a[0]):
            return "allpass", {**fs, "gain": [(b[0], 1), (a[0], -1)]}
        return "general", {**fs, "zero": [(b[0], 1), (b[1], -1)]}
    if order == 2 and a[0] != 0 and a[1] != 0 and a[2] != 0:
        fs = {"w0": [(a[0], half), (a[2], -half)], "q": [(a[0], half), (a[2], half), (a[1], -1)]}
        nz = [k for k in range(3) if b[k] != 0]
        gain = {(0,): (0, 0), (2,): (2, 2), (1,): (1, 1)}.get(tuple(nz))
        kind = {(0,): "lowpass", (2,): "highpass", (1,): "bandpass"}.get(tuple(nz))
        if gain is None and nz == [0, 2] and zero(b[0] * a[2] - b[2] * a[0]):
            kind, gain = "notch", (0, 0)
        if gain is None and nz == [0, 1, 2] and zero(b[0] * a[2] - b[2] * a[0]) and zero(b[1] * a[0] + b[0] * a[1]):
            kind, gain = "allpass", (0, 0)
        if gain is None:
            return "general", fs
        return kind, {**fs, "gain": [(b[gain[0]], 1), (a[gain[1]], -1)]}
    return None, {}


@dataclass(frozen=True, eq=False)
class Cutoff:
    """The -3 dB angular frequency (rad/s) relative to the pass-band gain.

    Parameters
    ----------
    closed : sympy.Expr, Later or None
        Closed form, when one exists: the expression, or a :class:`Later` that builds it
        when :attr:`value` is first read (a second-order root takes long to build, and a
        report that prints only its number never needs it).
    edges : tuple or None
        Band-pass: the lower and upper -3 dB edges (closed forms).
    bandwidth : sympy.Expr or None
        Band-pass: upper minus lower edge (w0/Q).
    reason : Finding or None
        Why there is no closed form (None when there is one).

    Examples
    --------
    >>> Cutoff(None, reason=finding("allpass-has-no-cutoff")).value is None
    True
    >>> w = sympy.Symbol("w", positive=True)
    >>> c = Cutoff(Later(lambda: 2 * w))
    >>> c.has_value, c.value, c == Cutoff(2 * w)
    (True, 2*w, True)
    """

    closed: object
    edges: tuple | None = None
    bandwidth: sympy.Expr | None = None
    reason: Finding | None = None

    @property
    def has_value(self) -> bool:
        """Whether there is a closed form, without building it."""
        return self.closed is not None

    @functools.cached_property
    def value(self) -> sympy.Expr | None:
        """The closed form (built on first reading), or None."""
        return self.closed.build() if isinstance(self.closed, Later) else self.closed

    def __eq__(self, other) -> bool:
        if not isinstance(other, Cutoff):
            return NotImplemented
        return (self.value, self.edges, self.bandwidth, self.reason) == (other.value, other.edges, other.bandwidth,
                                                                          other.reason)

    def __hash__(self) -> int:
        return hash((self.value, self.edges, self.bandwidth, self.reason))


@dataclass(frozen=True)
class Later:
    """An expression built when first asked for: ``build()`` makes it.

    Parameters
    ----------
    build : callable
        No arguments; returns the expression.

    Examples
    --------
    >>> Later(lambda: sympy.Integer(3)).build()
    3
    """

    build: Callable[[], sympy.Expr]


def second_order_root(q):
    """sqrt(x + sqrt(x^2 + 1)) with x = 1 - 1/(2 Q^2): the -3 dB point of a second-order low-pass over w0.

    From |H(jw)|^2 = 1/2 (common practice). For Q = 1/sqrt(2) it is 1.

    Parameters
    ----------
    q : sympy.Expr
        Quality factor Q (positive).

    Returns
    -------
    sympy.Expr
        The cutoff over w0 of a low-pass (w0 over the cutoff of a high-pass).

    Examples
    --------
    >>> sympy.simplify(second_order_root(1 / sympy.sqrt(2)))
    1
    """
    x = 1 - 1 / (2 * q**2)
    return sympy.sqrt(x + sympy.sqrt(x**2 + 1))


def first_order_zero_cutoff(wp, wz):
    """-3 dB point of a first order with a zero, H = K (1 + s/wz)/(1 + s/wp), below its DC gain.

    |H(jw)|^2/K^2 = (1 + w^2/wz^2)/(1 + w^2/wp^2) = 1/2 gives
    w = wp/sqrt(1 - 2 wp^2/wz^2), the same as w^2 = a0^2 b0^2/(a1^2 b0^2 - 2 a0^2 b1^2) for
    (b0 + b1 s)/(a0 + a1 s). It exists while |wz| > sqrt(2)·wp, that is while the gain at high
    frequencies stays more than 3 dB below the DC gain (at other values the expression is not
    real and there is no -3 dB point). The pass band is at DC, as in the numeric rule of
    :func:`symfilt.analysis.numeric.passband_gain`.

    Parameters
    ----------
    wp, wz : sympy.Expr
        The pole a0/a1 and the zero b0/b1 (rad/s; the zero may be negative, a right-half-plane zero).

    Returns
    -------
    sympy.Expr

    Examples
    --------
    >>> first_order_zero_cutoff(sympy.Integer(1000), sympy.Integer(-100000))
    50000*sqrt(9998)/4999
    """
    return wp / sympy.sqrt(1 - 2 * wp**2 / wz**2)


def cutoff(form: StandardForm) -> Cutoff:
    """Closed-form -3 dB cutoff from a standard form.

    First order: w0; first order with a zero: :func:`first_order_zero_cutoff`. Second-order low-pass: w0 * sqrt(x + sqrt(x^2 + 1)) with
    x = 1 - 1/(2 Q^2), valid for every Q (peaking included); high-pass: w0 divided
    by the same root; band-pass: edges w0 (sqrt(1 + 4Q^2) -+ 1)/(2Q).

    Parameters
    ----------
    form : StandardForm
        From :func:`standard_form`.

    Returns
    -------
    Cutoff
        No value (and a reason) for band-pass, notch, all-pass and general forms.

    Examples
    --------
    >>> w, q = sympy.symbols("w0 Q", positive=True)
    >>> cutoff(StandardForm(2, "bandpass", 1, w, q)).bandwidth
    w0/Q
    """
    if form.order == 1 and form.kind in ("lowpass", "highpass"):
        return Cutoff(form.w0)
    if form.order == 1 and form.kind == "general" and "zero" in form.factors:
        (b0, _), (b1, _) = form.factors["zero"]
        return Cutoff(first_order_zero_cutoff(form.w0, _tidy(b0 / b1)))
    if form.order == 2 and form.kind in ("lowpass", "highpass"):
        def closed():
            root = second_order_root(form.q)
            return form.w0 * root if form.kind == "lowpass" else form.w0 / root

        return Cutoff(Later(closed))
    if form.order == 2 and form.kind == "bandpass":
        w0, q = form.w0, form.q
        lo = w0 * (sympy.sqrt(1 + 4 * q**2) - 1) / (2 * q)
        hi = w0 * (sympy.sqrt(1 + 4 * q**2) + 1) / (2 * q)
        return Cutoff(None, (lo, hi), _tidy(w0 / q), finding("bandpass-has-two-edges"))
    if form.kind in ("allpass",):
        return Cutoff(None, reason=finding("allpass-has-no-cutoff"))
    if form.kind == "notch":
        return Cutoff(None, reason=finding("notch-has-no-cutoff"))
    return Cutoff(None, reason=finding("no-closed-form-cutoff", kind=form.kind, order=form.order))


def cutoff_value(order: int, kind: str, w0, other, sqrt):
    """The -3 dB angular frequency of :func:`cutoff` from numbers, in any arithmetic.

    Parameters
    ----------
    order : int
        1 or 2.
    kind : str
        ``lowpass`` or ``highpass``, or ``general`` for a first order with a zero.
    w0 : number
        The pole frequency.
    other : number or None
        Q (second order) or the zero's frequency wz (a first order with a zero).
    sqrt : callable
        The square root of the arithmetic (``math.sqrt``, ``numpy.sqrt``, a decimal context's).

    Returns
    -------
    number
        Where the formula has no real value (a first order whose zero is too near the
        pole) it is whatever ``sqrt`` makes of a negative number.

    Examples
    --------
    >>> import math
    >>> round(cutoff_value(2, "lowpass", 1.0, 1 / math.sqrt(2), math.sqrt), 12)
    1.0
    """
    if order == 1 and kind in ("lowpass", "highpass"):
        return w0
    if order == 1:  # first_order_zero_cutoff
        return w0 / sqrt(1 - 2 * w0**2 / other**2)
    x = 1 - 1 / (2 * other**2)
    root = sqrt(x + sqrt(x**2 + 1))  # second_order_root
    return w0 * root if kind == "lowpass" else w0 / root


def nested_radical(e) -> bool:
    """True when a root in ``e`` holds another root (a second-order cutoff, or its sensitivity, over symbols).

    Cancelling such an expression expands the polynomials under the roots: seconds to minutes
    (adc-driver's real-over-ideal cutoff: 2.3 s to a 58 000-character result), for a form too
    large to show anyway.

    Parameters
    ----------
    e : sympy.Expr

    Examples
    --------
    >>> x = sympy.Symbol("x", positive=True)
    >>> nested_radical(sympy.sqrt(1 + sympy.sqrt(x))), nested_radical(sympy.sqrt(x) + sympy.sqrt(x + 1))
    (True, False)
    """
    roots = [p for p in e.atoms(sympy.Pow) if p.exp.is_Rational and not p.exp.is_Integer]
    return any(r is not q and r.base.has(q) for r in roots for q in roots)
