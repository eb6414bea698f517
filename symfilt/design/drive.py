"""Op-amp drive check: output voltage, output current and slew rate at a signal.

For a sine of peak amplitude A at the source (behind R_s) and frequency f, each
op-amp's output node voltage comes from the exact transfer V(out)/V(source)
(the circuit's MNA system solved for that node, with the load kept at the output
port), evaluated at s = j 2 pi f. The output current is the sum of the currents
leaving the op-amp's output node through every part connected to it (the
feedback network), plus the load when the op-amp drives the output port; each
is (V_out - V_n) / Z with V_n from the transfer to the neighbouring node. The
total is cross-checked against the op-amp's own branch current in the MNA
solution. The slew rate a sine needs is 2 pi f V_peak (common practice).

Examples
--------
>>> from symfilt import catalogue
>>> r = drive(catalogue.build("inverting-lowpass"), 1, 1000)
>>> d = r.opamps[0]
>>> d.name, round(d.vout_peak_v, 4), round(d.iout_peak_a * 1e3, 4)
('U1', 1.7404, 0.9507)
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Mapping


from symfilt.model.circuit import GROUND, LOAD_C, LOAD_R, SOURCE_R, Circuit, S
from symfilt.engine.elimination import DEFAULT_MAX_TERMS
from symfilt.engine.solve import solve_unknown
from symfilt.model.safe import require
from symfilt.model.stamps import SOURCE_NODE, Unknown
from symfilt.errors import UsageError
from symfilt.analysis.network import NetworkFunction
from symfilt.model.values import parse_value


def node_transfer(circuit: Circuit, unknown, *, max_terms: int = DEFAULT_MAX_TERMS) -> NetworkFunction:
    """The exact ratio of an MNA unknown to the source voltage, fixtures kept in place.

    Parameters
    ----------
    circuit : Circuit
    unknown : str or Unknown
        A node name (its voltage), ``I(<part>)`` for the branch current of a
        voltage-type part (op-amp, vcvs, ccvs; the current flows from the node
        into the part's output), or an :class:`symfilt.model.stamps.Unknown`
        (read as :func:`symfilt.engine.solve.solve_unknown` reads it).
    max_terms : int

    Examples
    --------
    >>> import sympy
    >>> from symfilt import catalogue
    >>> h = node_transfer(catalogue.build("noninverting-lowpass"), "a")
    >>> sympy.factor(h.as_expr())
    1/(C1*R1*s + C1*R_s*s + 1)
    """
    return NetworkFunction.from_ratio(solve_unknown(circuit, unknown, drive="transfer", max_terms=max_terms),
                                      "transfer")


@dataclass(frozen=True)
class BranchCurrent:
    """The peak current leaving an op-amp's output node through one part.

    Parameters
    ----------
    part : str
        Part or fixture name (``R_L``, ``C_L`` for the load).
    node : str
        The part's other node (``0`` for ground, :data:`symfilt.model.stamps.SOURCE_NODE` for
        R_s's end at the source, a name no user node can have).
    peak_a : float
        Peak current in A.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> b = drive(catalogue.build("inverting-lowpass"), 1, 1000).opamps[0].branches[-1]
    >>> b.part, b.node, round(b.peak_a * 1e3, 4)
    ('R_L', '0', 0.8702)
    """

    part: str
    node: str
    peak_a: float


@dataclass(frozen=True)
class OpampDrive:
    """What one op-amp has to deliver.

    Parameters
    ----------
    name, node : str
        The op-amp and its output node.
    vout_peak_v, iout_peak_a : float
        Peak output voltage (V) and current (A).
    slew_v_per_us : float
        2 pi f V_peak in V/µs.
    branches : tuple of BranchCurrent
        The current into each part at the output node.
    other_peak_a : float
        Peak of whatever the output current sends elsewhere (controlled sources, other outputs);
        zero for a plain RC network.
    iout_max_a, slew_limit_v_per_us : float or None
        The op-amp's limits (A, V/µs), when given on the part.
    iout_exceeded, slew_exceeded : bool or None
        True when the need passes the limit; None when there is no limit.
    vout_transfer : NetworkFunction
        V(out of the op-amp) / V(source), exact.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> d = drive(catalogue.build("inverting-lowpass"), 1, 1000).opamps[0]
    >>> [b.part for b in d.branches], round(d.slew_v_per_us, 5), d.exceeded
    (['R2', 'C1', 'R_L'], 0.01094, False)
    """

    name: str
    node: str
    vout_peak_v: float
    iout_peak_a: float
    slew_v_per_us: float
    branches: tuple
    other_peak_a: float
    iout_max_a: float | None
    slew_limit_v_per_us: float | None
    iout_exceeded: bool | None
    slew_exceeded: bool | None
    vout_transfer: NetworkFunction = field(compare=False, repr=False, default=None)

    @property
    def exceeded(self) -> bool:
        """True when a limit given on the part is passed.

        Examples
        --------
        >>> OpampDrive("U1", "out", 1.0, 1e-3, 1.0, (), 0.0, 5e-4, None, True, None).exceeded
        True
        """
        return bool(self.iout_exceeded or self.slew_exceeded)


@dataclass(frozen=True)
class DriveResult:
    """The outcome of :func:`drive`.

    Parameters
    ----------
    amplitude : float
        Peak volts at the source.
    frequency : float
        Hz.
    opamps : tuple of OpampDrive
        One per op-amp, in the circuit's order.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> r = drive(catalogue.build("inverting-lowpass"), "0.5", "1k")
    >>> r.amplitude, r.frequency, [d.name for d in r.opamps]
    (0.5, 1000.0, ['U1'])
    """

    amplitude: float
    frequency: float
    opamps: tuple


def _at(h: NetworkFunction, values: Mapping, s_value: complex) -> complex:
    return complex(h.evaluate(values, [s_value])[0])


def drive(circuit: Circuit, amplitude, frequency, *, max_terms: int = DEFAULT_MAX_TERMS) -> DriveResult:
    """Peak output voltage, output current and slew rate of every op-amp at a sine input.

    Parameters
    ----------
    circuit : Circuit
        Every part the op-amps see needs a value.
    amplitude : number or value text
        Peak volts at the source (behind R_s).
    frequency : number or value text
        Hz (``"10k"``); 0 is DC.
    max_terms : int

    Returns
    -------
    DriveResult

    Raises
    ------
    UsageError
        No op-amp, a part without a value, or a non-positive amplitude.

    Examples
    --------
    >>> from symfilt.model.circuit import Part
    >>> c = Circuit.build([Part.resistor("R1", "in", "n", "10k"), Part.resistor("R2", "n", "out", "22k"),
    ...                    Part.opamp("U1", "0", "n", "out", iout_max="1m")], load="2k")
    >>> d = drive(c, 1, "1k").opamps[0]
    >>> round(d.vout_peak_v, 6), round(d.iout_peak_a * 1e3, 6), d.iout_exceeded
    (2.2, 1.2, True)
    """
    require(circuit, Circuit, "drive circuit", "build one with Circuit.build or load_circuit")
    amp, freq = _read_signal(amplitude, frequency)
    opamps = [p for p in circuit.parts if p.kind == "opamp"]
    if not opamps:
        raise UsageError("drive", "the circuit has no op-amp", "add one, or use derive to see the passive stage")
    probe = _Probe(circuit, circuit.values(), 2j * math.pi * freq, max_terms)
    return DriveResult(amp, freq, tuple(_opamp_drive(probe, op, amp, freq) for op in opamps))


def _read_signal(amplitude, frequency) -> tuple[float, float]:
    amp = float(parse_value(amplitude, where="--amplitude"))
    freq = float(parse_value(frequency, where="--frequency"))
    if amp <= 0:
        raise UsageError("--amplitude", f"{amp:g} V is not a positive peak amplitude", "give the peak volts, e.g. 1")
    if freq < 0:
        raise UsageError("--frequency", f"{freq:g} Hz is negative", "give a frequency of 0 Hz or more")
    return amp, freq


class _Probe:
    """Node voltages and admittances of a circuit at one complex frequency (transfers derived once each)."""

    def __init__(self, circuit: Circuit, values: Mapping, s_value: complex, max_terms: int):
        self.circuit, self.values, self.s_value, self.max_terms = circuit, values, s_value, max_terms
        self.transfers: dict[Unknown, NetworkFunction] = {}

    def transfer(self, unknown: Unknown) -> NetworkFunction:
        if unknown not in self.transfers:
            h = node_transfer(self.circuit, unknown, max_terms=self.max_terms)
            missing = sorted(str(x) for x in h.free_symbols() - {S} if x not in self.values)
            if missing:
                raise UsageError("drive", "no value for " + ", ".join(missing), "give every part a value")
            self.transfers[unknown] = h
        return self.transfers[unknown]

    def at(self, unknown: Unknown) -> complex:
        return _at(self.transfer(unknown), self.values, self.s_value)

    def voltage(self, node: str) -> complex:
        return 0j if node == GROUND else self.at(Unknown("V", node))

    def admittance(self, kind: str, value, name: str) -> complex:
        v = float(value)
        if kind == "resistor":
            return 1 / v
        if kind == "capacitor":
            return self.s_value * v
        if self.s_value == 0:
            raise UsageError("--frequency", f"at 0 Hz the inductor {name} at an op-amp output is a short",
                             "give a frequency above 0 Hz")
        return 1 / (self.s_value * v)


def _output_items(circuit: Circuit, node: str, values: Mapping) -> list[tuple]:
    """(name, kind, value, other node) of every part and fixture at an op-amp's output node."""
    items = [(p.name, p.kind, values.get(p.symbol), p.nodes[1] if p.nodes[0] == node else p.nodes[0])
             for p in circuit.parts if p.kind in ("resistor", "capacitor", "inductor") and node in p.nodes]
    if node == circuit.output:
        if circuit.load_resistance.present:
            items.append((LOAD_R, "resistor", circuit.load_resistance.value, GROUND))
        if circuit.load_capacitance.present:
            items.append((LOAD_C, "capacitor", circuit.load_capacitance.value, GROUND))
    if node == circuit.input and circuit.source.present:
        items.append((SOURCE_R, "resistor", circuit.source.value, SOURCE_NODE))
    return items


def _opamp_drive(probe: _Probe, op, amp: float, freq: float) -> OpampDrive:
    """The drive of one op-amp: branch currents, their total against the MNA current, slew rate."""
    node = op.nodes[2]
    v_out = probe.voltage(node)
    branches = []
    total_parts = 0j
    for name, kind, value, other in _output_items(probe.circuit, node, probe.values):
        if value is None:
            raise UsageError("drive", f"no value for {name}", f"give {name} a value")
        v_other = 1.0 if other == SOURCE_NODE else probe.voltage(other)
        i = (v_out - v_other) * probe.admittance(kind, value, name)
        total_parts += i
        branches.append(BranchCurrent(name, other, abs(i) * amp))
    # the op-amp's branch current flows from the node into its output: the current it delivers is minus that
    i_total = -probe.at(Unknown("I", op.name))
    other_peak = abs(i_total - total_parts) * amp
    if other_peak <= 1e-9 * abs(i_total) * amp:
        other_peak = 0.0
    ipk, vpk = abs(i_total) * amp, abs(v_out) * amp
    slew = 2 * math.pi * freq * vpk / 1e6
    imax = None if op.iout_max is None else float(op.iout_max)
    smax = None if op.slew is None else float(op.slew)
    return OpampDrive(op.name, node, vpk, ipk, slew, tuple(branches), other_peak, imax, smax,
                      None if imax is None else ipk > imax, None if smax is None else slew > smax,
                      probe.transfer(Unknown("V", node)) if node != GROUND else None)


__all__ = ["BranchCurrent", "DriveResult", "OpampDrive", "drive", "node_transfer"]
