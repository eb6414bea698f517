"""Writing output files atomically: a temporary file in the same folder, then a rename.

An interrupted write (an error, a full disc, Ctrl-C) never leaves a truncated
file: the old file stays as it was and the temporary file is removed. The input
circuit file, folders and special files are refused.
"""

from __future__ import annotations

import os
import secrets
import stat
from pathlib import Path

from symfilt.errors import OutputError


def write_text_atomic(path, text: str, *, protect=()) -> None:
    """Write text (UTF-8) to ``path`` through a temporary file and a rename.

    Parameters
    ----------
    path : str or Path
        The file to write; it is replaced as a whole or not at all.
    text : str
    protect : iterable of str or Path
        Files that must not be overwritten, such as the input circuit file.

    Raises
    ------
    OutputError
        When ``path`` is a folder, a special file or a protected file, its folder
        does not exist, or the write fails.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "out.txt"
    >>> write_text_atomic(p, "hello")
    >>> p.read_text()
    'hello'
    >>> write_text_atomic(p, "again", protect=[p])
    Traceback (most recent call last):
    ...
    symfilt.errors.OutputError: out.txt: is the input circuit file, write the output to another file
    """
    write_bytes_atomic(path, text.encode("utf-8"), protect=protect)


def _same_file(a: Path, b) -> bool:
    try:
        return os.path.samefile(a, b)
    except (OSError, ValueError):  # one of them does not exist (or is not a path)
        return False


def write_bytes_atomic(path, data: bytes, *, protect=()) -> None:
    """Bytes version of :func:`write_text_atomic`.

    Parameters
    ----------
    path : str or Path
        The file to write; it is replaced as a whole or not at all.
    data : bytes
        What to write.
    protect : iterable of str or Path
        Files that must not be overwritten, such as the input circuit file.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> folder = pathlib.Path(tempfile.mkdtemp())
    >>> write_bytes_atomic(folder / "out.bin", b"x")
    >>> (folder / "out.bin").read_bytes()
    b'x'
    >>> write_bytes_atomic(folder, b"x")
    Traceback (most recent call last):
    ...
    symfilt.errors.OutputError: ...: is a folder, give a file name to write
    """
    p = Path(path)
    shown = p.name or str(p)
    if p.is_dir():
        raise OutputError(str(p), "is a folder", "give a file name to write")
    if p.exists() and not p.is_file():
        raise OutputError(str(p), "is not a regular file", "give the name of an ordinary file to write")
    if any(other is not None and _same_file(p, other) for other in protect):
        raise OutputError(shown, "is the input circuit file", "write the output to another file")
    parent = p.parent
    if not parent.is_dir():
        raise OutputError(str(p), f"folder {parent} does not exist", "create the folder first or choose another path")
    tmp = parent / f".{p.name[:100]}.{os.getpid()}.{secrets.token_hex(4)}.tmp"
    try:
        try:
            with open(tmp, "xb") as fh:  # "x": never reuse a file that is already there
                fh.write(data)
                fh.flush()
                os.fsync(fh.fileno())
            if p.exists():  # keep the permissions of the file being replaced
                os.chmod(tmp, stat.S_IMODE(p.stat().st_mode))
            os.replace(tmp, p)
        except OSError as exc:
            raise OutputError(str(p), f"cannot be written ({exc.strerror or exc})",
                              "check the folder exists, is writable and has space") from None
    finally:
        if tmp.exists():
            try:
                tmp.unlink()
            except OSError:  # nothing more can be done; the target is untouched
                pass
