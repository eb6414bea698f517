"""The flint routes of the op-amp error, the loop gain and the sympy conversion against sympy's own.

Each fast route is checked against the plain sympy computation it replaces (same expression,
same printed text) or against a second derivation of the same number.
"""

from __future__ import annotations

import random

import pytest
import sympy

from symfilt import catalogue
from symfilt.analysis.network import NetworkFunction, derive
from symfilt.design.opamp_eps import eps_polys, same_ratio
from symfilt.design.opamp_error import ideal_opamps, opamp_error
from symfilt.engine.polybridge import PolyContext
from symfilt.engine.rational import Ratio
from symfilt.engine.ratio_product import ratio_product

SYMS = sympy.symbols("R1 R2 C1 A_U1 R_s s", positive=True)


def _random_poly(rng, gens):
    return sum(rng.randint(-5, 5) * sympy.Mul(*[g ** rng.randint(0, 3) for g in gens])
               for _ in range(rng.randint(1, 6)))


def _random_tree(rng, gens, depth=2):
    """A polynomial in any arrangement: sums, products and whole powers of random sub-expressions."""
    if depth == 0 or rng.random() < 0.3:
        return rng.choice([sympy.Rational(rng.randint(-4, 4), rng.randint(1, 3)), *gens])
    kind = rng.choice(["add", "mul", "pow"])
    if kind == "pow":
        return _random_tree(rng, gens, depth - 1) ** rng.randint(0, 3)
    args = [_random_tree(rng, gens, depth - 1) for _ in range(rng.randint(2, 3))]
    return sympy.Add(*args) if kind == "add" else sympy.Mul(*args)


@pytest.mark.parametrize("seed", range(4))
def test_polycontext_multiplies_out_in_flint_as_sympy_expand_does(seed):
    # to_flint of an unexpanded polynomial (multiplied out inside flint) against sympy.expand + Poly
    rng = random.Random(seed)
    for _ in range(80):
        gens = rng.sample(SYMS, rng.randint(1, 4)) + ([sympy.pi] if rng.random() < 0.3 else [])
        e = _random_tree(rng, gens, depth=3)
        b = PolyContext([e])
        assert b.to_sympy(b._tree(e)) == sympy.expand(e), e
        assert b.to_flint(e) == b.to_flint(sympy.expand(e))
    x, y = SYMS[:2]
    b = PolyContext([x, y])
    assert b._tree(x / y) is None and b._tree(sympy.sqrt(x) * y) is None and b._tree(sympy.sin(x)) is None


@pytest.mark.parametrize("seed", range(4))
def test_polycontext_to_sympy_is_the_expression_sympy_builds(seed):
    # The direct build (integer coefficients) must be the very tree Add(*[Mul(c, *powers)]) gives.
    rng = random.Random(seed)
    for _ in range(60):
        gens = rng.sample(SYMS, rng.randint(1, 5)) + ([sympy.pi] if rng.random() < 0.3 else [])
        e = sympy.expand(_random_poly(rng, gens))
        b = PolyContext([e])
        p = b.to_flint(e)
        plain = sympy.Add(*[sympy.Integer(int(c.p)) * sympy.Mul(*[g**k for g, k in zip(b.gens, exps)])
                            for exps, c in zip(p.monoms(), p.coeffs())]).xreplace({b._pi: sympy.pi})
        assert sympy.srepr(b.to_sympy(p)) == sympy.srepr(plain)
        assert str(b.to_sympy(p)) == str(e)


@pytest.mark.parametrize("seed", range(4))
def test_ratio_product_equals_the_product_through_sympy(seed):
    rng = random.Random(100 + seed)
    for _ in range(25):
        ga, gb = rng.sample(SYMS, rng.randint(1, 4)), rng.sample(SYMS, rng.randint(1, 4))
        a = Ratio.from_sympy(_random_poly(rng, ga) or 1, _random_poly(rng, ga) or 1)
        b = Ratio.from_sympy(_random_poly(rng, gb) or 1, _random_poly(rng, gb) or 1)
        if a.infinite or b.infinite:
            continue
        plain = Ratio.from_sympy(*sympy.fraction(sympy.together(
            sympy.Mul(*a.to_sympy()[:1]) / a.to_sympy()[1] * b.to_sympy()[0] / b.to_sympy()[1])))
        got = ratio_product(a, b)
        assert got.to_sympy() == plain.to_sympy()
        assert tuple(got.num.context().names()) == tuple(plain.num.context().names())


def test_eps_form_at_zero_is_the_ideal_opamp_circuit():
    # A -> oo (e = 1/A -> 0) must give the ideal-op-amp function, for each catalogue op-amp circuit.
    for name in ("sallen-key-lowpass", "mfb-bandpass", "state-variable"):
        c = catalogue.build(name)
        p = eps_polys(derive(c.with_opamp_model("gain")), [f"A_{u.name}" for u in c.parts if u.kind == "opamp"])
        assert same_ratio(p, p.at_zero(p.num), p.at_zero(p.den), derive(ideal_opamps(c)))
        assert not same_ratio(p, p.num, p.den, derive(ideal_opamps(c)))


def test_three_opamp_first_order_terms_predict_the_exact_error():
    # First-order perturbation in 1/A (common practice): with every A = 10^6 the sum of the
    # first-order terms must match the exact relative error of DC gain and cutoff to O(1/A^2).
    c = catalogue.build("state-variable")
    e = opamp_error(c, "gain", gain="1M")
    dc, cut = e.numeric["dc_gain"], e.numeric["cutoff_hz"]
    assert set(e.dc_first_order) <= {"A_U1", "A_U2", "A_U3"} and e.dc_first_order
    assert dc["first_order"] == pytest.approx(dc["error"], rel=1e-4)
    assert cut["first_order"] == pytest.approx(cut["error"], rel=1e-4)
    # and the first-order DC coefficients are those of sympy's own series in e = 1/A
    x = sympy.Symbol("x", positive=True)
    a_syms = {sympy.Symbol(k, positive=True) for k in ("A_U1", "A_U2", "A_U3")}
    h0 = sympy.cancel(sympy.together(e.dc_real.xreplace({a: 1 / x for a in a_syms})))
    slope = sympy.cancel(sympy.diff(h0, x).subs(x, 0) / e.dc_ideal)
    assert sympy.cancel(slope - sum(e.dc_first_order.values())) == 0


def test_loop_gain_is_a_times_beta():
    # T(s) = A(s) beta(s) (the definition of the loop gain; common practice), for a two-pole op-amp.
    from symfilt.analysis.loop import loops, open_loop_gain

    c = catalogue.build("sallen-key-lowpass").with_opamp_model("two-pole")
    loop = loops(c)[0]
    a = open_loop_gain(c.part("U1"))
    plain = NetworkFunction.from_expr(a * loop.loaded.beta.as_expr())
    assert loop.loaded.loop_gain.ratio.to_sympy() == plain.ratio.to_sympy()
