"""Component values: exact reading against the standards, and every refusal word for word."""

from __future__ import annotations

import math
from fractions import Fraction

import pytest
import sympy

from symfilt.errors import ValueParseError
from symfilt.model.values import MAX_MAGNITUDE, MIN_MAGNITUDE, parse_value

R = sympy.Rational


# IEC 60062:2016 "Marking codes for resistors and capacitors", section 4 (RKM code): the
# multiplier letter stands for the decimal point; R marks the point with no multiplier.
@pytest.mark.parametrize("text, exact", [
    ("4k7", R(4700)), ("2n2", R(22, 10) * R(1, 10**9)), ("1R5", R(3, 2)), ("R47", R(47, 100)),
    ("6M8", R(6_800_000)), ("0R1", R(1, 10)), ("3p3", R(33, 10) * R(1, 10**12)), ("p68", R(68, 10**14)),
    ("-4k7", R(-4700)),
])
def test_rkm_code(text, exact):
    assert parse_value(text) == exact


# BIPM, The International System of Units (SI Brochure), 9th edition 2019, section 3, table 7
# (SI prefixes): p 1e-12, n 1e-9, u/µ 1e-6, m 1e-3, k 1e3, M 1e6, G 1e9, T 1e12, f 1e-15.
@pytest.mark.parametrize("text, exact", [
    ("22n", R(22, 10**9)), ("4.7k", R(4700)), ("1.5M", R(1_500_000)), ("10u", R(10, 10**6)),
    ("10µ", R(10, 10**6)), ("3.3m", R(33, 10**4)), ("1G", R(10**9)), ("2T", R(2 * 10**12)),
    ("5f", R(5, 10**15)), ("47p", R(47, 10**12)),
])
def test_si_prefixes(text, exact):
    assert parse_value(text) == exact


@pytest.mark.parametrize("text, exact", [
    ("1.5 MΩ", R(1_500_000)), ("22nF", R(22, 10**9)), ("10 kHz", R(10_000)), ("100 ohm", R(100)),
    ("2.2e-9", R(22, 10**10)), ("0.1", R(1, 10)), ("1/3", R(1, 3)), (" 4k7 ", R(4700)),
])
def test_units_and_plain_numbers_read_exactly(text, exact):
    # common practice: 0.1 must be one tenth exactly, not the binary float nearest to it
    assert parse_value(text) == exact


def test_numbers_from_toml_are_exact():
    assert parse_value(0.1) == R(1, 10)
    assert parse_value(4700) == 4700
    assert parse_value(Fraction(1, 3)) == R(1, 3)


def test_the_range_is_the_si_prefix_range():
    # SI Brochure 9th edition, table 7: yocto (1e-24) to yotta (1e24)
    assert MAX_MAGNITUDE == 10**24 and MIN_MAGNITUDE == R(1, 10**24)
    assert parse_value("1e24") == 10**24
    assert parse_value("1e-24") == R(1, 10**24)
    assert parse_value("-1e24") == -(10**24)
    assert parse_value("0") == 0


# --- refusals, word for word -------------------------------------------------------------

ACCEPTED = "write a number with an optional SI prefix (p n u µ m k M G), e.g. 4.7k, 4k7, 22n, 1R5, 2.2e-9"
RANGE = "use a value between 1e-24 and 1e24 in magnitude (the SI prefix range)"
SUFFIXES = ("use an SI prefix (f p n u µ m k M G T), an RKM letter (R, as in 1R5) and optionally a unit "
            "(Ω ohm F H Hz V A)")


@pytest.mark.parametrize("value, message", [
    ("4x7", f"part R1: value '4x7' has an unknown suffix 'x7', {SUFFIXES}"),
    ("10 kOhms!", f"part R1: value '10 kOhms!' has an unknown suffix 'kOhms!', {SUFFIXES}"),
    ("abc", f"part R1: value 'abc' is not understood, {ACCEPTED}"),
    ("", f"part R1: value '' is not understood, {ACCEPTED}"),
    ("nan", f"part R1: value 'nan' is not finite, {ACCEPTED}"),
    ("-Infinity", f"part R1: value '-Infinity' is not finite, {ACCEPTED}"),
    (float("nan"), f"part R1: value nan is not finite, {ACCEPTED}"),
    (float("inf"), f"part R1: value inf is not finite, {ACCEPTED}"),
    ("1e300", f"part R1: value '1e300' is out of range, {RANGE}"),
    ("1e-300", f"part R1: value '1e-300' is out of range, {RANGE}"),
    (1e300, f"part R1: value '1e+300' is out of range, {RANGE}"),
    ("1e25", f"part R1: value '1e25' is out of range, {RANGE}"),
    (10**40, f"part R1: a value of about 40 digits is out of range, {RANGE}"),
    ("1/0", f"part R1: value '1/0' divides by zero, {ACCEPTED}"),
    (True, f"part R1: value True is not a number, {ACCEPTED}"),
    ([1, 2], f"part R1: a list is not a value, {ACCEPTED}"),
    ({"a": 1}, f"part R1: a table is not a value, {ACCEPTED}"),
    ("1" * 65, "part R1: value text is 65 characters long, write a value of at most 64 characters"),
    ("٤٧", f"part R1: value '٤٧' is not understood, {ACCEPTED}"),  # digits of another script
])
def test_refusals_word_for_word(value, message):
    with pytest.raises(ValueParseError) as info:
        parse_value(value, where="part R1")
    assert str(info.value) == message


@pytest.mark.parametrize("text", ["1e999999999999", "9e-999999999999", "1e99999999999999999999k"])
def test_huge_exponents_are_refused_without_expanding_them(text):
    # 10**999999999999 would never finish; the exponent is checked before the number is built
    with pytest.raises(ValueParseError, match="out of range"):
        parse_value(text)


def test_zero_with_a_huge_exponent_is_zero():
    assert parse_value("0e999999999999") == 0


def test_value_errors_are_value_errors():
    # errors.py: each error class also speaks a built-in, so callers may catch ValueError
    with pytest.raises(ValueError):
        parse_value("junk")


def test_parse_value_never_returns_a_float():
    v = parse_value("2.2e-9")
    assert isinstance(v, sympy.Rational)
    assert math.isclose(float(v), 2.2e-9)
