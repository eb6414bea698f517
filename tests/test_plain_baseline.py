"""The benchmark's plain baseline (nodal equations by hand, sympy.solve, sympy.cancel) against the engine.

The baseline is written independently of the engine's stamps, so agreement is a check of both
(nodal analysis with an op-amp as a controlled source behind its output resistance: common
practice). It also keeps the benchmark's "equal" column meaningful: a baseline missing part of
the op-amp model reports a difference that is not symfilt's.
"""

import pathlib
import sys

import pytest
import sympy

sys.path.insert(0, str(pathlib.Path(__file__).resolve().parents[1] / "benchmarks"))

from plain import plain_transfer  # noqa: E402

from symfilt.analysis import network  # noqa: E402
from symfilt.engine.polybridge import PolyContext  # noqa: E402
from symfilt.model.circuit import Circuit, Part  # noqa: E402


def _same(h, other) -> bool:
    pn, pd = sympy.fraction(sympy.together(other))
    f = PolyContext([h.num, h.den, pn, pd]).to_flint
    return f(h.num) * f(pd) == f(pn) * f(h.den)


def _stage(model, **extra):
    opts = {"gain": None} if model in ("gain", "single-pole", "two-pole") else {}
    if model != "gain":
        opts["gbw"] = None
    if model == "two-pole":
        opts["pole2"] = None
    amp = Part.opamp("U1", "p", "m", "out", model=model, **opts, **extra)
    return Circuit.build([Part.resistor("R1", "in", "p", None), Part.capacitor("C1", "p", "0", None), amp,
                          Part.resistor("Rf", "out", "m", None), Part.resistor("Rg", "m", "0", None)],
                         source="symbol", load="symbol")


@pytest.mark.parametrize("model", ["gain", "integrator", "single-pole", "two-pole"])
def test_every_op_amp_model_with_rout_rin_cin_agrees(model):
    c = _stage(model, rout="symbol", rin="symbol", cin="symbol")
    h = network.derive(c)
    assert "Rout_U1" in {str(x) for x in h.free_symbols()}
    assert _same(h, plain_transfer(c))


def test_the_output_resistance_changes_the_loaded_result():
    # the check can fail: without Rout in the baseline the two differ
    with_rout = _stage("gain", rout="symbol")
    without = _stage("gain")
    assert not _same(network.derive(with_rout), plain_transfer(without))


def test_the_adc_driver_of_the_catalogue_agrees():
    from cases import build_case

    c = build_case("@adc-driver")
    assert _same(network.derive(c), plain_transfer(c))
