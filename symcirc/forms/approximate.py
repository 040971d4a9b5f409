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

from ..algebra.factor import cancel, coefficients_in, factor_ratio
from .verify import NotRational, to_ratio


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
    poly_ring, (num, den), i = _ring_ratio(exact, x)
    n, d = coefficients_in(num, i, poly_ring), coefficients_in(den, i, poly_ring)
    offset = 0
    if infinite:  # in t = 1/x: N = t^(−deg N)·Σ n_(deg N − i)·t^i
        offset = len(d) - len(n)
        n, d = n[::-1], d[::-1]
    if not num:
        return Expansion(exact, sympy.Integer(0), sympy.Integer(0), sympy.Integer(0), 0)
    a = next(k for k, c in enumerate(n) if c)
    b = next(k for k, c in enumerate(d) if c)
    n, d = n[a:], d[b:]
    order = offset + a - b
    d0 = d[0]
    series = [n[0]]
    correction = None
    for j in range(1, len(n) + len(d)):
        p = (n[j] if j < len(n) else poly_ring.zero) * d0**j
        for k in range(1, min(j, len(d) - 1) + 1):
            p -= d[k] * series[j - k] * d0 ** (k - 1)
        series.append(p)
        if p:
            correction = j
            break
    small = 1 / x if infinite else x
    lead_num, lead_den = cancel(series[0], d0)
    leading = lead_num.as_expr() / lead_den.as_expr() * small**order
    neglected = sympy.Integer(0)
    if correction is not None:
        c_num, c_den = cancel(series[correction], d0 ** (correction + 1))
        neglected = _shown(c_num, c_den) * small ** (order + correction)
    # (leading − f)/f = (L·D − N)/N with L = lead_num/lead_den·x^(∓order)
    shift = -order if infinite else order
    x_poly = poly_ring.gens[i]
    up, down = (x_poly**shift, 1) if shift >= 0 else (1, x_poly**-shift)
    top = lead_num * den * up - lead_den * num * down
    error = _shown(*cancel(top, lead_den * num * down))
    return Expansion(exact, grouped(leading), neglected, error, order)


def _ring_ratio(expr: sympy.Expr, x: sympy.Symbol):
    """`expr` as a cancelled ratio of polynomials over QQ, with the index of x."""
    try:
        num, den = to_ratio(expr, (x,))
    except NotRational as err:
        raise NoExpansion("it is not a ratio of polynomials in the small quantity") from err
    symbols = list(num.ring.symbols)
    if any(x in g.free_symbols for g in symbols if g != x):
        raise NoExpansion("it is not a ratio of polynomials in the small quantity")
    return num.ring, (num, den), symbols.index(x)



def _shown(num, den) -> sympy.Expr:
    """A ratio of ring polynomials as a factored sympy expression."""
    return factor_ratio(num, den)


def loop_gain_term(
    exact: sympy.Expr, leading: sympy.Expr, symbol: sympy.Symbol
) -> sympy.Expr | None:
    """X with exact = leading/(1 + X/symbol) and X free of `symbol`, when that holds."""
    if exact == 0 or leading == 0:
        return None
    poly_ring, (num, den), i = _ring_ratio(exact, symbol)
    _, (lead_num, lead_den), _ = _ring_ratio(leading, symbol)
    lead_num, lead_den = (poly_ring.from_expr(p.as_expr()) for p in (lead_num, lead_den))
    # X/symbol = leading/exact − 1 = (lead_num·den − lead_den·num)/(lead_den·num)
    top, bottom = cancel(lead_num * den - lead_den * num, lead_den * num)
    if not top or top.degree(i) != 0 or bottom.degree(i) != 1 or bottom.coeff_wrt(i, 0):
        return None
    return grouped(top.as_expr() / bottom.coeff_wrt(i, 1).as_expr())


def grouped(expr: sympy.Expr) -> sympy.Expr:
    """A ratio written the way it is read: factored, and `1 + Rf/Rg` rather than
    `(Rf + Rg)/Rg` when the numerator is the denominator plus something smaller."""
    try:
        num, den = to_ratio(expr)
    except NotRational:
        return expr
    if den.is_ground:
        return factor_ratio(num, den)
    for sign in (1, -1):
        rest = num - den * sign
        if rest and 2 * len(rest.terms()) <= len(num.terms()):
            return sign * (1 + factor_ratio(rest * sign, den))
    return factor_ratio(num, den)
