"""Check a hand derivation against a derived quantity: the verdict and why not.

:func:`equivalent` reads the claim with :func:`~symfilt.claims.parse.parse_claim`
(plain text or LaTeX, never evaluated), decides whether it equals the derived
expression with :class:`~symfilt.claims.compare.Judge` (exactly on python-flint
polynomials for rational functions, by high-precision sampling with mpmath when
radicals appear) and, when the two differ, adds the findings of
:func:`~symfilt.claims.diagnosis.diagnose` and one set of values where they
differ. The result is an :class:`Equivalence`; its words are chosen in
:mod:`symfilt.export.check_report` (which also has ``assert_equivalent``).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Mapping

import sympy

from symfilt.claims.compare import SAMPLE_DIGITS, SAMPLE_POINTS, TOLERANCE, Judge, S
from symfilt.claims.diagnosis import ClaimFinding, diagnose
from symfilt.claims.limits import DIAGNOSE_TERMS, MAX_TERMS, check_size, claim_size
from symfilt.claims.parse import parse_claim
from symfilt.claims.radicals import check_analytic
from symfilt.errors import ClaimError, UsageError
from symfilt.model.safe import as_sympy

__all__ = ["SAMPLE_DIGITS", "SAMPLE_POINTS", "TOLERANCE", "ClaimFinding", "Equivalence", "equivalent",
           "parse_claim"]


@dataclass(frozen=True)
class Equivalence:
    """Outcome of comparing a claim with a derived expression.

    Parameters
    ----------
    equivalent : bool
        Whether the claim equals the derived expression.
    method : str
        ``"exact"`` (rational functions cancelled exactly) or ``"sampled"``.
    points : int
        Sample points used (0 for the exact test).
    diagnosis : tuple of ClaimFinding
        What the diagnosis found when the two differ (empty when equal), as
        data; :func:`symfilt.export.check_report.diagnosis_text` words it.
    counterexample : dict or None
        Symbol name -> value where the two differ (``w`` is the angular
        frequency, s = j*w), or None.

    Examples
    --------
    >>> bool(Equivalence(True, "exact", 0, (), None))
    True
    """

    equivalent: bool
    method: str
    points: int
    diagnosis: tuple[ClaimFinding, ...]
    counterexample: dict[str, float] | None

    def __bool__(self) -> bool:
        return self.equivalent


def _as_expr(derived: Any) -> sympy.Expr:
    if hasattr(derived, "as_expr") and not isinstance(derived, sympy.Basic):
        derived = derived.as_expr()
    if isinstance(derived, (int, float)) and not isinstance(derived, bool):
        derived = sympy.Rational(str(derived))
    if not isinstance(derived, sympy.Expr):
        raise UsageError("derived", f"expected a sympy expression, got {type(derived).__name__}",
                         "pass a sympy expression or an object with as_expr()")
    if derived.has(sympy.zoo, sympy.oo, sympy.nan):
        raise UsageError("derived", "the derived quantity is infinite or undefined", "compare a finite quantity")
    return derived


def _claim_expr(claim: Any, table: dict[str, sympy.Symbol]) -> sympy.Expr:
    if isinstance(claim, str):
        return parse_claim(claim, table)
    if isinstance(claim, (int, float)) and not isinstance(claim, bool):
        return sympy.Rational(str(claim))
    if not isinstance(claim, sympy.Expr):
        raise UsageError("claim", f"expected text or a sympy expression, got {type(claim).__name__}",
                         "pass the claim as a string")
    # the same name means the same symbol, whatever assumptions the caller gave it
    rename = {x: table[x.name] for x in claim.free_symbols if x.name in table and table[x.name] != x}
    return claim.xreplace(rename)


def equivalent(claim: Any, derived: Any, *, symbols: Any = None, values: Mapping[str, Any] | None = None,
               rng_seed: int = 0, ties: Mapping[str, sympy.Expr] | None = None,
               quantity: str | None = None) -> Equivalence:
    """Decide whether a hand derivation equals a derived quantity, and if not, why.

    Parameters
    ----------
    claim : str or sympy.Expr
        The hand derivation; text (plain or LaTeX) is read with
        :func:`~symfilt.claims.parse.parse_claim` against the symbols of
        ``derived``, ``symbols`` and ``s``.
    derived : sympy.Expr or object with ``as_expr()``
        The quantity symfilt derived (a NetworkFunction, a cutoff, a gain).
    symbols : Mapping[str, sympy.Symbol] or iterable of sympy.Symbol, optional
        Further names the claim may use.
    values : Mapping[str, number], optional
        Values for the counterexample (others are drawn at random).
    rng_seed : int
        Seed of the sample points and random values.
    ties : Mapping[str, sympy.Expr], optional
        Tied part name -> its expression (:meth:`symfilt.model.circuit.Circuit.ties`):
        the claim may use a tied part's name, which stands for its tie.
    quantity : str, optional
        What the derived quantity is (``transfer``, ``dc-gain``, ``cutoff``, ``w0``, ``q``,
        ``zin``, ``zout``): only a gain's difference is given in dB. Without it, a quantity
        that depends on s counts as a gain.

    Returns
    -------
    Equivalence
        ``method`` says which test decided: ``"exact"`` for rational functions,
        ``"sampled"`` (``SAMPLE_POINTS`` points at ``SAMPLE_DIGITS`` digits) when
        radicals appear.

    Examples
    --------
    >>> import sympy
    >>> R1, C1, R_L = sympy.symbols("R1 C1 R_L", positive=True)
    >>> s = sympy.Symbol("s")
    >>> h = R_L / (R1 + R_L + s * C1 * R1 * R_L)
    >>> equivalent("R_L/(R1 + R_L + j*w*C1*R1*R_L)", h).equivalent
    True
    >>> r = equivalent("1/(1 + s*R1*C1)", h)
    >>> r.equivalent, r.method, r.diagnosis[0].kind, r.diagnosis[0].data["limits"]
    (False, 'exact', 'left-out', (('R_L', False, 'load'),))
    >>> R, R3 = sympy.symbols("R R3", positive=True)
    >>> equivalent("1/(2*R3*C1)", 1 / (R * C1), symbols=[R3], ties={"R3": R / 2}).equivalent
    True
    """
    target = _as_expr(derived)
    table = {x.name: x for x in target.free_symbols}
    extra = symbols.values() if isinstance(symbols, Mapping) else (symbols or ())
    for x in extra:
        if not isinstance(x, sympy.Symbol):
            raise UsageError("symbols", f"expected sympy symbols, got {type(x).__name__}", "pass Symbol objects")
        table.setdefault(x.name, x)
    table.setdefault("s", S)
    given: dict[str, float] = {}
    for name, value in (values or {}).items():
        try:
            given[str(name)] = float(value)
        except (TypeError, ValueError):
            raise UsageError("values", f"the value of {name} is not a number", "pass numbers") from None
    hand = _claim_expr(claim, table)
    check_analytic(hand, "claim")
    check_analytic(target, "derived")
    sizes = _checked_sizes(hand, target)
    if ties:
        hand = hand.xreplace({table[name]: as_sympy(e) for name, e in ties.items() if name in table})
    judge = Judge(hand.free_symbols | target.free_symbols | {table["s"]}, rng_seed)
    same, method, points = judge.same(hand, target)
    if same:
        return Equivalence(True, method, points, (), None)
    if max(sizes) > DIAGNOSE_TERMS:  # the diagnosis works in sympy: minutes for such a size
        return Equivalence(False, method, points, (ClaimFinding("not-diagnosed", {"terms": max(sizes)}),), None)
    gain = None if quantity is None else quantity in ("transfer", "dc-gain", "dc_gain", "gain")
    diagnosis, counter = diagnose(hand, target, judge, given, rng_seed, gain)
    return Equivalence(False, method, points, diagnosis, counter)


def _checked_sizes(hand: sympy.Expr, target: sympy.Expr) -> tuple[int, int]:
    """Estimated terms of the claim and of the derived quantity, both within the limits, and their product."""
    check_size(hand, "claim")
    check_size(target, "derived")
    a, b = claim_size(hand)[0], claim_size(target)[0]
    if a * b > MAX_TERMS * 100:
        raise ClaimError("claim", f"the claim ({a} terms) and the derived quantity ({b} terms) are too large to "
                         f"compare: their cross product could reach {a * b} terms", "check a smaller quantity or "
                         "write the claim in fewer terms")
    return a, b
