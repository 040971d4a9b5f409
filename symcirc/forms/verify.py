"""Exact proof that a design form equals the canonical result.

Both sides are turned into a ratio of integer polynomials (sympy's sparse `ring`, no
simplification heuristics) and cross-multiplied: `n1·d2 == n2·d1` is an identity of
polynomials, not a numeric spot check. Anything that is not a rational operation (a square
root, `pi`) becomes a generator of its own, so it must match term for term.
"""

from __future__ import annotations

import sympy
from sympy.polys.rings import PolyElement, ring

from .parallel import Parallel


class NotRational(Exception):
    """The expression has a zero denominator or a non-integer power of a sum."""


def equal(form: sympy.Expr, canonical: sympy.Expr) -> bool:
    """True when `form` and `canonical` are the same rational function (exactly)."""
    form, canonical = sympy.sympify(form), sympy.sympify(canonical)
    generators = sorted(_generators(form) | _generators(canonical), key=sympy.default_sort_key)
    generators = generators or [sympy.Dummy("x")]
    poly_ring, *_ = ring(generators, sympy.QQ)
    index = {g: poly_ring.gens[i] for i, g in enumerate(generators)}
    try:
        n1, d1 = _ratio(form, poly_ring, index)
        n2, d2 = _ratio(canonical, poly_ring, index)
    except NotRational:
        return False
    if not d1 or not d2:
        return False
    return n1 * d2 == n2 * d1


def to_ratio(expr: sympy.Expr, extra: tuple[sympy.Symbol, ...] = ()):
    """`expr` as a cancelled (numerator, denominator) of polynomials over QQ, in a ring of
    its symbols (and `extra`). Raises NotRational when it is not a rational function."""
    generators = sorted(_generators(expr) | set(extra), key=sympy.default_sort_key)
    poly_ring, *_ = ring(generators or [sympy.Dummy("x")], sympy.QQ)
    index = {g: poly_ring.gens[i] for i, g in enumerate(generators)}
    num, den = _ratio(expr, poly_ring, index)
    if not den:
        raise NotRational("division by zero")
    from .factoring import cancel

    return cancel(num, den)


def _generators(expr: sympy.Expr) -> set[sympy.Expr]:
    """Symbols and irrational atoms (`sqrt(L1*L2)`, `pi`) of `expr`."""
    if expr.is_Symbol:
        return {expr}
    if expr.is_Rational:
        return set()
    if expr.is_Add or expr.is_Mul or isinstance(expr, Parallel):
        out: set[sympy.Expr] = set()
        for a in expr.args:
            out |= _generators(a)
        return out
    if expr.is_Pow and expr.exp.is_Integer:
        return _generators(expr.base)
    if expr.is_Pow and expr.exp.is_Rational:
        return {expr.base ** sympy.Rational(1, expr.exp.q)}
    return {expr}


def _ratio(expr: sympy.Expr, poly_ring, index) -> tuple[PolyElement, PolyElement]:
    """(numerator, denominator) polynomials of `expr`, without cancelling."""
    one = poly_ring.one
    if expr in index:
        return index[expr], one
    if expr.is_Rational:
        return poly_ring(expr.p), poly_ring(expr.q)
    if expr.is_Add:
        num, den = poly_ring.zero, one
        for a in expr.args:
            n, d = _ratio(a, poly_ring, index)
            num, den = (num * d + n * den, den * d) if d != den else (num + n, den)
        return num, den
    if expr.is_Mul:
        num, den = one, one
        for a in expr.args:
            n, d = _ratio(a, poly_ring, index)
            num, den = num * n, den * d
        return num, den
    if isinstance(expr, Parallel):
        # 1/Σ(1/Zk): numerator Π nk over Σ dk·Π(other nk)
        parts = [_ratio(a, poly_ring, index) for a in expr.args]
        num, den = poly_ring.zero, one
        for n, d in parts:  # Σ dk/nk
            if not n:
                raise NotRational("a short in parallel")
            num, den = num * n + d * den, den * n
        return den, num
    if expr.is_Pow and expr.exp.is_Integer:
        n, d = _ratio(expr.base, poly_ring, index)
        e = int(expr.exp)
        if e < 0:
            if not n:
                raise NotRational("division by zero")
            n, d, e = d, n, -e
        return n**e, d**e
    if expr.is_Pow and expr.exp.is_Rational:
        root = index.get(expr.base ** sympy.Rational(1, expr.exp.q))
        if root is None:
            raise NotRational(str(expr))
        p = int(expr.exp.p)
        return (root**p, one) if p >= 0 else (one, root**-p)
    raise NotRational(str(expr))
