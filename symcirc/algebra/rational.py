"""Exact rational functions: a canonical ratio of two integer polynomials of one ring.

Canonical means: numerator and denominator coprime, the integer content of the pair
removed, and the denominator's first term (in the ring's term order) positive; zero is
0/1. Equal functions therefore have equal parts, and print the same. Text and LaTeX are
written straight from the terms (collected in powers of `s` when it occurs), because
building a sympy expression of a large result costs seconds.
"""

from __future__ import annotations

from collections.abc import Mapping
from fractions import Fraction
from functools import cached_property
from math import gcd
from typing import TYPE_CHECKING, Any

from ..model.typeset import given_forms, symbol_latex
from . import polynomials as polys
from .polynomials import LAPLACE_NAME, AlgebraError, Poly, PolynomialRing

if TYPE_CHECKING:  # pragma: no cover
    import sympy

Operand = Any
"""A RationalFunction, a polynomial of the same ring, an int or a Fraction."""


class UndefinedValue(AlgebraError, ZeroDivisionError):
    """The denominator vanishes at the point asked for."""


class InfiniteLimit(AlgebraError):
    """A limit that grows without bound."""


class RationalFunction:
    """numerator / denominator over `ring`, kept canonical (see the module docstring)."""

    def __init__(self, numerator: Poly | int, denominator: Poly | int = 1,
                 ring: PolynomialRing | None = None, *, canonical: bool = False) -> None:
        if ring is None:
            raise TypeError("RationalFunction needs its PolynomialRing")
        self.ring = ring
        num = ring.constant(numerator) if isinstance(numerator, int | Fraction) else numerator
        den = ring.constant(denominator) if isinstance(denominator, int | Fraction) else denominator
        if not canonical:
            num, den = _canonical(num, den, ring)
        if len(num) > polys.MAX_TERMS or len(den) > polys.MAX_TERMS:
            polys.check_size(num if len(num) > len(den) else den, "a result's polynomial")
        self.numerator = num
        self.denominator = den

    # -- construction helpers
    @classmethod
    def constant(cls, value: int | Fraction, ring: PolynomialRing) -> RationalFunction:
        value = Fraction(value)
        return cls(value.numerator, value.denominator, ring)

    @classmethod
    def coprime(cls, num: Poly, den: Poly, ring: PolynomialRing) -> RationalFunction:
        """num/den already known to have no common factor: sign and content normalised."""
        if ring.is_zero(den):
            raise UndefinedValue("a rational function with a zero denominator")
        return cls(*_normalise_sign_and_content(num, den, ring), ring, canonical=True)

    @classmethod
    def symbol(cls, name: str, ring: PolynomialRing) -> RationalFunction:
        return cls(ring.gen(name), ring.one, ring, canonical=True)

    def in_ring(self, ring: PolynomialRing) -> RationalFunction:
        """The same function held in `ring`, which must have every variable it uses."""
        if ring == self.ring:
            return self
        return RationalFunction(ring.convert(self.numerator, self.ring),
                                ring.convert(self.denominator, self.ring), ring, canonical=True)

    def _coerce(self, other: Operand) -> tuple[RationalFunction, RationalFunction]:
        """self and other as rational functions of one ring."""
        if isinstance(other, RationalFunction):
            if other.ring == self.ring:
                return self, other
            if set(other.ring.names) <= set(self.ring.names):
                return self, other.in_ring(self.ring)
            if set(self.ring.names) <= set(other.ring.names):
                return self.in_ring(other.ring), other
            ring = self.ring.extend(other.ring.names)
            return self.in_ring(ring), other.in_ring(ring)
        if isinstance(other, int | Fraction):
            return self, RationalFunction.constant(other, self.ring)
        return self, RationalFunction(other, self.ring.one, self.ring)

    # -- arithmetic
    def __add__(self, other: Operand) -> RationalFunction:
        a, b = self._coerce(other)
        ring = a.ring
        if b.is_zero():
            return a
        if a.is_zero():
            return b
        if a.denominator == b.denominator:
            return RationalFunction(a.numerator + b.numerator, a.denominator, ring)
        # Henrici: with g = gcd(b, d), a/b + c/d = (a·d' + c·b')/(g·b'·d'), and only a
        # factor of g can be common to that numerator and denominator
        g = ring.gcd(a.denominator, b.denominator)
        if ring.is_constant(g):
            num = a.numerator * b.denominator + b.numerator * a.denominator
            return RationalFunction.coprime(num, a.denominator * b.denominator, ring)
        da, db = ring.exquo(a.denominator, g), ring.exquo(b.denominator, g)
        num = a.numerator * db + b.numerator * da
        h = ring.gcd(num, g)
        if not ring.is_constant(h):
            num, g = ring.exquo(num, h), ring.exquo(g, h)
        return RationalFunction.coprime(num, g * da * db, ring)

    __radd__ = __add__

    def __neg__(self) -> RationalFunction:
        return RationalFunction(-self.numerator, self.denominator, self.ring, canonical=True)

    def __sub__(self, other: Operand) -> RationalFunction:
        a, b = self._coerce(other)
        return a + (-b)

    def __rsub__(self, other: Operand) -> RationalFunction:
        a, b = self._coerce(other)
        return b + (-a)

    def __mul__(self, other: Operand) -> RationalFunction:
        a, b = self._coerce(other)
        ring = a.ring
        if a.is_zero() or b.is_zero():
            return RationalFunction(0, 1, ring, canonical=True)
        # cross-cancel first (Henrici): the products are then coprime
        g1 = ring.gcd(a.numerator, b.denominator)
        g2 = ring.gcd(b.numerator, a.denominator)
        num = ring.exquo(a.numerator, g1) * ring.exquo(b.numerator, g2)
        den = ring.exquo(a.denominator, g2) * ring.exquo(b.denominator, g1)
        return RationalFunction(*_normalise_sign_and_content(num, den, ring), ring, canonical=True)

    __rmul__ = __mul__

    def inverse(self) -> RationalFunction:
        if self.is_zero():
            raise UndefinedValue("division by an expression that is identically zero")
        return RationalFunction(*_normalise_sign_and_content(self.denominator, self.numerator,
                                                              self.ring), self.ring,
                                canonical=True)

    def __truediv__(self, other: Operand) -> RationalFunction:
        a, b = self._coerce(other)
        return a * b.inverse()

    def __rtruediv__(self, other: Operand) -> RationalFunction:
        a, b = self._coerce(other)
        return b * a.inverse()

    def __pow__(self, exponent: int) -> RationalFunction:
        if not isinstance(exponent, int):
            return NotImplemented
        if exponent < 0:
            return self.inverse() ** (-exponent)
        return RationalFunction(self.numerator**exponent, self.denominator**exponent, self.ring,
                                canonical=True)

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, RationalFunction | int | Fraction):
            return NotImplemented
        a, b = self._coerce(other)
        return a.numerator == b.numerator and a.denominator == b.denominator

    def __hash__(self) -> int:
        return hash(self.to_text())

    # -- questions
    def is_zero(self) -> bool:
        return self.ring.is_zero(self.numerator)

    def is_constant(self) -> bool:
        return self.ring.is_constant(self.numerator) and self.ring.is_constant(self.denominator)

    def is_polynomial(self) -> bool:
        return self.ring.is_constant(self.denominator)

    def constant_value(self) -> Fraction:
        """The number a constant function stands for."""
        ring = self.ring
        return Fraction(ring.constant_value(self.numerator), ring.constant_value(self.denominator))

    def symbol_names(self) -> tuple[str, ...]:
        """Every variable the function uses, in canonical order."""
        used = set(self.ring.variables(self.numerator)) | set(self.ring.variables(self.denominator))
        return tuple(n for n in self.ring.names if n in used)

    def size(self) -> tuple[int, int]:
        """Number of terms of numerator and denominator."""
        return self.ring.nterms(self.numerator), self.ring.nterms(self.denominator)

    def degree(self, name: str) -> tuple[int, int]:
        """Degrees of numerator and denominator in `name`."""
        return self.ring.degree(self.numerator, name), self.ring.degree(self.denominator, name)

    def __repr__(self) -> str:
        n, d = self.size()
        if n + d > 40:
            return f"<RationalFunction {n} terms / {d} terms>"
        return f"RationalFunction({self.to_text()!r})"

    # -- calculus
    def derivative(self, name: str) -> RationalFunction:
        ring = self.ring
        dn = ring.derivative(self.numerator, name)
        dd = ring.derivative(self.denominator, name)
        if ring.is_zero(dd):
            return RationalFunction(dn, self.denominator, ring)
        return RationalFunction(dn * self.denominator - self.numerator * dd,
                                self.denominator**2, ring)

    def substitute(self, name: str, value: RationalFunction | int | Fraction) -> RationalFunction:
        """The function with `name` replaced by `value`."""
        a, v = self._coerce(value)
        if name not in a.symbol_names():
            return a
        ring = a.ring
        num, den = substitute_quotient(a.numerator, a.denominator, name, v.numerator,
                                       v.denominator, ring)
        if ring.is_zero(den):
            raise UndefinedValue(f"substituting {name} = {v.to_text()} makes the denominator zero")
        return RationalFunction(num, den, ring)

    def limit(self, name: str, where: str) -> RationalFunction:
        """Limit as `name` -> 'oo' or '0' (ratio of leading or trailing coefficients in it)."""
        if where not in ("oo", "0"):
            raise ValueError(f"limit point must be 'oo' or '0', not {where!r}")
        if name not in self.symbol_names() or self.is_zero():
            return self
        ring = self.ring
        num_coeffs = ring.coefficients(self.numerator, name)
        den_coeffs = ring.coefficients(self.denominator, name)
        if where == "oo":
            kn, kd = max(num_coeffs), max(den_coeffs)
            grows = kn > kd
        else:
            kn, kd = min(num_coeffs), min(den_coeffs)
            grows = kn < kd
        if grows:
            raise InfiniteLimit(f"the expression grows without bound as {name} -> {where}")
        if kn != kd:
            return RationalFunction(0, 1, ring, canonical=True)
        return RationalFunction(num_coeffs[kn], den_coeffs[kd], ring)

    def evaluate(self, values: Mapping[str, Fraction | int]) -> Fraction:
        """Exact value at rational values of every variable used."""
        ring = self.ring
        den = ring.evaluate(self.denominator, values)
        if den == 0:
            used = self.symbol_names()
            point = ", ".join(f"{n} = {_fraction_text(Fraction(values[n]))}" for n in used)
            raise UndefinedValue(f"the expression is undefined at {point} "
                                 "(its denominator is zero there)")
        return ring.evaluate(self.numerator, values) / den

    # -- showing
    def to_text(self) -> str:
        """Plain infix text (`**` for powers) that sympy.parse_expr reads back to `to_sympy()`."""
        return self._text

    @cached_property
    def _text(self) -> str:
        if self.ring.backend == "flint":
            return _FlintText(self.ring).fraction(self.numerator, self.denominator)
        return _Printer(self.ring, _TEXT).fraction(self.numerator, self.denominator)

    def to_latex(self) -> str:
        """LaTeX of the same layout as `to_text` (remembered per set of the names' forms)."""
        forms = given_forms(self.ring.names)
        memo = self.__dict__.setdefault("_latex_by_forms", {})
        if forms not in memo:
            memo[forms] = _Printer(self.ring, _LATEX).fraction(self.numerator, self.denominator)
        return memo[forms]

    def to_sympy(self) -> sympy.Expr:
        """The function as a sympy expression, laid out as `to_text` writes it."""
        return self._sympy

    @cached_property
    def _sympy(self) -> sympy.Expr:
        return _SympyBuilder(self.ring).fraction(self.numerator, self.denominator)

    def _repr_latex_(self) -> str:
        return f"${self.to_latex()}$"


# -- canonical form ---------------------------------------------------------------------------

def _canonical(num: Poly, den: Poly, ring: PolynomialRing) -> tuple[Poly, Poly]:
    if ring.is_zero(den):
        raise UndefinedValue("a rational function with a zero denominator")
    if ring.is_zero(num):
        return ring.zero, ring.one
    if not (ring.is_constant(num) or ring.is_constant(den)):
        g = ring.gcd(num, den)
        if not ring.is_constant(g):
            num, den = ring.exquo(num, g), ring.exquo(den, g)
    return _normalise_sign_and_content(num, den, ring)


def _normalise_sign_and_content(num: Poly, den: Poly, ring: PolynomialRing) -> tuple[Poly, Poly]:
    if ring.is_zero(num):
        return ring.zero, ring.one
    c = gcd(ring.content(num), ring.content(den))
    if ring.leading_coefficient(den) < 0:
        c = -c
    if c != 1:
        num, den = ring.exquo(num, c), ring.exquo(den, c)
    return num, den


def substitute_quotient(num: Poly, den: Poly, name: str, p: Poly, q: Poly,
                        ring: PolynomialRing) -> tuple[Poly, Poly]:
    """num/den with `name` replaced by p/q, as two polynomials and without cancelling:
    N(p/q)·q**dn over D(p/q)·q**dd (Horner's rule), the larger power of q on both sides."""
    num_coeffs = ring.coefficients(num, name)
    den_coeffs = ring.coefficients(den, name)
    if not num_coeffs:
        return num, den
    dn, dd = max(num_coeffs), max(den_coeffs)
    top = _homogeneous_horner(num_coeffs, dn, p, q, ring)
    bottom = _homogeneous_horner(den_coeffs, dd, p, q, ring)
    if dd > dn:
        top = top * q ** (dd - dn)
    elif dn > dd:
        bottom = bottom * q ** (dn - dd)
    return top, bottom


def _homogeneous_horner(coeffs: dict[int, Poly], degree: int, p: Poly, q: Poly,
                        ring: PolynomialRing) -> Poly:
    """sum_k c_k p**k q**(degree-k)."""
    acc = coeffs.get(degree, ring.zero)
    q_power = ring.one
    for k in range(degree - 1, -1, -1):
        q_power = q_power * q
        acc = acc * p
        if k in coeffs:
            acc = acc + coeffs[k] * q_power
    return acc


def _fraction_text(value: Fraction) -> str:
    return str(value.numerator) if value.denominator == 1 else f"{value}"


# -- layout shared by text, LaTeX and sympy ---------------------------------------------------

def _groups(ring: PolynomialRing, p: Poly) -> list[tuple[int, list[tuple[tuple, int]]]]:
    """Terms of p as [(power of s, terms of its coefficient)], powers ascending.

    Without `s`, one group of power 0 holding every term. Exponents of s are zeroed in the
    coefficient terms.
    """
    terms = ring.terms(p)
    if LAPLACE_NAME not in ring.names or not terms:
        return [(0, terms)]
    i = ring.index(LAPLACE_NAME)  # 0: terms come grouped by descending power of s
    groups: list[tuple[int, list]] = []
    for monom, coeff in terms:
        k = monom[i]
        if not groups or groups[-1][0] != k:
            groups.append((k, []))
        groups[-1][1].append((monom[:i] + (0,) + monom[i + 1:], coeff))
    groups.reverse()
    return groups


def _layout(ring: PolynomialRing, p: Poly) -> list[tuple[str, Any]]:
    """A polynomial as a sum of items, each ('term', (monomial, coeff, k)) or
    ('group', (sign, coefficient terms, k)): sign -1 when the group is written -(...)*s**k."""
    items: list[tuple[str, Any]] = []
    for k, terms in _groups(ring, p):
        if len(terms) == 1 or k == 0 or LAPLACE_NAME not in ring.names:
            items.extend(("term", (m, c, k)) for m, c in terms)
        elif items and all(c < 0 for _, c in terms):
            items.append(("group", (-1, [(m, -c) for m, c in terms], k)))
        else:
            items.append(("group", (1, terms, k)))
    return items


class _Style:
    def __init__(self, times: str, power: str, open_: str, close: str) -> None:
        self.times, self.power, self.open, self.close = times, power, open_, close


_TEXT = _Style("*", "{base}**{exp}", "(", ")")
_LATEX = _Style(" ", "{base}^{{{exp}}}", r"\left(", r"\right)")


class _Printer:
    """Writes a polynomial or a ratio of polynomials in the layout of `_layout`."""

    def __init__(self, ring: PolynomialRing, style: _Style) -> None:
        self.ring = ring
        self.style = style
        if style is _TEXT:
            self.names = list(ring.names)
        else:
            self.names = [symbol_latex(n) for n in ring.names]
        self.s_index = ring.index(LAPLACE_NAME) if LAPLACE_NAME in ring.names else None

    def _power(self, base: str, exp: int) -> str:
        return base if exp == 1 else self.style.power.format(base=base, exp=exp)

    def _monomial(self, monom: tuple, k: int) -> list[str]:
        factors = [self._power(self.names[i], e) for i, e in enumerate(monom) if e]
        if k:
            factors.append(self._power(self.names[self.s_index], k))
        return factors

    def _term(self, monom: tuple, coeff: int, k: int) -> tuple[int, str]:
        """(sign, text of |term|)."""
        factors = self._monomial(monom, k)
        magnitude = abs(coeff)
        if magnitude != 1 or not factors:
            factors.insert(0, str(magnitude))
        return (-1 if coeff < 0 else 1), self.style.times.join(factors)

    def _sum(self, terms: list[tuple[tuple, int]]) -> str:
        return self._join([self._term(m, c, 0) for m, c in terms])

    def _join(self, signed: list[tuple[int, str]]) -> str:
        out = []
        for j, (sign, text) in enumerate(signed):
            if j == 0:
                out.append(("-" if self.style is _TEXT else "- ") + text if sign < 0 else text)
            else:
                out.append((" - " if sign < 0 else " + ") + text)
        return "".join(out)

    def polynomial(self, p: Poly) -> tuple[str, int]:
        """(text, number of top-level summands)."""
        items = _layout(self.ring, p)
        if not items:
            return "0", 1
        signed = []
        for kind, data in items:
            if kind == "term":
                signed.append(self._term(*data))
            else:
                sign, terms, k = data
                inner = self.style.open + self._sum(terms) + self.style.close
                signed.append((sign, self.style.times.join([inner, *self._monomial((), k)])))
        return self._join(signed), len(signed)

    def fraction(self, num: Poly, den: Poly) -> str:
        ring = self.ring
        if ring.is_constant(den) and ring.constant_value(den) == 1:
            return self.polynomial(num)[0]
        den_text, den_parts = self.polynomial(den)
        # a numerator whose every summand is negative is written -(...): parsing the text
        # distributes the sign back, giving the same expression tree
        negated = _all_negative(_layout(ring, num))
        num_text, num_parts = self.polynomial(-num if negated else num)
        if self.style is _LATEX:
            return ("- " if negated else "") + r"\frac{" + num_text + "}{" + den_text + "}"
        if num_parts > 1:
            num_text = "(" + num_text + ")"
        den_terms = ring.terms(den)
        single_factor = (den_parts == 1 and len(den_terms) == 1 and
                         (den_terms[0][1] == 1 and sum(1 for e in den_terms[0][0] if e) == 1
                          or ring.is_constant(den)))
        if not single_factor:
            den_text = "(" + den_text + ")"
        return ("-" if negated else "") + num_text + "/" + den_text


class _FlintText:
    """The text of `_Printer` with `_TEXT`, written by python-flint's own printer one power
    of `s` at a time: a 150,000-term result prints in a fraction of a second instead of
    seconds of Python work per term (tests/engine/test_ratfunc_text.py keeps the two identical)."""

    def __init__(self, ring: PolynomialRing) -> None:
        self.ring = ring

    def _segments(self, p: Poly) -> list[tuple[str, int]]:
        """(signed text, number of summands) per power of s, ascending."""
        ring = self.ring
        if LAPLACE_NAME in ring.names:
            powers = sorted(ring.coefficients(p, LAPLACE_NAME).items())
        else:
            powers = [(0, p)]
        segments: list[tuple[str, int]] = []
        for k, c in powers:
            s_power = LAPLACE_NAME if k == 1 else f"{LAPLACE_NAME}**{k}"
            if k == 0:
                segments.append((_flint_str(c), len(c)))
            elif len(c) == 1:
                if ring.is_constant(c):
                    value = ring.constant_value(c)
                    text = {1: s_power, -1: "-" + s_power}.get(value, f"{value}*{s_power}")
                else:
                    text = _flint_str(c) + "*" + s_power
                segments.append((text, 1))
            elif segments and all(x < 0 for x in c.coeffs()):
                segments.append(("-(" + _flint_str(-c) + ")*" + s_power, 1))
            else:
                segments.append(("(" + _flint_str(c) + ")*" + s_power, 1))
        return segments

    def _all_negative(self, p: Poly) -> bool:
        """As `_all_negative(_layout(p))`: every coefficient negative and the first summand
        a plain term (the constant part, or a one-term lowest power of s)."""
        ring = self.ring
        if ring.is_zero(p) or not all(x < 0 for x in p.coeffs()):
            return False
        if LAPLACE_NAME not in ring.names:
            return True
        powers = ring.coefficients(p, LAPLACE_NAME)
        return len(powers[min(powers)]) == 1 or min(powers) == 0

    def polynomial(self, p: Poly) -> tuple[str, int]:
        if self.ring.is_zero(p):
            return "0", 1
        segments = self._segments(p)
        out = [segments[0][0]]
        for text, _ in segments[1:]:
            out.append(" - " + text[1:] if text.startswith("-") else " + " + text)
        return "".join(out), sum(n for _, n in segments)

    def fraction(self, num: Poly, den: Poly) -> str:
        ring = self.ring
        if ring.is_constant(den) and ring.constant_value(den) == 1:
            return self.polynomial(num)[0]
        den_text, den_parts = self.polynomial(den)
        negated = self._all_negative(num)
        num_text, num_parts = self.polynomial(-num if negated else num)
        if num_parts > 1:
            num_text = "(" + num_text + ")"
        single_factor = den_parts == 1 and len(den) == 1 and (
            ring.is_constant(den)
            or (int(den.coeffs()[0]) == 1 and sum(1 for e in den.monoms()[0] if e) == 1))
        if not single_factor:
            den_text = "(" + den_text + ")"
        return ("-" if negated else "") + num_text + "/" + den_text


def polynomial_text(ring: PolynomialRing, p: Poly) -> tuple[str, int]:
    """A polynomial as `to_text` writes it: (text, number of top-level summands)."""
    if ring.backend == "flint":
        return _FlintText(ring).polynomial(p)
    return _Printer(ring, _TEXT).polynomial(p)


def polynomial_latex(ring: PolynomialRing, p: Poly) -> tuple[str, int]:
    """A polynomial as `to_latex` writes it: (LaTeX, number of top-level summands)."""
    return _Printer(ring, _LATEX).polynomial(p)


def _flint_str(p: Poly) -> str:
    return str(p).replace("^", "**")


def _all_negative(items: list[tuple[str, Any]]) -> bool:
    """Every summand negative, the first a plain term (so that -(...) reads back the same)."""
    if not items or items[0][0] != "term":
        return False
    return all(data[1] < 0 if kind == "term" else data[0] < 0 for kind, data in items)


class _SympyBuilder:
    """Builds the sympy expression that parsing `to_text` gives (same layout, same tree)."""

    def __init__(self, ring: PolynomialRing) -> None:
        import sympy

        self.ring = ring
        self.symbols = [sympy.Symbol(n) for n in ring.names]
        self.s_index = ring.index(LAPLACE_NAME) if LAPLACE_NAME in ring.names else None

    def _monomial(self, monom: tuple, k: int) -> list[sympy.Expr]:
        factors = [s**e if e > 1 else s for s, e in zip(self.symbols, monom, strict=False) if e]
        if k:
            s = self.symbols[self.s_index]
            factors.append(s**k if k > 1 else s)
        return factors

    def polynomial(self, p: Poly) -> sympy.Expr:
        import sympy

        summands = []
        for kind, data in _layout(self.ring, p):
            if kind == "term":
                monom, coeff, k = data
                summands.append(sympy.Mul(sympy.Integer(coeff), *self._monomial(monom, k)))
            else:
                sign, terms, k = data
                inner = sympy.Add(*(sympy.Mul(sympy.Integer(c), *self._monomial(m, 0))
                                    for m, c in terms))
                # -(...)*s**k with three factors: sympy does not distribute the -1 over the sum
                factors = [sympy.Integer(-1)] if sign < 0 else []
                factors += [inner, *self._monomial((), k)]
                summands.append(sympy.Mul(*factors))
        return sympy.Add(*summands)

    def fraction(self, num: Poly, den: Poly) -> sympy.Expr:
        ring = self.ring
        numerator = self.polynomial(num)
        if ring.is_constant(den) and ring.constant_value(den) == 1:
            return numerator
        return numerator / self.polynomial(den)
