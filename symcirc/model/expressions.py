"""Syntax-tree expressions → the model's formulas, built node by node (never by evaluating text).

Names are turned into symbols by a `resolve` callback supplied by the caller (elaboration
resolves against block scopes, later stages against the finished circuit); `s` is the
Laplace variable, `pi` is π and `sqrt` is the square root. Problems are raised as
`ExpressionProblem` (a node and a message); callers attach the file with `located`.
Formulas (`formula.py`) become sympy expressions only when a later stage asks.
"""

from __future__ import annotations

import re
from collections.abc import Callable, Hashable
from difflib import get_close_matches
from fractions import Fraction
from typing import TYPE_CHECKING

from ..errors import Location, SymcircError
from ..language import syntax
from . import formula
from .formula import Formula

if TYPE_CHECKING:  # pragma: no cover
    import sympy

    from .circuit import Circuit

Resolve = Callable[[syntax.Name], Formula]
"""Turns a name (other than `s` and `pi`) into its symbol, or raises ExpressionProblem."""

MAX_EXPONENT = 1000
"""Largest numerator or denominator of an exponent: keeps `10^10^9` from eating the machine."""


MAX_POWER_BITS = 100_000
"""Largest exact number a power of numbers may produce (`(10^1000)^1000` is far beyond)."""


class ExpressionProblem(Exception):
    """Something wrong at one node of an expression; becomes a SymcircError once located."""

    def __init__(self, node: syntax.Node, message: str, notes: tuple[str, ...] = ()) -> None:
        super().__init__(message)
        self.node = node
        self.message = message
        self.notes = notes

    def located(self, file: str, source: str | None) -> SymcircError:
        where = Location(file, self.node.line, self.node.column)
        return SymcircError.at(where, self.message, source, self.notes)


def to_formula(expr: syntax.Expr, resolve: Resolve) -> Formula:
    """The formula of a syntax expression without `V(..)` or `I(..)`."""
    try:
        return _convert(expr, resolve)
    except RecursionError:
        raise ExpressionProblem(expr, "expression too deeply nested to read") from None


def linear_form(
    expr: syntax.Expr,
    resolve: Resolve,
    control: Callable[[syntax.Voltage | syntax.Current], Hashable],
) -> tuple[Formula, dict[Hashable, Formula]]:
    """Split a source value into a part free of V/I and coefficients of each V/I term.

    `control` maps a `V(..)`/`I(..)` node to a key (equal keys are merged). Raises
    ExpressionProblem where the value is not linear in them (`V(a)*V(b)`, `V(a)^2`).
    """
    try:
        constant, terms = _linear(expr, resolve, control)
    except RecursionError:
        raise ExpressionProblem(expr, "expression too deeply nested to read") from None
    return constant, {k: c for k, c in terms.items() if not c.is_zero_expanded()}


def mentions_control(expr: syntax.Expr) -> bool:
    """True when the expression contains `V(..)` or `I(..)`."""
    if isinstance(expr, syntax.Voltage | syntax.Current):
        return True
    if isinstance(expr, syntax.Unary):
        return mentions_control(expr.operand)
    if isinstance(expr, syntax.Function):
        return mentions_control(expr.argument)
    if isinstance(expr, syntax.Binary):
        return mentions_control(expr.left) or mentions_control(expr.right)
    return False


def expression_in(
    circuit: Circuit, expr: syntax.Expr, filename: str, source: str | None
) -> sympy.Expr:
    """An expression written against a finished circuit (claims, command-line values).

    Names must be parameters or elements of the circuit (or `s`, `pi`), or a symbol of the
    noise results (`k_B`, `T_amb`, `f`, `en_U1`); errors point into `source` as file
    `filename`.
    """
    return formula_in(circuit, expr, filename, source).to_sympy()


def formula_in(circuit: Circuit, expr: syntax.Expr, filename: str, source: str | None
               ) -> Formula:
    """`expression_in` as the model's formula (sympy only when asked)."""
    known = set(circuit.parameters) | set(circuit.elements) | set(circuit.noise_units())

    def resolve(name: syntax.Name) -> Formula:
        if name.name in known:
            return formula.name(name.name)
        raise ExpressionProblem(name, unknown_name_message(name.name, known, circuit.ports))

    try:
        return to_formula(expr, resolve)
    except ExpressionProblem as problem:
        raise problem.located(filename, source) from None


def unknown_name_message(name: str, symbols: set[str] | dict, ports: dict | set = ()) -> str:
    """`unknown name X` with what it could have been."""
    if name in ports:
        return f"`{name}` is a port; use V({name}) in a quantity, not in an expression"
    message = f"unknown name `{name}`: not a declared parameter or element"
    close = get_close_matches(name, list(symbols), n=1)
    if close:
        message += f"; did you mean `{close[0]}`?"
    if name in _UNITS_AFTER_A_SLASH:
        message += (f" (`{name}` is read as a name after `/`: a unit goes with its number as "
                    f"one word, and a noise density is written `5 nV/√Hz` or `5 nV/rtHz`)")
    if _LETTER_FIRST_CODE.fullmatch(name):
        message += (f" (an IEC 60062 code that starts with its letter is written with a "
                    f"leading zero: `0{name}`)")
    return message


_UNITS_AFTER_A_SLASH = frozenset({"Hz", "V", "A", "s", "ohm", "Ω", "F", "H", "S", "W", "K"})
"""Units a value such as `5 nV/Hz` leaves behind as a name after its division sign."""

_LETTER_FIRST_CODE = re.compile(r"[LRKMGTpnumF][0-9]+")
"""A name such as `R47` or `p68`: the RKM code of a value below one, missing its `0`."""


# ---------------------------------------------------------------- the conversion


def _convert(expr: syntax.Expr, resolve: Resolve) -> Formula:
    if isinstance(expr, syntax.Number):
        return formula.constant(expr.value)
    if isinstance(expr, syntax.Name):
        if expr.name == "s":
            return formula.laplace()
        if expr.name == "pi":
            return formula.pi()
        return resolve(expr)
    if isinstance(expr, syntax.Unary):
        operand = _convert(expr.operand, resolve)
        return -operand if expr.op == "-" else operand
    if isinstance(expr, syntax.Function):
        if expr.name != "sqrt":
            raise ExpressionProblem(expr, f"unknown function `{expr.name}`; only sqrt(x) exists")
        return _convert(expr.argument, resolve).sqrt()
    if isinstance(expr, syntax.Binary):
        left = _convert(expr.left, resolve)
        right = _convert(expr.right, resolve)
        return _combine(expr, left, right)
    if isinstance(expr, syntax.Voltage | syntax.Current):
        what = "V(..)" if isinstance(expr, syntax.Voltage) else "I(..)"
        raise ExpressionProblem(
            expr, f"{what} is allowed only in the value of a voltage or current source"
        )
    raise ExpressionProblem(expr, "not an expression")


def _combine(node: syntax.Binary, left: Formula, right: Formula) -> Formula:
    op = node.op
    if op == "+":
        return left + right
    if op == "-":
        return left - right
    if op == "*":
        return left * right
    if op == "/":
        if right.is_zero():
            raise ExpressionProblem(node.right, "division by zero")
        return left / right
    if op in ("^", "**"):
        exponent = right.rational()
        if exponent is None:
            raise ExpressionProblem(node.right, "an exponent must be a number (such as 2 or 1/2)")
        if abs(exponent.numerator) > MAX_EXPONENT or exponent.denominator > MAX_EXPONENT:
            raise ExpressionProblem(node.right, f"exponent {exponent} is too large")
        if exponent < 0 and left.is_zero():
            raise ExpressionProblem(node, "division by zero")
        base = left.number if left.plain else left.rational()
        if base is not None and _bits(base) * abs(exponent.numerator) > MAX_POWER_BITS:
            raise ExpressionProblem(node, "this power is too large a number to work with")
        return left**right
    raise ExpressionProblem(node, f"unknown operator `{op}`")


def _bits(number: Fraction) -> int:
    return number.numerator.bit_length() + number.denominator.bit_length()


def _linear(expr, resolve, control):
    if not mentions_control(expr):
        return _convert(expr, resolve), {}
    if isinstance(expr, syntax.Voltage | syntax.Current):
        return formula.constant(0), {control(expr): formula.constant(1)}
    if isinstance(expr, syntax.Unary):
        constant, terms = _linear(expr.operand, resolve, control)
        if expr.op == "-":
            return -constant, {k: -c for k, c in terms.items()}
        return constant, terms
    if isinstance(expr, syntax.Binary):
        if expr.op in "+-":
            sign = 1 if expr.op == "+" else -1
            c1, t1 = _linear(expr.left, resolve, control)
            c2, t2 = _linear(expr.right, resolve, control)
            terms = dict(t1)
            for key, coefficient in t2.items():
                terms[key] = terms.get(key, formula.constant(0)) + coefficient.scaled(sign)
            return c1 + c2.scaled(sign), terms
        if expr.op == "*":
            if mentions_control(expr.left) and mentions_control(expr.right):
                raise _nonlinear(expr, "a product of two V(..)/I(..) terms")
            linear_side, factor_side = (
                (expr.left, expr.right) if mentions_control(expr.left) else (expr.right, expr.left)
            )
            factor = _convert(factor_side, resolve)
            constant, terms = _linear(linear_side, resolve, control)
            return constant * factor, {k: c * factor for k, c in terms.items()}
        if expr.op == "/" and not mentions_control(expr.right):
            divisor = _convert(expr.right, resolve)
            if divisor.is_zero():
                raise ExpressionProblem(expr.right, "division by zero")
            constant, terms = _linear(expr.left, resolve, control)
            return constant / divisor, {k: c / divisor for k, c in terms.items()}
        if expr.op == "/":
            raise _nonlinear(expr, "a division by a V(..)/I(..) term")
        raise _nonlinear(expr, "a power of a V(..)/I(..) term")
    raise _nonlinear(expr, "a function of a V(..)/I(..) term")


def _nonlinear(node: syntax.Node, what: str) -> ExpressionProblem:
    return ExpressionProblem(
        node,
        f"a controlled source must be linear in V(..) and I(..), but this is {what}",
    )
