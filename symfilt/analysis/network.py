"""Network functions: exact ratios of polynomials in s, and deriving them from a circuit.

:func:`derive` turns a circuit into a :class:`NetworkFunction` (transfer function,
input impedance or output impedance) through :func:`symfilt.engine.solve.solve_unknown`.
A NetworkFunction is frozen; every operation returns a new one. Its maths is that of
the :class:`~symfilt.engine.rational.Ratio` it carries; the sympy numerator and
denominator are made when first asked for.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from functools import cached_property
from typing import Callable, Mapping

import sympy

from symfilt.model.circuit import LOAD_C, LOAD_R, SOURCE_R, Circuit, Fixture, S
from symfilt.engine.elimination import DEFAULT_MAX_TERMS
from symfilt.engine.solve import solve_unknown
from symfilt.model.stamps import SOURCE_BRANCH, Unknown
from symfilt.errors import SingularCircuitError, UsageError
from symfilt.engine.rational import Ratio, cancel_pair, poly_to_sympy, tidy_quotient
from symfilt.engine.polybridge import to_fmpq
from symfilt.analysis.interop import ScipyViews
from symfilt.analysis.coefficients import LazyCoefficients
from symfilt.model.safe import as_sympy, require, require_budget

#: Quantities derive() knows, with the MNA mode that gives each.
NETWORK_QUANTITIES = {"transfer": "transfer", "zin": "zin", "zout": "zout"}


@dataclass(frozen=True, init=False, eq=False, repr=False)
class NetworkFunction(ScipyViews):
    """An exact ratio of polynomials in ``s``: a transfer function or an impedance.

    Parameters
    ----------
    num, den : sympy.Expr
        Expanded polynomials in ``s`` whose coefficients are polynomials in the
        circuit's symbols; coprime. They may be left out when ``ratio`` is given.
    quantity : str
        ``transfer``, ``zin`` or ``zout``.
    ratio : Ratio, optional
        The same ratio as flint polynomials (made from ``num`` and ``den`` when not
        given). Limits, coefficients, degrees and substitution work on it; ``num``
        and ``den`` are then made from it when first used.

    Examples
    --------
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> h = NetworkFunction.from_expr(1 / (1 + S * R * C))
    >>> h.order(), h.dc_gain(), h.hf_gain()
    (1, 1, 0)
    """

    quantity: str

    def __init__(self, num=None, den=None, quantity: str = "transfer", ratio: Ratio | None = None) -> None:
        if ratio is None and (num is None or den is None):
            raise TypeError("give num and den, or ratio")
        object.__setattr__(self, "quantity", quantity)
        if ratio is not None:
            object.__setattr__(self, "ratio", ratio)
        if num is not None and den is not None:
            # the views as given; the cached properties below are then never computed
            object.__setattr__(self, "num", as_sympy(num))
            object.__setattr__(self, "den", as_sympy(den))

    @cached_property
    def ratio(self) -> Ratio:
        """The function as a :class:`~symfilt.engine.rational.Ratio` of flint polynomials.

        Examples
        --------
        >>> NetworkFunction(sympy.Integer(1), 1 + S).ratio.degree(S)
        1
        """
        return Ratio.from_sympy(self.num, self.den)

    @cached_property
    def num(self) -> sympy.Expr:
        """The numerator, an expanded sympy polynomial (made once, when first asked for).

        Examples
        --------
        >>> NetworkFunction.from_expr(2 / (4 + 2 * S)).num
        1
        """
        return poly_to_sympy(self.ratio.num, self.ratio.symbols)

    @cached_property
    def den(self) -> sympy.Expr:
        """The denominator, an expanded sympy polynomial (made once, when first asked for).

        Examples
        --------
        >>> NetworkFunction.from_expr(2 / (4 + 2 * S)).den
        s + 2
        """
        return poly_to_sympy(self.ratio.den, self.ratio.symbols)

    def __eq__(self, other) -> bool:
        if other.__class__ is not self.__class__:
            return NotImplemented
        return (self.num, self.den, self.quantity) == (other.num, other.den, other.quantity)

    def __hash__(self) -> int:
        return hash((self.num, self.den, self.quantity))

    def __repr__(self) -> str:
        return f"NetworkFunction(num={self.num!r}, den={self.den!r}, quantity={self.quantity!r})"

    @classmethod
    def from_ratio(cls, ratio, quantity: str = "transfer") -> "NetworkFunction":
        """Build from a :class:`~symfilt.engine.rational.Ratio`; sympy views are made lazily.

        Parameters
        ----------
        ratio : Ratio
            The cancelled ratio, polynomials in ``s`` and the circuit's symbols.
        quantity : str
            ``transfer``, ``zin`` or ``zout``.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> from symfilt.engine.elimination import solve
        >>> from symfilt.engine.mna import build_system
        >>> h = NetworkFunction.from_ratio(solve(build_system(catalogue.build("rc-lowpass"), "transfer")))
        >>> h.order(), h.ideal().as_expr()
        (1, 1/(C1*R1*s + 1))
        """
        return cls(quantity=quantity, ratio=ratio)

    @classmethod
    def from_expr(cls, expr, quantity: str = "transfer") -> "NetworkFunction":
        """Build from any rational expression in ``s`` (cancelled exactly).

        Parameters
        ----------
        expr : sympy.Expr
            A rational expression in ``s``.
        quantity : str
            ``transfer``, ``zin`` or ``zout``.

        Examples
        --------
        >>> NetworkFunction.from_expr((S + 1) / (2 * S**2 + 3 * S + 1)).as_expr()
        1/(2*s + 1)
        """
        n, d = sympy.fraction(sympy.together(as_sympy(expr)))
        return cls.from_ratio(Ratio.from_sympy(n, d), quantity)

    # --- views ------------------------------------------------------------------
    @property
    def infinite(self) -> bool:
        """True for an infinite function (an input that draws no current: Zin = oo).

        Examples
        --------
        >>> NetworkFunction(sympy.Integer(1), sympy.Integer(0), "zin").infinite
        True
        """
        return self.ratio.infinite

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
        ncs, dcs = self.lazy_coefficients()
        return tuple(ncs), tuple(dcs)

    def lazy_coefficients(self) -> tuple["LazyCoefficients", "LazyCoefficients"]:
        """As :meth:`coefficients`, each coefficient converted to sympy only when it is read.

        For a large result where only the end coefficients are needed (the DC and HF gains).

        Examples
        --------
        >>> b, a = NetworkFunction(S, 1 + 2 * S).lazy_coefficients()
        >>> len(a), a[0], a[-1]
        (2, 1, 2)
        """
        if "_coefficients" in self.__dict__:
            return tuple(LazyCoefficients(cs, None) for cs in self.__dict__["_coefficients"])
        ncs, dcs = self.ratio.coefficients(S)
        return LazyCoefficients(ncs, self.ratio.symbols), LazyCoefficients(dcs, self.ratio.symbols)

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
        ncs, dcs = self.ratio.coefficients(S)
        low = next(c for c in dcs if c != 0)
        num = sympy.Add(*[self._tidy(c, low) * S**k for k, c in enumerate(ncs)])
        den = sympy.Add(*[self._tidy(c, low) * S**k for k, c in enumerate(dcs)])
        return num, den

    def _tidy(self, a, b) -> sympy.Expr:
        """a/b of two coefficient polynomials, cancelled and, when small, factored."""
        return tidy_quotient(a, b, self.ratio.symbols)

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
        ncs, dcs = self.ratio.coefficients(S)
        if all(c == 0 for c in ncs):
            return sympy.Integer(0), (sympy.Integer(1),), (sympy.Integer(1),)
        n_low = next(c for c in ncs if c != 0)
        d_low = next(c for c in dcs if c != 0)
        tidy = self._tidy
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
        return self.ratio.free_symbols()

    # --- quantities --------------------------------------------------------------
    def order(self) -> int:
        """The order: the larger of the degrees in s of numerator and denominator.

        Examples
        --------
        >>> NetworkFunction(sympy.Integer(1), S**2 + S + 1).order()
        2
        """
        return self.ratio.degree(S)

    def degrees(self) -> tuple[int, int]:
        """Degrees in s of numerator and denominator, read from the flint polynomials.

        Returns
        -------
        (int, int)
            (m, n); m is -1 for a zero numerator.

        Examples
        --------
        >>> NetworkFunction(S, S**2 + S + 1).degrees()
        (1, 2)
        """
        r = self.ratio
        name = r.name_of(S)
        if r.num == 0:
            return -1, 0 if name is None else r.den.degrees()[r.den.context().variable_to_index(name)]
        if name is None:
            return 0, 0
        k = r.num.context().variable_to_index(name)
        return r.num.degrees()[k], r.den.degrees()[k]

    def dc_gain(self) -> sympy.Expr:
        """Value at s = 0 (``oo`` when the function has a pole there).

        Examples
        --------
        >>> NetworkFunction(S, S + 1).dc_gain()
        0
        """
        return self.ratio.gain(0, S)

    def hf_gain(self) -> sympy.Expr:
        """Limit as s -> oo (``oo`` when it grows without bound).

        Examples
        --------
        >>> NetworkFunction(2 * S, S + 1).hf_gain()
        2
        """
        return self.ratio.gain("oo", S)

    def limit(self, symbol: sympy.Symbol, point) -> "NetworkFunction":
        """The function as ``symbol`` goes to 0 or oo (exact, on the polynomials).

        Raises SingularCircuitError when the limit is infinite.

        Parameters
        ----------
        symbol : sympy.Symbol
            The symbol that goes to ``point``.
        point : {0, sympy.oo}
            Where it goes (anything but 0 means infinity).

        Examples
        --------
        >>> Rl = sympy.Symbol("R_L", positive=True)
        >>> NetworkFunction(Rl, Rl + 1 + S).limit(Rl, sympy.oo).as_expr()
        1
        """
        if self.infinite or symbol not in self.free_symbols():
            return self
        r = self.ratio.limit(symbol, 0 if point == 0 else "oo")
        if r is None:
            raise SingularCircuitError(str(symbol), f"the {self.quantity} grows without bound as {symbol} -> {point}",
                                       "keep that fixture in the circuit")
        return NetworkFunction.from_ratio(r, self.quantity)

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

        Parameters
        ----------
        values : Mapping
            Symbol or name -> exact number (floats are read from their decimal repr).

        Examples
        --------
        >>> R = sympy.Symbol("R", positive=True)
        >>> NetworkFunction(sympy.Integer(1), 1 + S * R).subs({R: 2}).as_expr()
        1/(2*s + 1)
        """
        if self.infinite:
            return self
        return NetworkFunction.from_ratio(self.ratio.subs(values), self.quantity)

    def coefficient_values(self, values: Mapping, *, exact: bool = False,
                           derivative: str | None = None) -> tuple[list, list] | None:
        """Coefficients of numerator and denominator (lowest power of s first; the scipy helpers
        of :mod:`symfilt.analysis.interop` list the highest first) as floats at the given values; None when a symbol the coefficients use has no value.

        The coefficient polynomials are evaluated exactly (flint rationals) and then
        rounded, so repeated evaluation at nearby values is cheap.

        Parameters
        ----------
        values : Mapping
            Symbol or name -> number, for every symbol other than ``s`` that the function uses.
        exact : bool
            Return exact sympy Rationals instead of floats (pi, where it occurs, as the
            nearest double).
        derivative : str, optional
            A symbol's name: the coefficients' partial derivatives by it instead (exact, on
            the flint polynomials), at the same values.

        Examples
        --------
        >>> R, C = sympy.symbols("R C", positive=True)
        >>> NetworkFunction(sympy.Integer(1), 1 + S * R * C).coefficient_values({R: 1000, C: 1e-6})
        ([1.0], [1.0, 0.001])
        >>> NetworkFunction(sympy.Integer(1), 1 + S * R * C).coefficient_values({R: 1000, C: sympy.Rational(1, 3)}, exact=True)
        ([1], [1, 1000/3])
        >>> NetworkFunction(sympy.Integer(1), 1 + S * R * C).coefficient_values({R: 1000, C: 1e-6}, derivative="R")
        ([0.0], [0.0, 1e-06])
        """
        if self.infinite:
            return None
        given = {(k.name if hasattr(k, "name") else str(k)): v for k, v in values.items()}
        return self._coefficient_values_exact(given, exact, derivative)

    def _coefficient_values_exact(self, given: dict, exact: bool = False, derivative: str | None = None):
        """Evaluate the coefficient polynomials (or their derivatives by one name) exactly (flint fmpq) at the values."""
        import flint

        ctx, ncs, dcs = self._coefficient_polys_q
        if derivative is not None:
            if derivative not in ctx.names():
                ncs, dcs = [0 * c for c in ncs], [0 * c for c in dcs]
            else:
                ncs, dcs = [c.derivative(derivative) for c in ncs], [c.derivative(derivative) for c in dcs]
        used = self._coefficient_names_used
        point = []
        for k, name in enumerate(ctx.names()):
            sym = self.ratio.symbols.get(name)
            if name == "s" or sym == S or not used[k]:
                point.append(flint.fmpq(0))
            elif sym is sympy.pi:
                point.append(flint.fmpq(*math.pi.as_integer_ratio()))
            elif sym.name in given:
                v = given[sym.name]
                if isinstance(v, float):
                    point.append(flint.fmpq(*v.as_integer_ratio()))
                else:
                    q = sympy.Rational(v)
                    point.append(flint.fmpq(int(q.p), int(q.q)))
            else:
                return None
        if exact:
            conv = lambda cs: [sympy.Rational(int(q.p), int(q.q)) for q in (c(*point) for c in cs)]
        else:
            conv = lambda cs: [_fmpq_float(c(*point)) for c in cs]
        return conv(ncs), conv(dcs)

    @cached_property
    def _coefficient_names_used(self) -> tuple[bool, ...]:
        """Per name of the coefficients' context: whether any coefficient depends on it.

        The context holds every name of the circuit (the ideal view still carries R_s and
        R_L as names of degree 0), so a name no coefficient uses needs no value.
        """
        ctx, ncs, dcs = self._coefficient_polys_q
        used = [False] * len(ctx.names())
        for c in (*ncs, *dcs):
            for k, d in enumerate(c.degrees()):
                used[k] = used[k] or d > 0
        return tuple(used)

    @cached_property
    def _coefficient_polys_q(self):
        import flint

        ncs, dcs = self.ratio.coefficients(S)
        names = tuple(self.ratio.num.context().names())
        ctx = flint.fmpq_mpoly_ctx.get(names, "degrevlex")
        conv = lambda cs: [to_fmpq(c, ctx) for c in cs]
        return ctx, conv(ncs), conv(dcs)

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
    require(circuit, Circuit, "derive circuit", "build one with Circuit.build or load_circuit")
    require_budget(max_terms, "derive")
    if quantity not in NETWORK_QUANTITIES:
        raise UsageError("derive quantity", f"unknown quantity {quantity!r}", "use one of " + ", ".join(NETWORK_QUANTITIES))
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
    current = solve_unknown(replace(circuit, source=Fixture()), Unknown("I", SOURCE_BRANCH), drive="transfer",
                            max_terms=max_terms, progress=progress, where=where)
    if current.num == 0:
        return NetworkFunction(sympy.Integer(1), sympy.Integer(0), "zin")
    num, den = cancel_pair(-current.den, current.num)
    return NetworkFunction.from_ratio(Ratio(num, den, current.symbols), "zin")
