"""Readable closed forms of rational functions, fast: cancelled by the exact polynomial gcd
and factored, through the engine's integer polynomial rings (python-flint when present).

sympy's own factor(cancel(..)) does the same at the expression level and takes tens of
seconds on the derivatives of a mid-sized bridge result; this takes milliseconds.
"""

from __future__ import annotations

import sympy

FACTOR_TERMS = 5000
"""Above this many terms a numerator or denominator is cancelled but not factored."""


def tidy(expression: sympy.Expr) -> sympy.Expr:
    """`expression` cancelled to lowest terms and factored; expressions that are no rational
    function of their symbols (a square root, pi) go through sympy's factor(cancel(..))."""
    symbols = sorted(expression.free_symbols, key=str)
    if not symbols:
        return sympy.cancel(expression)
    parts = _integer_parts(expression, symbols)
    if parts is None:
        return sympy.factor(sympy.cancel(expression))
    scale, numerator, denominator = parts
    return _factored(scale, numerator, denominator, symbols)


def _integer_parts(expression: sympy.Expr, symbols: list[sympy.Symbol]):
    """(rational scale, integer numerator terms, integer denominator terms) or None."""
    from sympy import QQ
    from sympy.polys.polyerrors import CoercionFailed, PolynomialError
    from sympy.polys.rings import ring

    everything = ring(symbols, QQ)[0]
    try:
        numerator, denominator = (everything.from_expr(p)
                                  for p in sympy.fraction(sympy.together(expression)))
    except (ValueError, CoercionFailed, PolynomialError):
        return None
    if not denominator:
        return None
    n_scale, numerator = numerator.clear_denoms()
    d_scale, denominator = denominator.clear_denoms()
    scale = sympy.Rational(d_scale) / sympy.Rational(n_scale)
    return (scale, [(m, int(c)) for m, c in numerator.terms()],
            [(m, int(c)) for m, c in denominator.terms()])


def _factored(scale, numerator, denominator, symbols) -> sympy.Expr:
    from ..algebra.polynomials import PolynomialRing

    names = [str(x) for x in symbols]
    ring = PolynomialRing(names)
    order = [ring.index(n) for n in names]

    def poly(terms):
        moved = []
        for monomial, coefficient in terms:
            exponents = [0] * len(order)
            for position, e in zip(order, monomial, strict=True):
                exponents[position] = e
            moved.append((tuple(exponents), coefficient))
        return ring.from_terms(moved)

    top, bottom = poly(numerator), poly(denominator)
    if ring.is_zero(top):
        return sympy.Integer(0)
    common = ring.gcd(top, bottom)
    top, bottom = ring.exquo(top, common), ring.exquo(bottom, common)
    if ring.leading_coefficient(bottom) < 0:
        top, bottom = -top, -bottom
    constant = sympy.Rational(scale)
    factors: list[sympy.Expr] = []
    for p, sign in ((top, 1), (bottom, -1)):
        content, pieces = _factor(ring, p)
        constant *= sympy.Integer(content) ** sign
        factors += [ring.to_sympy(f) ** (sign * e) for f, e in pieces]
    return sympy.Mul(constant, *factors)


def _factor(ring, p) -> tuple[int, list[tuple[object, int]]]:
    """(integer content, [(factor, exponent)]) of p; p itself when too large to factor."""
    if ring.is_constant(p):
        return ring.constant_value(p), []
    if ring.nterms(p) > FACTOR_TERMS:
        content, primitive = ring.primitive(p)
        return content, [(primitive, 1)]
    if ring.backend == "flint":
        content, pieces = p.factor()
        return int(content), [(f, int(e)) for f, e in pieces]
    content, pieces = p.factor_list()
    return int(content), [(f, int(e)) for f, e in pieces]
