"""Readable closed forms of rational functions, fast: cancelled by the exact polynomial gcd
and factored, through the algebra package (python-flint when present).

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
    function = _function(expression, symbols)
    if function is None:
        return sympy.factor(sympy.cancel(expression))
    if function.is_zero():
        return sympy.Integer(0)
    ring = function.ring
    constant = sympy.Integer(1)
    factors: list[sympy.Expr] = []
    for p, sign in ((function.numerator, 1), (function.denominator, -1)):
        content, pieces = _factor(ring, p)
        constant *= sympy.Integer(content) ** sign
        factors += [ring.to_sympy(f) ** (sign * e) for f, e in pieces]
    return sympy.Mul(constant, *factors)


def _function(expression: sympy.Expr, symbols: list[sympy.Symbol]):
    """The expression as the algebra's rational function in lowest terms (a float taken as
    the simple rational it stands for), or None when it is none."""
    from ..algebra.convert import to_function
    from ..algebra.polynomials import AlgebraError, PolynomialRing

    floats = expression.atoms(sympy.Float)
    if floats:
        from sympy.polys.domains import RR

        expression = expression.xreplace(
            {f: sympy.Rational(*RR.to_rational(RR.from_sympy(f))) for f in floats})
    names = [str(x) for x in symbols]
    try:
        function = to_function(expression, PolynomialRing(names))
    except (ValueError, AlgebraError):
        return None
    if set(function.symbol_names()) - set(names):  # an atom: a square root, pi
        return None
    return function


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
