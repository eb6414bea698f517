"""Sizing's closed form for a second-order stage: the quadratic formula's root put back into the
published w0, Q and -3 dB formulas gives the target (tests/REFERENCES.md, "Second order").

The sized part enters w0^2 and Q^2 so that the cutoff condition is a quadratic in it; the root is
taken by the quadratic formula (common practice) on the exact coefficients. Each check here
recomputes the loaded cutoff from the published formulas with the source resistance added in
series to R1 (series resistances add; common practice), never with a symfilt function.
"""

from __future__ import annotations

import math

import pytest

from symfilt import catalogue
from symfilt.design.sizing import size


def second_order_cutoff(w0: float, q: float) -> float:
    # -3 dB of a second-order low-pass: x = 1 - 1/(2 Q^2), w_c = w0 sqrt(x + sqrt(x^2 + 1))
    # (REFERENCES.md, "Second-order low-pass -3 dB frequency"; common practice)
    x = 1 - 1 / (2 * q * q)
    return w0 * math.sqrt(x + math.sqrt(x * x + 1))


def sallen_key(r1, r2, c1, c2):
    # TI SLOA024 (from memory): w0 = 1/sqrt(R1 R2 C1 C2), Q = sqrt(R1 R2 C1 C2)/(C2 (R1 + R2))
    p = r1 * r2 * c1 * c2
    return second_order_cutoff(1 / math.sqrt(p), math.sqrt(p) / (c2 * (r1 + r2)))


def mfb(r1, r2, r3, c1, c2):
    # TI, Op Amps for Everyone (from memory): w0 = 1/sqrt(R2 R3 C1 C2),
    # Q = sqrt(R2 R3 C1 C2)/(C2 (R2 + R3 + R2 R3/R1))
    p = r2 * r3 * c1 * c2
    return second_order_cutoff(1 / math.sqrt(p), math.sqrt(p) / (c2 * (r2 + r3 + r2 * r3 / r1)))


def exact_at_values(r, circuit) -> float:
    vals = {k: v for k, v in circuit.values().items()}
    return float(r.exact.xreplace(vals).evalf(30))


@pytest.mark.parametrize("f", [800.0, 2000.0, 3000.0])
def test_sallen_key_r1_closed_form_meets_the_cutoff(f):
    c = catalogue.build("sallen-key-lowpass")  # R_s = 50, R2 = 15k, C1 = 10n, C2 = 3.3n, follower
    r = size(c, ("cutoff", f), "R1")
    assert r.method == "closed form"
    r1 = exact_at_values(r, c)
    assert math.isclose(r1, r.value, rel_tol=1e-9)
    got = sallen_key(r1 + 50, 15e3, 10e-9, 3.3e-9) / (2 * math.pi)
    assert math.isclose(got, f, rel_tol=1e-9)


def test_mfb_r2_closed_form_meets_the_cutoff():
    c = catalogue.build("mfb-lowpass")  # R_s = 600, R1 = 5.6k, R3 = 8.2k, C1 = 47n, C2 = 2.2n
    r = size(c, ("cutoff", 1000), "R2")
    assert r.method == "closed form"
    r2 = exact_at_values(r, c)
    assert math.isclose(r2, r.value, rel_tol=1e-9)
    got = mfb(5.6e3 + 600, r2, 8.2e3, 47e-9, 2.2e-9) / (2 * math.pi)
    assert math.isclose(got, 1000, rel_tol=1e-9)
