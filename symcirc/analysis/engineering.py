"""Numbers in engineering notation for the sentences of analysis results (`4.7 kΩ`, `-0.1 %`)."""

from __future__ import annotations

import math
from fractions import Fraction

_PREFIXES = {-15: "f", -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T"}


def eng(value: float | Fraction, unit: str = "", digits: int = 4) -> str:
    """`value` with an SI prefix and `digits` significant digits: eng(4700, 'Ω') == '4.7 kΩ'.
    A pure number takes no prefix: eng(0.02295) == '0.02295'."""
    x = float(value)
    if not unit or unit.startswith("1/"):  # a prefix reads badly on these: 4.7e-05 1/F
        return f"{x:.{digits}g} {unit}".rstrip()
    if x == 0 or not math.isfinite(x):
        return f"{x:g} {unit}".rstrip()
    exponent = math.floor(math.log10(abs(x)))
    step = min(max(3 * (exponent // 3), -15), 12)
    mantissa = float(f"{x / 10.0**step:.{digits}g}")
    if abs(mantissa) >= 1000 and step < 12:  # rounding crossed into the next prefix
        step += 3
        mantissa = float(f"{x / 10.0**step:.{digits}g}")
    text = f"{mantissa:.{digits}g}"
    if "e" in text:  # beyond the prefixes: plain scientific notation
        return f"{x:.{digits}g} {unit}".rstrip()
    return f"{text} {_PREFIXES[step]}{unit}".rstrip()


def percent(value: float | Fraction, digits: int = 3, signed: bool = False) -> str:
    """A ratio as a percentage: percent(-0.000999) == '-0.0999 %'; signed: '+4.41 %'."""
    return f"{float(value) * 100:{'+' if signed else ''}.{digits}g} %"
