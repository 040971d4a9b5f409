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

from .evaluate import RationalForm
from .tidy import tidy
from .values import exact_value, expand_definitions

SIMPLIFY_TERMS = 60
SIMPLIFY_OPERATIONS = 100
"""A closed form that is no rational function (a square root, an arc tangent) has its
derivatives simplified only up to this many operations: beyond, simplifying costs minutes
(the rms noise of a second-order stage over a band) and the raw derivative is shown."""
"""Up to this many terms (numerator and denominator), closed forms are cancelled and factored."""


@dataclass(frozen=True)
class Sensitivity:
    """One row: the symbol, ∂Q/∂x and (x/R)·∂Q/∂x, closed and at the nominal values."""

    symbol: sympy.Symbol
    derivative: sympy.Expr
    relative: sympy.Expr
    derivative_value: Fraction | None
    relative_value: Fraction | None
    via: tuple[sympy.Symbol, ...] = ()
    """The defined symbols through which Q depends on this one (`Rt` for `R0`), if any."""


@dataclass(frozen=True)
class SensitivityTable:
    """Sensitivities of `expression`, largest relative sensitivity first."""

    expression: sympy.Expr
    nominal: Fraction | None
    reference: sympy.Expr | None
    """R in (x/R)·∂Q/∂x; None when the table is relative to Q itself."""
    rows: tuple[Sensitivity, ...]
    method: str = ""
    """How the rows were found, when not by differentiating a closed form."""


def _tidy(expression: sympy.Expr) -> sympy.Expr:
    """A readable closed form: cancelled and factored (rational functions stay rational)."""
    return tidy(expression)


class _Derivatives:
    """∂Q/∂x of one expression: closed forms and exact values at the nominal point."""

    def __init__(self, expression: sympy.Expr, nominals: Mapping[sympy.Symbol, Fraction]):
        self.expression = expression
        self.symbols = sorted(expression.free_symbols, key=str)
        try:
            self.form: RationalForm | None = RationalForm(expression, self.symbols)
        except ValueError:  # not a rational function (a square root), or a constant
            self.form = None
        if self.form is None:
            self.small = sympy.count_ops(expression) <= SIMPLIFY_OPERATIONS
        else:
            self.small = self.form.size <= SIMPLIFY_TERMS
        self.values: dict[sympy.Symbol, Fraction] | None = None
        if self.symbols and all(x in nominals for x in self.symbols):
            point = {x: nominals[x] for x in self.symbols}
            if self.form is not None:
                gradient = self.form.exact_gradient(point)
                if gradient is not None:
                    self.values = dict(zip(self.symbols, gradient, strict=True))
            else:
                found = {x: exact_value(sympy.diff(expression, x), point) for x in self.symbols}
                if all(v is not None for v in found.values()):
                    self.values = found  # type: ignore[assignment]

    def closed(self, x: sympy.Symbol) -> sympy.Expr:
        """∂Q/∂x (not yet simplified when small: the caller tidies the final form)."""
        if self.small or self.form is None:
            return sympy.diff(self.expression, x)
        return self.form.derivative_expression(self.symbols.index(x))

    def relative(self, x: sympy.Symbol) -> sympy.Expr:
        """(x/Q)·∂Q/∂x of a large result, as a logarithmic derivative."""
        return self.form.relative_expression(self.symbols.index(x))


def sensitivities(
    expression: sympy.Expr,
    nominals: Mapping[sympy.Symbol, Fraction],
    definitions: Mapping[sympy.Symbol, sympy.Expr] | None = None,
    reference: sympy.Expr | None = None,
) -> SensitivityTable:
    """The sensitivity table of `expression` over every symbol that has a nominal value.

    Symbols defined by others (`Rt = R0*(1 + alpha*T)`) get their own row and lend rows to
    the valued symbols of their definitions (chain rule). `reference` replaces Q in the
    relative sensitivity (pass it when Q is zero at the nominal point).
    """
    definitions = dict(definitions or {})
    nominal = exact_value(expression, nominals)
    scale = nominal if reference is None else exact_value(reference, nominals)
    d = _Derivatives(expression, nominals)
    direct = {x: d.closed(x) for x in d.symbols if x in nominals or x in definitions}

    # Through definitions: ∂Q/∂p = Σ_e ∂Q/∂e · ∂e/∂p (+ ∂Q/∂p when p appears itself).
    chained: dict[sympy.Symbol, sympy.Expr] = {}
    chained_value: dict[sympy.Symbol, Fraction | None] = {}
    via: dict[sympy.Symbol, list[sympy.Symbol]] = {}
    expanded = {e: expand_definitions(definitions[e], definitions)
                for e in d.symbols if e in definitions}
    for element, definition in sorted(expanded.items(), key=lambda item: str(item[0])):
        for p in definition.free_symbols:
            inner = sympy.diff(definition, p)
            chained[p] = chained.get(p, sympy.Integer(0)) + direct[element] * inner
            step = None if d.values is None else exact_value(inner, nominals)
            before = chained_value.get(p, Fraction(0))
            chained_value[p] = None if step is None or before is None else \
                before + d.values[element] * step
            via.setdefault(p, []).append(element)

    rows = []
    for x in (set(direct) | set(chained)) & set(nominals):
        derivative = direct.get(x, sympy.Integer(0)) + chained.get(x, sympy.Integer(0))
        relative = x * derivative / (expression if reference is None else reference)
        if x in via:  # written in the independent symbols, as the row is about one of them
            substitution = {e: expanded[e] for e in via[x]}
            derivative = derivative.xreplace(substitution)
            relative = relative.xreplace(substitution)
        if d.small:
            derivative, relative = _tidy(derivative), _tidy(relative)
        elif x not in via and reference is None and d.form is not None:
            relative = d.relative(x)
        value = None
        if d.values is not None:
            parts = [d.values.get(x, Fraction(0)), chained_value.get(x, Fraction(0))]
            value = None if None in parts else sum(parts, Fraction(0))
        relative_value = None if value is None or not scale else nominals[x] * value / scale
        rows.append(Sensitivity(x, derivative, relative, value, relative_value,
                                tuple(via.get(x, ()))))
    rows.sort(key=lambda r: (r.relative_value is None, -abs(r.relative_value or 0), str(r.symbol)))
    return SensitivityTable(expression, nominal, reference, tuple(rows))
