"""Exact proof that a design form equals the canonical result.

Both sides are turned into a ratio of integer polynomials in lowest terms (python-flint,
or sympy's sparse `ring`; no simplification heuristics) and compared: two such ratios are
the same function exactly when they agree up to sign, an identity of polynomials, not a
numeric spot check. Anything that is not a rational operation (a square
root, `pi`) becomes a generator of its own, so it must match term for term.
"""

from __future__ import annotations

from typing import Any

import sympy
from sympy.polys.rings import PolyElement, ring

from .parallel import Parallel
from .printing import as_expr


class NotRational(Exception):
    """The expression has a zero denominator or a non-integer power of a sum."""


def equal(form: sympy.Expr, canonical: Any) -> bool:
    """True when `form` and `canonical` are the same rational function (exactly).

    `canonical` is a sympy expression or the engine's rational function (`result.exact`,
    used as it is: turning a large result into sympy costs more than the proof).
    """
    form = as_expr(form)
    engine = canonical if _is_engine(canonical) else None
    canonical = None if engine is not None else as_expr(canonical)
    generators = _generators(form) | (set() if engine is not None else _generators(canonical))
    arithmetic = _Arithmetic(generators, engine)
    try:
        left = arithmetic.ratio(form)
        right = arithmetic.engine(engine) if engine is not None else arithmetic.ratio(canonical)
    except NotRational:
        return False
    return arithmetic.same(left, right)


def _is_engine(value: Any) -> bool:
    return hasattr(value, "numerator") and hasattr(value, "ring") and hasattr(value, "size")


class _Arithmetic:
    """Ratios of integer polynomials kept in lowest terms at every operation (Henrici's
    sum, cross-cancelled products), so a nested form costs what its value costs rather than
    doubling at each level; python-flint's `fmpz_mpoly`, sympy's ring when flint is absent.
    Two ratios in lowest terms over Z[x] are equal exactly when they agree up to sign."""

    CROSS_LIMIT = 10**6
    """Term products beyond which two ratios that differ in shape are not cross-multiplied."""

    def __init__(self, generators: set[sympy.Expr], engine: Any = None) -> None:
        ordered = sorted(generators, key=sympy.default_sort_key)
        names = [g.name if _plain(g) else None for g in ordered]
        counts = {n: names.count(n) for n in names if n is not None}
        base = list(engine.ring.names) if engine is not None else []
        taken = set(base)
        self.names: dict[sympy.Expr, str] = {}
        for g, name in zip(ordered, names, strict=True):
            if name is None or counts[name] > 1 or (name in taken and name not in base):
                name = f"#{len(self.names)}"
            self.names[g] = name
        extra = [n for n in self.names.values() if n not in base]
        all_names = tuple(base + sorted(extra)) or ("#",)
        self.flint = _flint()
        if self.flint is not None:
            self.ctx = self.flint.fmpz_mpoly_ctx.get(all_names, "lex")
            gens = self.ctx.gens()
        else:
            self.poly_ring, *gens = ring(list(all_names), sympy.ZZ)
        index = {n: i for i, n in enumerate(all_names)}
        self.gen = {g: gens[index[n]] for g, n in self.names.items()}
        self.one, self.zero = self.constant(1), self.constant(0)

    # -- polynomials
    def constant(self, value: int):
        return self.ctx.constant(int(value)) if self.flint is not None else self.poly_ring(value)

    def gcd(self, a, b):
        return a.gcd(b)

    def quo(self, a, b):
        return a // b if self.flint is not None else a.exquo(b)

    @staticmethod
    def terms(p) -> int:
        return len(p)

    def lead_negative(self, p) -> bool:
        if self.flint is not None:
            return int(p.leading_coefficient()) < 0
        return p.LC < 0

    # -- ratios (numerator, denominator), coprime
    def reduce(self, num, den):
        if not den:
            raise NotRational("division by zero")
        if not num:
            return self.zero, self.one
        g = self.gcd(num, den)
        if g != 1 and g != -1:
            num, den = self.quo(num, g), self.quo(den, g)
        return num, den

    def add(self, x, y):
        (a, b), (c, d) = x, y
        if not a:
            return y
        if not c:
            return x
        if b == d:
            return self.reduce(a + c, b)
        g = self.gcd(b, d)
        if g == 1 or g == -1:
            return a * d + c * b, b * d
        b1, d1 = self.quo(b, g), self.quo(d, g)
        num = a * d1 + c * b1
        h = self.gcd(num, g)
        if h != 1 and h != -1:
            num, g = self.quo(num, h), self.quo(g, h)
        return num, b1 * d1 * g

    def product(self, ratios: list) -> tuple:
        """Π ratios: each numerator factor cancelled against each other denominator factor
        before anything is multiplied out (a divider chain then never grows beyond its
        value)."""
        tops, bottoms = [], []
        for num, den in ratios:
            if not num:
                return self.zero, self.one
            tops.append(num)
            bottoms.append(den)
        for i, top in enumerate(tops):
            for j, bottom in enumerate(bottoms):
                if i == j or _unit(top) or _unit(bottom):
                    continue
                g = self.gcd(top, bottom)
                if g != 1 and g != -1:
                    top, bottoms[j] = self.quo(top, g), self.quo(bottom, g)
            tops[i] = top
        num, den = self.one, self.one
        for p in tops:
            num *= p
        for q in bottoms:
            den *= q
        return num, den

    def inverse(self, x):
        num, den = x
        if not num:
            raise NotRational("division by zero")
        return den, num

    def power(self, x, e: int):
        if e < 0:
            x, e = self.inverse(x), -e
        num, den = x
        return num**e, den**e

    # -- sympy expressions
    def ratio(self, expr: sympy.Expr):
        if expr in self.gen:
            return self.gen[expr], self.one
        if expr.is_Rational:
            return self.constant(expr.p), self.constant(expr.q)
        if expr.is_Add:
            total = (self.zero, self.one)
            polynomial = self.zero
            for a in expr.args:
                term = self.ratio(a)
                if term[1] == 1:
                    polynomial += term[0]
                else:
                    total = self.add(total, term)
            return self.add(total, (polynomial, self.one))
        if expr.is_Mul:
            return self.product([self.ratio(a) for a in expr.args])
        if isinstance(expr, Parallel):  # 1/Σ(1/Zk)
            total = (self.zero, self.one)
            for a in expr.args:
                total = self.add(total, self.inverse(self.ratio(a)))
            return self.inverse(total)
        if expr.is_Pow and expr.exp.is_Integer:
            return self.power(self.ratio(expr.base), int(expr.exp))
        if expr.is_Pow and expr.exp.is_Rational:
            root = self.gen.get(expr.base ** sympy.Rational(1, expr.exp.q))
            if root is None:
                raise NotRational(str(expr))
            return self.power((root, self.one), int(expr.exp.p))
        raise NotRational(str(expr))

    def engine(self, value: Any):
        """The engine's (already coprime) numerator and denominator, in this arithmetic."""
        ring = value.ring
        if self.flint is not None and ring.backend == "flint":
            if tuple(ring.names) == tuple(self.ctx.names()):
                return value.numerator, value.denominator
        names = (
            self.ctx.names() if self.flint is not None else [str(g) for g in self.poly_ring.gens]
        )
        width = len(names)
        index = {n: i for i, n in enumerate(names)}
        places = [index[n] for n in ring.names]

        def convert(p):
            terms = {}
            for monom, coeff in ring.terms(p):
                exps = [0] * width
                for place, e in zip(places, monom, strict=False):
                    exps[place] = e
                terms[tuple(exps)] = int(coeff)
            if self.flint is not None:
                return self.ctx.from_dict(terms) if terms else self.zero
            return self.poly_ring.from_dict(terms) if terms else self.zero

        return self.reduce(convert(value.numerator), convert(value.denominator))

    def same(self, x, y) -> bool:
        (a, b), (c, d) = x, y
        if (a == c and b == d) or (a == -c and b == -d):
            return True
        if self.terms(a) * self.terms(d) + self.terms(b) * self.terms(c) > self.CROSS_LIMIT:
            return False  # both are in lowest terms: they differ (sound either way)
        return a * d == b * c


def _unit(p) -> bool:
    return p == 1 or p == -1


def _plain(g: sympy.Expr) -> bool:
    return isinstance(g, sympy.Symbol) and not isinstance(g, sympy.Dummy)


def _flint():
    from ..algebra.factor import _flint as load

    return load()


def to_ratio(expr: sympy.Expr, extra: tuple[sympy.Symbol, ...] = ()):
    """`expr` as a cancelled (numerator, denominator) of polynomials over QQ, in a ring of
    its symbols (and `extra`). Raises NotRational when it is not a rational function."""
    generators = sorted(_generators(expr) | set(extra), key=sympy.default_sort_key)
    poly_ring, *_ = ring(generators or [sympy.Dummy("x")], sympy.QQ)
    index = {g: poly_ring.gens[i] for i, g in enumerate(generators)}
    num, den = _ratio(expr, poly_ring, index)
    if not den:
        raise NotRational("division by zero")
    from ..algebra.factor import cancel

    return cancel(num, den)


def ring_ratio(value: Any, extra: tuple[sympy.Symbol, ...] = ()):
    """Like `to_ratio`, for a sympy expression or the engine's exact value; the engine's
    numerator and denominator (already in lowest terms) are taken over term by term."""
    if not _is_engine(value):
        return to_ratio(as_expr(value), extra)
    names = list(value.ring.names)
    symbols = [sympy.Symbol(n) for n in names]
    symbols += [x for x in extra if x not in symbols]
    poly_ring, *_ = ring(symbols or [sympy.Dummy("x")], sympy.QQ)
    width = len(poly_ring.gens)

    def convert(p):
        terms = {}
        for monom, coeff in value.ring.terms(p):
            terms[tuple(monom[: len(names)]) + (0,) * (width - len(names))] = sympy.QQ(int(coeff))
        return poly_ring.from_dict(terms) if terms else poly_ring.zero

    return convert(value.numerator), convert(value.denominator)


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
