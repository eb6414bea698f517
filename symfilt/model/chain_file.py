"""Chain files (TOML, symfilt's own schema) to :class:`~symfilt.model.chain.Chain`.

::

    title = "Bridge sensor to 16-bit converter"

    [source]                  # what drives the first stage (R_s): a value, "symbol" or "none"
    resistance = "5k"

    [load]                    # what the last stage drives (R_L, C_L)
    resistance = "1M"
    capacitance = "20p"

    [[stage]]
    name = "anti-alias RC"    # optional (default "stage 1", ...)
    circuit = "rc.toml"       # a circuit file, relative to the chain file, or "@name" of a built-in
    values = { R1 = "1k", C1 = "4n7" }   # optional: values put into that stage

    [[stage]]
    circuit = "@sallen-key-lowpass"

A stage's own ``[source]`` and ``[load]`` are not used in a chain (the stages around it
take their place); its ``[probes]`` are not used either.
"""

from __future__ import annotations

from pathlib import Path

from symfilt.errors import CircuitFileError, SymfiltError
from symfilt.model.chain import MAX_STAGES, Chain, ChainStage
from symfilt.model.circuit import Fixture, clip_name
from symfilt.model.circuit_file import MAX_TITLE, load_circuit, read_text_file, read_toml
from symfilt.model.names import suggest

_TOP = {"title", "source", "load", "stage"}
_STAGE = {"name", "circuit", "values"}


def _stage(k: int, spec, name: str, base: Path) -> ChainStage:
    where = f"{name} stage {k}"
    if not isinstance(spec, dict):
        raise CircuitFileError(where, "a stage is a table", "write [[stage]] and circuit = \"...\" under it")
    extra = set(spec) - _STAGE
    if extra:
        key = sorted(extra)[0]
        raise CircuitFileError(where, f"unknown key {clip_name(key)!r}", suggest(key, _STAGE) + "use circuit, name, values")
    ref = spec.get("circuit")
    if not isinstance(ref, str) or not ref.strip():
        raise CircuitFileError(where, "no circuit", "write circuit = \"stage.toml\" or circuit = \"@rc-lowpass\"")
    label = spec.get("name", f"stage {k}")
    if not isinstance(label, str) or not label.strip() or len(label) > MAX_TITLE:
        raise CircuitFileError(f"{where} name", "a stage name is short text", "write name = \"anti-alias RC\"")
    values = spec.get("values", {})
    if not isinstance(values, dict) or any(isinstance(v, (dict, list, bool)) for v in values.values()):
        raise CircuitFileError(f"{where} values", "values is a table of part = value",
                               "write values = { R1 = \"1k\", C1 = \"4n7\" }")
    from symfilt.model import catalogue

    try:
        circuit = catalogue.build(ref.strip()) if ref.strip().startswith("@") else load_circuit(base / ref)
        if values:
            circuit = circuit.with_values(values)
    except SymfiltError as exc:
        raise type(exc)(f"{where} ({clip_name(ref)}): {exc.where}", exc.what, exc.fix) from None
    return ChainStage(label.strip(), circuit.without_fixtures(), ref.strip())


def parse_chain_text(text: str, name: str = "<text>", base: Path | str = ".") -> Chain:
    """A chain from the text of a chain file.

    Parameters
    ----------
    text : str
        TOML text in the chain schema (module docstring).
    name : str
        The file name errors start with.
    base : path
        The folder stage files are relative to.

    Returns
    -------
    Chain

    Examples
    --------
    >>> ch = parse_chain_text('''
    ... [source]
    ... resistance = "5k"
    ... [[stage]]
    ... circuit = "@rc-lowpass"
    ... values = { R1 = "1k" }
    ... [[stage]]
    ... circuit = "@sallen-key-lowpass"
    ... ''')
    >>> [st.name for st in ch.stages], ch.stages[0].circuit.part("R1").value, ch.source.value
    (['stage 1', 'stage 2'], 1000, 5000)
    """
    data = read_toml(text, name)
    unknown = set(data) - _TOP
    if unknown:
        key = sorted(unknown)[0]
        raise CircuitFileError(name, f"unknown section or key {clip_name(key)!r}",
                               suggest(key, _TOP) + "a chain file has title, [source], [load] and [[stage]] tables")
    stages = data.get("stage")
    if not isinstance(stages, list) or not stages:
        raise CircuitFileError(name, "no [[stage]] tables", "add one [[stage]] table per stage, in signal order")
    if len(stages) > MAX_STAGES:
        raise CircuitFileError(name, f"{len(stages)} stages is over the limit of {MAX_STAGES}",
                               "study a shorter run of stages")
    title = data.get("title", "")
    if not isinstance(title, str) or len(title) > MAX_TITLE or any(ord(ch) < 32 for ch in title):
        raise CircuitFileError(f"{name} title", "the title is one line of text", "write title = \"...\"")
    tables = {}
    for key, keys in (("source", {"resistance"}), ("load", {"resistance", "capacitance"})):
        t = data.get(key, {})
        if not isinstance(t, dict):
            raise CircuitFileError(f"{name} {key}", f"{key} must be a table", f"write [{key}] on a line of its own")
        if set(t) - keys:
            bad = sorted(set(t) - keys)[0]
            raise CircuitFileError(f"{name} [{key}]", f"unknown key {clip_name(bad)!r}",
                                   suggest(bad, keys) + "use " + " and ".join(sorted(keys)))
        tables[key] = t
    base = Path(base)
    built = tuple(_stage(k, spec, name, base) for k, spec in enumerate(stages, start=1))
    try:
        return Chain(built, source=Fixture.parse(tables["source"].get("resistance"), "[source] resistance"),
                     load_resistance=Fixture.parse(tables["load"].get("resistance"), "[load] resistance"),
                     load_capacitance=Fixture.parse(tables["load"].get("capacitance"), "[load] capacitance"),
                     title=title, base=str(base))
    except SymfiltError as exc:
        raise type(exc)(f"{name} {exc.where}", exc.what, exc.fix) from None


def load_chain(path) -> Chain:
    """Read a chain file; its stage files are found relative to it.

    Parameters
    ----------
    path : str or Path

    Returns
    -------
    Chain

    Examples
    --------
    >>> import tempfile, pathlib
    >>> d = pathlib.Path(tempfile.mkdtemp())
    >>> _ = (d / "rc.toml").write_text('[parts]\\nR1 = {kind = "resistor", nodes = ["in", "out"], value = "1k"}\\n'
    ...                                'C1 = {kind = "capacitor", nodes = ["out", "gnd"], value = "1u"}\\n')
    >>> _ = (d / "chain.toml").write_text('[[stage]]\\ncircuit = "rc.toml"\\n[[stage]]\\ncircuit = "rc.toml"\\n')
    >>> [len(st.circuit.parts) for st in load_chain(d / "chain.toml").stages]
    [2, 2]
    """
    text, name = read_text_file(path, "chain file")
    return parse_chain_text(text, name, Path(path).parent)
