"""Component values: solve Q(x) = target for x, then the IEC 60063 values around the solution.

Q is a rational function of x, so Q = target is the polynomial equation
numerator(Q − target) = 0 in x: closed forms up to degree 2, numbers beyond. A square root
of one (ω0, f0, Q, |H| at a frequency) is squared first, Q² = target², and only roots where
Q has the target's sign are kept.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from fractions import Fraction

import sympy

from .eseries import DESIGN_SERIES, neighbours
from .tidy import tidy
from .values import exact_value, rational


class SolveError(ValueError):
    """Q = target has no usable solution for x (message written for the user)."""


@dataclass(frozen=True)
class SeriesChoice:
    """The values of one series around a solution, and the Q each gives."""

    series: str
    below: Fraction
    above: Fraction
    q_below: Fraction | None
    q_above: Fraction | None
    best: Fraction
    """Of the two, the one whose Q is nearer the target (the lower value on a tie)."""


@dataclass(frozen=True)
class Solution:
    """One root of Q = target in x."""

    expression: sympy.Expr | None
    """Closed form (None beyond degree 2: then only the number is known)."""
    value: Fraction | None
    """At the nominal values of the other symbols, when real and positive."""
    choices: tuple[SeriesChoice, ...] = ()


@dataclass(frozen=True)
class ComponentSolution:
    symbol: sympy.Symbol
    target: sympy.Expr
    polynomial: sympy.Poly
    """numerator(Q − target) as a polynomial in x."""
    solutions: tuple[Solution, ...]
    """Every root with a closed form, then the real positive ones first, smallest first."""

    @property
    def positive(self) -> tuple[Solution, ...]:
        return tuple(s for s in self.solutions if s.value is not None)


def _tidy(expression: sympy.Expr) -> sympy.Expr:
    """A readable closed form: cancelled and factored (rational functions stay rational)."""
    return tidy(expression)


def solve_for(
    expression: sympy.Expr,
    target: sympy.Expr | Fraction | int,
    x: sympy.Symbol,
    nominals: Mapping[sympy.Symbol, Fraction],
    series: tuple[str, ...] = DESIGN_SERIES,
) -> ComponentSolution:
    """Every solution of `expression` = `target` for `x`, with series values for positive ones."""
    if isinstance(target, (int, Fraction)):
        target = rational(target)
    if x not in expression.free_symbols:
        raise SolveError(f"the quantity does not depend on {x}")
    others = {k: v for k, v in nominals.items() if k != x}
    polynomial, squared = _cleared(expression, target, x)
    if polynomial.degree() < 1:
        raise SolveError(f"no value of {x} gives that target")
    if polynomial.degree() <= 2:
        roots = [_tidy(r) for r in sympy.roots(polynomial, multiple=True)]
        numbers = [exact_value(r, others) for r in roots]
    else:
        roots = [None] * polynomial.degree()
        numeric = _numeric_poly(polynomial, others)
        numbers = list(numeric.nroots(n=30)) if numeric is not None else [None] * len(roots)

    solutions = []
    for root, number in zip(roots, numbers, strict=True):
        value = _positive_real(number)
        if value is not None and squared and not _same_sign(expression, target, x, value,
                                                            others):
            continue  # a root of Q² = target² where Q = −target
        choices = () if value is None else _choices(expression, target, x, value, others, series)
        if root is not None or value is not None:
            solutions.append(Solution(root, value, choices))
    solutions.sort(key=lambda s: (s.value is None, s.value or 0))
    return ComponentSolution(x, target, polynomial, tuple(solutions))


def _cleared(expression: sympy.Expr, target: sympy.Expr, x: sympy.Symbol
             ) -> tuple[sympy.Poly, bool]:
    """numerator(Q − target) as a polynomial in x; (of Q² − target², True) when Q is the
    square root of a rational function of x."""
    for squared in (False, True):
        left, right = (expression**2, target**2) if squared else (expression, target)
        # cancel() removes common factors, so no root of the numerator is a pole of Q.
        numerator, _ = sympy.fraction(sympy.cancel(sympy.together(left - right)))
        try:
            return sympy.Poly(sympy.expand(numerator), x), squared
        except sympy.PolynomialError:
            continue
    raise SolveError(f"the quantity is no rational function of {x}, nor the square root of one")


def _same_sign(expression, target, x, value, others) -> bool:
    q = exact_value(expression, {**others, x: value})
    goal = exact_value(target, others)
    return q is None or goal is None or (q >= 0) == (goal >= 0)


def _numeric_poly(polynomial: sympy.Poly, nominals) -> sympy.Poly | None:
    coefficients = polynomial.all_coeffs()
    if any(c.free_symbols - set(nominals) for c in coefficients):
        return None
    values = {k: rational(v) for k, v in nominals.items()}
    return sympy.Poly([c.xreplace(values) for c in coefficients], polynomial.gen)


def _positive_real(number) -> Fraction | None:
    if number is None:
        return None
    if isinstance(number, Fraction):
        return number if number > 0 else None
    number = complex(number)
    if abs(number.imag) > 1e-12 * max(abs(number.real), 1e-300) or number.real <= 0:
        return None
    return Fraction(number.real)


def _choices(expression, target, x, value, others, series) -> tuple[SeriesChoice, ...]:
    goal = exact_value(target, others)
    out = []
    for name in series:
        around = neighbours(value, name)
        q_below = exact_value(expression, {**others, x: around.below})
        q_above = exact_value(expression, {**others, x: around.above})
        best = around.nearest(value)
        if goal is not None and q_below is not None and q_above is not None:
            best = around.below if abs(q_below - goal) <= abs(q_above - goal) else around.above
        out.append(SeriesChoice(name, around.below, around.above, q_below, q_above, best))
    return tuple(out)
