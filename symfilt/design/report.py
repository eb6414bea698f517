"""Everything ``symfilt derive`` shows, as one value: :func:`report`.

The command line and a Python user get the same thing: the op-amp model
switched, the structural warnings, the analysis (values substituted if asked),
the load limits and the op-amp error section. The words and formats are chosen
in :mod:`symfilt.export.derive_report`.

Examples
--------
>>> from symfilt import catalogue
>>> r = report(catalogue.build("rc-lowpass"), load_limit=0.02, sensitivity=False)
>>> r.analysis.circuit.title, [x.fixture for x in r.load_limits], r.opamp_error, r.warnings
('RC low-pass', ['R_s', 'R_L'], None, ())
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Callable

from symfilt.analysis.probe import Probe, probes as probe_all, substitute_probe as put_probe_values
from symfilt.analysis.stage import Analysis, analyse, substitute as put_values
from symfilt.design.opamp_error import OPAMP_ERROR_MODELS, OpampError, needs_opamp_error, opamp_error
from symfilt.engine.elimination import DEFAULT_MAX_TERMS
from symfilt.errors import SingularCircuitError, SizeLimitError, UsageError
from symfilt.model.circuit import Circuit
from symfilt.model.keep import fixture_values, keep_warnings
from symfilt.model.opamp import OPAMP_MODELS
from symfilt.model.safe import require, require_budget
from symfilt.model.structure import structure_warnings

if TYPE_CHECKING:
    from symfilt.analysis.loading import LoadLimit


@dataclass(frozen=True)
class Report:
    """What ``symfilt derive`` shows for a circuit.

    Parameters
    ----------
    circuit : Circuit
        The circuit analysed (op-amps switched to the model asked for).
    analysis : Analysis
        The analysis as shown (the parts' values put in when ``substitute``).
    load_limits : tuple of LoadLimit or None
        The fixture bounds, when a load limit was asked for.
    opamp_error : OpampError or None
        Real against ideal op-amps: for the ``gain`` and ``single-pole`` models
        of a circuit with op-amps, and without a model asked for whenever an op-amp
        of the circuit is not ideal (a finite model, or rout/rin/cin present).
    warnings : tuple
        Structural warnings about the circuit (legal but suspicious), in order.
    probes : tuple of Probe
        The circuit's ``[probes]`` and the nodes asked for (:mod:`symfilt.analysis.probe`).
    approx : tuple of (str, Approximation)
        The approximate H(s) of each view when asked for (:mod:`symfilt.analysis.approx`).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> report(catalogue.build("rc-lowpass"), sensitivity=False).load_limits is None
    True
    """

    circuit: Circuit
    analysis: Analysis
    load_limits: tuple[LoadLimit, ...] | None
    opamp_error: OpampError | None
    warnings: tuple
    probes: tuple[Probe, ...] = ()
    approx: tuple = ()


def report(circuit: Circuit, *, load_limit: float | None = None, opamp_model: str | None = None,
           substitute: bool = False, sensitivity: bool = True, max_terms: int | None = None,
           progress: Callable[[str], None] | None = None, at=None, probes=(), keep=None,
           approx: float | None = None) -> Report:
    """Derive and analyse a circuit with everything ``symfilt derive`` shows.

    Parameters
    ----------
    circuit : Circuit
    load_limit : float, optional
        Tolerance of the cutoff for the load limits, as a fraction (0.02 for 2%).
    opamp_model : {"ideal", "gain", "integrator", "single-pole", "two-pole"}, optional
        Switch every op-amp to this model; the non-ideal ones also give the
        op-amp error section (real against ideal op-amps). Without it, a circuit
        with a non-ideal op-amp gets that section for the circuit as given.
    substitute : bool
        Put the parts' values into the formulas shown.
    sensitivity : bool
        Also derive the sensitivities.
    max_terms : int, optional
        Size budget of the elimination (terms per polynomial).
    progress : callable, optional
        Called with the name of each stage of the derivation.
    at : str or number, optional
        A frequency (Hz): also the sensitivities of |H(jw)| there.
    probes : iterable of str
        More nodes to report V(node)/V(source) for, besides the circuit's ``[probes]``
        (the load stays on the output port).
    keep : str or iterable of str, optional
        Derive partly symbolically: only these symbols (and s) stay symbols
        (:meth:`Circuit.keeping <symfilt.model.circuit.Circuit.keeping>`); None: as the circuit says.
    approx : float, optional
        Also the approximate H(s) of each view within this measured error of |H(jw)|
        (0.05 for 5%; :mod:`symfilt.analysis.approx`).

    Returns
    -------
    Report

    Examples
    --------
    >>> from symfilt import catalogue
    >>> r = report(catalogue.build("inverting-lowpass"), opamp_model="gain", sensitivity=False)
    >>> sorted(r.opamp_error.cutoff_first_order), r.circuit is r.analysis.circuit
    (['A_U1'], True)
    """
    require(circuit, Circuit, "report circuit", "build one with Circuit.build or load_circuit")
    require_budget(max_terms, "report")
    if opamp_model is not None and opamp_model not in OPAMP_MODELS:
        raise UsageError("opamp_model", f"{opamp_model!r} is not an op-amp model", "use " + ", ".join(OPAMP_MODELS))
    if load_limit is not None and not 0 < load_limit < 1:
        raise UsageError("load_limit", f"{load_limit!r} is outside 0..1", "give a fraction such as 0.02")
    shown = circuit.with_opamp_model(opamp_model) if opamp_model else circuit
    shown = shown.keeping(keep) if keep is not None else shown  # the op-amp error (an expansion in 1/A) is left out
    fixed = sorted(x.name for x in fixture_values(shown))
    if load_limit is not None and fixed:  # the load limits vary R_s and R_L: they must stay symbols
        raise UsageError("--load-limit", f"the load limits need {', '.join(fixed)} as symbols",
                         "keep them too: --keep " + ",".join(list(shown.keep) + fixed))
    shown = shown.with_probes(probes) if probes else shown  # an unknown node is refused before any algebra
    error = None
    if shown.keep is not None:
        pass  # partly symbolic: no op-amp error section (its expansion in 1/A needs every symbol)
    elif opamp_model in OPAMP_ERROR_MODELS and any(p.kind == "opamp" for p in circuit.parts):
        if progress:
            progress("op-amp error")
        error = opamp_error(circuit, opamp_model, max_terms=max_terms or DEFAULT_MAX_TERMS)
    elif opamp_model is None and needs_opamp_error(circuit):
        try:
            error = opamp_error(circuit, None, max_terms=max_terms or DEFAULT_MAX_TERMS)
        except (UsageError, SingularCircuitError, SizeLimitError):
            error = None  # no ideal-op-amp form to compare with (no negative feedback), or too large
    warnings = tuple(structure_warnings(shown)) + keep_warnings(shown)
    a = analyse(shown, sensitivity=sensitivity, max_terms=max_terms or DEFAULT_MAX_TERMS, progress=progress, at=at)
    limits = None
    if load_limit is not None:  # imported only when asked for, as the approximation below
        from symfilt.analysis.loading import load_limits

        limits = tuple(load_limits(a, load_limit))
    found = probe_all(shown, max_terms=max_terms or DEFAULT_MAX_TERMS, progress=progress)
    if substitute:
        found = tuple(put_probe_values(p, shown) for p in found)
    if approx is not None and progress:
        progress("approximation")
    approximate = ()
    if approx is not None:
        from symfilt.analysis.approx import approximations

        approximate = approximations(a, approx)
    return Report(shown, put_values(a) if substitute else a, limits, error, warnings, found, approximate)
