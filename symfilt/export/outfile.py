"""Writing output files: atomically for regular files, as a plain stream for devices and pipes.

A regular file is written through a temporary file in the same folder and a
rename, so an interrupted write (an error, a full disc, Ctrl-C) never leaves a
truncated file: the old file stays as it was and the temporary file is removed.
The rules for every other target (:func:`output_target` decides):

- ``-`` is standard output;
- a symbolic link is followed only when it ends at a regular file, which is then
  replaced at its resolved path (the link stays a link); a link to nothing is refused;
- a character device or a pipe (after following links) gets a plain stream write,
  with no temporary file and no rename;
- nothing inside ``/dev``, ``/proc`` or ``/sys`` is ever renamed over: an open file
  reached through ``/dev/stdout`` or ``/proc/self/fd/N`` is appended to in place,
  anything else there is refused;
- every other special file (socket, block device), a folder and the input circuit
  file are refused with one :class:`~symfilt.errors.OutputError`.
"""

from __future__ import annotations

import os
import secrets
import stat
import sys
from dataclasses import dataclass
from pathlib import Path

from symfilt.errors import OutputError

#: Folders of the system's device and process files: never renamed over, nothing created there.
SYSTEM_FOLDERS = ("/dev", "/proc", "/sys")


@dataclass(frozen=True)
class OutputTarget:
    """Where and how an output is written, as :func:`output_target` decided it.

    Parameters
    ----------
    path : Path or None
        The file written: the resolved path for a symbolic link; None for stdout.
    mode : str
        ``atomic`` (temporary file and rename), ``stream`` (open and write in place,
        appending) or ``stdout``.

    Examples
    --------
    >>> OutputTarget(None, "stdout").mode
    'stdout'
    """

    path: Path | None
    mode: str


def _inside_system_folder(path) -> bool:
    text = os.path.abspath(str(path))
    return any(text == root or text.startswith(root + os.sep) for root in SYSTEM_FOLDERS)


def _same_file(a: Path, b) -> bool:
    try:
        return os.path.samefile(a, b)
    except (OSError, ValueError):  # one of them does not exist (or is not a path)
        return False


def _kind_of(mode: int) -> str:
    if stat.S_ISSOCK(mode):
        return "a socket"
    if stat.S_ISBLK(mode):
        return "a block device"
    return "not a regular file"


def _new_file(p: Path) -> OutputTarget:
    """A target that does not exist yet: a new regular file in an existing, ordinary folder."""
    parent = p.parent
    if not parent.is_dir():
        raise OutputError(str(p), f"folder {parent} does not exist", "create the folder first or choose another path")
    if _inside_system_folder(os.path.realpath(parent)):
        raise OutputError(str(p), "is inside a system folder (/dev, /proc or /sys)",
                          "write the output to an ordinary folder")
    return OutputTarget(p, "atomic")


def output_target(path, *, protect=()) -> OutputTarget:
    """Decide how ``path`` is written, or refuse it, before anything is written.

    Parameters
    ----------
    path : str or Path
        The target as the user gave it; ``-`` is standard output.
    protect : iterable of str or Path
        Files that must not be overwritten, such as the input circuit file.

    Returns
    -------
    OutputTarget
        The path to write and the way to write it.

    Raises
    ------
    OutputError
        For a folder, a protected file, a symbolic link to nothing, a socket, a block
        device, a system file that is not a device or pipe, or a missing folder.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> folder = pathlib.Path(tempfile.mkdtemp())
    >>> output_target(folder / "out.csv").mode
    'atomic'
    >>> output_target("-").mode
    'stdout'
    >>> (folder / "link.csv").symlink_to(folder / "gone.csv")
    >>> output_target(folder / "link.csv")
    Traceback (most recent call last):
    ...
    symfilt.errors.OutputError: .../link.csv: is a symbolic link to a missing file, point it at an existing file or give another path
    """
    if str(path) == "-":
        return OutputTarget(None, "stdout")
    if str(path).endswith(("/", os.sep)) or Path(path).name in ("", ".", ".."):
        raise OutputError(str(path), "names a folder (it ends in a slash), not a file", "give a file name to write")
    p = Path(path)
    if not os.path.lexists(p):
        return _new_file(p)
    try:
        st = os.stat(p)  # follows every link, the kernel's /proc/self/fd links included
    except OSError:
        raise OutputError(str(p), "is a symbolic link to a missing file",
                          "point it at an existing file or give another path") from None
    if stat.S_ISDIR(st.st_mode):
        raise OutputError(str(p), "is a folder", "give a file name to write")
    if any(other is not None and _same_file(p, other) for other in protect):
        raise OutputError(p.name or str(p), "is the input circuit file", "write the output to another file")
    if stat.S_ISCHR(st.st_mode) or stat.S_ISFIFO(st.st_mode):
        return OutputTarget(p, "stream")
    if not stat.S_ISREG(st.st_mode):
        raise OutputError(str(p), f"is {_kind_of(st.st_mode)}", "give the name of an ordinary file to write")
    return _regular_target(p)


def _regular_target(p: Path) -> OutputTarget:
    """An existing regular file, possibly behind links or in a system folder."""
    real = Path(os.path.realpath(p))
    if _inside_system_folder(real) and real.exists():
        raise OutputError(str(p), "is a system file (inside /dev, /proc or /sys)",
                          "write the output to an ordinary file")
    if _inside_system_folder(p) or not real.exists():
        # an open file reached through /dev/stdout, /dev/fd/N or /proc/self/fd/N: written in place
        return OutputTarget(p, "stream")
    return OutputTarget(real if p.is_symlink() else p, "atomic")


def write_text_atomic(path, text: str, *, protect=()) -> None:
    """Write text (UTF-8) to ``path``: atomically for a file, as a stream for a device or pipe.

    Parameters
    ----------
    path : str or Path
        The file to write (``-`` for stdout); a regular file is replaced as a whole or
        not at all. :func:`output_target` gives the rules for links and special files.
    text : str
    protect : iterable of str or Path
        Files that must not be overwritten, such as the input circuit file.

    Raises
    ------
    OutputError
        When ``path`` is a folder, a refused special file or a protected file, its folder
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


def write_bytes_atomic(path, data: bytes, *, protect=()) -> None:
    """Bytes version of :func:`write_text_atomic`.

    Parameters
    ----------
    path : str or Path
        The file to write (``-`` for stdout); a regular file is replaced as a whole or
        not at all.
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
    target = output_target(path, protect=protect)
    if target.mode == "stdout":
        _write_stdout(data)
    elif target.mode == "stream":
        _write_stream(target.path, data)
    else:
        _write_replacing(target.path, data, shown=str(path))


def write_files_atomic(items, *, protect=()) -> None:
    """Write several files as one: either every one is written or none is changed.

    Every target is checked first; then each is written in turn (each atomically), and when
    one fails, those already written get their old content back (or are removed when they are
    new). Streams (``-``, pipes) cannot be taken back, so they are written last.

    Parameters
    ----------
    items : iterable of (path, bytes)
        The files and their content, rendered beforehand.
    protect : iterable of str or Path
        Files that must not be overwritten.

    Raises
    ------
    OutputError
        For the first target that cannot be written; nothing else has changed then.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> folder = pathlib.Path(tempfile.mkdtemp())
    >>> write_files_atomic([(folder / "a.csv", b"1"), (folder / "missing" / "b.svg", b"2")])
    Traceback (most recent call last):
    ...
    symfilt.errors.OutputError: ...: folder ... does not exist, create the folder first or choose another path
    >>> (folder / "a.csv").exists()
    False
    """
    items = list(items)
    targets = [output_target(path, protect=protect) for path, _ in items]
    order = sorted(range(len(items)), key=lambda k: targets[k].mode != "atomic")
    done: list[tuple[Path, bytes | None]] = []
    try:
        for k in order:
            path, data = items[k]
            t = targets[k]
            old = t.path.read_bytes() if t.mode == "atomic" and t.path is not None and t.path.exists() else None
            write_bytes_atomic(path, data, protect=protect)
            if t.mode == "atomic":
                done.append((t.path, old))
    except BaseException:
        for p, old in reversed(done):
            try:
                p.unlink() if old is None else _write_replacing(p, old, shown=str(p))
            except OSError:
                pass
        raise


def _write_stdout(data: bytes) -> None:
    try:
        sys.stdout.flush()
        sys.stdout.buffer.write(data)
        sys.stdout.buffer.flush()
    except OSError as exc:
        raise OutputError("-", f"standard output cannot be written ({exc.strerror or exc})",
                          "check where the output goes") from None


def _write_stream(p: Path, data: bytes) -> None:
    """Open an existing device, pipe or open file and write in place: no temporary file, no rename."""
    try:
        fd = os.open(p, os.O_WRONLY | os.O_APPEND | getattr(os, "O_NOCTTY", 0))
        try:
            view = memoryview(data)
            while view:
                view = view[os.write(fd, view):]
        finally:
            os.close(fd)
    except OSError as exc:
        raise OutputError(str(p), f"cannot be written ({exc.strerror or exc})",
                          "check the device or pipe is open for writing") from None


def _write_replacing(p: Path, data: bytes, *, shown: str) -> None:
    """The regular file ``p`` replaced through a temporary file beside it and a rename."""
    tmp = p.parent / f".{p.name[:100]}.{os.getpid()}.{secrets.token_hex(4)}.tmp"
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
            raise OutputError(shown, f"cannot be written ({exc.strerror or exc})",
                              "check the folder exists, is writable and has space") from None
    finally:
        if tmp.exists():
            try:
                tmp.unlink()
            except OSError:  # nothing more can be done; the target is untouched
                pass
