"""Bode plots of a sweep from :mod:`symfilt.analysis.bode`: drawing only.

matplotlib is imported inside the functions here and nowhere else in symfilt, and
only its object-oriented interface is used (a :class:`matplotlib.figure.Figure`
with the Agg or SVG canvas): no pyplot, no global backend switch.
"""

from __future__ import annotations

import io
import math
import re
from pathlib import Path

from symfilt.errors import UsageError
from symfilt.export.formats import PLOT_FORMATS, plot_format

#: Line colours of the two views (our own palette).
COLOURS = {"loaded": "#a23b2a", "ideal": "#2f5d8a"}
#: Line styles of the two views.
STYLES = {"loaded": "-", "ideal": (0, (5, 3))}
#: Output formats by file suffix (the table of :mod:`symfilt.export.formats`).
FORMATS = PLOT_FORMATS
#: Formats the renderers draw: the plot files', and PDF for the LaTeX note's figure.
RENDER_FORMATS = ("svg", "png", "pdf")
#: Depth of the magnitude axis below its top, in dB (a notch would otherwise take the whole axis).
DEPTH_DB = 100.0


def _finite(values) -> list[float]:
    return [float(v) for v in values if math.isfinite(float(v))]


def magnitude_limits(finite: list[float], floors=()) -> tuple[float, float]:
    """The magnitude axis of a Bode plot, in dB: at most :data:`DEPTH_DB` deep below the top (a
    notch would otherwise take the whole axis), stop-band floors kept in view, a small margin.

    Parameters
    ----------
    finite : list of float
        Every finite magnitude drawn, in dB (at least one).
    floors : sequence of float
        Floor levels drawn, in dB.

    Examples
    --------
    >>> magnitude_limits([0.0, -40.0])
    (-42.0, 2.0)
    >>> magnitude_limits([0.0, -300.0])
    (-105.0, 5.0)
    """
    top = max(finite)
    bottom = max(min(finite), top - DEPTH_DB)
    if floors:
        bottom = min(bottom, min(floors) - 6.0)  # the floor line stays in view
    pad = max(1.0, 0.05 * (top - bottom))
    return bottom - pad, top + pad


def _figure(data):
    from symfilt.model.values import format_value

    fig, mag, ph = _new_figure()
    views = tuple(v for v in (("loaded", "loaded (as connected)", data.loaded_db, data.loaded_phase),
                              ("ideal", "ideal (stage alone)", data.ideal_db, data.ideal_phase)) if v[2] is not None)
    for key, label, db, phase in views:
        mag.semilogx(data.f, db, color=COLOURS[key], linestyle=STYLES[key], linewidth=1.8, label=label)
        ph.semilogx(data.f, phase, color=COLOURS[key], linestyle=STYLES[key], linewidth=1.8)
    for key, _, _, _ in views:
        for name, hz in data.marks.get(key, {}).items():
            if not data.f[0] <= hz <= data.f[-1]:
                continue
            text = f"{key} {name} {format_value(hz, 'Hz')}"
            for ax in (mag, ph):
                ax.axvline(hz, color=COLOURS[key], linestyle=":", linewidth=1.1,
                           label=text if ax is mag else None)
    for key, db in getattr(data, "floors", {}).items():
        mag.axhline(db, color=COLOURS[key], linestyle="--", linewidth=0.8,
                    label=f"{key} floor {db:.1f} dB")
    finish_axes(mag, ph, data.f, [x for v in views for x in _finite(v[2])],
            list(getattr(data, "floors", {}).values()), data.title)
    note = left_out_words(data)
    if note:  # under the frequency axis, with room made for the second line
        fig.subplots_adjust(bottom=0.13)
        ph.set_xlabel(f"frequency\n{note}")
    return fig


def _new_figure():
    """A figure with the magnitude axes over the phase axes, at fixed margins.

    Fixed margins instead of matplotlib's constrained layout, and tick labels as plain text
    (``100 Hz``, ``10 kHz``) instead of mathtext powers of ten: both cost most of a note's
    drawing time and neither changes what the plot says.
    """
    from matplotlib.figure import Figure

    fig = Figure(figsize=(8.0, 6.0))
    fig.subplots_adjust(left=0.1, right=0.95, top=0.94, bottom=0.09, hspace=0.08)
    mag, ph = fig.subplots(2, 1, sharex=True, height_ratios=[3, 2])
    return fig, mag, ph


def left_out_words(data) -> str:
    """What a sweep left out, as one sentence ("" when it drew every view).

    Parameters
    ----------
    data : BodeData or FamilyData
        Anything with a ``left_out`` dict (view -> names without a value).

    Examples
    --------
    >>> from symfilt import catalogue, analyse
    >>> from symfilt.analysis.bode import bode_data
    >>> a = analyse(catalogue.build("rc-lowpass", source="symbol"), sensitivity=False)
    >>> left_out_words(bode_data(a, points=5))
    'Loaded curve left out: no value for R_s (the ideal curve needs none).'
    """
    parts = [f"{view.capitalize()} curve left out: no value for {', '.join(names)}"
             for view, names in getattr(data, "left_out", {}).items() if names]
    return "; ".join(parts) + " (the ideal curve needs none)." if parts else ""


def finish_axes(mag, ph, f, finite: list[float], floors: list[float], title: str) -> None:
    """Axes, limits (a notch does not take the whole magnitude axis), grid, legend and title.

    Parameters
    ----------
    mag, ph : matplotlib.axes.Axes
        The magnitude and phase axes.
    f : sequence of float
        The frequencies (the x range).
    finite : list of float
        Every finite magnitude drawn, in dB (for the y range).
    floors : list of float
        Stop-band floors drawn, in dB (kept in view).
    title : str

    Examples
    --------
    >>> from matplotlib.figure import Figure
    >>> mag, ph = Figure().subplots(2, 1)
    >>> _ = mag.semilogx([1.0, 10.0], [0.0, -20.0], label="a")
    >>> finish_axes(mag, ph, [1.0, 10.0], [0.0, -20.0], [], "t")
    >>> mag.get_ylabel(), [round(x) for x in mag.get_xlim()]
    ('|H| / dB', [1, 10])
    """
    from matplotlib.ticker import FuncFormatter, NullFormatter

    from symfilt.model.values import format_value

    ph.xaxis.set_major_formatter(FuncFormatter(lambda x, _pos: format_value(x, "Hz") if x > 0 else ""))
    ph.xaxis.set_minor_formatter(NullFormatter())
    if finite:
        mag.set_ylim(*magnitude_limits(finite, floors))
    mag.set_ylabel("|H| / dB")
    ph.set_ylabel("phase / degrees")
    ph.set_xlabel("frequency")
    for ax in (mag, ph):
        ax.grid(True, which="major", color="#c9c9c9", linewidth=0.7)
        ax.grid(True, which="minor", color="#ececec", linewidth=0.5)
        ax.set_xlim(f[0], f[-1])
        for side in ("top", "right"):
            ax.spines[side].set_visible(False)
    mag.legend(loc="best", fontsize=8, frameon=False)
    if title:
        mag.set_title(title, fontsize=11, loc="left")


#: Line colours and styles of extra curves (a chain's), in order.
CURVE_STYLES = (("#a23b2a", "-"), ("#2f5d8a", (0, (5, 3))), ("#4d7a3a", (0, (1, 2))), ("#8a5a9e", (0, (7, 2, 1, 2))))


def render_curves(f, curves, title: str = "", fmt: str = "svg") -> bytes:
    """Several responses on one Bode plot (magnitude over phase), as SVG or PNG bytes.

    Parameters
    ----------
    f : array_like
        Frequencies in Hz.
    curves : sequence of (str, array, array)
        Label, magnitude in dB and phase in degrees of each curve (at most four).
    title : str
    fmt : {"svg", "png"}

    Examples
    --------
    >>> render_curves([1, 10, 100], [("a", [0, -1, -3], [0, -10, -45])], fmt="png")[:4]
    b'\\x89PNG'
    """
    import matplotlib

    if fmt not in RENDER_FORMATS:
        raise UsageError("plot format", f"{fmt!r} is not a plot format", "use svg or png")
    buf = io.BytesIO()
    with matplotlib.rc_context({"svg.hashsalt": "symfilt", "svg.fonttype": "path"}):
        fig, mag, ph = _new_figure()
        finite = []
        for (label, db, phase), (colour, style) in zip(curves, CURVE_STYLES):
            mag.semilogx(f, db, color=colour, linestyle=style, linewidth=1.8, label=label)
            ph.semilogx(f, phase, color=colour, linestyle=style, linewidth=1.8)
            finite += _finite(db)
        finish_axes(mag, ph, f, finite, [], title)
        metadata = figure_metadata(fmt)
        fig.savefig(buf, format=fmt, dpi=150 if fmt == "png" else 72, metadata=metadata)
    return buf.getvalue()


def figure_metadata(fmt: str) -> dict:
    """Metadata that keeps a figure file the same from run to run (no date, no software line).

    Parameters
    ----------
    fmt : {"svg", "png", "pdf"}

    Examples
    --------
    >>> figure_metadata("pdf")
    {'CreationDate': None, 'Producer': None}
    """
    return {"svg": {"Date": None}, "pdf": {"CreationDate": None, "Producer": None}}.get(fmt, {"Software": None})


def render_bode(data, fmt: str = "svg") -> bytes:
    """Draw a sweep (magnitude over phase, loaded and ideal overlaid, marks dotted, a stop-band
    floor as a thin dashed line) as SVG or PNG bytes.

    Parameters
    ----------
    data : symfilt.analysis.bode.BodeData
    fmt : {"svg", "png"}

    Examples
    --------
    >>> from symfilt import catalogue, analyse
    >>> from symfilt.analysis.bode import bode_data
    >>> d = bode_data(analyse(catalogue.build("rc-lowpass"), sensitivity=False), points=50)
    >>> render_bode(d, "png")[:8]
    b'\\x89PNG\\r\\n\\x1a\\n'
    """
    import matplotlib

    if fmt not in RENDER_FORMATS:
        raise UsageError("plot format", f"{fmt!r} is not a plot format", "use svg or png")
    buf = io.BytesIO()
    with matplotlib.rc_context({"svg.hashsalt": "symfilt", "svg.fonttype": "path"}):
        fig = _figure(data)
        metadata = figure_metadata(fmt)
        fig.savefig(buf, format=fmt, dpi=150 if fmt == "png" else 72, metadata=metadata)
    return buf.getvalue()


def bode_svg(data) -> str:
    """The plot as an ``<svg>`` element to put inline in an HTML page (no XML prolog).

    Parameters
    ----------
    data : BodeData
        The sweep, from :func:`symfilt.analysis.bode.bode_data`.

    Examples
    --------
    >>> from symfilt import catalogue, analyse
    >>> from symfilt.analysis.bode import bode_data
    >>> svg = bode_svg(bode_data(analyse(catalogue.build("rc-lowpass"), sensitivity=False), points=20))
    >>> svg.startswith("<svg") and svg.rstrip().endswith("</svg>")
    True
    """
    return inline_svg(render_bode(data, "svg"))


def inline_svg(svg: bytes) -> str:
    """An SVG file's bytes as an ``<svg>`` element for an HTML page: no prolog or metadata, scalable.

    Parameters
    ----------
    svg : bytes
        A whole SVG document (as :func:`render_bode` or :func:`render_curves` give it).

    Examples
    --------
    >>> inline_svg(b'<?xml version="1.0"?><svg width="1pt" height="2pt" viewBox="0 0 1 2"></svg>')
    '<svg viewBox="0 0 1 2"></svg>'
    """
    text = svg.decode("utf-8")
    start = text.index("<svg")
    body = re.sub(r"\s*<metadata>.*?</metadata>", "", text[start:], count=1, flags=re.S)
    # size from the viewBox only, so that the page can scale it
    head_end = body.index(">")
    head = re.sub(r'\s(width|height)="[^"]*"', "", body[:head_end])
    return head + body[head_end:]


def plot_bode(data, path, *, protect=()) -> Path:
    """Draw a sweep to ``path`` (.svg or .png), atomically.

    Parameters
    ----------
    data : symfilt.analysis.bode.BodeData
    path : str or Path
    protect : sequence of paths
        Files never to overwrite (the input circuit file).

    Returns
    -------
    Path

    Examples
    --------
    >>> import tempfile, pathlib
    >>> from symfilt import catalogue, analyse
    >>> from symfilt.analysis.bode import bode_data
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "bode.svg"
    >>> plot_bode(bode_data(analyse(catalogue.build("rc-lowpass"), sensitivity=False), points=20), p).suffix
    '.svg'
    """
    from symfilt.export.outfile import write_bytes_atomic

    p = Path(path)
    fmt = plot_format(p)
    write_bytes_atomic(p, render_bode(data, fmt), protect=protect)
    return p
