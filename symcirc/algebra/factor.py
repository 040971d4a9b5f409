"""Factoring ratios of polynomials for display, quickly.

python-flint factors multivariate integer polynomials in microseconds where sympy takes
tens of milliseconds; sympy's factoring is used with SYMCIRC_POLYNOMIALS=sympy (or when
flint is not installed). Results are sympy expressions `c·Π fᵢ^eᵢ / Π gⱼ^eⱼ` with the
factors' terms in sympy's order.
"""

from __future__ import annotations

from collections.abc import Mapping
from math import lcm

import sympy

from .convert import sympy_ring
from .polynomials import default_backend
from .rational import RationalFunction


def factored(function: RationalFunction,
             atoms: Mapping[str, sympy.Expr] | None = None) -> sympy.Expr:
    """A rational function of the algebra as a factored sympy ratio, atoms put back."""
    num, den = sympy_ring(function, {})
    out = factor_ratio(num, den)
    used = set(function.symbol_names())
    back = {sympy.Symbol(n): e for n, e in (atoms or {}).items() if n in used}
    return out.xreplace(back) if back else out


def factor_ratio(num, den) -> sympy.Expr:
    """A ratio of sympy ring polynomials (over QQ or ZZ), cancelled and factored."""
    if not num:
        return sympy.Integer(0)
    num, den = cancel(num, den)
    top_content, top = factors(num)
    bottom_content, bottom = factors(den)
    shape = sympy.Mul(*[f**e for f, e in top]) / sympy.Mul(*[f**e for f, e in bottom])
    return top_content / bottom_content * shape  # the number last: sympy would spread it


def factors(poly) -> tuple[sympy.Rational, list[tuple[sympy.Expr, int]]]:
    """A ring polynomial as (rational content, [(irreducible factor, multiplicity)])."""
    flint = flint_backend()
    symbols = tuple(poly.ring.symbols)
    if flint is None:
        content, found = sympy.factor_list(poly.as_expr(), *symbols)
        return sympy.Rational(content), list(found)
    scale, integer = _integer(poly)
    context = flint.fmpz_mpoly_ctx.get(tuple(s.name for s in symbols), "lex")
    content, found = context.from_dict(integer).factor()
    return (
        sympy.Rational(int(content), scale),
        [(flint_to_sympy(f, symbols), int(e)) for f, e in found],
    )


def factors_in(poly, i: int, max_degree: int):
    """The irreducible factors of a ring polynomial as coefficient lists in its generator i
    (lowest power first, sympy expressions) with multiplicities, after the rational content:
    `(content, [(coefficients, multiplicity)])`. None as soon as a factor has a degree above
    `max_degree` in that generator: it is then never turned into sympy (the slow part)."""
    flint = flint_backend()
    symbols = tuple(poly.ring.symbols)
    out = []
    if flint is None:
        content, found = sympy.factor_list(poly.as_expr(), *symbols)
        for f, e in found:
            in_x = sympy.Poly(f, symbols[i])
            if in_x.degree() > max_degree:
                return None
            out.append(([c.as_expr() for c in reversed(in_x.all_coeffs())], int(e)))
        return sympy.Rational(content), out
    scale, integer = _integer(poly)
    context = flint.fmpz_mpoly_ctx.get(tuple(s.name for s in symbols), "lex")
    content, found = context.from_dict(integer).factor()
    if any(f.degrees()[i] > max_degree for f, _ in found):
        return None
    for f, e in found:
        by_power: dict[int, list[sympy.Expr]] = {}
        for monom, coeff in f.to_dict().items():
            parts = [sympy.Integer(int(coeff))]
            parts += [
                s if k == 1 else s**k
                for j, (s, k) in enumerate(zip(symbols, monom, strict=True))
                if k and j != i
            ]
            by_power.setdefault(monom[i], []).append(sympy.Mul(*parts))
        top = max(by_power)
        out.append(([sympy.Add(*by_power.get(k, [])) for k in range(top + 1)], int(e)))
    return sympy.Rational(int(content), scale), out


def cancel(num, den):
    """num/den (sympy ring polynomials over QQ) with their greatest common divisor divided
    out and a positive leading coefficient below; flint's gcd when it is there."""
    flint = flint_backend()
    if flint is None or not num or not den:
        return num.cancel(den)
    ring = num.ring
    context = flint.fmpz_mpoly_ctx.get(tuple(str(s) for s in ring.symbols), "lex")
    num_scale, top = _integer(num)
    den_scale, bottom = _integer(den)
    top, bottom = context.from_dict(top), context.from_dict(bottom)
    common = top.gcd(bottom)
    top, bottom = top // common, bottom // common
    sign = -1 if int(bottom.leading_coefficient()) < 0 else 1
    # num/den = (top·den_scale)/(bottom·num_scale): integer coefficients on both sides
    return (_from_flint(ring, top, sign * den_scale), _from_flint(ring, bottom, sign * num_scale))


def _from_flint(ring, poly, scale: int):
    convert = ring.domain.convert
    return ring.from_dict({m: convert(int(c) * scale) for m, c in poly.to_dict().items()})


def _integer(poly) -> tuple[int, dict]:
    """(k, terms) with k·poly having integer coefficients `terms`."""
    pairs = {m: (int(c.numerator), int(c.denominator)) for m, c in poly.items()}
    scale = lcm(*[q for _, q in pairs.values()]) if pairs else 1
    return scale, {m: p * (scale // q) for m, (p, q) in pairs.items()}


def flint_to_sympy(f, symbols: tuple[sympy.Symbol, ...]) -> sympy.Expr:
    """A flint polynomial as a sympy sum of products (built flat: repeated `*=` is slow)."""
    terms = []
    for monom, coeff in f.to_dict().items():
        factors = [sympy.Integer(int(coeff))]
        factors += [s if e == 1 else s**e for s, e in zip(symbols, monom, strict=True) if e]
        terms.append(sympy.Mul(*factors))
    return sympy.Add(*terms)


def flint_backend():
    """The python-flint module, or None when the sympy backend is selected."""
    if default_backend() != "flint":
        return None
    import flint

    return flint


def coefficients_in(poly, i: int, poly_ring) -> list:
    """Coefficients of the powers of generator i (as polynomials without it)."""
    parts: dict[int, dict] = {}
    for monom, coeff in poly.terms():
        rest = monom[:i] + (0,) + monom[i + 1 :]
        parts.setdefault(monom[i], {})[rest] = coeff
    degree = max(parts, default=0)
    return [
        poly_ring.from_dict(parts[k]) if k in parts else poly_ring.zero for k in range(degree + 1)
    ]
