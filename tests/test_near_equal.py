"""Near-equal claims: `check` never says "equal" for a claim that differs, however little.

The cases are the classes of issue 19: the correct function plus a tiny multiple of a
radical, times a radical that is almost 1, plus a non-analytic term that vanishes on part of
the sampled region. Expected verdicts follow from the algebra itself (a nonzero difference is
a difference; the identity sqrt(x)^2 = x holds for x > 0): common practice, no published
table. The derived functions are the catalogue's ideal transfer functions.
"""

from __future__ import annotations

import pytest
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

import symfilt
from symfilt import catalogue
from symfilt.errors import ClaimError

NAMES = ["rc-lowpass", "sallen-key-lowpass", "mfb-bandpass", "twin-t-notch"]
TINY = ["1e-25", "1e-45", "1e-100", "1e-300"]


def ideal(name):
    return symfilt.derive(catalogue.build(name).without_fixtures()).as_expr()


def a_symbol(h):
    return sorted((x for x in h.free_symbols if x.name != "s"), key=lambda x: x.name)[0]


@pytest.mark.parametrize("name", NAMES)
@pytest.mark.parametrize("eps", TINY)
def test_tiny_radical_terms_and_factors_are_different(name, eps):
    h = ideal(name)
    x = a_symbol(h).name
    text = str(h)
    for claim in (f"({text}) + {eps}*sqrt({x})", f"({text})*sqrt(1 + {eps}*{x})",
                  f"({text})*(1 + {eps})", f"({text}) + {eps}*{x}**(1/2)*s"):
        r = symfilt.equivalent(claim, h)
        assert not r.equivalent and r.method == "exact", claim


@pytest.mark.parametrize("name", NAMES)
def test_radical_identities_are_equal_exactly(name):
    h = ideal(name)
    x = a_symbol(h).name
    text = str(h)
    for claim in (f"({text})*sqrt({x})/sqrt({x})", f"({text})*sqrt(1 + 1e-45*{x})**2/(1 + 1e-45*{x})",
                  f"({text})*sqrt(2)*sqrt(8)/4", f"({text})*sqrt({x})**3/({x}*sqrt({x}))"):
        r = symfilt.equivalent(claim, h)
        assert r.equivalent and r.method == "exact", claim


R1, C1 = sympy.symbols("R1 C1", positive=True)
NON_ANALYTIC = {
    "abs": sympy.Abs(R1 - sympy.Rational(1, 20)) - (R1 - sympy.Rational(1, 20)),  # 0 for R1 > 1/20 only
    "sign": sympy.sign(R1 - 1) - 1,
    "max": sympy.Max(R1, C1) - R1,
    "floor": sympy.floor(R1) - R1,
}


@pytest.mark.parametrize("term", sorted(NON_ANALYTIC))
def test_non_analytic_functions_are_refused(term):
    h = ideal("rc-lowpass")
    with pytest.raises(ClaimError, match="not analytic"):
        symfilt.equivalent(h + NON_ANALYTIC[term], h)


def test_latex_absolute_value_is_refused():
    with pytest.raises(ClaimError):
        symfilt.equivalent(r"\frac{1}{1 + s R_{1} C_{1}} + \left|R_{1} - 1\right| - R_{1} + 1", ideal("rc-lowpass"))


def test_sampled_agreement_is_never_called_equal():
    h = ideal("rc-lowpass")
    R1 = a_symbol(h)
    with pytest.raises(ClaimError, match="no proof of equality"):
        symfilt.equivalent(h * sympy.exp(sympy.Rational(1, 10**40) * R1), h)
    # a difference the samples do show is still a difference
    assert not symfilt.equivalent(h * sympy.exp(R1), h).equivalent


@settings(max_examples=40, deadline=None)
@given(k=st.integers(20, 400), p=st.sampled_from([2, 3, 5]), name=st.sampled_from(NAMES))
def test_any_tiny_root_term_is_a_difference(k, p, name):
    h = ideal(name)
    x = a_symbol(h)
    claim = h + sympy.Rational(1, 10**k) * x ** sympy.Rational(1, p)
    assert not symfilt.equivalent(claim, h).equivalent
    assert symfilt.equivalent(h + (x ** sympy.Rational(1, p)) ** p - x, h).equivalent
