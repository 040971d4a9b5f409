"""Exact evaluation of closed forms at nominal values, and expansion of defined symbols."""

from __future__ import annotations

from collections.abc import Mapping
from fractions import Fraction

import sympy


def rational(value: Fraction | int) -> sympy.Rational:
    """A Fraction as a sympy Rational."""
    value = Fraction(value)
    return sympy.Rational(value.numerator, value.denominator)


def exact_value(
    expression: sympy.Expr, nominals: Mapping[sympy.Symbol, Fraction]
) -> Fraction | None:
    """`expression` at the nominal values: exact when rational, None when a symbol has no value.

    An irrational result (a square root) is returned as the Fraction nearest its float value.
    """
    missing = expression.free_symbols - set(nominals)
    if missing:
        return None
    value = expression.xreplace({x: rational(nominals[x]) for x in expression.free_symbols})
    if value.is_Rational:
        return Fraction(int(value.p), int(value.q))
    if value.has(sympy.zoo, sympy.nan, sympy.oo):  # a pole at the nominal point
        return None
    if value.is_number and value.is_real is not False:
        number = complex(value.evalf(30))
        if number.imag == 0:
            return Fraction(number.real)
    return None


def expand_definitions(
    expression: sympy.Expr, definitions: Mapping[sympy.Symbol, sympy.Expr]
) -> sympy.Expr:
    """Replace defined symbols by their definitions until none is left (definitions may nest)."""
    for _ in range(len(definitions) + 1):
        used = expression.free_symbols & set(definitions)
        if not used:
            return expression
        expression = expression.xreplace({x: definitions[x] for x in used})
    raise ValueError("circular definitions")
