"""Circuit files (TOML, symfilt's own schema) to and from :class:`~symfilt.circuit.Circuit`.

The schema is in DESIGN.md and in the README. Every problem is a
:class:`~symfilt.errors.CircuitFileError` or :class:`~symfilt.errors.CircuitError`
naming the file and the place in it.
"""

from __future__ import annotations

import os
import tomllib
from pathlib import Path

from .circuit import KINDS, Circuit, Fixture, Part
from .errors import CircuitError, CircuitFileError, SymfiltError
from .values import format_value

#: Largest circuit file read, in bytes.
MAX_FILE_BYTES = 256 * 1024

_TOP_KEYS = {"title", "ports", "source", "load", "parts"}
_PART_KEYS = {
    "resistor": {"kind", "nodes", "value"},
    "capacitor": {"kind", "nodes", "value"},
    "inductor": {"kind", "nodes", "value"},
    "opamp": {"kind", "plus", "minus", "out", "model", "gain", "gbw", "iout_max", "slew"},
    "vcvs": {"kind", "nodes", "gain"},
    "vccs": {"kind", "nodes", "gain"},
    "ccvs": {"kind", "nodes", "gain", "control"},
    "cccs": {"kind", "nodes", "gain", "control"},
}


def _text(v) -> object:
    """TOML numbers stay numbers; strings are passed to the value parser as they are."""
    return v


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
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise CircuitFileError(name, f"not valid TOML ({exc})", "fix the syntax at that line") from None
    except RecursionError:
        raise CircuitFileError(name, "nesting too deep", "write a flat circuit file as in the README") from None
    return circuit_from_dict(data, name)


def circuit_from_dict(data: dict, name: str = "<data>") -> Circuit:
    """Build a circuit from the parsed TOML tables.

    Examples
    --------
    >>> circuit_from_dict({"parts": {"R1": {"kind": "resistor", "nodes": ["in", "out"]},
    ...                              "R2": {"kind": "resistor", "nodes": ["out", "0"]}}}).output
    'out'
    """
    unknown = set(data) - _TOP_KEYS
    if unknown:
        raise CircuitFileError(name, f"unknown section or key {sorted(unknown)[0]!r}",
                               "use only title, [ports], [source], [load], [parts]")
    title = data.get("title", "")
    if not isinstance(title, str):
        raise CircuitFileError(f"{name} title", "the title must be text", "write title = \"...\"")
    ports = _table(data, "ports", name)
    source = _table(data, "source", name)
    load = _table(data, "load", name)
    for label, table, keys in (("ports", ports, {"input", "output"}), ("source", source, {"resistance"}),
                               ("load", load, {"resistance", "capacitance"})):
        extra = set(table) - keys
        if extra:
            raise CircuitFileError(f"{name} [{label}]", f"unknown key {sorted(extra)[0]!r}",
                                   "use " + " and ".join(sorted(keys)))
    parts_table = data.get("parts")
    if not isinstance(parts_table, dict) or not parts_table:
        raise CircuitFileError(name, "no [parts] table", "add [parts] with one line per part")
    parts = [_part(pname, spec, name) for pname, spec in parts_table.items()]
    try:
        circuit = Circuit(
            parts=tuple(parts),
            input=_port(ports.get("input", "in"), f"{name} [ports] input"),
            output=_port(ports.get("output", "out"), f"{name} [ports] output"),
            source=Fixture.parse(_text(source.get("resistance")), f"{name} [source] resistance"),
            load_resistance=Fixture.parse(_text(load.get("resistance")), f"{name} [load] resistance"),
            load_capacitance=Fixture.parse(_text(load.get("capacitance")), f"{name} [load] capacitance"),
            title=title,
        )
        circuit.check()
    except CircuitError as exc:
        raise CircuitError(f"{name} {exc.where}", exc.what, exc.fix) from None
    except SymfiltError as exc:
        raise type(exc)(f"{name} {exc.where}", exc.what, exc.fix) from None
    return circuit


def _port(v, where: str) -> str:
    from .circuit import _node

    return _node(v, where)


def _table(data: dict, key: str, name: str) -> dict:
    v = data.get(key, {})
    if not isinstance(v, dict):
        raise CircuitFileError(f"{name} {key}", f"{key} must be a table", f"write [{key}] on a line of its own")
    return v


def _part(pname: str, spec, name: str) -> Part:
    where = f"{name} [parts] {pname}"
    if not isinstance(spec, dict):
        raise CircuitFileError(where, "a part must be an inline table", "write it as { kind = \"resistor\", nodes = [...], value = \"...\" }")
    kind = spec.get("kind")
    if kind not in KINDS:
        raise CircuitFileError(where, f"unknown kind {kind!r}" if kind is not None else "no kind given",
                               "use one of " + ", ".join(KINDS))
    extra = set(spec) - _PART_KEYS[kind]
    if extra:
        raise CircuitFileError(where, f"unknown key {sorted(extra)[0]!r} for a {kind}",
                               "use " + ", ".join(sorted(_PART_KEYS[kind])))
    try:
        if kind == "opamp":
            missing = [pin for pin in ("plus", "minus", "out") if pin not in spec]
            if missing:
                raise CircuitFileError(where, f"missing pin {missing[0]}", "give plus, minus and out")
            return Part.make(pname, kind, (spec["plus"], spec["minus"], spec["out"]),
                             model=spec.get("model", "ideal"), gain=spec.get("gain"), gbw=spec.get("gbw"),
                             iout_max=spec.get("iout_max"), slew=spec.get("slew"))
        nodes = spec.get("nodes")
        if not isinstance(nodes, list):
            raise CircuitFileError(where, "no nodes list", f"write nodes = [{', '.join(repr(k) for k in KINDS[kind])}]")
        value = spec.get("gain") if kind in ("vcvs", "vccs", "ccvs", "cccs") else spec.get("value")
        return Part.make(pname, kind, nodes, value=value, control=spec.get("control"))
    except CircuitFileError:
        raise
    except SymfiltError as exc:
        raise type(exc)(where, exc.what, exc.fix) from None


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
    p = Path(path)
    name = p.name
    try:
        if p.is_dir():
            raise CircuitFileError(str(p), "is a folder, not a circuit file", "give the path of a .toml circuit file")
        size = p.stat().st_size
        if size > MAX_FILE_BYTES:
            raise CircuitFileError(name, f"file is {size} bytes, over the limit of {MAX_FILE_BYTES}",
                                   "a circuit file of 200 parts fits well below it; check the file")
        raw = p.read_bytes()
    except FileNotFoundError:
        raise CircuitFileError(str(p), "no such file", "check the path, or use @NAME for a built-in circuit") from None
    except PermissionError:
        raise CircuitFileError(str(p), "permission denied", "make the file readable") from None
    except OSError as exc:
        raise CircuitFileError(str(p), f"cannot be read ({exc.strerror})", "check the path") from None
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise CircuitFileError(name, f"not UTF-8 text (byte {exc.start})", "save the file as UTF-8 text") from None
    if "\x00" in text:
        raise CircuitFileError(name, "contains NUL bytes", "save the file as plain UTF-8 text")
    return parse_circuit_text(text, name)


def _q(text: str) -> str:
    return '"' + text.replace("\\", "\\\\").replace('"', '\\"') + '"'


def _v(value) -> str:
    """Exact value as text that reads back to the same number."""
    text = format_value(value, digits=12).replace(" ", "").replace("µ", "u")
    from .values import parse_value

    if parse_value(text) == value:
        return _q(text)
    return _q(str(value))


def _fixture(f: Fixture) -> str:
    if not f.present:
        return _q("none")
    return _q("symbol") if f.value is None else _v(f.value)


def circuit_to_text(circuit: Circuit) -> str:
    """Write a circuit as circuit-file text (reads back to an equal circuit).

    Examples
    --------
    >>> from symfilt.circuit import Part
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
              f"capacitance = {_fixture(circuit.load_capacitance)}", "", "[parts]"]
    for p in circuit.parts:
        fields = [f"kind = {_q(p.kind)}"]
        if p.kind == "opamp":
            fields += [f"plus = {_q(p.nodes[0])}", f"minus = {_q(p.nodes[1])}", f"out = {_q(p.nodes[2])}"]
            if p.model != "ideal":
                fields.append(f"model = {_q(p.model)}")
            for key in ("gain", "gbw", "iout_max", "slew"):
                if getattr(p, key) is not None:
                    fields.append(f"{key} = {_v(getattr(p, key))}")
        else:
            fields.append("nodes = [" + ", ".join(_q(n) for n in p.nodes) + "]")
            if p.value is not None:
                fields.append(f"{'gain' if p.kind in ('vcvs', 'vccs', 'ccvs', 'cccs') else 'value'} = {_v(p.value)}")
            if p.control:
                fields.append(f"control = {_q(p.control)}")
        lines.append(f"{p.name} = {{ " + ", ".join(fields) + " }")
    return "\n".join(lines) + "\n"
