"""Writing output files atomically: a temporary file in the same folder, then a rename.

An interrupted write never leaves a truncated file; the input circuit file and
folders are refused.
"""

from __future__ import annotations

import os
from pathlib import Path


def write_text_atomic(path, text: str, *, protect=()) -> None:
    """Write text to ``path`` through a temporary file and a rename.

    An interrupted write leaves the old file as it was. Refuses a folder and any
    path in ``protect`` (for example the input circuit file).

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "out.txt"
    >>> write_text_atomic(p, "hello")
    >>> p.read_text()
    'hello'
    """
    write_bytes_atomic(path, text.encode("utf-8"), protect=protect)


def write_bytes_atomic(path, data: bytes, *, protect=()) -> None:
    """Bytes version of :func:`write_text_atomic`.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "out.bin"
    >>> write_bytes_atomic(p, b"x")
    >>> p.read_bytes()
    b'x'
    """
    from .errors import OutputError

    p = Path(path)
    if p.is_dir():
        raise OutputError(str(p), "is a folder", "give a file name to write")
    for other in protect:
        try:
            if other is not None and p.exists() and Path(other).exists() and os.path.samefile(p, other):
                raise OutputError(str(p), "is the input circuit file", "write the output to another file")
        except OSError:
            continue
    parent = p.parent if str(p.parent) else Path(".")
    if not parent.is_dir():
        raise OutputError(str(p), f"folder {parent} does not exist", "create the folder first or choose another path")
    tmp = parent / f".{p.name}.{os.getpid()}.tmp"
    try:
        with open(tmp, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, p)
    except OSError as exc:
        raise OutputError(str(p), f"cannot be written ({exc.strerror})", "check the folder exists and is writable") from None
    finally:
        if tmp.exists():
            try:
                tmp.unlink()
            except OSError:
                pass
