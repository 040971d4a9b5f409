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

PREFIXES = {-15: "f", -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T"}
"""SI prefixes by power of ten, as engineering notation shows them."""


def engineering_parts(value: float, digits: int = 5) -> tuple[str, str]:
    """(mantissa, prefix) of `value` in engineering notation: 4700 → ('4.7', 'k').

    The one engineering-notation algorithm of the package (inspect, analyses, reports).
    Beyond the prefixes (f … T) the mantissa is plain scientific notation and the prefix ''.
    """
    x = float(value)
    if x == 0 or not math.isfinite(x):
        return f"{x:g}", ""
    exponent = 3 * math.floor(math.log10(abs(x)) / 3)
    if not -15 <= exponent <= 12:
        return f"{x:.{digits}g}", ""
    mantissa = float(f"{x / 10.0**exponent:.{digits}g}")
    if abs(mantissa) >= 1000 and exponent < 12:  # rounding carried into the next prefix
        exponent += 3
        mantissa = float(f"{x / 10.0**exponent:.{digits}g}")
    return f"{mantissa:.{digits}g}", PREFIXES[exponent]


def engineering(value: Fraction, unit: str = "") -> str:
    """`value` in engineering notation with an SI prefix: `10 kΩ`, `4.7 nF`, `2.5 V`.

    Pure numbers (unit '') are shown plainly between 0.001 and a million (`100000`,
    `0.00385`), and beyond that with the prefix attached as the language writes it (`10M`).
    """
    number = as_float(value)
    if number is None or (number == 0 and value != 0):  # beyond floats: exact digits
        scientific = (Decimal(value.numerator) / Decimal(value.denominator)).normalize()
        return f"{scientific:.5g} {unit}".rstrip()
    if not unit and (number == 0 or 1e-3 <= abs(number) < 1e6):
        return f"{number:.6g}"
    mantissa, prefix = engineering_parts(number, 5)
    return f"{mantissa}{prefix}" if not unit else f"{mantissa} {prefix}{unit}"


def eng(value: float | Fraction, unit: str = "", digits: int = 4) -> str:
    """A value in a sentence or table: eng(4700, 'Ω') == '4.7 kΩ'. Pure numbers and
    reciprocal units (`1/F`) take no prefix, where one reads badly: eng(0.02295) == '0.02295'."""
    x = float(value)
    if not unit or unit.startswith("1/"):
        return f"{x:.{digits}g} {unit}".rstrip()
    mantissa, prefix = engineering_parts(x, digits)
    return f"{mantissa} {prefix}{unit}"


def percent_text(value: float | Fraction, digits: int = 3, signed: bool = False) -> str:
    """A ratio as a percentage: percent_text(-0.000999) == '-0.0999 %'; signed: '+4.41 %'."""
    return f"{float(value) * 100:{'+' if signed else ''}.{digits}g} %"


def as_float(value: Fraction) -> float | None:
    """`value` as a float, or None when it is beyond the float range."""
    try:
        return float(value)
    except OverflowError:
        return None


def percent(fraction: Fraction) -> str:
    """A relative amount as a percentage without trailing zeros (`0.1`)."""
    return engineering(fraction * 100)


def tolerance_text(plus: Fraction, minus: Fraction, relative: bool, unit: str = "") -> str:
    """A tolerance as an engineer writes it: `± 1 %`, `+80 % -20 %`, `± 5 Ω`."""
    def amount(x: Fraction) -> str:
        return f"{percent(x)} %" if relative else engineering(x, unit)

    if plus == minus:
        return f"± {amount(plus)}"
    return f"+{amount(plus)} -{amount(minus)}"
