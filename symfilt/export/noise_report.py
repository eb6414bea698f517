"""Text and JSON of ``symfilt noise``: densities, RMS in the band, contributors, the converter.

>>> from symfilt import catalogue
>>> from symfilt.analysis.noise import derive_noise
>>> from symfilt.analysis.noise_numbers import noise_numbers
>>> r = noise_numbers(derive_noise(catalogue.build("rc-lowpass")))
>>> noise_text(r).splitlines()[0]
'Noise of RC low-pass at 300 K, over all frequencies (exact)'
>>> sorted(noise_dict(r))[:3]
['adc', 'band_hz', 'findings']
"""

from __future__ import annotations

import math

from symfilt.export.findings import describe_all
from symfilt.export.text import one_line
from symfilt.model.values import format_value
from symfilt.export.json import json_float

#: Views in the order they are shown.
VIEWS = (("loaded", "loaded"), ("ideal", "ideal"))
_DENSITY = "V/√Hz"


def number_text(x, unit: str, digits: int = 4) -> str:
    """A noise number with an engineering prefix (``9.055 nV/√Hz``); ``—`` for None.

    Parameters
    ----------
    x : float or None
    unit : str
    digits : int

    Examples
    --------
    >>> number_text(1.6e-7, "V"), number_text(None, "V")
    ('160 nV', '—')
    """
    if x is None or not math.isfinite(float(x)):
        return "—"
    if x == 0:
        return f"0 {unit}"
    return format_value(x, unit, digits)


def _pct(x) -> str:
    return "—" if x is None else f"{100 * x:.1f} %"


def band_words(view) -> str:
    """How the RMS was found: the band and the method.

    Parameters
    ----------
    view : NoiseView

    Examples
    --------
    >>> from types import SimpleNamespace as NS
    >>> band_words(NS(band=(0.1, 20000.0), method="numeric"))
    'over 100 mHz to 20 kHz (numeric integration)'
    """
    if view.band is None:
        return "over all frequencies (exact)"
    lo = "0 Hz" if view.band[0] == 0 else number_text(view.band[0], "Hz")
    return f"over {lo} to {number_text(view.band[1], 'Hz')} (numeric integration)"


def form_text(form) -> str:
    """A grouped closed form as one line: ``kT·(...) + en_U1^2·(...)``.

    Parameters
    ----------
    form : tuple of (str, sympy.Expr) or None

    Examples
    --------
    >>> import sympy
    >>> form_text((("kT", 1 / sympy.Symbol("C1", positive=True)),))
    'kT·(1/C1)'
    """
    if form is None:
        return "—"
    text = " + ".join(f"{k.replace('**', '^')}·({one_line(v)})" for k, v in form)
    return text.replace("see --format json or latex", "see --format json")


def source_level_text(source, values) -> str:
    """A source's white density in words: ``4kT/R1 (1.355 pA/√Hz)``, ``en_U1 = 10 nV/√Hz``.

    Parameters
    ----------
    source : NoiseSource
    values : mapping
        Symbol -> value.

    Examples
    --------
    >>> import sympy
    >>> from symfilt.analysis.noise import NoiseSource
    >>> en = sympy.Symbol("en_U1", positive=True)
    >>> source_level_text(NoiseSource("U1 en", "voltage", "U1", en**2), {en: sympy.Rational(1, 10**8)})
    'en_U1 = 10 nV/√Hz'
    """
    level = source.level.xreplace(dict(values))
    unit = "V/√Hz" if source.kind == "voltage" else "A/√Hz"
    shown = number_text(math.sqrt(float(level)), unit) if level.is_number else "needs values"
    corner = "" if source.corner is None else f", 1/f corner {number_text(float(source.corner), 'Hz')}"
    if source.kind == "thermal":
        return f"√(4kT/{source.part}) = {shown}{corner}"
    name = "en" if source.kind == "voltage" else "in"
    return f"{name}_{source.part} = {shown}{corner}"


def _density_rows(r) -> list[str]:
    out = ["Output noise density            loaded           ideal      input-referred (loaded)"]
    lo, hi = r.loaded, r.ideal
    for i, f in enumerate(lo.frequencies):
        cells = [number_text(v.density[i], _DENSITY) if v.density else "needs values" for v in (lo, hi)]
        ref = lo.input_density[i] if lo.input_density else None
        out.append(f"  at {number_text(f, 'Hz'):<12} {cells[0]:>16} {cells[1]:>15} {number_text(ref, _DENSITY):>19}")
    return out


def _totals(r) -> list[str]:
    lo, hi = r.loaded, r.ideal
    rows = [("RMS " + band_words(lo), lo.rms, hi.rms, "V"),
            ("  input-referred (RMS / |K|)", lo.input_rms, hi.input_rms, "V")]
    if lo.band is not None:
        rows.append(("RMS over all frequencies (exact)", _sqrt(lo.whole_power), _sqrt(hi.whole_power), "V"))
    out = [f"{label:<44} {number_text(a, u):>12} {number_text(b, u):>12}" for label, a, b, u in rows]
    for name, v in VIEWS:
        view = getattr(r, name)
        if view.whole_closed is not None:
            out.append(f"  power over all frequencies, {name}: {form_text(view.whole_closed)} V²")
    return out


def _sqrt(x):
    return None if x is None else math.sqrt(x)


def _contributors(r, view_name: str) -> list[str]:
    view = getattr(r, view_name)
    out = [f"Contributors, {view_name} (largest first)      share         RMS   density at {number_text(view.frequencies[0], 'Hz')}"
           if view.frequencies else f"Contributors, {view_name}"]
    for c in view.contributions:
        dens = number_text(c.density[0], _DENSITY) if c.density else "—"
        out.append(f"  {c.name:<36} {_pct(c.share):>8} {number_text(c.rms, 'V'):>11} {dens:>14}")
    return out


def _adc_lines(r) -> list[str]:
    a = r.adc
    if a is None:
        return []
    out = [f"Converter {a.bits} bit, {number_text(a.full_scale, 'V')} full scale: LSB {number_text(a.lsb, 'V')}, "
           f"quantisation noise LSB/√12 = {number_text(a.quantisation_rms, 'V')} RMS"]
    for name, _ in VIEWS:
        ratio = a.ratio.get(name)
        if ratio is None:
            out.append(f"  {name}: no RMS noise (give a band)")
            continue
        verdict = "below one LSB" if a.below[name] else "ABOVE one LSB"
        q = getattr(r, name).rms / a.quantisation_rms
        out.append(f"  {name}: {ratio:.4g} LSB RMS ({verdict}), {q:.3g} × the quantisation noise")
    return out


def noise_text(r) -> str:
    """The text report of ``symfilt noise``.

    Parameters
    ----------
    r : NoiseReport

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.noise import derive_noise
    >>> from symfilt.analysis.noise_numbers import noise_numbers
    >>> "Contributors, loaded" in noise_text(noise_numbers(derive_noise(catalogue.build("rc-lowpass"))))
    True
    """
    n = r.analysis
    title = n.circuit.title or "the stage"
    out = [f"Noise of {title} at {number_text(float(n.spec.temperature), 'K')}, {band_words(r.loaded)}"]
    values = n.values()
    out.append("Sources (each uncorrelated; resistors 4kT/R as a current across the part):")
    out += [f"  {t.source.name:<10} {source_level_text(t.source, values)}" for t in n.loaded]
    for name, _ in VIEWS:
        out.append(f"Output density S(ω), ω = 2πf, {name}: {form_text(getattr(r, name).density_closed)} V²/Hz")
    if any(t.source.corner is not None for t in n.loaded):
        out.append("  (white parts; a source with a 1/f corner fc has its term times 1 + fc/f)")
    out += _density_rows(r) + _totals(r)
    for name, _ in VIEWS:
        out += _contributors(r, name)
    out += _adc_lines(r)
    out += [f"note: {x}" for x in describe_all(r.findings)]
    return "\n".join(out) + "\n"


def _form_dict(form):
    return None if form is None else {k: str(v) for k, v in form}


def _view_dict(view, terms) -> dict:
    return {
        "density_v_per_rthz": [json_float(x) for x in view.density],
        "input_density_v_per_rthz": [json_float(x) for x in view.input_density],
        "density_form": _form_dict(view.density_closed),
        "power_v2": json_float(view.power), "rms_v": json_float(view.rms), "method": view.method,
        "gain": json_float(view.gain), "input_rms_v": json_float(view.input_rms),
        "whole_power_v2": json_float(view.whole_power), "whole_form": _form_dict(view.whole_closed),
        "contributors": [{"name": c.name, "kind": c.kind, "part": c.part, "share": json_float(c.share),
                          "power_v2": json_float(c.power), "rms_v": json_float(c.rms),
                          "density_v_per_rthz": [json_float(x) for x in c.density]} for c in view.contributions],
        "transfers": {t.source.name: str(t.transfer.as_expr()) for t in terms},
    }


def noise_dict(r) -> dict:
    """The JSON of ``symfilt noise`` as a dict (see the README's JSON section).

    Parameters
    ----------
    r : NoiseReport

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.noise import derive_noise
    >>> from symfilt.analysis.noise_numbers import noise_numbers
    >>> d = noise_dict(noise_numbers(derive_noise(catalogue.build("rc-lowpass"))))
    >>> d["loaded"]["whole_form"]
    {'kT': 'R_L/(C1*(R1 + R_L + R_s))'}
    """
    n = r.analysis
    a = r.adc
    return {
        "title": n.circuit.title, "temperature_k": json_float(n.spec.temperature),
        "band_hz": None if r.loaded.band is None else [json_float(x) for x in r.loaded.band],
        "frequencies_hz": list(r.loaded.frequencies),
        "sources": [{"name": t.source.name, "kind": t.source.kind, "part": t.source.part,
                     "level": str(t.source.level), "unit": t.source.unit,
                     "corner_hz": json_float(t.source.corner)} for t in n.loaded],
        "loaded": _view_dict(r.loaded, n.loaded), "ideal": _view_dict(r.ideal, n.ideal),
        "adc": None if a is None else {"bits": a.bits, "full_scale_v": a.full_scale, "lsb_v": a.lsb,
                                       "quantisation_rms_v": a.quantisation_rms,
                                       "ratio": {k: json_float(v) for k, v in a.ratio.items()}, "below_lsb": a.below},
        "findings": describe_all(r.findings),
    }


def summary_rows(r) -> list[tuple[str, str, str]]:
    """(label, loaded, ideal) rows of the main noise numbers, for the design note.

    Parameters
    ----------
    r : NoiseReport

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.noise_numbers import noise_report
    >>> summary_rows(noise_report(catalogue.build("rc-lowpass"), at=(10,)))[0]
    ('output density at 10 Hz', '6.125 nV/√Hz', '8.824 nV/√Hz')
    """
    lo, hi = r.loaded, r.ideal
    rows = [(f"output density at {number_text(f, 'Hz')}", number_text(lo.density[i] if lo.density else None, _DENSITY),
             number_text(hi.density[i] if hi.density else None, _DENSITY)) for i, f in enumerate(lo.frequencies)]
    rows.append(("RMS " + band_words(lo), number_text(lo.rms, "V"), number_text(hi.rms, "V")))
    rows.append(("input-referred RMS (RMS / |K|)", number_text(lo.input_rms, "V"), number_text(hi.input_rms, "V")))
    if lo.band is not None:
        rows.append(("RMS over all frequencies (exact)", number_text(_sqrt(lo.whole_power), "V"),
                     number_text(_sqrt(hi.whole_power), "V")))
    if r.adc is not None:
        rows.append((f"RMS in LSB of {r.adc.bits} bit, {number_text(r.adc.full_scale, 'V')}",
                     *(("—" if r.adc.ratio[k] is None else f"{r.adc.ratio[k]:.4g}") for k in ("loaded", "ideal"))))
    return rows


def note_lines(r) -> list[str]:
    """The prose lines of the note's noise section: sources, closed forms, converter, findings.

    Parameters
    ----------
    r : NoiseReport

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.noise_numbers import noise_report
    >>> note_lines(noise_report(catalogue.build("rc-lowpass")))[0]
    'Temperature 300 K; every resistor and R_s has thermal noise 4kTR; capacitors and op-amp model resistances are noiseless.'
    """
    n = r.analysis
    values = n.values()
    out = [f"Temperature {number_text(float(n.spec.temperature), 'K')}; every resistor and R_s has thermal noise 4kTR; "
           "capacitors and op-amp model resistances are noiseless."]
    out += [f"{t.source.name}: {source_level_text(t.source, values)}." for t in n.loaded if t.source.kind != "thermal"]
    for name, _ in VIEWS:
        view = getattr(r, name)
        if view.whole_closed is not None:
            out.append(f"Noise power over all frequencies, {name}: {form_text(view.whole_closed)} V².")
    if r.adc is not None:
        out.append(f"Converter: LSB {number_text(r.adc.lsb, 'V')}, quantisation noise LSB/√12 = "
                   f"{number_text(r.adc.quantisation_rms, 'V')} RMS.")
    out += [x[:1].upper() + x[1:] + "." for x in describe_all(r.findings)]
    return out
