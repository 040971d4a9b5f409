"""IEC 60063 preferred-number series (E3 … E192) and the series values around a given value.

Values are exact (`Fraction`); a series is stored as its mantissas in one decade,
in units of its resolution (E3 … E24: tenths, E48 … E192: hundredths).
"""

from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction

_E24 = (10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30,
        33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91)

_E192 = (
    100, 101, 102, 104, 105, 106, 107, 109, 110, 111, 113, 114, 115, 117, 118, 120,
    121, 123, 124, 126, 127, 129, 130, 132, 133, 135, 137, 138, 140, 142, 143, 145,
    147, 149, 150, 152, 154, 156, 158, 160, 162, 164, 165, 167, 169, 172, 174, 176,
    178, 180, 182, 184, 187, 189, 191, 193, 196, 198, 200, 203, 205, 208, 210, 213,
    215, 218, 221, 223, 226, 229, 232, 234, 237, 240, 243, 246, 249, 252, 255, 258,
    261, 264, 267, 271, 274, 277, 280, 284, 287, 291, 294, 298, 301, 305, 309, 312,
    316, 320, 324, 328, 332, 336, 340, 344, 348, 352, 357, 361, 365, 370, 374, 379,
    383, 388, 392, 397, 402, 407, 412, 417, 422, 427, 432, 437, 442, 448, 453, 459,
    464, 470, 475, 481, 487, 493, 499, 505, 511, 517, 523, 530, 536, 542, 549, 556,
    562, 569, 576, 583, 590, 597, 604, 612, 619, 626, 634, 642, 649, 657, 665, 673,
    681, 690, 698, 706, 715, 723, 732, 741, 750, 759, 768, 777, 787, 796, 806, 816,
    825, 835, 845, 856, 866, 876, 887, 898, 909, 920, 931, 942, 953, 965, 976, 988,
)

# Each coarser series is every second value of the next finer one (IEC 60063).
SERIES: dict[str, tuple[Fraction, ...]] = {
    "E3": tuple(Fraction(m, 10) for m in _E24[::8]),
    "E6": tuple(Fraction(m, 10) for m in _E24[::4]),
    "E12": tuple(Fraction(m, 10) for m in _E24[::2]),
    "E24": tuple(Fraction(m, 10) for m in _E24),
    "E48": tuple(Fraction(m, 100) for m in _E192[::4]),
    "E96": tuple(Fraction(m, 100) for m in _E192[::2]),
    "E192": tuple(Fraction(m, 100) for m in _E192),
}
"""Mantissas in [1, 10) of each series, ascending."""

DESIGN_SERIES = ("E6", "E12", "E24", "E48", "E96", "E192")
"""The series a component-value result lists (E3 is rarely stocked)."""


@dataclass(frozen=True)
class Neighbours:
    """The series values just below and just above a value (equal when it is in the series)."""

    series: str
    below: Fraction
    above: Fraction

    def nearest(self, value: Fraction) -> Fraction:
        """The closer of the two on a logarithmic scale (ratio), the lower one on a tie."""
        return self.below if value * value <= self.below * self.above else self.above


def decade(value: Fraction) -> int:
    """The exponent d with 10**d <= value < 10**(d+1), exactly (value > 0)."""
    if value <= 0:
        raise ValueError("decade of a non-positive value")
    d = len(str(value.numerator)) - len(str(value.denominator))
    while Fraction(10) ** d > value:
        d -= 1
    while Fraction(10) ** (d + 1) <= value:
        d += 1
    return d


def neighbours(value: Fraction | int | float, series: str) -> Neighbours:
    """The values of `series` around `value` (> 0), crossing decade boundaries as needed."""
    value = Fraction(value)
    mantissas = SERIES[series]
    d = decade(value)
    scale = Fraction(10) ** d
    below = max(m for m in mantissas if m * scale <= value) * scale
    above_in_decade = [m for m in mantissas if m * scale >= value]
    above = above_in_decade[0] * scale if above_in_decade else 10 * scale
    return Neighbours(series, below, above)
