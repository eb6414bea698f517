"""symfilt: exact symbolic derivation of filter and amplifier stages, loaded and ideal.

Examples
--------
>>> import symfilt
>>> a = symfilt.analyse(symfilt.catalogue.build("rc-lowpass"))
>>> a.loaded.cutoff.value
(R1 + R_L + R_s)/(C1*R_L*(R1 + R_s))
"""

from functools import lru_cache

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
from symfilt.version import __version__

#: Public name -> the module that defines it. They are imported on first use (PEP 562), so that a
#: command of the command line, which imports ``symfilt.cli``, loads only what it runs.
_PUBLIC = {
    "Analysis": "symfilt.analysis.stage",
    "Approximation": "symfilt.analysis.approx",
    "Circuit": "symfilt.model.circuit",
    "Equivalence": "symfilt.claims.judge",
    "Finding": "symfilt.analysis.findings",
    "Fixture": "symfilt.model.circuit",
    "JointResult": "symfilt.design.joint",
    "LoadLimit": "symfilt.analysis.loading",
    "Loop": "symfilt.analysis.loop",
    "NetworkFunction": "symfilt.analysis.network",
    "NoiseReport": "symfilt.analysis.noise_numbers",
    "NoiseSpec": "symfilt.model.noise",
    "OpampNoise": "symfilt.model.noise",
    "Part": "symfilt.model.circuit",
    "Probe": "symfilt.analysis.probe",
    "Report": "symfilt.design.report",
    "StandardForm": "symfilt.analysis.forms",
    "analyse": "symfilt.analysis.stage",
    "approximate": "symfilt.analysis.approx",
    "assert_equivalent": "symfilt.export.check_report",
    "catalogue": "symfilt.model.catalogue",
    "circuit_to_text": "symfilt.model.circuit_file",
    "derive": "symfilt.analysis.network",
    "derive_noise": "symfilt.analysis.noise",
    "describe": "symfilt.export.findings",
    "equivalent": "symfilt.claims.judge",
    "format_value": "symfilt.model.values",
    "load_circuit": "symfilt.model.circuit_file",
    "load_limits": "symfilt.analysis.loading",
    "load_noise": "symfilt.model.noise",
    "loops": "symfilt.analysis.loop",
    "noise_report": "symfilt.analysis.noise_numbers",
    "parse_circuit_text": "symfilt.model.circuit_file",
    "parse_claim": "symfilt.claims.judge",
    "parse_value": "symfilt.model.values",
    "plot_sweep": "symfilt.export.family_plot",
    "probe": "symfilt.analysis.probe",
    "probes": "symfilt.analysis.probe",
    "report": "symfilt.design.report",
    "size_joint": "symfilt.design.joint",
    "sized_circuit": "symfilt.design.joint",
    "standard_form": "symfilt.analysis.forms",
    "substitute": "symfilt.analysis.stage",
}


#: Public names that are modules themselves (``symfilt.catalogue``), not names defined in one.
_MODULES = ("catalogue",)


@lru_cache(maxsize=None)
def _attach_display() -> None:
    """Notebook display (_repr_html_, _repr_latex_) on the result classes: symfilt.export.display."""
    from symfilt.export.display import attach

    attach()


def __getattr__(name: str):
    import importlib

    module = _PUBLIC.get(name)
    if module is None:
        raise AttributeError(f"module 'symfilt' has no attribute {name!r}")
    _attach_display()  # the first use of the library's API installs the notebook display
    found = importlib.import_module(module)
    value = found if name in _MODULES else getattr(found, name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_PUBLIC))


#: The public names: the error classes and every name of :data:`_PUBLIC`.
__all__ = sorted([cls.__name__ for cls in (ArgumentTypeError, CircuitError, CircuitFileError, ClaimError, OutputError,
                                           SingularCircuitError, SizeLimitError, SymfiltError, UsageError,
                                           ValueParseError)] + list(_PUBLIC))
