"""A loaded quantity written as the ideal one times a correction factor, where that reads shorter.

``ωc,loaded = ωc,ideal · R1/((R1 + R_s) || R_L)`` tells at a glance what the source and the
load do to an RC low-pass. The factor is ``loaded / ideal`` exactly (for quantities with a
square root, the root of the exact ratio of their squares, with the sign of the ratio) and is
shown only where it differs from 1 and prints shorter than the loaded formula itself. Display
only: JSON has the loaded and ideal expressions and no factor.
"""

from __future__ import annotations

import functools

import sympy

from symfilt.engine.polybridge import PolyContext, smaller_than
from symfilt.engine.rational import factor_ratio
from symfilt.export.readable import flint_fraction

#: The quantities a factor is looked for, by the text report's label.
QUANTITIES = ("K", "w0", "Q", "tau", "cutoff ωc", "DC gain")

#: A factor is shown only when it prints in at most this many characters (and shorter than
#: the loaded formula): a long one explains nothing.
MAX_CHARS = 40

#: Formulas larger than this (expression nodes) are not divided.
MAX_NODES = 300


@functools.lru_cache(maxsize=256)
def correction_factor(loaded, ideal):
    """``loaded / ideal`` as one exact expression, or None where there is no useful one (memoised:
    w0 and the cutoff of a first order, K and the DC gain of a low-pass, are often the same pair).

    Parameters
    ----------
    loaded, ideal : sympy.Expr or None
        The same quantity in the loaded and the ideal view (s-free).

    Returns
    -------
    sympy.Expr or None
        The factor; None when either side is missing, zero, infinite or large, when they are
        equal, or when the ratio is not a ratio of polynomials or the root of one.

    Examples
    --------
    >>> R1, Rs, RL, C1 = sympy.symbols("R1 R_s R_L C1", positive=True)
    >>> correction_factor((R1 + Rs + RL) / (C1 * RL * (R1 + Rs)), 1 / (C1 * R1))
    R1*(R1 + R_L + R_s)/(R_L*(R1 + R_s))
    >>> correction_factor(1 / sympy.sqrt(C1 * (R1 + Rs)), 1 / sympy.sqrt(C1 * R1))
    sqrt(R1)/sqrt(R1 + R_s)
    """
    if loaded is None or ideal is None:
        return None
    if any(not isinstance(e, sympy.Expr) or e == 0 or e.has(sympy.oo, sympy.zoo, sympy.nan)
           or not smaller_than(e, MAX_NODES) for e in (loaded, ideal)):
        return None
    if loaded == ideal or not loaded.free_symbols:
        return None
    square = _square_ratio(loaded, ideal)
    if square is None or square == 1:
        return None
    probe = {x: sympy.Float(1.5 + i) for i, x in enumerate(sorted(loaded.free_symbols | ideal.free_symbols,
                                                                   key=lambda x: x.name))}
    ratio = complex(loaded.xreplace(probe).evalf()) / complex(ideal.xreplace(probe).evalf())
    return -sympy.sqrt(square) if ratio.real < 0 else sympy.sqrt(square)


def _square_ratio(loaded, ideal):
    """(loaded/ideal)^2 factored, worked on flint polynomials (each side a product of powers of
    polynomials, the powers whole or half); None for anything else."""
    ctx = PolyContext([loaded, ideal])
    top, bottom = flint_fraction(ctx, loaded, 2), flint_fraction(ctx, ideal, 2)
    if top is None or bottom is None:
        return None
    return factor_ratio(ctx.to_sympy(top[0] * bottom[1]), ctx.to_sympy(top[1] * bottom[0]))  # cancelled there


def corrections(loaded_view, ideal_view, show, labels=QUANTITIES) -> dict:
    """Label -> shown factor for each quantity of :data:`QUANTITIES` worth one.

    Parameters
    ----------
    loaded_view, ideal_view : StageResult
        The two views of one analysis.
    show : callable
        The one-line printer of the report (formula -> text); a factor is kept where
        ``show(factor)`` is shorter than ``show(loaded)`` and at most :data:`MAX_CHARS` long.
    labels : iterable of str
        The quantities the report shows (others of :data:`QUANTITIES` are not looked at).

    Returns
    -------
    dict
        Label -> the factor (the exact expression).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> from symfilt.export.text import one_line
    >>> a = analyse(catalogue.build("rc-lowpass"), sensitivity=False)
    >>> one_line(corrections(a.loaded, a.ideal, one_line)["cutoff ωc"])
    'R1/((R1 + R_s) || R_L)'
    """
    out = {}
    for label in (x for x in QUANTITIES if x in labels):
        lo, hi = quantity(loaded_view, label), quantity(ideal_view, label)
        factor = correction_factor(lo, hi)
        if factor is not None and len(show(factor)) < min(len(show(lo)), MAX_CHARS + 1):
            out[label] = factor
    return out


def quantity(view, label: str):
    """The s-free quantity of a view by its text-report label (None when the view has none).

    Parameters
    ----------
    view : StageResult
        ``analysis.loaded`` or ``analysis.ideal``.
    label : str
        One of :data:`QUANTITIES`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> quantity(analyse(catalogue.build("rc-lowpass"), sensitivity=False).ideal, "cutoff ωc")
    1/(C1*R1)
    """
    f = view.form
    pick = {"K": lambda: f.gain, "w0": lambda: f.w0, "Q": lambda: f.q, "tau": lambda: f.tau,
            "cutoff ωc": lambda: view.cutoff.value, "DC gain": view.transfer.dc_gain}.get(label)
    return None if pick is None else pick()  # only the one asked for is built
