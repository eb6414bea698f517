"""Exception hierarchy.

Every error symfilt raises on purpose is a :class:`SymfiltError`. Each subclass
also subclasses a built-in exception, so callers may catch either. An error keeps
its parts as fields (``where``, ``what``, ``fix``) and builds its one-line message
from them: ``<where>: <what>, <fix>``.

Examples
--------
>>> err = CircuitFileError("stage.toml [parts] R1", "unknown kind 'resistr'", "use one of resistor, capacitor")
>>> str(err)
"stage.toml [parts] R1: unknown kind 'resistr', use one of resistor, capacitor"
>>> isinstance(err, ValueError)
True
"""

from __future__ import annotations


class SymfiltError(Exception):
    """Root of every error symfilt raises on purpose.

    Parameters
    ----------
    where : str
        The place in the input the error is about (file, section, part name, option).
    what : str
        What is wrong.
    fix : str
        How to fix it.

    Examples
    --------
    >>> str(SymfiltError("R1", "value '4x7' not understood", "write a number such as 4k7"))
    "R1: value '4x7' not understood, write a number such as 4k7"
    """

    def __init__(self, where: str, what: str, fix: str = "") -> None:
        self.where = where
        self.what = what
        self.fix = fix
        super().__init__(self.message)

    @property
    def message(self) -> str:
        """The one-line message ``<where>: <what>, <fix>``."""
        text = f"{self.where}: {self.what}" if self.where else self.what
        if self.fix:
            text += f", {self.fix}"
        return " ".join(text.split())

    def __str__(self) -> str:
        return self.message

    def __reduce__(self):  # keep pickling working with the three-argument constructor
        return (type(self), (self.where, self.what, self.fix))


class ValueParseError(SymfiltError, ValueError):
    """A component value or number could not be read.

    Parameters
    ----------
    where, what, fix : str
        As for :class:`SymfiltError`.

    Examples
    --------
    >>> isinstance(ValueParseError("R1", "value '4x7' not understood"), ValueError)
    True
    """


class CircuitFileError(SymfiltError, ValueError):
    """A circuit file is not valid TOML or breaks the schema.

    Parameters
    ----------
    where, what, fix : str
        As for :class:`SymfiltError`.

    Examples
    --------
    >>> isinstance(CircuitFileError("stage.toml line 3", "not valid TOML"), ValueError)
    True
    """


class CircuitError(SymfiltError, ValueError):
    """A circuit is structurally wrong (pins, nodes, names, ports).

    Parameters
    ----------
    where, what, fix : str
        As for :class:`SymfiltError`.

    Examples
    --------
    >>> isinstance(CircuitError("R1", "both pins on node a"), ValueError)
    True
    """


class SingularCircuitError(SymfiltError, ArithmeticError):
    """The circuit equations have no unique solution.

    Parameters
    ----------
    where, what, fix : str
        As for :class:`SymfiltError`.

    Examples
    --------
    >>> isinstance(SingularCircuitError("stage", "node b floats"), ArithmeticError)
    True
    """


class SizeLimitError(SymfiltError, OverflowError):
    """An input or a derivation is larger than a stated limit.

    Parameters
    ----------
    where, what, fix : str
        As for :class:`SymfiltError`.

    Examples
    --------
    >>> isinstance(SizeLimitError("stage", "over 1000 terms"), OverflowError)
    True
    """


class ClaimError(SymfiltError, ValueError):
    """A hand derivation could not be read safely.

    Parameters
    ----------
    where, what, fix : str
        As for :class:`SymfiltError`.

    Examples
    --------
    >>> isinstance(ClaimError("claim", "unbalanced brackets"), ValueError)
    True
    """


class OutputError(SymfiltError, OSError):
    """An output file could not be written.

    Parameters
    ----------
    where, what, fix : str
        As for :class:`SymfiltError`.

    Examples
    --------
    >>> isinstance(OutputError("note.html", "folder not found"), OSError)
    True
    """


class UsageError(SymfiltError, ValueError):
    """A command-line option or API argument is not valid.

    Parameters
    ----------
    where, what, fix : str
        As for :class:`SymfiltError`.

    Examples
    --------
    >>> isinstance(UsageError("--format", "unknown format 'pdf'"), ValueError)
    True
    """


class ArgumentTypeError(SymfiltError, TypeError):
    """A Python API argument of the wrong type (a text where a Circuit belongs, None for the parts).

    Parameters
    ----------
    where, what, fix : str
        As for :class:`SymfiltError`.

    Examples
    --------
    >>> isinstance(ArgumentTypeError("analyse circuit", "expected a Circuit, got str"), TypeError)
    True
    """

