"""The fast paths of spread and size (issue 21) against published formulas and sympy's own results.

* ``analysis.vectorised``: the cutoff, f0, Q and DC gain evaluated straight from the coefficient
  polynomials, and their exact sensitivities, against the Sallen-Key formulas (TI SLOA024, from
  memory; tests/REFERENCES.md "Second order") and against the closed forms of the analysis.
* ``design.closed_form``: the factor lists by python-flint against ``sympy.factor_list`` (the
  outside reference for what sympy's factoring gives), on random polynomials (hypothesis).
* ``analysis.loop.feedback_polarities``: the polarity every op-amp's loop gets in ``loops``.
"""

from __future__ import annotations

import math

import pytest
import sympy
from hypothesis import given, settings, strategies as st

from symfilt.analysis.loop import feedback_polarities, loops
from symfilt.analysis.network import derive
from symfilt.analysis.numbers import numeric_sensitivities
from symfilt.analysis.stage import analyse, loaded_transfer
from symfilt.analysis.vectorised import coefficient_form, exact_sensitivities, quantity_functions
from symfilt.design.closed_form import factor_list, square_part
from symfilt.design.spread import spread
from symfilt.errors import CircuitError
from symfilt.model import catalogue
from symfilt.model.circuit import Circuit, Part

R, C, U = Part.resistor, Part.capacitor, Part.opamp


def _sallen_key(r1=6800, r2=15000, c1=10e-9, c2=3.3e-9) -> Circuit:
    return Circuit.build([R("R1", "in", "a", str(r1)), R("R2", "a", "b", str(r2)), C("C1", "a", "out", repr(c1)),
                          C("C2", "b", "0", repr(c2)), U("U1", "b", "out", "out")])


def test_direct_quantities_of_the_sallen_key_follow_the_published_formulas():
    # TI SLOA024 (from memory): w0 = 1/sqrt(R1 R2 C1 C2), Q = sqrt(R1 R2 C1 C2)/(C2 (R1 + R2)); the -3 dB
    # point w0 sqrt(x + sqrt(x^2 + 1)), x = 1 - 1/(2 Q^2) (REFERENCES.md "Second order", common practice).
    c = _sallen_key()
    h = loaded_transfer(c)
    names = tuple(sorted(str(x) for x in h.free_symbols() if str(x) != "s"))
    fs = quantity_functions(coefficient_form(h), names)
    vals = {"R1": 6800.0, "R2": 15000.0, "C1": 10e-9, "C2": 3.3e-9}
    got = {k: float(f(*[vals[n] for n in names])) for k, f in fs.items()}
    w0 = 1 / math.sqrt(6800 * 15000 * 10e-9 * 3.3e-9)
    q = math.sqrt(6800 * 15000 * 10e-9 * 3.3e-9) / (3.3e-9 * (6800 + 15000))
    x = 1 - 1 / (2 * q * q)
    assert got["f0_hz"] == pytest.approx(w0 / (2 * math.pi), rel=1e-13)
    assert got["q"] == pytest.approx(q, rel=1e-13)
    assert got["cutoff_hz"] == pytest.approx(w0 * math.sqrt(x + math.sqrt(x * x + 1)) / (2 * math.pi), rel=1e-13)
    assert got["dc_gain"] == 1.0


def test_exact_sensitivities_of_the_sallen_key_follow_the_published_formulas():
    # From the same w0 and Q: S^w0 = -1/2 for each part (REFERENCES.md "Sensitivity and tolerances");
    # S_C1^Q = 1/2, S_C2^Q = -1/2, S_R1^Q = (R2 - R1)/(2 (R1 + R2)) = -S_R2^Q (differentiating Q).
    c = _sallen_key()
    s = exact_sensitivities(coefficient_form(loaded_transfer(c)), c.values())
    assert s["w0"] == {"C1": -0.5, "C2": -0.5, "R1": -0.5, "R2": -0.5}
    assert s["q"]["C1"] == 0.5 and s["q"]["C2"] == -0.5
    assert s["q"]["R1"] == pytest.approx((15000 - 6800) / (2 * 21800), rel=1e-15)
    assert s["q"]["R2"] == pytest.approx(-(15000 - 6800) / (2 * 21800), rel=1e-15)
    assert s["dc_gain"] == {"C1": 0.0, "C2": 0.0, "R1": 0.0, "R2": 0.0}


@pytest.mark.parametrize("name", catalogue.names())
def test_direct_numbers_equal_the_closed_forms_of_the_analysis(name):
    """Two routes to the same numbers: the analysis's closed forms at the values, and the coefficient
    polynomials evaluated directly (sensitivities exact on both, so equal to the last bit or two)."""
    c = catalogue.build(name)
    a = analyse(c)
    form = coefficient_form(loaded_transfer(c))
    numbers = a.numeric["loaded"]
    got = exact_sensitivities(form, c.values())
    want = numeric_sensitivities(a.loaded, c.values())
    for key in ("cutoff", "w0", "q", "dc_gain"):
        assert set(got.get(key) or {}) == set(want.get(key) or {}), key
        for n, v in (want.get(key) or {}).items():
            assert got[key][n] == pytest.approx(v, rel=1e-13, abs=1e-15), (key, n)
    names = tuple(sorted(str(x) for x in form.transfer.free_symbols() if str(x) != "s"))
    vals = {str(k): float(v) for k, v in c.values().items()}
    for key, f in quantity_functions(form, names).items():
        if key not in numbers:  # a twin-T: a notch at the values after exact cancellation, no report cutoff
            continue
        assert float(f(*[vals[n] for n in names])) == pytest.approx(numbers[key], rel=1e-12), key


@pytest.mark.parametrize("name", ["sallen-key-lowpass", "mfb-lowpass", "state-variable", "adc-driver"])
def test_feedback_polarities_are_the_loops_polarities(name):
    c = catalogue.build(name)
    assert feedback_polarities(c) == {lp.opamp: lp.feedback for lp in loops(c)}


def test_spread_refuses_positive_feedback_as_the_analysis_does():
    c = Circuit.build([U("U1", "fb", "in", "out"), R("R1", "out", "fb", "10k"), R("R2", "fb", "0", "10k")])
    with pytest.raises(CircuitError) as direct:
        spread(c, {"R": 0.01}, runs=100, seed=1)
    with pytest.raises(CircuitError) as full:
        analyse(c)
    assert str(direct.value) == str(full.value)


_x, _y, _z = sympy.symbols("x y z", positive=True)
_poly = st.lists(st.tuples(st.integers(-3, 3), st.integers(0, 2), st.integers(0, 2), st.integers(0, 1)),
                 min_size=1, max_size=4)


def _build(terms):
    return sympy.Add(*[c * _x**i * _y**j * sympy.pi**k for c, i, j, k in terms])


@settings(max_examples=60, deadline=None)
@given(_poly, _poly, st.integers(1, 2))
def test_factor_lists_by_flint_are_sympys(p, q, m):
    e = sympy.expand(_build(p) * _build(q) ** m * (_z + 2 * _y))
    if e == 0:
        return
    # sympy.factor_list(e, x): the factors holding x, as their coefficients in x
    want = []
    for f, mult in sympy.factor_list(e, _x)[1]:
        pf = sympy.Poly(f, _x)
        if pf.degree() > 0:
            want.append(([pf.coeff_monomial(_x**i) for i in range(pf.degree() + 1)], mult))
    degree, got = factor_list(e, _x)
    assert degree == sympy.Poly(e, _x).degree()
    assert sorted(map(str, (cs for cs, _exps, _ring in got))) == sorted(map(str, (cs for cs, _m in want)))
    # sympy.factor_list(e) gives the same square part
    coeff, factors = sympy.factor_list(e)
    out, rest = sympy.Integer(1), sympy.Integer(1)
    for f, k in factors:
        if f.is_positive:
            out, rest = out * f ** (k // 2), rest * f ** (k % 2)
        else:
            rest *= f**k
    assert square_part(e) == (out * sympy.sqrt(abs(coeff)), sympy.expand(sympy.sign(coeff) * rest))


_yz_poly = st.lists(st.tuples(st.integers(-3, 3), st.integers(0, 2), st.integers(0, 1), st.integers(0, 1)),
                    min_size=1, max_size=3).map(
    lambda ts: sympy.Add(*[c * _y**j * _z**k * sympy.pi**m for c, j, k, m in ts]))


@settings(max_examples=80, deadline=None, derandomize=True, database=None)
@given(_yz_poly, _yz_poly, _yz_poly, _yz_poly, st.sampled_from([1, 2, 4, 8, 12]))
def test_quadratic_formula_on_flint_is_the_sympy_path(c, b, a, common, k):
    """low_degree_roots with the coefficients on flint (gcds, quotients and factors there) gives the
    very expressions of its sympy path (sympy.gcd, cancel, factor): coefficients with a common factor
    and a square-carrying discriminant (k b and a k, c / k) exercise the cancellations."""
    from symfilt.design.closed_form import _ring, low_degree_roots
    from symfilt.engine.polybridge import poly_to_sympy

    cs = [sympy.expand(common * v) for v in (c, k * b, a)]
    if cs[1] == 0 or cs[2] == 0:
        return
    p, _den, symbols = _ring(sympy.expand(cs[0] + cs[1] * _x + cs[2] * _x**2), _x)
    by_power = {}
    for e, v in p.to_dict().items():
        by_power.setdefault(e[0], {})[(0,) + tuple(e[1:])] = v
    rings = [(p.context().from_dict(by_power.get(i, {})), symbols) for i in range(3)]
    exact = [poly_to_sympy(r, symbols) for r, _s in rings]
    assert sympy.srepr(low_degree_roots(exact, rings)) == sympy.srepr(low_degree_roots(exact))


@settings(max_examples=60, deadline=None)
@given(st.lists(st.floats(-1e6, 1e6), min_size=1, max_size=300),
       st.lists(st.floats(0, 100), min_size=1, max_size=4))
def test_spread_percentiles_are_numpys(xs, qs):
    # numpy.percentile, linear method (its default), is the reference: the same numbers to the bit.
    import numpy as np

    from symfilt.design.spread import percentiles

    assert np.array_equal(percentiles(np.array(xs), qs), np.percentile(np.array(xs), qs))
