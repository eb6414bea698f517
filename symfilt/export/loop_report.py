"""The loop-gain section of the derive report: text and JSON of :mod:`symfilt.analysis.loop`.

>>> from symfilt import catalogue
>>> from symfilt.analysis.stage import analyse
>>> print(loop_text(analyse(catalogue.build("sallen-key-lowpass"), sensitivity=False).loops).splitlines()[0])
Loop gain at each op-amp (loop broken at its output source: T(s) = A(s)·β(s), β = fraction of the output fed back to the − input)
"""

from __future__ import annotations

from symfilt.analysis.loop import MARGIN_WARNING_DEG
from symfilt.model.values import format_value

#: The numbers of a loop view, in the order shown: (key, label, unit).
LOOP_NUMBERS = (("dc_loop_gain", "DC loop gain", ""), ("crossover_hz", "crossover", "Hz"),
                ("phase_margin_deg", "phase margin", "°"), ("phase_crossover_hz", "phase crossover", "Hz"),
                ("gain_margin_db", "gain margin", "dB"))
_FEEDBACK = {"negative": "negative feedback", "positive": "POSITIVE feedback",
             "undecided": "feedback polarity not decided at low frequency (it depends on the values or the loop is open at DC)",
             "none": "no feedback: nothing of the output returns to the inputs (open loop)"}


def _number(key: str, v, unit: str) -> str:
    if v is None:
        return {"dc_loop_gain": "∞", "crossover_hz": "none", "phase_margin_deg": "—",
                "phase_crossover_hz": "none", "gain_margin_db": "∞"}[key]
    if unit == "Hz":
        return format_value(v, "Hz")
    if unit == "°":
        return f"{v:.1f}°"
    if unit == "dB":
        return f"{v:.1f} dB"
    return f"{v:.4g}"


def loop_text(loops) -> str:
    """The text section: per op-amp its polarity, β(s) and T(s), and margins loaded and ideal.

    Parameters
    ----------
    loops : tuple of symfilt.analysis.loop.Loop
        As :attr:`Analysis.loops <symfilt.analysis.stage.Analysis>` holds.

    Returns
    -------
    str
        Empty when there is no op-amp.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> "phase margin" in loop_text(analyse(catalogue.build("inverting-lowpass").with_opamp_model(
    ...     "single-pole", gain="100k", gbw="1M"), sensitivity=False).loops)
    True
    """
    from symfilt.export.text import one_line

    if not loops:
        return ""
    out = ["Loop gain at each op-amp (loop broken at its output source: T(s) = A(s)·β(s), "
           "β = fraction of the output fed back to the − input)"]
    for loop in loops:
        out.append(f"  {loop.opamp} ({loop.model} model): {_FEEDBACK[loop.feedback]}")
        for key, view in (("loaded", loop.loaded), ("ideal", loop.ideal)):
            out.append(f"    β(s), {key:<7}= {one_line(view.beta.as_expr())}")
        for key, view in (("loaded", loop.loaded), ("ideal", loop.ideal)):
            if view.loop_gain is not None:
                out.append(f"    T(s), {key:<7}= {one_line(view.loop_gain.as_expr())}")
        if loop.model == "ideal":
            out.append("    the ideal op-amp's loop gain is unbounded: no margins (give it model = \"single-pole\" "
                       "and gbw for them)")
            continue
        lo, hi = loop.loaded.numbers, loop.ideal.numbers
        if not lo and not hi:
            names = sorted(set(loop.loaded.missing) | set(loop.ideal.missing))
            out.append("    margins need values: give " + ", ".join(names) + " a value")
            continue
        out.append(f"    {'':<18}{'loaded':>14}{'ideal':>14}")
        for k, label, unit in LOOP_NUMBERS:
            cells = [_number(k, d.get(k), unit) if d else "needs values" for d in (lo, hi)]
            out.append(f"    {label:<18}{cells[0]:>14}{cells[1]:>14}")
        out += _margin_warnings(loop)
    return "\n".join(out) + "\n"


def _margin_warnings(loop) -> list[str]:
    out = []
    for key, view in (("loaded", loop.loaded), ("ideal", loop.ideal)):
        if view.margin_low:
            pm = view.numbers["phase_margin_deg"]
            state = "the loop is unstable" if pm <= 0 else "expect peaking and ringing in the step response"
            out.append(f"    WARNING ({key}): {loop.opamp}'s phase margin is {pm:.1f}°, below the "
                       f"{MARGIN_WARNING_DEG:.0f}° of common practice: {state}; isolate a capacitive load "
                       "with a series resistor, or lower the loop's bandwidth")
            break
    return out


def loop_dict(loops) -> dict:
    """The ``loops`` entry of the derive JSON: op-amp name -> polarity, formulas and margins.

    Parameters
    ----------
    loops : tuple of symfilt.analysis.loop.Loop

    Returns
    -------
    dict
        ``{name: {"model", "feedback", "loaded": {"beta", "loop_gain", "numbers",
        "margin_warning"}, "ideal": {...}}}``; formulas as sympy text, numbers as
        floats or None (no such point, or infinite DC loop gain).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.stage import analyse
    >>> d = loop_dict(analyse(catalogue.build("sallen-key-lowpass"), sensitivity=False).loops)
    >>> d["U1"]["feedback"], d["U1"]["loaded"]["loop_gain"]
    ('negative', None)
    """
    def view(v) -> dict:
        return {"beta": str(v.beta.as_expr()), "loop_gain": None if v.loop_gain is None else str(v.loop_gain.as_expr()),
                "numbers": dict(v.numbers), "margin_warning": v.margin_low}

    return {x.opamp: {"model": x.model, "feedback": x.feedback, "loaded": view(x.loaded), "ideal": view(x.ideal)}
            for x in loops}
