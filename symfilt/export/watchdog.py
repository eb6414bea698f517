"""The command's memory watchdog: the work runs in a child process that is stopped at a limit.

A derivation can outgrow the engine's own estimate inside one C call (a gcd, a power), where
no Python code runs and no exception can be raised; when the C library then fails to
allocate, it aborts the process. So the console command forks: the child does the work,
the parent polls the child's resident memory (``/proc/<pid>/statm``) every 20 ms and, when
it passes the limit (``--max-memory``, default 1 GB), kills it and prints the size message
as the one ``error:`` line, exit 2. Where ``fork`` or ``/proc`` is missing the command runs
in-process, unwatched.

>>> parse_memory("1G"), parse_memory("512M"), parse_memory("200000000")
(1000000000, 512000000, 200000000)
"""

from __future__ import annotations

import os
import signal
import sys

from symfilt.errors import UsageError

__all__ = ["DEFAULT_LIMIT", "memory_option", "parse_memory", "run_watched", "without_memory_option"]

#: The default limit of the command's resident memory, in bytes.
DEFAULT_LIMIT = 10**9
_UNITS = {"": 1, "K": 10**3, "M": 10**6, "G": 10**9, "T": 10**12}
_POLL = 0.02


def parse_memory(text: str) -> int:
    """A memory size: a whole number of bytes or with K, M, G or T (powers of 1000; a trailing B is fine).

    Parameters
    ----------
    text : str
        ``"1G"``, ``"500M"``, ``"2000000"``.

    Returns
    -------
    int
        Bytes.

    Raises
    ------
    UsageError
        For anything else, or under 50 MB (less than Python and sympy need to start).

    Examples
    --------
    >>> parse_memory("1.5GB")
    1500000000
    """
    t = str(text).strip().upper().removesuffix("B")
    unit = t[-1:] if t[-1:] in _UNITS and t[-1:] else ""
    try:
        value = float(t[:-1] if unit else t) * _UNITS[unit]
    except ValueError:
        raise UsageError("--max-memory", f"{text!r} is not a memory size", "write it as 1G, 500M or 2000000") from None
    if not value >= 50 * 10**6 or value != value or value == float("inf"):
        raise UsageError("--max-memory", f"{text!r} is under 50 MB or not finite",
                         "give at least 50M (Python and sympy alone take about 70 MB)")
    return int(value)


def memory_option(argv: list[str]) -> int:
    """The ``--max-memory`` limit among the arguments (anywhere), else :data:`DEFAULT_LIMIT`.

    Parameters
    ----------
    argv : list of str
        The command's arguments.

    Examples
    --------
    >>> memory_option(["derive", "x.toml", "--max-memory", "2G"]), memory_option(["derive", "--max-memory=300M"])
    (2000000000, 300000000)
    """
    for k, arg in enumerate(argv):
        if arg == "--":
            break
        if arg == "--max-memory" and k + 1 < len(argv):
            return parse_memory(argv[k + 1])
        if arg.startswith("--max-memory="):
            return parse_memory(arg.split("=", 1)[1])
    return DEFAULT_LIMIT


def without_memory_option(argv: list[str]) -> list[str]:
    """The arguments with ``--max-memory SIZE`` taken out (every command accepts it).

    Parameters
    ----------
    argv : list of str

    Examples
    --------
    >>> without_memory_option(["derive", "--max-memory", "2G", "x.toml"])
    ['derive', 'x.toml']
    """
    out, skip = [], False
    for k, arg in enumerate(argv):
        if skip:
            skip = False
            continue
        if arg == "--":
            return out + argv[k:]
        if arg == "--max-memory":
            skip = True
            continue
        if not arg.startswith("--max-memory="):
            out.append(arg)
    return out


def _rss(pid: int) -> int | None:
    try:
        with open(f"/proc/{pid}/statm", "rb") as f:
            return int(f.read().split()[1]) * os.sysconf("SC_PAGE_SIZE")
    except (OSError, ValueError, IndexError):
        return None


def run_watched(work, limit: int, message) -> int:
    """Run ``work()`` (returning an exit code) in a child process stopped past ``limit`` bytes.

    Parameters
    ----------
    work : callable
        The command; its return value is the exit code.
    limit : int
        Resident memory limit of the child in bytes.
    message : callable
        ``message(limit)`` gives the error line printed when the child is stopped.

    Returns
    -------
    int
        The child's exit code, 2 when it was stopped, 130 when it ended by an interrupt.

    Examples
    --------
    >>> run_watched(lambda: 3, 10**9, str)
    3
    """
    if not hasattr(os, "fork") or _rss(os.getpid()) is None:
        return work()
    for stream in (sys.stdout, sys.stderr):
        try:
            if stream is not None:
                stream.flush()
        except (OSError, ValueError):
            pass
    ended_r, ended_w = os.pipe()  # closed by the child's exit: the parent wakes at once, not at the next poll
    pid = os.fork()
    if pid == 0:  # the child: do the work, leave without running the parent's exit handlers twice
        os.close(ended_r)
        code = 2
        try:
            code = work()
        finally:
            try:
                if sys.stdout is not None:
                    sys.stdout.flush()
            except (OSError, ValueError):  # the stream error was already reported by work()
                pass
            os._exit(code if isinstance(code, int) else 0)
    os.close(ended_w)
    try:
        return _watch(pid, limit, message, ended_r)
    finally:
        os.close(ended_r)


def _watch(pid: int, limit: int, message, ended: int) -> int:
    import select

    old = signal.signal(signal.SIGINT, signal.SIG_IGN)  # the child reports an interrupt itself
    try:
        while True:
            done, status = os.waitpid(pid, os.WNOHANG)
            if done:
                return _ended(status)
            rss = _rss(pid)
            if rss is not None and rss > limit:
                os.kill(pid, signal.SIGKILL)
                os.waitpid(pid, 0)
                os.write(2, (message(limit) + "\n").encode("ascii", "replace"))
                return 2
            select.select([ended], [], [], _POLL)  # returns early when the child has gone
    finally:
        signal.signal(signal.SIGINT, old)


def _ended(status: int) -> int:
    """The child's exit code; a child killed by a signal (a C library's abort) gets an error line."""
    if os.WIFEXITED(status):
        return os.WEXITSTATUS(status)
    sig = os.WTERMSIG(status)
    if sig == signal.SIGINT:
        return 130
    os.write(2, (f"error: symfilt: the run ended by signal {sig} ({signal.Signals(sig).name}), most likely a C "
                 "library out of memory, derive the stages one at a time or lower --max-memory so that the "
                 "watchdog stops it first\n").encode("ascii", "replace"))
    return 2

