"""Output formats by name: derive's formats, the note forms and the plot files, in one table each.

The command line and the writers look a format up here instead of branching
on its name; an unknown name ends in the :class:`~symfilt.errors.UsageError`
it always did.

Examples
--------
>>> sorted(DERIVE_FORMATS)
['json', 'latex', 'mathml', 'text']
>>> note_kind("rc.md"), plot_format("bode.svg")
('markdown', 'svg')
"""

from __future__ import annotations

from pathlib import Path

from symfilt.errors import UsageError
from symfilt.export.derive_report import derive_json, derive_latex, derive_mathml, derive_text

#: ``symfilt derive --format`` name -> renderer of a :class:`~symfilt.design.report.Report`.
DERIVE_FORMATS = {"text": derive_text, "latex": derive_latex, "mathml": derive_mathml, "json": derive_json}
#: Note form by file suffix.
NOTE_FORMATS = {".html": "html", ".htm": "html", ".md": "markdown", ".tex": "latex"}
#: Plot format by file suffix.
PLOT_FORMATS = {".svg": "svg", ".png": "png"}


def derive_renderer(name: str):
    """The renderer of a derive format.

    Parameters
    ----------
    name : str
        One of ``DERIVE_FORMATS``.

    Returns
    -------
    callable
        ``(report, quantity=None) -> str``.

    Examples
    --------
    >>> derive_renderer("json").__name__
    'derive_json'
    """
    if name not in DERIVE_FORMATS:
        raise UsageError("--format", f"{name!r} is not a format", "use " + ", ".join(DERIVE_FORMATS))
    return DERIVE_FORMATS[name]


def note_kind(path) -> str:
    """The note form a file name asks for.

    Parameters
    ----------
    path : str or Path

    Returns
    -------
    str
        ``html``, ``markdown`` or ``latex``.

    Examples
    --------
    >>> note_kind("rc.pdf")
    Traceback (most recent call last):
    ...
    symfilt.errors.UsageError: rc.pdf: cannot write a note to a .pdf file, name the note .html, .md or .tex
    """
    p = Path(path)
    kind = NOTE_FORMATS.get(p.suffix.lower())
    if kind is None:
        raise UsageError(str(p), f"cannot write a note to a {p.suffix or 'suffix-less'} file",
                         "name the note .html, .md or .tex")
    return kind


def plot_format(path, where: str | None = None) -> str:
    """The plot format a file name asks for.

    Parameters
    ----------
    path : str or Path
    where : str, optional
        Name of the file in the error message (``str(Path(path))`` by default).

    Returns
    -------
    str
        ``svg`` or ``png``.

    Examples
    --------
    >>> plot_format("bode")
    Traceback (most recent call last):
    ...
    symfilt.errors.UsageError: bode: cannot draw to a suffix-less file, name the plot file .svg or .png
    """
    p = Path(path)
    fmt = PLOT_FORMATS.get(p.suffix.lower())
    if fmt is None:
        raise UsageError(where or str(p), f"cannot draw to a {p.suffix or 'suffix-less'} file",
                         "name the plot file .svg or .png")
    return fmt
