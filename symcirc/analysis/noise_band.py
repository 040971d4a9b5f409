"""Noise over a band: ∫ |H(j·2π·f)|²·S(f) df from f1 to f2 for a rational response H(s) and
a one-sided density S(f) = S0·(1 + fc/f) (white, with a 1/f corner fc), and what follows from
it: rms noise, equivalent noise bandwidth, signal-to-noise ratio and noise-free resolution.

The integral is split into its white part ∫|H|² df and its 1/f part ∫|H|²/f df. Each is a
closed form where one exists, built from the coefficients of H, so it stays exact in the
parts: a response of order 0, 1 or 2 over any band (logarithms and arc tangents of the
partial fractions of |H|² in f²; for order 2 the case Q > 1/2, Q < 1/2 or Q = 1/2 is
decided exactly at the nominal values), and the white part over 0 … ∞ of a stable response
of any order (the rational integral of the response's coefficients). Everything else is
integrated numerically at the nominal values (adaptive Gauss–Kronrod quadrature in ln f,
split at the corner frequencies), and the result says which method gave it.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from fractions import Fraction
from typing import Any

import sympy

from ..algebra.convert import atoms_of, restored, to_function
from ..algebra.polynomials import PolynomialRing
from ..model.units import eng
from ..quantities.noise import FREQUENCY
from ..quantities.stability import rhp_count
from .response import Response, ResponseError
from .values import rational

WHITE, FLICKER = "white", "1/f"
"""The two weights of |H|²: df (white density) and df/f (the 1/f part of the density)."""

CREST_FACTOR = Fraction(33, 10)
"""Peak of Gaussian noise in rms units for the noise-free resolution: |x| > 3.3·σ for 0.1 %
of the time, so the peak-to-peak noise is taken as 6.6·σ (common practice in converter data
sheets and application notes)."""

TAIL_NEPERS = 40
"""The numerical path replaces 0 and ∞ by the outermost corner frequencies divided and
multiplied by e^40 (17 decades): what lies beyond is below 10⁻¹⁷ of the integral."""

NUMERIC_TOLERANCE = 1e-10
"""Relative accuracy asked of the numerical integration."""

HURWITZ_ORDER = 4
"""Highest order whose 0 … ∞ integral is given in closed form while its coefficients hold
symbols without values (above, the determinant grows too fast to be worth reading)."""

Endpoint = Any
"""A frequency in Hz: an int, Fraction, sympy number, or sympy.oo / math.inf for ∞."""


@dataclass(frozen=True)
class Density:
    """One-sided power spectral density S(f) = white·(1 + corner/f) in unit²/Hz; white
    noise when corner is 0 (an amplitude density e_n·√(1 + f_c/f) has white = e_n²)."""

    white: sympy.Expr
    corner: sympy.Expr = sympy.Integer(0)


@dataclass(frozen=True)
class Integral:
    """∫ |H|²·w df over a band for one weight w (1 or 1/f): closed form or None, the value at
    the nominal values or None, the estimated absolute error of that value (0 for a closed
    form), and how it was found (a sentence)."""

    expression: sympy.Expr | None
    value: float | None
    error: float
    method: str


@dataclass(frozen=True)
class BandNoise:
    """The noise of one density through one response over f1 … f2 (unit² and unit)."""

    low: sympy.Expr
    high: sympy.Expr
    mean_square: sympy.Expr | None
    mean_square_value: float | None
    error: float
    method: str

    @property
    def rms(self) -> sympy.Expr | None:
        return None if self.mean_square is None else sympy.sqrt(self.mean_square)

    @property
    def rms_value(self) -> float | None:
        value = self.mean_square_value
        return None if value is None else math.sqrt(max(value, 0.0))


@dataclass(frozen=True)
class NoiseBandwidth:
    """Equivalent noise bandwidth in Hz: ∫0^∞ |H|² df / |H_ref|², with the reference named."""

    expression: sympy.Expr | None
    value: float | None
    reference: str
    method: str


# ---------------------------------------------------------------- integrals of |H|²


def frequency(value: Endpoint) -> sympy.Expr:
    """A band limit as an exact sympy number (∞ as sympy.oo)."""
    if isinstance(value, sympy.Basic):
        return value
    if isinstance(value, float):
        return sympy.oo if value == math.inf else rational(Fraction(value))
    return rational(Fraction(value))


def response_of(h: Any) -> Response:
    """H as coefficient lists in s (a Response, a sympy expression or a RationalFunction),
    without a common power of s in numerator and denominator."""
    if not isinstance(h, Response):
        h = Response.of(h.to_sympy() if hasattr(h, "to_sympy") else h)
    low = min(_lowest(h.numerator, len(h.numerator)), _lowest(h.denominator, 0))
    if low:
        h = Response(h.numerator[low:], h.denominator[low:])
    return h


def gain_integral(h: Any, low: Endpoint, high: Endpoint, weight: str = WHITE,
                  nominals: Mapping[sympy.Symbol, Fraction] | None = None) -> Integral:
    """∫ |H(j·2π·f)|² df (weight WHITE) or ∫ |H(j·2π·f)|²/f df (weight FLICKER) from `low`
    to `high` Hz, in closed form where one exists, else numerically at `nominals`."""
    nominals = nominals or {}
    response = response_of(h)
    f1, f2 = frequency(low), frequency(high)
    if not (f1.is_number and f2.is_number and f1 >= 0 and f2 > f1):
        raise ResponseError(f"a noise band runs from a frequency f1 ≥ 0 up to f2 > f1, not "
                            f"{_hz(f1)} … {_hz(f2)}")
    if all(c == 0 for c in response.numerator):
        return Integral(sympy.Integer(0), 0.0, 0.0, "exact: the response is zero")
    _check_convergence(response, f1, f2, weight)
    values = _stable_values(response, nominals)
    found = _closed_form(response, f1, f2, weight, values)
    if found is not None:
        expression, method = found
        value = None
        if values is not None:  # the same closed form built from numbers: fast to evaluate
            numeric = Response(*(tuple(rational(v) for v in part) for part in values))
            value = _value(_closed_form(numeric, f1, f2, weight, values)[0], {})
        return Integral(expression, value, 0.0, method)
    if values is None:
        missing = sorted(str(x) for c in (*response.numerator, *response.denominator)
                         for x in c.free_symbols - set(nominals))
        raise ResponseError(f"this band needs numerical integration, which needs a value for "
                            f"{', '.join(sorted(set(missing)))}")
    value, error, method = _numeric(values[0], values[1], f1, f2, weight)
    return Integral(None, value, error, method)


def _stable_values(response: Response, nominals: Mapping[sympy.Symbol, Fraction]
                   ) -> tuple[list[Fraction], list[Fraction]] | None:
    """The response's coefficients at the nominal values (None without them), refused when
    it has a pole in the right half-plane there."""
    values = response.nominal(nominals)
    if values is not None:
        unstable, how = rhp_count(values[1])
        if unstable:
            raise ResponseError(f"Unstable: {unstable} pole{'s' if unstable > 1 else ''} in "
                                f"the right half-plane at the nominal values ({how}); the "
                                "circuit does not settle, so its noise has no steady value")
    return values


def band_noise(h: Any, density: Density, low: Endpoint, high: Endpoint,
               nominals: Mapping[sympy.Symbol, Fraction] | None = None) -> BandNoise:
    """The mean-square noise S0·(∫|H|² df + fc·∫|H|²/f df) over `low` … `high` Hz; a
    density that is a rational function of f (an impedance's 4·k_B·T·Re{Y}) numerically."""
    nominals = nominals or {}
    h = response_of(h)
    white = _number(density.white)
    if FREQUENCY in white.free_symbols:
        return _shaped_band(h, white, frequency(low), frequency(high), nominals)
    corner = _number(density.corner)
    parts = [(sympy.Integer(1), gain_integral(h, low, high, WHITE, nominals))]
    if corner != 0:
        parts.append((corner, gain_integral(h, low, high, FLICKER, nominals)))
    closed = all(i.expression is not None for _, i in parts)
    expression = white * sympy.Add(*[w * i.expression for w, i in parts]) if closed else None
    value: float | None = None
    error = 0.0
    scale = _value(white, nominals)
    weights = [_value(w, nominals) for w, _ in parts]
    if scale is not None and None not in weights and all(i.value is not None for _, i in parts):
        value = scale * sum(w * i.value for w, (_, i) in zip(weights, parts, strict=True))
        error = abs(scale) * sum(abs(w) * i.error
                                 for w, (_, i) in zip(weights, parts, strict=True))
    methods = [i.method for _, i in parts]
    if len(methods) == 2:
        method = (methods[0] if methods[0] == methods[1] else
                  f"white part: {methods[0]}; 1/f part: {methods[1]}")
    else:
        method = methods[0]
    return BandNoise(frequency(low), frequency(high), expression, value, error, method)


def _shaped_band(response: Response, density: sympy.Expr, f1: sympy.Expr, f2: sympy.Expr,
                 nominals: Mapping[sympy.Symbol, Fraction]) -> BandNoise:
    """∫|H|²·S(f) df at the nominal values for a density S that is a rational function of f."""
    if not (f1.is_number and f2.is_number and f1 >= 0 and f2 > f1):
        raise ResponseError(f"a noise band runs from a frequency f1 ≥ 0 up to f2 > f1, not "
                            f"{_hz(f1)} … {_hz(f2)}")
    if all(c == 0 for c in response.numerator):
        return BandNoise(f1, f2, sympy.Integer(0), 0.0, 0.0, "exact: the response is zero")
    _check_convergence(response, f1, f2, WHITE)
    values = _stable_values(response, nominals)
    at_nominal = density.xreplace({x: rational(v) for x, v in nominals.items()})
    missing = {str(x) for x in at_nominal.free_symbols - {FREQUENCY}}
    if values is None:
        missing |= {str(x) for c in (*response.numerator, *response.denominator)
                    for x in c.free_symbols - set(nominals)}
    if missing:
        raise ResponseError(f"a density that depends on f is integrated numerically, which "
                            f"needs a value for {', '.join(sorted(missing))}")
    numerator, denominator = sympy.fraction(sympy.cancel(sympy.together(at_nominal)))
    shape = (sympy.Poly(numerator, FREQUENCY).all_coeffs()[::-1],
             sympy.Poly(denominator, FREQUENCY).all_coeffs()[::-1])
    value, error, method = _numeric(values[0], values[1], f1, f2, WHITE, shape)
    method += "; the density is a function of f (4·k_B·T·Re{Y(j2πf)} of an impedance)"
    return BandNoise(f1, f2, None, value, error, method)


def _check_convergence(response: Response, f1: sympy.Expr, f2: sympy.Expr, weight: str) -> None:
    """Refuse a band over which the integral grows without bound."""
    n, d = response.numerator, response.denominator
    if f1 == 0:
        # |H|² ~ f^(2·(ln − ld)) near 0; times 1/f for the 1/f part
        excess = 2 * (_lowest(n, len(n)) - _lowest(d, 0)) - (1 if weight == FLICKER else 0)
        if excess <= -1:
            if weight == FLICKER:
                raise ResponseError(
                    "1/f noise integrated down to 0 Hz is unbounded where the response passes "
                    "DC; give a lower band limit f1 > 0 (e.g. the inverse of the measurement "
                    "time)")
            raise ResponseError("the noise down to 0 Hz is unbounded: the response has a pole "
                                "at s = 0; give a lower band limit f1 > 0")
    if f2 == sympy.oo and _degree(n) >= _degree(d):
        raise ResponseError("the noise up to ∞ is unbounded: |H| does not fall at high "
                            "frequencies; give an upper band limit f2 (the bandwidth of what "
                            "follows)")


def _lowest(coefficients: Sequence[sympy.Expr], empty: int) -> int:
    return next((k for k, c in enumerate(coefficients) if c != 0), empty)


def _degree(coefficients: Sequence[sympy.Expr]) -> int:
    return max((k for k, c in enumerate(coefficients) if c != 0), default=-1)


def _value(expression: sympy.Expr, nominals: Mapping[sympy.Symbol, Fraction]) -> float | None:
    """A closed form's value at the nominal values (None when a symbol has none)."""
    expression = _number(expression)
    if expression.free_symbols - set(nominals):
        return None
    point = {x: rational(nominals[x]) for x in expression.free_symbols}
    value = sympy.N(expression.xreplace(point), 20)
    if not value.is_real:
        value = sympy.re(value)  # rounding residue of a real closed form
    return float(value)


def _number(value: Any) -> sympy.Expr:
    """A sympy expression as it is; an int or Fraction as an exact sympy number."""
    return value if isinstance(value, sympy.Basic) else rational(Fraction(value))


def _hz(value: sympy.Expr) -> str:
    return "∞ Hz" if value == sympy.oo else eng(float(value), "Hz")


# ---------------------------------------------------------------- closed forms


@dataclass(frozen=True)
class _Piece:
    """coefficient·[φ(f2) − φ(f1)] of an antiderivative φ; for a logarithm φ = ln(argument)
    and the difference is one ln(argument(f2)/argument(f1)). `at_zero` and `at_infinity`
    are φ's (or the argument's) limits, None where it has none (the integral then diverges
    unless the coefficient is 0, which the convergence check has ensured)."""

    coefficient: sympy.Expr
    function: Callable[[sympy.Expr], sympy.Expr]
    at_zero: sympy.Expr | None
    at_infinity: sympy.Expr | None
    logarithm: bool = False

    def at(self, f: sympy.Expr) -> sympy.Expr:
        if f == 0 or f == sympy.oo:
            limit = self.at_zero if f == 0 else self.at_infinity
            if limit is None:
                raise ResponseError("the integral diverges at " + _hz(f))
            return limit
        return self.function(f)

    def definite(self, f1: sympy.Expr, f2: sympy.Expr) -> sympy.Expr:
        if self.coefficient == 0:
            return sympy.Integer(0)
        if self.logarithm:
            ratio = self.at(f2) / self.at(f1)
            # unevaluated where symbols are: sympy would try to simplify the argument
            return self.coefficient * sympy.log(ratio, evaluate=ratio.is_number)
        return self.coefficient * (self.at(f2) - self.at(f1))


def _closed_form(response: Response, f1: sympy.Expr, f2: sympy.Expr, weight: str,
                 values: tuple[list[Fraction], list[Fraction]] | None
                 ) -> tuple[sympy.Expr, str] | None:
    """(closed form, method) of the band integral, or None where there is none."""
    order = _degree(response.denominator)
    d0 = response.denominator[0]
    if weight == WHITE and f1 == 0 and f2 == sympy.oo and order >= 1 and d0 != 0 and (
            order <= HURWITZ_ORDER or values is not None):
        return (_white_to_infinity(response, values),
                "closed form: the integral over 0 … ∞ of a stable rational response, from its "
                "coefficients")
    if order == 0:
        pieces = _order_zero(response, weight)
        method = "closed form (a response without poles)"
    elif order == 1 and d0 != 0 and _degree(response.numerator) <= 1:
        pieces = _first_order(response, weight)
        method = "closed form (first-order response)"
    elif order == 2 and d0 != 0 and _degree(response.numerator) <= 2:
        if values is None:
            return None
        d = values[1]
        sign = _sign(d[1] * d[1] - 4 * d[0] * d[2])
        pieces = _second_order(response, weight, sign)
        q = {-1: "Q > 1/2", 1: "Q < 1/2", 0: "Q = 1/2"}[sign]
        method = f"closed form (second-order response, {q} at the nominal values)"
    else:
        return None
    total = sympy.Add(*[p.definite(f1, f2) for p in pieces])
    return total, method


def _atan(x: sympy.Expr) -> sympy.Expr:
    """atan(x), unevaluated where symbols are (sympy would try to simplify the argument)."""
    return sympy.atan(x, evaluate=x.is_number)


def _sign(value: Fraction) -> int:
    return (value > 0) - (value < 0)


def _padded(coefficients: Sequence[sympy.Expr], size: int) -> list[sympy.Expr]:
    return list(coefficients) + [sympy.Integer(0)] * (size - len(coefficients))


def _order_zero(response: Response, weight: str) -> list[_Piece]:
    gain2 = (response.numerator[0] / response.denominator[0]) ** 2
    if weight == WHITE:
        return [_Piece(gain2, lambda f: f, sympy.Integer(0), None)]
    return [_Piece(gain2, lambda f: f, None, None, logarithm=True)]


def _first_order(response: Response, weight: str) -> list[_Piece]:
    """H = (n0 + n1·s)/(d0 + d1·s): |H|² = H∞² + (H0² − H∞²)·fp²/(fp² + f²), with the DC
    gain H0 = n0/d0, the high-frequency gain H∞ = n1/d1 and the pole at fp = d0/(2π·d1)."""
    n0, n1 = _padded(response.numerator, 2)
    d0, d1 = response.denominator
    fp = d0 / (2 * sympy.pi * d1)
    h0, hinf = (n0 / d0) ** 2, (n1 / d1) ** 2
    if weight == WHITE:
        # ∫ fp²/(fp² + f²) df = fp·atan(f/fp)
        return [_Piece(hinf, lambda f: f, sympy.Integer(0), None),
                _Piece((h0 - hinf) * fp, lambda f: _atan(f / fp), sympy.Integer(0),
                       sympy.pi / 2)]
    # ∫ |H|²/f df = (H0²/2)·ln(f²/(fp² + f²)) + (H∞²/2)·ln(fp² + f²)
    return [_Piece(h0 / 2, lambda f: f**2 / (fp**2 + f**2), None, sympy.Integer(1), True),
            _Piece(hinf / 2, lambda f: fp**2 + f**2, fp**2, None, True)]


def _second_order(response: Response, weight: str, sign: int) -> list[_Piece]:
    """H = N/D with D of degree 2 and N of degree ≤ 2. In Hz, |D|² = c²·(f⁴ + p·f² + q)
    (c the coefficient of f² in D(j·2π·f), q = f0⁴, p = f0²·(1/Q² − 2)) and
    |N|²/c² = A2·f⁴ + A1·f² + A0; `sign` is the sign of p² − 4q, that of d1² − 4·d0·d2
    (negative for Q > 1/2)."""
    two_pi = 2 * sympy.pi
    a, b, c = (response.denominator[k] * two_pi**k for k in range(3))
    alpha, beta, gamma = (x * two_pi**k for k, x in enumerate(_padded(response.numerator, 3)))
    a2, a1, a0 = (_tidy((gamma / c) ** 2), _tidy((beta**2 - 2 * alpha * gamma) / c**2),
                  _tidy((alpha / c) ** 2))
    p, q = _tidy((b**2 - 2 * a * c) / c**2), _tidy((a / c) ** 2)
    zero, one = sympy.Integer(0), sympy.Integer(1)
    if weight == WHITE:
        # |H|² = A2 + (R1·f² + R0)/(f⁴ + p·f² + q)
        r1, r0 = _tidy(a1 - a2 * p), _tidy(a0 - a2 * q)
        pieces = [_Piece(a2, lambda f: f, zero, None)]
        if sign < 0:  # f⁴ + p·f² + q = (f² + r·f + m)(f² − r·f + m), m = f0²
            m = _tidy(a / c)
            r = sympy.sqrt(_tidy(4 * a * c - b**2)) / c
            g = _tidy(b / c)  # f0/Q; its sign does not matter: (1/g)·atan(y/g) is even in g
            big_b = _tidy(r0 / (2 * m))
            big_a = (big_b - r1 / 2) / r
            return pieces + [
                _Piece(big_a / 2, lambda f: (f**2 + r * f + m) / (f**2 - r * f + m),
                       one, one, True),
                _Piece((2 * big_b + r1) / (2 * g),
                       lambda f: _atan((2 * f + r) / g) + _atan((2 * f - r) / g),
                       zero, sympy.pi)]
        # √(p² − 4q) up to a sign, which only swaps the two poles
        root = b * sympy.sqrt(_tidy(b**2 - 4 * a * c)) / c**2
        if sign > 0:  # (f² + fa²)(f² + fb²): the two real poles fa, fb in Hz
            u, v = _tidy((p - root) / 2), _tidy((p + root) / 2)
            fa, fb = sympy.sqrt(u), sympy.sqrt(v)
            return pieces + [
                _Piece((r0 - r1 * u) / ((v - u) * fa), lambda f: _atan(f / fa), zero,
                       sympy.pi / 2),
                _Piece((r1 * v - r0) / ((v - u) * fb), lambda f: _atan(f / fb), zero,
                       sympy.pi / 2)]
        u = p / 2  # a double pole at fa = √u
        fa = sympy.sqrt(u)
        return pieces + [
            _Piece(r1 / fa, lambda f: _atan(f / fa), zero, sympy.pi / 2),
            _Piece(r0 - r1 * u,
                   lambda f: f / (2 * u * (f**2 + u)) + _atan(f / fa) / (2 * u * fa),
                   zero, sympy.pi / (4 * u * fa))]
    # with x = f²: ∫|H|²/f df = ½·∫ (A2·x² + A1·x + A0)/(x·(x² + p·x + q)) dx
    #   = ½·[(A0/2q)·ln(x²/(x² + p·x + q)) + (A2/2)·ln(x² + p·x + q) + K·J(x)]
    e, g = a2 - a0 / q, a1 - a0 * p / q
    k = _tidy((g - e * p / 2) / 2)
    pieces = [
        _Piece(a0 / (4 * q), lambda f: f**4 / (f**4 + p * f**2 + q), None, one, True),
        _Piece(a2 / 4, lambda f: f**4 + p * f**2 + q, q, None, True)]
    if sign < 0:  # J = (2/√(4q − p²))·atan((2x + p)/√(4q − p²))
        root = sympy.sqrt(_tidy(4 * q - p**2))
        return pieces + [_Piece(2 * k / root, lambda f: _atan((2 * f**2 + p) / root),
                                _atan(p / root), sympy.pi / 2)]
    if sign > 0:  # J = ln((x + u)/(x + v))/(v − u)
        root = b * sympy.sqrt(_tidy(b**2 - 4 * a * c)) / c**2
        u, v = _tidy((p - root) / 2), _tidy((p + root) / 2)
        return pieces + [_Piece(k / (v - u), lambda f: (f**2 + u) / (f**2 + v), u / v, one,
                                True)]
    u = p / 2  # J = −1/(x + u)
    return pieces + [_Piece(k, lambda f: -1 / (f**2 + u), -1 / u, zero)]


TIDY_OPERATIONS = 400
"""Intermediate closed forms up to this many operations are brought to one fraction."""


def _tidy(expression: sympy.Expr) -> sympy.Expr:
    """A small intermediate closed form as one fraction (a large one as it is: cancelling
    costs more than it saves)."""
    if not expression.free_symbols or sympy.count_ops(expression) > TIDY_OPERATIONS:
        return expression
    atoms = atoms_of(expression)
    tidy = restored(to_function(expression, PolynomialRing(())), atoms)
    # the algebra names its variables: give back the caller's symbols (and assumptions)
    return tidy.xreplace({sympy.Symbol(x.name): x for x in expression.free_symbols})


def _white_to_infinity(response: Response,
                       values: tuple[list[Fraction], list[Fraction]] | None) -> sympy.Expr:
    """∫0^∞ |H(j·2π·f)|² df = I/2 with I = (1/2π)·∫ |H(jω)|² dω over all ω, for a stable
    strictly proper H = B/A of order n: I = x_(n−1)/a_n, where X of degree n − 1 solves
    B(s)·B(−s) = X(s)·A(−s) + X(−s)·A(s) (sum of the residues of X/A in the left
    half-plane). The even powers of s give n linear equations, solved by Cramer's rule."""
    a = list(response.denominator)
    n = len(a) - 1
    b = _padded(response.numerator, n)
    # coefficient of s^(2j) in B(s)·B(−s)
    rhs = [sympy.Add(*[(-1) ** k * b[i] * b[k] for i in range(n) for k in range(n)
                       if i + k == 2 * j]) for j in range(n)]
    # X(s)·A(−s) + X(−s)·A(s) has, at s^(2j), Σ_i 2·(−1)^i·a_(2j−i)·x_i
    matrix = sympy.Matrix(n, n, lambda j, i: 2 * (-1) ** i * a[2 * j - i]
                          if 0 <= 2 * j - i <= n else 0)
    top = matrix.copy()
    top[:, n - 1] = sympy.Matrix(rhs)
    integral = top.det(method="berkowitz") / (matrix.det(method="berkowitz") * a[n])
    return sympy.factor_terms(sympy.cancel(integral / 2))


# ---------------------------------------------------------------- numerical path


def _numeric(numerator: Sequence[Fraction], denominator: Sequence[Fraction], f1: sympy.Expr,
             f2: sympy.Expr, weight: str,
             shape: tuple[Sequence[Any], Sequence[Any]] | None = None
             ) -> tuple[float, float, str]:
    """(value, estimated error, method) by adaptive Gauss–Kronrod quadrature in u = ln f,
    with the corner frequencies as break points; 0 and ∞ become the outermost corners
    divided and multiplied by e^TAIL_NEPERS. `shape`, a density as a ratio of polynomials
    in f (lowest power first), multiplies |H|², its own corners added to the break points."""
    import warnings

    import numpy as np
    from scipy.integrate import IntegrationWarning, quad

    squared = magnitude_squared(numerator, denominator)
    corners = _corners(numerator, denominator)
    density = None
    if shape is not None:
        density = _rational_in_f(*shape)
        corners = _roots_hz(shape[0]) + _roots_hz(shape[1]) + corners
    low = math.log(float(f1)) if f1 != 0 else math.log(min(corners)) - TAIL_NEPERS
    high = math.log(float(f2)) if f2 != sympy.oo else math.log(max(corners)) + TAIL_NEPERS
    breaks = sorted({math.log(c) for c in corners if low < math.log(c) < high})

    def integrand(u: float) -> float:
        f = math.exp(u)
        value = float(squared(np.array([f]))[0]) * (f if weight == WHITE else 1.0)
        return value if density is None else value * density(f)

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", IntegrationWarning)
        value, error = quad(integrand, low, high, points=breaks or None, limit=400,
                            epsabs=0.0, epsrel=NUMERIC_TOLERANCE)
    method = (f"numerical: adaptive Gauss–Kronrod quadrature (scipy.integrate.quad) in ln f "
              f"from {eng(math.exp(low), 'Hz')} to {eng(math.exp(high), 'Hz')}, split at the "
              f"corner frequencies; estimated error {error / abs(value) if value else error:.1e}"
              f"{' relative' if value else ''}")
    if any(issubclass(w.category, IntegrationWarning) for w in caught):
        method += " (the integrator did not reach its tolerance)"
    return value, error, method


def magnitude_squared(numerator: Sequence[Any], denominator: Sequence[Any]
                      ) -> Callable[[Any], Any]:
    """f (Hz, a numpy array) → |H(j·2π·f)|², from the poles and zeros (no overflow of the
    powers of f far beyond the corners); coefficients lowest power first."""
    import numpy as np

    n = _trimmed(numerator)
    d = _trimmed(denominator)
    zeros = np.roots(n[::-1]) if len(n) > 1 else np.array([])
    poles = np.roots(d[::-1]) if len(d) > 1 else np.array([])
    gain2 = (n[-1] / d[-1]) ** 2

    def squared(f):
        s = 2j * np.pi * np.asarray(f, dtype=float)
        out = np.full(s.shape, gain2)
        for z in zeros:
            out *= np.abs(s - z) ** 2
        for p in poles:
            out /= np.abs(s - p) ** 2
        return out

    return squared


def _rational_in_f(numerator: Sequence[Any], denominator: Sequence[Any]
                   ) -> Callable[[float], float]:
    """f → N(f)/D(f) from the roots in f (no overflow of high powers of f)."""
    import numpy as np

    n, d = _trimmed(numerator), _trimmed(denominator)
    zeros = np.roots(n[::-1]) if len(n) > 1 else np.array([])
    poles = np.roots(d[::-1]) if len(d) > 1 else np.array([])
    scale = n[-1] / d[-1]

    def value(f: float) -> float:
        out = complex(scale)
        for z in zeros:
            out *= f - z
        for p in poles:
            out /= f - p
        return out.real

    return value


def _roots_hz(coefficients: Sequence[Any]) -> list[float]:
    """|roots| of a polynomial in f (Hz), the nonzero ones."""
    import numpy as np

    c = _trimmed(coefficients)
    return [abs(r) for r in np.roots(c[::-1]) if abs(r) > 0] if len(c) > 1 else []


def _trimmed(coefficients: Sequence[Any]) -> list[float]:
    values = [float(c) for c in coefficients]
    while len(values) > 1 and values[-1] == 0:
        values.pop()
    return values


def _corners(numerator: Sequence[Any], denominator: Sequence[Any]) -> list[float]:
    """|poles| and |zeros| in Hz (nonzero ones); 1 Hz when there is none."""
    import numpy as np

    found = []
    for c in (_trimmed(numerator), _trimmed(denominator)):
        if len(c) > 1:
            found += [abs(r) / (2 * math.pi) for r in np.roots(c[::-1]) if abs(r) > 0]
    return found or [1.0]


# ---------------------------------------------------------------- what follows from it


def noise_bandwidth(h: Any, nominals: Mapping[sympy.Symbol, Fraction] | None = None
                    ) -> NoiseBandwidth:
    """The equivalent noise bandwidth ∫0^∞ |H(j·2π·f)|² df / |H_ref|² in Hz: the width of the
    brick-wall filter of gain |H_ref| that passes the same white noise. The reference is the
    DC gain where H passes DC, the centre gain K of a second-order band-pass, and else the
    peak of |H| at the nominal values."""
    nominals = nominals or {}
    response = response_of(h)
    try:
        integral = gain_integral(response, 0, sympy.oo, WHITE, nominals)
    except ResponseError as problem:
        if "does not fall" in str(problem):
            raise ResponseError("no finite noise bandwidth: |H| does not fall at high "
                                "frequencies (a high-pass or flat response)") from None
        raise
    reference2: sympy.Expr | None = None
    dc = response.dc()
    if dc != 0:
        reference2, reference = dc**2, "the DC gain |H(0)|"
    elif response.order == 2 and response.kind() == "band-pass":
        reference2 = (response.numerator[1] / response.denominator[1]) ** 2
        reference = "the centre gain K of the band-pass"
    if reference2 is not None and integral.expression is not None:
        expression = sympy.factor_terms(sympy.cancel(integral.expression / reference2))
        return NoiseBandwidth(expression, _value(expression, nominals), reference,
                              integral.method)
    values = response.nominal(nominals)
    if values is None or integral.value is None:
        raise ResponseError("the noise bandwidth of this response needs a value for every "
                            "symbol (its peak gain is found numerically)")
    if reference2 is not None:
        peak2 = _value(reference2, nominals)
    else:
        peak_frequency, peak2 = peak(values[0], values[1])
        reference = f"the peak gain |H| (at {eng(peak_frequency, 'Hz')})"
    return NoiseBandwidth(None, integral.value / peak2, reference, integral.method)


def peak(numerator: Sequence[Any], denominator: Sequence[Any]) -> tuple[float, float]:
    """(frequency in Hz, |H|²) of the largest |H(j·2π·f)| at f > 0, numerically: a dense
    logarithmic sweep over the corners ± 3 decades, refined between its neighbours."""
    import numpy as np
    from scipy.optimize import minimize_scalar

    squared = magnitude_squared(numerator, denominator)
    corners = _corners(numerator, denominator)
    grid = np.linspace(math.log(min(corners)) - 7, math.log(max(corners)) + 7, 4001)
    values = squared(np.exp(grid))
    k = int(np.argmax(values))
    low, high = grid[max(k - 1, 0)], grid[min(k + 1, len(grid) - 1)]
    best = minimize_scalar(lambda u: -float(squared(np.array([math.exp(u)]))[0]),
                           bounds=(low, high), method="bounded",
                           options={"xatol": 1e-12})
    if -best.fun >= values[k]:
        return math.exp(best.x), float(-best.fun)
    return math.exp(grid[k]), float(values[k])


def signal_to_noise(signal_rms: sympy.Expr, noise_mean_square: sympy.Expr) -> sympy.Expr:
    """SNR in dB of a signal of rms value `signal_rms` against noise of mean square
    `noise_mean_square`: 10·log10(U_s²/U_n²)."""
    return 10 * sympy.log(_number(signal_rms) ** 2 / noise_mean_square, 10)


def noise_free_bits(full_scale: sympy.Expr, noise_rms: sympy.Expr) -> sympy.Expr:
    """Noise-free resolution in bits: log2(FSR / (2·CREST_FACTOR·U_n,rms)), the number of
    codes of the full-scale range that the peak-to-peak noise (6.6 σ) leaves steady."""
    return sympy.log(_number(full_scale) / (2 * rational(CREST_FACTOR) * noise_rms), 2)


def effective_bits(full_scale: sympy.Expr, noise_rms: sympy.Expr) -> sympy.Expr:
    """Effective resolution in bits: log2(FSR / U_n,rms) (rms noise taken as one code)."""
    return sympy.log(_number(full_scale) / noise_rms, 2)


def value_of(expression: sympy.Expr, nominals: Mapping[sympy.Symbol, Fraction]
             ) -> float | None:
    """A closed form of this module at the nominal values (None when a symbol has none)."""
    return _value(expression, nominals)


# ---------------------------------------------------------------- densities for a figure


def density_values(h: Any, density: Density, frequencies: Any,
                   nominals: Mapping[sympy.Symbol, Fraction]) -> Any:
    """|H(j·2π·f)|²·S(f) at `frequencies` (Hz, numpy) at the nominal values (unit²/Hz)."""
    import numpy as np

    response = response_of(h)
    values = response.nominal(nominals)
    f = np.asarray(frequencies, dtype=float)
    shaped = _number(density.white)
    if FREQUENCY in shaped.free_symbols:
        at_nominal = shaped.xreplace({x: rational(v) for x, v in nominals.items()})
        if values is None or at_nominal.free_symbols - {FREQUENCY}:
            raise ResponseError("a density over frequency needs a value for every symbol")
        numerator, denominator = sympy.fraction(sympy.cancel(sympy.together(at_nominal)))
        shape = _rational_in_f(sympy.Poly(numerator, FREQUENCY).all_coeffs()[::-1],
                               sympy.Poly(denominator, FREQUENCY).all_coeffs()[::-1])
        return magnitude_squared(*values)(f) * np.array([shape(x) for x in f])
    white, corner = _value(density.white, nominals), _value(density.corner, nominals)
    if values is None or white is None or corner is None:
        raise ResponseError("a density over frequency needs a value for every symbol")
    return magnitude_squared(*values)(f) * white * (1 + corner / f)


def plot_range(responses: Sequence[Any], nominals: Mapping[sympy.Symbol, Fraction],
               corners: Sequence[float] = ()) -> tuple[float, float]:
    """A frequency range for a density figure: the poles, zeros and 1/f corners of every
    response ± 2 decades, on whole decades."""
    found = [c for c in corners if c > 0]
    for h in responses:
        values = response_of(h).nominal(nominals)
        if values is not None:
            found += [c for c in _corners(*values)]
    found = found or [1.0]
    low = 10.0 ** (math.floor(math.log10(min(found))) - 2)
    high = 10.0 ** (math.ceil(math.log10(max(found))) + 2)
    return low, high
