"""Built-in parametric circuits, by their trade names.

Each entry is a function returning a :class:`~symfilt.model.circuit.Circuit`; every
value is a keyword argument (text such as ``"4k7"``, ``"symbol"`` for the source and
load fixtures, or None to keep a part symbolic). The default values are a
plausible example of each stage, not a recommendation.

Add a circuit: write a function here and register it in :data:`CATALOGUE` with a
one-line description (see DEVELOPERS.md).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

from symfilt.model.circuit import Circuit, Part
from symfilt.errors import ArgumentTypeError, UsageError
from symfilt.model.values import parse_value

R, C, L, U = Part.resistor, Part.capacitor, Part.inductor, Part.opamp
R_, C_ = R, C  # for builders whose parameters are called R and C


def rc_lowpass(R1="4k7", C1="22n", source="600", load="10k", load_capacitance=None) -> Circuit:
    """Passive RC low-pass: R1 from in to out, C1 from out to ground.

    Parameters
    ----------
    R1, C1 : str, number or None
        Part values as in the description (``"4k7"``); None keeps the part symbolic.
    source, load, load_capacitance : str or None
        R_s, R_L and C_L: a value, ``"symbol"`` or ``"none"``.

    Returns
    -------
    Circuit

    Examples
    --------
    >>> [p.name for p in rc_lowpass().parts]
    ['R1', 'C1']
    """
    return Circuit.build([R("R1", "in", "out", R1), C("C1", "out", "0", C1)], source=source, load=load,
                         load_capacitance=load_capacitance, title="RC low-pass")


def rc_highpass(C1="68n", R1="3k9", source="600", load="10k", load_capacitance=None) -> Circuit:
    """Passive RC high-pass: C1 from in to out, R1 from out to ground.

    Parameters
    ----------
    C1, R1 : str, number or None
        Part values as in the description (``"4k7"``); None keeps the part symbolic.
    source, load, load_capacitance : str or None
        R_s, R_L and C_L: a value, ``"symbol"`` or ``"none"``.

    Returns
    -------
    Circuit

    Examples
    --------
    >>> rc_highpass().part("C1").nodes
    ('in', 'out')
    """
    return Circuit.build([C("C1", "in", "out", C1), R("R1", "out", "0", R1)], source=source, load=load,
                         load_capacitance=load_capacitance, title="RC high-pass")


def inverting_lowpass(R1="10k", R2="22k", C1="4n7", source="600", load="2k", load_capacitance=None) -> Circuit:
    """Inverting op-amp low-pass: R1 from in to the inverting input, R2 parallel C1 in feedback.

    Parameters
    ----------
    R1, R2, C1 : str, number or None
        Part values as in the description (``"4k7"``); None keeps the part symbolic.
    source, load, load_capacitance : str or None
        R_s, R_L and C_L: a value, ``"symbol"`` or ``"none"``.

    Returns
    -------
    Circuit

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

    Parameters
    ----------
    R1, C1, Rf, Rg : str, number or None
        Part values as in the description (``"4k7"``); None keeps the part symbolic.
    source, load, load_capacitance : str or None
        R_s, R_L and C_L: a value, ``"symbol"`` or ``"none"``.

    Returns
    -------
    Circuit

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

    Parameters
    ----------
    R1, R2, C1, C2 : str, number or None
        Part values as in the description (``"4k7"``); None keeps the part symbolic.
    source, load, load_capacitance : str or None
        R_s, R_L and C_L: a value, ``"symbol"`` or ``"none"``.

    Returns
    -------
    Circuit

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

    Parameters
    ----------
    R1, R2, R3, C1, C2 : str, number or None
        Part values as in the description (``"4k7"``); None keeps the part symbolic.
    source, load, load_capacitance : str or None
        R_s, R_L and C_L: a value, ``"symbol"`` or ``"none"``.

    Returns
    -------
    Circuit

    Examples
    --------
    >>> mfb_lowpass().part("C2").nodes
    ('y', 'out')
    """
    return Circuit.build([R("R1", "in", "x", R1), C("C1", "x", "0", C1), R("R2", "x", "out", R2),
                          R("R3", "x", "y", R3), C("C2", "y", "out", C2), U("U1", "0", "y", "out")],
                         source=source, load=load, load_capacitance=load_capacitance,
                         title="Multiple-feedback low-pass")


def sallen_key_highpass(C1="15n", C2="15n", R1="5k1", R2="10k", source="50", load="10k",
                        load_capacitance=None) -> Circuit:
    """Unity-gain Sallen-Key high-pass: C1 in->a, C2 a->b, R1 a->out (feedback), R2 b->ground, follower b->out.

    Parameters
    ----------
    C1, C2, R1, R2 : str, number or None
        Part values as in the description (``"4k7"``); None keeps the part symbolic.
    source, load, load_capacitance : str or None
        R_s, R_L and C_L: a value, ``"symbol"`` or ``"none"``.

    Returns
    -------
    Circuit

    Examples
    --------
    >>> sallen_key_highpass().part("R1").nodes
    ('a', 'out')
    """
    return Circuit.build([C("C1", "in", "a", C1), C("C2", "a", "b", C2), R("R1", "a", "out", R1),
                          R("R2", "b", "0", R2), U("U1", "b", "out", "out")], source=source, load=load,
                         load_capacitance=load_capacitance, title="Sallen-Key high-pass, unity gain")


def sallen_key_lowpass_gain(R="8k2", C="6n8", Rf="5k6", Rg="10k", source="50", load="2k",
                            load_capacitance=None) -> Circuit:
    """Equal-component Sallen-Key low-pass with gain K = 1 + Rf/Rg.

    R1 in->a and R2 a->b both take ``R``; C1 a->out (feedback) and C2 b->ground both take
    ``C``; the op-amp has + at b, - at f, Rf out->f and Rg f->ground.

    Parameters
    ----------
    R, C, Rf, Rg : str, number or None
        Part values as in the description (``"4k7"``); None keeps the part symbolic.
    source, load, load_capacitance : str or None
        R_s, R_L and C_L: a value, ``"symbol"`` or ``"none"``.

    Returns
    -------
    Circuit

    Examples
    --------
    >>> c = sallen_key_lowpass_gain()
    >>> c.part("R1").value == c.part("R2").value, c.part("Rf").nodes
    (True, ('out', 'f'))
    """
    return Circuit.build([R_("R1", "in", "a", R), R_("R2", "a", "b", R), C_("C1", "a", "out", C),
                          C_("C2", "b", "0", C), U("U1", "b", "f", "out"), R_("Rf", "out", "f", Rf),
                          R_("Rg", "f", "0", Rg)], source=source, load=load,
                         load_capacitance=load_capacitance, title="Sallen-Key low-pass, equal components, gain K")


def mfb_bandpass(R1="22k", R2="2k2", R3="100k", C1="10n", C2="10n", source="600", load="10k",
                 load_capacitance=None) -> Circuit:
    """Multiple-feedback band-pass, inverting.

    R1 in->x, R2 x->ground, C1 x->out, C2 x->n, R3 n->out (feedback); op-amp + at ground, - at n.

    Parameters
    ----------
    R1, R2, R3, C1, C2 : str, number or None
        Part values as in the description (``"4k7"``); None keeps the part symbolic.
    source, load, load_capacitance : str or None
        R_s, R_L and C_L: a value, ``"symbol"`` or ``"none"``.

    Returns
    -------
    Circuit

    Examples
    --------
    >>> mfb_bandpass().part("C2").nodes
    ('x', 'n')
    """
    return Circuit.build([R("R1", "in", "x", R1), R("R2", "x", "0", R2), C("C1", "x", "out", C1),
                          C("C2", "x", "n", C2), R("R3", "n", "out", R3), U("U1", "0", "n", "out")],
                         source=source, load=load, load_capacitance=load_capacitance,
                         title="Multiple-feedback band-pass")


def twin_t_notch(R="10k", C="15n", source="50", load="100k", load_capacitance=None) -> Circuit:
    """Passive twin-T notch: R, R, R/2 and C, C, 2C, balanced for a notch at 1/(2 pi R C).

    R1 in->a, R2 a->out, C3 (2C) a->ground; C1 in->m, C2 m->out, R3 (R/2) m->ground.

    Parameters
    ----------
    R, C : str, number or None
        Part values as in the description (``"4k7"``); None keeps the part symbolic.
    source, load, load_capacitance : str or None
        R_s, R_L and C_L: a value, ``"symbol"`` or ``"none"``.

    Returns
    -------
    Circuit

    Examples
    --------
    >>> c = twin_t_notch(R="10k", C="15n")
    >>> c.part("R3").value, c.part("C3").value
    (5000, 3/100000000)
    """
    half = None if R is None else parse_value(R, where="R") / 2
    double = None if C is None else parse_value(C, where="C") * 2
    return Circuit.build([R_("R1", "in", "a", R), R_("R2", "a", "out", R), C_("C3", "a", "0", double),
                          C_("C1", "in", "m", C), C_("C2", "m", "out", C), R_("R3", "m", "0", half)],
                         source=source, load=load, load_capacitance=load_capacitance, title="Twin-T notch, passive")


def twin_t_notch_tied(R="10k", C="15n", source="50", load="100k", load_capacitance=None) -> Circuit:
    """The twin-T notch of :func:`twin_t_notch` with its values tied to two parameters.

    Parameters R and C; R1 = R2 = R, R3 = R/2, C1 = C2 = C, C3 = 2*C, so the derivation
    is in R and C alone and the balanced twin-T comes out as the second-order notch
    it is (w0 = 1/(R C), Q = 1/4 unloaded).

    Parameters
    ----------
    R, C : str, number or None
        The parameters' values (``"10k"``); None keeps a parameter a symbol.
    source, load, load_capacitance : str or None
        R_s, R_L and C_L: a value, ``"symbol"`` or ``"none"``.

    Returns
    -------
    Circuit

    Examples
    --------
    >>> c = twin_t_notch_tied()
    >>> c.part("R3").tie, c.symbols()["R3"]["value"]
    ('R/2', 5000)
    """
    return Circuit.build([R_("R1", "in", "a", "R"), R_("R2", "a", "out", "R"), C_("C3", "a", "0", "2*C"),
                          C_("C1", "in", "m", "C"), C_("C2", "m", "out", "C"), R_("R3", "m", "0", "R/2")],
                         source=source, load=load, load_capacitance=load_capacitance,
                         title="Twin-T notch, passive, tied values", parameters={"R": R, "C": C})


def adc_driver(R_iso="22", C_res="1n", gain="1M", gbw="50M", rout="40", source="50", load=None,
               load_capacitance="30p") -> Circuit:
    """Op-amp follower driving a converter input: U1 (single-pole, with Rout) -> R_iso -> out.

    U1 follower in->drv; R_iso drv->out; C_res (charge reservoir) out->ground. The load
    capacitance C_L is the converter's sample capacitor; the default load resistance is
    open (a switched-capacitor input draws no DC current). Our own scenario: a 24-bit
    converter's driver with a 1 nF reservoir behind 22 Ω; R_iso keeps the op-amp stable
    into the capacitance.

    Parameters
    ----------
    R_iso, C_res : str, number or None
        Isolation resistor and reservoir capacitor; None keeps the part symbolic.
    gain, gbw, rout : str, number or None
        The op-amp's DC gain, gain-bandwidth (Hz) and output resistance (``"symbol"`` or
        ``"none"`` allowed for ``rout``).
    source, load, load_capacitance : str or None
        R_s, R_L and C_L: a value, ``"symbol"`` or ``"none"``.

    Returns
    -------
    Circuit

    Examples
    --------
    >>> c = adc_driver()
    >>> c.part("U1").model, c.part("R_iso").nodes
    ('single-pole', ('drv', 'out'))
    """
    return Circuit.build([U("U1", "in", "drv", "drv", model="single-pole", gain=gain, gbw=gbw, rout=rout),
                          R("R_iso", "drv", "out", R_iso), C("C_res", "out", "0", C_res)], source=source,
                         load=load, load_capacitance=load_capacitance,
                         title="ADC driver: follower, isolation resistor, reservoir capacitor")


#: Largest number of sections of :func:`rc_ladder`.
MAX_LADDER = 12


def rc_ladder(n=3, R="10k", C="10n", source="600", load="100k", load_capacitance=None) -> Circuit:
    """Passive RC ladder of ``n`` sections: Rk from node k-1 to node k, Ck from node k to ground.

    Node 0 is ``in``, node n is ``out``, the nodes between are ``n1``, ``n2``, ...
    Every section takes the same ``R`` and ``C``.

    Parameters
    ----------
    n : int
        Number of sections, 1 to MAX_LADDER.
    R, C : str, number or None
        Part values as in the description (``"4k7"``); None keeps the part symbolic.
    source, load, load_capacitance : str or None
        R_s, R_L and C_L: a value, ``"symbol"`` or ``"none"``.

    Returns
    -------
    Circuit

    Examples
    --------
    >>> [p.name for p in rc_ladder(2).parts]
    ['R1', 'C1', 'R2', 'C2']
    >>> rc_ladder(2).part("R2").nodes
    ('n1', 'out')
    """
    try:
        count = int(n)
    except (TypeError, ValueError):
        raise UsageError("rc-ladder n", f"{n!r} is not a whole number", f"give n from 1 to {MAX_LADDER}") from None
    if str(count) != str(n).strip() or not 1 <= count <= MAX_LADDER:
        raise UsageError("rc-ladder n", f"{n!r} sections", f"give a whole number from 1 to {MAX_LADDER}")
    node = lambda k: "in" if k == 0 else ("out" if k == count else f"n{k}")
    parts = []
    for k in range(1, count + 1):
        parts += [R_(f"R{k}", node(k - 1), node(k), R), C_(f"C{k}", node(k), "0", C)]
    return Circuit.build(parts, source=source, load=load, load_capacitance=load_capacitance,
                         title=f"RC ladder, {count} section{'s' if count > 1 else ''}")


#: Outputs of :func:`state_variable`.
STATE_VARIABLE_OUTPUTS = {"lp": "low-pass", "bp": "band-pass", "hp": "high-pass"}


def state_variable(output="lp", R1="10k", R2="10k", R3="10k", R4="11k", R5="10k", R6="10k", R7="10k",
                   C1="16n", C2="16n", source="50", load="10k", load_capacitance=None) -> Circuit:
    """State-variable filter, three op-amps, with low-, band- and high-pass outputs.

    U1 (summing): R1 in->n1, R2 lp->n1, R3 hp->n1 (feedback), R4 bp->p1, R5 p1->ground,
    + at p1, - at n1, output hp. U2 (integrator): R6 hp->n2, C1 n2->bp, + at ground,
    output bp. U3 (integrator): R7 bp->n3, C2 n3->lp, + at ground, output lp.
    ``output`` picks the output port: ``"lp"``, ``"bp"`` or ``"hp"``.

    Parameters
    ----------
    output : {"lp", "bp", "hp"}
        The output port: low-, band- or high-pass.
    R1, R2, R3, R4, R5, R6, R7, C1, C2 : str, number or None
        Part values as in the description (``"4k7"``); None keeps the part symbolic.
    source, load, load_capacitance : str or None
        R_s, R_L and C_L: a value, ``"symbol"`` or ``"none"``.

    Returns
    -------
    Circuit

    Examples
    --------
    >>> state_variable(output="bp").output
    'bp'
    """
    key = str(output).strip().lower()
    if key not in STATE_VARIABLE_OUTPUTS:
        raise UsageError("state-variable output", f"{output!r} is not an output of this stage",
                         "use one of " + ", ".join(STATE_VARIABLE_OUTPUTS))
    parts = [R_("R1", "in", "n1", R1), R_("R2", "lp", "n1", R2), R_("R3", "hp", "n1", R3),
             R_("R4", "bp", "p1", R4), R_("R5", "p1", "0", R5), U("U1", "p1", "n1", "hp"),
             R_("R6", "hp", "n2", R6), C_("C1", "n2", "bp", C1), U("U2", "0", "n2", "bp"),
             R_("R7", "bp", "n3", R7), C_("C2", "n3", "lp", C2), U("U3", "0", "n3", "lp")]
    return Circuit.build(parts, output=key, source=source, load=load, load_capacitance=load_capacitance,
                         title=f"State-variable filter, {STATE_VARIABLE_OUTPUTS[key]} output")


@dataclass(frozen=True)
class Entry:
    """A catalogue entry: its builder and a one-line description.

    Parameters
    ----------
    name : str
        The trade name the entry is built by (``"rc-lowpass"``).
    builder : callable
        Returns the :class:`~symfilt.model.circuit.Circuit`; every value a keyword argument.
    summary : str
        One line saying what the circuit is.

    Examples
    --------
    >>> CATALOGUE["rc-lowpass"].builder is rc_lowpass
    True
    """

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
    Entry("sallen-key-highpass", sallen_key_highpass, "second-order Sallen-Key high-pass, unity-gain follower"),
    Entry("sallen-key-lowpass-gain", sallen_key_lowpass_gain,
          "second-order Sallen-Key low-pass, equal R and C, gain K = 1 + Rf/Rg"),
    Entry("mfb-bandpass", mfb_bandpass, "second-order multiple-feedback band-pass, inverting"),
    Entry("twin-t-notch", twin_t_notch, "passive twin-T notch (R, R, R/2 and C, C, 2C)"),
    Entry("twin-t-notch-tied", twin_t_notch_tied,
          "the same twin-T with its values tied to parameters R and C: a second-order notch"),
    Entry("rc-ladder", rc_ladder, "passive RC ladder of n equal sections (n = 3 by default)"),
    Entry("state-variable", state_variable,
          "three-op-amp state-variable filter; output = lp, bp or hp (lp by default)"),
    Entry("adc-driver", adc_driver,
          "op-amp follower (single-pole, Rout) into a converter's input through R_iso and a reservoir C"),
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
    if not isinstance(name, str):
        raise ArgumentTypeError("catalogue name", f"expected the name as text, got {type(name).__name__}",
                                "pass a name such as \"rc-lowpass\"")
    key = name[1:] if name.startswith("@") else name
    if key not in CATALOGUE:
        raise UsageError(f"@{key}", "no built-in circuit of that name",
                         "run `symfilt catalogue` to list them: " + ", ".join(CATALOGUE))
    return CATALOGUE[key].builder(**values)
