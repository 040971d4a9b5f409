"""Exact arithmetic for deciding claims, with no floating point anywhere in the decision.

Expressions become ratios of integer polynomials of the algebra's `PolynomialRing` (python-
flint, or sympy's rings with SYMCIRC_POLYNOMIALS=sympy). Element and
parameter symbols are positive reals and `s` is complex; only polynomial identities are used,
so the answer holds for every value. A radical `b^(p/q)` becomes a new variable `r` tied by
`r^q = b`; an identity that reduces to zero modulo these relations holds on every branch, so
in particular on the principal one. `pi` is transcendental and is simply one more variable.
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable, Sequence
from fractions import Fraction

import sympy

from ..errors import SymcircError
from ..limits import MAX_EXPANSION_TERMS, MAX_PRODUCT_TERMS, power_terms
from .polynomials import Poly, PolynomialRing
from .rational import RationalFunction

LAPLACE_NAME = "s"
SHOWN_TERMS = 120
"""Results with more terms than this (numerator and denominator) are described, not shown."""


def identical(a: RationalFunction, b: RationalFunction) -> bool:
    """Exactly: are `a` and `b` the same function? Both are canonical (coprime, content
    removed, the denominator's first term positive), so in one ring they are equal exactly
    when numerators and denominators are: sign included, no numeric test anywhere."""
    return a == b


class Undecidable(Exception):
    """The expression lies outside what can be decided exactly (e.g. `R1^x`)."""


class TooLarge(SymcircError):
    """Deciding would expand a polynomial past MAX_EXPANSION_TERMS terms (refused before it is
    formed: GMP aborts the process when memory runs out)."""


def _refuse(terms: int) -> TooLarge:
    return TooLarge(
        f"the claim is too large to decide exactly: expanding it gives up to {terms:,} terms "
        f"(the limit is {MAX_EXPANSION_TERMS:,}); stopped before memory runs out",
        notes=("write the claim in a factored or shorter form, or check it in parts",))


def _product(x: Poly, y: Poly) -> Poly:
    """x*y, refused beforehand when its term bound is past MAX_PRODUCT_TERMS and afterwards
    when it is past MAX_EXPANSION_TERMS."""
    bound = len(x) * len(y)
    if bound > MAX_PRODUCT_TERMS:
        raise _refuse(bound)
    return _sized(x * y)


def _power(x: Poly, exponent: int) -> Poly:
    """x**exponent, refused beforehand when the binomial count of its terms is too large."""
    bound = power_terms(len(x), exponent)
    if bound > MAX_EXPANSION_TERMS:
        raise _refuse(bound)
    return x**exponent


def _sized(p: Poly) -> Poly:
    if len(p) > MAX_EXPANSION_TERMS:
        raise _refuse(len(p))
    return p


def natural_key(name: str) -> tuple:
    """Sort key putting R2 before R10."""
    return tuple(int(part) if part.isdigit() else part for part in re.split(r"(\d+)", name))


def positive_symbols(names: Iterable[str]) -> dict[sympy.Symbol, sympy.Symbol]:
    """Plain symbols to positive ones (every name but the Laplace variable)."""
    return {
        sympy.Symbol(n): sympy.Symbol(n, positive=True) for n in names if n != LAPLACE_NAME
    }


class RatFunc:
    """A ratio of two integer polynomials of one ring (not necessarily cancelled). Products
    and powers are refused before they would pass the size limits."""

    __slots__ = ("num", "den", "ring")

    def __init__(self, num: Poly, den: Poly, ring: PolynomialRing) -> None:
        self.num = num
        self.den = den
        self.ring = ring

    def __add__(self, other: RatFunc) -> RatFunc:
        ring = self.ring
        if self.den == other.den:
            return RatFunc(_sized(self.num + other.num), self.den, ring)
        if other.den == ring.one:
            return RatFunc(_sized(self.num + _product(other.num, self.den)), self.den, ring)
        if self.den == ring.one:
            return RatFunc(_sized(_product(self.num, other.den) + other.num), other.den, ring)
        g = ring.gcd(self.den, other.den)
        a, b = ring.exquo(self.den, g), ring.exquo(other.den, g)
        return RatFunc(_sized(_product(self.num, b) + _product(other.num, a)),
                       _product(self.den, b), ring)

    def __neg__(self) -> RatFunc:
        return RatFunc(-self.num, self.den, self.ring)

    def __sub__(self, other: RatFunc) -> RatFunc:
        return self + (-other)

    def __mul__(self, other: RatFunc) -> RatFunc:
        return RatFunc(_product(self.num, other.num), _product(self.den, other.den), self.ring)

    def __truediv__(self, other: RatFunc) -> RatFunc:
        if self.ring.is_zero(other.num):
            raise ZeroDivisionError("division by zero")
        return RatFunc(_product(self.num, other.den), _product(self.den, other.num), self.ring)

    def ratio(self, other: RatFunc) -> RatFunc:
        """self / other in lowest terms, for operands in lowest terms (cheaper than
        dividing, then cancelling)."""
        ring = self.ring
        g1, g2 = ring.gcd(self.num, other.num), ring.gcd(self.den, other.den)
        num = _product(ring.exquo(self.num, g1), ring.exquo(other.den, g2))
        den = _product(ring.exquo(self.den, g2), ring.exquo(other.num, g1))
        value = RatFunc(num, den, ring)
        return value.cancelled() if ring.leading_coefficient(den) < 0 else value

    def __pow__(self, exponent: int) -> RatFunc:
        if exponent >= 0:
            return RatFunc(_power(self.num, exponent), _power(self.den, exponent), self.ring)
        return RatFunc(_power(self.den, -exponent), _power(self.num, -exponent), self.ring)

    def cancelled(self) -> RatFunc:
        """Lowest terms, denominator with a positive leading coefficient."""
        ring = self.ring
        g = ring.gcd(self.num, self.den)
        num, den = self.num, self.den
        if g != ring.one:
            num, den = ring.exquo(num, g), ring.exquo(den, g)
        if ring.leading_coefficient(den) < 0:
            num, den = -num, -den
        return RatFunc(num, den, ring)

    def is_zero(self) -> bool:
        return self.ring.is_zero(self.num)


class Space:
    """The variables of the expressions compared: their symbols, radicals and `pi`.

    Build it from every expression that will be compared, then `convert` each of them.
    `extra` names variables of the caller's own (e.g. an unknown term being solved for).
    """

    def __init__(self, expressions: Sequence[sympy.Expr], extra: Sequence[str] = ()) -> None:
        names = set()
        for e in expressions:
            names.update(str(x) for x in e.free_symbols)
        self._positive = positive_symbols(names)
        self.symbols = sorted(names, key=natural_key) + list(extra)
        """Symbol names, in the order of the first variables (then `extra` ones)."""
        prepared = [self.prepare(e) for e in expressions]
        roots: dict[sympy.Expr, int] = {}  # radicand -> degree, inner radicals first
        self.has_pi = False
        for e in prepared:
            self._collect(e, roots)
        self.roots = list(roots.items())
        variables = list(self.symbols) + [f"#root{i}" for i in range(len(self.roots))]
        if self.has_pi:
            variables.append("#pi")
        self.ring = PolynomialRing(variables, keep_order=True, ordering="deglex")
        self.gens = [self.ring.gen(n) for n in variables]
        self._root_var = {
            radicand: len(self.symbols) + i for i, (radicand, _) in enumerate(self.roots)
        }
        self._memo: dict[sympy.Expr, RatFunc] = {}
        self.one = self.ring.one
        # Relations r^q * den(b) = num(b), converted in order so inner radicals exist first.
        self.relations: list[tuple[int, int, RatFunc]] = []
        for radicand, degree in self.roots:
            self.relations.append((self._root_var[radicand], degree, self.convert(radicand)))

    # -- building
    def prepare(self, expr: sympy.Expr) -> sympy.Expr:
        """Positive symbols, and radicands split into their positive factors (a rational
        expression, the common case, is returned as it is: positivity only matters for
        radicals, and rebuilding with positive symbols is costly)."""
        if not any(not p.exp.is_Integer for p in expr.atoms(sympy.Pow)):
            return expr
        expr = expr.xreplace(self._positive) if self._positive else expr
        return expr.replace(lambda e: e.is_Pow and _fractional(e.exp), _split_radical)

    def _collect(self, expr: sympy.Expr, roots: dict[sympy.Expr, int]) -> None:
        for arg in expr.args:
            self._collect(arg, roots)
        if expr is sympy.pi:
            self.has_pi = True
        elif expr.is_Pow and _fractional(expr.exp):
            q = int(expr.exp.q)
            roots[expr.base] = math.lcm(roots.get(expr.base, 1), q)
        elif expr.is_Pow and not expr.exp.is_Integer:
            raise Undecidable(f"a power with exponent {sympy.sstr(expr.exp)}")
        elif isinstance(expr, sympy.Function):
            raise Undecidable(f"the function {expr.func}")

    def constant(self, value: Fraction | int) -> RatFunc:
        value = Fraction(value)
        ring = self.ring
        return RatFunc(ring.constant(value.numerator), ring.constant(value.denominator), ring)

    def variable(self, name: str) -> RatFunc:
        return RatFunc(self.gens[self.symbols.index(name)], self.one, self.ring)

    def convert(self, expr: sympy.Expr, prepared: bool = True) -> RatFunc:
        """A sympy expression (built from our own trees) as an exact ratio of polynomials."""
        if not prepared:
            expr = self.prepare(expr)
        done = self._memo.get(expr)
        if done is None:
            done = self._convert(expr)
            self._memo[expr] = done
        return done

    def _convert(self, expr: sympy.Expr) -> RatFunc:
        if expr.is_Rational:
            ring = self.ring
            return RatFunc(ring.constant(int(expr.p)), ring.constant(int(expr.q)), ring)
        if expr.is_Float:
            return self.constant(Fraction(str(expr)))
        if expr.is_Symbol:
            return RatFunc(self.gens[self.symbols.index(expr.name)], self.one, self.ring)
        if expr is sympy.pi:
            return RatFunc(self.gens[-1], self.one, self.ring)
        if expr.is_Add:
            total = self.convert(expr.args[0])
            for arg in expr.args[1:]:
                total = total + self.convert(arg)
            return total
        if expr.is_Mul:
            product = self.convert(expr.args[0])
            for arg in expr.args[1:]:
                product = product * self.convert(arg)
            return product
        if expr.is_Pow and expr.exp.is_Integer:
            base = self.convert(expr.base)
            if int(expr.exp) < 0 and base.is_zero():
                raise Undecidable("a division by zero")
            return base ** int(expr.exp)
        if expr.is_Pow and _fractional(expr.exp):
            var = self._root_var[expr.base]
            degree = dict(self.roots)[expr.base]
            power = int(expr.exp.p) * (degree // int(expr.exp.q))
            return RatFunc(self.gens[var], self.one, self.ring) ** power
        if expr in (sympy.zoo, sympy.nan, sympy.oo, -sympy.oo):
            raise Undecidable("a division by zero")
        raise Undecidable(f"`{sympy.sstr(expr)}`")

    # -- deciding
    def reduce(self, poly: Poly) -> Poly:
        """The polynomial with every radical's power below its degree (outer radicals first)."""
        for var, degree, radicand in reversed(self.relations):
            poly = _reduce_power(poly, var, degree, radicand, self.ring)
        return poly

    def is_zero(self, value: RatFunc) -> bool:
        """Exactly: is the value zero for every value of the symbols?"""
        if not self.relations:
            return self.ring.is_zero(value.num)
        return self.ring.is_zero(self.reduce(value.num))

    def equal(self, a: RatFunc, b: RatFunc) -> bool:
        return self.is_zero(RatFunc(_sized(_product(a.num, b.den) - _product(b.num, a.den)),
                                    self.one, self.ring))  # only the numerator decides

    @property
    def rational(self) -> bool:
        """True when no radical and no `pi` occur: values at rational points are rational."""
        return not self.relations and not self.has_pi

    def evaluate(self, value: RatFunc, point: Sequence[int]) -> Fraction | None:
        """Exact value at integer values of the symbols (rational spaces only); None at a pole."""
        names = self.ring.names
        values = dict(zip(names, list(point) + [0] * (len(names) - len(point)), strict=True))
        den = self.ring.evaluate(value.den, values)
        if den == 0:
            return None
        return self.ring.evaluate(value.num, values) / den

    # -- reading back
    def to_sympy(self, poly: Poly) -> sympy.Expr:
        """A polynomial of this space as a sympy expression over plain symbols."""
        symbols = [sympy.Symbol(n) for n in self.symbols]
        plain = {v: k for k, v in self._positive.items()}
        symbols += [sympy.Pow(r.xreplace(plain), sympy.Rational(1, d)) for r, d in self.roots]
        if self.has_pi:
            symbols.append(sympy.pi)
        terms = []
        for monom, coeff in self.ring.terms(poly):
            factors = [sym**e for sym, e in zip(symbols, monom, strict=False) if e]
            terms.append(sympy.Mul(sympy.Integer(int(coeff)), *factors))
        return sympy.Add(*terms)

    def ratfunc_to_sympy(self, value: RatFunc, factor: bool = True) -> sympy.Expr:
        """Cancelled, and factored when that is cheap: what a reader wants to see."""
        value = value.cancelled()
        return self._factored(value.num, factor) / self._factored(value.den, factor)

    def show(self, value: RatFunc, most_terms: int = SHOWN_TERMS) -> str:
        """The value as text: cancelled and factored, or its size when too large to read."""
        value = value.cancelled()
        if len(value.num) + len(value.den) <= most_terms:
            return sympy.sstr(self.ratfunc_to_sympy(value))
        if self.ring.is_constant(value.den):
            return f"(a polynomial of {len(value.num)} terms, too long to show)"
        return (f"(a ratio of polynomials of {len(value.num)} and {len(value.den)} terms, "
                "too long to show)")

    def _factored(self, poly: Poly, factor: bool) -> sympy.Expr:
        if not factor or len(poly) > 400 or self.ring.is_constant(poly):
            return self.to_sympy(poly)
        content, factors = self.ring.factor(poly)
        product = sympy.Mul(*(self.to_sympy(f) ** int(e) for f, e in factors))
        if content == 1:
            return product
        if content == -1:
            return -product
        return sympy.Mul(sympy.Integer(int(content)), product, evaluate=False)


def _fractional(exponent: sympy.Expr) -> bool:
    return bool(exponent.is_Rational and not exponent.is_Integer)


def _split_radical(power: sympy.Pow) -> sympy.Expr:
    """`(4*(R1 + R2))^(1/2)` as `2*(R1 + R2)^(1/2)`: valid because every factor is positive."""
    base, exponent = power.base, power.exp
    if base.is_Atom or not base.is_polynomial() or len(sympy.Add.make_args(base)) > 50:
        return power
    if sympy.Symbol(LAPLACE_NAME) in base.free_symbols:
        return power
    content, factors = sympy.factor_list(base)
    if content <= 0 or not all(_positive_coefficients(f) for f, _ in factors):
        return power
    out = sympy.Pow(content, exponent)
    for f, e in factors:
        out *= sympy.Pow(f, e * exponent)
    return out


def _positive_coefficients(poly: sympy.Expr) -> bool:
    return all(c.is_positive for c in sympy.Poly(poly).coeffs())


def _reduce_power(poly: Poly, var: int, degree: int, radicand: RatFunc,
                  ring: PolynomialRing) -> Poly:
    """Replace r^degree by radicand = num/den in `poly`, times a power of den (nonzero)."""
    by_power: dict[int, list] = {}
    for monom, coeff in ring.terms(poly):
        by_power.setdefault(monom[var], []).append((monom[:var] + (0,) + monom[var + 1:], coeff))
    top = max(by_power, default=0)
    if top < degree:
        return poly
    scale = top // degree
    out = ring.zero
    r = ring.gen(ring.names[var])
    for power, terms in by_power.items():
        k, rest = divmod(power, degree)
        part = ring.from_terms(terms) * r**rest
        out += part * radicand.num**k * radicand.den ** (scale - k)
    return out
