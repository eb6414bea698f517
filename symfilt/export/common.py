"""Shared pieces of the exporters: symbol display names, parallel combinations, labels.

Nothing here changes a result; it only decides how an expression is written.
"""

from __future__ import annotations

import functools
from itertools import combinations

import sympy

from symfilt.analysis.fastfactor import factor, is_polynomial
from symfilt.engine.polybridge import PolyContext, smaller_than
from symfilt.engine.rational import factor_ratio

GREEK = {"alpha", "beta", "gamma", "delta", "epsilon", "zeta", "eta", "theta", "kappa", "lambda", "mu",
         "nu", "xi", "rho", "sigma", "tau", "phi", "chi", "psi", "omega"}

def latex_name(name: str) -> str:
    """The trade's LaTeX for a symbol name: R1 -> R_{1}, R_s -> R_{s}, A_U1 -> A_{\\mathrm{U1}}.

    A subscript of more than one character with a letter in it is a label, not a product of
    variables, so it is upright (``V_{\\mathrm{in}}``, ``Z_{\\mathrm{out}}``), as the trade writes it;
    a one-letter or all-digit subscript stays as it is.

    Parameters
    ----------
    name : str
        The symbol's name.

    Examples
    --------
    >>> [latex_name(n) for n in ["R1", "R_s", "A_U1", "Rb", "GBW_U1", "beta", "E", "Rin", "R12"]]
    ['R_{1}', 'R_{s}', 'A_{\\\\mathrm{U1}}', 'R_{b}', '\\\\mathrm{GBW}_{\\\\mathrm{U1}}', '\\\\beta', 'E', 'R_{\\\\mathrm{in}}', 'R_{12}']
    """
    if name in GREEK:
        return "\\" + name
    if "_" in name:
        head, tail = name.split("_", 1)
        head_tex = latex_name(head) if len(head) == 1 or head in GREEK else f"\\mathrm{{{head}}}"
        return f"{head_tex}_{{{subscript_tex(tail)}}}"
    if len(name) > 1 and name[0].isalpha() and name[0].isupper():
        return f"{name[0]}_{{{subscript_tex(name[1:])}}}"
    if len(name) > 1:
        return f"\\mathrm{{{name}}}"
    return name


def subscript_tex(text: str) -> str:
    """A subscript as LaTeX: upright (``\\mathrm``) when it is a label of several characters with a letter.

    Parameters
    ----------
    text : str

    Examples
    --------
    >>> subscript_tex("out"), subscript_tex("L"), subscript_tex("12")
    ('\\\\mathrm{out}', 'L', '12')
    """
    return f"\\mathrm{{{text}}}" if len(text) > 1 and any(c.isalpha() for c in text) else text


def symbol_names(expr) -> dict:
    """symbol -> LaTeX name for every free symbol of ``expr`` (for sympy's latex printer).

    Parameters
    ----------
    expr : sympy.Expr or None
        The expression (None, or anything without free symbols, gives ``{}``).

    Examples
    --------
    >>> symbol_names(sympy.Symbol("R1") + sympy.Symbol("s"))[sympy.Symbol("R1")]
    'R_{1}'
    """
    if expr is None or not hasattr(expr, "free_symbols"):
        return {}
    return {x: latex_name(x.name) for x in expr.free_symbols}


class Parallel(sympy.Function):
    """Display-only parallel combination a || b || ... = 1/(1/a + 1/b + ...).

    Parameters
    ----------
    *args : sympy.Expr
        The branches (two or more).

    Examples
    --------
    >>> R1, R2 = sympy.symbols("R1 R2")
    >>> print(Parallel(R1, R2), sympy.latex(Parallel(R1, R2)))
    R1 || R2 R_{1} \\parallel R_{2}
    >>> print(sympy.Symbol("C1") * Parallel(R1, R2))
    C1*(R1 || R2)
    """

    #: Binds like a sum: a product or a power around it adds the parentheses, a bare one has none.
    precedence = 40  # sympy's PRECEDENCE["Add"]

    def _latex(self, printer):
        wrap = lambda x: f"\\left({printer._print(x)}\\right)" if _low(x) else printer._print(x)
        return " \\parallel ".join(wrap(x) for x in self.args)

    def _sympystr(self, printer):
        wrap = lambda x: f"({printer._print(x)})" if _low(x) else printer._print(x)
        return " || ".join(wrap(x) for x in self.args)

    def _pretty(self, printer):
        from sympy.printing.pretty.stringpict import prettyForm

        out = None
        for x in self.args:
            form = printer._print(x)
            if _low(x):
                form = prettyForm(*form.parens())
            out = form if out is None else prettyForm(*out.right(" ‖ ", form))
        out.binding = prettyForm.ADD
        return out


def _low(x) -> bool:
    """True for a branch that needs parentheses inside ``||`` (a sum)."""
    from sympy.printing.precedence import PRECEDENCE, precedence

    return precedence(x) <= PRECEDENCE["Add"]


def _resistive(e) -> bool:
    """True for a sum of resistances (every symbol named R...): a b/(a + b) of those is a
    parallel resistance; of capacitances it would be a series one, so it is left alone."""
    return bool(e.free_symbols) and all(x.name.startswith("R") for x in e.free_symbols)


def _factor(expr):
    """``sympy.factor`` by python-flint for a ratio of polynomials (the same result, many times
    faster on long coefficients); for anything else (radicals) sympy's own steps with flint's factoring
    (:func:`symfilt.analysis.fastfactor.factor`)."""
    num, den = sympy.fraction(expr)
    polynomials = lambda: is_polynomial(num, False) and is_polynomial(den, False)
    if not polynomials():  # a sum of fractions: brought over one denominator
        num, den = sympy.fraction(sympy.together(expr))
    if not polynomials():  # radicals
        return factor(expr)
    try:
        return factor_ratio(num, den)  # canonical for the ratio's value, whatever num and den were
    except (sympy.PolynomialError, ValueError, TypeError):
        return factor(expr)


def _split_parallel(num_factors: list, den_sum: sympy.Expr):
    """Find A + B = den_sum with A * B dividing the numerator's product (exact division on
    python-flint polynomials, one per split of the sum's terms)."""
    terms = sympy.Add.make_args(den_sum)
    if len(terms) < 2 or len(terms) > 6:
        return None
    num = sympy.Mul(*num_factors)
    if not (is_polynomial(num, False) and is_polynomial(den_sum, False)):
        return None
    try:
        ctx = PolyContext([num, den_sum])
        n = ctx.to_flint(num)
        flint_terms = [ctx.to_flint(t) for t in terms]
        total = ctx.to_flint(den_sum)
    except (sympy.PolynomialError, ValueError, TypeError):
        return None
    for k in range(1, len(terms) // 2 + 1):
        for group in combinations(range(len(terms)), k):
            a = sympy.Add(*[terms[i] for i in group])
            b = sympy.Add(*[terms[i] for i in range(len(terms)) if i not in group])
            if not _resistive(a) or not _resistive(b) or a.is_number or b.is_number:
                continue
            fa = sum((flint_terms[i] for i in group), ctx.to_flint(sympy.Integer(0)))
            q, r = divmod(n, fa * (total - fa))
            if r.is_zero():
                return _factor(a), _factor(b), ctx.to_sympy(q)
    return None


#: Sums longer than this (terms of an expanded numerator or denominator) are not searched for
#: parallel combinations: the split looks at sums of 2 to 6 terms after factoring.
PARALLEL_MAX_TERMS = 24


@functools.lru_cache(maxsize=1024)
def parallel_display(expr):
    """Rewrite ``a b / (a + b)`` as ``a || b`` where it appears, for display only.

    The result prints with ``||`` (text) or ``\\parallel`` (LaTeX) and equals the
    input; JSON never uses it.

    Parameters
    ----------
    expr : sympy.Expr or None
        The expression; one with ``s``, a number or a large one is returned as is.

    Examples
    --------
    >>> R1, Rs, RL, C1 = sympy.symbols("R1 R_s R_L C1", positive=True)
    >>> print(parallel_display((R1 + Rs + RL) / (C1 * RL * (R1 + Rs))))
    1/(C1*((R1 + R_s) || R_L))
    >>> print(parallel_display(RL / (R1 + Rs + RL)))
    R_L/(R1 + R_L + R_s)
    """
    if expr is None or not isinstance(expr, sympy.Expr) or expr.is_number or not smaller_than(expr, 300):
        return expr
    if expr.has(sympy.Symbol("s")):
        return expr
    if any(len(sympy.Add.make_args(part)) > PARALLEL_MAX_TERMS for part in sympy.fraction(expr)):
        return expr  # a long sum: factoring it costs seconds and no short a || b comes out
    num, den = sympy.fraction(_factor(expr))
    nf, df = list(sympy.Mul.make_args(num)), list(sympy.Mul.make_args(den))
    for target, other, invert in ((df, nf, False), (nf, df, True)):
        for f in target:
            if isinstance(f, sympy.Add):
                found = _split_parallel(other, f)
                if found:
                    a, b, rest = found
                    if isinstance(b, sympy.Add) and not isinstance(a, sympy.Add):
                        a, b = b, a
                    others = sympy.Mul(*[g for g in target if g is not f])
                    if not invert:  # expr = rest * (a||b) / others
                        return rest * Parallel(a, b) / others
                    return others / (rest * Parallel(a, b))
    return expr


def transfer_parts(h, *, parallel: bool = True):
    """H(s) = K * N(s) / D(s), with N and D starting at 1: returns (K, N, D) for printing.

    N and D are unevaluated sums in descending powers of s; print them with
    ``order="none"`` to keep that order.

    Parameters
    ----------
    h : NetworkFunction
    parallel : bool
        Write parallel combinations as ``a || b`` inside the coefficients.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> k, n, d = transfer_parts(derive(catalogue.build("rc-lowpass")))
    >>> print(k, "|", n, "|", sympy.sstr(d, order="none"))
    R_L/(R1 + R_L + R_s) | 1 | C1*((R1 + R_s) || R_L)*s + 1
    """
    s = sympy.Symbol("s")
    k, ncs, dcs = h.gain_form()
    from symfilt.export.readable import readable  # readable builds on this module

    fix = readable if parallel else (lambda e: e)

    def poly(cs):
        terms = []
        for i, c in enumerate(cs):
            if c == 0:
                continue
            power = sympy.Integer(1) if i == 0 else (s if i == 1 else sympy.Pow(s, i, evaluate=False))
            c = fix(c)
            if i and c != 1:
                factors = c.args if isinstance(c, sympy.Mul) else (c,)
                terms.append(sympy.Mul(*factors, power, evaluate=False))
            else:
                terms.append(c if i == 0 else power)
        return sympy.Add(*terms[::-1], evaluate=False) if len(terms) > 1 else terms[0]

    return fix(k), poly(ncs), poly(dcs)


#: Sensitivity tables in the order reports show them.
SENSITIVITY_ORDER = ("cutoff", "w0", "q", "dc_gain", "gain", "magnitude")


def sensitivity_quantities(tables) -> list[str]:
    """The sensitivity tables worth a column, in report order.

    The pass-band gain K (``gain``) is left out where it is the DC gain (a low-pass), so a
    column is never shown twice.

    Parameters
    ----------
    tables : mapping
        Quantity -> symbol name -> sensitivity (symbolic or numeric); empty tables are skipped.

    Returns
    -------
    list of str

    Examples
    --------
    >>> sensitivity_quantities({"w0": {"R": -1}, "dc_gain": {"R": 0}, "gain": {"R": 0}, "q": None})
    ['w0', 'dc_gain']
    >>> sensitivity_quantities({"w0": {"R": -1}, "dc_gain": None, "gain": {"R": 0}})
    ['w0', 'gain']
    """
    out = [q for q in SENSITIVITY_ORDER if tables.get(q)]
    if "gain" in out and "dc_gain" in out and tables["gain"] == tables["dc_gain"]:
        out.remove("gain")
    return out
