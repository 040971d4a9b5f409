"""Number literals: SI prefixes, IEC 60062 RKM codes, units, exact values."""

from decimal import Decimal
from fractions import Fraction

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from symcirc.language.numbers import PREFIXES, RKM_MARKERS, NumberError, decode_number

# SI prefixes and their powers of ten: SI Brochure (BIPM, 9th edition, 2019), table of SI
# prefixes (from memory). `u` is the usual ASCII stand-in for micro (common practice).
SI_PREFIXES = [
    ("f", -15), ("p", -12), ("n", -9), ("u", -6), ("\u00b5", -6), ("\u03bc", -6),
    ("m", -3), ("k", 3), ("M", 6), ("G", 9), ("T", 12),
]


@pytest.mark.parametrize(("prefix", "power"), SI_PREFIXES)
def test_si_prefix_attached_to_a_number(prefix, power):
    assert decode_number(f"3{prefix}").value == 3 * Fraction(10) ** power
    assert decode_number(f"2.5{prefix}").value == Fraction(5, 2) * Fraction(10) ** power


# IEC 60062:2016 (letter and numeral code for resistance and capacitance values), the RKM
# code: the letter stands where the decimal point goes and gives the multiplier. For
# resistance L = 10^-3, R = 1, K = 10^3, M = 10^6, G = 10^9, T = 10^12; for capacitance
# p = 10^-12, n = 10^-9, µ = 10^-6, m = 10^-3, F = 1. The resistance examples of the
# standard: R47 = 0.47 Ω, 4R7 = 4.7 Ω, 470R = 470 Ω, 4K7 = 4.7 kΩ, 47K = 47 kΩ,
# 47K3 = 47.3 kΩ, 470K = 470 kΩ, 4M7 = 4.7 MΩ (as reproduced in secondary references on
# the standard, not checked against the printed text). The other rows apply the same letters
# (from memory); lowercase k and ASCII u are common practice.
IEC_60062_EXAMPLES = [
    ("R47", Fraction(47, 100)),
    ("4R7", Fraction(47, 10)),
    ("470R", Fraction(470)),
    ("4K7", Fraction(4700)),
    ("47K", Fraction(47000)),
    ("47K3", Fraction(47300)),
    ("470K", Fraction(470_000)),
    ("4M7", Fraction(4_700_000)),
    ("2R2", Fraction(22, 10)),
    ("47R", Fraction(47)),
    ("4k7", Fraction(4700)),
    ("1M5", Fraction(1_500_000)),
    ("2G2", Fraction(2_200_000_000)),
    ("1T0", Fraction(10) ** 12),
    ("6L8", Fraction(68, 10) * Fraction(10) ** -3),
    ("47L", Fraction(47, 1000)),
    ("p47", Fraction(47, 100) * Fraction(10) ** -12),
    ("4p7", Fraction(47, 10) * Fraction(10) ** -12),
    ("4n7", Fraction(47, 10) * Fraction(10) ** -9),
    ("6n8", Fraction(68, 10) * Fraction(10) ** -9),
    ("4\u00b57", Fraction(47, 10) * Fraction(10) ** -6),
    ("1\u00b50", Fraction(1, 10**6)),
    ("4u7", Fraction(47, 10) * Fraction(10) ** -6),
    ("4m7", Fraction(47, 10) * Fraction(10) ** -3),
    ("4F7", Fraction(47, 10)),
    ("1F0", Fraction(1)),
]


@pytest.mark.parametrize(("code", "value"), IEC_60062_EXAMPLES)
def test_rkm_code_examples_of_iec_60062(code, value):
    assert decode_number(code) == (value, None)


def test_rkm_with_a_leading_zero_and_with_a_unit():
    # `0R47` is the file form of R47 (a bare `R47` would be a name in a circuit file).
    assert decode_number("0R47").value == Fraction(47, 100)
    assert decode_number("4k7 Ω") == (4700, "Ω")
    assert decode_number("4n7F") == (Fraction(47, 10) * Fraction(10) ** -9, "F")
    # a code letter that is also a unit: `4F7` is the code, a bare `22F` is 22 farads
    assert decode_number("4F7 F") == (Fraction(47, 10), "F")
    assert decode_number("22F") == (22, "F")


@pytest.mark.parametrize(("text", "value"), [
    ("350", Fraction(350)), ("0.25", Fraction(1, 4)), ("1e-3", Fraction(1, 1000)),
    ("2.5E6", Fraction(2_500_000)), (".5", Fraction(1, 2)), ("1.", Fraction(1)),
    ("2.2\u00b5", Fraction(11, 5_000_000)),
])
def test_plain_numbers_are_exact(text, value):
    # Values: ordinary decimal notation (common practice), compared as exact fractions.
    assert decode_number(text) == (value, None)


@pytest.mark.parametrize(("text", "value", "unit"), [
    ("10 k\u03a9", 10_000, "\u03a9"),
    ("10kohm", 10_000, "\u03a9"),
    ("10 \u2126", 10, "\u03a9"),        # the ohm sign U+2126 reads as the letter omega
    ("4.7 nF", Fraction(47, 10) * Fraction(10) ** -9, "F"),
    ("1 ms", Fraction(1, 1000), "s"),
    ("2 s", 2, "s"),
    ("1mS", Fraction(1, 1000), "S"),
    ("1 MHz", 1_000_000, "Hz"),
    ("10 mH", Fraction(1, 100), "H"),
    ("2.5 V", Fraction(5, 2), "V"),
    ("1 mA", Fraction(1, 1000), "A"),
    ("250 mW", Fraction(1, 4), "W"),
    ("1fF", Fraction(1, 10**15), "F"),
    ("10k \u03a9", 10_000, "\u03a9"),
])
def test_units_with_and_without_prefix(text, value, unit):
    # Unit symbols and prefixed units: SI Brochure (BIPM, 9th edition), from memory.
    assert decode_number(text) == (Fraction(value), unit)


def test_percent_is_a_hundredth():
    assert decode_number("0.1 %") == (Fraction(1, 1000), "%")
    assert decode_number("5%") == (Fraction(1, 20), "%")


@pytest.mark.parametrize(("text", "words"), [
    ("4k7k", "already has an SI prefix or RKM code"),
    ("2R2k", "`k` after `2R2`, which already has an SI prefix or RKM code"),
    ("10kX", "`X` is not a unit"),
    ("3x", "`x` is not a unit"),
    ("1e", "incomplete exponent"),
    ("1..2", "more than one decimal point"),
    ("10Kx", "`x` is not a unit"),
    ("1k%", "percentage takes no SI prefix"),
    ("10k k\u03a9", "two SI prefixes"),
    ("1e999", "exponent out of range"),
    ("1" * 100, "too long for a number"),
])
def test_bad_literals_are_reported(text, words):
    with pytest.raises(NumberError) as problem:
        decode_number(text)
    assert words in problem.value.message


def test_error_offset_points_at_the_bad_part():
    with pytest.raises(NumberError) as problem:
        decode_number("10kX")
    assert problem.value.offset == 3


digits = st.text("0123456789", min_size=1, max_size=8)


@settings(max_examples=200, deadline=None)
@given(whole=digits, fraction=digits, prefix=st.sampled_from(sorted(PREFIXES)))
def test_prefixed_decimal_agrees_with_the_decimal_module(whole, fraction, prefix):
    # Independent computation with Python's decimal module.
    expected = Fraction(Decimal(f"{whole}.{fraction}") * Decimal(10) ** PREFIXES[prefix])
    assert decode_number(f"{whole}.{fraction}{prefix}").value == expected


@settings(max_examples=200, deadline=None)
@given(whole=digits, fraction=digits, marker=st.sampled_from(sorted(RKM_MARKERS)))
def test_rkm_agrees_with_the_decimal_module(whole, fraction, marker):
    expected = Fraction(Decimal(f"{whole}.{fraction}") * Decimal(10) ** RKM_MARKERS[marker])
    assert decode_number(f"{whole}{marker}{fraction}").value == expected


@settings(max_examples=200, deadline=None)
@given(mantissa=digits, exponent=st.integers(-40, 40))
def test_exponent_agrees_with_the_decimal_module(mantissa, exponent):
    expected = Fraction(Decimal(f"{mantissa}e{exponent}"))
    assert decode_number(f"{mantissa}e{exponent}").value == expected
