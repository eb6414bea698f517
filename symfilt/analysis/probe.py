"""Probes: the transfer from the source to any node, with the load where the ports put it.

A probe asks for V(node)/V(source) of the circuit as connected: the source fixture still
drives ``input`` and the load still hangs on ``output``, so reading an inner node does
not move the load there (as moving ``[ports] output`` would). Each probe is reported
loaded and ideal (R_s -> 0, R_L -> oo, C_L -> 0), with its standard form, cutoff and
numbers, like the output itself.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Callable

from symfilt.analysis.forms import cutoff, standard_form
from symfilt.analysis.network import NetworkFunction
from symfilt.analysis.stage import Analysis, StageResult, settled_numbers, substitute
from symfilt.engine.elimination import DEFAULT_MAX_TERMS
from symfilt.engine.solve import solve_unknown
from symfilt.model.keep import fixture_values
from symfilt.model.circuit import Circuit, S
from symfilt.model.names import node_name
from symfilt.model.safe import require
from symfilt.model.stamps import Unknown
from symfilt.model.structure import check_probes


@dataclass(frozen=True)
class Probe:
    """The transfer from the source to one node, loaded and ideal.

    Parameters
    ----------
    label : str
        The probe's name (the ``[probes]`` key, or the node's name).
    node : str
        The node probed.
    loaded, ideal : StageResult
        V(node)/V(source) with its standard form and cutoff; no impedances (``zin`` and
        ``zout`` are None) and no sensitivities.
    numeric : dict
        ``{"loaded": {...}, "ideal": {...}}``: the numbers at the circuit's values, as
        :func:`~symfilt.analysis.numbers.numeric_values` gives them (no output impedance).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> p = probe(catalogue.build("rc-lowpass"), "out")
    >>> p.label, p.node
    ('out', 'out')
    """

    label: str
    node: str
    loaded: StageResult
    ideal: StageResult
    numeric: dict

    def analysis(self, circuit: Circuit) -> Analysis:
        """The probe as an :class:`~symfilt.analysis.stage.Analysis` of ``circuit`` (for display).

        Parameters
        ----------
        circuit : Circuit
            The circuit probed.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> c = catalogue.build("rc-lowpass")
        >>> round(probe(c, "out").analysis(c).ratio("cutoff_hz"), 4)
        1.3568
        """
        return Analysis(circuit, self.loaded, self.ideal, self.numeric)


def transfer_view(h: NetworkFunction, values) -> tuple[StageResult, dict]:
    """A transfer function alone as a view (standard form, cutoff; no impedances) and its numbers.

    Parameters
    ----------
    h : NetworkFunction
    values : mapping
        Symbol -> exact number.

    Returns
    -------
    (StageResult, dict)
        The view and :func:`~symfilt.analysis.numbers.numeric_values` of it (no cutoff of an
        unstable view).

    Examples
    --------
    >>> import sympy
    >>> R, C = sympy.symbols("R C", positive=True)
    >>> st, d = transfer_view(NetworkFunction.from_expr(1 / (1 + S * R * C)), {R: 1000, C: sympy.Rational(1, 10**6)})
    >>> st.form.kind, round(d["cutoff_hz"], 3)
    ('lowpass', 159.155)
    """
    form = standard_form(h)
    st = StageResult(h, None, None, form, cutoff(form))
    return st, settled_numbers(st, values)


def probe(circuit: Circuit, node: str, label: str | None = None, *, max_terms: int = DEFAULT_MAX_TERMS,
          progress: Callable[[str], None] | None = None) -> Probe:
    """The transfer V(node)/V(source), loaded and ideal, with the load left on the output port.

    Parameters
    ----------
    circuit : Circuit
    node : str
        Any node of the circuit but ground.
    label : str, optional
        The probe's name (default: the node's).
    max_terms : int
        Size budget of the elimination.
    progress : callable, optional
        Receives stage names.

    Returns
    -------
    Probe

    Raises
    ------
    CircuitError
        When the circuit has no such node.

    Examples
    --------
    An RC low-pass followed by a second RC: the first capacitor's node, with the load
    still on the output.

    >>> import sympy
    >>> from symfilt.model.circuit import Circuit, Part
    >>> c = Circuit.build([Part.resistor("R1", "in", "mid"), Part.capacitor("C1", "mid", "0"),
    ...                    Part.resistor("R2", "mid", "out"), Part.capacitor("C2", "out", "0")], load="symbol")
    >>> sympy.factor(probe(c, "mid").loaded.transfer.dc_gain())
    (R2 + R_L)/(R1 + R2 + R_L)
    """
    require(circuit, Circuit, "probe circuit", "build one with Circuit.build or load_circuit")
    node = node_name(node, "probe")
    check_probes(replace(circuit, probes=((label or node, node),)))  # a node the circuit does not have
    if progress:
        progress(f"probe {node}")
    ratio = solve_unknown(circuit, Unknown("V", node), drive="transfer", max_terms=max_terms, progress=progress,
                          where=f"probe {label or node}")
    h = NetworkFunction.from_ratio(ratio, "transfer")
    values = circuit.values()
    put = fixture_values(circuit)  # partly symbolic (model.keep): the loaded view gets those values
    (loaded, lo), (ideal, hi) = transfer_view(h.subs(put) if put else h, values), transfer_view(h.ideal(), values)
    return Probe(label or node, node, loaded, ideal, {"loaded": lo, "ideal": hi})


def probes(circuit: Circuit, nodes=(), *, max_terms: int = DEFAULT_MAX_TERMS,
           progress: Callable[[str], None] | None = None) -> tuple[Probe, ...]:
    """Every probe of the circuit (its ``[probes]``), then the extra ``nodes`` asked for.

    Parameters
    ----------
    circuit : Circuit
    nodes : iterable of str
        More nodes to probe (each labelled by its own name; one already probed is skipped).
    max_terms : int
        Size budget of the elimination.
    progress : callable, optional
        Receives stage names.

    Returns
    -------
    tuple of Probe

    Examples
    --------
    >>> from symfilt import catalogue
    >>> [p.label for p in probes(catalogue.build("sallen-key-lowpass"), ["a"])]
    ['a']
    """
    c = circuit.with_probes(nodes) if nodes else circuit  # its own probes were checked when it was built
    return tuple(probe(c, node, label, max_terms=max_terms, progress=progress) for label, node in c.probes)


def substitute_probe(p: Probe, circuit: Circuit) -> Probe:
    """The same probe with the circuit's values put into its formulas (numbers unchanged).

    Parameters
    ----------
    p : Probe
    circuit : Circuit
        The circuit probed (its values).

    Returns
    -------
    Probe

    Examples
    --------
    >>> from symfilt import catalogue
    >>> c = catalogue.build("rc-lowpass")
    >>> substitute_probe(probe(c, "out"), c).ideal.cutoff.value
    5000000/517
    """
    a = substitute(p.analysis(circuit))
    return replace(p, loaded=a.loaded, ideal=a.ideal)
