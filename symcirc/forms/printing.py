"""Design forms printed the way an engineer writes them: `U·(R2/(R1 + R2) − R4/(R3 + R4))`.

Plain text uses `·`, `−`, `∥`, superscript powers and `√`; LaTeX uses `\\parallel` and
`\\frac`. Both come from one walk over the expression (far quicker than sympy's printers,
which matters when every step prints its equation). Sums list their positive terms first,
a polynomial in s by falling powers, otherwise the constant first (`1 + Rf/Rg`); a product
puts its number and s first (`2·s·C1`).
"""

from __future__ import annotations

import re
from fractions import Fraction

import sympy

from ..model.typeset import symbol_latex
from .parallel import Parallel

GREEK = {
    "omega": "ω", "zeta": "ζ", "alpha": "α", "beta": "β", "gamma": "γ", "delta": "δ",
    "epsilon": "ε", "tau": "τ", "mu": "µ", "Delta": "Δ",
}  # fmt: skip
_SUPERSCRIPTS = str.maketrans("0123456789-", "⁰¹²³⁴⁵⁶⁷⁸⁹⁻")
S = sympy.Symbol("s")

# Precedence levels: what may stand bare inside what.
_ADD, _PARALLEL, _MUL, _FRACTION, _POW, _ATOM = 1, 2, 3, 3.5, 4, 5


def name_text(name: str) -> str:
    """A symbol name for plain text: `omega_0` → `ω0`."""
    head, _, rest = name.partition("_")
    if head in GREEK:
        return GREEK[head] + rest
    return name


def name_latex(name: str) -> str:
    """A symbol name in LaTeX: `R1` → `R_{1}`, `Rin` → `R_{\\mathrm{in}}` (model.typeset)."""
    return symbol_latex(name)


def _s_degree(term: sympy.Expr) -> int:
    for factor in sympy.Mul.make_args(term):
        if factor is S:
            return 1
        if factor.is_Pow and factor.base is S and factor.exp.is_Integer:
            return int(factor.exp)
    return 0


def _negative(term: sympy.Expr) -> bool:
    """True when the term reads with a leading minus (its numeric coefficient is negative)."""
    return bool(term.as_coeff_Mul()[0].is_negative)


def positive_first(terms: list[sympy.Expr]) -> list[sympy.Expr]:
    """The terms of a sum in reading order (see the module docstring)."""
    if any(S in t.free_symbols for t in terms):
        return sorted(terms, key=lambda t: (_negative(t), -_s_degree(t)))
    return sorted(terms, key=lambda t: (_negative(t), not t.is_Number))


class _Style:
    """Plain text."""

    times, minus, parallel = "·", "−", "∥"
    fraction_level, parallel_operand_level = _MUL, _POW

    def paren(self, body: str) -> str:
        return f"({body})"

    def symbol(self, name: str) -> str:
        return name_text(name)

    def fraction(self, top: str, bottom: list[tuple[str, float]]) -> str:
        if len(bottom) == 1:
            body, level = bottom[0]
            return f"{top}/{body if level >= _POW else self.paren(body)}"
        return f"{top}/" + self.paren(
            self.times.join(b if level >= _MUL else self.paren(b) for b, level in bottom)
        )

    def power(self, base: str, exponent: sympy.Expr) -> str:
        if exponent.is_Integer:
            return base + str(int(exponent)).translate(_SUPERSCRIPTS)
        return f"{base}^{self.paren(text(exponent))}"

    def sqrt(self, body: str, level: float) -> str:
        return "√" + (body if level >= _ATOM else self.paren(body))

    def function(self, name: str, args: list[str]) -> str:
        return f"{name}({', '.join(args)})"

    constants = {"pi": "π", "oo": "∞"}


class _LatexStyle(_Style):
    times, minus, parallel = " ", "-", r" \parallel "
    fraction_level, parallel_operand_level = _FRACTION, _FRACTION

    def paren(self, body: str) -> str:
        return rf"\left({body}\right)"

    def symbol(self, name: str) -> str:
        return name_latex(name)

    def fraction(self, top: str, bottom: list[tuple[str, float]]) -> str:
        if len(bottom) == 1:
            body = bottom[0][0]
        else:
            body = self.times.join(b if level >= _MUL else self.paren(b) for b, level in bottom)
        return rf"\frac{{{top}}}{{{body}}}"

    def power(self, base: str, exponent: sympy.Expr) -> str:
        shown = str(int(exponent)) if exponent.is_Integer else latex(exponent)
        return f"{base}^{{{shown}}}"

    def sqrt(self, body: str, level: float) -> str:
        return rf"\sqrt{{{body}}}"

    def function(self, name: str, args: list[str]) -> str:
        return rf"\operatorname{{{name}}}{self.paren(', '.join(args))}"

    constants = {"pi": r"\pi", "oo": r"\infty"}


class _CodeStyle(_Style):
    """Plain infix that `sympy.parse_expr` reads back (`**`, `sqrt`, `pi`)."""

    times, minus, parallel = "*", "-", "|"
    fraction_level, parallel_operand_level = _MUL, _POW

    def symbol(self, name: str) -> str:
        return name

    def power(self, base: str, exponent: sympy.Expr) -> str:
        shown = (
            str(int(exponent)) if exponent.is_Integer and exponent > 0 else f"({code(exponent)})"
        )
        return f"{base}**{shown}"

    def sqrt(self, body: str, level: float) -> str:
        return f"sqrt({body})"

    constants = {"pi": "pi", "oo": "oo"}


_TEXT, _LATEX, _CODE = _Style(), _LatexStyle(), _CodeStyle()


def as_expr(value: object) -> sympy.Expr:
    """A sympy expression from an expression or an exact number; never from text (user
    text is read by the grammar only)."""
    if isinstance(value, sympy.Basic):
        return value
    if isinstance(value, int):
        return sympy.Integer(value)
    if isinstance(value, Fraction):
        return sympy.Rational(value.numerator, value.denominator)
    raise TypeError(f"not an expression: {value!r}")


def code(expr: sympy.Expr) -> str:
    """`expr` as plain infix for machines (`**` for powers), `∥` written out as its value."""
    from .parallel import expand_parallel

    return _print(expand_parallel(as_expr(expr)), _CODE)[0]


def text(expr: sympy.Expr) -> str:
    """`expr` as plain text with `∥`, `·`, `−`."""
    return _print(as_expr(expr), _TEXT)[0]


def latex(expr: sympy.Expr) -> str:
    """`expr` as LaTeX, `∥` as `\\parallel`."""
    return _print(as_expr(expr), _LATEX)[0]


def _print(expr: sympy.Expr, style: _Style) -> tuple[str, float]:
    """The printed expression and the precedence level of its outermost operation."""
    if isinstance(expr, Parallel):
        parts = [_wrap(a, style.parallel_operand_level, style) for a in expr.args]
        return style.parallel.join(parts), _PARALLEL
    if expr.is_Add:
        out = ""
        for i, term in enumerate(positive_first(list(expr.args))):
            if _negative(term):
                body, level = _product(term, style, negate=True)
                body = style.paren(body) if level <= _ADD else body
                out += (style.minus if i == 0 else f" {style.minus} ") + body
            else:
                out += ("" if i == 0 else " + ") + _wrap(term, _ADD + 1, style)
        return out, _ADD
    if (
        expr.is_Mul
        or (expr.is_Pow and expr.exp.is_negative)
        or (expr.is_Rational and not expr.is_Integer)
    ):
        return _product(expr, style)
    if expr.is_Pow:
        base, exponent = expr.args
        if exponent == sympy.S.Half:
            return style.sqrt(*_print(base, style)), _ATOM
        return style.power(_wrap(base, _ATOM, style), exponent), _POW
    if expr.is_Integer:
        value = int(expr)
        return (str(value), _ATOM) if value >= 0 else (style.minus + str(-value), _ADD)
    if expr is sympy.pi or expr is sympy.oo:
        return style.constants[str(expr)], _ATOM
    if expr.is_Symbol:
        return style.symbol(expr.name), _ATOM
    if expr.is_Function:
        return style.function(type(expr).__name__, [_print(a, style)[0] for a in expr.args]), _ATOM
    return str(expr), _ATOM


def _product(expr: sympy.Expr, style: _Style, negate: bool = False) -> tuple[str, float]:
    """A product as numerator/denominator; `negate` prints −expr (for a sum's terms)."""
    coefficient, rest = expr.as_coeff_Mul()
    negative = bool(coefficient.is_negative) != negate
    sign = style.minus if negative else ""
    factors = list(sympy.Mul.make_args(rest))
    if abs(coefficient) != 1:
        factors.insert(0, abs(coefficient))
    numer: list[sympy.Expr] = []
    denom: list[sympy.Expr] = []
    factors.sort(key=_factor_order)  # `2·s·C1`, `R0²·R1·Rin`
    for f in factors:
        if f.is_Rational and not f.is_Integer:
            if f.p != 1:
                numer.append(sympy.Integer(f.p))
            denom.append(sympy.Integer(f.q))
        elif f.is_Pow and f.exp.is_negative:
            denom.append(f.base if f.exp == -1 else f.base ** (-f.exp))
        else:
            numer.append(f)
    level = _ADD if sign else _MUL
    ratios = [f for f in numer if f.is_Add and any(_has_fraction(t) for t in f.args)]
    below = set().union(*(f.free_symbols for f in denom))
    over = [f for f in numer if f not in ratios and f.free_symbols & below]
    if ratios and over:
        # `U·(R2/(R1 + R2) − R4/(R3 + R4))·Rd/(Rd + R1∥R2)`: a difference of ratios is not
        # buried in a fraction; what the denominator shares symbols with stays over it.
        lead = [f for f in numer if f not in ratios and f not in over]
        fraction, _ = _product(sympy.Mul(*over) / sympy.Mul(*denom), style)
        shown = [_wrap(f, _MUL, style) for f in (*lead, *ratios)]
        return sign + style.times.join([*shown, fraction]), level
    top = style.times.join(_wrap(f, _MUL, style) for f in numer) if numer else "1"
    if not denom:
        return sign + top, level
    if style is _LATEX and len(numer) == 1:  # \frac needs no brackets around one factor
        top = _print(numer[0], style)[0]
    bottom = [_print(f, style) for f in denom]
    return sign + style.fraction(top, bottom), (_ADD if sign else style.fraction_level)


def _factor_order(factor: sympy.Expr) -> tuple:
    """Numbers, then s, then symbols (and their powers) by name, then everything else in
    sympy's order (sums last): `2·s·C1·R0²·Rin·(R1 + R2)`."""
    if factor.is_Number:
        return (0,)
    if _is_laplace(factor):
        return (1,)
    base = factor.base if factor.is_Pow and factor.exp.is_Integer else factor
    if base.is_Symbol:
        return (2, _natural(base.name))
    return (3,)


def _natural(name: str) -> tuple:
    """`R2` before `R10`: digit runs compare as numbers."""
    return tuple(
        (0, int(part), "") if part.isdigit() else (1, 0, part)
        for part in re.findall(r"\d+|\D+", name)
    )


def _is_laplace(factor: sympy.Expr) -> bool:
    base = factor.base if factor.is_Pow else factor
    return base == S


def _wrap(expr: sympy.Expr, level: float, style: _Style) -> str:
    body, own = _print(expr, style)
    return style.paren(body) if own < level else body


def _has_fraction(term: sympy.Expr) -> bool:
    """True when a term of a sum prints as a fraction (`R2/(R1 + R2)`)."""
    return any(f.is_Pow and f.exp.is_negative for f in sympy.Mul.make_args(term)) or bool(
        term.is_Rational and not term.is_Integer)
