"""Built-in parametric circuits, by their trade names.

Each entry is a function returning a :class:`~symfilt.circuit.Circuit`; every
value is a keyword argument (text such as ``"4k7"``, ``"symbol"`` for the source and
load fixtures, or None to keep a part symbolic). The default values are a
plausible example of each stage, not a recommendation.

Add a circuit: write a function here and register it in :data:`CATALOGUE` with a
one-line description (see DEVELOPERS.md).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

from .circuit import Circuit, Part
from .errors import UsageError

R, C, L, U = Part.resistor, Part.capacitor, Part.inductor, Part.opamp


def rc_lowpass(R1="4k7", C1="22n", source="600", load="10k", load_capacitance=None) -> Circuit:
    """Passive RC low-pass: R1 from in to out, C1 from out to ground.

    Examples
    --------
    >>> [p.name for p in rc_lowpass().parts]
    ['R1', 'C1']
    """
    return Circuit.build([R("R1", "in", "out", R1), C("C1", "out", "0", C1)], source=source, load=load,
                         load_capacitance=load_capacitance, title="RC low-pass")


def rc_highpass(C1="68n", R1="3k9", source="600", load="10k", load_capacitance=None) -> Circuit:
    """Passive RC high-pass: C1 from in to out, R1 from out to ground.

    Examples
    --------
    >>> rc_highpass().part("C1").nodes
    ('in', 'out')
    """
    return Circuit.build([C("C1", "in", "out", C1), R("R1", "out", "0", R1)], source=source, load=load,
                         load_capacitance=load_capacitance, title="RC high-pass")


def inverting_lowpass(R1="10k", R2="22k", C1="4n7", source="600", load="2k", load_capacitance=None) -> Circuit:
    """Inverting op-amp low-pass: R1 from in to the inverting input, R2 parallel C1 in feedback.

    Examples
    --------
    >>> inverting_lowpass().part("U1").nodes
    ('0', 'n', 'out')
    """
    return Circuit.build([R("R1", "in", "n", R1), R("R2", "n", "out", R2), C("C1", "n", "out", C1),
                          U("U1", "0", "n", "out")], source=source, load=load,
                         load_capacitance=load_capacitance, title="Inverting low-pass (R2 || C1 feedback)")


def noninverting_lowpass(R1="10k", C1="10n", Rf="10k", Rg="10k", source="600", load="2k",
                         load_capacitance=None) -> Circuit:
    """RC low-pass into a non-inverting gain stage of gain 1 + Rf/Rg.

    Examples
    --------
    >>> noninverting_lowpass().part("Rf").nodes
    ('out', 'f')
    """
    return Circuit.build([R("R1", "in", "a", R1), C("C1", "a", "0", C1), U("U1", "a", "f", "out"),
                          R("Rf", "out", "f", Rf), R("Rg", "f", "0", Rg)], source=source, load=load,
                         load_capacitance=load_capacitance, title="RC low-pass, buffered with gain")


def sallen_key_lowpass(R1="6k8", R2="15k", C1="10n", C2="3n3", source="50", load="2k",
                       load_capacitance=None) -> Circuit:
    """Unity-gain Sallen-Key low-pass: R1 in->a, R2 a->b, C1 a->out, C2 b->ground, follower b->out.

    Examples
    --------
    >>> sallen_key_lowpass().part("C2").nodes
    ('b', '0')
    """
    return Circuit.build([R("R1", "in", "a", R1), R("R2", "a", "b", R2), C("C1", "a", "out", C1),
                          C("C2", "b", "0", C2), U("U1", "b", "out", "out")], source=source, load=load,
                         load_capacitance=load_capacitance, title="Sallen-Key low-pass, unity gain")


def mfb_lowpass(R1="5k6", R2="12k", R3="8k2", C1="47n", C2="2n2", source="600", load="2k",
                load_capacitance=None) -> Circuit:
    """Multiple-feedback low-pass: R1 in->x, C1 x->ground, R2 x->out, R3 x->y, C2 y->out, op-amp + at ground, - at y.

    Examples
    --------
    >>> mfb_lowpass().part("C2").nodes
    ('y', 'out')
    """
    return Circuit.build([R("R1", "in", "x", R1), C("C1", "x", "0", C1), R("R2", "x", "out", R2),
                          R("R3", "x", "y", R3), C("C2", "y", "out", C2), U("U1", "0", "y", "out")],
                         source=source, load=load, load_capacitance=load_capacitance,
                         title="Multiple-feedback low-pass")


@dataclass(frozen=True)
class Entry:
    """A catalogue entry: its builder and a one-line description."""

    name: str
    builder: Callable[..., Circuit]
    summary: str


CATALOGUE: dict[str, Entry] = {e.name: e for e in [
    Entry("rc-lowpass", rc_lowpass, "passive first-order low-pass, series R then shunt C"),
    Entry("rc-highpass", rc_highpass, "passive first-order high-pass, series C then shunt R"),
    Entry("inverting-lowpass", inverting_lowpass, "inverting op-amp stage with R2 || C1 feedback, first order"),
    Entry("noninverting-lowpass", noninverting_lowpass, "RC low-pass buffered by a non-inverting gain stage"),
    Entry("sallen-key-lowpass", sallen_key_lowpass, "second-order Sallen-Key low-pass, unity-gain follower"),
    Entry("mfb-lowpass", mfb_lowpass, "second-order multiple-feedback low-pass, inverting"),
]}


def names() -> list[str]:
    """Names of the built-in circuits.

    Examples
    --------
    >>> "rc-lowpass" in names()
    True
    """
    return list(CATALOGUE)


def build(name: str, **values) -> Circuit:
    """Build a catalogue circuit by name, with optional value overrides.

    Parameters
    ----------
    name : str
        A catalogue name; a leading ``@`` is allowed.
    **values
        Keyword values passed to the builder (``R1="10k"``, ``source="symbol"``).

    Examples
    --------
    >>> build("@rc-lowpass", R1="1k").part("R1").value
    1000
    """
    key = name[1:] if name.startswith("@") else name
    if key not in CATALOGUE:
        raise UsageError(f"@{key}", "no built-in circuit of that name",
                         "run `symfilt catalogue` to list them: " + ", ".join(CATALOGUE))
    return CATALOGUE[key].builder(**values)
