"""Exact multivariate integer polynomials: one interface over python-flint and sympy.

Polynomials are the backend's own objects (`flint.fmpz_mpoly` or sympy's `PolyElement`
over ZZ), so `+ - * **` cost nothing extra; everything else goes through a
`PolynomialRing`. Variable names are kept in one canonical order (the Laplace variable
`s` first, then names in natural order: R2 before R10), and terms are listed in
lexicographic order of that variable order, so both backends and every ring that holds
a polynomial list its terms the same way: the same circuit always prints the same formula.
"""

from __future__ import annotations

import os
import re
from collections.abc import Iterable, Mapping, Sequence
from fractions import Fraction
from math import factorial, gcd
from typing import TYPE_CHECKING, Any

from ..errors import SymcircError

if TYPE_CHECKING:  # pragma: no cover
    import sympy
# sympy is imported where its backend or its expressions are asked for: python-flint's
# polynomials need none of it.

LAPLACE_NAME = "s"
BACKENDS = ("flint", "sympy")

Poly = Any
"""A polynomial: the backend's own object (fmpz_mpoly or sympy PolyElement)."""
Monomial = tuple[int, ...]


class AlgebraError(SymcircError):
    """An exact computation that has no finite answer (a pole, an infinite limit, a singular
    system): raised with a message for the user; callers add the circuit's context."""


MAX_TERMS = 5_000_000
"""Largest polynomial (terms) the exact engine builds. Past it memory, not time, runs out,
and python-flint aborts the whole process on a failed allocation instead of raising, so
jobs that reach it are stopped with a clear error (`TooLarge`) before they get there."""


class TooLarge(AlgebraError):
    """An exact result (or a polynomial on the way to it) beyond MAX_TERMS terms."""


def check_size(p: Any, what: str = "an intermediate polynomial") -> None:
    """Raise TooLarge when polynomial `p` has more than MAX_TERMS terms (len() is O(1) for
    both backends, so this costs nothing next to the arithmetic that made `p`)."""
    if len(p) > MAX_TERMS:
        raise TooLarge(
            f"the exact derivation is too large: {what} has {len(p):,} terms (the limit is "
            f"{MAX_TERMS:,}); stopped before memory runs out",
            notes=("derive the circuit in parts: a section at a time, each joined to the "
                   "next through its Thevenin equivalent",))


class InexactDivision(ArithmeticError):
    """`exquo` was asked for a division that leaves a remainder (a programming error)."""


def _natural_key(name: str) -> tuple:
    parts = re.split(r"(\d+)", name)
    key = tuple((p.casefold(), p) if i % 2 == 0 else (int(p), p) for i, p in enumerate(parts))
    return (key, name)


def canonical_order(names: Iterable[str]) -> tuple[str, ...]:
    """Names without repeats, `s` first, the rest in natural order (C2 before C10)."""
    unique = set(names)
    rest = sorted((n for n in unique if n != LAPLACE_NAME), key=_natural_key)
    return ((LAPLACE_NAME,) if LAPLACE_NAME in unique else ()) + tuple(rest)


def default_backend() -> str:
    """'flint' when python-flint is importable, unless SYMCIRC_POLYNOMIALS=sympy says otherwise."""
    wanted = os.environ.get("SYMCIRC_POLYNOMIALS", "").strip().lower()
    if wanted == "sympy":
        return "sympy"
    try:
        import flint  # noqa: F401
    except ImportError:
        if wanted == "flint":
            raise AlgebraError(
                "SYMCIRC_POLYNOMIALS=flint, but python-flint is not installed") from None
        return "sympy"
    return "flint"


class PolynomialRing:
    """Integer polynomials in the given variable names (kept in canonical order: `.names`).

    Two rings with the same names, term order and backend are equal and their polynomials
    mix freely. `keep_order=True` keeps the names in the order given (a caller that
    addresses variables by position), and `ordering="deglex"` orders terms by total degree
    first.
    """

    def __init__(self, names: Sequence[str], backend: str | None = None, *,
                 keep_order: bool = False, ordering: str = "lex") -> None:
        self.names: tuple[str, ...] = (tuple(dict.fromkeys(names)) if keep_order
                                       else canonical_order(names))
        self.backend: str = backend or default_backend()
        if self.backend not in BACKENDS:
            raise ValueError(f"unknown polynomial backend {self.backend!r} (use {BACKENDS})")
        if ordering not in ("lex", "deglex"):
            raise ValueError(f"unknown term order {ordering!r} (use 'lex' or 'deglex')")
        self.ordering = ordering
        self._index = {n: i for i, n in enumerate(self.names)}
        if self.backend == "flint":
            import flint

            # flint wants at least one variable; a ring with no names gets a hidden one
            self._ctx = flint.fmpz_mpoly_ctx.get(self.names or ("_",), ordering)
            self._qctx = None
            self._width = max(len(self.names), 1)
        else:
            import sympy
            from sympy.polys.domains import ZZ
            from sympy.polys.orderings import grlex, lex
            from sympy.polys.rings import PolyRing

            self._ring = PolyRing([sympy.Symbol(n) for n in self.names] or [sympy.Dummy("_")],
                                  ZZ, lex if ordering == "lex" else grlex)
            self._width = max(len(self.names), 1)
        self.zero = self.constant(0)
        self.one = self.constant(1)

    # -- identity
    def __eq__(self, other: object) -> bool:
        return (isinstance(other, PolynomialRing) and self.names == other.names
                and self.backend == other.backend and self.ordering == other.ordering)

    def __hash__(self) -> int:
        return hash((self.names, self.backend, self.ordering))

    def __repr__(self) -> str:
        return f"PolynomialRing({list(self.names)!r}, backend={self.backend!r})"

    def index(self, name: str) -> int:
        """Position of `name` in `.names` (and in the exponent tuples of `.terms`)."""
        try:
            return self._index[name]
        except KeyError:
            raise KeyError(f"{name!r} is not a variable of {self!r}") from None

    # -- making polynomials
    def constant(self, value: int) -> Poly:
        if isinstance(value, Fraction):
            if value.denominator != 1:
                raise InexactDivision(f"{value} is not an integer")
            value = value.numerator
        if self.backend == "flint":
            return self._ctx.constant(int(value))
        return self._ring(int(value))

    def gen(self, name: str) -> Poly:
        i = self.index(name)
        if self.backend == "flint":
            return self._ctx.gen(i)
        return self._ring.gens[i]

    def monomial(self, exponents: Mapping[str, int], coeff: int = 1) -> Poly:
        """coeff * prod(name**e)."""
        exps = [0] * self._width
        for name, e in exponents.items():
            if e < 0:
                raise ValueError(f"negative exponent {e} for {name}")
            exps[self.index(name)] += int(e)
        return self.from_terms([(tuple(exps), int(coeff))])

    def from_terms(self, terms: Iterable[tuple[Monomial, int]]) -> Poly:
        """Polynomial from (exponent tuple, integer coefficient) pairs (repeats are added)."""
        collected: dict[Monomial, int] = {}
        for monom, coeff in terms:
            monom = tuple(monom) if self.names else (0,)
            collected[monom] = collected.get(monom, 0) + int(coeff)
        collected = {m: c for m, c in collected.items() if c}
        if self.backend == "flint":
            return self._ctx.from_dict(collected) if collected else self._ctx.constant(0)
        return self._ring.from_dict(collected) if collected else self._ring(0)

    def convert(self, p: Poly | int, from_ring: PolynomialRing | None = None) -> Poly:
        """Move `p` (of `from_ring`, or an int) into this ring; it must hold all p's variables."""
        if isinstance(p, int | Fraction):
            return self.constant(p)
        if from_ring is None or from_ring == self:
            return p
        missing = [n for n in from_ring.names if n not in self._index]
        if missing:
            used = [n for n in missing if from_ring.degree(p, n) > 0]
            if used:
                raise ValueError(f"{self!r} has no variable(s) {', '.join(used)}")
        if self.backend == "flint" and from_ring.backend == "flint" and from_ring.names:
            return p.project_to_context(self._ctx)
        positions = [self._index.get(n) for n in from_ring.names]
        out = []
        for monom, coeff in from_ring.terms(p):
            exps = [0] * self._width
            for pos, e in zip(positions, monom, strict=False):
                if e:
                    exps[pos] = e
            out.append((tuple(exps), coeff))
        return self.from_terms(out)

    def extend(self, names: Iterable[str]) -> PolynomialRing:
        """A ring with these names added (same backend and term order)."""
        return PolynomialRing(self.names + tuple(names), self.backend, ordering=self.ordering)

    # -- looking at polynomials
    def terms(self, p: Poly) -> list[tuple[Monomial, int]]:
        """(exponents, coefficient) pairs, lexicographically descending in `.names` order."""
        if self.backend == "flint":
            monoms = p.monoms()
            coeffs = p.coeffs()
            if not self.names:
                return [((), int(c)) for c in coeffs]
            return [(m, int(c)) for m, c in zip(monoms, coeffs, strict=True)]
        if not self.names:
            return [((), int(c)) for _, c in p.terms()]
        return [(m, int(c)) for m, c in p.terms()]

    def nterms(self, p: Poly) -> int:
        return len(p)

    def is_zero(self, p: Poly) -> bool:
        return p.is_zero() if self.backend == "flint" else not p

    def is_constant(self, p: Poly) -> bool:
        if self.backend == "flint":  # len is O(1); total_degree is the cheapest flint query
            size = len(p)
            return size == 0 or (size == 1 and p.total_degree() == 0)
        return p.is_ground

    def constant_value(self, p: Poly) -> int:
        """The integer a constant polynomial stands for."""
        if not self.is_constant(p):
            raise ValueError("not a constant polynomial")
        terms = self.terms(p)
        return terms[0][1] if terms else 0

    def leading_coefficient(self, p: Poly) -> int:
        """Integer coefficient of the first term in `.terms` order (0 for the zero polynomial)."""
        if self.is_zero(p):
            return 0
        if self.backend == "flint":
            return int(p.leading_coefficient())
        return int(p.LC)

    def degree(self, p: Poly, name: str) -> int:
        """Degree in `name`; -1 for the zero polynomial."""
        if self.is_zero(p):
            return -1
        i = self.index(name)
        if self.backend == "flint":
            return int(p.degrees()[i])
        return int(p.degree(i))

    def degrees(self, p: Poly) -> tuple[int, ...]:
        """Degree in each variable, in `.names` order (zeros for the zero polynomial)."""
        if self.is_zero(p):
            return (0,) * len(self.names)
        if self.backend == "flint":
            return tuple(int(d) for d in p.degrees())[:len(self.names)]
        return tuple(int(d) for d in p.degrees())[:len(self.names)]

    def lowest_degree(self, p: Poly, name: str) -> int:
        """Lowest power of `name` in any term; -1 for the zero polynomial."""
        if self.is_zero(p):
            return -1
        i = self.index(name)
        return min(m[i] for m, _ in self.terms(p))

    def variables(self, p: Poly) -> tuple[str, ...]:
        """Names that occur in `p`, in ring order."""
        if self.is_zero(p):
            return ()
        if self.backend == "flint":
            degrees = p.degrees()
            return tuple(n for n, d in zip(self.names, degrees, strict=False) if d > 0)
        return tuple(n for i, n in enumerate(self.names) if p.degree(i) > 0)

    def content(self, p: Poly) -> int:
        """Positive gcd of the integer coefficients (0 for the zero polynomial)."""
        if self.is_zero(p):
            return 0
        if self.backend == "flint":
            return abs(int(p.content()))
        return abs(int(p.content()))

    def coefficients(self, p: Poly, name: str) -> dict[int, Poly]:
        """p collected in powers of `name`: {power: coefficient polynomial free of `name`}."""
        if self.is_zero(p):
            return {}
        if name not in self._index or self.degree(p, name) == 0:
            return {0: p}
        if self.backend == "flint":
            # k-th coefficient = (d/dx)^k p at x = 0, divided by k!: all in C
            out = {}
            current = p
            for k in range(self.degree(p, name) + 1):
                coeff = current.subs({name: 0})
                if not coeff.is_zero():
                    out[k] = coeff / factorial(k) if k > 1 else coeff
                current = current.derivative(name)
            return out
        i = self.index(name)
        grouped: dict[int, list[tuple[Monomial, int]]] = {}
        for monom, coeff in self.terms(p):
            grouped.setdefault(monom[i], []).append((monom[:i] + (0,) + monom[i + 1:], coeff))
        return {k: self.from_terms(v) for k, v in sorted(grouped.items())}

    # -- arithmetic beyond + - * **
    def gcd(self, a: Poly, b: Poly) -> Poly:
        """Greatest common divisor, with a positive leading coefficient (gcd(0, 0) = 0).

        The gcd is unique up to sign, so the shortcuts below change its cost, never its
        value: the common term content (integer and monomial) first, then on the parts
        left, a variable-free answer when they share no variable, the smaller part when it
        divides the larger, and the smaller part's irreducible factors tried as divisors of
        the larger when it is small against the larger; only then the full gcd. In
        elimination the answer is usually the smaller operand or a factor of it, which
        exact division finds at a fraction of a general gcd's cost.
        """
        if self.is_zero(a) or self.is_zero(b):
            g = b if self.is_zero(a) else a
        else:
            content_a, content_b = self.term_content(a), self.term_content(b)
            common = self._monomial_gcd(content_a, content_b)
            core = self._primitive_gcd(self._without(a, content_a), self._without(b, content_b))
            g = common if core is None else common * core
        if self.leading_coefficient(g) < 0:
            g = -g
        return g

    def term_content(self, p: Poly) -> Poly:
        """The largest term dividing every term of p: integer content times the monomial of
        the lowest power of each variable (positive; p itself when p is zero)."""
        if self.backend == "flint":
            return p.term_content() if not p.is_zero() else p
        if not p:
            return p
        terms = self.terms(p) if self.names else [((0,), c) for _, c in self.terms(p)]
        lowest = list(terms[0][0])
        for monom, _ in terms[1:]:
            lowest = [min(x, y) for x, y in zip(lowest, monom, strict=True)]
        return self._ring.from_dict({tuple(lowest): self.content(p)})

    def _without(self, p: Poly, term: Poly) -> Poly:
        """p / term, where term divides p (no copy when term is 1)."""
        if len(term) == 1 and self.is_constant(term) and self.constant_value(term) == 1:
            return p
        return self.exquo(p, term)

    def _monomial_gcd(self, a: Poly, b: Poly) -> Poly:
        """gcd of two single terms (positive)."""
        (ma, ca), (mb, cb) = self.terms(a)[0], self.terms(b)[0]
        if not self.names:
            return self.constant(gcd(ca, cb))
        return self.from_terms([(tuple(map(min, ma, mb)), gcd(ca, cb))])

    FACTOR_TERMS = 20_000
    """A smaller operand up to this many terms, and a quarter of the larger one's or less,
    is factored: trial division by its few factors is far cheaper than a general gcd."""

    def _primitive_gcd(self, a: Poly, b: Poly) -> Poly | None:
        """gcd (up to sign) of two polynomials without term content; None when it is 1."""
        small, large = (a, b) if len(a) <= len(b) else (b, a)
        if self.is_constant(small):
            return None
        if self.backend == "flint":
            shared = any(x and y for x, y in zip(small.degrees(), large.degrees(), strict=True))
        else:
            shared = set(self.variables(small)) & set(self.variables(large))
        if not shared:  # a common factor would be free of every variable: it is 1
            return None
        quotient = self._divide(large, small)
        if quotient is not None:
            return small
        if len(small) <= self.FACTOR_TERMS and 4 * len(small) <= len(large):
            return self._gcd_by_factors(small, large)
        g = small.gcd(large)
        return None if self.is_constant(g) else g

    def _gcd_by_factors(self, small: Poly, large: Poly) -> Poly | None:
        """gcd of `small` and `large` as the product of small's irreducible factors, each to
        the highest power (up to its multiplicity in small) that divides large exactly."""
        if self.backend == "flint":
            _, factors = small.factor()
        else:
            _, factors = small.factor_list()
        g = None
        for factor, multiplicity in factors:
            for _ in range(multiplicity):
                quotient = self._divide(large, factor)
                if quotient is None:
                    break
                large = quotient
                g = factor if g is None else g * factor
        return g

    def _divide(self, a: Poly, b: Poly) -> Poly | None:
        """a / b when b divides a exactly, else None."""
        try:
            return self.exquo(a, b)
        except InexactDivision:
            return None

    def exquo(self, a: Poly, b: Poly | int) -> Poly:
        """a / b when b divides a exactly; InexactDivision otherwise."""
        if isinstance(b, int):
            if b == 0:
                raise ZeroDivisionError("polynomial division by zero")
            if b == 1:
                return a
            if self.backend == "flint":
                try:
                    return a / b
                except Exception as exc:  # flint's DomainError
                    raise InexactDivision(f"{b} does not divide the polynomial") from exc
            b = self.constant(b)
        if self.is_zero(b):
            raise ZeroDivisionError("polynomial division by zero")
        if self.backend == "flint":
            try:
                return a / b
            except ZeroDivisionError:
                raise
            except Exception as exc:
                raise InexactDivision("polynomial division is not exact") from exc
        from sympy.polys.polyerrors import ExactQuotientFailed

        try:
            return a.exquo(b)
        except ExactQuotientFailed as exc:
            raise InexactDivision("polynomial division is not exact") from exc

    def factor(self, p: Poly) -> tuple[int, list[tuple[Poly, int]]]:
        """(integer content with the sign, [(irreducible factor, multiplicity)])."""
        if self.backend == "flint":
            content, found = p.factor()
            return int(content), [(f, int(e)) for f, e in found]
        content, found = p.factor_list()
        return int(content), [(f, int(e)) for f, e in found]

    def permute(self, p: Poly, mapping: Mapping[int, int]) -> Poly:
        """p with variable i replaced by variable mapping[i] (positions in `.names`)."""
        if self.backend == "flint" and self.names:
            gens = self._ctx.gens()
            return p.compose(*[gens[mapping.get(i, i)] for i in range(len(gens))])
        width = self._width
        out = []
        for monom, coeff in self.terms(p):
            exps = [0] * width
            for i, e in enumerate(monom):
                if e:
                    exps[mapping.get(i, i)] += e
            out.append((tuple(exps), coeff))
        return self.from_terms(out)

    def primitive(self, p: Poly) -> tuple[int, Poly]:
        """(content, p / content)."""
        c = self.content(p)
        if c in (0, 1):
            return c, p
        return c, self.exquo(p, c)

    def derivative(self, p: Poly, name: str) -> Poly:
        if name not in self._index:
            return self.zero
        i = self.index(name)
        if self.backend == "flint":
            return p.derivative(i)
        return p.diff(self._ring.gens[i])

    def substitute_integer(self, p: Poly, name: str, value: int) -> Poly:
        """p with `name` replaced by an integer."""
        if name not in self._index:
            return p
        if self.backend == "flint":
            return p.subs({name: int(value)})
        return p.subs(self._ring.gens[self.index(name)], int(value))

    def evaluate(self, p: Poly, values: Mapping[str, Fraction | int]) -> Fraction:
        """Exact value at rational values of (at least) every variable that occurs in p."""
        used = self.variables(p)
        missing = [n for n in used if n not in values]
        if missing:
            raise KeyError(f"no value for {', '.join(missing)}")
        if self.backend == "flint" and all(
                Fraction(values[n]).denominator == 1 for n in used):
            point = {n: int(values[n]) for n in used}
            return Fraction(int(p(*[point.get(n, 0) for n in self.names or ("_",)])))
        if self.backend == "flint":
            import flint

            if self._qctx is None:
                self._qctx = flint.fmpq_mpoly_ctx.get(self.names or ("_",), self.ordering)
            q = flint.fmpq_mpoly(p, self._qctx)
            args = []
            for n in self.names or ("_",):
                v = Fraction(values.get(n, 0)) if n in used else Fraction(0)
                args.append(flint.fmpq(v.numerator, v.denominator))
            result = q(*args)
            return Fraction(int(result.p), int(result.q))
        return _evaluate_terms(self.terms(p), [Fraction(values.get(n, 0)) for n in self.names])

    # -- showing
    def to_sympy(self, p: Poly) -> sympy.Expr:
        """The polynomial as an expanded sympy expression."""
        import sympy

        symbols = [sympy.Symbol(n) for n in self.names]
        out = []
        for monom, coeff in self.terms(p):
            factors = [s**e if e > 1 else s for s, e in zip(symbols, monom, strict=False) if e]
            out.append(sympy.Mul(sympy.Integer(coeff), *factors))
        return sympy.Add(*out)


def _evaluate_terms(terms: list[tuple[Monomial, int]], values: list[Fraction]) -> Fraction:
    """sum c * prod v**e over terms, in integers over one common denominator."""
    if not terms:
        return Fraction(0)
    nvars = len(values)
    top = [max(m[i] for m, _ in terms) for i in range(nvars)]
    num_pows = [[v.numerator**k for k in range(d + 1)] for v, d in zip(values, top, strict=True)]
    den_pows = [[v.denominator**k for k in range(d + 1)] for v, d in zip(values, top, strict=True)]
    total = 0
    for monom, coeff in terms:
        x = coeff
        for i, e in enumerate(monom):
            if top[i]:
                x *= num_pows[i][e] * den_pows[i][top[i] - e]
        total += x
    denominator = 1
    for i, d in enumerate(top):
        denominator *= den_pows[i][d]
    return Fraction(total, denominator)


def integer_gcd(values: Iterable[int]) -> int:
    """gcd of integers (0 for none)."""
    g = 0
    for v in values:
        g = gcd(g, v)
        if g == 1:
            break
    return g
