"""The model's own exact expressions: values as the file writes them, without sympy.

A `Formula` records how a value was built from numbers, names, `s`, `pi` and `sqrt` (the
operations elaboration performs, in its order), so reading a circuit needs no computer
algebra. The questions reading asks (is this a number, is it zero, which names does it
use, what is it at the nominal values) are answered exactly with `Fraction`s when the
formula is *plain*: every name (and `s`) occurs once and no irrational number appears, so
no two parts can cancel or combine. Anything else is answered by replaying the recorded
operations in sympy, which gives the same sympy expression the model used to build
directly: `to_sympy()`, cached, is what later stages read.
"""

from __future__ import annotations

import operator
from collections.abc import Callable, Mapping
from fractions import Fraction
from typing import Any, TypeVar

__all__ = ["Formula", "Inexact", "constant", "fold", "from_sympy", "laplace", "name", "pi"]

T = TypeVar("T")


ARITHMETIC = {"+": operator.add, "-": operator.sub, "*": operator.mul, "/": operator.truediv}
"""The four operations of a formula, one table for every reading of it (sympy, exact values,
rational functions)."""


class Inexact(Exception):
    """A value that is no rational number (an irrational root, π, `s`, an unknown name)."""


class Formula:
    """One node of a recorded value: `op` and its `args` (see the module).

    `op` is `number` (args: a Fraction), `name` (its final name), `s`, `pi`, `neg`,
    `sqrt`, `scale` (a Python int times a formula), or a binary operator `+ - * / ^`.
    """

    __slots__ = ("op", "args", "number", "names", "laplace", "plain", "_sympy", "_hash")

    def __init__(self, op: str, args: tuple, number: Fraction | None,
                 names: frozenset[str], laplace: bool, plain: bool) -> None:
        self.op = op
        self.args = args
        self.number = number
        """The rational value when the formula is plain and one (sympy's `is_Rational`)."""
        self.names = names
        """The names it is written with, `s` apart (when plain, those it depends on)."""
        self.laplace = laplace
        """Whether it is written with `s`."""
        self.plain = plain
        self._sympy: Any = None
        self._hash: int | None = None

    def __eq__(self, other: object) -> bool:
        """The same operations on the same numbers and names (not mathematical equality)."""
        if not isinstance(other, Formula):
            return NotImplemented
        return self is other or (hash(self) == hash(other) and self.op == other.op
                                 and self.args == other.args)

    def __hash__(self) -> int:
        if self._hash is None:
            self._hash = hash((self.op, self.args))
        return self._hash

    def __repr__(self) -> str:
        return f"Formula({self.op}, {self.args!r})"

    # ------------------------------------------------------------ building

    def __neg__(self) -> Formula:
        return _node("neg", (self,), None if self.number is None else -self.number)

    def __add__(self, other: Formula) -> Formula:
        return _binary("+", self, other)

    def __sub__(self, other: Formula) -> Formula:
        return _binary("-", self, other)

    def __mul__(self, other: Formula) -> Formula:
        return _binary("*", self, other)

    def __truediv__(self, other: Formula) -> Formula:
        return _binary("/", self, other)

    def __pow__(self, other: Formula) -> Formula:
        return _binary("^", self, other)

    def scaled(self, sign: int) -> Formula:
        """`sign * self` with a Python int, as the linear split of a source value writes it."""
        return _node("scale", (sign, self), None if self.number is None else sign * self.number)

    def sqrt(self) -> Formula:
        return _node("sqrt", (self,), _root(self.number, Fraction(1, 2)))

    # ------------------------------------------------------------ questions

    def rational(self) -> Fraction | None:
        """The value when it is a rational number (as sympy would fold it), else None."""
        if self.plain:
            return self.number
        if self._sympy is None and self._varies():
            return None  # not constant, so no number whatever sympy folds
        value = self.to_sympy()
        return Fraction(int(value.p), int(value.q)) if value.is_Rational else None

    def is_zero(self) -> bool:
        """Whether sympy would fold the formula to 0 (as written, without expanding)."""
        if not self.plain and self._sympy is None and self._sample(0) not in (None, 0):
            return False  # not zero somewhere, so not identically zero
        return self.rational() == 0

    def is_zero_expanded(self) -> bool:
        """Whether the formula expands to 0 (sympy's `expand(x) == 0`)."""
        if self.plain:
            return self.number == 0
        if self._sample(0) not in (None, 0):
            return False
        import sympy

        return sympy.expand(self.to_sympy()) == 0

    def _sample(self, seed: int) -> Fraction | None:
        """The exact value at a fixed point (each name, `s` and π a distinct rational: π is
        transcendental, so what holds for every value of a variable in its place holds for
        π), None where that point gives no rational value."""
        point = {n: Fraction(2 * k + 3 + seed, 7 + seed)
                 for k, n in enumerate(sorted(self.names))}
        point["\0s"] = Fraction(11 + seed, 13)
        point["\0pi"] = Fraction(17 + seed, 19)
        try:
            return self.value_at(point)
        except (Inexact, ZeroDivisionError):
            return None

    def _varies(self) -> bool:
        """True when two points give two different values (so it is no constant)."""
        first = self._sample(0)
        second = self._sample(1)
        return first is not None and second is not None and first != second

    def free_names(self) -> frozenset[str]:
        """The names it depends on, `s` apart."""
        if self.plain:
            return self.names
        return frozenset(s.name for s in self.to_sympy().free_symbols if s.name != "s")

    def has_laplace(self) -> bool:
        if self.plain:
            return self.laplace
        return any(s.name == "s" for s in self.to_sympy().free_symbols)

    def largest_exponent(self) -> int:
        """The largest numerator of a numeric exponent it takes a power by (1 for none)."""
        largest = 1
        stack = [self]
        while stack:
            node = stack.pop()
            if node.op == "^" and node.args[1].number is not None:
                largest = max(largest, abs(node.args[1].number.numerator))
            stack.extend(a for a in node.args if isinstance(a, Formula))
        return largest

    def value_at(self, values: Mapping[str, Fraction]) -> Fraction:
        """The exact value with `values` for the names; Inexact when it is no rational
        number, ZeroDivisionError where it divides by zero."""
        if self.number is not None:
            return self.number
        op, args = self.op, self.args
        if op == "name":
            found = values.get(args[0])
            if found is None:
                raise Inexact(args[0])
            return found
        if op in ("s", "pi") and "\0" + op in values:
            return values["\0" + op]
        if op in ("s", "pi", "sympy"):
            raise Inexact(op)
        if op == "neg":
            return -args[0].value_at(values)
        if op == "scale":
            return args[0] * args[1].value_at(values)
        if op == "sqrt":
            return _exact_root(args[0].value_at(values), Fraction(1, 2))
        left, right = args[0].value_at(values), args[1].value_at(values)
        if op in ARITHMETIC:
            return ARITHMETIC[op](left, right)
        return _exact_root(left, right)

    # ------------------------------------------------------------ sympy

    def to_sympy(self) -> Any:
        """The sympy expression: the recorded operations replayed in order (cached)."""
        if self._sympy is None:
            self._sympy = _replay(self)
        return self._sympy

    def __str__(self) -> str:
        import sympy

        return sympy.sstr(self.to_sympy())


def from_sympy(expression: Any) -> Formula:
    """A sympy expression a later stage puts into the model (a stand-in opamp gain)."""
    names = {x.name for x in expression.free_symbols}
    made = Formula("sympy", (expression,), None, frozenset(names - {"s"}), "s" in names, False)
    made._sympy = expression
    return made


def constant(value: Fraction | int) -> Formula:
    """A number."""
    value = Fraction(value)
    return Formula("number", (value,), value, frozenset(), False, True)


def name(final: str) -> Formula:
    """A parameter's or element's symbol."""
    return Formula("name", (final,), None, frozenset((final,)), False, True)


def laplace() -> Formula:
    """The Laplace variable `s`."""
    return Formula("s", (), None, frozenset(), True, True)


def pi() -> Formula:
    """The number π (irrational: never plain)."""
    return Formula("pi", (), None, frozenset(), False, False)


# ---------------------------------------------------------------- building


def _node(op: str, args: tuple, number: Fraction | None) -> Formula:
    parts = [a for a in args if isinstance(a, Formula)]
    plain = all(p.plain for p in parts)
    if number is not None and plain:
        return Formula(op, args, number, frozenset(), False, True)
    if op == "sqrt" and parts[0].number is not None:  # an irrational root of a number
        plain = False
    names: frozenset[str] = frozenset()
    laplace_ = False
    for part in parts:
        if part.names & names or (part.laplace and laplace_):
            plain = False  # a name used twice: its parts may cancel or combine
        names |= part.names
        laplace_ = laplace_ or part.laplace
    return Formula(op, args, None, names, laplace_, plain)


def _binary(op: str, left: Formula, right: Formula) -> Formula:
    a, b = left.number, right.number
    number: Fraction | None = None
    if a is not None and b is not None:
        if op == "+":
            number = a + b
        elif op == "-":
            number = a - b
        elif op == "*":
            number = a * b
        elif op == "/":
            number = a / b if b else None
        else:
            number = _root(a, b)
            if number is None and left.plain and right.plain:  # an irrational number
                return Formula(op, (left, right), None, frozenset(), False, False)
    elif op == "*" and (a == 0 or b == 0) and left.plain and right.plain:
        number = Fraction(0)  # sympy folds 0*x to 0
    elif op == "/" and a == 0 and left.plain and right.plain:
        number = Fraction(0)
    elif op == "^" and b == 0 and left.plain:
        number = Fraction(1)
    return _node(op, (left, right), number)


def _root(base: Fraction | None, exponent: Fraction | None) -> Fraction | None:
    """base**exponent when both are numbers and the result is rational, else None."""
    if base is None or exponent is None:
        return None
    try:
        return _exact_root(base, exponent)
    except (Inexact, ZeroDivisionError):
        return None


def _exact_root(base: Fraction, exponent: Fraction) -> Fraction:
    if exponent.denominator == 1:
        return base ** exponent.numerator
    if base < 0:
        raise Inexact("a root of a negative number")
    root = Fraction(integer_root(base.numerator, exponent.denominator),
                    integer_root(base.denominator, exponent.denominator))
    if root ** exponent.denominator != base:
        raise Inexact("an irrational root")
    return root ** exponent.numerator


def integer_root(number: int, degree: int) -> int:
    """The largest integer r with r**degree <= number (number >= 0), by Newton's method."""
    if number < 2:
        return number
    root = 1 << -(-number.bit_length() // degree)
    while True:
        better = ((degree - 1) * root + number // root ** (degree - 1)) // degree
        if better >= root:
            return root
        root = better


def fold(formula: Formula, combine: Callable[[Formula, dict[int, T]], T]) -> T:
    """combine(node, done) for every node of `formula`, operands first, without recursion
    and each shared node once (`done` maps id(operand) to its value)."""
    done: dict[int, T] = {}
    stack = [formula]
    while stack:
        node = stack[-1]
        pending = [a for a in node.args if isinstance(a, Formula) and id(a) not in done
                   and node.number is None]
        if pending:
            stack.extend(pending)
            continue
        stack.pop()
        done[id(node)] = combine(node, done)
    return done[id(formula)]


def _replay(formula: Formula) -> Any:
    """The sympy expression of a formula, built bottom-up without recursion."""
    import sympy

    done: dict[int, Any] = {}
    stack = [formula]
    while stack:
        node = stack[-1]
        if node._sympy is not None:
            done[id(node)] = node._sympy
            stack.pop()
            continue
        pending = [a for a in node.args if isinstance(a, Formula) and id(a) not in done
                   and a._sympy is None]
        if pending:
            stack.extend(pending)
            continue
        stack.pop()
        args = [done.get(id(a), a._sympy) if isinstance(a, Formula) else a
                for a in node.args]
        node._sympy = _apply(sympy, node.op, args)
        done[id(node)] = node._sympy
    return formula._sympy


def _apply(sympy: Any, op: str, args: list) -> Any:
    if op == "number":
        return sympy.Rational(args[0].numerator, args[0].denominator)
    if op == "name":
        return sympy.Symbol(args[0])
    if op == "s":
        return sympy.Symbol("s")
    if op == "pi":
        return sympy.pi
    if op == "neg":
        return -args[0]
    if op == "scale":
        return args[0] * args[1]
    if op == "sqrt":
        return sympy.sqrt(args[0])
    left, right = args
    if op in ARITHMETIC:
        return ARITHMETIC[op](left, right)
    return left**right
