"""The Bode plot of a note, written as SVG directly: no matplotlib on the note's path.

A note needs one picture of a known shape: magnitude over phase on a log frequency axis,
loaded and ideal overlaid, marks and floors. Drawing it with matplotlib's figure machinery
cost more than the whole derivation (its import alone is about a bare ``import sympy``);
this module writes the same picture as plain SVG elements (polylines, lines, text) in a few
milliseconds. ``symfilt plot`` keeps matplotlib for its SVG and PNG files.
"""

from __future__ import annotations

import math
from html import escape

from symfilt.export.plot import COLOURS, magnitude_limits
from symfilt.model.values import format_value

#: Canvas size in px, and the plot area's margins (left, right, top, bottom).
WIDTH, HEIGHT = 760, 560
_LEFT, _RIGHT, _TOP, _GAP = 64, 24, 36, 18
#: Heights of the magnitude and phase panels.
_MAG_H, _PH_H = 290, 170
#: Colours (the plot module's palette) and SVG dash patterns of the views.
_STYLE = {"loaded": (COLOURS["loaded"], None), "ideal": (COLOURS["ideal"], "7 4")}


def _nice_step(span: float, target: int = 6) -> float:
    raw = span / max(1, target)
    mag = 10 ** math.floor(math.log10(raw)) if raw > 0 else 1.0
    for m in (1, 2, 2.5, 5, 10):
        if m * mag >= raw:
            return m * mag
    return 10 * mag


def _finite(values) -> list[float]:
    return [float(v) for v in values if math.isfinite(float(v))]


class _Panel:
    """One panel: maps (log f, y) to pixels and draws its frame, grid and ticks."""

    def __init__(self, top: float, height: float, f0: float, f1: float, y0: float, y1: float):
        self.top, self.height = top, height
        self.l0, self.l1 = math.log10(f0), math.log10(f1)
        self.y0, self.y1 = y0, y1
        self.width = WIDTH - _LEFT - _RIGHT

    def x(self, f: float) -> float:
        return _LEFT + (math.log10(f) - self.l0) / (self.l1 - self.l0) * self.width

    def y(self, v: float) -> float:
        v = min(max(v, self.y0), self.y1)
        return self.top + (self.y1 - v) / (self.y1 - self.y0) * self.height

    def frame(self, label: str, x_labels: bool) -> list[str]:
        out = []
        step = _nice_step(self.y1 - self.y0)
        v = math.ceil(self.y0 / step) * step
        while v <= self.y1 + 1e-9:
            yy = self.y(v)
            out.append(f'<line x1="{_LEFT}" y1="{yy:.1f}" x2="{_LEFT + self.width}" y2="{yy:.1f}" class="grid"/>')
            out.append(f'<text x="{_LEFT - 6}" y="{yy + 4:.1f}" text-anchor="end">{v:g}</text>')
            v += step
        for d in range(math.ceil(self.l0 - 1e-9), math.floor(self.l1 + 1e-9) + 1):
            xx = self.x(10.0**d)
            out.append(f'<line x1="{xx:.1f}" y1="{self.top}" x2="{xx:.1f}" y2="{self.top + self.height}" class="grid"/>')
            if x_labels:
                out.append(f'<text x="{xx:.1f}" y="{self.top + self.height + 16}" text-anchor="middle">'
                           f'{escape(format_value(10.0**d, "Hz"))}</text>')
        out.append(f'<rect x="{_LEFT}" y="{self.top}" width="{self.width}" height="{self.height}" class="frame"/>')
        out.append(f'<text x="16" y="{self.top + self.height / 2:.1f}" text-anchor="middle" '
                   f'transform="rotate(-90 16 {self.top + self.height / 2:.1f})">{escape(label)}</text>')
        return out

    def curve(self, f, values, view: str) -> str:
        colour, dash = _STYLE[view]
        pts, runs = [], []
        for fi, v in zip(f, values):
            v = float(v)
            if math.isfinite(v):
                pts.append(f"{self.x(float(fi)):.1f},{self.y(v):.1f}")
            elif pts:
                runs.append(pts)
                pts = []
        if pts:
            runs.append(pts)
        style = f' stroke-dasharray="{dash}"' if dash else ""
        return "".join(f'<polyline points="{" ".join(r)}" fill="none" stroke="{colour}" stroke-width="1.8"{style}/>'
                       for r in runs)


def bode_svg(data) -> str:
    """A sweep as an inline ``<svg>`` element: magnitude over phase, loaded and ideal, marks dotted.

    Parameters
    ----------
    data : symfilt.analysis.bode.BodeData

    Returns
    -------
    str
        An ``<svg>`` element with a viewBox (it scales with the page).

    Examples
    --------
    >>> from symfilt import catalogue, analyse
    >>> from symfilt.analysis.bode import bode_data
    >>> svg = bode_svg(bode_data(analyse(catalogue.build("rc-lowpass"), sensitivity=False), points=20))
    >>> svg.startswith("<svg") and svg.endswith("</svg>"), svg.count("<polyline")
    (True, 4)
    """
    f = [float(x) for x in data.f]
    views = tuple(v for v in (("loaded", data.loaded_db, data.loaded_phase), ("ideal", data.ideal_db, data.ideal_phase))
                  if v[1] is not None)  # a view left out (a fixture without a value) has no curve
    floors = {k: v for k, v in getattr(data, "floors", {}).items() if k in {view for view, _d, _p in views}}
    mags = [x for _v, db, _p in views for x in _finite(db)]
    low, high = magnitude_limits(mags, list(floors.values())) if mags else (-42.0, 2.0)
    phases = [x for _v, _d, ph in views for x in _finite(ph)] or [0.0]
    ppad = max(5.0, 0.05 * (max(phases) - min(phases)))
    mag = _Panel(_TOP, _MAG_H, f[0], f[-1], low, high)
    ph = _Panel(_TOP + _MAG_H + _GAP, _PH_H, f[0], f[-1], min(phases) - ppad, max(phases) + ppad)
    out = [f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {WIDTH} {HEIGHT}" font-family="sans-serif" '
           'font-size="11" role="img" aria-label="Bode plot">',
           "<style>.grid{stroke:#d6d6d6;stroke-width:0.7}.frame{fill:none;stroke:#555;stroke-width:0.8}</style>",
           f'<rect width="{WIDTH}" height="{HEIGHT}" fill="#ffffff"/>']
    if data.title:
        out.append(f'<text x="{_LEFT}" y="22" font-size="13">{escape(data.title)}</text>')
    out += mag.frame("|H| / dB", False) + ph.frame("phase / degrees", True)
    out.append(f'<text x="{_LEFT + mag.width / 2:.1f}" y="{HEIGHT - 8}" text-anchor="middle">frequency</text>')
    legend = []
    for view, db, phase in views:
        out += [mag.curve(f, db, view), ph.curve(f, phase, view)]
        legend.append((view, f"{view} ({'as connected' if view == 'loaded' else 'stage alone'})", None))
    for view, _db, _ph in views:
        colour, _ = _STYLE[view]
        for name, hz in data.marks.get(view, {}).items():
            if f[0] <= hz <= f[-1]:
                for p in (mag, ph):
                    out.append(f'<line x1="{p.x(hz):.1f}" y1="{p.top}" x2="{p.x(hz):.1f}" y2="{p.top + p.height}" '
                               f'stroke="{colour}" stroke-width="1.1" stroke-dasharray="1.5 2.5"/>')
                legend.append((view, f"{view} {name} {format_value(hz, 'Hz')}", "1.5 2.5"))
    for view, db in floors.items():
        colour, _ = _STYLE[view]
        out.append(f'<line x1="{_LEFT}" y1="{mag.y(db):.1f}" x2="{_LEFT + mag.width}" y2="{mag.y(db):.1f}" '
                   f'stroke="{colour}" stroke-width="0.8" stroke-dasharray="5 3"/>')
        legend.append((view, f"{view} floor {db:.1f} dB", "5 3"))
    for i, (view, text, dash) in enumerate(legend):
        colour, own = _STYLE[view]
        y = _TOP + 14 + 15 * i
        x = WIDTH - _RIGHT - 230
        style = dash or own
        out.append(f'<line x1="{x}" y1="{y - 4}" x2="{x + 22}" y2="{y - 4}" stroke="{colour}" stroke-width="1.8"'
                   + (f' stroke-dasharray="{style}"' if style else "") + "/>")
        out.append(f'<text x="{x + 28}" y="{y}">{escape(text)}</text>')
    out.append("</svg>")
    return "".join(out)
