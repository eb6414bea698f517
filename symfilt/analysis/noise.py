"""Noise sources of a stage and their exact transfers to the output, loaded and ideal.

Each noise source is put into the circuit by a small transformation and solved through
the engine's one entry point (:func:`symfilt.engine.solve.solve_unknown`), with the
signal source zeroed (R_s kept as a resistor to ground, the input grounded without it)
and the load kept:

* a resistor between nodes a and b: a unit current injected from a to b (its thermal
  noise as a parallel current source of density 4kT/R A²/Hz, so its share of the output
  density is (4kT/R)·|Z(jω)|², Z the transfer impedance to the output);
* an op-amp's voltage noise: a unit voltage in series with its + input (so its
  transfer is the noise gain);
* an op-amp's current noise: a unit current into each input, uncorrelated, same density.

The injected part is a controlled source driven from an internal node; its name and
the internal nodes hold a character no user name may hold (``:``, NUL), so they never
meet a part, node or symbol of the circuit (:mod:`symfilt.model.names`).

The ideal view takes each transfer's limits R_s -> 0, R_L -> oo, C_L -> 0 exactly
(:meth:`NetworkFunction.ideal`); the sources of R_s and R_L have none there.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import sympy

from symfilt.analysis.network import NetworkFunction
from symfilt.engine.elimination import DEFAULT_MAX_TERMS
from symfilt.engine.solve import solve_unknown
from symfilt.model.circuit import GROUND, LOAD_R, SOURCE_R, Circuit, Part, part_symbol
from symfilt.model.fixture import Fixture
from symfilt.model.noise import NoiseSpec
from symfilt.model.stamps import Unknown

#: The internal node that drives every injected source (NUL is refused in user node names).
DRIVE_NODE = "\x00noise"


@dataclass(frozen=True)
class NoiseSource:
    """One noise source of the stage.

    Parameters
    ----------
    name : str
        ``R1``, ``R_s``, ``R_L``, ``U1 en``, ``U1 in+``, ``U1 in-``.
    kind : {"thermal", "voltage", "current"}
        A resistor's thermal noise, an op-amp's voltage or current noise.
    part : str
        The part it belongs to (``R_s`` and ``R_L`` for the fixtures).
    level : sympy.Expr
        The white power density of the injected quantity: 4kT/R (A²/Hz, for a resistor's
        parallel noise current), en² (V²/Hz), in² (A²/Hz), in the circuit's symbols.
    corner : sympy.Rational or None
        The 1/f corner (Hz): the density is level·(1 + corner/f).

    Examples
    --------
    >>> NoiseSource("U1 en", "voltage", "U1", sympy.Symbol("en_U1") ** 2).unit
    'V²/Hz'
    """

    name: str
    kind: str
    part: str
    level: sympy.Expr
    corner: sympy.Rational | None = None

    @property
    def unit(self) -> str:
        """Unit of :attr:`level`: V²/Hz for a voltage source, else A²/Hz.

        Examples
        --------
        >>> NoiseSource("R1", "thermal", "R1", sympy.Integer(1)).unit
        'A²/Hz'
        """
        return "V²/Hz" if self.kind == "voltage" else "A²/Hz"


@dataclass(frozen=True)
class NoiseTerm:
    """A noise source and its exact transfer to the output (V per A or per V).

    Parameters
    ----------
    source : NoiseSource
    transfer : NetworkFunction

    Examples
    --------
    >>> t = NoiseTerm(NoiseSource("R1", "thermal", "R1", sympy.Integer(1)), NetworkFunction.from_expr(sympy.Integer(2)))
    >>> t.transfer.as_expr()
    2
    """

    source: NoiseSource
    transfer: NetworkFunction


@dataclass(frozen=True)
class NoiseAnalysis:
    """Every noise source with its transfer, loaded and ideal, and the signal transfer.

    Parameters
    ----------
    circuit : Circuit
    spec : NoiseSpec
    loaded, ideal : tuple of NoiseTerm
    signal_loaded, signal_ideal : NetworkFunction
        The signal's transfer H(s), for the input-referred noise.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> n = derive_noise(catalogue.build("rc-lowpass"))
    >>> [t.source.name for t in n.loaded], [t.source.name for t in n.ideal]
    (['R1', 'R_s'], ['R1'])
    """

    circuit: Circuit
    spec: NoiseSpec
    loaded: tuple
    ideal: tuple
    signal_loaded: NetworkFunction
    signal_ideal: NetworkFunction

    def values(self) -> dict:
        """Symbol -> exact value for the circuit's symbols and the op-amps' en and in.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> sorted(str(k) for k in derive_noise(catalogue.build("rc-lowpass")).values())
        ['C1', 'R1', 'R_L', 'R_s']
        """
        out = dict(self.circuit.values())
        for o in self.spec.opamps:
            for sym, v in zip(o.symbols(), (o.en, o.in_)):
                if v is not None:
                    out[part_symbol(sym)] = v
        return out


def noise_sources(circuit: Circuit, spec: NoiseSpec) -> list[NoiseSource]:
    """The noise sources of ``circuit``: each resistor, R_s, R_L when thermal, each op-amp's en and in.

    Parameters
    ----------
    circuit : Circuit
    spec : NoiseSpec

    Examples
    --------
    >>> from symfilt import catalogue
    >>> [(s.name, str(s.level)) for s in noise_sources(catalogue.build("rc-lowpass"), NoiseSpec())]
    [('R1', '4141947/(250000000000000000000000000*R1)'), ('R_s', '4141947/(250000000000000000000000000*R_s)')]
    """
    ties = circuit.ties()
    out = []
    for p in circuit.parts:
        if p.kind == "resistor":
            out.append(NoiseSource(p.name, "thermal", p.name, spec.four_kt / ties.get(p.name, p.symbol)))
    if circuit.source.present:
        out.append(NoiseSource(SOURCE_R, "thermal", SOURCE_R, spec.four_kt / part_symbol(SOURCE_R)))
    if spec.load_thermal and circuit.load_resistance.present:
        out.append(NoiseSource(LOAD_R, "thermal", LOAD_R, spec.four_kt / part_symbol(LOAD_R)))
    for p in circuit.parts:
        if p.kind != "opamp":
            continue
        o = spec.opamp(p.name)
        en, in_ = (part_symbol(x) for x in o.symbols())
        if o.en is not None:
            out.append(NoiseSource(f"{p.name} en", "voltage", p.name, en**2, o.fc_en))
        if o.in_ is not None:
            for pin, node in (("+", p.nodes[0]), ("-", p.nodes[1])):
                if node != GROUND:
                    out.append(NoiseSource(f"{p.name} in{pin}", "current", p.name, in_**2, o.fc_in))
    return out


def _grounded(circuit: Circuit) -> list[Part]:
    """The parts with the signal source zeroed: R_s a resistor to ground, or the input grounded."""
    if circuit.source.present:
        rs = Part(name=SOURCE_R, kind="resistor", nodes=(circuit.input, GROUND), value=circuit.source.value)
        return [*circuit.parts, rs]
    parts = []
    for p in circuit.parts:
        nodes = tuple(GROUND if n == circuit.input else n for n in p.nodes)
        if p.kind in ("resistor", "capacitor", "inductor") and nodes[0] == nodes[1]:
            continue  # shorted by the grounded input: carries no noise to the output
        parts.append(replace(p, nodes=nodes))
    return parts


def injected_circuit(circuit: Circuit, source: NoiseSource) -> Circuit:
    """The circuit with the signal source zeroed, the load kept and a unit ``source`` driven from :data:`DRIVE_NODE`.

    Parameters
    ----------
    circuit : Circuit
    source : NoiseSource

    Examples
    --------
    >>> from symfilt import catalogue
    >>> c = catalogue.build("rc-lowpass")
    >>> [p.name for p in injected_circuit(c, noise_sources(c, NoiseSpec())[0]).parts]
    ['R1', 'C1', 'R_s', 'N:R1']
    """
    parts = _grounded(circuit)
    gain = f"N:{source.name.replace(' ', ':')}"
    if source.kind == "thermal":
        if source.part == LOAD_R:
            a, b = circuit.output, GROUND
        else:
            a, b = next(p.nodes for p in parts if p.name == source.part)
        parts.append(Part(name=gain, kind="vccs", nodes=(a, b, DRIVE_NODE, GROUND)))
    elif source.kind == "current":
        amp = circuit.part(source.part)
        node = amp.nodes[0] if source.name.endswith("+") else amp.nodes[1]
        node = GROUND if node == circuit.input and not circuit.source.present else node
        parts.append(Part(name=gain, kind="vccs", nodes=(GROUND, node, DRIVE_NODE, GROUND)))
    else:
        inner = f"\x00{source.part}:en"
        parts = [replace(p, nodes=(inner, *p.nodes[1:])) if p.name == source.part else p for p in parts]
        plus = next(p for p in _grounded(circuit) if p.name == source.part).nodes[0]
        parts.append(Part(name=gain, kind="vcvs", nodes=(inner, plus, DRIVE_NODE, GROUND)))
    return replace(circuit, parts=tuple(parts), input=DRIVE_NODE, source=Fixture(), title=circuit.title)


def noise_transfer(circuit: Circuit, source: NoiseSource, *, max_terms: int = DEFAULT_MAX_TERMS) -> NetworkFunction:
    """The exact transfer from ``source`` (per A or per V) to the output voltage, with the load kept.

    Parameters
    ----------
    circuit : Circuit
    source : NoiseSource
    max_terms : int
        Size budget of the elimination.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> c = catalogue.build("rc-lowpass").without_fixtures()
    >>> noise_transfer(c, noise_sources(c, NoiseSpec())[0]).as_expr()
    R1/(C1*R1*s + 1)
    """
    inj = injected_circuit(circuit, source)
    gain = inj.parts[-1].name
    ratio = solve_unknown(inj, Unknown("V", circuit.output), drive="transfer", max_terms=max_terms,
                          where=circuit.title or "circuit")
    ratio = ratio.subs({gain: 1})
    return NetworkFunction.from_ratio(ratio)


def derive_noise(circuit: Circuit, spec: NoiseSpec | None = None, *,
                 max_terms: int = DEFAULT_MAX_TERMS) -> NoiseAnalysis:
    """Every noise source of the stage with its exact transfer to the output, loaded and ideal.

    Parameters
    ----------
    circuit : Circuit
    spec : NoiseSpec, optional
        Temperature and op-amp noise (default: 300 K, noiseless op-amps).
    max_terms : int
        Size budget of each elimination.

    Returns
    -------
    NoiseAnalysis
        Terms whose transfer is zero (a resistor the grounded input shorts) are left out.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> n = derive_noise(catalogue.build("rc-lowpass").without_fixtures())
    >>> n.loaded[0].transfer.as_expr()
    R1/(C1*R1*s + 1)
    """
    from symfilt.analysis.network import derive

    spec = spec if spec is not None else NoiseSpec()
    loaded, ideal = [], []
    kept = {p.name for p in _grounded(circuit)} | {LOAD_R}
    for source in noise_sources(circuit, spec):
        if source.part not in kept:
            continue  # a resistor across the grounded input
        h = noise_transfer(circuit, source, max_terms=max_terms)
        if h.as_expr() == 0:
            continue
        loaded.append(NoiseTerm(source, h))
        if source.part not in (SOURCE_R, LOAD_R):
            hi = h.ideal()
            if hi.as_expr() != 0:
                ideal.append(NoiseTerm(source, hi))
    signal = derive(circuit, max_terms=max_terms)
    return NoiseAnalysis(circuit=circuit, spec=spec, loaded=tuple(loaded), ideal=tuple(ideal),
                         signal_loaded=signal, signal_ideal=signal.ideal())
