"""The derivation engine (mna.py, elimination.py) against the plain sympy approach.

The reference here is what an engineer would write by hand: Kirchhoff's current
law at every node with each part's current from its impedance (R, 1/(sC), sL),
the defining equation of every controlled source and op-amp model, solved by
``sympy.solve`` and put over one denominator by ``sympy.cancel`` (Kirchhoff's
laws and the element laws: common practice). The reference is written
independently of the engine's stamps: no matrices, no reciprocal generators.
"""

from __future__ import annotations

import re

import pytest
import sympy

from helpers import same

from symfilt import catalogue
from symfilt.analysis import network
from symfilt.model.circuit import GROUND, LOAD_C, LOAD_R, SOURCE_R, Circuit, Fixture, Part, S, part_symbol
from symfilt.engine.elimination import DEFAULT_MAX_TERMS, DelayedProgress, solve
from symfilt.engine.rational import poly_to_sympy
from symfilt.errors import SingularCircuitError, SizeLimitError, UsageError
from symfilt.engine.mna import build_system
from symfilt.engine.solve import solve_unknown

R, C, L, U = Part.resistor, Part.capacitor, Part.inductor, Part.opamp


# --- the plain approach -------------------------------------------------------------
def _impedance(name: str, kind: str):
    x = part_symbol(name)
    return {"resistor": x, "capacitor": 1 / (S * x), "inductor": S * x}[kind]


def plain(circuit: Circuit, mode: str = "transfer") -> sympy.Expr:
    """V(out)/V(source) (transfer), or the impedance at the input (zin) or output (zout)."""
    nodes = circuit.nodes()
    v = {n: sympy.Symbol(f"v_{n}") for n in nodes}
    v[GROUND] = sympy.Integer(0)
    unknowns = [v[n] for n in nodes]
    leaving = {n: sympy.Integer(0) for n in nodes}
    current = {}
    equations = []

    def branch(name, a, b, i):
        current[name] = i
        for node, sign in ((a, 1), (b, -1)):
            if node in leaving:
                leaving[node] += sign * i

    twos = [(p.name, p.kind, *p.nodes) for p in circuit.parts if p.kind in ("resistor", "capacitor", "inductor")]
    if circuit.source.present and mode in ("transfer", "zout"):
        v["src"] = sympy.Integer(1 if mode == "transfer" else 0)
        twos.append((SOURCE_R, "resistor", "src", circuit.input))
    elif mode in ("transfer", "zout"):
        i_src = sympy.Symbol("i_src")
        unknowns.append(i_src)
        leaving[circuit.input] -= i_src
        equations.append(v[circuit.input] - (1 if mode == "transfer" else 0))
    if mode in ("transfer", "zin"):
        if circuit.load_resistance.present:
            twos.append((LOAD_R, "resistor", circuit.output, GROUND))
        if circuit.load_capacitance.present:
            twos.append((LOAD_C, "capacitor", circuit.output, GROUND))
    for name, kind, a, b in twos:
        branch(name, a, b, (v[a] - v[b]) / _impedance(name, kind))
    for p in circuit.parts:
        if p.kind in ("vcvs", "ccvs", "opamp"):
            current[p.name] = sympy.Symbol(f"i_{p.name}")
            unknowns.append(current[p.name])
    for p in circuit.parts:
        k = part_symbol(p.name, p.kind)
        if p.kind == "vccs":
            branch(p.name, p.nodes[0], p.nodes[1], k * (v[p.nodes[2]] - v[p.nodes[3]]))
        elif p.kind == "cccs":
            branch(p.name, p.nodes[0], p.nodes[1], k * current[p.control])
        elif p.kind in ("vcvs", "ccvs"):
            branch(p.name, p.nodes[0], p.nodes[1], current[p.name])
            control = v[p.nodes[2]] - v[p.nodes[3]] if p.kind == "vcvs" else current[p.control]
            equations.append(v[p.nodes[0]] - v[p.nodes[1]] - k * control)
        elif p.kind == "opamp":
            plus, minus, out = (v[x] for x in p.nodes)
            leaving[p.nodes[2]] += current[p.name]
            if p.model == "ideal":
                equations.append(plus - minus)
            else:
                a = part_symbol(f"A_{p.name}")
                if p.model == "single-pole":
                    wb = 2 * sympy.pi * part_symbol(f"GBW_{p.name}")
                    a = a * wb / (a * S + wb)
                equations.append(out - a * (plus - minus))
    injected = {"zin": circuit.input, "zout": circuit.output}.get(mode)
    if injected:
        leaving[injected] -= 1  # a unit test current flows into the node
    equations = [leaving[n] for n in nodes] + equations
    solution = sympy.solve(equations, unknowns, dict=True)
    assert len(solution) == 1
    return sympy.cancel(solution[0][v[circuit.output if mode != "zin" else circuit.input]])


def ladder(n: int) -> Circuit:
    return catalogue.rc_ladder(n, R=None, C=None, source="symbol", load="symbol")


def controlled() -> Circuit:
    """All four controlled sources and an inductor, with symbolic source, load R and load C."""
    return Circuit.build([
        R("R1", "in", "a"), L("L1", "a", "out"), C("C1", "out", "0"),
        Part.make("E1", "vcvs", ["b", "0", "out", "0"]), R("R2", "b", "out"),
        Part.make("F1", "cccs", ["out", "0"], control="R2"),
        Part.make("H1", "ccvs", ["d", "0"], control="L1"), R("R3", "d", "a"),
        Part.make("G1", "vccs", ["a", "0", "d", "0"]),
    ], source="symbol", load="symbol", load_capacitance="symbol", title="controlled sources")


# --- equality with the plain approach --------------------------------------------------
@pytest.mark.parametrize("n", [2, 3])
def test_rc_ladder_equals_plain_approach(n):
    c = ladder(n)
    h = network.derive(c)
    assert same(h.as_expr(), plain(c))
    # every symbol, source and load included, is in the result
    assert {str(x) for x in h.free_symbols()} == set(c.symbols())


def test_rc_ladder_two_sections_at_dc():
    # At s = 0 the capacitors are open and the ladder is a voltage divider:
    # H(0) = R_L / (R_s + R1 + R2 + R_L) (common practice).
    h = network.derive(ladder(2))
    r1, r2, rs, rl = (part_symbol(x) for x in ("R1", "R2", "R_s", "R_L"))
    assert same(h.dc_gain(), rl / (rs + r1 + r2 + rl))


# plain() has no op-amp output resistance: adc-driver (with Rout) is checked against an
# own numeric nodal solve in tests/test_opamp_model.py instead.
@pytest.mark.parametrize("name", [n for n in catalogue.names() if n != "adc-driver"])
def test_catalogue_equals_plain_approach(name):
    c = catalogue.build(name)
    # a tied circuit (twin-t-notch-tied): the plain solution with the ties put in afterwards
    tied = {c.part(n).symbol: e for n, e in c.ties().items()}
    assert same(network.derive(c).as_expr(), plain(c).xreplace(tied))


@pytest.mark.parametrize("model", ["gain", "single-pole"])
@pytest.mark.parametrize("name", ["sallen-key-lowpass", "mfb-lowpass", "inverting-lowpass"])
def test_finite_opamp_models_equal_plain_approach(name, model):
    c = catalogue.build(name).with_opamp_model(model)
    assert same(network.derive(c).as_expr(), plain(c))


def test_controlled_sources_and_inductor_equal_plain_approach():
    c = controlled()
    h = network.derive(c)
    assert same(h.as_expr(), plain(c))
    assert {"E1", "F1", "G1", "H1", "L1"} <= {str(x) for x in h.free_symbols()}


@pytest.mark.parametrize("mode", ["zin", "zout"])
@pytest.mark.parametrize("make", [lambda: ladder(3), controlled, lambda: catalogue.build("mfb-lowpass")],
                         ids=["ladder-3", "controlled", "mfb-lowpass"])
def test_impedances_equal_plain_approach(make, mode):
    c = make()
    num, den = solve(build_system(c, mode)).to_sympy()
    assert same(num / den, plain(c, mode))


@pytest.mark.parametrize("name", ["inverting-lowpass", "twin-t-notch", "sallen-key-lowpass-gain"])
def test_result_is_reduced_with_a_positive_trailing_coefficient(name):
    r = solve(build_system(catalogue.build(name), "transfer"))
    assert r.num.gcd(r.den).is_one()
    assert int(r.den.coeffs()[-1]) > 0


# --- conversion to sympy ----------------------------------------------------------------
@pytest.mark.parametrize("make", [lambda: ladder(5), controlled,
                                  lambda: catalogue.build("sallen-key-lowpass").with_opamp_model("single-pole")],
                         ids=["ladder-5", "controlled", "single-pole"])
def test_fast_conversion_builds_sympys_own_canonical_form(make):
    # The direct construction must give the very object sympy's evaluating
    # constructors give: same args in the same order (else == and hashing break).
    r = solve(build_system(make(), "transfer"))
    for p in (r.num, r.den, -r.den, 3 * r.den - 7, r.den * r.den):
        fast = poly_to_sympy(p, r.symbols)
        gens = [r.symbols[nm] for nm in p.context().names()]
        slow = sympy.Add(*[sympy.Mul(int(c), *[g**e for g, e in zip(gens, exps)]) for exps, c in p.terms()])
        assert fast == slow
        assert fast.args == slow.args
        assert sympy.srepr(fast) == sympy.srepr(slow)


# --- size budget -------------------------------------------------------------------------
def test_size_budget_error_names_the_size_and_the_option():
    c = ladder(5)
    with pytest.raises(SizeLimitError) as info:
        network.derive(c, max_terms=20)
    err = info.value
    assert isinstance(err, OverflowError)
    assert re.fullmatch(
        r"RC ladder, 5 sections: the derivation outgrew its size budget: a polynomial reached (\d+) terms, over the budget of "
        r"20 \(the circuit has 10 parts and 8 unknowns\), raise the budget with --max-terms \(max_terms= in "
        r"Python\) or derive the stages one at a time",
        str(err))
    assert int(re.search(r"reached (\d+) terms", str(err)).group(1)) > 20


def test_size_budget_error_suggests_ideal_opamps_when_they_are_finite():
    c = catalogue.build("sallen-key-lowpass").with_opamp_model("single-pole")
    with pytest.raises(SizeLimitError) as info:
        network.derive(c, max_terms=10)
    assert str(info.value).endswith(", or with ideal op-amps (--opamp-model ideal)")
    assert "(the circuit has 5 parts and 7 unknowns)" in str(info.value)


def test_default_budget_fits_a_ten_section_ladder():
    # the result has 28 657 denominator terms (computed regression value; a Fibonacci number:
    # each section adds the terms of the two before, common practice for RC ladders)
    assert DEFAULT_MAX_TERMS > 28_657


# --- singular circuits -----------------------------------------------------------------------
def test_opamp_inputs_on_one_node_is_singular():
    # built without the structural checks: the engine itself must refuse it
    c = Circuit(parts=(R("R1", "in", "a"), R("R2", "a", "0"), U("U1", "a", "a", "out"), R("R3", "out", "0")),
                source=Fixture(True, None))
    with pytest.raises(SingularCircuitError) as info:
        solve(build_system(c), where="bad stage")
    assert str(info.value).startswith("bad stage: the circuit equations are singular")


def test_opamp_without_feedback_is_singular():
    c = Circuit(parts=(R("R1", "in", "a"), R("R2", "a", "0"), U("U1", "0", "a", "out"), R("R3", "out", "0")))
    with pytest.raises(SingularCircuitError):
        solve(build_system(c))


# --- progress ----------------------------------------------------------------------------------
def test_progress_receives_stage_names():
    seen = []
    solve(build_system(ladder(4)), progress=seen.append)
    assert seen[0] == "elimination step 1 of 6"
    assert seen[-2:] == ["restoring resistances", "cancelling common factors"]


def test_delayed_progress_is_silent_until_the_delay():
    clock = iter([100.0, 100.1, 101.9, 102.0, 107.0])
    seen = []
    report = DelayedProgress(seen.append, delay=2.0, clock=lambda: next(clock))
    for stage in ("a", "b", "c", "d"):
        report(stage)
    assert seen == ["c", "d"]


def test_delayed_progress_stays_silent_on_a_short_derivation():
    seen = []
    network.derive(catalogue.build("rc-lowpass"), progress=DelayedProgress(seen.append, delay=3600))
    assert seen == []


# --- flint-side limits and coefficients ---------------------------------------------------
@pytest.mark.parametrize("make", [lambda: ladder(3), controlled, lambda: catalogue.build("mfb-lowpass"),
                                  lambda: catalogue.build("sallen-key-lowpass").with_opamp_model("single-pole")],
                         ids=["ladder-3", "controlled", "mfb-lowpass", "single-pole"])
def test_ratio_limits_agree_with_sympy_limit(make):
    r = solve(build_system(make(), "transfer"))
    num, den = r.to_sympy()
    for name, point in (("R_s", 0), ("R_L", "oo"), ("C_L", 0), ("s", 0), ("s", "oo"), ("R1", "oo")):
        if name not in r.symbols:
            continue
        x = r.symbols[name]
        expected = sympy.limit(num / den, x, sympy.oo if point == "oo" else 0)
        got = r.limit(name, point)
        if got is None:
            assert expected in (sympy.oo, -sympy.oo)
        else:
            n, d = got.to_sympy()
            assert same(n / d, expected)


def test_ratio_coefficients_and_degree_agree_with_sympy_poly():
    r = solve(build_system(ladder(3), "transfer"))
    num, den = r.to_sympy()
    n_cs, d_cs = r.coefficients("s")
    assert [poly_to_sympy(c, r.symbols) for c in d_cs] == sympy.Poly(den, S).all_coeffs()[::-1]
    assert [poly_to_sympy(c, r.symbols) for c in n_cs] == sympy.Poly(num, S).all_coeffs()[::-1]
    assert r.degree("s") == 3 == sympy.degree(den, S)


# --- one entry point for any unknown -------------------------------------------------
def test_solve_unknown_node_voltage_and_branch_currents_by_hand():
    # R1 from in to mid, R2 from mid to out, C1 from out to ground, driven by an ideal unit source.
    # Ohm's law and the voltage divider (common practice): the current is 1/(R1 + R2 + 1/(sC1)),
    # V(mid) = (R2 + 1/(sC1)) times it; the source's branch current flows from the input into
    # the source, so it is minus the current the source delivers.
    c = Circuit.build([R("R1", "in", "mid"), R("R2", "mid", "out"), C("C1", "out", "0")])
    r1, r2, c1 = part_symbol("R1"), part_symbol("R2"), part_symbol("C1")
    current = 1 / (r1 + r2 + 1 / (S * c1))
    v_mid = solve_unknown(c, "V(mid)").to_sympy()
    assert sympy.cancel(v_mid[0] / v_mid[1] - (r2 + 1 / (S * c1)) * current) == 0
    assert solve_unknown(c, "mid").to_sympy() == v_mid  # a bare node name is its voltage
    i_src = solve_unknown(c, "I(source)").to_sympy()
    assert sympy.cancel(i_src[0] / i_src[1] + current) == 0
    # a vcvs of gain E1 copying V(in) onto node o, loaded by R3 and by R4 + R5 in parallel: it delivers
    # E1 V(in) (1/R3 + 1/(R4 + R5)) (Ohm's law), and its branch current flows from the node into the
    # part's output, so I(E1) is minus that
    buffered = Circuit.build([R("R0", "in", "0"), Part.make("E1", "vcvs", ["o", "0", "in", "0"]),
                              R("R3", "o", "0"), R("R4", "o", "out"), R("R5", "out", "0")])
    r3, r4, r5 = part_symbol("R3"), part_symbol("R4"), part_symbol("R5")
    i_e1 = solve_unknown(buffered, "I(E1)").to_sympy()
    assert sympy.cancel(i_e1[0] / i_e1[1] + part_symbol("E1", "vcvs") * (1 / r3 + 1 / (r4 + r5))) == 0


def test_solve_unknown_default_is_the_drive_modes_own_unknown():
    c = catalogue.build("sallen-key-lowpass")
    for mode in ("transfer", "zin", "zout"):
        assert solve_unknown(c, drive=mode).to_sympy() == solve(build_system(c, mode)).to_sympy()
    # the output voltage asked for by name is the same unknown as the default
    assert solve_unknown(c, f"V({c.output})").to_sympy() == solve_unknown(c).to_sympy()


def test_solve_unknown_refuses_a_missing_unknown():
    c = catalogue.build("rc-lowpass")
    with pytest.raises(UsageError) as info:
        solve_unknown(c, "nowhere")
    assert str(info.value) == "nowhere: no such node or branch, name a node of the circuit"
    with pytest.raises(ValueError):
        solve_unknown(c, drive="current")
