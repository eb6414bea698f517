"""Circuit files (TOML, symfilt's own schema) to and from :class:`~symfilt.model.circuit.Circuit`.

The schema is in DESIGN.md and in the README. Every problem is a
:class:`~symfilt.errors.SymfiltError` whose message starts with the file name and
the place in it (``stage.toml line 8``, ``stage.toml [parts] R1``): a
:class:`~symfilt.errors.CircuitFileError` for the file and its TOML, and the
circuit's own errors (:class:`~symfilt.errors.CircuitError`,
:class:`~symfilt.errors.ValueParseError`, :class:`~symfilt.errors.SizeLimitError`,
:class:`~symfilt.errors.SingularCircuitError`) for what it describes.
"""

from __future__ import annotations

import os
import re
import stat
import tomllib
import unicodedata
from pathlib import Path

from symfilt.model.circuit import PART_PINS, Circuit, Fixture, Parameter, Part, clip_name
from symfilt.errors import ArgumentTypeError, CircuitFileError, SizeLimitError, SymfiltError
from symfilt.model.noise import noise_from_dict
from symfilt.model.keep import check_keep, parse_keep
from symfilt.model.sweep import note_sweep
from symfilt.model.structure import MAX_PARTS
from symfilt.model.names import suggest
from symfilt.model.values import format_value

#: Largest circuit file read, in bytes.
MAX_FILE_BYTES = 256 * 1024
#: Longest title, in characters.
MAX_TITLE = 200

_TOP_KEYS = {"title", "keep", "ports", "source", "load", "parameters", "parts", "probes", "noise", "note"}  # [noise]: symfilt.model.noise, [note]: .sweep
_PART_KEYS = {
    "resistor": {"kind", "nodes", "value"},
    "capacitor": {"kind", "nodes", "value"},
    "inductor": {"kind", "nodes", "value"},
    "opamp": {"kind", "plus", "minus", "out", "model", "gain", "gbw", "pole2", "rout", "rin", "cin", "iout_max", "slew",
              "en", "in", "fc_en", "fc_in"},  # noise data, read by symfilt.model.noise
    "vcvs": {"kind", "nodes", "gain"},
    "vccs": {"kind", "nodes", "gain"},
    "ccvs": {"kind", "nodes", "gain", "control"},
    "cccs": {"kind", "nodes", "gain", "control"},
}


def _text(v) -> object:
    """TOML numbers stay numbers; strings are passed to the value parser as they are."""
    return v


_TOML_AT = re.compile(r"^(?P<msg>.*?) \((?:at line (?P<line>\d+), column (?P<col>\d+)|at end of document)\)$", re.S)
_HEADER = re.compile(r"^\s*\[\s*(?P<name>[^\[\]]*?)\s*\]\s*(?:#.*)?$")
_KEY = re.compile(r"""^\s*(?:(?P<bare>[A-Za-z0-9_-]+)|"(?P<dq>[^"\\]*)"|'(?P<sq>[^']*)')\s*=""")


def _code_lines(text: str) -> list[str]:
    """The lines of a TOML text with comments and the inside of multi-line strings blanked.

    A fake ``R1 = ...`` or ``[parts]`` inside a ``\"\"\"...\"\"\"`` or ``'''...'''`` string is
    no key or header; the line numbering stays that of the file.
    """
    out, i, n = [], 0, len(text)
    while i < n:
        c = text[i]
        if text.startswith(('"""', "'''"), i):
            quote = text[i : i + 3]
            end = _string_end(text, i + 3, quote)
            out.append(quote + "".join(ch if ch == "\n" else " " for ch in text[i + 3 : end]))
            i = end
        elif c in "\"'":
            end = _string_end(text, i + 1, c)
            out.append(text[i:end])
            i = end
        elif c == "#":
            end = text.find("\n", i)
            i = n if end < 0 else end
        else:
            out.append(c)
            i += 1
    return "".join(out).splitlines()


def _string_end(text: str, i: int, quote: str) -> int:
    """Index just past the string whose body starts at i (a line break ends a one-line string)."""
    escapes = quote[0] == '"'
    while i < len(text):
        if escapes and text[i] == "\\":
            i += 2
        elif text.startswith(quote, i):
            i += len(quote)
            while len(quote) == 3 and text.startswith(quote[0], i):  # up to two quotes close with it
                i += 1
            return i
        elif len(quote) == 1 and text[i] == "\n":
            return i
        else:
            i += 1
    return len(text)


def _duplicate_key(text: str) -> tuple[str, str, int, int] | None:
    """(section, key, first line, second line) of the first key written twice in one table."""
    section = ""
    seen: dict[tuple[str, str], int] = {}
    headers: dict[str, int] = {}
    for number, line in enumerate(_code_lines(text), start=1):
        if (m := _HEADER.match(line)) is not None:
            section = m["name"]
            if section in headers:
                return ("", f"[{section}]", headers[section], number)
            headers[section] = number
            continue
        if (m := _KEY.match(line)) is not None:
            key = m["bare"] or m["dq"] or m["sq"] or ""
            if (section, key) in seen:
                return (section, key, seen[(section, key)], number)
            seen[(section, key)] = number
    return None


def _toml_error(exc: tomllib.TOMLDecodeError, text: str, name: str) -> CircuitFileError:
    """A TOML syntax error as one clear message; duplicate names are spelt out."""
    m = _TOML_AT.match(str(exc))
    detail = m["msg"] if m else str(exc)
    where = f"{name} line {m['line']}" if m and m["line"] else name
    if detail.startswith(("Cannot overwrite", "Cannot declare", "Duplicate", "Cannot mutate")):
        dup = _duplicate_key(text)
        if dup is not None:
            section, key, first, second = dup
            where = f"{name} line {second}"
            if key.startswith("["):
                return CircuitFileError(where, f"the table {clip_name(key)} appears twice (first on line {first})",
                                        "keep one header and put everything of that table under it")
            if section == "parts":
                return CircuitFileError(where, f"part {clip_name(key)} is defined twice (first on line {first})",
                                        "give each part its own name")
            return CircuitFileError(where, f"{clip_name(key)} is given twice (first on line {first})", "keep one of them")
        if detail.startswith("Duplicate inline table key"):
            return CircuitFileError(where, f"a part lists {detail[len('Duplicate inline table key '):]} twice",
                                    "keep one of them")
    if m and m["col"]:
        detail += f" at column {m['col']}"
    elif m:
        detail += " at the end of the file"
    detail = clip_name(detail[:1].lower() + detail[1:], 120)
    return CircuitFileError(where, f"not valid TOML: {detail}", "fix the syntax there (see the circuit file format in the README)")


def parse_circuit_text(text: str, name: str = "<text>") -> Circuit:
    """Read a circuit from the text of a circuit file.

    Parameters
    ----------
    text : str
        TOML text in the symfilt schema.
    name : str
        The file name used in error messages.

    Returns
    -------
    Circuit

    Examples
    --------
    >>> c = parse_circuit_text('''
    ... [source]
    ... resistance = "600"
    ... [parts]
    ... R1 = { kind = "resistor", nodes = ["in", "out"], value = "4k7" }
    ... C1 = { kind = "capacitor", nodes = ["out", "gnd"], value = "22n" }
    ... ''')
    >>> c.source.value, c.part("R1").value
    (600, 4700)
    """
    return circuit_from_dict(read_toml(text, name), name)


def read_toml(text: str, name: str = "<text>") -> dict:
    """The tables of a TOML text, every syntax problem as one clear CircuitFileError.

    Parameters
    ----------
    text : str
    name : str
        The file name used in error messages.

    Examples
    --------
    >>> read_toml('title = "x"')
    {'title': 'x'}
    """
    text = text.removeprefix("\ufeff")  # a byte-order mark, as some editors write
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise _toml_error(exc, text, name) from None
    except RecursionError:
        raise CircuitFileError(name, "nesting too deep", "write a flat file as in the README") from None
    except ValueError:  # Python refuses to read an integer of more than 4300 digits
        raise CircuitFileError(name, "not valid TOML: a number is too long to read",
                               "write values as text such as \"4k7\" or \"2.2e-9\"") from None


def circuit_from_dict(data: dict, name: str = "<data>") -> Circuit:
    """Build a circuit from the parsed TOML tables.

    Parameters
    ----------
    data : dict
        The tables as ``tomllib`` reads them (title, ports, source, load, parts).
    name : str
        The file name errors start with.

    Returns
    -------
    Circuit
        The checked circuit.

    Examples
    --------
    >>> circuit_from_dict({"parts": {"R1": {"kind": "resistor", "nodes": ["in", "out"]},
    ...                              "R2": {"kind": "resistor", "nodes": ["out", "0"]}}}).output
    'out'
    """
    unknown = set(data) - _TOP_KEYS
    if unknown:
        key = sorted(unknown)[0]
        raise CircuitFileError(name, f"unknown section or key {clip_name(key)!r}",
                               suggest(key, _TOP_KEYS) + "use only title, keep, [ports], [source], [load], [parameters], "
                               "[parts], [probes], [noise], [note]")
    title = data.get("title", "")
    if not isinstance(title, str):
        raise CircuitFileError(f"{name} title", "the title must be text", "write title = \"...\"")
    if len(title) > MAX_TITLE:
        raise SizeLimitError(f"{name} title", f"the title is {len(title)} characters long, over the limit of {MAX_TITLE}",
                             "shorten it")
    if any(unicodedata.category(ch) in ("Cc", "Cf", "Cs", "Co", "Cn") and ch != "\t" for ch in title):
        raise CircuitFileError(f"{name} title", "the title holds a line break, control or invisible character",
                               "write the title on one line with visible characters only")
    ports = _table(data, "ports", name)
    source = _table(data, "source", name)
    load = _table(data, "load", name)
    for label, table, keys in (("ports", ports, {"input", "output"}), ("source", source, {"resistance"}),
                               ("load", load, {"resistance", "capacitance"})):
        extra = set(table) - keys
        if extra:
            key = sorted(extra)[0]
            raise CircuitFileError(f"{name} [{label}]", f"unknown key {clip_name(key)!r}",
                                   suggest(key, keys) + "use " + " and ".join(sorted(keys)))
    parts_table = data.get("parts")
    if not isinstance(parts_table, dict) or not parts_table:
        raise CircuitFileError(name, "no [parts] table", "add [parts] with one line per part")
    if len(parts_table) > MAX_PARTS:
        raise SizeLimitError(f"{name} [parts]", f"{len(parts_table)} parts is over the limit of {MAX_PARTS}",
                             "split the circuit into stages and derive each one")
    parameters = _parameters(_table(data, "parameters", name), name)
    parts = [_part(pname, spec, name) for pname, spec in parts_table.items()]
    probes = _probes(_table(data, "probes", name), name)
    try:
        circuit = Circuit(
            parts=tuple(parts),
            input=_port(ports.get("input", "in"), "[ports] input"),
            output=_port(ports.get("output", "out"), "[ports] output"),
            source=Fixture.parse(_text(source.get("resistance")), "[source] resistance"),
            load_resistance=Fixture.parse(_text(load.get("resistance")), "[load] resistance"),
            load_capacitance=Fixture.parse(_text(load.get("capacitance")), "[load] capacitance"),
            title=title,
            parameters=parameters,
            probes=probes,
        )
        circuit.check()
    except SymfiltError as exc:
        raise type(exc)(f"{name} {_file_place(exc.where)}", exc.what, exc.fix) from None
    noise_from_dict(data, name, circuit)  # a bad [noise] table or en/in is refused by every command
    note_sweep(data, name)  # likewise a bad [note] table
    if "keep" in data:  # read by derive and note (symfilt.model.keep.load_keep); a bad name is refused here
        check_keep(circuit, parse_keep(data["keep"], f"{name} keep"), f"{name} keep")
    return circuit


def _file_place(where: str) -> str:
    """A place in circuit terms ("part R1", "ports output") written as in the file ("[parts] R1")."""
    for plain, section in (("part ", "[parts] "), ("ports ", "[ports] "), ("parameters ", "[parameters] "),
                           ("probe ", "[probes] ")):
        if where.startswith(plain):
            return section + where[len(plain):]
    return where


def _port(v, where: str) -> str:
    from symfilt.model.circuit import node_name

    return node_name(v, where)


def _table(data: dict, key: str, name: str) -> dict:
    v = data.get(key, {})
    if not isinstance(v, dict):
        raise CircuitFileError(f"{name} {key}", f"{key} must be a table", f"write [{key}] on a line of its own")
    return v


def _parameters(table: dict, name: str) -> tuple[Parameter, ...]:
    """The ``[parameters]`` table: name -> a value or ``"symbol"``."""
    if len(table) > MAX_PARTS:
        raise SizeLimitError(f"{name} [parameters]", f"{len(table)} parameters is over the limit of {MAX_PARTS}",
                             "keep the parameters the parts refer to")
    out = []
    for key, v in table.items():
        if isinstance(v, (dict, list)) or isinstance(v, bool):
            raise CircuitFileError(f"{name} [parameters] {clip_name(key)}", "a parameter is a value or \"symbol\"",
                                   "write e.g. R = \"10k\" or k = \"symbol\"")
        out.append(Parameter.parse(key, v, f"{name} [parameters]"))
    return tuple(out)


def _probes(table: dict, name: str) -> tuple[tuple[str, str], ...]:
    """The ``[probes]`` table: label -> node name."""
    out = []
    for label, node in table.items():
        if not isinstance(node, str):
            raise CircuitFileError(f"{name} [probes] {clip_name(label)}", "a probe names one node",
                                   "write e.g. after_rc = \"mid\"")
        out.append((label, _port(node, f"{name} [probes] {clip_name(label)}")))
    return tuple(out)


def _part(pname: str, spec, name: str) -> Part:
    where = f"{name} [parts] {clip_name(pname)}"
    if not isinstance(spec, dict):
        raise CircuitFileError(where, "a part must be an inline table",
                               "write it as { kind = \"resistor\", nodes = [...], value = \"...\" }")
    kind = spec.get("kind")
    if not isinstance(kind, str) or kind not in PART_PINS:
        shown = f"{clip_name(kind)!r}" if isinstance(kind, str) else clip_name(kind)
        raise CircuitFileError(where, f"unknown kind {shown}" if kind is not None else "no kind given",
                               (suggest(kind, PART_PINS) if isinstance(kind, str) else "") + "use one of " + ", ".join(PART_PINS))
    extra = set(spec) - _PART_KEYS[kind]
    if extra:
        key = sorted(extra)[0]
        raise CircuitFileError(where, f"unknown key {clip_name(key)!r} for a {kind}",
                               suggest(key, _PART_KEYS[kind]) + "use " + ", ".join(sorted(_PART_KEYS[kind])))
    try:
        if kind == "opamp":
            missing = [pin for pin in ("plus", "minus", "out") if pin not in spec]
            if missing:
                raise CircuitFileError(where, f"missing pin {missing[0]}", "give plus, minus and out")
            return Part.make(pname, kind, (spec["plus"], spec["minus"], spec["out"]),
                             model=spec.get("model", "ideal"), gain=spec.get("gain"), gbw=spec.get("gbw"),
                             iout_max=spec.get("iout_max"), slew=spec.get("slew"), pole2=spec.get("pole2"),
                             rout=spec.get("rout"), rin=spec.get("rin"), cin=spec.get("cin"))
        nodes = spec.get("nodes")
        if not isinstance(nodes, list):
            raise CircuitFileError(where, "no nodes list", f"write nodes = [{', '.join(repr(k) for k in PART_PINS[kind])}]")
        value = spec.get("gain") if kind in ("vcvs", "vccs", "ccvs", "cccs") else spec.get("value")
        return Part.make(pname, kind, nodes, value=value, control=spec.get("control"))
    except CircuitFileError:
        raise
    except SymfiltError as exc:
        # keep the key the part's own message names (``part U1 rout`` -> ``[parts] U1 rout``)
        head = f"part {clip_name(pname)}"
        tail = exc.where[len(head):] if exc.where.startswith(head + " ") else ""
        raise type(exc)(where + tail, exc.what, exc.fix) from None


_SPECIAL = ((stat.S_ISFIFO, "a named pipe (FIFO)"), (stat.S_ISCHR, "a character device"),
            (stat.S_ISBLK, "a block device"), (stat.S_ISSOCK, "a socket"))


def _refuse_special(p: Path, what: str) -> None:
    """Refuse anything but a regular file before it is opened: reading a pipe or a device may never end."""
    mode = os.stat(p).st_mode
    for test, word in _SPECIAL:
        if test(mode):
            raise CircuitFileError(str(p), f"is {word}, not a {what}",
                                   f"save the {what} as an ordinary file and give its path")


def read_text_file(path, what: str = "circuit file") -> tuple[str, str]:
    """The UTF-8 text of a small input file and the name its errors start with.

    Parameters
    ----------
    path : str or Path
    what : str
        What the file is, for the messages ("circuit file", "chain file").

    Returns
    -------
    (str, str)
        The text and the file's name.

    Raises
    ------
    CircuitFileError, SizeLimitError
        A missing, unreadable, over-long or non-UTF-8 file, or one that is no regular file
        (a named pipe or a device is refused before it is opened).

    Examples
    --------
    >>> read_text_file("/nonexistent/rc.toml")
    Traceback (most recent call last):
    ...
    symfilt.errors.CircuitFileError: /nonexistent/rc.toml: no such file, check the path, or use @NAME for a built-in circuit
    """
    if not isinstance(path, (str, Path)):
        raise ArgumentTypeError(f"{what} path", f"expected a path, got {type(path).__name__}",
                                "pass the file's path as text or a pathlib.Path")
    p = Path(path)
    name = p.name
    try:
        if p.is_dir():
            raise CircuitFileError(str(p), f"is a folder, not a {what}", f"give the path of a .toml {what}")
        _refuse_special(p, what)
        with open(p, "rb") as fh:  # read at most one byte past the limit: a file growing meanwhile stops there
            raw = fh.read(MAX_FILE_BYTES + 1)
        if len(raw) > MAX_FILE_BYTES:
            raise SizeLimitError(name, f"the file is over the size limit of {MAX_FILE_BYTES} bytes",
                                 "a circuit file of 200 parts fits well below it; check the file")
    except FileNotFoundError:
        raise CircuitFileError(str(p), "no such file", "check the path, or use @NAME for a built-in circuit") from None
    except PermissionError:
        raise CircuitFileError(str(p), "permission denied", "make the file readable") from None
    except OSError as exc:
        raise CircuitFileError(str(p), f"cannot be read ({exc.strerror})", "check the path") from None
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise CircuitFileError(f"{name} line {line}", f"not UTF-8 text (byte {exc.start} is {raw[exc.start]:#04x})",
                               "save the file as UTF-8 text") from None
    if "\x00" in text:
        raise CircuitFileError(name, "contains NUL bytes", "save the file as plain UTF-8 text")
    return text, name


def load_circuit(path) -> Circuit:
    """Read a circuit file.

    Parameters
    ----------
    path : str or Path

    Raises
    ------
    CircuitFileError
        When the file cannot be read or breaks the schema.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "rc.toml"
    >>> _ = p.write_text('[parts]\\nR1 = {kind = "resistor", nodes = ["in", "out"], value = "1k"}\\n'
    ...                  'C1 = {kind = "capacitor", nodes = ["out", "gnd"], value = "1u"}\\n')
    >>> load_circuit(p).part("C1").value
    1/1000000
    """
    text, name = read_text_file(path)
    return parse_circuit_text(text, name)


def _q(text: str) -> str:
    return '"' + text.replace("\\", "\\\\").replace('"', '\\"') + '"'


def _v(value) -> str:
    """Exact value as text that reads back to the same number."""
    text = format_value(value, digits=12).replace(" ", "").replace("µ", "u")
    from symfilt.model.values import parse_value

    if parse_value(text) == value:
        return _q(text)
    return _q(str(value))


def _fixture(f: Fixture) -> str:
    if not f.present:
        return _q("none")
    return _q("symbol") if f.value is None else _v(f.value)


def circuit_to_text(circuit: Circuit) -> str:
    """Write a circuit as circuit-file text (reads back to an equal circuit).

    Parameters
    ----------
    circuit : Circuit
        The circuit to write.

    Returns
    -------
    str
        TOML text in the symfilt schema.

    Examples
    --------
    >>> from symfilt.model.circuit import Part
    >>> c = Circuit.build([Part.resistor("R1", "in", "out", "4k7"), Part.capacitor("C1", "out", "0", "22n")])
    >>> parse_circuit_text(circuit_to_text(c)) == c
    True
    """
    lines = []
    if circuit.title:
        lines.append(f"title = {_q(circuit.title)}")
        lines.append("")
    lines += ["[ports]", f"input = {_q(circuit.input)}", f"output = {_q(circuit.output)}", "",
              "[source]", f"resistance = {_fixture(circuit.source)}", "",
              "[load]", f"resistance = {_fixture(circuit.load_resistance)}",
              f"capacitance = {_fixture(circuit.load_capacitance)}", ""]
    if circuit.parameters:
        lines += ["[parameters]"] + [f"{q.name} = {_q('symbol') if q.value is None else _v(q.value)}"
                                     for q in circuit.parameters] + [""]
    if circuit.probes:
        lines += ["[probes]"] + [f"{_q(label)} = {_q(node)}" for label, node in circuit.probes] + [""]
    lines.append("[parts]")
    for p in circuit.parts:
        fields = [f"kind = {_q(p.kind)}"]
        if p.kind == "opamp":
            fields += [f"plus = {_q(p.nodes[0])}", f"minus = {_q(p.nodes[1])}", f"out = {_q(p.nodes[2])}"]
            if p.model != "ideal":
                fields.append(f"model = {_q(p.model)}")
            for key in ("gain", "gbw", "pole2", "iout_max", "slew"):
                if getattr(p, key) is not None:
                    fields.append(f"{key} = {_v(getattr(p, key))}")
            for key in ("rout", "rin", "cin"):
                if getattr(p, key).present:
                    fields.append(f"{key} = {_fixture(getattr(p, key))}")
        else:
            fields.append("nodes = [" + ", ".join(_q(n) for n in p.nodes) + "]")
            if p.tie is not None:
                fields.append(f"{'gain' if p.kind in ('vcvs', 'vccs', 'ccvs', 'cccs') else 'value'} = {_q(p.tie)}")
            elif p.value is not None:
                fields.append(f"{'gain' if p.kind in ('vcvs', 'vccs', 'ccvs', 'cccs') else 'value'} = {_v(p.value)}")
            if p.control:
                fields.append(f"control = {_q(p.control)}")
        lines.append(f"{p.name} = {{ " + ", ".join(fields) + " }")
    return "\n".join(lines) + "\n"
