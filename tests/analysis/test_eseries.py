"""IEC 60063 preferred-number series: the tables and the values around a given value."""

from fractions import Fraction

import pytest

from symcirc.analysis.eseries import SERIES, decade, neighbours

# IEC 60063:2015, Table 1 (E6, E12, E24): the values in one decade, written out in full
# from the standard's table (from memory).
IEC_60063_E12 = "1.0 1.2 1.5 1.8 2.2 2.7 3.3 3.9 4.7 5.6 6.8 8.2"
IEC_60063_E24 = ("1.0 1.1 1.2 1.3 1.5 1.6 1.8 2.0 2.2 2.4 2.7 3.0 "
                 "3.3 3.6 3.9 4.3 4.7 5.1 5.6 6.2 6.8 7.5 8.2 9.1")
IEC_60063_E6 = "1.0 1.5 2.2 3.3 4.7 6.8"
# IEC 60063:2015, Table 2 (E96): spot values, and values that belong to other series only
# (from memory).
IEC_60063_E96_SPOTS = ("1.00 1.02 1.05 1.13 1.21 1.47 1.78 2.00 2.49 2.67 3.01 3.32 3.92 4.02 "
                       "4.64 4.99 5.11 5.62 6.19 6.81 7.50 8.25 9.09 9.31 9.76")
IEC_60063_E96_ABSENT = "1.01 1.04 1.20 2.20 4.70 6.80 8.20 9.20 9.88"
# IEC 60063 E192: the one value that differs from rounding 10^(i/192) to three digits is
# 9.20 (rounding gives 9.19) (from memory).
IEC_60063_E192_SPOTS = "1.01 1.04 1.09 1.11 4.70 9.20 9.88"


def _decade(text: str) -> list[Fraction]:
    return [Fraction(v) for v in text.split()]


def test_e12_and_e24_in_full_per_iec_60063():
    assert list(SERIES["E12"]) == _decade(IEC_60063_E12)
    assert list(SERIES["E24"]) == _decade(IEC_60063_E24)
    assert list(SERIES["E6"]) == _decade(IEC_60063_E6)
    assert list(SERIES["E3"]) == _decade("1.0 2.2 4.7")


def test_e96_spot_values_per_iec_60063():
    e96 = set(SERIES["E96"])
    assert len(SERIES["E96"]) == 96
    for value in _decade(IEC_60063_E96_SPOTS):
        assert value in e96, value
    for value in _decade(IEC_60063_E96_ABSENT):
        assert value not in e96, value


def test_e192_and_e48_sizes_and_spot_values():
    assert len(SERIES["E192"]) == 192 and len(SERIES["E48"]) == 48
    for value in _decade(IEC_60063_E192_SPOTS):
        assert value in SERIES["E192"], value
    assert Fraction("9.19") not in SERIES["E192"]
    # E48 spot values (IEC 60063, from memory)
    for value in _decade("1.00 1.05 1.21 1.47 2.15 3.16 4.64 6.81 9.53"):
        assert value in SERIES["E48"], value


@pytest.mark.parametrize("name", list(SERIES))
def test_series_is_geometric_within_rounding(name):
    """Every value lies within its rounding (plus the standard's few adjustments) of
    10^(i/n): a property of the series' construction, independent of the typed table."""
    values = SERIES[name]
    n = len(values)
    assert n == int(name[1:])
    allowed = 0.06 if n <= 24 else 0.006  # E24's historical values stray up to ~5 %
    for i, v in enumerate(values):
        assert abs(float(v) / 10 ** (i / n) - 1) < allowed, (name, v)
    assert list(values) == sorted(values)


def test_decade_is_exact_at_boundaries():
    assert decade(Fraction(1000)) == 3
    assert decade(Fraction(999999, 1000)) == 2
    assert decade(Fraction(1, 1000)) == -3
    assert decade(Fraction(999, 10**6)) == -4


def test_neighbours_across_decades():
    around = neighbours(Fraction(9600), "E12")
    assert (around.below, around.above) == (8200, 10000)
    around = neighbours(Fraction(4285), "E24")
    assert (around.below, around.above) == (3900, 4300)
    around = neighbours(Fraction(1, 10**9) * 4, "E6")  # 4 nF
    assert (around.below, around.above) == (Fraction(33, 10**10), Fraction(47, 10**10))
    exact = neighbours(100_000, "E96")
    assert exact.below == exact.above == 100_000
    assert neighbours(4700, "E12").below == 4700
    assert neighbours(4700, "E96") == neighbours(Fraction(4700), "E96")
    assert (neighbours(4700, "E96").below, neighbours(4700, "E96").above) == (4640, 4750)


def test_nearest_is_by_ratio():
    around = neighbours(Fraction(1400), "E6")  # between 1000 and 1500: √(1.5e6) ≈ 1224.7
    assert around.nearest(Fraction(1224)) == 1000
    assert around.nearest(Fraction(1225)) == 1500
