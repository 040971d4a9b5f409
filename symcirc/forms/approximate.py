"""Approximations under stated assumptions, each with its neglected term and its error.

`Rm >> R1` (or `R1 << Rm`): put Rm = R1/ε and expand in the small ratio ε = R1/Rm; the
approximation is the leading term, the neglected term the first correction. `A -> oo`
(or `x -> 0`): the engine gives the limit; here it becomes a step with the same first
correction in 1/A (or x) and, where it has that shape, the loop-gain form `H∞/(1 + X/A)`.
The relative error (approximation − exact)/exact is given exactly, as its own formula.
"""

from __future__ import annotations

from dataclasses import dataclass

import sympy

from ..algebra.convert import restored
from ..algebra.factor import factored
from ..algebra.rational import RationalFunction
from .verify import NotRational, function_of


@dataclass
class Expansion:
    """exact = leading + neglected + (higher orders) in the small quantity."""

    exact: sympy.Expr
    leading: sympy.Expr
    neglected: sympy.Expr
    relative_error: sympy.Expr
    """(leading − exact)/exact, exactly."""
    order: int
    """Power of the small quantity in the leading term."""


class NoExpansion(Exception):
    """The quantity is not rational in the small quantity, or grows without bound."""


def much_greater(exact: sympy.Expr, big: sympy.Symbol, small: sympy.Symbol) -> Expansion:
    """Expansion of `exact` for big ≫ small: in ε = small/big with the other symbols
    fixed, which is the expansion in 1/big (the leading term and the first correction do
    not depend on which small symbol sets the scale)."""
    return _expand(exact, big, True)


def limit(exact: sympy.Expr, symbol: sympy.Symbol, infinite: bool) -> Expansion:
    """Expansion of `exact` as `symbol` → ∞ (in 1/symbol) or → 0 (in symbol)."""
    expansion = _expand(exact, symbol, infinite)
    if expansion.order < 0:
        raise NoExpansion(f"the quantity grows without bound as {symbol} goes to its limit")
    return expansion


def _expand(exact: sympy.Expr, x: sympy.Symbol, infinite: bool) -> Expansion:
    """Laurent expansion in the small quantity 1/x (infinite) or x, by polynomial
    arithmetic: f = N/D, c_j = P_j/d0^(j+1) with P_j = n_j·d0^j − Σ d_i·P_(j−i)·d0^(i−1)."""
    f, atoms = _function(exact, x)
    ring, name = f.ring, str(x)
    num, den = f.numerator, f.denominator
    n, d = _coefficients(ring, num, name), _coefficients(ring, den, name)
    offset = 0
    if infinite:  # in t = 1/x: N = t^(−deg N)·Σ n_(deg N − i)·t^i
        offset = len(d) - len(n)
        n, d = n[::-1], d[::-1]
    if f.is_zero():
        return Expansion(exact, sympy.Integer(0), sympy.Integer(0), sympy.Integer(0), 0)
    a = next(k for k, c in enumerate(n) if not ring.is_zero(c))
    b = next(k for k, c in enumerate(d) if not ring.is_zero(c))
    n, d = n[a:], d[b:]
    order = offset + a - b
    d0 = d[0]
    series = [n[0]]
    correction = None
    for j in range(1, len(n) + len(d)):
        p = (n[j] if j < len(n) else ring.zero) * d0**j
        for k in range(1, min(j, len(d) - 1) + 1):
            p -= d[k] * series[j - k] * d0 ** (k - 1)
        series.append(p)
        if not ring.is_zero(p):
            correction = j
            break
    small = 1 / x if infinite else x
    lead = RationalFunction(series[0], d0, ring)
    leading = restored(lead, atoms) * small**order
    neglected = sympy.Integer(0)
    if correction is not None:
        term = RationalFunction(series[correction], d0 ** (correction + 1), ring)
        neglected = factored(term, atoms) * small ** (order + correction)
    # (leading − f)/f = (L·D − N)/N with L = lead_num/lead_den·x^(∓order)
    shift = -order if infinite else order
    x_poly = ring.gen(name)
    up, down = (x_poly**shift, ring.one) if shift >= 0 else (ring.one, x_poly**-shift)
    top = lead.numerator * den * up - lead.denominator * num * down
    error = factored(RationalFunction(top, lead.denominator * num * down, ring), atoms)
    return Expansion(exact, grouped(leading), neglected, error, order)


def _coefficients(ring, p, name: str) -> list:
    """Coefficients of the powers of `name` in polynomial p, lowest power first."""
    found = ring.coefficients(p, name)
    return [found.get(k, ring.zero) for k in range(max(found, default=0) + 1)]


def _function(expr: sympy.Expr, x: sympy.Symbol) -> tuple[RationalFunction, dict]:
    """`expr` as an exact rational function whose ring has x, and its atoms."""
    try:
        f, atoms = function_of(expr, extra=(x,))
    except NotRational as err:
        raise NoExpansion("it is not a ratio of polynomials in the small quantity") from err
    if any(x in atom.free_symbols for atom in atoms.values()):
        raise NoExpansion("it is not a ratio of polynomials in the small quantity")
    return f, atoms


def loop_gain_term(
    exact: sympy.Expr, leading: sympy.Expr, symbol: sympy.Symbol
) -> sympy.Expr | None:
    """X with exact = leading/(1 + X/symbol) and X free of `symbol`, when that holds."""
    if exact == 0 or leading == 0:
        return None
    f, atoms = _function(exact, symbol)
    try:
        lead, more = function_of(leading, f.ring)
    except NotRational:
        return None
    ring, name = lead.ring, str(symbol)
    f = f.in_ring(ring)
    # X/symbol = leading/exact − 1
    ratio = lead / f - 1
    top, bottom = ratio.numerator, ratio.denominator
    if ratio.is_zero() or ring.degree(top, name) != 0 or ring.degree(bottom, name) != 1:
        return None
    by_power = ring.coefficients(bottom, name)
    if 0 in by_power:
        return None
    return _grouped(RationalFunction(top, by_power[1], ring), {**atoms, **more})


def grouped(expr: sympy.Expr) -> sympy.Expr:
    """A ratio written the way it is read: factored, and `1 + Rf/Rg` rather than
    `(Rf + Rg)/Rg` when the numerator is the denominator plus something smaller."""
    try:
        f, atoms = function_of(expr)
    except NotRational:
        return expr
    return _grouped(f, atoms)


def _grouped(f: RationalFunction, atoms: dict) -> sympy.Expr:
    ring, num, den = f.ring, f.numerator, f.denominator
    if ring.is_constant(den):
        return factored(f, atoms)
    for sign in (1, -1):
        rest = num - den * sign
        if not ring.is_zero(rest) and 2 * ring.nterms(rest) <= ring.nterms(num):
            return sign * (1 + factored(RationalFunction(rest * sign, den, ring), atoms))
    return factored(f, atoms)
