"""Tolerance spread: Monte Carlo, worst case from the sensitivities, and exact corners.

The loaded stage's cutoff, w0, Q and DC gain are vectorised numpy functions of the
part values, evaluated straight from the flint coefficient polynomials of H(s)
(:mod:`symfilt.analysis.vectorised`: the polynomials in floats by
:func:`~symfilt.analysis.numeric.poly_values`, then the standard forms' formulas), so a
run of 20 000 samples is a few array evaluations per quantity and no closed form is
built or compiled. A cutoff without a closed form (order three and up) is found per
sample as the lowest positive root of |H(jw)|^2 = |H(0)|^2 / 2, a polynomial in w^2
whose roots come from batched companion matrices. The linear worst case uses the exact
sensitivities at the values.

Distributions: ``uniform`` spreads each part evenly over value x (1 +- tol);
``normal`` takes the tolerance as three standard deviations (sigma = tol / 3),
common practice for a tolerance that holds for 99.7 % of parts.

Worst case, two ways:

* linear, from the normalized sensitivities S: nominal x (1 +- sum |S_i| tol_i);
* exact corners: every combination of the toleranced parts at their limits
  (2^n points, n <= 12). For a quantity monotonic in each part the corners bound
  every uniform sample.

numpy is imported inside the functions (it is an optional dependency of symfilt).

Examples
--------
>>> from symfilt import catalogue
>>> r = spread(catalogue.build("rc-lowpass"), {"R": 0.01, "C": 0.05}, runs=2000, seed=1)
>>> q = r.quantities["cutoff_hz"]
>>> round(q.nominal, 1), q.worst_low < q.p1 < q.p99 < q.worst_high
(2088.4, True)
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Callable, Mapping, Sequence

from symfilt.analysis.findings import finding
from symfilt.analysis.numeric import log_difference
from symfilt.analysis.stage import loaded_transfer
from symfilt.analysis.vectorised import coefficient_form, exact_sensitivities, quantity_functions
from symfilt.model.circuit import Circuit, S
from symfilt.engine.elimination import DEFAULT_MAX_TERMS
from symfilt.errors import UsageError

DISTRIBUTIONS = ("uniform", "normal")
#: Quantities of a spread run, in report order.
QUANTITY_KEYS = ("cutoff_hz", "f0_hz", "q", "dc_gain")
#: Most toleranced parts for which every corner is evaluated.
MAX_CORNER_PARTS = 12
MAX_RUNS = 2_000_000
_CHUNK = 5000
_CLASSES = {"R": "resistor", "C": "capacitor", "L": "inductor"}
_SENS_KEY = {"cutoff_hz": "cutoff", "f0_hz": "w0", "q": "q", "dc_gain": "dc_gain"}


def parse_tolerance(text: str) -> tuple[str, float]:
    """Read ``NAME=TOL``: a part name or a class letter (R, C, L) and a tolerance (``1%`` or ``0.01``).

    Parameters
    ----------
    text : str
        The tolerance as written on the command line.

    Returns
    -------
    (name, tolerance) : (str, float)
        The tolerance as a fraction, 0 <= tolerance < 1.

    Examples
    --------
    >>> parse_tolerance("R=1%"), parse_tolerance("R3 = 0.1%"), parse_tolerance("C=0.05")
    (('R', 0.01), ('R3', 0.001), ('C', 0.05))
    """
    name, sep, value = text.partition("=")
    name, value = name.strip(), value.strip()
    if not sep or not name or not value:
        raise UsageError("--tol", f"{text!r} is not a tolerance", "write NAME=TOL, e.g. R=1% or C2=5%")
    try:
        tol = float(value[:-1]) / 100 if value.endswith("%") else float(value)
    except ValueError:
        raise UsageError("--tol", f"{value!r} is not a tolerance", "write it as 1% or 0.01") from None
    if not (0 <= tol < 1) or not math.isfinite(tol):
        raise UsageError("--tol", f"{value!r} is outside 0 .. 100%", "give a tolerance such as 1%")
    return name, tol


def expand_tolerances(circuit: Circuit, tolerances: Mapping[str, float]) -> dict[str, float]:
    """Tolerance per symbol: class letters (R, C, L) apply to every part of that kind,
    a part's own name overrides its class. Fixtures (R_s, R_L, C_L) and op-amp
    parameters (A_U1, GBW_U1) are toleranced only by name.

    Parameters
    ----------
    circuit : Circuit
        The circuit whose symbols are toleranced.
    tolerances : mapping
        Part, symbol or class name -> tolerance (fraction).

    Returns
    -------
    dict
        Symbol name -> tolerance, for the symbols with a non-zero tolerance.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> expand_tolerances(catalogue.build("mfb-lowpass"), {"R": 0.01, "R3": 0.001, "C": 0.05})
    {'R1': 0.01, 'C1': 0.05, 'R2': 0.01, 'R3': 0.001, 'C2': 0.05}
    """
    table = circuit.symbols()
    out: dict[str, float] = {}
    for name, tol in tolerances.items():
        if name not in table and name not in _CLASSES:
            raise UsageError(f"--tol {name}", "no part, symbol or class of that name",
                             "use R, C, L or a name among " + ", ".join(n for n in table if n != "s"))
    for name, info in table.items():
        if name == "s" or info.get("value") is None and name not in tolerances:
            continue
        kind = info.get("kind")
        if name in tolerances:
            tol = tolerances[name]
        elif info["role"] == "part" and any(kind == k and c in tolerances for c, k in _CLASSES.items()):
            tol = next(tolerances[c] for c, k in _CLASSES.items() if kind == k and c in tolerances)
        else:
            continue
        if info.get("value") is None:
            raise UsageError(f"--tol {name}", "has no value to spread", f"give {name} a value")
        if tol > 0:
            out[name] = float(tol)
    return out


@dataclass(frozen=True)
class QuantitySpread:
    """Statistics of one quantity over a spread run.

    Parameters
    ----------
    nominal, mean, std, p1, p50, p99 : float
        std with ddof = 1; percentiles of the Monte Carlo samples.
    worst_low, worst_high : float
        From the corners when they were enumerated, else the linear estimate.
    worst_method : str
        ``corners`` or ``linear``.
    linear_low, linear_high : float or None
        nominal x (1 -+ sum |S_i| tol_i).
    corner_low, corner_high : float or None
        Extremes over every corner (None beyond :data:`MAX_CORNER_PARTS` parts).
    std_linear : float or None
        |nominal| sqrt(sum (S_i sigma_i)^2): the first-order estimate of std.
    undefined : int
        Samples where the quantity did not exist (no cutoff found).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> q = spread(catalogue.build("rc-lowpass"), {"C": 0.05}, runs=200, seed=1).quantities["dc_gain"]
    >>> q.worst_method, round(q.nominal, 4), q.std_linear
    ('corners', 0.6536, 0.0)
    """

    nominal: float
    mean: float
    std: float
    p1: float
    p50: float
    p99: float
    worst_low: float
    worst_high: float
    worst_method: str
    linear_low: float | None
    linear_high: float | None
    corner_low: float | None
    corner_high: float | None
    std_linear: float | None
    undefined: int = 0


@dataclass(frozen=True)
class SpreadResult:
    """The outcome of :func:`spread`.

    Parameters
    ----------
    runs, seed : int
        Number of Monte Carlo samples and the random seed.
    distribution : str
        One of :data:`DISTRIBUTIONS`.
    tolerances : dict
        Symbol name -> tolerance (fraction) actually applied.
    quantities : dict
        Key of :data:`QUANTITY_KEYS` -> QuantitySpread (only those the circuit has).
    sensitivities : dict
        Key -> symbol name -> S used for the linear estimates.
    samples : dict
        Key -> numpy array of the Monte Carlo values (for histograms).
    notes : tuple of Finding
        What limited the run, worded by :mod:`symfilt.export.findings`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> r = spread(catalogue.build("rc-lowpass"), {"R": 0.01, "C": 0.05}, runs=200, seed=1)
    >>> r.tolerances, sorted(r.quantities), len(r.samples["cutoff_hz"])
    ({'R1': 0.01, 'C1': 0.05}, ['cutoff_hz', 'dc_gain', 'f0_hz'], 200)
    """

    runs: int
    seed: int
    distribution: str
    tolerances: dict
    quantities: dict
    sensitivities: dict = field(default_factory=dict)
    samples: dict = field(default_factory=dict, compare=False, repr=False)
    notes: tuple = ()


@dataclass(frozen=True)
class VectorModel:
    """Vectorised numpy functions of the loaded stage's quantities.

    Parameters
    ----------
    names : tuple of str
        Argument names (every symbol but s), in call order.
    functions : dict
        Quantity key -> callable taking one array (or number) per name.
    sensitivities : dict
        Key -> symbol name -> closed-form sensitivity as a number (where the analysis has one).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> m = vector_model(catalogue.build("rc-lowpass"))
    >>> m.names, sorted(m.functions)
    (('C1', 'R1', 'R_L', 'R_s'), ['cutoff_hz', 'dc_gain', 'f0_hz'])
    """

    names: tuple
    functions: dict
    sensitivities: dict

    def evaluate(self, key: str, values: Mapping[str, object]):
        """One quantity with an array or a number per symbol name.

        Parameters
        ----------
        key : str
            A key of :attr:`functions`.
        values : mapping
            Symbol name -> number or numpy array, for every name of :attr:`names`.

        Returns
        -------
        float or numpy.ndarray

        Examples
        --------
        >>> m = VectorModel(("x",), {"q": lambda x: 2 * x}, {})
        >>> m.evaluate("q", {"x": 3.0})
        6.0
        """
        return self.functions[key](*[values[n] for n in self.names])


def vector_model(circuit: Circuit, *, max_terms: int = DEFAULT_MAX_TERMS) -> VectorModel:
    """Vectorised numpy functions of the loaded cutoff (Hz), f0 (Hz), Q and DC gain of a circuit.

    Straight from the coefficient polynomials of the loaded H(s)
    (:mod:`symfilt.analysis.vectorised`): no closed form is built or compiled, and the
    sensitivities are the exact ones at the circuit's values.

    Parameters
    ----------
    circuit : Circuit
        The circuit; only its loaded transfer function is derived.
    max_terms : int
        Size budget of the elimination.

    Returns
    -------
    VectorModel

    Examples
    --------
    >>> from symfilt import catalogue
    >>> m = vector_model(catalogue.build("rc-lowpass"))
    >>> vals = catalogue.build("rc-lowpass").values()
    >>> round(float(m.evaluate("cutoff_hz", {str(k): float(v) for k, v in vals.items()})), 2)
    2088.4
    """
    h = loaded_transfer(circuit, max_terms=max_terms)
    form = coefficient_form(h)
    syms = sorted((x for x in h.free_symbols() if x != S), key=str)
    names = tuple(str(x) for x in syms)
    functions = quantity_functions(form, names)
    values = circuit.values()
    sens = exact_sensitivities(form, values) if not (set(syms) - set(values)) else {}
    table = {key: sens.get(_SENS_KEY[key]) for key in functions}
    return VectorModel(names, functions, table)


def percentiles(x, qs: Sequence[float]):
    """``numpy.percentile(x, qs)`` (its default linear method, the same arithmetic) of a 1-D array
    without NaNs, on a sorted copy: numpy's own partitions through ``numpy.unique``, whose first call
    imports ``numpy.ma`` (a tenth of a spread run's own time).

    Parameters
    ----------
    x : numpy.ndarray
        Finite values.
    qs : sequence of float
        Percentages, 0 to 100.

    Returns
    -------
    numpy.ndarray

    Examples
    --------
    >>> import numpy as np
    >>> percentiles(np.array([3.0, 1.0, 2.0, 4.0]), (0, 50, 99)).tolist()
    [1.0, 2.5, 3.9699999999999998]
    """
    import numpy as np

    a = np.sort(np.asarray(x, dtype=float))
    n = a.shape[0]
    virtual = (n - 1) * np.true_divide(np.asanyarray(qs), 100)
    prev = np.floor(virtual)
    nxt = prev + 1
    prev[virtual >= n - 1] = nxt[virtual >= n - 1] = -1
    prev[virtual < 0] = nxt[virtual < 0] = 0
    prev, nxt = prev.astype(np.intp), nxt.astype(np.intp)
    gamma = np.asanyarray(virtual - prev, dtype=virtual.dtype)
    lo, hi = a[prev], a[nxt]
    diff = hi - lo
    out = np.add(lo, diff * gamma)
    np.subtract(hi, diff * (1 - gamma), out=out, where=gamma >= 0.5, casting="unsafe", dtype=type(out.dtype))
    return out


def _stats(np, x):
    ok = x[np.isfinite(x)]
    if ok.size == 0:
        return None
    p1, p50, p99 = percentiles(ok, (1, 50, 99))
    return float(ok.mean()), float(ok.std(ddof=1)) if ok.size > 1 else 0.0, float(p1), float(p50), float(p99), int(x.size - ok.size)


def spread(circuit: Circuit, tolerances: Mapping[str, float], *, distribution: str = "uniform", runs: int = 20000,
           seed: int | None = None, progress: Callable[[int, int], None] | None = None,
           max_terms: int = DEFAULT_MAX_TERMS) -> SpreadResult:
    """Monte Carlo spread of the loaded cutoff, f0, Q and DC gain from part tolerances.

    Parameters
    ----------
    circuit : Circuit
        Every symbol needs a value. Tied parts are spread as parts of their own, each
        from the value its tie gives (:func:`symfilt.model.ties.untied`).
    tolerances : mapping
        Name -> tolerance as a fraction; names are parts, fixtures, op-amp
        parameters, or the classes ``R``, ``C``, ``L`` (a part's name overrides its class).
    distribution : {"uniform", "normal"}
        ``normal`` takes each tolerance as 3 sigma.
    runs : int
        Monte Carlo samples (100 ... 2 000 000).
    seed : int, optional
        Random seed; one is drawn and reported when not given.
    progress : callable, optional
        Called as ``progress(done, runs)`` after each chunk of samples.
    max_terms : int
        Size budget of the elimination.

    Returns
    -------
    SpreadResult

    Examples
    --------
    >>> from symfilt import catalogue
    >>> r = spread(catalogue.build("sallen-key-lowpass"), {"R": 0.01, "C": 0.05}, runs=1000, seed=7)
    >>> sorted(r.quantities), r.quantities["q"].worst_method
    (['cutoff_hz', 'dc_gain', 'f0_hz', 'q'], 'corners')
    """
    import numpy as np

    from symfilt.model.ties import untied

    _check_run(distribution, runs)
    circuit = untied(circuit)  # a tied part is still a part of its own, with its own tolerance
    tols = expand_tolerances(circuit, tolerances)
    if not tols:
        raise UsageError("--tol", "no part has a tolerance", "give at least one, e.g. --tol R=1%")
    model = vector_model(circuit, max_terms=max_terms)
    values = {str(k): float(v) for k, v in circuit.values().items()}
    missing = [n for n in model.names if n not in values]
    if missing:
        raise UsageError("spread", "no value for " + ", ".join(missing), "give every part a value")
    if not model.functions:
        raise UsageError("spread", "the circuit has no cutoff, w0, Q or DC gain to spread", "check the ports")
    if seed is None:
        seed = int(np.random.SeedSequence().generate_state(1)[0])
    rng = np.random.default_rng(seed)
    varied = [n for n in model.names if n in tols]
    notes = []
    unused = sorted(set(tols) - set(varied))
    if unused:
        notes.append(finding("tolerance-no-effect", names=tuple(unused)))
    sigma = {n: tols[n] / (math.sqrt(3) if distribution == "uniform" else 3) for n in varied}
    samples = _draw(model, values, {n: tols[n] for n in varied}, distribution, runs, rng, progress)
    corners = _corners(values, varied, tols, notes)
    if distribution == "normal":
        notes.append(finding("normal-corners"))
    sens_used = {}
    quantities = {}
    for k in model.functions:
        got = _quantity_spread(model, k, values, samples[k], (tols, sigma, varied), corners)
        if got is None:
            notes.append(finding("quantity-undefined", quantity=k))
            continue
        quantities[k], sens_used[k] = got
    ordered = {k: quantities[k] for k in QUANTITY_KEYS if k in quantities}
    return SpreadResult(runs, seed, distribution, tols, ordered, sens_used, samples, tuple(notes))


def _check_run(distribution: str, runs) -> None:
    if distribution not in DISTRIBUTIONS:
        raise UsageError("--distribution", f"unknown distribution {distribution!r}", "use uniform or normal")
    if not isinstance(runs, int) or not 100 <= runs <= MAX_RUNS:
        raise UsageError("--runs", f"{runs!r} runs", f"give between 100 and {MAX_RUNS}")


def _draw(model: VectorModel, values: dict, tols: dict, distribution: str, runs: int, rng, progress) -> dict:
    """Monte Carlo samples of every quantity, in chunks, the toleranced parts drawn in order."""
    import numpy as np

    samples = {k: np.empty(runs) for k in model.functions}
    done = 0
    while done < runs:
        m = min(_CHUNK, runs - done)
        args = dict(values)
        for n, tol in tols.items():
            dev = rng.uniform(-tol, tol, m) if distribution == "uniform" else rng.normal(0.0, tol / 3, m)
            args[n] = values[n] * (1 + dev)
        for k in model.functions:
            samples[k][done : done + m] = np.broadcast_to(model.evaluate(k, args), (m,))
        done += m
        if progress:
            progress(done, runs)
    return samples


def _corners(values: dict, varied: list, tols: dict, notes: list) -> dict | None:
    """Arguments for every corner of the toleranced parts (None, with a note, beyond MAX_CORNER_PARTS)."""
    import numpy as np

    if len(varied) > MAX_CORNER_PARTS:
        notes.append(finding("too-many-corners", limit=MAX_CORNER_PARTS))
        return None
    signs = ((np.arange(2 ** len(varied))[:, None] >> np.arange(len(varied))) & 1) * 2 - 1
    corners = dict(values)
    for i, n in enumerate(varied):
        corners[n] = values[n] * (1 + signs[:, i] * tols[n])
    return corners


def _quantity_spread(model: VectorModel, k: str, values: dict, x, spec: tuple, corners: dict | None):
    """(QuantitySpread, sensitivities used) of one quantity, or None when it is not defined."""
    import numpy as np

    tols, sigma, varied = spec
    nominal = float(model.evaluate(k, values))
    st = _stats(np, x)
    if st is None or not math.isfinite(nominal):
        return None
    mean, std, p1, p50, p99, undefined = st
    table = model.sensitivities.get(k)
    if not table or any(table.get(n) is None for n in varied):
        table = _difference_sensitivities(model, k, values, varied)
    s_row = {n: float(table.get(n, 0.0) or 0.0) for n in varied}
    spread_lin = sum(abs(s_row[n]) * tols[n] for n in varied)
    lin = sorted((nominal * (1 - spread_lin), nominal * (1 + spread_lin)))
    std_lin = abs(nominal) * math.sqrt(sum((s_row[n] * sigma[n]) ** 2 for n in varied))
    c_lo = c_hi = None
    if corners is not None:
        cv = np.asarray(model.evaluate(k, corners), dtype=float)
        cv = cv[np.isfinite(cv)]
        if cv.size:
            c_lo, c_hi = float(cv.min()), float(cv.max())
    lo, hi, method = (c_lo, c_hi, "corners") if c_lo is not None else (lin[0], lin[1], "linear")
    return QuantitySpread(nominal, mean, std, p1, p50, p99, lo, hi, method, lin[0], lin[1],
                          c_lo, c_hi, std_lin, undefined), s_row


def _difference_sensitivities(model: VectorModel, key: str, values: Mapping[str, float], names: Sequence[str],
                              step: float = 1e-6) -> dict:
    """S = d ln|y| / d ln x by central differences, all parts in one array evaluation."""
    import numpy as np

    args = {n: np.full(2 * len(names), v) for n, v in values.items()}
    for i, n in enumerate(names):
        args[n][2 * i] *= 1 + step
        args[n][2 * i + 1] *= 1 - step
    y = np.asarray(model.evaluate(key, args), dtype=float)
    out = {}
    for i, n in enumerate(names):
        hi, lo = y[2 * i], y[2 * i + 1]
        out[n] = log_difference(hi, lo, step)
    return out


__all__ = ["DISTRIBUTIONS", "MAX_CORNER_PARTS", "QUANTITY_KEYS", "QuantitySpread", "SpreadResult", "VectorModel",
           "expand_tolerances", "parse_tolerance", "spread", "vector_model"]
