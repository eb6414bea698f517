"""Fraction-free elimination of an MNA system on python-flint polynomials.

The unknown of interest is ``x_t = det(A_t) / det(A)`` (Cramer's rule). Both
determinants come out of one sparse Bareiss elimination of the augmented matrix
``[A | b]`` in which the target column is never chosen as a pivot column: when one
row is left, it reads ``a * x_t = c``, so ``x_t = c / a``. Every division in
Bareiss's recurrence is exact, so all entries stay polynomials (minors of ``A``).

Pivots are chosen by a Markowitz rule (fewest other entries in the pivot's row and
column, then the smallest pivot), which keeps fill-in low on the sparse, banded
matrices that circuits give.

Afterwards the reciprocal generators (``G:R`` = 1/R, ``Y:L`` = 1/(sL)) are turned
back into ordinary symbols by multiplying numerator and denominator by the same
monomial, and the common factor is cancelled with a polynomial gcd. Conversion to
sympy happens once, at the very end.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

import flint
import sympy

from .errors import SingularCircuitError, SizeLimitError
from .mna import MnaSystem

#: Default largest number of terms any intermediate polynomial may have.
DEFAULT_MAX_TERMS = 400_000


@dataclass(frozen=True)
class Ratio:
    """An exact ratio ``num / den`` of flint polynomials over the plain symbols.

    Attributes
    ----------
    num, den : flint.fmpz_mpoly
        Coprime polynomials in one context.
    symbols : dict
        Generator name -> sympy object.
    """

    num: object
    den: object
    symbols: dict

    def to_sympy(self) -> tuple[sympy.Expr, sympy.Expr]:
        """Numerator and denominator as expanded sympy expressions.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> from symfilt.mna import build_system
        >>> num, den = solve(build_system(catalogue.build("rc-lowpass"), "transfer")).to_sympy()
        >>> sympy.factor(num / den)
        R_L/(C1*R1*R_L*s + C1*R_L*R_s*s + R1 + R_L + R_s)
        """
        return poly_to_sympy(self.num, self.symbols), poly_to_sympy(self.den, self.symbols)


def poly_to_sympy(p, symbols: dict) -> sympy.Expr:
    """Convert a flint polynomial to a sympy expression.

    Parameters
    ----------
    p : flint.fmpz_mpoly
    symbols : dict
        Generator name -> sympy object (a Symbol, or a number such as pi).

    Examples
    --------
    >>> ctx = flint.fmpz_mpoly_ctx.get(("x", "y"), "lex")
    >>> x, y = ctx.gens()
    >>> poly_to_sympy(3 * x * y - y**2, {"x": sympy.Symbol("x"), "y": sympy.Symbol("y")})
    3*x*y - y**2
    """
    names = p.context().names()
    gens = [symbols[nm] for nm in names]
    terms = []
    for exps, c in p.to_dict().items():
        factors = [sympy.Integer(int(c))]
        for gsym, e in zip(gens, exps):
            if e:
                factors.append(gsym**e if e != 1 else gsym)
        terms.append(sympy.Mul(*factors))
    return sympy.Add(*terms)


def _check_size(p, max_terms: int, where: str) -> None:
    if len(p) > max_terms:
        raise SizeLimitError(where, f"an intermediate polynomial has {len(p)} terms, over the budget of {max_terms}",
                             "give more parts a value and derive with --substitute, split the circuit into stages, "
                             "or raise the budget with --max-terms")


def solve(system: MnaSystem, *, max_terms: int = DEFAULT_MAX_TERMS,
          progress: Callable[[str], None] | None = None, where: str = "circuit") -> Ratio:
    """Solve for the system's target unknown as an exact, cancelled ratio.

    Parameters
    ----------
    system : MnaSystem
    max_terms : int
        Size budget: raise :class:`SizeLimitError` when an intermediate polynomial
        grows past this many terms.
    progress : callable, optional
        Called with a short stage name as the elimination goes on.
    where : str
        Name used in error messages.

    Returns
    -------
    Ratio

    Raises
    ------
    SingularCircuitError
        When the equations have no unique solution.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.mna import build_system
    >>> r = solve(build_system(catalogue.build("rc-lowpass").without_fixtures(), "transfer"))
    >>> r.to_sympy()
    (1, C1*R1*s + 1)
    """
    num, den = _bareiss_target(system, max_terms, progress, where)
    if progress:
        progress("restoring resistances")
    num, den, symbols = _restore(system, num, den)
    if progress:
        progress("cancelling common factors")
    num, den = cancel_pair(num, den)
    return Ratio(num, den, symbols)


def _bareiss_target(system: MnaSystem, max_terms: int, progress, where: str):
    n = system.size
    ctx = system.ctx
    one = ctx.from_dict({(0,) * ctx.nvars(): 1})
    rhs_col = n
    rows = [dict(r) for r in system.rows]
    for r, v in system.rhs.items():
        rows[r][rhs_col] = v
    target = system.target
    active_rows = set(range(n))
    active_cols = set(range(n)) - {target}
    col_rows: dict[int, set[int]] = {}
    for i, row in enumerate(rows):
        for j in row:
            col_rows.setdefault(j, set()).add(i)
    prev = one
    step = 0
    while active_cols:
        step += 1
        if progress and step % 4 == 0:
            progress(f"elimination step {step} of {n - 1}")
        best = None
        for j in active_cols:
            candidates = col_rows.get(j, set()) & active_rows
            for i in candidates:
                p = rows[i][j]
                key = ((len(rows[i]) - 1) * (len(candidates) - 1), len(p))
                if best is None or key < best[0]:
                    best = (key, i, j)
        if best is None:
            raise SingularCircuitError(where, "the circuit equations are singular (no unique solution)",
                                       "check for an op-amp without feedback, a loop of voltage sources, "
                                       "or a node held only by current sources")
        _key, pr, pc = best
        pivot_row = rows[pr]
        pivot = pivot_row[pc]
        active_rows.discard(pr)
        active_cols.discard(pc)
        for i in active_rows:
            row = rows[i]
            factor = row.get(pc)
            new_row = {}
            if factor is None:
                for j, v in row.items():
                    new_row[j] = (pivot * v) / prev if prev != 1 else pivot * v
            else:
                for j in set(row) | set(pivot_row):
                    if j == pc:
                        continue
                    a = row.get(j)
                    b = pivot_row.get(j)
                    if a is None:
                        v = -(factor * b)
                    elif b is None:
                        v = pivot * a
                    else:
                        v = pivot * a - factor * b
                    if v == 0:
                        continue
                    if prev != 1:
                        v = v / prev
                    new_row[j] = v
            for j, v in new_row.items():
                _check_size(v, max_terms, where)
            # update the column index
            for j in row:
                if j not in new_row:
                    col_rows[j].discard(i)
            for j in new_row:
                col_rows.setdefault(j, set()).add(i)
            rows[i] = new_row
        prev = pivot
    (last,) = active_rows
    den = rows[last].get(target)
    num = rows[last].get(rhs_col, ctx.from_dict({}))
    if den is None or den == 0:
        raise SingularCircuitError(where, "the circuit equations are singular (no unique solution)",
                                   "check for an op-amp without feedback, a loop of voltage sources, "
                                   "or a node held only by current sources")
    return num, den


def _restore(system: MnaSystem, num, den):
    """Replace reciprocal generators by the monomials they stand for, in a plain ring."""
    ctx = system.ctx
    names = list(ctx.names())
    recip = system.reciprocal
    plain = [nm for nm in names if nm not in recip]
    pctx = flint.fmpz_mpoly_ctx.get(tuple(plain), "degrevlex")
    pos = {nm: i for i, nm in enumerate(plain)}
    rec_idx = [(names.index(r), [(pos[m], e) for m, e in mono.items()]) for r, mono in recip.items()]
    plain_idx = [names.index(nm) for nm in plain]
    nd, dd = num.to_dict(), den.to_dict()
    top = {}
    for ri, _mono in rec_idx:
        top[ri] = max([e[ri] for e in nd] + [e[ri] for e in dd] + [0])

    def convert(d: dict):
        out: dict[tuple, int] = {}
        for exps, c in d.items():
            new = [exps[k] for k in plain_idx]
            for ri, mono in rec_idx:
                extra = top[ri] - exps[ri]
                if extra:
                    for pi_, e in mono:
                        new[pi_] += e * extra
            key = tuple(new)
            out[key] = out.get(key, 0) + int(c)
        return pctx.from_dict({k: v for k, v in out.items() if v})

    symbols = {nm: system.symbols[nm] for nm in plain}
    return convert(nd), convert(dd), symbols


def cancel_pair(num, den):
    """Divide out the gcd and make the denominator's sign canonical.

    The sign is fixed so that the denominator's trailing term (lowest in the
    ring's order) is positive; with every symbol positive that keeps physically
    positive denominators positive.

    Examples
    --------
    >>> ctx = flint.fmpz_mpoly_ctx.get(("x", "y"), "lex")
    >>> x, y = ctx.gens()
    >>> cancel_pair((x + y) * x, -(x + y) * y)
    (-x, y)
    """
    if num == 0:
        return num, den.context().from_dict({(0,) * den.context().nvars(): 1})
    g = num.gcd(den)
    if not g.is_one():
        num, den = num / g, den / g
    coeffs = den.coeffs()
    if coeffs and int(coeffs[-1]) < 0:
        num, den = -num, -den
    return num, den
