"""Helpers shared by the test modules: expression comparison and reference circuits.

One copy of each, imported by the tests as ``from helpers import ...`` (``tests/`` is on
pytest's ``pythonpath``, see pyproject.toml). The circuits are built part by part with their
node connections written out beside them, so that the tests do not lean on the catalogue.
Every part value is optional: ``None`` leaves the part symbolic.
"""

from __future__ import annotations

import random

import sympy

from symfilt.model.circuit import Circuit, Part


# --- comparison ------------------------------------------------------------------------

def same(a, b) -> bool:
    """Exact equality of two rational expressions: ``sympy.cancel(a - b) == 0``."""
    return sympy.cancel(sympy.together(sympy.sympify(a) - sympy.sympify(b))) == 0


def equal(a, b, points: int = 6, seed: int = 3) -> bool:
    """Equality of two expressions: exactly by cancel, else at random positive points
    (30 significant digits; every free symbol of these expressions is a positive quantity)."""
    a, b = sympy.sympify(a), sympy.sympify(b)
    if same(a, b):
        return True
    rng = random.Random(seed)
    syms = sorted(a.free_symbols | b.free_symbols, key=str)
    for _ in range(points):
        pt = {x: sympy.Rational(rng.randint(1, 10**6), rng.randint(1, 10**6)) for x in syms}
        va, vb = sympy.N(a.xreplace(pt), 30), sympy.N(b.xreplace(pt), 30)
        if abs(complex(va) - complex(vb)) > 1e-20 * max(1.0, abs(complex(va))):
            return False
    return True


def close_to(x: float, text: str) -> bool:
    """x equals the published number ``text`` to the digits it is given with."""
    decimals = len(text.split(".")[1]) if "." in text else 0
    return abs(x - float(text)) <= 0.5 * 10.0 ** (-decimals) * 1.001


def parallel(*zs):
    """Impedances in parallel: 1 / sum(1/z)."""
    return 1 / sum(1 / z for z in zs)


def w0_q_squared(h):
    """w0^2 and Q^2 read off a second-order denominator d0 + d1 s + d2 s^2 (common practice)."""
    s = sympy.Symbol("s")
    assert sympy.degree(h.den, s) == 2
    d0, d1, d2 = (sympy.Poly(h.den, s).coeff_monomial(s**k) for k in range(3))
    return sympy.cancel(d0 / d2), sympy.cancel(d0 * d2 / d1**2)


def solve_nodes(equations, unknowns, output):
    """Solve hand-written linear nodal (KCL) equations, each == 0, for the output node voltage."""
    solution = sympy.solve(equations, unknowns, dict=True)
    assert len(solution) == 1
    return sympy.cancel(solution[0][output])


# --- circuits, with their connections -----------------------------------------------------

def rc_lowpass(r1=None, c1=None, **fixtures) -> Circuit:
    """R1 from in to out, C1 from out to ground."""
    return Circuit.build([Part.resistor("R1", "in", "out", r1), Part.capacitor("C1", "out", "0", c1)], **fixtures)


def rc_highpass(c1=None, r1=None, **fixtures) -> Circuit:
    """C1 from in to out, R1 from out to ground."""
    return Circuit.build([Part.capacitor("C1", "in", "out", c1), Part.resistor("R1", "out", "0", r1)], **fixtures)


def sallen_key_lowpass(r1=None, r2=None, c1=None, c2=None, **fixtures) -> Circuit:
    """R1 in->a, R2 a->b, C1 a->out (feedback), C2 b->ground, unity follower: + at b, - and out at out."""
    return Circuit.build([Part.resistor("R1", "in", "a", r1), Part.resistor("R2", "a", "b", r2),
                          Part.capacitor("C1", "a", "out", c1), Part.capacitor("C2", "b", "0", c2),
                          Part.opamp("U1", "b", "out", "out")], **fixtures)


def sallen_key_lowpass_gain(r1=None, r2=None, c1=None, c2=None, rf=None, rg=None, **fixtures) -> Circuit:
    """R1 in->a, R2 a->b, C1 a->out, C2 b->ground; op-amp + at b, - at f, output at out;
    Rf out->f, Rg f->ground: non-inverting gain K = 1 + Rf/Rg."""
    return Circuit.build([Part.resistor("R1", "in", "a", r1), Part.resistor("R2", "a", "b", r2),
                          Part.capacitor("C1", "a", "out", c1), Part.capacitor("C2", "b", "0", c2),
                          Part.opamp("U1", "b", "f", "out"), Part.resistor("Rf", "out", "f", rf),
                          Part.resistor("Rg", "f", "0", rg)], **fixtures)


def sallen_key_highpass(c1=None, c2=None, r1=None, r2=None, **fixtures) -> Circuit:
    """C1 in->a, C2 a->b, R1 a->out (feedback), R2 b->ground, unity follower: + at b, - and out at out."""
    return Circuit.build([Part.capacitor("C1", "in", "a", c1), Part.capacitor("C2", "a", "b", c2),
                          Part.resistor("R1", "a", "out", r1), Part.resistor("R2", "b", "0", r2),
                          Part.opamp("U1", "b", "out", "out")], **fixtures)


def mfb_lowpass(r1=None, r2=None, r3=None, c1=None, c2=None, **fixtures) -> Circuit:
    """R1 in->x, C1 x->ground, R2 x->out, R3 x->y, C2 y->out, op-amp + at ground, - at y, output at out."""
    return Circuit.build([Part.resistor("R1", "in", "x", r1), Part.capacitor("C1", "x", "0", c1),
                          Part.resistor("R2", "x", "out", r2), Part.resistor("R3", "x", "y", r3),
                          Part.capacitor("C2", "y", "out", c2), Part.opamp("U1", "0", "y", "out")], **fixtures)
