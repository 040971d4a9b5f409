"""When a quantity is near zero at its nominal values, and how it is then shown.

A quantity is near zero when it is 0 at the nominal values, or when its linearised
worst-case band, nominal ± Σ|∂Q/∂x|·Δx, reaches zero: the design does not even fix its
sign (the common-mode gain of a difference amplifier with toleranced resistors, a bridge
near balance). A relative figure (a spread in %, a relative sensitivity (x/Q)·∂Q/∂x) is
then divided by an accident of the nominal values, and reads ±8×10⁴ % or ±200001;
engineers read such a quantity as an offset in its own unit. Δx is x's tolerance; a value
without one counts with DEFAULT_TOLERANCE in a sensitivity table (a tolerance analysis
counts only toleranced values).
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from fractions import Fraction

DEFAULT_TOLERANCE = Fraction(1, 100)
"""The relative band of a value without a tolerance when a sensitivity table decides
whether Q is near zero: 1 %, the everyday resistor tolerance (common practice)."""

RULE = ("a quantity is near zero when it is 0 at the nominal values or when its linearised "
        "worst-case band, nominal ± Σ|∂Q/∂x|·Δx, reaches zero (Δx: each value's tolerance, "
        "1 % for a value without one in a sensitivity table)")
"""The rule in words, for notes and JSON."""


def band_reaches_zero(nominal: Fraction | float, low: Fraction | float,
                      high: Fraction | float) -> bool:
    """Whether a band low … high around `nominal` is near zero by the rule: 0 at nominal,
    or the band touching or crossing zero."""
    return nominal == 0 or low <= 0 <= high


def near_zero(nominal: Fraction | None, swings: Iterable[Fraction]) -> bool:
    """Whether Q with `nominal` is near zero, given each value's linear swing |∂Q/∂x|·Δx."""
    if nominal is None:
        return False
    spread = sum((abs(s) for s in swings), Fraction(0))
    return nominal == 0 or abs(nominal) <= spread


def relative_band(tolerance, nominal: Fraction | None) -> Fraction:
    """The larger side of a value's band as a fraction of its nominal value
    (DEFAULT_TOLERANCE when it has no tolerance)."""
    if tolerance is None or not (tolerance.plus or tolerance.minus):
        return DEFAULT_TOLERANCE
    if tolerance.relative:
        return max(tolerance.plus, tolerance.minus)
    if not nominal:
        return DEFAULT_TOLERANCE
    return max(tolerance.plus, tolerance.minus) / abs(nominal)


def swings(rows: Iterable, tolerances: Mapping, nominals: Mapping) -> list[Fraction]:
    """|x·∂Q/∂x|·(relative band of x) for each row of a sensitivity table with values."""
    out = []
    for row in rows:
        if row.derivative_value is None or row.symbol not in nominals:
            continue
        x = nominals[row.symbol]
        band = relative_band(tolerances.get(row.symbol), x)
        out.append(abs(x * row.derivative_value) * band)
    return out
