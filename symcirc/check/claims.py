"""The exact decision: does a claimed expression equal the derived one?

Both become ratios of integer polynomials in one space (`exact.Space`) and the claim holds
exactly when the cross-multiplied difference of numerators is the zero polynomial (modulo
the relations of any square roots). No floating-point equality is ever part of the
decision; numbers are only computed to show a counterexample, at small positive integers.
"""

from __future__ import annotations

import random
from dataclasses import dataclass, field
from fractions import Fraction

import sympy

from ..algebra.identity import LAPLACE_NAME, RatFunc, Space, TooLarge, Undecidable
from ..errors import Location, SymcircError
from .diagnose import diagnose
from .dimensions import Dimensions

SEARCH_TRIES = 400
"""Points tried when looking for a counterexample."""


@dataclass
class Counterexample:
    """Small positive integer values where the claim and the derived result differ."""

    values: dict[str, int | complex]
    """Positive integers for the parts; `s` may be negative or imaginary (it is complex)."""
    claimed: Fraction | sympy.Expr
    derived: Fraction | sympy.Expr


@dataclass
class Verdict:
    """The outcome for one claim."""

    quantity: str
    holds: bool
    decided: bool = True
    """False when the claim could not be decided exactly (never reported as holding)."""
    reason: str | None = None
    """Why it could not be decided."""
    counterexample: Counterexample | None = None
    ratio: str | None = None
    """claimed / derived, cancelled and factored (or its size, when too large to show)."""
    difference: str | None = None
    """claimed - derived, likewise."""
    diagnosis: list[str] = field(default_factory=list)
    """Explanations, most telling first (a dimension mismatch always first)."""


def decide(
    quantity: str,
    derived: sympy.Expr,
    claimed: sympy.Expr,
    dims: Dimensions | None = None,
    dimension_problem: str | None = None,
    where: tuple[Location, str] | None = None,
) -> Verdict:
    """Decide exactly whether `claimed` equals `derived` (element symbols positive, `s`
    complex); when it does not, find a counterexample and explain the difference.

    `dims` gives each symbol's dimension (for swaps and limits between like parts);
    `dimension_problem` is a dimension mismatch found beforehand, reported first;
    `where` (the claim's location and the text it refers to) places the error raised when
    the claim is too large to decide.
    """
    try:
        return _decide(quantity, derived, claimed, dims, dimension_problem)
    except TooLarge as large:
        if where is None:
            raise
        raise SymcircError.at(where[0], large.message, where[1], large.notes) from None


def _decide(quantity: str, derived: sympy.Expr, claimed: sympy.Expr, dims: Dimensions | None,
            dimension_problem: str | None) -> Verdict:
    verdict = Verdict(quantity, holds=False)
    if dimension_problem:
        verdict.diagnosis.append(dimension_problem)
    try:
        space = Space([derived, claimed], extra=("#u",))
        d = space.convert(derived, prepared=False)
        c = space.convert(claimed, prepared=False)
        if space.equal(c, d):
            verdict.holds = True
            return verdict
    except Undecidable as why:
        verdict.decided = False
        verdict.reason = f"cannot be decided exactly: the expression uses {why}"
        return verdict
    verdict.counterexample = find_counterexample(space, derived, claimed, d, c)
    if verdict.counterexample is None and not space.rational:
        # Not zero modulo the radicals' relations, yet no point shows a difference: the
        # radicals may be related in a way the reduction does not see. Say so; never "holds".
        verdict.decided = False
        verdict.reason = (
            "cannot be decided exactly: the square roots could not be reduced to a normal "
            "form, and no counterexample was found"
        )
    d, c = d.cancelled(), c.cancelled()
    verdict.difference = space.show(_reduced(space, c - d))
    if space.is_zero(d):
        verdict.diagnosis.append("the derived result is 0 for every value of the parts")
        return verdict
    verdict.ratio = space.show(_reduced(space, c.ratio(d)))
    # After a dimension mismatch (reported first) the other explanations still help: a
    # gain claimed as `Ub*R2/(R1 + R2)` is also "the claim is `Ub` times the derived result".
    verdict.diagnosis.extend(diagnose(space, d, c, claimed, dims or {}))
    return verdict


def _reduced(space: Space, value: RatFunc) -> RatFunc:
    return RatFunc(space.reduce(value.num), space.reduce(value.den), space.ring)


def find_counterexample(
    space: Space, derived: sympy.Expr, claimed: sympy.Expr, d: RatFunc, c: RatFunc
) -> Counterexample | None:
    """Small positive integers where the two differ: first 2, 3, 4, ... in name order (no 1:
    it hides factors), then 1, 2, 3, ..., then random values from 1 to 9 (seeded: the output
    is the same on every run)."""
    names = [n for n in space.symbols if not n.startswith("#")]
    rng = random.Random(20240)
    candidates = [list(range(2, len(names) + 2)), list(range(1, len(names) + 1))]
    for _ in range(SEARCH_TRIES):
        candidates.append([rng.randint(1, 9) for _ in names])
    for point in candidates:
        values = dict(zip(names, point, strict=True))
        if space.rational:
            args = [values.get(n, 0) for n in space.symbols]
            dv, cv = space.evaluate(d, args), space.evaluate(c, args)
            if dv is not None and cv is not None and dv != cv:
                return Counterexample(values, cv, dv)
        else:
            found = _numeric_difference(space, derived, claimed, values)
            if found is not None:
                return Counterexample(values, found[1], found[0])
    if LAPLACE_NAME in names and not space.rational:
        # `s` is complex: a claim such as sqrt(s^2) = s fails only off the positive axis.
        base = dict(zip(names, candidates[0], strict=True))
        for value in (-1, -2, 1j, 2j, -1j, 1 + 1j):
            values = {**base, LAPLACE_NAME: value}
            found = _numeric_difference(space, derived, claimed, values)
            if found is not None:
                return Counterexample(values, found[1], found[0])
    return None


def _numeric_difference(space: Space, derived, claimed, values: dict[str, int]):
    """Both values at a point, when they differ beyond doubt (50 digits, radicals exact)."""
    subs = {sympy.Symbol(n): _number(v) for n, v in values.items()}
    dv, cv = derived.xreplace(subs), claimed.xreplace(subs)
    if not (dv.is_finite and cv.is_finite):
        return None
    dn, cn = complex(dv.evalf(50)), complex(cv.evalf(50))
    gap = abs(sympy.N(dv - cv, 50))
    scale = max(abs(dn), abs(cn), 1e-300)
    if gap > 1e-30 * scale:
        return dv, cv
    return None


def _number(value: int | complex) -> sympy.Expr:
    if isinstance(value, complex):
        return sympy.Integer(int(value.real)) + sympy.I * sympy.Integer(int(value.imag))
    return sympy.Integer(value)
