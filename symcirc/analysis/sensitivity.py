"""Sensitivity tables: ∂Q/∂x and the relative sensitivity (x/Q)·∂Q/∂x for every valued symbol.

Where Q is zero at the nominal point (a balanced bridge) the relative sensitivity is
undefined; the table is then referred to a named reference R instead: (x/R)·∂Q/∂x.
Small results get closed forms simplified by sympy; large ones (many terms) keep the
structure of their numerator N and denominator D: ∂Q/∂x = (N'·D − N·D')/D² and
(x/Q)·∂Q/∂x = x·N'/N − x·D'/D, and their values come from exact polynomial evaluation.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from fractions import Fraction

import sympy

from ..algebra.polynomials import AlgebraError, PolynomialRing
from ..algebra.rational import RationalFunction, UndefinedValue, substitute_quotient
from ..algebra.unexpanded import Texts, Unexpanded
from .tidy import tidy
from .values import exact_value, expand_definitions

SIMPLIFY_TERMS = 60
"""Up to this many terms (numerator and denominator), closed forms are cancelled and factored."""
SIMPLIFY_OPERATIONS = 100
"""A closed form that is no rational function (a square root, an arc tangent) has its
derivatives simplified only up to this many operations: beyond, simplifying costs minutes
(the rms noise of a second-order stage over a band) and the raw derivative is shown."""

Closed = sympy.Expr | Unexpanded
"""A closed form: a sympy expression (small results, or through definitions) or the
engine's unexpanded quotient form (large results: written and evaluated without sympy)."""


@dataclass(frozen=True)
class Sensitivity:
    """One row: the symbol, ∂Q/∂x and (x/R)·∂Q/∂x, closed and at the nominal values."""

    symbol: sympy.Symbol
    derivative: Closed
    relative: Closed
    derivative_value: Fraction | None
    relative_value: Fraction | None
    via: tuple[sympy.Symbol, ...] = ()
    """The defined symbols through which Q depends on this one (`Rt` for `R0`), if any."""


@dataclass(frozen=True)
class SensitivityTable:
    """Sensitivities of `expression`, largest relative sensitivity first."""

    expression: sympy.Expr | RationalFunction
    nominal: Fraction | None
    reference: sympy.Expr | None
    """R in (x/R)·∂Q/∂x; None when the table is relative to Q itself."""
    rows: tuple[Sensitivity, ...]
    method: str = ""
    """How the rows were found, when not by differentiating a closed form."""


def _tidy(expression: sympy.Expr) -> sympy.Expr:
    """A readable closed form: cancelled and factored (rational functions stay rational)."""
    return tidy(expression)


def as_function(expression: sympy.Expr | RationalFunction) -> RationalFunction | None:
    """Q as the engine's rational function; None when it is none (a square root, a float)."""
    if isinstance(expression, RationalFunction):
        return expression
    from ..algebra.convert import to_function

    symbols = sorted(expression.free_symbols, key=str)
    if not symbols:
        return None
    numerator, denominator = sympy.fraction(sympy.together(expression))
    if not (numerator.is_polynomial(*symbols) and denominator.is_polynomial(*symbols)):
        return None
    names = [str(x) for x in symbols]
    try:
        function = to_function(expression, PolynomialRing(names))
    except (ValueError, AlgebraError):
        return None
    return None if set(function.symbol_names()) - set(names) else function  # pi: no


class _Quotient:
    """N/D as polynomials of one ring (not necessarily in lowest terms): derivatives by the
    quotient rule, exact values, and closed forms written without sympy."""

    def __init__(self, ring: PolynomialRing, numerator, denominator) -> None:
        self.ring, self.numerator, self.denominator = ring, numerator, denominator
        self._parts: dict[str, tuple] = {}
        self.texts = Texts(ring)

    def derivative(self, name: str) -> tuple:
        """(N', D') by `name`."""
        if name not in self._parts:
            ring = self.ring
            self._parts[name] = (ring.derivative(self.numerator, name),
                                 ring.derivative(self.denominator, name))
        return self._parts[name]

    def gradient(self, names: list[str], point: dict[str, Fraction]) -> list[Fraction] | None:
        """Every ∂Q/∂x at `point` from the values of N, D, N', D'; None at a pole."""
        ring = self.ring
        n, d = ring.evaluate(self.numerator, point), ring.evaluate(self.denominator, point)
        if d == 0:
            return None
        out = []
        for name in names:
            dn, dd = (ring.evaluate(p, point) for p in self.derivative(name))
            out.append((dn * d - n * dd) / (d * d))
        return out

    def closed(self, name: str) -> Unexpanded:
        """∂Q/∂x = (N'·D − N·D')/D², unexpanded."""
        return Unexpanded.quotient_rule(self.numerator, self.denominator,
                                        *self.derivative(name), self.ring, self.texts)

    def relative(self, name: str, reference: sympy.Expr | None) -> Unexpanded | None:
        """(x/R)·∂Q/∂x: x·N'/N − x·D'/D (the logarithmic derivative) relative to Q itself,
        else the quotient rule times x/R for a reference R that is a symbol or 1; None for
        any other reference."""
        ring = self.ring
        dn, dd = self.derivative(name)
        gen = ring.gen(name)
        if reference is None:
            out = Unexpanded([], ring, self.texts)
            if not ring.is_zero(dn):
                out = Unexpanded.fraction(gen * dn, self.numerator, ring, self.texts)
            if not ring.is_zero(dd):
                out = out - Unexpanded.fraction(gen * dd, self.denominator, ring, self.texts)
            return out
        if reference == 1:
            return self.closed(name).times(gen, ring.one)
        if isinstance(reference, sympy.Symbol) and reference.name in ring.names:
            return self.closed(name).times(gen, ring.gen(reference.name))
        return None

    def substituted(self, definitions: Mapping[str, RationalFunction]) -> _Quotient:
        """N/D with each defined name replaced by its definition (N and D multiplied by the
        powers of the definitions' denominators that keep them polynomials)."""
        ring = self.ring
        for function in definitions.values():
            ring = ring.extend(n for n in function.ring.names if n not in ring.names)
        top = ring.convert(self.numerator, self.ring)
        bottom = ring.convert(self.denominator, self.ring)
        for name, function in definitions.items():
            value = function.in_ring(ring)
            top, bottom = substitute_quotient(top, bottom, name, value.numerator,
                                              value.denominator, ring)
        return _Quotient(ring, top, bottom)


class _Derivatives:
    """∂Q/∂x of one result: closed forms and exact values at the nominal point, from the
    numerator N and denominator D of the engine's polynomials (N', D' exact derivatives)."""

    def __init__(self, expression: sympy.Expr | RationalFunction,
                 nominals: Mapping[sympy.Symbol, Fraction]):
        self.function = as_function(expression)
        self._expression = None if isinstance(expression, RationalFunction) else expression
        if self.function is not None:
            names = self.function.symbol_names()
            self.symbols = sorted((sympy.Symbol(n) for n in names), key=str)
            f = self.function
            self.quotient = _Quotient(f.ring, f.numerator, f.denominator)
        else:
            self.symbols = sorted(expression.free_symbols, key=str)
        if self.function is None:
            self.small = sympy.count_ops(expression) <= SIMPLIFY_OPERATIONS
        else:
            self.small = sum(self.function.size()) <= SIMPLIFY_TERMS
        self._through: dict[frozenset, _Quotient] = {}
        self.values: dict[sympy.Symbol, Fraction] | None = None
        if self.symbols and all(x in nominals for x in self.symbols):
            if self.function is not None:
                point = {str(x): nominals[x] for x in self.symbols}
                gradient = self.quotient.gradient([x.name for x in self.symbols], point)
                if gradient is not None:
                    self.values = dict(zip(self.symbols, gradient, strict=True))
            else:
                found = {x: exact_value(sympy.diff(expression, x), nominals)
                         for x in self.symbols}
                if all(v is not None for v in found.values()):
                    self.values = found  # type: ignore[assignment]

    @property
    def expression(self) -> sympy.Expr:
        if self._expression is None:
            self._expression = self.function.to_sympy()
        return self._expression

    def closed(self, x: sympy.Symbol) -> Closed:
        """∂Q/∂x (not yet simplified when small: the caller tidies the final form)."""
        if self.small or self.function is None:
            return sympy.diff(self.expression, x)
        return self.quotient.closed(x.name)

    def through(self, definitions: Mapping[sympy.Symbol, sympy.Expr]) -> _Quotient | None:
        """N/D with these definitions substituted (None when one is no rational function)."""
        key = frozenset(definitions)
        if key not in self._through:
            functions = {}
            for name, definition in sorted(definitions.items(), key=lambda item: str(item[0])):
                function = as_function(definition) if definition.free_symbols else \
                    _constant(definition, self.function.ring)
                if function is None:
                    return None
                functions[name.name] = function
            self._through[key] = self.quotient.substituted(functions)
        return self._through[key]


def _constant(value: sympy.Expr, ring: PolynomialRing) -> RationalFunction | None:
    if not value.is_Rational:
        return None
    return RationalFunction.constant(Fraction(int(value.p), int(value.q)), ring)


def sensitivities(
    expression: sympy.Expr | RationalFunction,
    nominals: Mapping[sympy.Symbol, Fraction],
    definitions: Mapping[sympy.Symbol, sympy.Expr] | None = None,
    reference: sympy.Expr | None = None,
) -> SensitivityTable:
    """The sensitivity table of `expression` (a sympy expression or the engine's rational
    function) over every symbol that has a nominal value.

    Symbols defined by others (`Rt = R0*(1 + alpha*T)`) get their own row and lend rows to
    the valued symbols of their definitions (chain rule). `reference` replaces Q in the
    relative sensitivity (pass it when Q is zero at the nominal point).
    """
    definitions = dict(definitions or {})
    d = _Derivatives(expression, nominals)
    nominal = _nominal(expression, d, nominals)
    scale = nominal if reference is None else exact_value(reference, nominals)
    direct = {x: d.closed(x) for x in d.symbols if x in nominals or x in definitions}

    def symbolic(closed: Closed) -> sympy.Expr:
        return closed.to_sympy() if isinstance(closed, Unexpanded) else closed

    # Through definitions: ∂Q/∂p = Σ_e ∂Q/∂e · ∂e/∂p (+ ∂Q/∂p when p appears itself).
    links: dict[sympy.Symbol, list[tuple[sympy.Symbol, sympy.Expr]]] = {}
    chained_value: dict[sympy.Symbol, Fraction | None] = {}
    via: dict[sympy.Symbol, list[sympy.Symbol]] = {}
    expanded = {e: expand_definitions(definitions[e], definitions)
                for e in d.symbols if e in definitions}
    for element, definition in sorted(expanded.items(), key=lambda item: str(item[0])):
        for p in definition.free_symbols:
            inner = sympy.diff(definition, p)
            links.setdefault(p, []).append((element, inner))
            step = None if d.values is None else exact_value(inner, nominals)
            before = chained_value.get(p, Fraction(0))
            chained_value[p] = None if step is None or before is None else \
                before + d.values[element] * step
            via.setdefault(p, []).append(element)

    rows = []
    for x in (set(direct) | set(links)) & set(nominals):
        derivative: Closed = direct.get(x, sympy.Integer(0))
        relative: Closed | None = None
        if not d.small and d.function is not None:  # from the polynomials, no sympy
            quotient = d.quotient if x not in via else \
                d.through({e: expanded[e] for e in via[x]})
            if quotient is not None:
                derivative = quotient.closed(x.name)
                relative = quotient.relative(x.name, reference)
        if relative is None:
            derivative = symbolic(direct.get(x, sympy.Integer(0))) + sum(
                (symbolic(direct[e]) * inner for e, inner in links.get(x, ())), sympy.Integer(0))
            relative = x * derivative / (d.expression if reference is None else reference)
            if x in via:  # written in the independent symbols, as the row is about one of them
                substitution = {e: expanded[e] for e in via[x]}
                derivative = derivative.xreplace(substitution)
                relative = relative.xreplace(substitution)
        if d.small:
            derivative, relative = _tidy(derivative), _tidy(relative)
        value = None
        if d.values is not None:
            parts = [d.values.get(x, Fraction(0)), chained_value.get(x, Fraction(0))]
            value = None if None in parts else sum(parts, Fraction(0))
        relative_value = None if value is None or not scale else nominals[x] * value / scale
        rows.append(Sensitivity(x, derivative, relative, value, relative_value,
                                tuple(via.get(x, ()))))
    rows.sort(key=lambda r: (r.relative_value is None, -abs(r.relative_value or 0), str(r.symbol)))
    return SensitivityTable(expression, nominal, reference, tuple(rows))


def _nominal(expression: sympy.Expr | RationalFunction, d: _Derivatives,
             nominals: Mapping[sympy.Symbol, Fraction]) -> Fraction | None:
    """Q at the nominal values (None when a symbol has none, or at a pole)."""
    if not isinstance(expression, RationalFunction):
        return exact_value(expression, nominals)
    if not all(x in nominals for x in d.symbols):
        return None
    try:
        return expression.evaluate({x.name: nominals[x] for x in d.symbols})
    except UndefinedValue:
        return None
