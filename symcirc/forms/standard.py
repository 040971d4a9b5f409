"""Standard forms of transfer functions and their named parameters.

First order `K/(1 + s/ω0)`, `K·(s/ω0)/(1 + s/ω0)`; second order
`K/(s²/ω0² + s/(Q·ω0) + 1)` (low-pass), `K·(s²/ω0²)/(...)` (high-pass),
`K·(s/(Q·ω0))/(...)` (band-pass, K the gain at ω0); higher orders as a product of first-
and second-order factors when the polynomials factor over the symbols. Each parameter is
given in closed form (ω0 and Q with square factors taken out of the root), with f0 = ω0/2π,
ζ = 1/(2Q), and the real zeros and poles.

Signs are exact: ω0 = √(c/a) is the positive root (only factors that are positive for
positive symbols leave the root), and Q has the sign of c/b, so a section with a
right-half-plane pair has Q < 0. When b and c each have terms of one sign (a passive
section, an integrator loop), that sign is known and Q = ±√(a·c/b²) reads as written by
hand. When only a and c have one sign (a gain that can cancel damping, K·R1·C1 in a
Sallen-Key section), Q = ±√(a·c)/b with b kept as it is, so Q and c/b share the sign of b
by construction. In both cases the proof checks Q²·ω0² = (c/b)², an identity, and the sign
is settled by the construction, not guessed from a square. Otherwise Q = (c/b)/ω0.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction
from typing import Any

import sympy

from ..algebra.factor import coefficients_in, factors, factors_in
from ..model.circuit import LAPLACE
from .factoring import factor
from .printing import code, latex, text
from .verify import NotRational, equal, ring_ratio, to_ratio

s = LAPLACE


@dataclass
class Parameter:
    name: str
    """Symbol name (`omega_0`); printed as `ω0`."""
    expression: sympy.Expr
    unit: str

    def __post_init__(self) -> None:
        if self.expression.is_rational_function():
            self.expression = factor(self.expression)

    def describe(self, nominals: dict[str, Fraction]) -> dict:
        return {
            "expression": code(self.expression),
            "latex": latex(self.expression),
            "text": text(self.expression),
            "nominal": nominal(self.expression, nominals),
            "unit": self.unit,
        }


@dataclass
class StandardForm:
    """A transfer function written in a standard form, proved equal to it."""

    kind: str
    """'first-order low-pass', 'second-order band-pass', 'factored', ..."""
    expression: sympy.Expr
    text: str
    latex: str
    parameters: list[Parameter]
    rational: sympy.Expr = field(repr=False, default=sympy.Integer(0))
    """The same form with ω0² and Q·ω0 as the rational functions they stand for."""
    checks: list[tuple[sympy.Expr, sympy.Expr]] = field(repr=False, default_factory=list)
    """Pairs that must be equal exactly: ω0² and c/a, Q·ω0 and c/b (signs included)."""


def nominal(expr: sympy.Expr, nominals: dict[str, Fraction]) -> float | None:
    values = {}
    for symbol in expr.free_symbols:
        if symbol.name not in nominals:
            return None
        v = nominals[symbol.name]
        values[symbol] = sympy.Rational(v.numerator, v.denominator)
    try:
        return float(expr.xreplace(values))
    except (TypeError, ValueError):
        return None


def sqrt_of(expr: sympy.Expr) -> sympy.Expr:
    """The positive square root of a ratio of polynomials: square factors whose coefficients
    share one sign (so positive, up to that sign, for positive symbols) taken outside."""
    num, den = to_ratio(expr)
    out_num, in_num = _split_square(num)
    out_den, in_den = _split_square(den)
    if in_num == 1 and in_den == 1:
        root = sympy.Integer(1)
    elif in_den == 1:
        root = sympy.sqrt(in_num)
    elif in_num == 1:
        root = 1 / sympy.sqrt(in_den)
    else:
        root = sympy.sqrt(in_num / in_den)
    return out_num / out_den * root


def definite_sign(expr: sympy.Expr) -> int | None:
    """+1 or −1 when every term of the polynomial `expr` has that sign (so, for positive
    symbols, the value has it too), else None."""
    num, den = sympy.fraction(sympy.together(expr))
    signs = set()
    for part in (num, den):
        part = sympy.expand(part)
        coefficients = sympy.Poly(part, *sorted(part.free_symbols, key=str)).coeffs() \
            if part.free_symbols else [part]
        found = {c > 0 for c in coefficients}
        if len(found) != 1:
            return None
        signs.add(found.pop())
    return 1 if len(signs) == 1 else -1


def quality(a: sympy.Expr, b: sympy.Expr, c: sympy.Expr, omega: sympy.Expr
            ) -> tuple[sympy.Expr, tuple[sympy.Expr, sympy.Expr]]:
    """Q of a·s² + b·s + c with ω0 = `omega` (> 0), and the identity that proves it."""
    q_w = sympy.cancel(c / b)  # Q·ω0
    sign_a, sign_b, sign_c = definite_sign(a), definite_sign(b), definite_sign(c)
    if sign_b is not None and sign_c is not None:
        q = sign_b * sign_c * sqrt_of(a * c / b**2)
        return q, (q**2 * omega**2, q_w**2)
    if sign_a is not None and sign_a == sign_c:
        # Q = sign(c)·√(a·c)/b: b stays as it is, so Q and c/b share the sign of b·c
        q = sign_c * sqrt_of(a * c) / b
        return q, (q**2 * omega**2, q_w**2)
    return q_w / omega, (q_w / omega * omega, q_w)


def _split_square(poly) -> tuple[sympy.Expr, sympy.Expr]:
    """(outside, inside) with poly = outside²·inside and inside free of square factors."""
    content, found = factors(poly)
    outside, inside = sympy.Integer(1), sympy.Integer(1)
    root = sympy.sqrt(content)
    if root.is_Rational:
        outside *= root
    else:
        inside *= content
    for f, e in found:
        signs = {c > 0 for c in sympy.Poly(f).coeffs()} if f.free_symbols else {f > 0}
        if len(signs) == 1:
            outside *= (f if signs == {True} else -f) ** (e // 2)
            inside *= f ** (e % 2)
        else:  # sign unknown: √(f²) = |f| stays under the root
            inside *= f ** e
    return outside, inside


# ---------------------------------------------------------------------- factors


@dataclass
class _Factor:
    """A normalised factor: `1 + s/ω` (order 1) or `s²/ω0² + s/(Q·ω0) + 1` (order 2)."""

    order: int
    coefficients: tuple[sympy.Expr, ...]
    """Order 1: (b, a) of a·s + b; order 2: (c, b, a) of a·s² + b·s + c."""

    def normalised(self) -> sympy.Expr:
        """The factor divided by its constant term (a rational function)."""
        if self.order == 1:
            b, a = self.coefficients
            return 1 + s * sympy.cancel(a / b)
        c, b, a = self.coefficients
        return s**2 * sympy.cancel(a / c) + s * sympy.cancel(b / c) + 1


def _split(poly, i: int) -> tuple[sympy.Expr, int, list[_Factor]] | None:
    """content, power of s, and first/second-order factors of a ring polynomial (s is its
    generator i); None if an irreducible factor of higher order remains. Factored by
    python-flint (factoring.factors_in): sympy's multivariate factoring takes seconds here."""
    found = factors_in(poly, i, 2)
    if found is None:
        return None
    content, pieces = found
    power = 0
    out: list[_Factor] = []
    for coefficients, e in pieces:
        degree = len(coefficients) - 1
        if degree == 0:
            content *= coefficients[0] ** e
            continue
        if degree == 1 and coefficients[0] == 0:
            power += e
            continue
        out.extend([_Factor(degree, tuple(coefficients))] * e)
    return content, power, out


def _coefficients_in_s(poly, i: int) -> list[sympy.Expr]:
    """Coefficients of the powers of s (generator i) of a ring polynomial, lowest first."""
    return [c.as_expr() for c in coefficients_in(poly, i, poly.ring)]


def standard_form(expr: Any, unit: str) -> StandardForm | None:
    """The standard form of a transfer function in s (a sympy expression or the engine's
    exact value), or None when none applies."""
    try:
        num, den = ring_ratio(expr, (s,))
    except NotRational:
        return None
    generators = list(num.ring.symbols)
    if any(s in g.free_symbols for g in generators if g != s):
        return None  # s under a root: not a rational function of s
    i = generators.index(s)
    order = den.degree(i)
    if order < 1:
        return None
    form = None
    if order <= 2:
        form = _conventional(_coefficients_in_s(num, i), _coefficients_in_s(den, i), den, i, unit)
    if form is None:
        form = _factored(num, den, i, unit)
    if form is None or not _proved(form, expr):
        return None
    return form


def _proved(form: StandardForm, expr: Any) -> bool:
    """Exact proof: the rational skeleton equals `expr`, and each root parameter squares
    to the rational value it stands for."""
    return equal(form.rational, expr) and all(equal(a, b) for a, b in form.checks)


def _conventional(
    n: list[sympy.Expr], d: list[sympy.Expr], den, i: int, unit: str
) -> StandardForm | None:
    """One first- or second-order denominator that does not factor into real poles
    (`n`, `d`: coefficients of the powers of s, lowest first; `den` the denominator)."""
    order = len(d) - 1
    if order not in (1, 2) or d[0] == 0 or len(n) - 1 > order:
        return None
    n = n + [sympy.Integer(0)] * (order + 1 - len(n))
    if order == 2:
        split = _split(den, i)
        if split is None or len(split[2]) != 1 or split[1]:
            return None  # real poles: the factored form reads better
        if d[1] == 0:
            return None
    symbolic = {name: sympy.Symbol(name, positive=True) for name in ("K", "omega_0", "Q")}
    K, w, Q = symbolic["K"], symbolic["omega_0"], symbolic["Q"]
    wz = sympy.Symbol("omega_z", positive=True)
    params: list[Parameter] = []
    zero = None
    if order == 1:
        omega = sympy.cancel(d[0] / d[1])
        params.append(Parameter("omega_0", omega, "rad/s"))
        denominator = 1 + s / w
        if n[1] == 0:
            kind, gain, shape = "first-order low-pass", n[0] / d[0], K / denominator
            text_form, latex_form = "K/(1 + s/ω0)", r"\frac{K}{1 + \frac{s}{\omega_{0}}}"
        elif n[0] == 0:
            kind, gain, shape = "first-order high-pass", n[1] / d[1], K * (s / w) / denominator
            text_form = "K·(s/ω0)/(1 + s/ω0)"
            latex_form = r"K \frac{s/\omega_{0}}{1 + \frac{s}{\omega_{0}}}"
        else:
            zero = sympy.cancel(n[0] / n[1])
            kind, gain = "first-order lead-lag", n[0] / d[0]
            shape = K * (1 + s / wz) / denominator
            text_form = "K·(1 + s/ωz)/(1 + s/ω0)"
            latex_form = r"K \frac{1 + \frac{s}{\omega_{z}}}{1 + \frac{s}{\omega_{0}}}"
            params.append(Parameter("omega_z", zero, "rad/s"))
            params.append(Parameter("z_1", -zero, "rad/s"))
        gain = sympy.cancel(gain)
        params.insert(0, Parameter("K", gain, unit))
        params.insert(2, Parameter("f_0", omega / (2 * sympy.pi), "Hz"))
        params.append(Parameter("p_1", -omega, "rad/s"))
        expression = shape.xreplace({K: gain, w: omega, wz: zero})
        return StandardForm(kind, expression, text_form, latex_form, params, rational=expression)
    c, b, a = d
    w_squared = sympy.cancel(c / a)
    q_w = sympy.cancel(c / b)  # Q·ω0
    omega = sqrt_of(w_squared)
    quality_, proof = quality(a, b, c, omega)
    denominator = s**2 / w**2 + s / (Q * w) + 1
    rational_denominator = s**2 / w_squared + s / q_w + 1
    tail = r"\frac{s^{2}}{\omega_{0}^{2}} + \frac{s}{Q \omega_{0}} + 1"
    if n[1] == 0 and n[2] == 0:
        kind, gain = "second-order low-pass", sympy.cancel(n[0] / c)
        shape, rational = K / denominator, gain / rational_denominator
        text_form, latex_form = "K/(s²/ω0² + s/(Q·ω0) + 1)", rf"\frac{{K}}{{{tail}}}"
    elif n[0] == 0 and n[1] == 0:
        kind, gain = "second-order high-pass", sympy.cancel(n[2] / a)
        shape = K * (s**2 / w**2) / denominator
        rational = gain * (s**2 / w_squared) / rational_denominator
        text_form = "K·(s²/ω0²)/(s²/ω0² + s/(Q·ω0) + 1)"
        latex_form = rf"K \frac{{s^{{2}}/\omega_{{0}}^{{2}}}}{{{tail}}}"
    elif n[0] == 0 and n[2] == 0:
        kind, gain = "second-order band-pass", sympy.cancel(n[1] / b)
        shape = K * (s / (Q * w)) / denominator
        rational = gain * (s / q_w) / rational_denominator
        text_form = "K·(s/(Q·ω0))/(s²/ω0² + s/(Q·ω0) + 1)"
        latex_form = rf"K \frac{{s/(Q \omega_{{0}})}}{{{tail}}}"
    elif n[0] != 0:
        kind, gain = "second-order", sympy.cancel(n[0] / c)
        numerator = sum((sympy.cancel(n[k] / n[0]) * s**k for k in range(3)), sympy.Integer(0))
        shape, rational = K * numerator / denominator, gain * numerator / rational_denominator
        text_form = f"K·({text(numerator)})/(s²/ω0² + s/(Q·ω0) + 1)"
        latex_form = rf"K \frac{{{latex(numerator)}}}{{{tail}}}"
    else:
        return None
    params = [
        Parameter("K", gain, unit),
        Parameter("omega_0", omega, "rad/s"),
        Parameter("f_0", omega / (2 * sympy.pi), "Hz"),
        Parameter("Q", quality_, ""),
        Parameter("zeta", 1 / (2 * quality_), ""),
    ]
    expression = shape.xreplace({K: gain, w: omega, Q: quality_})
    return StandardForm(
        kind,
        expression,
        text_form,
        latex_form,
        params,
        rational,
        [(omega**2, w_squared), proof],
    )


def _factored(num, den, i: int, unit: str) -> StandardForm | None:
    """K·s^k·Π(numerator factors)/Π(denominator factors), each factor normalised."""
    order = den.degree(i)
    top, bottom = _split(num, i), _split(den, i)
    if top is None or bottom is None or not bottom[2]:
        return None
    n_content, n_power, n_factors = top
    d_content, d_power, d_factors = bottom
    gain = sympy.cancel(
        n_content * _constant_product(n_factors) / (d_content * _constant_product(d_factors))
    )
    power = n_power - d_power
    params = [Parameter("K", gain, unit)]
    checks: list[tuple[sympy.Expr, sympy.Expr]] = []
    rational = gain * s**power
    expression = gain * s**power
    pieces_text, pieces_latex = [], []
    for role, group in (("z", n_factors), ("p", d_factors)):
        texts, latexes = [], []
        for k, f in enumerate(group, 1):
            name = f"{role}{k}" if len(group) > 1 else role
            if f.order == 1:
                b, a = f.coefficients
                omega = sympy.cancel(b / a)
                params.append(Parameter(f"omega_{name}", omega, "rad/s"))
                params.append(Parameter(f"{role}_{k}", -omega, "rad/s"))
                closed = 1 + s / omega
                texts.append(f"(1 + s/ω{name})")
                latexes.append(rf"\left(1 + \frac{{s}}{{\omega_{{{name}}}}}\right)")
            else:
                c, b, a = f.coefficients
                if b == 0:
                    return None
                w_squared = sympy.cancel(c / a)
                omega = sqrt_of(w_squared)
                q, proof = quality(a, b, c, omega)
                params += [
                    Parameter(f"omega_0{name}", omega, "rad/s"),
                    Parameter(f"Q_{name}", q, ""),
                ]
                checks += [(omega**2, w_squared), proof]
                closed = s**2 / omega**2 + s / (q * omega) + 1
                texts.append(f"(s²/ω0{name}² + s/(Q{name}·ω0{name}) + 1)")
                latexes.append(
                    rf"\left(\frac{{s^{{2}}}}{{\omega_{{0{name}}}^{{2}}}} + "
                    rf"\frac{{s}}{{Q_{{{name}}} \omega_{{0{name}}}}} + 1\right)"
                )
            if role == "z":
                rational, expression = rational * f.normalised(), expression * closed
            else:
                rational, expression = rational / f.normalised(), expression / closed
        pieces_text.append("·".join(texts))
        pieces_latex.append(" ".join(latexes))
    s_text = {0: "", 1: "·s", -1: "/s"}.get(power, f"·s^{power}")
    numerator = "K" + s_text + ("·" + pieces_text[0] if pieces_text[0] else "")
    text_form = (
        f"{numerator}/({pieces_text[1]})" if len(d_factors) > 1 else f"{numerator}/{pieces_text[1]}"
    )
    s_latex = "" if power == 0 else (f"s^{{{power}}}" if power != 1 else "s")
    latex_form = rf"K {s_latex} \frac{{{pieces_latex[0] or '1'}}}{{{pieces_latex[1]}}}"
    kind = f"factored, order {order}"
    return StandardForm(kind, expression, text_form, latex_form, params, rational, checks)


def _constant_product(factors: list[_Factor]) -> sympy.Expr:
    out = sympy.Integer(1)
    for f in factors:
        out *= f.coefficients[0]
    return out
