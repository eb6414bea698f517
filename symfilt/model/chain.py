"""Chains of stages: stages connected output to input, as one circuit.

A :class:`Chain` is an ordered list of stages (each a :class:`~symfilt.model.circuit.Circuit`),
the source fixture that drives the first and the load on the last. :func:`connect`
writes any run of its stages as one circuit: stage k's output node is stage k+1's input
node, every node inside a stage is prefixed by its stage (``s2.mid``), and a unity-gain
buffer (an ideal op-amp follower) can be put at any interface. The stages' own
``[source]`` and ``[load]`` are not used: in a chain, what drives a stage is the stage
before it, and what loads it is the stage after it.

Names: a part (or parameter) keeps its name unless an earlier stage already uses it;
then it gets its stage number as a suffix (``R1`` of stage 2 becomes ``R1_2``), and its
op-amp parameters follow (``A_U1_2``). :meth:`Chain.names` lists every rename.

Examples
--------
>>> from symfilt import catalogue
>>> ch = Chain((ChainStage("RC", catalogue.build("rc-lowpass")),
...             ChainStage("RC again", catalogue.build("rc-lowpass"))), source=Fixture.parse("1k", "source"))
>>> c = connect(ch)
>>> sorted(p.name for p in c.parts), c.input, c.output
(['C1', 'C1_2', 'R1', 'R1_2'], 'in', 'out')
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

from symfilt.errors import CircuitError, SizeLimitError
from symfilt.model.circuit import GROUND, Circuit, Fixture, Parameter, Part
from symfilt.model.expression import tokens
from symfilt.model.structure import MAX_PARTS

#: Most stages a chain may have.
MAX_STAGES = 12


@dataclass(frozen=True)
class ChainStage:
    """One stage of a chain.

    Parameters
    ----------
    name : str
        What the reports call it ("anti-alias RC").
    circuit : Circuit
        The stage as designed (its own source and load fixtures are not used).
    origin : str
        Where it came from (a file name or ``@name``), for the reports.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> ChainStage("RC", catalogue.build("rc-lowpass"), "@rc-lowpass").origin
    '@rc-lowpass'
    """

    name: str
    circuit: Circuit
    origin: str = ""


@dataclass(frozen=True)
class Chain:
    """Stages connected output to input, driven through ``source`` and loaded by ``load_*``.

    Parameters
    ----------
    stages : tuple of ChainStage
        In signal order; at least one.
    source : Fixture
        The source resistance R_s that drives the first stage.
    load_resistance, load_capacitance : Fixture
        The load R_L and C_L on the last stage.
    title : str
    base : str
        The folder the stage files are relative to (the chain file's).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> ch = Chain((ChainStage("RC", catalogue.build("rc-lowpass")),))
    >>> len(ch.stages), ch.interfaces()
    (1, [])
    """

    stages: tuple[ChainStage, ...]
    source: Fixture = field(default_factory=Fixture)
    load_resistance: Fixture = field(default_factory=Fixture)
    load_capacitance: Fixture = field(default_factory=Fixture)
    title: str = ""
    base: str = "."

    def __post_init__(self) -> None:
        if not self.stages:
            raise CircuitError("chain", "the chain has no stages", "list at least one [[stage]]")
        if len(self.stages) > MAX_STAGES:
            raise SizeLimitError("chain", f"{len(self.stages)} stages is over the limit of {MAX_STAGES}",
                                 "split the chain and study it in parts")
        for k, st in enumerate(self.stages, start=1):
            if st.circuit.input == st.circuit.output:
                raise CircuitError(f"chain stage {k} ({st.name})", "its input and output are the same node",
                                   "put a shunt part into the stage before or after it")
        total = sum(len(st.circuit.parts) for st in self.stages)
        if total > MAX_PARTS:
            raise SizeLimitError("chain", f"the stages have {total} parts together, over the limit of {MAX_PARTS}",
                                 "study a shorter run of stages")

    def files(self) -> list:
        """The stage files the chain was read from (built-ins left out), as paths.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> Chain((ChainStage("RC", catalogue.build("rc-lowpass"), "@rc-lowpass"),)).files()
        []
        """
        from pathlib import Path

        return [Path(self.base) / st.origin for st in self.stages if st.origin and not st.origin.startswith("@")]

    def interfaces(self) -> list[str]:
        """The interface nodes, between stage k and k+1 (``x1``, ``x2``, ...).

        Examples
        --------
        >>> from symfilt import catalogue
        >>> rc = ChainStage("RC", catalogue.build("rc-lowpass"))
        >>> Chain((rc, rc, rc)).interfaces()
        ['x1', 'x2']
        """
        return [f"x{k}" for k in range(1, len(self.stages))]

    def names(self) -> list[dict[str, str]]:
        """For each stage, the names that change in the chain: name in its file -> name in the chain.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> rc = ChainStage("RC", catalogue.build("rc-lowpass"))
        >>> Chain((rc, rc)).names()
        [{}, {'R1': 'R1_2', 'C1': 'C1_2'}]
        """
        used: set[str] = set()
        out = []
        for k, st in enumerate(self.stages, start=1):
            own = [p.name for p in st.circuit.parts] + [q.name for q in st.circuit.parameters]
            symbols = {s for p in st.circuit.parts for s in p.symbols()}
            renames = {}
            for name in own:
                if name in used:
                    new = f"{name}_{k}"
                    while new in used or new in own:
                        new += "x"
                    renames[name] = new
            used |= {renames.get(n, n) for n in own} | {_renamed_symbol(s, renames) for s in symbols}
            out.append(renames)
        return out


def _renamed_symbol(symbol: str, renames: dict[str, str]) -> str:
    """An op-amp parameter's symbol (``A_U1``) after its op-amp is renamed."""
    head, _, owner = symbol.partition("_")
    return f"{head}_{renames[owner]}" if owner in renames else renames.get(symbol, symbol)


def stage_nodes(chain: Chain, k: int) -> tuple[str, str]:
    """(input node, output node) of stage k (0-based) in the connected circuit.

    Parameters
    ----------
    chain : Chain
    k : int
        The stage's index, 0-based.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> rc = ChainStage("RC", catalogue.build("rc-lowpass"))
    >>> [stage_nodes(Chain((rc, rc, rc)), k) for k in range(3)]
    [('in', 'x1'), ('x1', 'x2'), ('x2', 'out')]
    """
    n = len(chain.stages)
    return ("in" if k == 0 else f"x{k}"), ("out" if k == n - 1 else f"x{k + 1}")


def _stage_parts(chain: Chain, k: int, renames: dict[str, str], buffered_input: bool) -> list[Part]:
    """Stage k's parts with the chain's names and nodes."""
    c = chain.stages[k].circuit
    a, b = stage_nodes(chain, k)
    if buffered_input:
        a += "b"

    def node(n: str) -> str:
        if n == GROUND:
            return n
        if n == c.input:
            return a
        if n == c.output:
            return b
        return f"s{k + 1}.{n}"

    def tie(text: str | None) -> str | None:
        if text is None:
            return None
        return "".join(renames.get(t, t) if kind == "name" else t for kind, t in tokens(text, "tie"))

    return [replace(p, name=renames.get(p.name, p.name), nodes=tuple(node(n) for n in p.nodes),
                    control=None if p.control is None else renames.get(p.control, p.control), tie=tie(p.tie))
            for p in c.parts]


def connect(chain: Chain, first: int = 0, last: int | None = None, *, buffers=(), source: bool = True,
            load: bool = True) -> Circuit:
    """Stages ``first`` .. ``last - 1`` (0-based) as one circuit.

    Parameters
    ----------
    chain : Chain
    first, last : int
        The run of stages (default: all of them).
    buffers : iterable of int
        Interfaces (1-based: interface k is between stage k and stage k + 1) that get a
        unity-gain buffer, an ideal op-amp follower with its input on ``xk`` and its output
        on ``xkb``, where the next stage now starts.
    source, load : bool
        Keep the chain's source fixture (when the run starts at the first stage) and its
        load (when it ends at the last); otherwise the run's input is driven ideally and
        its output is open.

    Returns
    -------
    Circuit
        Input port: the first stage's input node; output port: the last stage's output node.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> rc = ChainStage("RC", catalogue.build("rc-lowpass"))
    >>> c = connect(Chain((rc, rc)), buffers=[1])
    >>> [p.name for p in c.parts if p.kind == "opamp"], c.part("R1_2").nodes
    (['U_buffer1'], ('x1b', 'out'))
    """
    n = len(chain.stages)
    last = n if last is None else last
    if not 0 <= first < last <= n:
        raise ValueError(f"no run of stages {first}..{last} in a chain of {n}")
    buffers = set(buffers)
    names = chain.names()
    parts: list[Part] = []
    params: list[Parameter] = []
    for k in range(first, last):
        renames = names[k]
        parts += _stage_parts(chain, k, renames, buffered_input=k > first and k in buffers)
        params += [replace(q, name=renames.get(q.name, q.name)) for q in chain.stages[k].circuit.parameters]
        if k + 1 < last and k + 1 in buffers:
            node = stage_nodes(chain, k)[1]
            parts.append(Part.opamp(_buffer_name(chain, k + 1), node, node + "b", node + "b"))
    c = Circuit(parts=tuple(parts), input=stage_nodes(chain, first)[0], output=stage_nodes(chain, last - 1)[1],
                source=chain.source if source and first == 0 else Fixture(),
                load_resistance=chain.load_resistance if load and last == n else Fixture(),
                load_capacitance=chain.load_capacitance if load and last == n else Fixture(),
                title=chain.title, parameters=tuple(params))
    c.check()
    return c


def _buffer_name(chain: Chain, k: int) -> str:
    """A name for the buffer at interface k that no part of the chain has."""
    taken = {p.name for st in chain.stages for p in st.circuit.parts} | {
        new for renames in chain.names() for new in renames.values()}
    name = f"U_buffer{k}"
    while name in taken:
        name = "U_" + name
    return name
