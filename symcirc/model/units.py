"""Units: the dimension of a written value, its check against the element kind, and
engineering notation for showing nominal values (`10 kΩ`, `4.7 nF`).

A dimension is a tuple of SI base exponents (kg, m, s, A). Inference is deliberately
lenient, so that only a definite mismatch is ever reported: a plain number added to
something takes its unit, a plain factor other than 1 or pi makes a product unknown (it may
carry a unit left unwritten, as in `s*1m`), and a name whose unit is not known makes the
result unknown.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from decimal import Decimal
from fractions import Fraction

from ..language import syntax

Dimension = tuple[Fraction, Fraction, Fraction, Fraction]


def _dim(kg: int, m: int, s: int, a: int) -> Dimension:
    return (Fraction(kg), Fraction(m), Fraction(s), Fraction(a))


DIMENSIONLESS = _dim(0, 0, 0, 0)

UNIT_DIMENSIONS: dict[str, Dimension] = {
    "V": _dim(1, 2, -3, -1),
    "A": _dim(0, 0, 0, 1),
    "Ω": _dim(1, 2, -3, -2),
    "S": _dim(-1, -2, 3, 2),
    "F": _dim(-1, -2, 4, 2),
    "H": _dim(1, 2, -2, -2),
    "W": _dim(1, 2, -3, 0),
    "s": _dim(0, 0, 1, 0),
    "Hz": _dim(0, 0, -1, 0),
    "V/√Hz": (Fraction(1), Fraction(2), Fraction(-5, 2), Fraction(-1)),
    "A/√Hz": (Fraction(0), Fraction(0), Fraction(1, 2), Fraction(1)),
    "V²/Hz": _dim(2, 4, -5, -2),
    "A²/Hz": _dim(0, 0, 1, 2),
    "": DIMENSIONLESS,
}
"""Dimension of every unit the language knows ('' is a pure number)."""

_UNIT_OF_DIMENSION = {dim: unit for unit, dim in UNIT_DIMENSIONS.items()}

LAPLACE_DIMENSION = UNIT_DIMENSIONS["Hz"]


class Scale:
    """The dimension of a plain number: it takes on whatever it is combined with."""

    def __repr__(self) -> str:
        return "SCALE"


SCALE = Scale()

Inferred = Dimension | Scale | None
"""What inference returns: a dimension, SCALE (a plain number), or None (unknown)."""


class UnitMismatch(Exception):
    """Two terms of a sum have different units (`1 kΩ + 1 nF`)."""

    def __init__(self, node: syntax.Node, message: str) -> None:
        super().__init__(message)
        self.node = node
        self.message = message


def unit_of(dimension: Dimension) -> str | None:
    """The unit written for a dimension (`Ω`), '' for a pure number, None when it has no name."""
    return _UNIT_OF_DIMENSION.get(dimension)


def describe(dimension: Dimension) -> str:
    """A dimension for messages: its unit, or base units such as `kg·m²/(s³·A)`."""
    named = unit_of(dimension)
    if named is not None:
        return named or "a pure number"
    names = ("kg", "m", "s", "A")
    parts = [f"{n}^{e}" if e != 1 else n for n, e in zip(names, dimension, strict=True) if e]
    return "·".join(parts)


def expression_dimension(
    expr: syntax.Expr, name_dimension: Callable[[str], Inferred]
) -> Inferred:
    """Infer the dimension of a syntax expression; raises UnitMismatch for `Ω + F`."""
    if isinstance(expr, syntax.Number):
        return SCALE if expr.unit is None else UNIT_DIMENSIONS.get(expr.unit)
    if isinstance(expr, syntax.Name):
        if expr.name == "s":
            return LAPLACE_DIMENSION
        if expr.name == "pi":
            return SCALE
        return name_dimension(expr.name)
    if isinstance(expr, syntax.Voltage):
        return UNIT_DIMENSIONS["V"]
    if isinstance(expr, syntax.Current):
        return UNIT_DIMENSIONS["A"]
    if isinstance(expr, syntax.Unary):
        return expression_dimension(expr.operand, name_dimension)
    if isinstance(expr, syntax.Function):  # sqrt
        return _power(expression_dimension(expr.argument, name_dimension), Fraction(1, 2))
    if isinstance(expr, syntax.Binary):
        left = expression_dimension(expr.left, name_dimension)
        if expr.op == "^":
            return _power(left, constant_value(expr.right))
        right = expression_dimension(expr.right, name_dimension)
        if expr.op in "+-":
            return _sum(expr, left, right)
        if left is None or right is None:
            return None
        if _pure_factor(expr.left):
            left = DIMENSIONLESS
        if _pure_factor(expr.right):
            right = DIMENSIONLESS
        if isinstance(left, Scale) or isinstance(right, Scale):
            # a plain factor may carry a unit left unwritten (`s*1m` for 1 mH)
            pure = all(isinstance(x, Scale) or x == DIMENSIONLESS for x in (left, right))
            return SCALE if pure else None
        if expr.op == "/":
            right = tuple(-e for e in right)  # type: ignore[assignment]
        return tuple(a + b for a, b in zip(left, right, strict=True))  # type: ignore[return-value]
    return None


def _pure_factor(expr: syntax.Expr) -> bool:
    """`1` (as in `1/x`) and `pi` are surely pure numbers when they are factors."""
    if isinstance(expr, syntax.Name):
        return expr.name == "pi"
    return isinstance(expr, syntax.Number) and expr.unit is None and expr.value == 1


def _sum(node: syntax.Binary, left: Inferred, right: Inferred) -> Inferred:
    if isinstance(left, tuple) and isinstance(right, tuple):
        if left != right:
            raise UnitMismatch(
                node, f"adds {describe(left)} and {describe(right)}: the terms' units differ "
                f"(`{syntax.expression_text(node.left)}` is in {describe(left)}, "
                f"`{syntax.expression_text(node.right)}` in {describe(right)})"
            )
        return left
    if isinstance(left, tuple):
        return left
    if isinstance(right, tuple):
        return right
    return None if left is None or right is None else SCALE


def _power(base: Inferred, exponent: Fraction | None) -> Inferred:
    if base is None or isinstance(base, Scale):
        return base
    if base == DIMENSIONLESS:
        return base
    if exponent is None:
        return None
    return tuple(e * exponent for e in base)  # type: ignore[return-value]


def constant_value(expr: syntax.Expr) -> Fraction | None:
    """The value of an expression made of plain numbers only (`-1`, `1/2`), else None."""
    if isinstance(expr, syntax.Number):
        return expr.value
    if isinstance(expr, syntax.Unary):
        inner = constant_value(expr.operand)
        return None if inner is None else (-inner if expr.op == "-" else inner)
    if isinstance(expr, syntax.Binary) and expr.op in "+-*/":
        left, right = constant_value(expr.left), constant_value(expr.right)
        if left is None or right is None:
            return None
        if expr.op == "+":
            return left + right
        if expr.op == "-":
            return left - right
        if expr.op == "*":
            return left * right
        return None if right == 0 else left / right
    return None


# ---------------------------------------------------------------- showing values
#
# One number style for every display (tables, steps, sheets, plots, `derive --values`, the
# JSON's display strings): engineering notation with an SI prefix and the unit (`4.7 kΩ`,
# `−4.762 µ`, `349.5 k`), four significant digits, U+2212 for minus; beyond the prefixes
# a power of ten (`1.2×10⁻¹⁸ V`). Machine-readable fields (JSON numbers, exported code) keep
# numbers as numbers and never pass through here.

PREFIXES = {-15: "f", -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T"}
"""SI prefixes by power of ten, as engineering notation shows them."""

MINUS = "\u2212"
"""The minus sign of display text (never the hyphen-minus)."""

DIGITS = 4
"""Significant digits of every displayed value."""

UNPREFIXED = frozenset({"dB", "°", "%", "V²/Hz", "A²/Hz", "V²", "A²"})
"""Units written without an SI prefix: levels, angles, percentages."""

_SUPERSCRIPT = str.maketrans("0123456789-", "⁰¹²³⁴⁵⁶⁷⁸⁹⁻")


def engineering_parts(value: float, digits: int = DIGITS) -> tuple[str, str]:
    """(mantissa, prefix) of `value` in engineering notation: 4700 → ('4.7', 'k').

    The one engineering-notation algorithm of the package (inspect, analyses, reports).
    Beyond the prefixes (f … T) the mantissa is scientific notation (`1.2e-18`) and the
    prefix ''; `eng` shows that as a power of ten.
    """
    x = float(value)
    if x == 0 or not math.isfinite(x):
        return f"{x:g}", ""
    exponent = 3 * math.floor(math.log10(abs(x)) / 3)
    if not -15 <= exponent <= 12:
        return f"{x:.{digits}e}", ""
    mantissa = float(f"{x / 10.0**exponent:.{digits}g}")
    if abs(mantissa) >= 1000 and exponent < 12:  # rounding carried into the next prefix
        exponent += 3
        mantissa = float(f"{x / 10.0**exponent:.{digits}g}")
    return f"{mantissa:.{digits}g}", PREFIXES[exponent]


def eng(value: float | Fraction, unit: str = "", digits: int = DIGITS) -> str:
    """A value as every display shows it: eng(4700, 'Ω') == '4.7 kΩ',
    eng(-4.762e-6) == '−4.762 µ', eng(0.0005) == '500 µ', eng(0.25) == '0.25'."""
    x = float(value)
    if not math.isfinite(x):
        number = {math.inf: "∞", -math.inf: "−∞"}.get(x, "not a number")
        return f"{number} {unit}".rstrip()
    number, prefix = eng_parts(x, unit, digits)
    if unit == "°":  # an angle's sign follows the number (SI Brochure)
        return f"{display_number(number)}°"
    return f"{display_number(number)} {prefix}{unit}".rstrip()


def eng_parts(value: float | Fraction, unit: str = "", digits: int = DIGITS) -> tuple[str, str]:
    """(number, prefix) of a finite value as `eng` shows it, the number in ASCII for other
    typesetters (LaTeX's siunitx): (-4.762e-6, '') → ('-4.762', 'µ'), 1.2e-18 → ('1.2e-18', '').

    Pure numbers between 0.1 and 1000 are plain (a gain of `0.5`, not `500 m`); reciprocal
    units (`1/F`) take a power of ten instead of a prefix; levels and angles (`dB`, `°`,
    `%`) never take a prefix.
    """
    x = float(value)
    if x == 0:
        return "0", ""
    if unit in UNPREFIXED:
        return (f"{x:.{digits}g}", "") if 1e-3 <= abs(x) < 1e6 else (_scientific(x, digits), "")
    if (not unit or unit.startswith("1/")) and 0.1 <= abs(x) < 1000:
        return f"{x:.{digits}g}", ""
    if unit.startswith("1/"):
        return _scientific(x, digits), ""
    mantissa, prefix = engineering_parts(x, digits)
    return (_scientific(x, digits), "") if "e" in mantissa else (mantissa, prefix)


def number_latex(value: float | Fraction, unit: str = "", digits: int = DIGITS) -> str:
    """A value as `eng` shows it, as LaTeX maths: `4.7\\,\\mathrm{k\\Omega}`,
    `1.2 \\times 10^{-18}\\,\\mathrm{V}`, `-45^{\\circ}`."""
    x = float(value)
    if not math.isfinite(x):
        return {math.inf: r"\infty", -math.inf: r"-\infty"}.get(x, r"\text{not a number}")
    number, prefix = eng_parts(x, unit, digits)
    if "e" in number:
        mantissa, exponent = number.split("e")
        number = mantissa + r" \times 10^{" + str(int(exponent)) + "}"
    if unit == "°":
        return number + r"^{\circ}"
    return number + (r"\," + unit_latex(prefix + unit) if prefix or unit else "")


def unit_latex(unit: str) -> str:
    """A unit inside maths (`\\mathrm{k\\Omega}`), '' for a pure number."""
    mapped = unit.replace("Ω", r"\Omega ").replace("µ", r"\mu ").replace("%", r"\%")
    mapped = mapped.replace("√Hz", r"\sqrt{\mathrm{Hz}}").replace("²", "^{2}")
    return r"\mathrm{" + mapped.strip() + "}" if unit else ""


def display_number(number: str) -> str:
    """An ASCII number as display text: U+2212 for minus, `1.2×10⁻¹⁸` for `1.2e-18`."""
    if "e" in number:
        mantissa, exponent = number.split("e")
        number = f"{mantissa}×10{str(int(exponent)).translate(_SUPERSCRIPT)}"
    return number.replace("-", MINUS)


def _scientific(x: float, digits: int) -> str:
    """`1.2e-18`: `digits` significant digits, trailing zeros dropped."""
    mantissa, exponent = f"{x:.{digits - 1}e}".split("e")
    if "." in mantissa:
        mantissa = mantissa.rstrip("0").rstrip(".")
    return f"{mantissa}e{int(exponent)}"


def engineering(value: Fraction, unit: str = "") -> str:
    """An exact value in the display style of `eng` (`10 kΩ`, `4.7 nF`, `500 µ`); a value
    beyond the float range is shown from its exact digits."""
    number = as_float(value)
    if number is None or (number == 0 and value != 0):  # beyond floats: exact digits
        scientific = (Decimal(value.numerator) / Decimal(value.denominator)).normalize()
        return f"{display_number(_scientific_decimal(scientific))} {unit}".rstrip()
    return eng(number, unit)


def _scientific_decimal(value: Decimal) -> str:
    mantissa, exponent = f"{value:.4e}".split("e")
    return f"{mantissa.rstrip('0').rstrip('.')}e{int(exponent)}"


def percent_text(value: float | Fraction, digits: int = 3, signed: bool = False) -> str:
    """A ratio as a percentage: percent_text(-0.000999) == '−0.0999 %'; signed: '+4.41 %';
    beyond 0.001 % … 10,000 % as a power of ten (`8×10⁴ %`)."""
    x = float(value) * 100
    if x == 0 or 1e-3 <= abs(x) < 1e4 or not math.isfinite(x):
        number = f"{x:{'+' if signed else ''}.{digits}g}"
    else:
        number = ("+" if signed and x > 0 else "") + display_number(_scientific(x, digits))
    return f"{number} %".replace("-", MINUS)


def per(numerator: str, denominator: str) -> str:
    """The unit of a ratio such as a derivative ∂Q/∂x: `V/Ω`, '' for V/V, `S` for a pure
    number over ohms, `1/F`."""
    if numerator == denominator:
        return ""
    if not numerator and denominator in _RECIPROCAL:
        return _RECIPROCAL[denominator]
    if denominator and any(c in denominator for c in "/·"):
        denominator = f"({denominator})"
    return f"{numerator or '1'}/{denominator}" if denominator else numerator


_RECIPROCAL = {"Ω": "S", "S": "Ω", "s": "Hz", "Hz": "s"}


def decibels(value: float) -> str:
    """A level in dB with two decimals: decibels(-3.0103) == '−3.01 dB'."""
    return f"{float(value):.2f} dB".replace("-", MINUS)


def degrees(value: float) -> str:
    """An angle in degrees with one decimal: degrees(-45.04) == '−45.0°'."""
    return f"{float(value):.1f}°".replace("-", MINUS)


def as_float(value: Fraction) -> float | None:
    """`value` as a float, or None when it is beyond the float range."""
    try:
        return float(value)
    except OverflowError:
        return None


def percent(fraction: Fraction) -> str:
    """A relative amount as a percentage without trailing zeros or a sign (`0.1`)."""
    return percent_text(abs(fraction), 5).removesuffix(" %")


def tolerance_text(plus: Fraction, minus: Fraction, relative: bool, unit: str = "") -> str:
    """A tolerance as an engineer writes it: `± 1 %`, `+80 % -20 %`, `± 5 Ω`."""
    def amount(x: Fraction) -> str:
        return f"{percent(x)} %" if relative else engineering(x, unit)

    if plus == minus:
        return f"± {amount(plus)}"
    return f"+{amount(plus)} {MINUS}{amount(minus)}"
