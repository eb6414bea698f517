"""The op-amp error's polynomial work on the engine's flint polynomials.

:mod:`symfilt.design.opamp_error` expands a circuit's transfer function in the small
parameters e_X = 1/X of its op-amps (X = A_U, GBW_U, P2_U): each X is replaced by 1/e_X
and numerator and denominator are multiplied by e_X^k, k the largest degree of X, so that
both stay polynomials. Everything the first-order terms need is then a coefficient of
those polynomials (the value at e = 0 and the first derivative there), which flint gives
exactly and at once; sympy sees only the small results.

In :class:`EpsPolys` the generator named like X stands for e_X: the exponent of X in a
term of degree j becomes k - j (``X^j -> e_X^(k-j)``). One more generator, ``u`` (w^2),
carries |P(jw)|^2.

Examples
--------
>>> from symfilt import catalogue
>>> from symfilt.analysis.network import derive
>>> c = catalogue.build("inverting-lowpass").with_opamp_model("gain")
>>> p = eps_polys(derive(c), ["A_U1"])
>>> p.to_sympy(p.at_zero(p.num))
-R2
"""

from __future__ import annotations

from dataclasses import dataclass

import flint
import sympy

from symfilt.analysis.numeric import magnitude_squared
from symfilt.engine.polybridge import poly_to_sympy, to_fmpq
from symfilt.engine.ratio_product import moved
from symfilt.engine.rational import Ratio, cancel_pair, coefficients_in


@dataclass(frozen=True)
class EpsPolys:
    """Numerator and denominator of a transfer function as polynomials in s, u and every e_X.

    Parameters
    ----------
    num, den : flint.fmpz_mpoly
        In a context of the function's generators plus ``u`` (named :attr:`u`).
    symbols : dict
        Generator name -> sympy object; the e_X generators keep X's symbol (they never
        survive into a result: every result is taken at e = 0).
    eps : tuple of str
        The generator names of the X's.
    u : str
        The name of the generator u = w^2.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> c = catalogue.build("inverting-lowpass").with_opamp_model("gain")
    >>> eps_polys(derive(c), ["A_U1"]).eps
    ('A_U1',)
    """

    num: object
    den: object
    symbols: dict
    eps: tuple
    u: str

    def at_zero(self, p):
        """``p`` with every e_X = 0.

        Parameters
        ----------
        p : flint.fmpz_mpoly
            In this context.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> from symfilt.analysis.network import derive
        >>> p = eps_polys(derive(catalogue.build("inverting-lowpass").with_opamp_model("gain")), ["A_U1"])
        >>> p.to_sympy(p.at_zero(p.den))
        C1*R1*R2*s + C1*R2*R_s*s + R1 + R_s
        """
        return p.subs({name: 0 for name in self.eps}) if self.eps else p

    def slope(self, p, name: str):
        """d p / d e_X at every e = 0, for X the generator ``name``.

        Parameters
        ----------
        p : flint.fmpz_mpoly
            In this context.
        name : str
            One of :attr:`eps`.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> from symfilt.analysis.network import derive
        >>> p = eps_polys(derive(catalogue.build("inverting-lowpass").with_opamp_model("gain")), ["A_U1"])
        >>> p.to_sympy(p.slope(p.num, "A_U1"))
        0
        """
        return self.at_zero(p.derivative(name))

    def at_dc(self, p):
        """``p`` at s = 0.

        Parameters
        ----------
        p : flint.fmpz_mpoly
            In this context.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> from symfilt.analysis.network import derive
        >>> p = eps_polys(derive(catalogue.build("rc-lowpass")), [])
        >>> p.to_sympy(p.at_dc(p.num))
        R_L
        """
        return p.subs({"s": 0}) if "s" in self.symbols else p

    def magnitude_squared(self, p):
        """|p(jw)|^2 as a polynomial in u = w^2.

        Parameters
        ----------
        p : flint.fmpz_mpoly
            A polynomial in s of this context.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> from symfilt.analysis.network import derive
        >>> p = eps_polys(derive(catalogue.build("rc-lowpass")), [])
        >>> p.to_sympy(p.magnitude_squared(p.num)), p.to_sympy(p.magnitude_squared(p.den)).coeff(p.symbols["u"])
        (R_L**2, C1**2*R1**2*R_L**2 + 2*C1**2*R1*R_L**2*R_s + C1**2*R_L**2*R_s**2)
        """
        ctx = p.context()
        coeffs = coefficients_in(p, "s") if "s" in self.symbols else [p]
        u = ctx.gens()[ctx.variable_to_index(self.u)]
        total = ctx.from_dict({})
        for k, m in enumerate(magnitude_squared(coeffs, zero=ctx.from_dict({}))):
            total += m * u**k
        return total

    def to_sympy(self, p) -> sympy.Expr:
        """A polynomial of this context as a sympy expression (e_X must be absent).

        Parameters
        ----------
        p : flint.fmpz_mpoly

        Examples
        --------
        >>> from symfilt import catalogue
        >>> from symfilt.analysis.network import derive
        >>> p = eps_polys(derive(catalogue.build("rc-lowpass")), [])
        >>> p.to_sympy(p.num)
        R_L
        """
        return poly_to_sympy(p, self.symbols)

    def quotient(self, num, den) -> sympy.Expr:
        """``num/den`` cancelled (flint) as one sympy expression, ``p/q`` with both expanded.

        Parameters
        ----------
        num, den : flint.fmpz_mpoly
            In this context, free of every e_X.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> from symfilt.analysis.network import derive
        >>> p = eps_polys(derive(catalogue.build("rc-lowpass")), [])
        >>> p.quotient(p.num * 2, p.num * p.num)
        2/R_L
        """
        n, d = cancel_pair(num, den)
        return self.to_sympy(n) / self.to_sympy(d)

    def log_slope(self, p, name: str):
        """(d p / d e_X) / p at every e = 0 as a cancelled pair (numerator, denominator).

        Parameters
        ----------
        p : flint.fmpz_mpoly
            In this context, not 0 at e = 0.
        name : str
            One of :attr:`eps`.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> from symfilt.analysis.network import derive
        >>> p = eps_polys(derive(catalogue.build("inverting-lowpass").with_opamp_model("gain")), ["A_U1"])
        >>> n, d = p.log_slope(p.den, "A_U1")
        >>> p.to_sympy(n), p.to_sympy(d)
        (C1*R1*R2*s + C1*R2*R_s*s + R1 + R2 + R_s, C1*R1*R2*s + C1*R2*R_s*s + R1 + R_s)
        """
        return cancel_pair(self.slope(p, name), self.at_zero(p))


def eps_polys(h, eps_names) -> EpsPolys:
    """The transfer function ``h`` with each X of ``eps_names`` replaced by 1/e_X, as polynomials.

    Parameters
    ----------
    h : NetworkFunction
        The transfer function with real op-amps.
    eps_names : iterable of str
        The op-amp parameter names X (``A_U1``, ``GBW_U1``, ...); those absent from ``h``
        are left out.

    Returns
    -------
    EpsPolys

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> c = catalogue.build("inverting-lowpass").with_opamp_model("gain")
    >>> p = eps_polys(derive(c), ["A_U1"])
    >>> p.to_sympy(p.slope(p.den, "A_U1"))
    C1*R1*R2*s + C1*R2*R_s*s + R1 + R2 + R_s
    """
    ratio: Ratio = h.ratio
    names = list(ratio.num.context().names())
    symbols = dict(ratio.symbols)
    u = "u"
    while u in symbols:
        u += "'"
    ctx = flint.fmpz_mpoly_ctx.get(tuple(names + [u]), "degrevlex")
    eps = tuple(n for n in eps_names if n in symbols)
    index = [names.index(n) for n in eps]
    top = [max(ratio.num.degrees()[k], ratio.den.degrees()[k], 0) for k in index]

    def lift(p):
        terms = {}
        for exps, c in p.terms():
            e = list(exps) + [0]
            for k, t in zip(index, top):
                e[k] = t - e[k]
            terms[tuple(e)] = c
        return ctx.from_dict(terms)

    return EpsPolys(lift(ratio.num), lift(ratio.den), {**symbols, u: sympy.Symbol("u", positive=True)}, eps, u)


def same_ratio(polys: EpsPolys, num, den, h) -> bool:
    """True when num/den (of ``polys``' context, free of e_X and u) equals the function ``h``.

    Parameters
    ----------
    polys : EpsPolys
    num, den : flint.fmpz_mpoly
    h : NetworkFunction

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> c = catalogue.build("inverting-lowpass")
    >>> p = eps_polys(derive(c.with_opamp_model("gain")), ["A_U1"])
    >>> same_ratio(p, p.at_zero(p.num), p.at_zero(p.den), derive(c))
    True
    """
    other: Ratio = h.ratio
    names = polys.num.context().names()
    if any(n not in names or polys.symbols[n] != s for n, s in other.symbols.items()
           if max(other.num.degrees()[other.num.context().variable_to_index(n)],
                  other.den.degrees()[other.den.context().variable_to_index(n)]) > 0):
        return False
    ctx = polys.num.context()
    return num * moved(other.den, ctx) - den * moved(other.num, ctx) == 0


def value_at(p, point: dict) -> float | None:
    """A flint polynomial at exact rational values of its generators, as a float.

    Parameters
    ----------
    p : flint.fmpz_mpoly
    point : dict
        Generator name -> flint.fmpq (:func:`symfilt.analysis.vectorised.exact_point`).

    Returns
    -------
    float or None
        None when a generator that occurs in ``p`` has no value.

    Examples
    --------
    >>> ctx = flint.fmpz_mpoly_ctx.get(("x", "y"), "degrevlex")
    >>> x, y = ctx.gens()
    >>> value_at(x * y + 1, {"x": flint.fmpq(1, 2), "y": flint.fmpq(3)}), value_at(x + y, {"x": flint.fmpq(1)})
    (2.5, None)
    """
    names = p.context().names()
    if any(d > 0 and names[k] not in point for k, d in enumerate(p.degrees())):
        return None
    q = to_fmpq(p, flint.fmpq_mpoly_ctx.get(tuple(names), p.context().ordering()))
    r = q.subs({n: point[n] for n in names if n in point})
    c = r.coeffs()[0] if r != 0 else flint.fmpq(0)
    return int(c.p) / int(c.q)


__all__ = ["EpsPolys", "eps_polys", "same_ratio", "value_at"]
