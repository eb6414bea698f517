"""The short report of ``symfilt demo``: the built-in scenario, passive against buffered."""

from __future__ import annotations

from symfilt.export.text import number_text, one_line
from symfilt.model.values import format_value


def render_demo(results) -> str:
    """The demo's short report: loaded versus ideal cutoff and DC gain for each stage.

    Parameters
    ----------
    results : sequence of Analysis

    Examples
    --------
    >>> from symfilt.model import demo
    >>> from symfilt.analysis.stage import analyse
    >>> print(render_demo([analyse(demo.passive_stage(), sensitivity=False)]).splitlines()[0])
    symfilt demo: a humidity probe (10 kΩ output resistance) into an ADC input (22 kΩ ‖ 100 pF)
    """
    c0 = results[0].circuit
    head = (f"symfilt demo: a humidity probe ({format_value(c0.source.value, 'Ω')} output resistance) into an ADC input "
            f"({format_value(c0.load_resistance.value, 'Ω')} ‖ {format_value(c0.load_capacitance.value, 'F')})")
    out = [head, "", f"  {'stage':<34}{'cutoff ideal':>14}{'cutoff loaded':>15}{'shift':>9}{'DC gain ideal':>15}{'loaded':>9}"]
    for a in results:
        lo, hi = a.numeric["loaded"], a.numeric["ideal"]
        shift = a.ratio("cutoff_hz")
        name = a.circuit.title.split(", ")[-1]
        out.append(f"  {name:<34}{number_text(hi.get('cutoff_hz'), 'Hz'):>14}{number_text(lo.get('cutoff_hz'), 'Hz'):>15}"
                   f"{_demo_shift(shift):>9}"
                   f"{hi.get('dc_gain', 0):>15.4f}{lo.get('dc_gain', 0):>9.4f}")
    out.append("")
    for a in results:
        name = a.circuit.title.split(", ")[-1]
        margins = [(x.opamp, x.loaded.numbers["phase_margin_deg"]) for x in a.loops
                   if x.loaded.numbers.get("phase_margin_deg") is not None]
        if margins:
            out.append(f"  {name}: phase margin loaded " + ", ".join(f"{n} {pm:.1f}°" for n, pm in margins))
        else:
            out.append(f"  {name}: ωc loaded = {one_line(a.loaded.cutoff.value)}")
    out += ["",
            "  The passive stage's cutoff and gain depend on the probe and the ADC; the buffered one holds",
            "  its response, within its op-amps' limits: finite gain and bandwidth, and an output resistance",
            "  that meets the ADC's capacitance inside the loop. Try: symfilt derive @rc-lowpass, symfilt catalogue;",
            "  from the repository, symfilt chain examples/geophone_chain/chain.toml (where a buffer pays) and",
            "  symfilt noise examples/demo_noise_passive.toml (the passive stage's noise against a 16-bit LSB)."]
    return "\n".join(out) + "\n"


def _demo_shift(shift: float | None) -> str:
    if shift is None:
        return ""
    return f"{(shift - 1) * 100:+.1f}%"
