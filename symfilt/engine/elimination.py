"""Fraction-free elimination of an MNA system on python-flint polynomials.

The unknown of interest is ``x_t = det(A_t) / det(A)`` (Cramer's rule). Both
determinants come out of one sparse Bareiss elimination of the augmented matrix
``[A | b]`` in which the target column is never chosen as a pivot column: when one
row is left, it reads ``a * x_t = c``, so ``x_t = c / a``. Every division in
Bareiss's recurrence is exact, so all entries stay polynomials (minors of ``A``).

Pivots are chosen by a Markowitz rule weighted by the pivot's size: the product of
(other entries in the pivot's row) x (other entries in its column) + 1, times the
pivot's number of terms, then its degree. This keeps fill-in low on the sparse,
banded matrices that circuits give, and prefers the constant pivots of op-amp
and source rows. Rows that do not touch a pivot's column are left
alone: Bareiss would scale each of them by ``pivot / previous pivot`` at every
step; here a row remembers the step it was last brought up to date and is scaled
once, by ``p_now / p_then`` (the factors telescope), only when a later pivot needs
it. The last row is never scaled, since ``x_t = c / a`` does not change when a
row is.

Afterwards the reciprocal generators (``G:R`` = 1/R, ``Y:L`` = 1/(sL)) are turned
back into ordinary symbols by multiplying numerator and denominator by the same
monomial, and the common factor is cancelled with a polynomial gcd. The result is a
:class:`~symfilt.engine.rational.Ratio`, converted to sympy only when asked.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field
from typing import Callable

import flint

from symfilt.errors import SingularCircuitError, SizeLimitError
from symfilt.engine.mna import MnaSystem
from symfilt.engine.rational import Ratio, cancel_pair

#: Default size budget: the most terms any polynomial of a derivation may have.
#: The transfer function of a ten-section RC ladder with symbolic source and load
#: has 28 657 terms; a result of 200 000 terms takes a few seconds and a few hundred
#: megabytes, the point where a formula stops being something to read.
DEFAULT_MAX_TERMS = 200_000
#: Memory the engine lets its polynomials take (bytes): 1 GB. A product whose result could
#: need more than half of it, or a matrix whose entries together would, stops the derivation
#: with the size message before the memory is taken (see :func:`memory_estimate`).
DEFAULT_MAX_MEMORY = 10**9


@dataclass(frozen=True)
class DelayedProgress:
    """A progress callback that stays silent until a derivation has run ``delay`` seconds.

    Give it as ``progress=`` to :func:`solve` or :func:`symfilt.analysis.network.derive`;
    each stage name reported after the delay is passed to ``write``, so short
    derivations print nothing at all.

    Parameters
    ----------
    write : callable
        Receives each stage name, e.g. a function printing to stderr.
    delay : float
        Seconds of silence from the moment the object is made.
    clock : callable
        Source of the time in seconds (:func:`time.monotonic`).
    start : float
        The clock reading the delay counts from; by default (nan) the clock's
        reading when the object is made.

    Examples
    --------
    >>> seen = []
    >>> ticks = iter([0.0, 0.5, 2.5])
    >>> report = DelayedProgress(seen.append, delay=2.0, clock=lambda: next(ticks))
    >>> report("stamping"); report("elimination step 1 of 9")
    >>> seen
    ['elimination step 1 of 9']
    """

    write: Callable[[str], object]
    delay: float = 2.0
    clock: Callable[[], float] = time.monotonic
    start: float = field(default=float("nan"))

    def __post_init__(self) -> None:
        if self.start != self.start:  # not given: start now
            object.__setattr__(self, "start", self.clock())

    def __call__(self, stage: str) -> None:
        if self.clock() - self.start >= self.delay:
            self.write(stage)


def memory_estimate(terms: int, nvars: int) -> int:
    """Bytes that ``terms`` terms of a polynomial in ``nvars`` variables take, estimated.

    flint stores each term's exponents packed into 64-bit words (at least 8 bits per
    exponent, 16 counted here to leave room for degrees past 255) and its coefficient in one
    word while it fits (circuit coefficients are small integers), plus the arrays' slack.

    Parameters
    ----------
    terms : int
        Number of terms.
    nvars : int
        Number of variables of the ring.

    Returns
    -------
    int

    Examples
    --------
    >>> memory_estimate(1_000_000, 30)
    80000000
    """
    return terms * 8 * (2 + -(-nvars // 4))


class _Budget:
    """The size budget of one elimination: terms of each result, memory of each product and of all rows."""

    def __init__(self, system: MnaSystem, max_terms: int, max_memory: int, where: str) -> None:
        self.system, self.max_terms, self.max_memory, self.where = system, max_terms, max_memory, where
        self.nvars = system.ctx.nvars()

    def result(self, p) -> None:
        _check_size(p, self.max_terms, self.system, self.where)

    def product(self, a, b) -> None:
        need = memory_estimate(len(a) * len(b), self.nvars)
        if need > self.max_memory // 2:
            self.stop(f"a product of {len(a)} by {len(b)} terms could need {_gb(need)}")

    def rows(self, rows: list[dict]) -> None:
        need = memory_estimate(sum(len(v) for row in rows for v in row.values()), self.nvars)
        if need > self.max_memory // 2:
            self.stop(f"the matrix entries together need about {_gb(need)}")

    def stop(self, what: str) -> None:
        system = self.system
        raise SizeLimitError(
            self.where,
            f"the derivation outgrew its memory budget: {what}, over the budget of {_gb(self.max_memory)} "
            f"(the circuit has {system.parts} parts and {system.size} unknowns)",
            "derive the stages one at a time, or raise the budget with --max-memory (max_memory= in Python)")


def _gb(n: int) -> str:
    return f"{n / 1e9:.3g} GB" if n >= 10**8 else f"{n / 1e6:.3g} MB"


def _check_size(p, max_terms: int, system: MnaSystem, where: str) -> None:
    if len(p) > max_terms:
        fix = "raise the budget with --max-terms (max_terms= in Python) or derive the stages one at a time"
        if any(name.startswith("A_") for name in system.symbols):
            fix += ", or with ideal op-amps (--opamp-model ideal)"
        raise SizeLimitError(
            where,
            f"the derivation outgrew its size budget: a polynomial reached {len(p)} terms, over the budget of "
            f"{max_terms} (the circuit has {system.parts} parts and {system.size} unknowns)", fix)


def solve(system: MnaSystem, *, max_terms: int = DEFAULT_MAX_TERMS,
          progress: Callable[[str], None] | None = None, where: str = "circuit",
          max_memory: int = DEFAULT_MAX_MEMORY) -> Ratio:
    """Solve for the system's target unknown as an exact, cancelled ratio.

    Parameters
    ----------
    system : MnaSystem
    max_terms : int
        Size budget: raise :class:`SizeLimitError` when a polynomial of the
        elimination grows past this many terms.
    progress : callable, optional
        Called with a short stage name as the elimination goes on (see
        :class:`DelayedProgress` to stay silent on short derivations).
    where : str
        Name used in error messages.
    max_memory : int
        Memory budget in bytes: raise :class:`SizeLimitError` before a product or the
        matrix as a whole could take more than half of it (:func:`memory_estimate`).

    Returns
    -------
    Ratio

    Raises
    ------
    SingularCircuitError
        When the equations have no unique solution.
    SizeLimitError
        When the derivation grows past ``max_terms`` or ``max_memory``.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.engine.mna import build_system
    >>> r = solve(build_system(catalogue.build("rc-lowpass").without_fixtures(), "transfer"))
    >>> r.to_sympy()
    (1, C1*R1*s + 1)
    """
    num, den = _bareiss_target(system, _Budget(system, max_terms, max_memory, where), progress, where)
    if progress:
        progress("restoring resistances")
    num, den, symbols = _restore(system, num, den)
    if progress:
        progress("cancelling common factors")
    num, den = cancel_pair(num, den)
    return Ratio(num, den, symbols)


def _singular(where: str) -> SingularCircuitError:
    return SingularCircuitError(where, "the circuit equations are singular (no unique solution)",
                                "check for an op-amp without feedback, a loop of voltage sources, "
                                "or a node held only by current sources")


def _bareiss_target(system: MnaSystem, budget: _Budget, progress, where: str):
    """Sparse Bareiss elimination with lazy row scaling; returns (c, a) of the last row ``a x_t = c``."""
    n = system.size
    ctx = system.ctx
    rows, col_rows = _augmented(system)
    target = system.target
    active_rows = set(range(n))
    active_cols = set(range(n)) - {target}
    pivots = [ctx.from_dict({(0,) * ctx.nvars(): 1})]  # pivots[k]: pivot of step k (pivots[0] = 1)
    level = [0] * n  # step after which each row was last brought up to date
    report = max(1, (n - 1) // 10)
    step = 0
    while active_cols:
        step += 1
        if progress and (step - 1) % report == 0:
            progress(f"elimination step {step} of {n - 1}")
        best = _choose_pivot(rows, col_rows, active_rows, active_cols)
        if best is None:
            raise _singular(where)
        pr, pc = best
        active_rows.discard(pr)
        active_cols.discard(pc)
        prev = pivots[step - 1]
        _bring(rows, level, pivots, pr, step - 1, budget)
        pivot_row = rows[pr]
        for i in col_rows[pc] & active_rows:
            _bring(rows, level, pivots, i, step - 1, budget)
            new_row = _eliminated(rows[i], pivot_row, pc, prev, budget)
            for j in rows[i]:
                if j not in new_row:
                    col_rows[j].discard(i)
            for j in new_row:
                col_rows.setdefault(j, set()).add(i)
            rows[i] = new_row
            level[i] = step
        pivots.append(pivot_row[pc])
        budget.rows(rows)
    (last,) = active_rows
    den = rows[last].get(target)
    num = rows[last].get(n, ctx.from_dict({}))
    if den is None or den == 0:
        raise _singular(where)
    return num, den


def _augmented(system: MnaSystem) -> tuple[list[dict], dict[int, set[int]]]:
    """Rows of ``[A | b]`` (b in column ``n``) as mutable dicts, and column -> rows holding it."""
    rows = [dict(r) for r in system.rows]
    for r, v in system.rhs.items():
        rows[r][system.size] = v
    col_rows: dict[int, set[int]] = {}
    for i, row in enumerate(rows):
        for j in row:
            col_rows.setdefault(j, set()).add(i)
    return rows, col_rows


def _choose_pivot(rows: list[dict], col_rows: dict[int, set[int]], active_rows: set[int],
                  active_cols: set[int]) -> tuple[int, int] | None:
    """(row, column) of the pivot: least Markowitz count (+1) times terms, then degree; None if none."""
    best = None
    for j in active_cols:
        candidates = col_rows.get(j, set()) & active_rows
        for i in candidates:
            p = rows[i][j]
            # Markowitz count (+1) weighted by the pivot's size: the work its step makes
            key = (((len(rows[i]) - 1) * (len(candidates) - 1) + 1) * len(p), p.total_degree())
            if best is None or key < best[0]:
                best = (key, i, j)
    return None if best is None else best[1:]


def _bring(rows: list[dict], level: list[int], pivots: list, i: int, k: int, budget: _Budget) -> None:
    """Scale row i to the state after step k: times pivots[k] / pivots[level[i]]."""
    if level[i] == k:
        return
    up, down = pivots[k], pivots[level[i]]
    for v in rows[i].values():
        budget.product(up, v)
    rows[i] = {j: (up * v) / down if not down.is_one() else up * v for j, v in rows[i].items()}
    level[i] = k


def _eliminated(row: dict, pivot_row: dict, pc: int, prev, budget: _Budget) -> dict:
    """One Bareiss update of ``row`` by the pivot row: (pivot * row - factor * pivot row) / prev."""
    pivot = pivot_row[pc]
    factor = row[pc]
    new_row = {}
    for j in row.keys() | pivot_row.keys():
        if j == pc:
            continue
        a = row.get(j)
        b = pivot_row.get(j)
        if a is not None:
            budget.product(pivot, a)
        if b is not None:
            budget.product(factor, b)
        if a is None:
            v = -(factor * b)
        elif b is None:
            v = pivot * a
        else:
            v = pivot * a - factor * b
        if v == 0:
            continue
        if not prev.is_one():
            v = v / prev
        budget.result(v)
        new_row[j] = v
    return new_row


def _restore(system: MnaSystem, num, den):
    """Replace reciprocal generators by the monomials they stand for, in a plain ring.

    For a reciprocal generator ``g`` standing for ``1/m`` and of top degree ``T`` in
    ``num`` and ``den``, both are multiplied by ``m**T``: a polynomial
    ``sum_k p_k g**k`` becomes ``sum_k p_k m**(T - k)``. The pieces ``p_k`` come
    from derivatives at ``g = 0``, all on flint polynomials.
    """
    ctx = system.ctx
    names = list(ctx.names())
    gen = dict(zip(names, ctx.gens()))
    for r, mono in system.reciprocal.items():
        k_r = names.index(r)
        top = max(num.degrees()[k_r], den.degrees()[k_r])
        if top == 0:
            continue
        m = ctx.from_dict({(0,) * ctx.nvars(): 1})
        for name, e in mono.items():
            m *= gen[name] ** e
        num, den = _reverse(num, r, top, m), _reverse(den, r, top, m)
    plain = [nm for nm in names if nm not in system.reciprocal]
    pctx = flint.fmpz_mpoly_ctx.get(tuple(plain), "degrevlex")
    symbols = {nm: system.symbols[nm] for nm in plain}
    return num.project_to_context(pctx), den.project_to_context(pctx), symbols


def _reverse(p, var: str, top: int, m):
    """``sum_k p_k var**k`` -> ``sum_k p_k m**(top - k)`` (``p_k`` free of ``var``)."""
    out = p.context().from_dict({})
    factorial = 1
    for k in range(top + 1):
        if k:
            p = p.derivative(var)
            factorial *= k
        if p == 0:
            break
        p_k = p.subs({var: 0})
        if factorial != 1:
            p_k = p_k / factorial
        out += p_k * m ** (top - k)
    return out
