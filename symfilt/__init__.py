"""symfilt: exact symbolic derivation of filter and amplifier stages, loaded and ideal.

Examples
--------
>>> import symfilt
>>> a = symfilt.analyse(symfilt.catalogue.build("rc-lowpass"))
>>> a.loaded.cutoff.value
(R1 + R_L + R_s)/(C1*R_L*(R1 + R_s))
"""

from symfilt.model import catalogue
from symfilt.analysis.forms import StandardForm, standard_form
from symfilt.analysis.stage import Analysis, analyse, substitute
from symfilt.analysis.loading import LoadLimit, load_limits
from symfilt.analysis.loop import Loop, loops
from symfilt.analysis.probe import Probe, probe, probes
from symfilt.model.circuit import Circuit, Fixture, Part
from symfilt.claims.judge import Equivalence, equivalent, parse_claim
from symfilt.export.check_report import assert_equivalent
from symfilt.export.findings import describe
from symfilt.analysis.findings import Finding
from symfilt.design.report import Report, report
from symfilt.design.joint import JointResult, size_joint, sized_circuit
from symfilt.model.circuit_file import circuit_to_text, load_circuit, parse_circuit_text
from symfilt.errors import (
    ArgumentTypeError,
    CircuitError,
    CircuitFileError,
    ClaimError,
    OutputError,
    SingularCircuitError,
    SizeLimitError,
    SymfiltError,
    UsageError,
    ValueParseError,
)
from symfilt.analysis.network import NetworkFunction, derive
from symfilt.model.values import format_value, parse_value
from symfilt.model.noise import NoiseSpec, OpampNoise, load_noise
from symfilt.analysis.noise import derive_noise
from symfilt.analysis.noise_numbers import NoiseReport, noise_report

from symfilt.export.family_plot import plot_sweep
from symfilt.version import __version__
from symfilt.export.display import attach

attach()  # notebook display (_repr_html_, _repr_latex_) on the result classes: symfilt.export.display
del attach

__all__ = [
    "Analysis",
    "Circuit",
    "Equivalence",
    "CircuitError",
    "CircuitFileError",
    "ClaimError",
    "Fixture",
    "LoadLimit",
    "Loop",
    "NetworkFunction",
    "NoiseReport",
    "NoiseSpec",
    "OpampNoise",
    "OutputError",
    "Part",
    "Probe",
    "Finding",
    "JointResult",
    "Report",
    "SingularCircuitError",
    "SizeLimitError",
    "StandardForm",
    "SymfiltError",
    "UsageError",
    "ValueParseError",
    "ArgumentTypeError",
    "analyse",
    "assert_equivalent",
    "catalogue",
    "circuit_to_text",
    "derive",
    "derive_noise",
    "equivalent",
    "format_value",
    "load_circuit",
    "load_limits",
    "load_noise",
    "loops",
    "noise_report",
    "parse_circuit_text",
    "parse_claim",
    "parse_value",
    "plot_sweep",
    "probe",
    "probes",
    "describe",
    "report",
    "size_joint",
    "sized_circuit",
    "standard_form",
    "substitute",
]
