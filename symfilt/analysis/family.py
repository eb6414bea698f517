"""The response as one symbol moves: a family of loaded Bode curves, and cutoff and DC gain against it.

Numbers only (numpy, imported inside the functions); :mod:`symfilt.export.plot` draws them.
Each curve is the analysis's exact loaded transfer function evaluated with the swept symbol
at one value and every other symbol at the circuit's value, through the same
:func:`symfilt.analysis.bode.transfer_sweep` as the ordinary Bode plot.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from symfilt.analysis.bode import DEFAULT_POINTS, missing_values, transfer_sweep
from symfilt.errors import UsageError


@dataclass(frozen=True)
class FamilyData:
    """Loaded Bode curves at several values of one symbol, with the ideal curve.

    Parameters
    ----------
    name : str
        The swept symbol.
    values : tuple of sympy.Rational
        Its values, one curve each.
    f : numpy.ndarray
        Frequencies in Hz.
    curves : tuple of (numpy.ndarray, numpy.ndarray)
        Magnitude (dB) and phase (degrees) of the loaded view at each value.
    ideal_db, ideal_phase : numpy.ndarray or None
        The ideal view at the circuit's values (None when it needs a value it does not have).
    title : str
        The circuit's title.
    unit : str
        The swept symbol's unit (``Ω``, ``F``, ``H``, ``Hz`` or empty), for labels.
    left_out : dict
        View -> the names without a value, for a view that is not drawn.

    Examples
    --------
    >>> from symfilt import catalogue, analyse
    >>> from symfilt.model.sweep import parse_sweep
    >>> d = family_data(analyse(catalogue.build("rc-lowpass"), sensitivity=False), parse_sweep("R_L=1k,10k"), points=3)
    >>> d.name, len(d.curves), d.unit
    ('R_L', 2, 'Ω')
    """

    name: str
    values: tuple
    f: object
    curves: tuple
    ideal_db: object
    ideal_phase: object
    title: str = ""
    unit: str = ""
    left_out: dict = field(default_factory=dict)


@dataclass(frozen=True)
class VersusData:
    """Cutoff and DC gain of the loaded view against one symbol, with the ideal view's as reference.

    Parameters
    ----------
    name : str
        The symbol.
    x : tuple of float
        Its values.
    cutoff_hz, dc_gain : tuple of (float or None)
        The loaded view's -3 dB cutoff (Hz) and DC gain at each value (None where there is none).
    ideal_cutoff_hz, ideal_dc_gain : float or None
        The ideal view's, at the circuit's values (None when it has none or lacks a value).
    title, unit : str
        The circuit's title and the symbol's unit.

    Examples
    --------
    >>> from symfilt import catalogue, analyse
    >>> from symfilt.model.sweep import parse_sweep
    >>> v = versus_data(analyse(catalogue.build("rc-lowpass"), sensitivity=False), parse_sweep("R_L=1k,1M"))
    >>> [round(g, 4) for g in v.dc_gain], round(v.ideal_dc_gain, 4)
    ([0.1587, 0.9947], 1.0)
    """

    name: str
    x: tuple
    cutoff_hz: tuple
    dc_gain: tuple
    ideal_cutoff_hz: float | None
    ideal_dc_gain: float | None
    title: str = ""
    unit: str = ""


#: Unit of a symbol by its role or part kind (for labels).
_UNITS = {"resistor": "Ω", "capacitor": "F", "inductor": "H"}


def symbol_unit(circuit, name: str) -> str:
    """The unit of one of the circuit's symbols (empty when it has none or is unknown).

    Parameters
    ----------
    circuit : Circuit
    name : str

    Examples
    --------
    >>> from symfilt import catalogue
    >>> symbol_unit(catalogue.build("rc-lowpass"), "C1"), symbol_unit(catalogue.build("rc-lowpass"), "R_L")
    ('F', 'Ω')
    """
    info = circuit.symbols().get(name, {})
    if name == "C_L":
        return "F"
    if info.get("role") in ("source", "load"):
        return "Ω"
    if info.get("role") == "part":
        return _UNITS.get(info.get("kind", ""), "")
    return info.get("unit") or ""


def _check_symbol(a, name: str, where: str = "--sweep") -> None:
    names = sorted(str(x) for x in a.loaded.transfer.free_symbols() if str(x) != "s")
    if name not in names:
        raise UsageError(where, f"{name!r} is not a symbol of the loaded transfer function",
                         "sweep one of " + (", ".join(names) or "(none: the response has no symbols)"))


def _at(a, name: str, value) -> dict:
    """Symbol -> value: the circuit's values with ``name`` set to ``value``."""
    vals = dict(a.circuit.values())
    table = {str(x): x for x in a.loaded.transfer.free_symbols()}
    vals = {k: v for k, v in vals.items() if str(k) != name}
    vals[table[name]] = value
    return vals


def family_data(a, sweep, fmin: float | None = None, fmax: float | None = None,
                points: int = DEFAULT_POINTS, *, where: str = "--sweep") -> FamilyData:
    """The loaded Bode curve at each value of the swept symbol, with the ideal one at the circuit's values.

    Parameters
    ----------
    a : Analysis
        The result of :func:`symfilt.analysis.stage.analyse`.
    sweep : Sweep
        The symbol and its values (:func:`symfilt.model.sweep.parse_sweep`).
    fmin, fmax : float, optional
        Range in Hz; by default that of the ordinary Bode plot, widened to two decades either
        side of every curve's cutoff.
    points : int
        Number of frequencies.
    where : str
        Where the sweep was written, for an error message (``--sweep`` or a file's ``[note] sweep``).

    Returns
    -------
    FamilyData

    Raises
    ------
    UsageError
        The symbol is not one of the loaded view's, or another symbol has no value.

    Examples
    --------
    >>> from symfilt import catalogue, analyse
    >>> from symfilt.model.sweep import parse_sweep
    >>> d = family_data(analyse(catalogue.build("rc-lowpass"), sensitivity=False), parse_sweep("R_s=50,5k"),
    ...                 fmin=10, fmax=10, points=2)
    Traceback (most recent call last):
    ...
    symfilt.errors.UsageError: bode range: fmin 10 Hz and fmax 10 Hz, give 0 < fmin < fmax in Hz
    """
    import numpy as np

    from symfilt.analysis.bode import default_range
    from symfilt.analysis.numeric import numeric_cutoff

    _check_symbol(a, sweep.name, where)
    loaded, ideal = a.loaded.transfer, a.ideal.transfer
    missing = missing_values(loaded, _at(a, sweep.name, 1))
    if missing:
        raise UsageError(where, "no value for " + ", ".join(missing),
                         "give every symbol but the swept one a value")
    base = dict(a.circuit.values())
    ideal_missing = missing_values(ideal, base)
    cut = [numeric_cutoff(loaded, _at(a, sweep.name, v)) for v in sweep.values]
    w_ideal = None if ideal_missing else numeric_cutoff(ideal, base)
    marks = {"loaded": {f"c{k}": w / (2 * math.pi) for k, w in enumerate(cut) if w},
             "ideal": {} if w_ideal is None else {"cutoff": w_ideal / (2 * math.pi)}}
    lo, hi = default_range(marks)
    lo, hi = float(fmin) if fmin is not None else lo, float(fmax) if fmax is not None else hi
    if not (math.isfinite(lo) and math.isfinite(hi) and 0 < lo < hi):
        raise UsageError("bode range", f"fmin {lo:g} Hz and fmax {hi:g} Hz", "give 0 < fmin < fmax in Hz")
    f = np.geomspace(lo, hi, int(points))
    curves = tuple(transfer_sweep(loaded, _at(a, sweep.name, v), f) for v in sweep.values)
    i_db, i_ph = (None, None) if ideal_missing else transfer_sweep(ideal, base, f)
    return FamilyData(sweep.name, tuple(sweep.values), f, curves, i_db, i_ph, a.circuit.title,
                      symbol_unit(a.circuit, sweep.name), {"ideal": ideal_missing} if ideal_missing else {})


def versus_data(a, sweep) -> VersusData:
    """The loaded view's cutoff and DC gain at each value of the symbol, and the ideal view's.

    Parameters
    ----------
    a : Analysis
        The result of :func:`symfilt.analysis.stage.analyse`.
    sweep : Sweep
        The symbol and its values (a range gives many: :data:`symfilt.model.sweep.VERSUS_POINTS`).

    Returns
    -------
    VersusData

    Examples
    --------
    >>> from symfilt import catalogue, analyse
    >>> from symfilt.model.sweep import parse_sweep
    >>> v = versus_data(analyse(catalogue.build("rc-lowpass"), sensitivity=False), parse_sweep("R_L=1M"))
    >>> round(v.cutoff_hz[0]), round(v.ideal_cutoff_hz)
    (1372, 1539)
    """
    from symfilt.analysis.numeric import numeric_cutoff

    _check_symbol(a, sweep.name)
    loaded = a.loaded.transfer
    missing = missing_values(loaded, _at(a, sweep.name, 1))
    if missing:
        raise UsageError("--versus", "no value for " + ", ".join(missing),
                         "give every symbol but the swept one a value")
    cut, dc = [], []
    for v in sweep.values:
        vals = _at(a, sweep.name, v)
        w = numeric_cutoff(loaded, vals)
        cut.append(None if w is None else w / (2 * math.pi))
        dc.append(_dc(loaded, vals))
    ideal_vals = dict(a.circuit.values())
    ideal = a.ideal.transfer
    if missing_values(ideal, ideal_vals):
        i_cut = i_dc = None
    else:
        w = numeric_cutoff(ideal, ideal_vals)
        i_cut, i_dc = (None if w is None else w / (2 * math.pi)), _dc(ideal, ideal_vals)
    return VersusData(sweep.name, tuple(float(v) for v in sweep.values), tuple(cut), tuple(dc),
                      i_cut, i_dc, a.circuit.title,
                      symbol_unit(a.circuit, sweep.name))


def _dc(h, values) -> float | None:
    cv = h.coefficient_values(values)
    if cv is None or not cv[1] or cv[1][0] == 0:
        return None
    return cv[0][0] / cv[1][0] if cv[0] else 0.0
