"""The model's formulas as rational functions, straight from the recorded operations.

A plain formula (`model.formula`) made of numbers, names, `s`, + − × ÷ and integer powers
is built as a `RationalFunction` directly, without sympy; one holding an irrational piece
(π, a root, a fractional power), or whose terms may cancel, goes through its sympy
expression and `convert.to_function`, which holds irrational pieces as ring variables.
Both give the canonical rational function, so the engine's results do not depend on the
way in.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from ..model.formula import ARITHMETIC, Formula, fold
from .polynomials import LAPLACE_NAME, PolynomialRing
from .rational import RationalFunction

if TYPE_CHECKING:  # pragma: no cover
    import sympy

_RATIONAL_OPERATIONS = frozenset(("number", "name", "s", "neg", "scale", "+", "-", "*", "/"))


def is_rational(value: Formula) -> bool:
    """True when the formula is a rational function of its names and `s`."""
    return _rational_operations(value)


def _direct(value: Formula) -> bool:
    """Built here without sympy: rational and plain (a formula whose terms may cancel,
    `R2 - R2`, goes through sympy, whose expression names only what it depends on)."""
    return value.plain and _rational_operations(value)


def _rational_operations(value: Formula) -> bool:
    stack = [value]
    while stack:
        node = stack.pop()
        if node.number is not None:
            continue
        if node.op == "^":
            if node.args[1].number is None or node.args[1].number.denominator != 1:
                return False
        elif node.op not in _RATIONAL_OPERATIONS:
            return False
        stack.extend(a for a in node.args if isinstance(a, Formula))
    return True


def names_in(value: Formula) -> set[str]:
    """The ring variables the formula needs (its names, `s`, and its irrational pieces)."""
    if _direct(value):
        names = set(value.names)
        return names | {LAPLACE_NAME} if value.laplace else names
    from .convert import names_of

    return names_of(value.to_sympy())


def atoms_in(value: Formula) -> dict[str, sympy.Expr]:
    """The irrational pieces the formula holds as ring variables (see `convert.atoms_of`)."""
    if _direct(value):
        return {}
    from .convert import atoms_of

    return atoms_of(value.to_sympy())


def function_of(value: Formula, ring: PolynomialRing) -> RationalFunction:
    """The formula as a rational function over `ring` (extended by any variable it lacks);
    `rational.UndefinedValue` for a division by zero."""
    if not _direct(value):
        from .convert import to_function

        return to_function(value.to_sympy(), ring)
    missing = names_in(value) - set(ring.names)
    if missing:
        ring = ring.extend(sorted(missing))
    return fold(value, lambda node, done: _apply(node, done, ring))


def _apply(node: Formula, done: dict[int, RationalFunction], ring: PolynomialRing
           ) -> RationalFunction:
    if node.number is not None:
        return RationalFunction.constant(node.number, ring)
    op, args = node.op, node.args
    if op == "name":
        return RationalFunction.symbol(args[0], ring)
    if op == "s":
        return RationalFunction.symbol(LAPLACE_NAME, ring)
    parts: list[Any] = [done[id(a)] if isinstance(a, Formula) else a for a in args]
    if op == "neg":
        return -parts[0]
    if op == "scale":
        return parts[1] * parts[0]
    left, right = parts
    if op in ARITHMETIC:
        return ARITHMETIC[op](left, right)
    return left ** int(args[1].number)
