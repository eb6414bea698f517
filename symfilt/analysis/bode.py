"""Bode sweep data: |H(j2πf)| in dB and its phase in degrees, loaded and ideal.

Only numbers here (numpy, imported inside the functions); :mod:`symfilt.export.plot`
draws them and :func:`csv_text` writes them as CSV. The transfer functions are
the exact ones of the analysis, evaluated at the circuit's values.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Mapping

from symfilt.errors import UsageError

#: Default number of frequencies in a sweep.
DEFAULT_POINTS = 400
#: Limits on the number of frequencies.
MIN_POINTS, MAX_POINTS = 2, 100_000
#: Decades shown on each side of the characteristic frequencies when no range is given.
MARGIN_DECADES = 2


@dataclass(frozen=True)
class BodeData:
    """A frequency sweep of one stage, loaded and ideal.

    Parameters
    ----------
    f : numpy.ndarray
        Frequencies in Hz, logarithmically spaced.
    loaded_db, ideal_db : numpy.ndarray or None
        20 log10 |H(j 2 pi f)| (``-inf`` at an exact transmission zero); None for a view
        left out because a symbol has no value (see ``left_out``).
    loaded_phase, ideal_phase : numpy.ndarray or None
        Phase in degrees, unwrapped along the sweep, starting within (-180, 180].
    marks : dict
        Frequencies to mark, label -> Hz (cutoffs, band edges, centre or notch frequency),
        for ``loaded`` and ``ideal``: ``{"loaded": {...}, "ideal": {...}}``.
    title : str
        The circuit's title (empty for a bare transfer function).
    floors : dict
        The stop-band floor 20 log10 |H(j oo)| in dB of each view that has one
        (``numeric[view]["hf_gain_db"]`` of the analysis), ``{"ideal": -36.8}``.
    left_out : dict
        View -> the names without a value, for a view that is not drawn (a symbolic source
        resistance or load leaves the loaded view out; the ideal one needs neither).

    Examples
    --------
    >>> from symfilt import catalogue, analyse
    >>> d = bode_data(analyse(catalogue.build("rc-lowpass"), sensitivity=False), points=3)
    >>> d.title, len(d.f), round(d.marks["ideal"]["cutoff"])
    ('RC low-pass', 3, 1539)
    """

    f: object
    loaded_db: object
    loaded_phase: object
    ideal_db: object
    ideal_phase: object
    marks: dict = field(default_factory=dict)
    title: str = ""
    floors: dict = field(default_factory=dict)
    left_out: dict = field(default_factory=dict)


def missing_values(h, values: Mapping) -> list[str]:
    """Names of the symbols of ``h`` (other than s) that have no value in ``values``.

    Parameters
    ----------
    h : NetworkFunction
        The transfer function to evaluate.
    values : mapping
        Symbol (or name) -> number.

    Returns
    -------
    list of str
        Sorted names.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> missing_values(derive(catalogue.build("rc-lowpass", R1=None)), {})
    ['C1', 'R1', 'R_L', 'R_s']
    """
    from symfilt.model.circuit import S

    known = {str(k) for k in values}
    return sorted(str(x) for x in h.free_symbols() - {S} if str(x) not in known)


def transfer_sweep(h, values: Mapping, f):
    """20 log10 |H(j2πf)| and the unwrapped phase (degrees) of one transfer function at frequencies f.

    Parameters
    ----------
    h : NetworkFunction
    values : mapping
        Symbol -> number for every symbol but s.
    f : array_like
        Frequencies in Hz.

    Returns
    -------
    (numpy.ndarray, numpy.ndarray)

    Examples
    --------
    >>> import sympy
    >>> from symfilt.analysis.network import NetworkFunction
    >>> R = sympy.Symbol("R", positive=True)
    >>> db, ph = transfer_sweep(NetworkFunction.from_expr(1 / (1 + sympy.Symbol("s") * R)), {R: 1}, [1 / (2 * math.pi)])
    >>> round(float(db[0]), 3), round(float(ph[0]), 1)
    (-3.01, -45.0)
    """
    import numpy as np

    return _response(h, values, np.asarray(f, dtype=float))


def _response(h, values: Mapping, f):
    import numpy as np

    with np.errstate(divide="ignore", invalid="ignore"):
        hv = h.evaluate(values, 2j * np.pi * f)
        mag = 20 * np.log10(np.abs(hv))
    phase = np.degrees(np.unwrap(np.angle(hv)))
    # start the unwrapped phase within (-180, 180]
    shift = 360.0 * math.floor((phase[0] + 180.0) / 360.0) if math.isfinite(phase[0]) else 0.0
    if phase[0] - shift <= -180.0:
        shift -= 360.0
    return mag, phase - shift


def _marks_of(numeric: Mapping) -> dict:
    out = {}
    for key, label in (("cutoff_hz", "cutoff"), ("low_edge_hz", "lower edge"), ("high_edge_hz", "upper edge")):
        v = numeric.get(key)
        if v is not None and math.isfinite(v) and v > 0:
            out[label] = float(v)
    if not out and numeric.get("f0_hz"):
        out["f0"] = float(numeric["f0_hz"])
    return out


def default_range(marks: dict) -> tuple[float, float]:
    """A sweep range two decades either side of the marked frequencies (10 Hz to 100 kHz without marks).

    Parameters
    ----------
    marks : dict
        ``{"loaded": {label: Hz}, "ideal": {label: Hz}}``, as in :attr:`BodeData.marks`.

    Returns
    -------
    tuple of float
        (fmin, fmax) in Hz, on whole decades.

    Examples
    --------
    >>> default_range({"loaded": {"cutoff": 1000.0}, "ideal": {"cutoff": 1200.0}})
    (10.0, 1000000.0)
    """
    freqs = [v for view in marks.values() for v in view.values() if v and v > 0]
    if not freqs:
        return 10.0, 1e5
    lo = 10.0 ** (math.floor(math.log10(min(freqs))) - MARGIN_DECADES)
    hi = 10.0 ** (math.ceil(math.log10(max(freqs))) + MARGIN_DECADES)
    return lo, hi


def bode_data(source, values: Mapping | None = None, fmin: float | None = None, fmax: float | None = None,
              points: int = DEFAULT_POINTS) -> BodeData:
    """Sweep a stage's loaded and ideal transfer functions over frequency.

    Parameters
    ----------
    source : Analysis or NetworkFunction
        An analysis (its loaded and ideal transfer functions and numeric cutoffs), or a
        loaded transfer function (its ideal view is taken with
        :meth:`~symfilt.analysis.network.NetworkFunction.ideal`).
    values : mapping, optional
        Symbol (or name) -> number for every symbol but ``s``. Default: the circuit's
        values (an analysis) or none.
    fmin, fmax : float, optional
        Sweep range in Hz; default two decades either side of the marked frequencies, and
        when a view has a stop-band floor, up to a decade past the frequency where
        that view flattens (its largest pole or zero) so that the floor shows.
    points : int
        Number of frequencies, logarithmically spaced.

    Returns
    -------
    BodeData

    Raises
    ------
    UsageError
        A symbol of the ideal view has no value, or the range or point count is not usable.
        A symbol only the loaded view has (R_s, R_L, C_L) leaves that view out instead
        (``left_out``), so the ideal curve is still drawn.

    Examples
    --------
    >>> from symfilt import catalogue, analyse
    >>> d = bode_data(analyse(catalogue.build("rc-lowpass"), sensitivity=False), fmin=10, fmax=1e5, points=5)
    >>> [round(x) for x in d.f]
    [10, 100, 1000, 10000, 100000]
    >>> round(float(d.ideal_db[0]), 3), round(float(d.loaded_db[0]), 3)
    (-0.0, -3.694)
    """
    import numpy as np

    loaded, ideal, vals, marks, title, floors = _sweep_inputs(source, values)
    missing = missing_values(loaded, vals)
    if missing and missing_values(ideal, vals):
        raise UsageError("bode", "no value for " + ", ".join(missing),
                         "give every part, source and load a value to plot the response")
    left_out = {"loaded": missing} if missing else {}
    n = _point_count(points)
    lo, hi = _sweep_range(marks, fmin, fmax)
    if floors and fmax is None:
        flat = [flattening_hz(h, vals) for key, h in (("loaded", loaded), ("ideal", ideal)) if key in floors]
        flat = [x for x in flat if x is not None]
        if flat:
            hi = max(hi, 10.0 ** (math.ceil(math.log10(max(flat))) + 1))
    f = np.geomspace(lo, hi, n)
    l_db, l_ph = (None, None) if missing else _response(loaded, vals, f)
    i_db, i_ph = _response(ideal, vals, f)
    return BodeData(f, l_db, l_ph, i_db, i_ph, marks, title, floors, left_out)


def flattening_hz(h, values: Mapping) -> float | None:
    """The frequency (Hz) of the largest pole or zero of ``h`` at the values: above it the
    response follows its high-frequency asymptote. None when a value is missing or there is none.

    Parameters
    ----------
    h : NetworkFunction
        The transfer function.
    values : mapping
        Symbol (or name) -> number for every symbol but ``s``.

    Returns
    -------
    float or None

    Examples
    --------
    >>> import sympy
    >>> from symfilt.analysis.network import NetworkFunction
    >>> from symfilt.model.circuit import S
    >>> round(flattening_hz(NetworkFunction((S + 1) * (S + 2000 * sympy.pi), S + 10), {}), 6)
    1000.0
    """
    import numpy as np

    coeffs = h.coefficient_values(values)
    if coeffs is None:
        return None
    roots = [float(abs(r)) for c in coeffs if len(c) > 1 and any(c[1:]) for r in np.roots(np.trim_zeros(c[::-1], "f"))]
    roots = [r for r in roots if math.isfinite(r) and r > 0]
    return max(roots) / (2 * math.pi) if roots else None


def _sweep_inputs(source, values: Mapping | None) -> tuple:
    """(loaded, ideal, values, marks, title, floors) of an analysis or of a loaded transfer function
    (floors only for an analysis at its own values)."""
    from symfilt.analysis.numeric import numeric_cutoff
    from symfilt.analysis.stage import Analysis

    if isinstance(source, Analysis):
        vals = dict(source.circuit.values()) if values is None else dict(values)
        marks = {"loaded": _marks_of(source.numeric.get("loaded", {})),
                 "ideal": _marks_of(source.numeric.get("ideal", {}))}
        floors = {key: float(source.numeric[key]["hf_gain_db"]) for key in ("loaded", "ideal")
                  if values is None and source.numeric.get(key, {}).get("hf_gain_db") is not None}
        return source.loaded.transfer, source.ideal.transfer, vals, marks, source.circuit.title, floors
    loaded, ideal = source, source.ideal()
    vals = dict(values or {})
    marks = {}
    for key, h in (("loaded", loaded), ("ideal", ideal)):
        w = numeric_cutoff(h, vals) if not missing_values(h, vals) else None
        marks[key] = {} if w is None else {"cutoff": w / (2 * math.pi)}
    return loaded, ideal, vals, marks, "", {}


def _point_count(points) -> int:
    try:
        n = int(points)
    except (TypeError, ValueError):
        raise UsageError("bode points", f"{points!r} is not a whole number",
                         f"give {MIN_POINTS} to {MAX_POINTS} points") from None
    if not MIN_POINTS <= n <= MAX_POINTS:
        raise UsageError("bode points", f"{n} points", f"give {MIN_POINTS} to {MAX_POINTS} points")
    return n


def _sweep_range(marks: dict, fmin, fmax) -> tuple[float, float]:
    """The sweep range in Hz: as given, else around the marks (kept below fmax / above fmin)."""
    lo, hi = default_range(marks)
    lo = float(fmin) if fmin is not None else (lo if fmax is None or lo < float(fmax) else float(fmax) / 1e4)
    hi = float(fmax) if fmax is not None else (hi if hi > lo else lo * 1e4)
    if not (math.isfinite(lo) and math.isfinite(hi) and 0 < lo < hi):
        raise UsageError("bode range", f"fmin {lo:g} Hz and fmax {hi:g} Hz",
                         "give 0 < fmin < fmax in Hz")
    return lo, hi


def csv_text(data: BodeData) -> str:
    """The sweep as CSV: frequency_hz, loaded_db, loaded_phase_deg, ideal_db, ideal_phase_deg.

    Numbers are written with 10 significant digits; an exact zero of transmission is ``-inf``;
    a view left out (:attr:`BodeData.left_out`) is ``nan`` in its columns.

    Parameters
    ----------
    data : BodeData
        The sweep to write.

    Returns
    -------
    str
        A header line and one line per frequency, each ending in a newline.

    Examples
    --------
    >>> from symfilt import catalogue, analyse
    >>> d = bode_data(analyse(catalogue.build("rc-lowpass"), sensitivity=False), fmin=100, fmax=1000, points=2)
    >>> print(csv_text(d), end="")
    frequency_hz,loaded_db,loaded_phase_deg,ideal_db,ideal_phase_deg
    100,-3.703774901,-2.741435466,-0.01829237877,-3.717175982
    1000,-4.590351328,-25.58678743,-1.529258214,-33.01103146
    """
    rows = ["frequency_hz,loaded_db,loaded_phase_deg,ideal_db,ideal_phase_deg"]
    fmt = lambda x: f"{float(x):.10g}"
    cols = [v if v is not None else [math.nan] * len(data.f)
            for v in (data.f, data.loaded_db, data.loaded_phase, data.ideal_db, data.ideal_phase)]
    for k in range(len(data.f)):
        rows.append(",".join(fmt(v[k]) for v in cols))
    return "\n".join(rows) + "\n"
