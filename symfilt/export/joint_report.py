"""Text and JSON of ``symfilt size`` with several targets or several varied parts.

One row per combination of series values, every target's loaded value and error in
each row, the best first (the one ``--write`` puts in the file). Numbers in JSON are
floats in SI base units (Hz for cutoff and w0), null where a quantity does not exist.
"""

from __future__ import annotations

import math

from symfilt.export.findings import describe_all
from symfilt.model.values import format_value
from symfilt.export.json import json_float

_PART_UNITS = {"resistor": "Ω", "capacitor": "F", "inductor": "H"}
_QUANTITY_UNITS = {"cutoff": "Hz", "w0": "Hz", "q": "", "dc-gain": ""}


def _fmt(x, unit: str = "") -> str:
    if x is None or not math.isfinite(float(x)):
        return "—"
    return format_value(x, unit, 4) if unit else f"{float(x):.4g}"


def _pct(x) -> str:
    return "—" if x is None else f"{x:+.3g} %"


def _target_words(r) -> str:
    words = []
    for quantity, value, alignment in r.targets:
        shown = _fmt(float(value), _QUANTITY_UNITS[quantity])
        words.append(f"{quantity} = {shown}" + (f" ({alignment})" if alignment else ""))
    return ", ".join(words)


def _group_words(r) -> str:
    out = []
    for g in r.groups:
        held = "".join(f", {n} = {r.ratio[n]}·{g[0]}" for n in g[1:])
        out.append(g[0] + (f" (with {held[2:]})" if held else ""))
    return ", ".join(out)


def joint_text(r) -> str:
    """A :class:`~symfilt.design.joint.JointResult` as a plain-text report.

    Parameters
    ----------
    r : JointResult
        The result of :func:`symfilt.design.joint.size_joint`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.joint import size_joint
    >>> r = size_joint(catalogue.build("sallen-key-lowpass", source="1k"), ["w0=2k", "q=butterworth"], ["R1", "R2"])
    >>> print(joint_text(r))  # doctest: +ELLIPSIS
    Size R1, R2 for a loaded w0 = 2 kHz, q = 0.7071 (butterworth)
      solution   R1 = 6.109 kΩ, R2 = 26.99 kΩ
      now        w0 = 2.561 kHz, q = 0.8258 with the present values
    <BLANKLINE>
      E24 values                  w0 loaded      error    q loaded      error      worst
      R1 = 6.2 kΩ, R2 = 27 kΩ     1.987 kHz   -0.646 %      0.7097   +0.364 %    0.646 %  chosen
      R1 = 27 kΩ, R2 = 6.8 kΩ     2.008 kHz   +0.392 %      0.6902    -2.39 %     2.39 %
    ...
    note: 2 solutions found; the series values around each were ranked together
    <BLANKLINE>
    """
    names = [n for g in r.groups for n in g]
    lines = [f"Size {_group_words(r)} for a loaded {_target_words(r)}"]
    sol = ", ".join(f"{n} = {_fmt(r.solution[n], _PART_UNITS.get(r.kinds.get(n), ''))}" for n in names)
    lines.append(f"  solution   {sol}")
    if r.present:
        now = ", ".join(f"{q} = {_fmt(r.present.get(q), _QUANTITY_UNITS[q])}" for q, _v, _a in r.targets)
        lines.append(f"  now        {now} with the present values")
    lines.append("")
    shown = [", ".join(f"{n} = {_fmt(c.values[n], _PART_UNITS.get(r.kinds.get(n), ''))}" for n in names)
             for c in r.candidates]
    width = max([len(r.series) + 7] + [len(v) for v in shown]) + 2
    head = f"  {r.series + ' values':<{width}}" + "".join(f"{q + ' loaded':>12}{'error':>11}" for q, _v, _a in r.targets)
    lines.append(head + f"{'worst':>11}")
    for i, (c, vals) in enumerate(zip(r.candidates, shown)):
        row = f"  {vals:<{width}}" + "".join(f"{_fmt(c.loaded[q], _QUANTITY_UNITS[q]):>12}{_pct(c.error_pct[q]):>11}"
                                             for q, _v, _a in r.targets)
        worst = "—" if c.worst_pct is None else f"{c.worst_pct:.3g} %"
        lines.append(row + f"{worst:>11}" + ("  chosen" if i == 0 else ""))
    for note in describe_all(r.notes):
        lines.append(f"note: {note}")
    return "\n".join(lines) + "\n"


def joint_dict(r) -> dict:
    """A :class:`~symfilt.design.joint.JointResult` as a JSON-ready dict.

    Parameters
    ----------
    r : JointResult
        The result of :func:`symfilt.design.joint.size_joint`.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.joint import size_joint
    >>> d = joint_dict(size_joint(catalogue.build("sallen-key-lowpass"), ["w0=1k", "q=bessel"], ["R1", "R2"]))
    >>> d["vary"], d["targets"][1]["alignment"], sorted(d["chosen"])
    ([['R1'], ['R2']], 'bessel', ['R1', 'R2'])
    """
    return {
        "vary": [list(g) for g in r.groups],
        "held_in_ratio": {n: str(v) for n, v in r.ratio.items()} if any(len(g) > 1 for g in r.groups) else None,
        "targets": [{"quantity": q, "value": float(v), "unit": _QUANTITY_UNITS[q] or None, "alignment": a}
                    for q, v, a in r.targets],
        "solution": {n: json_float(v) for n, v in r.solution.items()},
        "solutions": r.solutions,
        "series": r.series,
        "chosen": {n: json_float(v) for n, v in r.chosen.values.items()},
        "candidates": [{"values": {n: json_float(v) for n, v in c.values.items()},
                        "loaded": {q: json_float(v) for q, v in c.loaded.items()},
                        "ideal": {q: json_float(v) for q, v in c.ideal.items()},
                        "error_pct": {q: json_float(v) for q, v in c.error_pct.items()},
                        "worst_pct": json_float(c.worst_pct)} for c in r.candidates],
        "present": {q: json_float(v) for q, v in r.present.items()} or None,
        "notes": describe_all(r.notes),
    }


def size_result_text(r) -> str:
    """The text of ``symfilt size``: :func:`joint_text` for a joint sizing, else the one-target report.

    Parameters
    ----------
    r : JointResult or SizeResult
        What :func:`symfilt.design.joint.size_design` gave.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.joint import size_design
    >>> size_result_text(size_design(catalogue.build("rc-lowpass"), ["cutoff=2k"], ["R1"])).splitlines()[0]
    'Size R1 for a loaded cutoff of 2 kHz'
    """
    from symfilt.export.design_report import size_text

    return joint_text(r) if hasattr(r, "candidates") else size_text(r)


def size_result_dict(r) -> dict:
    """The JSON of ``symfilt size``: :func:`joint_dict` for a joint sizing, else the one-target dict.

    Parameters
    ----------
    r : JointResult or SizeResult
        What :func:`symfilt.design.joint.size_design` gave.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.design.joint import size_design
    >>> size_result_dict(size_design(catalogue.build("rc-lowpass"), ["cutoff=2k"], ["R1"]))["vary"]
    'R1'
    """
    from symfilt.export.design_report import size_dict

    return joint_dict(r) if hasattr(r, "candidates") else size_dict(r)


__all__ = ["joint_dict", "joint_text", "size_result_dict", "size_result_text"]
