"""The built-in demo scenario (our own invention).

A greenhouse humidity probe has a 10 kΩ output resistance and feeds an ADC whose
input looks like 22 kΩ in parallel with 100 pF. The anti-alias filter is meant to
cut off near 1 kHz (R1 = 1k5, C1 = 100 nF alone gives 1.06 kHz). Done passively, the
probe and the ADC input move the cutoff and cut the gain; done with a follower
before and after the same RC, the stage holds its response. With real op-amps
(1 MHz gain-bandwidth, 50 Ω open-loop output resistance) it holds it within their
limits: the loop of the follower that drives the ADC sees the 100 pF through 50 Ω.
"""

from __future__ import annotations

from symfilt.model.circuit import Circuit, Part

R, C, U = Part.resistor, Part.capacitor, Part.opamp
PROBE_RESISTANCE = "10k"
ADC_RESISTANCE = "22k"
ADC_CAPACITANCE = "100p"


def passive_stage() -> Circuit:
    """RC low-pass wired straight from the probe to the ADC input.

    Examples
    --------
    >>> passive_stage().source.value
    10000
    """
    return Circuit.build([R("R1", "in", "out", "1k5"), C("C1", "out", "0", "100n")],
                         source=PROBE_RESISTANCE, load=ADC_RESISTANCE, load_capacitance=ADC_CAPACITANCE,
                         title="Humidity probe → ADC, passive RC")


def buffered_stage() -> Circuit:
    """The same RC between two unity-gain followers (ideal op-amps).

    Examples
    --------
    >>> [p.kind for p in buffered_stage().parts].count("opamp")
    2
    """
    return Circuit.build([U("U1", "in", "a", "a"), R("R1", "a", "b", "1k5"), C("C1", "b", "0", "100n"),
                          U("U2", "b", "out", "out")],
                         source=PROBE_RESISTANCE, load=ADC_RESISTANCE, load_capacitance=ADC_CAPACITANCE,
                         title="Humidity probe → ADC, buffered RC")


#: The real op-amps of the demo: open-loop gain, gain-bandwidth (Hz), output resistance (Ω).
REAL_OPAMP = {"model": "single-pole", "gain": "200k", "gbw": "1M", "rout": "50"}


def real_buffered_stage() -> Circuit:
    """The buffered RC with real op-amps (:data:`REAL_OPAMP`).

    Examples
    --------
    >>> real_buffered_stage().part("U2").rout.value
    50
    """
    return Circuit.build([U("U1", "in", "a", "a", **REAL_OPAMP), R("R1", "a", "b", "1k5"), C("C1", "b", "0", "100n"),
                          U("U2", "b", "out", "out", **REAL_OPAMP)],
                         source=PROBE_RESISTANCE, load=ADC_RESISTANCE, load_capacitance=ADC_CAPACITANCE,
                         title="Humidity probe → ADC, buffered RC with real op-amps")


def stages() -> list[Circuit]:
    """The versions of the demo stage: passive, buffered (ideal op-amps), buffered (real op-amps).

    Examples
    --------
    >>> len(stages())
    3
    """
    return [passive_stage(), buffered_stage(), real_buffered_stage()]
