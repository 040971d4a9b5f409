"""Exact proof that a design form equals the canonical result.

Both sides become canonical rational functions of symcirc.algebra (python-flint, or sympy's
rings with SYMCIRC_POLYNOMIALS=sympy; no simplification heuristics) and are compared: an
identity of polynomials, not a numeric spot check. A square root or `pi` is an atom of its
own, so it must match term for term. The only thing of the forms' own is `∥`, given to the
conversion as the rational function 1/Σ(1/Zk).
"""

from __future__ import annotations

from typing import Any

import sympy

from ..algebra.convert import atoms_of, sympy_ring, to_function
from ..algebra.identity import identical
from ..algebra.polynomials import PolynomialRing
from ..algebra.rational import RationalFunction
from .parallel import Parallel
from .printing import as_expr


class NotRational(Exception):
    """The expression has a zero denominator or is not a ratio of polynomials."""


def _parallel(operands: list[RationalFunction]) -> RationalFunction:
    """Z1∥Z2∥… = 1/Σ(1/Zk)."""
    if any(z.is_zero() for z in operands):
        raise NotRational("a short in parallel")
    total = operands[0].inverse()
    for z in operands[1:]:
        total = total + z.inverse()
    return total.inverse()


OPERATORS = {Parallel: _parallel}


def function_of(expr: Any, ring: PolynomialRing | None = None,
                extra: tuple[sympy.Symbol, ...] = ()) -> tuple[RationalFunction, dict]:
    """A form (a sympy expression, possibly with `∥`) as an exact rational function of the
    algebra, in `ring` extended as needed, with the atoms it uses by ring name."""
    expr = as_expr(expr)
    if ring is None:
        ring = PolynomialRing([str(x) for x in extra])
    try:
        function = to_function(expr, ring, OPERATORS)
    except (ValueError, ZeroDivisionError) as err:
        raise NotRational(str(err)) from err
    return function, atoms_of(expr, OPERATORS)


def equal(form: sympy.Expr, canonical: Any) -> bool:
    """True when `form` and `canonical` are the same rational function (exactly).

    `canonical` is a sympy expression or the engine's rational function (`result.exact`,
    used as it is: turning a large result into sympy costs more than the proof).
    """
    engine = _engine(canonical)
    try:
        if engine is not None:
            left, _ = function_of(form, engine.ring)
            return identical(left, engine)
        right, _ = function_of(canonical)
        left, _ = function_of(form, right.ring)
    except NotRational:
        return False
    return identical(left, right)


def _engine(value: Any) -> RationalFunction | None:
    """The engine's exact value as a rational function (atoms stay ring variables)."""
    if isinstance(value, RationalFunction):
        return value
    function = getattr(value, "function", None)
    return function if isinstance(function, RationalFunction) else None


def to_ratio(expr: sympy.Expr, extra: tuple[sympy.Symbol, ...] = ()):
    """`expr` as a cancelled (numerator, denominator) of polynomials of a sympy ring over
    QQ whose generators are its symbols and atoms (and `extra`). Raises NotRational when it
    is not a rational function."""
    function, atoms = function_of(expr, extra=extra)
    return sympy_ring(function, atoms, extra)


def ring_ratio(value: Any, extra: tuple[sympy.Symbol, ...] = ()):
    """Like `to_ratio`, for a sympy expression or the engine's exact value (taken over
    term by term: it is already in lowest terms)."""
    engine = _engine(value)
    if engine is None:
        return to_ratio(as_expr(value), extra)
    atoms = getattr(value, "atoms", {})
    return sympy_ring(engine, atoms, extra)
