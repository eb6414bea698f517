"""Drawing the response as one symbol moves: the family of loaded Bode curves, and cutoff and DC gain
against the symbol (:mod:`symfilt.analysis.family` gives the numbers).

Same rules as :mod:`symfilt.export.plot`: a :class:`matplotlib.figure.Figure` of our own,
never pyplot, never a backend switch.
"""

from __future__ import annotations

import io
import math

from symfilt.errors import UsageError
from symfilt.export.plot import COLOURS, RENDER_FORMATS, STYLES, figure_metadata, finish_axes, inline_svg

#: Colours of the family's curves, lightest value first to darkest (our own sequential palette).
FAMILY_COLOURS = ("#e3a15c", "#c9703a", "#a84a2b", "#82301f", "#5c2318", "#7a5c8f", "#4f6f4a", "#3c3c3c")


def family_label(name: str, value, unit: str) -> str:
    """A curve's legend label: ``R_L = 10 kΩ``.

    Parameters
    ----------
    name : str
    value : number
    unit : str

    Examples
    --------
    >>> family_label("R_L", 10000, "Ω")
    'R_L = 10 kΩ'
    """
    from symfilt.model.values import format_value

    return f"{name} = {format_value(value, unit) if unit else format_value(value)}"


def _save(fig, fmt: str) -> bytes:
    import matplotlib

    if fmt not in RENDER_FORMATS:
        raise UsageError("plot format", f"{fmt!r} is not a plot format", "use svg or png")
    buf = io.BytesIO()
    with matplotlib.rc_context({"svg.hashsalt": "symfilt", "svg.fonttype": "path"}):
        fig.savefig(buf, format=fmt, dpi=150 if fmt == "png" else 72, metadata=figure_metadata(fmt))
    return buf.getvalue()


def render_family(data, fmt: str = "svg") -> bytes:
    """The loaded curve at each swept value with the ideal curve dashed, magnitude over phase.

    Parameters
    ----------
    data : symfilt.analysis.family.FamilyData
    fmt : {"svg", "png", "pdf"}

    Examples
    --------
    >>> from symfilt import catalogue, analyse
    >>> from symfilt.analysis.family import family_data
    >>> from symfilt.model.sweep import parse_sweep
    >>> d = family_data(analyse(catalogue.build("rc-lowpass"), sensitivity=False), parse_sweep("R_L=1k,10k"), points=20)
    >>> render_family(d, "png")[:4]
    b'\\x89PNG'
    """
    from matplotlib.figure import Figure

    fig = Figure(figsize=(8.0, 6.0), layout="constrained")
    mag, ph = fig.subplots(2, 1, sharex=True, height_ratios=[3, 2])
    finite = []
    for k, (value, (db, phase)) in enumerate(zip(data.values, data.curves)):
        colour = FAMILY_COLOURS[k % len(FAMILY_COLOURS)]
        label = family_label(data.name, value, data.unit) + (" (loaded)" if k == 0 else "")
        mag.semilogx(data.f, db, color=colour, linewidth=1.6, label=label)
        ph.semilogx(data.f, phase, color=colour, linewidth=1.6)
        finite += [float(x) for x in db if math.isfinite(float(x))]
    if data.ideal_db is not None:
        for ax, y in ((mag, data.ideal_db), (ph, data.ideal_phase)):
            ax.semilogx(data.f, y, color=COLOURS["ideal"], linestyle=STYLES["ideal"], linewidth=1.8,
                        label="ideal (stage alone)" if ax is mag else None)
        finite += [float(x) for x in data.ideal_db if math.isfinite(float(x))]
    finish_axes(mag, ph, data.f, finite, [], data.title + (" — " if data.title else "") + f"{data.name} swept")
    if data.left_out.get("ideal"):
        ph.set_xlabel(f"frequency / Hz\nIdeal curve left out: no value for {', '.join(data.left_out['ideal'])}.")
    return _save(fig, fmt)


def render_versus(data, fmt: str = "svg") -> bytes:
    """Cutoff (Hz) and DC gain (dB) of the loaded view against the symbol, the ideal view's dashed.

    Parameters
    ----------
    data : symfilt.analysis.family.VersusData
    fmt : {"svg", "png", "pdf"}

    Examples
    --------
    >>> from symfilt import catalogue, analyse
    >>> from symfilt.analysis.family import versus_data
    >>> from symfilt.model.sweep import parse_sweep
    >>> v = versus_data(analyse(catalogue.build("rc-lowpass"), sensitivity=False), parse_sweep("R_L=1k..1M/9", max_values=None))
    >>> render_versus(v, "png")[:4]
    b'\\x89PNG'
    """
    from matplotlib.figure import Figure

    fig = Figure(figsize=(8.0, 6.0), layout="constrained")
    top, bottom = fig.subplots(2, 1, sharex=True)
    cut = [(x, y) for x, y in zip(data.x, data.cutoff_hz) if y is not None]
    gain = [(x, 20 * math.log10(abs(g))) for x, g in zip(data.x, data.dc_gain) if g]
    for ax, pts, ref, label in ((top, cut, data.ideal_cutoff_hz, "cutoff / Hz"),
                                (bottom, gain, None if not data.ideal_dc_gain else 20 * math.log10(abs(data.ideal_dc_gain)),
                                 "DC gain / dB")):
        if pts:
            ax.semilogx([p[0] for p in pts], [p[1] for p in pts], color=COLOURS["loaded"], marker=".",
                        linewidth=1.6, label="loaded (as connected)")
        if ref is not None:
            ax.axhline(ref, color=COLOURS["ideal"], linestyle=STYLES["ideal"], linewidth=1.4, label="ideal (stage alone)")
        ax.set_ylabel(label)
        ax.grid(True, which="both", color="#dddddd", linewidth=0.6)
        for side in ("top", "right"):
            ax.spines[side].set_visible(False)
        if pts or ref is not None:
            ax.legend(loc="best", fontsize=8, frameon=False)
    if cut:
        top.set_yscale("log")
    bottom.set_xlabel(f"{data.name} / {data.unit}" if data.unit else data.name)
    top.set_title((data.title + " — " if data.title else "") + f"cutoff and DC gain against {data.name}",
                  fontsize=11, loc="left")
    return _save(fig, fmt)


def family_svg(data) -> str:
    """The family plot as an inline ``<svg>`` element for an HTML page.

    Parameters
    ----------
    data : FamilyData

    Examples
    --------
    >>> from symfilt import catalogue, analyse
    >>> from symfilt.analysis.family import family_data
    >>> from symfilt.model.sweep import parse_sweep
    >>> d = family_data(analyse(catalogue.build("rc-lowpass"), sensitivity=False), parse_sweep("R_L=1k"), points=5)
    >>> family_svg(d).startswith("<svg")
    True
    """
    return inline_svg(render_family(data, "svg"))


def sweep_plot_bytes(a, sweep_text: str | None, versus: str | None, fmt: str, fmin=None, fmax=None,
                     points: int = 400) -> bytes:
    """What ``symfilt plot --sweep`` / ``--versus`` draws, as file bytes.

    ``--sweep NAME=...`` alone: the family of loaded curves. ``--versus NAME``: cutoff and DC
    gain against NAME, over the ``--sweep`` values of that name when given (a range gets
    :data:`~symfilt.model.sweep.VERSUS_POINTS` values), else two decades either side of
    its value.

    Parameters
    ----------
    a : Analysis
    sweep_text : str or None
        ``NAME=V1,V2,...`` or ``NAME=LO..HI[/N]``.
    versus : str or None
        A symbol's name.
    fmt : {"svg", "png", "pdf"}
    fmin, fmax : float, optional
        Frequency range of the family (Hz).
    points : int
        Frequencies of the family.

    Examples
    --------
    >>> from symfilt import catalogue, analyse
    >>> a = analyse(catalogue.build("rc-lowpass"), sensitivity=False)
    >>> sweep_plot_bytes(a, None, "R_L", "png", points=10)[:4]
    b'\\x89PNG'
    >>> sweep_plot_bytes(a, "R_s=1k", "R_L", "png")
    Traceback (most recent call last):
    ...
    symfilt.errors.UsageError: --versus: R_L is not the swept symbol R_s, sweep R_L or leave out --sweep
    """
    from symfilt.analysis.family import family_data, versus_data
    from symfilt.model.sweep import VERSUS_POINTS, parse_sweep

    if versus is None:
        return render_family(family_data(a, parse_sweep(sweep_text), fmin, fmax, points), fmt)
    if sweep_text is not None:
        sw = parse_sweep(sweep_text, max_values=None, points=VERSUS_POINTS)
        if sw.name != versus:
            raise UsageError("--versus", f"{versus} is not the swept symbol {sw.name}",
                             f"sweep {versus} or leave out --sweep")
    else:
        value = {str(k): v for k, v in a.circuit.values().items()}.get(versus)
        if value is None:
            raise UsageError("--versus", f"{versus} has no value to centre the range on",
                             f"give the range, e.g. --sweep {versus}=1k..1M")
        sw = parse_sweep(f"{versus}={float(value) / 100:.6g}..{float(value) * 100:.6g}", where="--versus", max_values=None,
                         points=VERSUS_POINTS)
    return render_versus(versus_data(a, sw), fmt)


class SweepPlot:
    """A drawn sweep: its SVG text, shown by a notebook (``_repr_svg_``) and saved with :meth:`save`.

    Parameters
    ----------
    svg : bytes
        The SVG file.

    Examples
    --------
    >>> SweepPlot(b"<svg></svg>")._repr_svg_()
    '<svg></svg>'
    """

    def __init__(self, svg: bytes) -> None:
        self.svg = svg

    def _repr_svg_(self) -> str:
        return self.svg.decode("utf-8")

    def save(self, path, *, protect=()):
        """Write the SVG file (atomically).

        Parameters
        ----------
        path : str or Path
            An ``.svg`` file.
        protect : sequence of paths
            Files never to overwrite.

        Examples
        --------
        >>> import tempfile, pathlib
        >>> p = pathlib.Path(tempfile.mkdtemp()) / "x.svg"
        >>> SweepPlot(b"<svg></svg>").save(p).name
        'x.svg'
        """
        from pathlib import Path

        from symfilt.export.formats import plot_format
        from symfilt.export.outfile import write_bytes_atomic

        p = Path(path)
        if plot_format(p) != "svg":
            raise UsageError(str(p), "a sweep plot object holds SVG", "name the file .svg")
        write_bytes_atomic(p, self.svg, protect=protect)
        return p


def plot_sweep(a, sweep: str | None = None, *, versus: str | None = None, fmin=None, fmax=None,
               points: int = 400) -> SweepPlot:
    """The family of loaded curves (``sweep``) or cutoff and DC gain against a symbol (``versus``).

    The library side of ``symfilt plot --sweep`` / ``--versus``; in a notebook the result shows
    itself as SVG.

    Parameters
    ----------
    a : Analysis
    sweep : str, optional
        ``NAME=V1,V2,...`` or ``NAME=LO..HI[/N]``.
    versus : str, optional
        A symbol's name.
    fmin, fmax : float, optional
        Frequency range (Hz) of the family.
    points : int
        Frequencies of the family.

    Returns
    -------
    SweepPlot

    Examples
    --------
    >>> import symfilt
    >>> a = symfilt.analyse(symfilt.catalogue.build("rc-lowpass"), sensitivity=False)
    >>> plot_sweep(a, "R_L=1k,10k,100k", points=20)._repr_svg_().count("<svg")
    1
    """
    if sweep is None and versus is None:
        raise UsageError("plot_sweep", "nothing to sweep", 'give sweep="R_L=1k,10k" or versus="R_L"')
    return SweepPlot(sweep_plot_bytes(a, sweep, versus, "svg", fmin, fmax, points))
