"""Network functions: exact ratios of polynomials in s, and deriving them from a circuit.

:func:`derive` turns a circuit into a :class:`NetworkFunction` (transfer function,
input impedance or output impedance) through :func:`symfilt.engine.solve.solve_unknown`.
A NetworkFunction is frozen; every operation returns a new one.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from functools import cached_property
from typing import Callable, Mapping

import sympy

from symfilt.model.circuit import LOAD_C, LOAD_R, SOURCE_R, Circuit, Fixture, S
from symfilt.engine.elimination import DEFAULT_MAX_TERMS, Ratio, cancel_pair
from symfilt.engine.solve import solve_unknown
from symfilt.errors import SingularCircuitError
from symfilt.engine.polybridge import PolyContext, factor_ratio, integer_scale, smaller_than

#: Quantities derive() knows, with the MNA mode that gives each.
NETWORK_QUANTITIES = {"transfer": "transfer", "zin": "zin", "zout": "zout"}


def cancel_ratio(num: sympy.Expr, den: sympy.Expr) -> tuple[sympy.Expr, sympy.Expr]:
    """Cancel the common factor of two polynomial expressions exactly (python-flint).

    Coefficients must be rational; the number pi may appear as a factor. The result
    has integer coefficients without a common factor, and the denominator's trailing
    coefficient is positive.

    Examples
    --------
    >>> x, y = sympy.symbols("x y", positive=True)
    >>> cancel_ratio(x**2 - y**2, 2*x + 2*y)
    (x - y, 2)
    """
    num, den = sympy.expand(num), sympy.expand(den)
    if num == 0:
        return sympy.Integer(0), sympy.Integer(1)
    bridge = PolyContext([num, den])
    fn, fd = bridge.to_flint(num), bridge.to_flint(den)
    g = fn.gcd(fd)
    if not g.is_one():
        fn, fd = fn / g, fd / g
    fn, fd = integer_scale(fn, fd)
    return bridge.to_sympy(fn), bridge.to_sympy(fd)


@dataclass(frozen=True)
class NetworkFunction:
    """An exact ratio of polynomials in ``s``: a transfer function or an impedance.

    Parameters
    ----------
    num, den : sympy.Expr
        Expanded polynomials in ``s`` whose coefficients are polynomials in the
        circuit's symbols; coprime.
    quantity : str
        ``transfer``, ``zin`` or ``zout``.

    Examples
    --------
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> h = NetworkFunction.from_expr(1 / (1 + S * R * C))
    >>> h.order(), h.dc_gain(), h.hf_gain()
    (1, 1, 0)
    """

    num: sympy.Expr
    den: sympy.Expr
    quantity: str = "transfer"
    #: The same ratio as flint polynomials, when it came from the engine: limits,
    #: coefficients and degrees then work on it directly (fast for large results).
    ratio: object = field(default=None, compare=False, repr=False)

    @classmethod
    def from_ratio(cls, ratio, quantity: str = "transfer") -> "NetworkFunction":
        """Build from an engine :class:`~symfilt.engine.elimination.Ratio`, keeping it for fast limits.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> from symfilt.engine.elimination import solve
        >>> from symfilt.engine.mna import build_system
        >>> h = NetworkFunction.from_ratio(solve(build_system(catalogue.build("rc-lowpass"), "transfer")))
        >>> h.order(), h.ideal().as_expr()
        (1, 1/(C1*R1*s + 1))
        """
        num, den = ratio.to_sympy()
        return cls(num, den, quantity, ratio)

    @classmethod
    def from_expr(cls, expr, quantity: str = "transfer") -> "NetworkFunction":
        """Build from any rational expression in ``s`` (cancelled exactly).

        Examples
        --------
        >>> NetworkFunction.from_expr((S + 1) / (2 * S**2 + 3 * S + 1)).as_expr()
        1/(2*s + 1)
        """
        n, d = sympy.fraction(sympy.together(sympy.sympify(expr)))
        n, d = cancel_ratio(n, d)
        return cls(n, d, quantity)

    # --- views ------------------------------------------------------------------
    @property
    def infinite(self) -> bool:
        """True for an infinite function (an input that draws no current: Zin = oo).

        Examples
        --------
        >>> NetworkFunction(sympy.Integer(1), sympy.Integer(0), "zin").infinite
        True
        """
        return self.den == 0

    def as_expr(self) -> sympy.Expr:
        """The ratio as one sympy expression (``oo`` when infinite).

        Examples
        --------
        >>> NetworkFunction(sympy.Integer(1), 1 + S).as_expr()
        1/(s + 1)
        """
        if self.infinite:
            return sympy.oo
        return self.num / self.den

    def coefficients(self) -> tuple[list[sympy.Expr], list[sympy.Expr]]:
        """Coefficients of numerator and denominator, lowest power of s first.

        Examples
        --------
        >>> NetworkFunction(S, 1 + 2 * S).coefficients()
        ([0, 1], [1, 2])
        """
        ncs, dcs = self._coefficients
        return list(ncs), list(dcs)

    @cached_property
    def _coefficients(self):
        if self.ratio is not None and not self.infinite:
            from symfilt.engine.elimination import poly_to_sympy

            ncs, dcs = self.ratio.coefficients("s")
            conv = lambda cs: tuple(poly_to_sympy(c, self.ratio.symbols) for c in cs)
            return conv(ncs), conv(dcs)
        return tuple(_coeffs(self.num)), tuple(_coeffs(self.den))

    def normalized(self) -> tuple[sympy.Expr, sympy.Expr]:
        """Numerator and denominator with the denominator's lowest-order coefficient made 1.

        Each coefficient is cancelled and, when small, factored.

        Examples
        --------
        >>> R, C, Rl = sympy.symbols("R C R_L", positive=True)
        >>> NetworkFunction.from_expr(Rl / (R + Rl + S * R * Rl * C)).normalized()
        (R_L/(R + R_L), C*R*R_L*s/(R + R_L) + 1)
        """
        return self._normalized

    @cached_property
    def _normalized(self):
        if self.infinite:
            return sympy.Integer(1), sympy.Integer(0)
        ncs, dcs, ratio_of = self._coefficient_source()
        low = next(c for c in dcs if c != 0)

        def tidy(c):
            return ratio_of(c, low)

        num = sympy.Add(*[tidy(c) * S**k for k, c in enumerate(ncs)])
        den = sympy.Add(*[tidy(c) * S**k for k, c in enumerate(dcs)])
        return num, den

    def _coefficient_source(self):
        """Coefficient lists in s and a function giving a tidy ratio of two of them: on the
        engine's flint polynomials when there are some, else on sympy expressions."""
        if self.ratio is not None:
            ncs, dcs = self.ratio.coefficients("s")
            symbols = self.ratio.symbols
            return ncs, dcs, lambda a, b: _tidy_flint(a, b, symbols)
        ncs, dcs = self.coefficients()
        return ncs, dcs, _tidy_ratio

    def gain_form(self) -> tuple[sympy.Expr, list[sympy.Expr], list[sympy.Expr]]:
        """``K`` and the coefficient lists of ``N(s)``, ``D(s)`` with H = K N(s)/D(s), where
        the lowest-order coefficients of N and D are 1 (the trade's ``K/(1 + s tau)`` shape).

        Examples
        --------
        >>> R, C, Rl = sympy.symbols("R C R_L", positive=True)
        >>> NetworkFunction.from_expr(Rl / (R + Rl + S * R * Rl * C)).gain_form()
        (R_L/(R + R_L), [1], [1, C*R*R_L/(R + R_L)])
        """
        k, ncs, dcs = self._gain_form
        return k, list(ncs), list(dcs)

    @cached_property
    def _gain_form(self):
        if self.infinite:
            return sympy.oo, (sympy.Integer(1),), (sympy.Integer(1),)
        ncs, dcs, tidy = self._coefficient_source()
        if all(c == 0 for c in ncs):
            return sympy.Integer(0), (sympy.Integer(1),), (sympy.Integer(1),)
        n_low = next(c for c in ncs if c != 0)
        d_low = next(c for c in dcs if c != 0)
        return tidy(n_low, d_low), tuple(tidy(c, n_low) for c in ncs), tuple(tidy(c, d_low) for c in dcs)

    def normalized_expr(self) -> sympy.Expr:
        """The normalized ratio as one unevaluated-looking expression.

        Examples
        --------
        >>> R, C = sympy.symbols("R C", positive=True)
        >>> NetworkFunction.from_expr(2 / (2 + 2 * S * R * C)).normalized_expr()
        1/(C*R*s + 1)
        """
        if self.infinite:
            return sympy.oo
        n, d = self.normalized()
        return n / d

    def free_symbols(self) -> set:
        """Symbols appearing in the function (``s`` included).

        Examples
        --------
        >>> sorted(map(str, NetworkFunction(S, S + 1).free_symbols()))
        ['s']
        """
        return self.num.free_symbols | self.den.free_symbols

    # --- quantities --------------------------------------------------------------
    def order(self) -> int:
        """The order: the larger of the degrees in s of numerator and denominator.

        Examples
        --------
        >>> NetworkFunction(sympy.Integer(1), S**2 + S + 1).order()
        2
        """
        if self.ratio is not None:
            return self.ratio.degree("s")
        return max(sympy.degree(self.num, S), sympy.degree(self.den, S))

    def dc_gain(self) -> sympy.Expr:
        """Value at s = 0 (``oo`` when the function has a pole there).

        Examples
        --------
        >>> NetworkFunction(S, S + 1).dc_gain()
        0
        """
        return self._gain_at(0)

    def hf_gain(self) -> sympy.Expr:
        """Limit as s -> oo (``oo`` when it grows without bound).

        Examples
        --------
        >>> NetworkFunction(2 * S, S + 1).hf_gain()
        2
        """
        return self._gain_at(sympy.oo)

    def _gain_at(self, point):
        if self.ratio is not None and not self.infinite:
            r = self.ratio.limit("s", 0 if point == 0 else "oo")
            if r is None:
                return sympy.oo
            n, d = r.to_sympy()
            return _tidy_ratio(n, d)
        return _ratio_limit(self.num, self.den, S, point)

    def limit(self, symbol: sympy.Symbol, point) -> "NetworkFunction":
        """The function as ``symbol`` goes to 0 or oo (exact, on the polynomials).

        Raises SingularCircuitError when the limit is infinite.

        Examples
        --------
        >>> Rl = sympy.Symbol("R_L", positive=True)
        >>> NetworkFunction(Rl, Rl + 1 + S).limit(Rl, sympy.oo).as_expr()
        1
        """
        if self.infinite or symbol not in self.free_symbols():
            return self
        if self.ratio is not None:
            r = self.ratio.limit(symbol.name, 0 if point == 0 else "oo")
            if r is None:
                raise SingularCircuitError(str(symbol), f"the {self.quantity} grows without bound as {symbol} -> {point}",
                                           "keep that fixture in the circuit")
            return NetworkFunction.from_ratio(r, self.quantity)
        ncs, dcs = sympy.Poly(self.num, symbol), sympy.Poly(self.den, symbol)
        if point == 0:
            a, b = min(m[0] for m in ncs.monoms()), min(m[0] for m in dcs.monoms())
            if a < b:
                raise SingularCircuitError(str(symbol), f"the {self.quantity} grows without bound as {symbol} -> 0",
                                           "keep that fixture in the circuit")
            if a > b:
                return NetworkFunction(sympy.Integer(0), sympy.Integer(1), self.quantity)
            n, d = ncs.coeff_monomial(symbol**a), dcs.coeff_monomial(symbol**b)
        else:
            a, b = ncs.degree(), dcs.degree()
            if a > b:
                raise SingularCircuitError(str(symbol), f"the {self.quantity} grows without bound as {symbol} -> oo",
                                           "keep that fixture in the circuit")
            if a < b:
                return NetworkFunction(sympy.Integer(0), sympy.Integer(1), self.quantity)
            n, d = ncs.coeff_monomial(symbol**a), dcs.coeff_monomial(symbol**b)
        n, d = cancel_ratio(n, d)
        return NetworkFunction(n, d, self.quantity)

    def ideal(self) -> "NetworkFunction":
        """The stage alone: R_s -> 0, R_L -> oo, C_L -> 0 (for those present).

        Examples
        --------
        >>> from symfilt import catalogue
        >>> derive(catalogue.build("rc-lowpass")).ideal().as_expr()
        1/(C1*R1*s + 1)
        """
        out = self
        for name, point in ((SOURCE_R, 0), (LOAD_R, sympy.oo), (LOAD_C, 0)):
            sym = sympy.Symbol(name, positive=True)
            out = out.limit(sym, point)
        return out

    def subs(self, values: Mapping) -> "NetworkFunction":
        """Substitute exact values (symbol or name -> number) and cancel.

        Examples
        --------
        >>> R = sympy.Symbol("R", positive=True)
        >>> NetworkFunction(sympy.Integer(1), 1 + S * R).subs({R: 2}).as_expr()
        1/(2*s + 1)
        """
        if self.infinite:
            return self
        by_name = {x.name: x for x in self.free_symbols()}
        m = {}
        for k, v in values.items():
            key = by_name.get(k) if isinstance(k, str) else k
            if key is None:
                continue
            m[key] = sympy.Rational(repr(v)) if isinstance(v, float) else v
        n, d = cancel_ratio(self.num.xreplace(m), self.den.xreplace(m))
        return NetworkFunction(n, d, self.quantity)

    def coefficient_values(self, values: Mapping) -> tuple[list[float], list[float]] | None:
        """Coefficients of numerator and denominator (lowest power of s first) as floats at
        the given values; None when a symbol other than s has no value.

        The coefficients are compiled once per function (``sympy.lambdify`` with the
        ``math`` module), so repeated evaluation at nearby values is cheap.

        Examples
        --------
        >>> R, C = sympy.symbols("R C", positive=True)
        >>> NetworkFunction(sympy.Integer(1), 1 + S * R * C).coefficient_values({R: 1000, C: 1e-6})
        ([1.0], [1.0, 0.001])
        """
        if self.infinite:
            return None
        given = {(k.name if hasattr(k, "name") else str(k)): v for k, v in values.items()}
        if self.ratio is not None:
            return self._coefficient_values_exact(given)
        args, fn = self._coefficient_function
        try:
            point = [float(given[x.name]) for x in args]
        except KeyError:
            return None
        n = len(self._coefficients[0])
        try:
            out = [float(v) for v in fn(*point)]
        except (ZeroDivisionError, OverflowError, ValueError, TypeError):
            return None
        return out[:n], out[n:]

    def _coefficient_values_exact(self, given: dict):
        """Evaluate the engine's coefficient polynomials exactly (flint fmpq) at the values."""
        import flint

        ctx, ncs, dcs = self._coefficient_polys_q
        point = []
        for name in ctx.names():
            sym = self.ratio.symbols.get(name)
            if name == "s":
                point.append(flint.fmpq(0))
            elif sym is sympy.pi:
                point.append(flint.fmpq(*math.pi.as_integer_ratio()))
            elif name in given:
                v = given[name]
                if isinstance(v, float):
                    point.append(flint.fmpq(*v.as_integer_ratio()))
                else:
                    q = sympy.Rational(v)
                    point.append(flint.fmpq(int(q.p), int(q.q)))
            else:
                return None
        conv = lambda cs: [_fmpq_float(c(*point)) for c in cs]
        return conv(ncs), conv(dcs)

    @cached_property
    def _coefficient_polys_q(self):
        import flint

        ncs, dcs = self.ratio.coefficients("s")
        names = tuple(self.ratio.num.context().names())
        ctx = flint.fmpq_mpoly_ctx.get(names, "degrevlex")
        conv = lambda cs: [ctx.from_dict(c.to_dict()) for c in cs]
        return ctx, conv(ncs), conv(dcs)

    @cached_property
    def _coefficient_function(self):
        ncs, dcs = self._coefficients
        args = sorted(self.free_symbols() - {S}, key=lambda x: x.name)
        fn = sympy.lambdify(args, list(ncs) + list(dcs), modules="math")
        return args, fn

    def evaluate(self, values: Mapping, s_values):
        """Evaluate numerically at complex frequencies (numpy, imported here).

        Parameters
        ----------
        values : mapping
            Symbol -> number for every symbol but s.
        s_values : array_like of complex

        Examples
        --------
        >>> R = sympy.Symbol("R", positive=True)
        >>> complex(NetworkFunction(sympy.Integer(1), 1 + S * R).evaluate({R: 1}, [1j])[0])
        (0.5-0.5j)
        """
        import numpy as np

        sub = {k: float(v) for k, v in values.items()}
        ncs, dcs = self.coefficients()
        nc = [complex(sympy.N(c.xreplace(sub), 30)) if c != 0 else 0j for c in ncs]
        dc = [complex(sympy.N(c.xreplace(sub), 30)) if c != 0 else 0j for c in dcs]
        sv = np.asarray(s_values, dtype=complex)
        return np.polyval(nc[::-1], sv) / np.polyval(dc[::-1], sv)


def _fmpq_float(q) -> float:
    return int(q.p) / int(q.q)


def _coeffs(p: sympy.Expr) -> list[sympy.Expr]:
    poly = sympy.Poly(p, S)
    deg = poly.degree()
    if deg < 0:
        return [sympy.Integer(0)]
    return [poly.coeff_monomial(S**k) for k in range(deg + 1)]


def _ratio_limit(num, den, var, point):
    if den == 0:
        return sympy.oo
    pn, pd = sympy.Poly(num, var), sympy.Poly(den, var)
    if pn.is_zero:
        return sympy.Integer(0)
    if point == 0:
        a, b = min(m[0] for m in pn.monoms()), min(m[0] for m in pd.monoms())
    else:
        a, b = pn.degree(), pd.degree()
        a, b = -a, -b
    if a > b:
        return sympy.Integer(0)
    if a < b:
        return sympy.oo
    k_n = -a if point != 0 else a
    k_d = -b if point != 0 else b
    return _tidy_ratio(pn.coeff_monomial(var**k_n), pd.coeff_monomial(var**k_d))


def _tidy_flint(num, den, symbols: dict) -> sympy.Expr:
    """num/den of two engine polynomials, cancelled in flint; factored in flint when small."""
    from symfilt.engine.elimination import cancel_pair, poly_to_sympy

    if num == 0:
        return sympy.Integer(0)
    n, d = cancel_pair(num, den)
    if len(n) + len(d) > 60:
        return poly_to_sympy(n, symbols) / poly_to_sympy(d, symbols)

    def product(p):
        const, factors = p.factor()
        return sympy.Integer(int(const)) * sympy.Mul(*[poly_to_sympy(f, symbols) ** e for f, e in factors])

    return product(n) / product(d)


def _tidy_ratio(num: sympy.Expr, den: sympy.Expr) -> sympy.Expr:
    """num/den cancelled exactly (flint), and factored when small enough to read."""
    if num == 0:
        return sympy.Integer(0)
    if smaller_than(num, 400) and smaller_than(den, 400):
        return factor_ratio(num, den)
    n, d = cancel_ratio(num, den)
    return n / d


def derive(circuit: Circuit, quantity: str = "transfer", *, max_terms: int = DEFAULT_MAX_TERMS,
           progress: Callable[[str], None] | None = None) -> NetworkFunction:
    """Derive a network function of the loaded circuit, exactly and symbolically.

    Parameters
    ----------
    circuit : Circuit
    quantity : {"transfer", "zin", "zout"}
        ``transfer`` is V(output)/V(source); ``zin`` the impedance the source sees
        behind R_s; ``zout`` the impedance the load sees.
    max_terms : int
        Size budget of the elimination (see :mod:`symfilt.engine.elimination`).
    progress : callable, optional
        Receives stage names.

    Returns
    -------
    NetworkFunction
        In every symbol; numbers are substituted only by :meth:`NetworkFunction.subs`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> h = derive(catalogue.build("inverting-lowpass"))
    >>> sympy.factor(h.as_expr())
    -R2/((R1 + R_s)*(C1*R2*s + 1))
    """
    if quantity not in NETWORK_QUANTITIES:
        raise ValueError(f"quantity must be one of {list(NETWORK_QUANTITIES)}")
    if progress:
        progress(f"stamping {quantity}")
    where = circuit.title or "circuit"
    if quantity == "zin":
        try:
            return _solved(circuit, "zin", max_terms, progress, where)
        except SingularCircuitError:
            return _zin_by_voltage(circuit, max_terms, progress, where)
    if quantity == "transfer":
        from symfilt.model.solvability import check_solvable

        check_solvable(circuit, modes=("transfer",))  # names the nodes and parts of a singular setup
    return _solved(circuit, quantity, max_terms, progress, where)


def _solved(circuit: Circuit, quantity: str, max_terms: int, progress, where: str) -> NetworkFunction:
    ratio = solve_unknown(circuit, drive=NETWORK_QUANTITIES[quantity], max_terms=max_terms, progress=progress,
                          where=where)
    if progress:
        progress("converting to sympy")
    return NetworkFunction.from_ratio(ratio, quantity)


def _zin_by_voltage(circuit: Circuit, max_terms: int, progress, where: str) -> NetworkFunction:
    """Zin of an input that draws no current for a unit current drive (an op-amp input).

    Driven with an ideal unit voltage instead (R_s removed), the source current
    ``I`` flows from the node into the source, so ``Yin = -I`` and ``Zin = 1/Yin``.
    """
    current = solve_unknown(replace(circuit, source=Fixture()), "I(source)", drive="transfer",
                            max_terms=max_terms, progress=progress, where=where)
    if current.num == 0:
        return NetworkFunction(sympy.Integer(1), sympy.Integer(0), "zin")
    num, den = cancel_pair(-current.den, current.num)
    return NetworkFunction.from_ratio(Ratio(num, den, current.symbols), "zin")
