"""Names of nodes and parts as messages show them, ground, and the node-name rules.

>>> is_ground("GND"), node_name(" out ", "ports output")
(True, 'out')
"""

from __future__ import annotations

import difflib
import keyword
import re
import unicodedata

from symfilt.errors import CircuitError, SizeLimitError

#: The ground node as stored (``0`` or ``gnd`` in any case in a file).
GROUND = "0"
#: Longest part or node name, in characters.
MAX_NAME = 32
#: Unicode categories refused in names: control, format (bidirectional marks), surrogate, private, unassigned.
_BAD_CATEGORIES = ("Cc", "Cf", "Cs", "Co", "Cn")
_NAME = re.compile(r"[A-Za-z][A-Za-z0-9_]*")
#: Names no part or parameter may take (symfilt's own symbols).
RESERVED = {"s", "R_s", "R_L", "C_L", "pi", "oo", "j", "w", "omega"}


def clip_name(text: object, limit: int = MAX_NAME) -> str:
    """A name as it may appear in a message: one line, printable, at most ``limit`` characters.

    Control and other invisible characters are shown as escapes; text that is not
    a string is shown by its ``repr``.

    Parameters
    ----------
    text : object
        The name as given (usually a str).
    limit : int
        Most characters kept; longer names are cut and end in ``...``.

    Returns
    -------
    str

    Examples
    --------
    >>> print(clip_name("R\\x1b[2J"))
    'R\\x1b[2J'
    >>> clip_name("x" * 50)
    'xxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxx...'
    """
    if not isinstance(text, str):
        shown = repr(text)
    elif any(unicodedata.category(ch) in _BAD_CATEGORIES or ch.isspace() and ch != " " for ch in text):
        shown = ascii(text)
    else:
        shown = text
    return shown if len(shown) <= limit else shown[:limit] + "..."


def is_ground(node: str) -> bool:
    """True when a node name means ground (``0`` or ``gnd``, any case).

    Parameters
    ----------
    node : str
        A node name; surrounding spaces are ignored.

    Returns
    -------
    bool

    Examples
    --------
    >>> is_ground("GND"), is_ground("0"), is_ground("out")
    (True, True, False)
    """
    return node.strip().lower() in ("0", "gnd")


def node_name(name: object, where: str) -> str:
    """A node name checked and cleaned: stripped, ground spelled ``"0"``.

    Parameters
    ----------
    name : object
        The node name as given (text is expected).
    where : str
        The place to name in an error message.

    Returns
    -------
    str

    Raises
    ------
    CircuitError
        For an empty name or one holding control or invisible characters.
    SizeLimitError
        For a name over the length limit.

    Examples
    --------
    >>> node_name(" GND ", "ports input"), node_name("out", "ports output")
    ('0', 'out')
    """
    if not isinstance(name, str) or not name.strip():
        raise CircuitError(where, f"node {clip_name(name)} is not a name",
                           "write node names as non-empty text such as \"in\" or \"gnd\"")
    name = name.strip()
    if len(name) > MAX_NAME:
        raise SizeLimitError(where, f"a node name is {len(name)} characters long, over the limit of {MAX_NAME}",
                             "use a shorter node name")
    if any(unicodedata.category(ch) in _BAD_CATEGORIES or ch.isspace() and ch != " " for ch in name):
        raise CircuitError(where, f"node name {clip_name(name)} holds a control or invisible character",
                           "write node names with visible characters only")
    return GROUND if is_ground(name) else name


def check_symbol_name(name: object, where: str, what: str = "part", *, reserved: bool = True) -> None:
    """Raise for a name that cannot be a part's or parameter's symbol.

    Parameters
    ----------
    name : object
        The name as given.
    where : str
        The place to name in an error message.
    what : str
        What is named (``part`` or ``parameter``), for the message.
    reserved : bool
        Also refuse symfilt's own names (``R_s``, ``A_*``, ...) and Python keywords; False
        checks only the form (text, length, ASCII letters, digits and ``_``).

    Raises
    ------
    CircuitError, SizeLimitError
        For text that is not a name, a reserved name or a Python keyword, or a long name.

    Examples
    --------
    >>> check_symbol_name("R1", "part R1")
    >>> check_symbol_name("R_s", "part R_s")
    Traceback (most recent call last):
    ...
    symfilt.errors.CircuitError: part R_s: the name R_s is reserved for a symbol of symfilt, rename the part (R_s, R_L, C_L, s, A_*, GBW_* are taken)
    """
    if not isinstance(name, str):
        raise CircuitError(where, f"a {what} name must be text", "write it as e.g. R1 or C_in")
    if len(name) > MAX_NAME:
        raise SizeLimitError(where, f"the name is {len(name)} characters long, over the limit of {MAX_NAME}",
                             "use a shorter name such as R1 or C_in")
    if not _NAME.fullmatch(name):
        raise CircuitError(where, f"a {what} name must start with an ASCII letter and hold only ASCII letters, digits and _",
                           "rename it, e.g. R1 or C_in")
    if not reserved:
        return
    if name in RESERVED or name.startswith(("A_", "GBW_")):
        raise CircuitError(where, f"the name {name} is reserved for a symbol of symfilt",
                           f"rename the {what} (R_s, R_L, C_L, s, A_*, GBW_* are taken)")
    if keyword.iskeyword(name):
        raise CircuitError(where, f"the name {name} is a reserved word of Python, which reads the formulas back",
                           f"rename the {what}, e.g. R_" + name)


#: Letters of other scripts that look like ASCII ones (Cyrillic and Greek lookalikes; common practice).
_LOOKALIKES = str.maketrans({
    "а": "a", "е": "e", "о": "o", "р": "p", "с": "c", "у": "y", "х": "x", "і": "i", "ј": "j", "ѕ": "s",
    "ԁ": "d", "ɡ": "g", "һ": "h", "ո": "n", "ս": "u", "ν": "v", "ο": "o", "ι": "i", "κ": "k", "τ": "t",
    "А": "A", "В": "B", "Е": "E", "К": "K", "М": "M", "Н": "H", "О": "O", "Р": "P", "С": "C", "Т": "T",
    "У": "Y", "Х": "X", "І": "I", "Ј": "J", "Ѕ": "S", "Α": "A", "Β": "B", "Ε": "E", "Ζ": "Z", "Η": "H",
    "Ι": "I", "Κ": "K", "Μ": "M", "Ν": "N", "Ο": "O", "Ρ": "P", "Τ": "T", "Υ": "Y", "Χ": "X", "ℓ": "l",
})


def skeleton(name: str) -> str:
    """The name as it looks: compatibility forms folded (NFKC) and lookalike letters made ASCII.

    Parameters
    ----------
    name : str

    Returns
    -------
    str

    Examples
    --------
    >>> skeleton("\u0456n") == skeleton("in")
    True
    """
    return unicodedata.normalize("NFKC", name).translate(_LOOKALIKES).casefold()


def confusable_hint(name: str, others) -> str:
    """A hint naming the code points when ``name`` looks like one of ``others`` but is not it; else "".

    Parameters
    ----------
    name : str
        The name that was not found.
    others : iterable of str
        The names there are.

    Returns
    -------
    str
        ``"node in looks like in but differs at ..."`` or an empty string.

    Examples
    --------
    >>> print(confusable_hint("in", ["\u0456n", "out"]))
    in looks the same as \u0456n but is another name: \u0456n holds U+0456 (CYRILLIC SMALL LETTER BYELORUSSIAN-UKRAINIAN I); retype it in ASCII
    """
    key = skeleton(name)
    for other in others:
        if other != name and skeleton(other) == key:
            odd = sorted({ch for ch in name + other if ord(ch) > 127})
            points = ", ".join(f"U+{ord(ch):04X} ({unicodedata.name(ch, 'unnamed')})" for ch in odd)
            holder = other if any(ord(ch) > 127 for ch in other) else name
            return f"{name} looks the same as {other} but is another name: {holder} holds {points}; retype it in ASCII"
    return ""


def suggest(word: str, choices) -> str:
    """``"did you mean X? "`` for the choice closest to a misspelt key, or ``""``.

    Parameters
    ----------
    word : str
    choices : iterable of str

    Examples
    --------
    >>> suggest("valeu", ["kind", "nodes", "value"]), suggest("zzz", ["value"])
    ('did you mean value? ', '')
    """
    close = difflib.get_close_matches(word, sorted(choices), n=1)
    return f"did you mean {close[0]}? " if close else ""
