"""Closed forms kept unexpanded: sums of quotients whose numerators are sums of products
of polynomial powers, such as the quotient rule's (N'·D − N·D')/D².

Multiplying such a form out can cost millions of terms (D² of a 10,000-term D has tens of
millions), while the form itself is as large as its polynomials. It is written as text and
LaTeX straight from the polynomials' terms, evaluated exactly at rational points, and
turned into a sympy expression only when one is asked for.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from fractions import Fraction
from functools import cached_property

import sympy

from .polynomials import Poly, PolynomialRing
from .rational import polynomial_latex, polynomial_text


@dataclass(frozen=True)
class Product:
    """sign · Π factor**power: one summand of a numerator, or a denominator (sign +1)."""

    sign: int
    factors: tuple[tuple[Poly, int], ...]


@dataclass(frozen=True)
class Quotient:
    """(Σ products) / denominator."""

    numerator: tuple[Product, ...]
    denominator: Product


class Texts:
    """The text and LaTeX of polynomials shared by several forms (a table's rows all show
    the same denominator): each written once. Keeps the polynomials, so ids stay unique."""

    def __init__(self, ring: PolynomialRing) -> None:
        self.polynomial_ring = ring
        self._memo: dict[tuple[int, bool], tuple[Poly, str, int]] = {}

    def of(self, p: Poly, latex: bool) -> tuple[str, int]:
        """(text, number of top-level summands) of p."""
        key = (id(p), latex)
        if key not in self._memo:
            write = polynomial_latex if latex else polynomial_text
            self._memo[key] = (p, *write(self.polynomial_ring, p))
        _, text, summands = self._memo[key]
        return text, summands


class Unexpanded:
    """Σ quotients over one ring; see the module docstring."""

    def __init__(self, quotients: Sequence[Quotient], ring: PolynomialRing,
                 texts: Texts | None = None) -> None:
        self.polynomial_ring = ring
        self.quotients = tuple(q for q in quotients if q.numerator)
        self.texts = texts or Texts(ring)

    # -- making one
    @classmethod
    def quotient_rule(cls, n: Poly, d: Poly, dn: Poly, dd: Poly, ring: PolynomialRing,
                      texts: Texts | None = None) -> Unexpanded:
        """∂(N/D) = (N'·D − N·D')/D², given N, D and their derivatives."""
        if ring.is_zero(dd):
            return cls.fraction(dn, d, ring, texts)
        numerator = []
        if not ring.is_zero(dn):
            numerator.append(_product(1, [(dn, 1), (d, 1)], ring))
        if not ring.is_zero(n):
            numerator.append(_product(-1, [(n, 1), (dd, 1)], ring))
        return cls([Quotient(tuple(numerator), _product(1, [(d, 2)], ring))], ring, texts)

    @classmethod
    def fraction(cls, top: Poly, bottom: Poly, ring: PolynomialRing,
                 texts: Texts | None = None) -> Unexpanded:
        """top/bottom with the common term content (integer and monomial) divided out."""
        return cls([_fraction(top, bottom, ring)], ring, texts)

    def times(self, top: Poly, bottom: Poly) -> Unexpanded:
        """The form times top/bottom (one-term polynomials: a symbol over a reference)."""
        ring = self.polynomial_ring
        return Unexpanded([Quotient(
            tuple(_product(p.sign, [(top, 1), *p.factors], ring) for p in q.numerator),
            _product(q.denominator.sign, [(bottom, 1), *q.denominator.factors], ring))
            for q in self.quotients], ring, self.texts)

    def __add__(self, other: Unexpanded) -> Unexpanded:
        return Unexpanded(self.quotients + other.quotients, self.polynomial_ring, self.texts)

    def __neg__(self) -> Unexpanded:
        return Unexpanded([Quotient(tuple(Product(-p.sign, p.factors) for p in q.numerator),
                                    q.denominator) for q in self.quotients], self.polynomial_ring,
                          self.texts)

    def __sub__(self, other: Unexpanded) -> Unexpanded:
        return self + (-other)

    def is_zero(self) -> bool:
        return not self.quotients

    # -- looking at it
    def size(self) -> tuple[int, int]:
        """Terms of every distinct numerator and denominator polynomial."""
        seen: dict[int, int] = {}
        top = bottom = 0
        for q in self.quotients:
            for p in q.numerator:
                for f, _ in p.factors:
                    if id(f) not in seen:
                        seen[id(f)] = len(f)
                        top += len(f)
            for f, _ in q.denominator.factors:
                if id(f) not in seen:
                    seen[id(f)] = len(f)
                    bottom += len(f)
        return top, bottom

    def symbol_names(self) -> tuple[str, ...]:
        used: set[str] = set()
        for f in self._polynomials():
            used.update(self.polynomial_ring.variables(f))
        return tuple(n for n in self.polynomial_ring.names if n in used)

    def _polynomials(self):
        for q in self.quotients:
            for p in (*q.numerator, q.denominator):
                for f, _ in p.factors:
                    yield f

    def evaluate(self, values: Mapping[str, Fraction | int]) -> Fraction:
        """Exact value at rational values of every variable used (each polynomial once)."""
        from .rational import UndefinedValue

        memo: dict[int, Fraction] = {}

        def value(p: Product) -> Fraction:
            out = Fraction(p.sign)
            for f, power in p.factors:
                if id(f) not in memo:
                    memo[id(f)] = self.polynomial_ring.evaluate(f, values)
                out *= memo[id(f)] ** power
            return out

        total = Fraction(0)
        for q in self.quotients:
            bottom = value(q.denominator)
            if bottom == 0:
                raise UndefinedValue("the expression is undefined at the point asked for "
                                     "(its denominator is zero there)")
            total += sum((value(p) for p in q.numerator), Fraction(0)) / bottom
        return total

    # -- showing it
    def to_text(self) -> str:
        """Plain infix text (`**` for powers), each polynomial written once per place."""
        return self._text

    @cached_property
    def _text(self) -> str:
        return _Writer(self.texts, latex=False).form(self.quotients)

    def to_latex(self) -> str:
        return _Writer(self.texts, latex=True).form(self.quotients)

    def to_sympy(self) -> sympy.Expr:
        return self._sympy

    @cached_property
    def _sympy(self) -> sympy.Expr:
        memo: dict[int, sympy.Expr] = {}

        def poly(f: Poly) -> sympy.Expr:
            if id(f) not in memo:
                memo[id(f)] = self.polynomial_ring.to_sympy(f)
            return memo[id(f)]

        def product(p: Product) -> sympy.Expr:
            return sympy.Mul(sympy.Integer(p.sign), *(poly(f) ** e for f, e in p.factors))

        return sympy.Add(*(sympy.Add(*(product(p) for p in q.numerator)) / product(q.denominator)
                           for q in self.quotients))

    def __repr__(self) -> str:
        top, bottom = self.size()
        return f"<Unexpanded {len(self.quotients)} quotients, {top}/{bottom} terms>"


def _product(sign: int, factors: Sequence[tuple[Poly, int]],
             ring: PolynomialRing) -> Product:
    """sign · Π factor**power, the one-term factors and the term content of the others
    (`R7*(R1 + R2)`, not `(R1*R7 + R2*R7)`) multiplied together into one, written first."""
    single = ring.one
    rest: list[tuple[Poly, int]] = []
    for f, power in factors:
        if len(f) == 1:
            single = single * f**power
            continue
        content = ring.term_content(f)
        if not ring.is_constant(content) or ring.constant_value(content) != 1:
            single, f = single * content**power, ring.exquo(f, content)
        rest.append((f, power))
    if ring.leading_coefficient(single) < 0:
        sign, single = -sign, -single
    if not (ring.is_constant(single) and ring.constant_value(single) == 1):
        rest.insert(0, (single, 1))
    return Product(sign, tuple(rest))


def _fraction(top: Poly, bottom: Poly, ring: PolynomialRing) -> Quotient:
    """top/bottom, both divided by their common term content; bottom positive-led."""
    common = ring.gcd(ring.term_content(top), ring.term_content(bottom))
    if not (ring.is_constant(common) and ring.constant_value(common) == 1):
        top, bottom = ring.exquo(top, common), ring.exquo(bottom, common)
    sign = 1
    if ring.leading_coefficient(bottom) < 0:
        top, bottom = -top, -bottom
    if len(top) == 1 and ring.leading_coefficient(top) < 0:
        sign, top = -1, -top
    numerator = () if ring.is_zero(top) else (_product(sign, [(top, 1)], ring),)
    return Quotient(numerator, _product(1, [(bottom, 1)], ring))


_ATOMIC = re.compile(r"[A-Za-z_][A-Za-z_0-9]*|[0-9]+|\(.*\)(\*\*[0-9]+)?")
"""A denominator written without parentheses after `/`: a name, a number, or one
parenthesised polynomial (with its power)."""


class _Writer:
    """Text or LaTeX of an Unexpanded form; each polynomial written once, however often used
    (through the form's `Texts`)."""

    def __init__(self, texts: Texts, latex: bool) -> None:
        self.texts = texts
        self.polynomial_ring = texts.polynomial_ring
        self.latex = latex

    def _polynomial(self, f: Poly) -> tuple[str, int]:
        return self.texts.of(f, self.latex)

    def _factor(self, f: Poly, power: int) -> str:
        text, summands = self._polynomial(f)
        if summands > 1 or text.startswith("-") or (power > 1 and len(f) == 1
                                                    and not self.polynomial_ring.is_constant(f)):
            text = (r"\left(" + text + r"\right)") if self.latex else "(" + text + ")"
        if power == 1:
            return text
        return f"{text}^{{{power}}}" if self.latex else f"{text}**{power}"

    def _product(self, p: Product) -> tuple[int, str, int]:
        """(sign, text of the magnitude, number of factors)."""
        factors = [self._factor(f, e) for f, e in p.factors]
        if not factors:
            return p.sign, "1", 1
        return p.sign, (" " if self.latex else "*").join(factors), len(factors)

    def _sum(self, products: tuple[Product, ...]) -> tuple[str, int]:
        out = []
        for j, p in enumerate(products):
            sign, text, _ = self._product(p)
            if j == 0:
                out.append(("- " if self.latex else "-") + text if sign < 0 else text)
            else:
                out.append((" - " if sign < 0 else " + ") + text)
        return "".join(out), len(products)

    def _quotient(self, q: Quotient) -> tuple[int, str]:
        """(sign, text of the magnitude) of one quotient."""
        sign = q.denominator.sign
        numerator = q.numerator
        if len(numerator) == 1 and numerator[0].sign < 0:
            sign, numerator = -sign, (Product(1, numerator[0].factors),)
        top, summands = self._sum(numerator)
        _, bottom, factors = self._product(q.denominator)
        if bottom == "1":
            return sign, top if summands == 1 else (
                r"\left(" + top + r"\right)" if self.latex else "(" + top + ")")
        if self.latex:
            return sign, r"\frac{" + top + "}{" + bottom + "}"
        if summands > 1:
            top = "(" + top + ")"
        if factors > 1 or not _ATOMIC.fullmatch(bottom):
            bottom = "(" + bottom + ")"
        return sign, top + "/" + bottom

    def form(self, quotients: tuple[Quotient, ...]) -> str:
        if not quotients:
            return "0"
        out = []
        for j, q in enumerate(quotients):
            sign, text = self._quotient(q)
            if j == 0:
                out.append(("- " if self.latex else "-") + text if sign < 0 else text)
            else:
                out.append((" - " if sign < 0 else " + ") + text)
        return "".join(out)
