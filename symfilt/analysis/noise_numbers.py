"""Noise numbers: output density, RMS over a band, contributors, input-referred, the converter.

Each source i adds ``S_i(f) = level_i·(1 + fc_i/f)·|H_i(j2πf)|²`` to the output power
density (V²/Hz); the sources are uncorrelated, so the densities add.

* **All frequencies** (0 to ∞): exact, where the integral exists (white sources, every
  H_i strictly proper with its poles in the left half-plane). With
  ``B(s)B(−s) = C(s)A(−s) + C(−s)A(s)`` solved for C (degree n − 1, a linear system in its
  n coefficients) the two-sided integral (1/2π)∫|B(jω)/A(jω)|² dω is c_{n−1}/a_n, the sum
  of the residues of C/A (every pole in the left half-plane); the one-sided integral over
  f is half of that. For a first-order RC this gives kT/C. The same linear system solved on
  the symbols gives the closed form (orders 1 and 2).
* **A band** F1..F2 (or 0 to the Nyquist frequency): numeric, ``mpmath.quad`` of the
  density on a log-substituted variable, split at every decade (and linear from 0 to
  F2·1e-9 when F1 = 0). A 1/f source with F1 = 0 has no finite integral.

>>> from symfilt import catalogue
>>> from symfilt.analysis.noise import derive_noise
>>> r = noise_numbers(derive_noise(catalogue.build("rc-lowpass").without_fixtures()))
>>> round(r.loaded.whole_power / (1.380649e-23 * 300 / 22e-9), 12)
1.0
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import sympy

from symfilt.analysis.findings import Finding, finding
from symfilt.analysis.network import NetworkFunction
from symfilt.analysis.noise import NoiseAnalysis
from symfilt.analysis.numeric import magnitude_squared, passband_gain, trim
from symfilt.errors import UsageError

#: Default frequencies (Hz) of the density table.
DEFAULT_AT = (10, 1000, 10000)
#: Largest order whose whole-spectrum integral is given as a closed form in the parts.
CLOSED_FORM_ORDER = 2
#: The angular frequency in the density's closed form (a reserved name, never a part's).
W = sympy.Symbol("w", positive=True)


@dataclass(frozen=True)
class Contribution:
    """One source's part of the output noise.

    Parameters
    ----------
    name, kind, part : str
        As :class:`~symfilt.analysis.noise.NoiseSource`.
    density : tuple of float
        Its output density (V/√Hz) at each frequency of the report.
    power : float or None
        Its output power (V²) in the band (all frequencies when there is no band).
    share : float or None
        ``power`` over the total.

    Examples
    --------
    >>> Contribution("R1", "thermal", "R1", (1e-9,), 1e-12, 1.0).rms
    1e-06
    """

    name: str
    kind: str
    part: str
    density: tuple
    power: float | None
    share: float | None

    @property
    def rms(self) -> float | None:
        """√power (V).

        Examples
        --------
        >>> Contribution("R1", "thermal", "R1", (), 4.0, 1.0).rms
        2.0
        """
        return None if self.power is None else math.sqrt(self.power)


@dataclass(frozen=True)
class NoiseView:
    """The noise numbers of one view (loaded or ideal).

    Parameters
    ----------
    frequencies : tuple of float
        Hz.
    density, input_density : tuple of float or None
        Total output density (V/√Hz) and its input-referred value (divided by |H(j2πf)|).
    band : tuple of float or None
        The integration band (Hz); None for all frequencies.
    power, rms : float or None
        Output power (V²) and RMS (V) in the band; None when it is infinite.
    method : str or None
        ``exact`` or ``numeric``.
    whole_power : float or None
        Output power over all frequencies, exact; None where it diverges.
    density_closed : tuple of (str, sympy.Expr), or None
        The output density in ω (:func:`density_form`).
    whole_closed : tuple of (str, sympy.Expr), or None
        That power as a closed form: pairs (factor, expression), factor ``kT`` for the
        resistors (the sum is kT times the expression) or an op-amp's ``en_U1**2``, ``in_U1**2``.
    gain : float or None
        The signal's pass-band gain |K|, for the input-referred RMS.
    input_rms : float or None
        ``rms / gain``.
    contributions : tuple of Contribution
        Sorted by share, largest first.

    Examples
    --------
    >>> NoiseView((), (), (), None, None, None, None, None, None, None, None, None, ()).rms is None
    True
    """

    frequencies: tuple
    density: tuple
    input_density: tuple
    band: tuple | None
    power: float | None
    rms: float | None
    method: str | None
    whole_power: float | None
    density_closed: tuple | None
    whole_closed: tuple | None
    gain: float | None
    input_rms: float | None
    contributions: tuple


@dataclass(frozen=True)
class AdcCheck:
    """The output noise against a converter's LSB and quantisation noise.

    Parameters
    ----------
    bits : int
    full_scale, lsb, quantisation_rms : float
        V; quantisation noise LSB/√12 (uniform error over one LSB).
    ratio : dict
        View -> output RMS over one LSB (None without an RMS).
    below : dict
        View -> True when the output RMS is below one LSB.

    Examples
    --------
    >>> AdcCheck(16, 4.096, 6.25e-5, 1.8e-5, {}, {}).bits
    16
    """

    bits: int
    full_scale: float
    lsb: float
    quantisation_rms: float
    ratio: dict
    below: dict


@dataclass(frozen=True)
class NoiseReport:
    """Everything ``symfilt noise`` shows, as one value.

    Parameters
    ----------
    analysis : NoiseAnalysis
    loaded, ideal : NoiseView
    adc : AdcCheck or None
    findings : tuple of Finding

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.noise import derive_noise
    >>> noise_numbers(derive_noise(catalogue.build("rc-lowpass"))).loaded.method
    'exact'
    """

    analysis: NoiseAnalysis
    loaded: NoiseView
    ideal: NoiseView
    adc: AdcCheck | None
    findings: tuple


def power_coefficients(h: NetworkFunction, values) -> tuple[list, list] | None:
    """|N(jω)|² and |D(jω)|² as exact coefficients in u = ω² (lowest first); None without every value.

    Parameters
    ----------
    h : NetworkFunction
    values : mapping

    Examples
    --------
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> power_coefficients(NetworkFunction.from_expr(R / (1 + sympy.Symbol("s") * R * C)), {R: 2, C: 3})
    ([4], [1, 36])
    """
    cv = h.coefficient_values(values, exact=True)
    if cv is None:
        return None
    num, den = cv
    zero = sympy.Integer(0)
    return trim(magnitude_squared(num, zero)) or [zero], trim(magnitude_squared(den, zero))


def spectrum_integral(num: list, den: list):
    """∫₀^∞ |B(j2πf)/A(j2πf)|² df for B, A given by coefficients in s (lowest first).

    Exact (or symbolic) from the linear system of the module docstring; None when
    B is not of lower degree than A. The caller checks that A's roots are in the
    left half-plane.

    Parameters
    ----------
    num, den : list
        Coefficients b_0.. and a_0..a_n (numbers or sympy expressions).

    Examples
    --------
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> spectrum_integral([1], [1, R * C])
    1/(4*C*R)
    """
    a = list(den)
    while a and a[-1] == 0:
        a.pop()
    b = list(num)
    while b and b[-1] == 0:
        b.pop()
    n = len(a) - 1
    if n < 1 or len(b) > n:
        return None
    bb = [sum(b[i] * b[k - i] * (-1) ** (k - i) for i in range(len(b)) if 0 <= k - i < len(b)) for k in range(2 * n)]
    rows = [[2 * (-1) ** i * a[k - i] if 0 <= k - i <= n else 0 for i in range(n)] for k in range(0, 2 * n - 1, 2)]
    rhs = [bb[k] for k in range(0, 2 * n - 1, 2)]
    c = sympy.Matrix(rows).LUsolve(sympy.Matrix(rhs))
    return sympy.cancel(c[n - 1] / (2 * a[n]))


def _stable(den: list) -> bool:
    import numpy as np

    cs = [float(x) for x in trim([float(x) for x in den])]
    if len(cs) < 2:
        return False
    roots = np.roots(cs[::-1])
    return bool(np.all(roots.real < 0))


def _density_fn(term, values, spec_values):
    """f -> the term's output power density (V²/Hz) as a float function, or None without values."""
    pc = power_coefficients(term.transfer, values)
    level = term.source.level.xreplace(spec_values)
    if pc is None or not level.is_number:
        return None
    num, den = [float(x) for x in pc[0]], [float(x) for x in pc[1]]
    lv, fc = float(level), None if term.source.corner is None else float(term.source.corner)

    def density(f: float) -> float:
        u = (2 * math.pi * f) ** 2
        p = sum(c * u**k for k, c in enumerate(num)) / sum(c * u**k for k, c in enumerate(den))
        return lv * p * (1.0 + (fc / f if fc else 0.0))

    return density


def band_power(density, lo: float, hi: float) -> float:
    """∫ density df from lo to hi (Hz): mpmath quad in log f, split at every decade.

    Parameters
    ----------
    density : callable
        f -> V²/Hz.
    lo, hi : float
        The band; lo may be 0 (then [0, hi·1e-9] is integrated linearly).

    Examples
    --------
    >>> round(band_power(lambda f: 1.0, 0.0, 20000.0), 6)
    20000.0
    """
    import mpmath

    start = lo if lo > 0 else hi * 1e-9
    edges = [math.log(start)]
    decade = math.floor(math.log10(start)) + 1
    while 10.0**decade < hi:
        edges.append(decade * math.log(10.0))
        decade += 1
    edges.append(math.log(hi))
    total = float(mpmath.quad(lambda u: density(math.exp(float(u))) * math.exp(float(u)), edges))
    if lo == 0:
        total += float(mpmath.quad(lambda f: density(float(f)) if f > 0 else density(start * 1e-6), [0, start]))
    return total


def _whole(terms, values, spec_values, four_kt) -> tuple[list | None, tuple | None]:
    """Each term's exact power over all frequencies (None where it diverges), and the closed form."""
    powers = []
    for t in terms:
        cv = t.transfer.coefficient_values(values, exact=True)
        level = t.source.level.xreplace(spec_values)
        if t.source.corner is not None or cv is None or not level.is_number or not _stable(cv[1]):
            powers.append(None)
            continue
        i = spectrum_integral(*cv)
        powers.append(None if i is None else float(level * i))
    return powers, _closed_whole(terms, four_kt) if terms else None


def _closed_whole(terms, four_kt) -> tuple | None:
    """The whole-spectrum power in the parts: kT times the resistors' sum, en², in² times theirs.

    Only for white sources and denominators of order 1 or 2 whose coefficients are all
    positive (for those orders exactly the condition for poles in the left half-plane).
    """
    groups: dict[str, sympy.Expr] = {}
    for t in terms:
        num, den = t.transfer.coefficients()
        if t.source.corner is not None or len(den) - 1 > CLOSED_FORM_ORDER or not all(c.is_positive for c in den):
            return None
        i = spectrum_integral(num, den)
        if i is None:
            return None
        key, factor = _group(t.source, four_kt)
        groups[key] = groups.get(key, sympy.Integer(0)) + factor * i
    return tuple((k, sympy.factor(sympy.cancel(v))) for k, v in groups.items())


def _group(source, four_kt) -> tuple[str, sympy.Expr]:
    """(factor, multiplier): ``kT`` and 4/R for a resistor, the level itself (en², in²) and 1 otherwise."""
    if source.kind == "thermal":
        return "kT", sympy.cancel(source.level * 4 / four_kt)
    return str(source.level), sympy.Integer(1)


#: Largest transfer (terms of numerator and denominator) written into the density's closed form.
FORM_TERMS = 60


def density_form(terms, four_kt) -> tuple | None:
    """The output power density (V²/Hz) as a closed form in ω (:data:`W`) and the parts.

    Pairs (factor, expression) as in :attr:`NoiseView.whole_closed`; the 1/f factor
    (1 + fc/f) of a source with a corner is left out (white part only). None when a
    transfer is larger than :data:`FORM_TERMS` terms.

    Parameters
    ----------
    terms : sequence of NoiseTerm
    four_kt : sympy.Rational

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.noise import derive_noise
    >>> n = derive_noise(catalogue.build("rc-lowpass").without_fixtures())
    >>> density_form(n.loaded, n.spec.four_kt)
    (('kT', 4*R1/(C1**2*R1**2*w**2 + 1)),)
    """
    groups: dict[str, sympy.Expr] = {}
    for t in terms:
        if t.transfer.ratio.terms > FORM_TERMS:
            return None
        num, den = t.transfer.coefficients()
        zero = sympy.Integer(0)
        n2 = sum(c * W ** (2 * k) for k, c in enumerate(magnitude_squared(num, zero)))
        d2 = sum(c * W ** (2 * k) for k, c in enumerate(magnitude_squared(den, zero)))
        key, factor = _group(t.source, four_kt)
        groups[key] = groups.get(key, zero) + factor * n2 / d2
    return tuple((k, sympy.factor(sympy.cancel(v))) for k, v in groups.items())


def _band(spec) -> tuple | None:
    if spec.band is not None:
        return float(spec.band[0]), float(spec.band[1])
    if spec.sample_rate is not None:
        return 0.0, float(spec.sample_rate) / 2
    return None


def _signal_magnitude(h: NetworkFunction, values):
    """(|H(j2πf)| as a function, |K| the pass-band gain) of the signal, or (None, None)."""
    cv = h.coefficient_values(values)
    if cv is None:
        return None, None
    num, den = cv
    gain, _dc = passband_gain(num, den)

    def mag(f: float) -> float:
        s = 2j * math.pi * f
        return abs(sum(c * s**k for k, c in enumerate(num)) / sum(c * s**k for k, c in enumerate(den)))

    return mag, None if gain is None else abs(gain)


def noise_view(analysis: NoiseAnalysis, view: str, at=DEFAULT_AT) -> NoiseView:
    """The numbers of one view (``loaded`` or ``ideal``) at the analysis's values.

    Parameters
    ----------
    analysis : NoiseAnalysis
    view : {"loaded", "ideal"}
    at : sequence of float
        Frequencies (Hz) of the density table.

    Raises
    ------
    UsageError
        A 1/f source with a band from 0 Hz (no finite integral).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.noise import derive_noise
    >>> v = noise_view(derive_noise(catalogue.build("rc-lowpass")), "ideal", at=(0.001,))
    >>> round(v.density[0] * 1e9, 3)   # sqrt(4kT R1) of 4.7 kOhm at 300 K
    8.824
    """
    terms = getattr(analysis, view)
    values, spec = analysis.values(), analysis.spec
    band = _band(spec)
    if band is not None and band[0] == 0 and any(t.source.corner is not None for t in terms):
        raise UsageError("--band", "a 1/f noise source has no finite noise from 0 Hz",
                         "give a band with a lower edge above 0 Hz, e.g. --band 0.1,20k")
    fns = [_density_fn(t, values, values) for t in terms]
    have = all(fn is not None for fn in fns)
    freqs = tuple(float(f) for f in at)
    whole, closed = _whole(terms, values, values, spec.four_kt)
    if band is not None and have:
        powers, method = [band_power(fn, *band) for fn in fns], "numeric"
    else:
        powers, method = whole, "exact"
    total = sum(powers) if have and all(p is not None for p in powers) else None
    contributions = sorted((Contribution(t.source.name, t.source.kind, t.source.part,
                                         tuple(math.sqrt(fn(f)) for f in freqs) if fn else (),
                                         p, None if total in (None, 0) or p is None else p / total)
                            for t, fn, p in zip(terms, fns, powers)), key=lambda c: -(c.power or 0.0))
    density = tuple(math.sqrt(sum(fn(f) for fn in fns)) for f in freqs) if have else ()
    mag, gain = _signal_magnitude(analysis.signal_loaded if view == "loaded" else analysis.signal_ideal, values)
    input_density = tuple(d / mag(f) if mag and mag(f) > 0 else None for d, f in zip(density, freqs))
    rms = None if total is None else math.sqrt(total)
    whole_total = sum(whole) if have and all(w is not None for w in whole) else None
    return NoiseView(frequencies=freqs, density=density, input_density=input_density, band=band, power=total,
                     rms=rms, method=method if total is not None else None, whole_power=whole_total,
                     density_closed=density_form(terms, spec.four_kt),
                     whole_closed=closed, gain=gain, input_rms=None if rms is None or not gain else rms / gain,
                     contributions=tuple(contributions))


def adc_check(adc, views: dict) -> AdcCheck:
    """Compare each view's output RMS noise with one LSB of ``adc``.

    Parameters
    ----------
    adc : Adc
    views : dict
        View name -> NoiseView.

    Examples
    --------
    >>> from symfilt.model.noise import parse_adc
    >>> a = adc_check(parse_adc("16bit,4.096V"), {})
    >>> a.lsb, round(a.quantisation_rms * 1e6, 3)
    (6.25e-05, 18.042)
    """
    lsb = float(adc.lsb)
    ratio = {k: None if v.rms is None else v.rms / lsb for k, v in views.items()}
    return AdcCheck(bits=adc.bits, full_scale=float(adc.full_scale), lsb=lsb, quantisation_rms=lsb / math.sqrt(12),
                    ratio=ratio, below={k: None if r is None else r < 1 for k, r in ratio.items()})


def noise_numbers(analysis: NoiseAnalysis, at=DEFAULT_AT) -> NoiseReport:
    """The numbers of both views, the converter check and the findings.

    Parameters
    ----------
    analysis : NoiseAnalysis
    at : sequence of float
        Frequencies (Hz) of the density table.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.noise import derive_noise
    >>> r = noise_numbers(derive_noise(catalogue.build("rc-lowpass")))
    >>> [c.name for c in r.loaded.contributions]
    ['R1', 'R_s']
    """
    views = {v: noise_view(analysis, v, at) for v in ("loaded", "ideal")}
    spec = analysis.spec
    found: list[Finding] = []
    quiet = [p.name for p in analysis.circuit.parts if p.kind == "opamp"
             and spec.opamp(p.name).en is None and spec.opamp(p.name).in_ is None]
    if quiet:
        found.append(finding("noise-opamp-noiseless", names=tuple(quiet)))
    if _band(spec) is None and any(v.power is None for v in views.values()):
        found.append(finding("noise-no-total"))
    adc = None if spec.adc is None else adc_check(spec.adc, views)
    return NoiseReport(analysis=analysis, loaded=views["loaded"], ideal=views["ideal"], adc=adc, findings=tuple(found))


def noise_report(circuit, spec=None, *, at=DEFAULT_AT, max_terms: int | None = None) -> NoiseReport:
    """Everything ``symfilt noise`` shows: :func:`~symfilt.analysis.noise.derive_noise`, then :func:`noise_numbers`.

    Parameters
    ----------
    circuit : Circuit
    spec : NoiseSpec, optional
    at : sequence of float
        Frequencies (Hz) of the density table.
    max_terms : int, optional
        Size budget of each elimination.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> noise_report(catalogue.build("rc-lowpass"), at=(100,)).loaded.frequencies
    (100.0,)
    """
    from symfilt.analysis.noise import derive_noise
    from symfilt.engine.elimination import DEFAULT_MAX_TERMS
    from symfilt.model.circuit import Circuit
    from symfilt.model.safe import require, require_budget

    require(circuit, Circuit, "noise_report circuit", "build one with Circuit.build or load_circuit")
    require_budget(max_terms, "noise_report")
    n = derive_noise(circuit, spec, max_terms=max_terms or DEFAULT_MAX_TERMS)
    return noise_numbers(n, at)
