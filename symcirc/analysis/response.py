"""Frequency-domain design parameters of a rational response H(s) = N(s)/D(s).

Closed forms from the coefficients of the powers of s: DC and high-frequency gain; for a
first-order denominator the pole (and zero) frequency and time constant; for a second-order
one K, ω0 = √(d0/d2), Q = (d0/d1)/ω0 (the sign of d1 is the sign of Q: Q < 0 is a
right-half-plane pair), ζ = 1/(2Q), and for band-pass and notch responses the centre and the
−3 dB bandwidth ω0/Q = d1/d2. Poles and zeros: closed forms up to degree 2, above that exact
numbers at the nominal values by real-root isolation (sympy's CRootOf). The −3 dB
frequencies, the response at a frequency and its Monte Carlo band over frequency are numbers
at the nominal values (numpy, vectorised over samples and frequencies).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from fractions import Fraction
from functools import cached_property

import sympy

from ..forms.standard import quality, sqrt_of
from ..model.circuit import LAPLACE
from .values import exact_value, rational

s = LAPLACE
TWO_PI = 2 * sympy.pi


class ResponseError(ValueError):
    """A part that this response does not have (message written for the user)."""


@dataclass(frozen=True, eq=False)
class Response:
    """H(s) as coefficient lists of the powers of s, lowest first (sympy expressions)."""

    numerator: tuple[sympy.Expr, ...]
    denominator: tuple[sympy.Expr, ...]

    @classmethod
    def of(cls, expression: sympy.Expr) -> Response:
        num, den = sympy.fraction(sympy.together(expression))
        try:
            n = sympy.Poly(num, s).all_coeffs()[::-1]
            d = sympy.Poly(den, s).all_coeffs()[::-1]
        except sympy.PolynomialError:
            raise ResponseError("the quantity is not a rational function of s") from None
        return cls(tuple(sympy.expand(c) for c in n), tuple(sympy.expand(c) for c in d))

    @property
    def order(self) -> int:
        return len(self.denominator) - 1

    def expression(self) -> sympy.Expr:
        return _poly(self.numerator) / _poly(self.denominator)

    def coefficient(self, k: int, of_denominator: bool = True) -> sympy.Expr:
        c = self.denominator if of_denominator else self.numerator
        return c[k] if k < len(c) else sympy.Integer(0)

    def kind(self) -> str:
        """'low-pass', 'high-pass', 'band-pass', 'notch', 'all-pass' or 'general' (by the
        numerator's shape against a denominator of order 1 or 2)."""
        n = list(self.numerator) + [sympy.Integer(0)] * (self.order + 1 - len(self.numerator))
        nonzero = [k for k, c in enumerate(n) if c != 0]
        if self.order not in (1, 2) or not nonzero or len(n) > self.order + 1:
            return "general"
        if nonzero == [0]:
            return "low-pass"
        if nonzero == [self.order]:
            return "high-pass"
        if self.order == 2 and nonzero == [1]:
            return "band-pass"
        d = self.denominator
        if self.order == 2 and nonzero == [0, 2] and sympy.cancel(n[0] * d[2] - n[2] * d[0]) == 0:
            return "notch"
        if all(sympy.cancel(n[k] * d[0] - (-1) ** k * n[0] * d[k]) == 0
               for k in range(self.order + 1)):
            return "all-pass"
        return "general"

    # -- limits
    def dc(self) -> sympy.Expr:
        """H(0) (the lowest powers of s cancelled first)."""
        ln, ld = _lowest(self.numerator), _lowest(self.denominator)
        if ln is None:
            return sympy.Integer(0)
        if ln > ld:
            return sympy.Integer(0)
        if ln < ld:
            raise ResponseError("no finite DC gain: H has a pole at s = 0")
        return sympy.cancel(self.numerator[ln] / self.denominator[ld])

    def hf(self) -> sympy.Expr:
        """lim H(s) for s → ∞."""
        if len(self.numerator) > len(self.denominator):
            raise ResponseError("no finite high-frequency gain: H grows without bound as s -> oo")
        if len(self.numerator) < len(self.denominator):
            return sympy.Integer(0)
        return sympy.cancel(self.numerator[-1] / self.denominator[-1])

    # -- first and second order
    @cached_property
    def _parameters(self) -> dict[str, sympy.Expr] | ResponseError:
        try:
            return self._closed_parameters()
        except ResponseError as problem:
            return problem

    def parameters(self) -> dict[str, sympy.Expr]:
        """The closed-form design parameters of a first- or second-order denominator."""
        found = self._parameters
        if isinstance(found, ResponseError):
            raise found
        return found

    def _closed_parameters(self) -> dict[str, sympy.Expr]:
        d = self.denominator
        if self.order not in (1, 2) or d[0] == 0:
            raise ResponseError(_order_message(self))
        kind = self.kind()
        n = list(self.numerator) + [sympy.Integer(0)] * (self.order + 1 - len(self.numerator))
        out: dict[str, sympy.Expr] = {}
        if self.order == 1:
            wp = sympy.cancel(d[0] / d[1])
            out["K"] = sympy.cancel(n[1] / d[1]) if kind == "high-pass" else \
                sympy.cancel(n[0] / d[0])
            out.update(w0=wp, f0=wp / TWO_PI, wp=wp, fp=wp / TWO_PI, tau=sympy.cancel(d[1] / d[0]))
            if len(self.numerator) == 2 and n[0] != 0 and n[1] != 0:
                wz = sympy.cancel(n[0] / n[1])
                out.update(wz=wz, fz=wz / TWO_PI)
            return out
        c, b, a = d
        w0 = sqrt_of(sympy.cancel(c / a))
        q, _ = quality(a, b, c, w0)
        gain = {"high-pass": n[2] / a, "band-pass": n[1] / b}.get(kind, n[0] / c)
        if n[0] == 0 and kind == "general":
            gain = n[2] / a if n[2] != 0 else n[1] / b
        out.update(K=sympy.cancel(gain), w0=w0, f0=w0 / TWO_PI, Q=q, zeta=1 / (2 * q))
        if kind in ("band-pass", "notch"):
            out.update(centre=w0 / TWO_PI, bandwidth=sympy.cancel(b / a) / TWO_PI)
        return out

    # -- poles and zeros
    def roots(self, zeros: bool, nominals: Mapping[sympy.Symbol, Fraction]
              ) -> list[tuple[sympy.Expr | None, complex | None]]:
        """(closed form or None, value at the nominal values or None) of each pole (zero)."""
        coefficients = self.numerator if zeros else self.denominator
        poly = sympy.Poly(_poly(coefficients), s)
        if poly.degree() <= 0:
            return []
        if poly.degree() <= 2:
            closed = sympy.roots(poly, multiple=True)
            if len(closed) == poly.degree():
                return [(_tidy_root(r), _complex(r, nominals)) for r in closed]
        values = numeric_roots(coefficients, nominals)
        if values is None:
            return [(None, None)] * poly.degree()
        return [(None, v) for v in values]

    def stability(self, nominals: Mapping[sympy.Symbol, Fraction]) -> str | None:
        """A sentence on stability at the nominal values (None when no value is known)."""
        key = tuple(sorted((str(k), v) for k, v in nominals.items()))
        if key not in self._stability:
            self._stability[key] = self._stable(nominals)
        return self._stability[key]

    @cached_property
    def _stability(self) -> dict:
        return {}

    def _stable(self, nominals: Mapping[sympy.Symbol, Fraction]) -> str | None:
        poles = numeric_roots(self.denominator, nominals)
        if poles is None:
            return None
        scale = max([abs(p) for p in poles] + [1e-300])
        right = [p for p in poles if p.real > 1e-12 * scale]
        axis = [p for p in poles if abs(p.real) <= 1e-12 * scale]
        if right:
            listed = ", ".join(complex_text(p, "rad/s") for p in right)
            return (f"Unstable: {len(right)} pole{'s' if len(right) > 1 else ''} in the right "
                    f"half-plane at the nominal values ({listed}); the response grows without "
                    "bound instead of settling.")
        if axis:
            listed = ", ".join(complex_text(p, "rad/s") for p in axis)
            return f"Marginally stable: pole(s) on the imaginary axis ({listed})."
        return None

    # -- at a frequency
    def at(self, frequency: sympy.Expr) -> tuple[sympy.Expr, sympy.Expr]:
        """(Re H, Im H) at s = j·2π·f as real expressions of the symbols (f a number)."""
        w = TWO_PI * frequency
        nr, ni = _parts(self.numerator, w)
        dr, di = _parts(self.denominator, w)
        size = dr**2 + di**2
        return (nr * dr + ni * di) / size, (ni * dr - nr * di) / size

    def magnitude_squared(self, frequency: sympy.Expr) -> sympy.Expr:
        w = TWO_PI * frequency
        nr, ni = _parts(self.numerator, w)
        dr, di = _parts(self.denominator, w)
        return (nr**2 + ni**2) / (dr**2 + di**2)

    # -- numbers at the nominal values
    def nominal(self, nominals: Mapping[sympy.Symbol, Fraction]
                ) -> tuple[list[Fraction], list[Fraction]] | None:
        """Exact coefficients at the nominal values, or None when a symbol has no value."""
        out = []
        for coefficients in (self.numerator, self.denominator):
            values = [exact_value(c, nominals) for c in coefficients]
            if any(v is None for v in values):
                return None
            out.append(values)
        return out[0], out[1]

    def corner_frequencies(self, nominals: Mapping[sympy.Symbol, Fraction]) -> list[float]:
        """The −3 dB frequencies in Hz at the nominal values: where |H|² is half its pass-band
        value (the DC gain, else the high-frequency gain, else the peak), found by exact
        real-root isolation of 2·|N(jω)|² − ref·|D(jω)|² as a polynomial in ω²."""
        values = self.nominal(nominals)
        if values is None:
            raise ResponseError("the −3 dB frequency needs a value for every symbol")
        n, d = values
        x = sympy.Symbol("x", positive=True)  # x = ω²
        n2, d2 = _squared_magnitude_poly(n, x), _squared_magnitude_poly(d, x)
        reference = _reference_gain_squared(n, d, n2, d2, x)
        if reference is None or reference == 0:
            raise ResponseError("no pass band to refer −3 dB to (the response is zero)")
        equation = sympy.Poly(2 * n2 - rational(reference) * d2, x)
        roots = [float(r) for r in equation.real_roots() if r > 0]
        return sorted({math.sqrt(r) / (2 * math.pi) for r in roots})


def _poly(coefficients: Sequence[sympy.Expr]) -> sympy.Expr:
    return sympy.Add(*[c * s**k for k, c in enumerate(coefficients)])


def _lowest(coefficients: Sequence[sympy.Expr]) -> int | None:
    return next((k for k, c in enumerate(coefficients) if c != 0), None)


def _parts(coefficients: Sequence[sympy.Expr], w: sympy.Expr) -> tuple[sympy.Expr, sympy.Expr]:
    """Real and imaginary parts of Σ c_k·(jω)^k: j^k cycles 1, j, −1, −j."""
    real, imaginary = sympy.Integer(0), sympy.Integer(0)
    for k, c in enumerate(coefficients):
        term = c * w**k
        if k % 4 == 0:
            real += term
        elif k % 4 == 1:
            imaginary += term
        elif k % 4 == 2:
            real -= term
        else:
            imaginary -= term
    return real, imaginary


def _squared_magnitude_poly(coefficients: Sequence[Fraction], x: sympy.Symbol) -> sympy.Expr:
    w = sympy.sqrt(x)
    real, imaginary = _parts([rational(c) for c in coefficients], w)
    return sympy.expand(real**2 + imaginary**2)


def _reference_gain_squared(n, d, n2, d2, x) -> Fraction | None:
    """|H|² in the pass band: at DC, else at high frequency, else at the peak."""
    ln, ld = _lowest(n), _lowest(d)
    if ln is not None and ln == ld:
        return (Fraction(n[ln]) / Fraction(d[ld])) ** 2
    if ln is not None and ln < ld:
        return None
    if len(n) == len(d):
        return (Fraction(n[-1]) / Fraction(d[-1])) ** 2
    if len(n) > len(d):
        return None
    ratio = n2 / d2
    slope = sympy.Poly(sympy.numer(sympy.together(sympy.diff(ratio, x))), x)
    peaks = [r for r in slope.real_roots() if r > 0]
    if not peaks:
        return None
    best = max(peaks, key=lambda r: float(ratio.subs(x, r)))
    return Fraction(float(ratio.subs(x, best)))


def numeric_roots(coefficients: Sequence[sympy.Expr], nominals: Mapping[sympy.Symbol, Fraction]
                  ) -> list[complex] | None:
    """Roots of Σ c_k s^k at the nominal values, isolated exactly (CRootOf) then evaluated."""
    values = [exact_value(c, nominals) for c in coefficients]
    if any(v is None for v in values):
        return None
    poly = sympy.Poly([rational(v) for v in reversed(values)], s)
    if poly.degree() <= 0:
        return []
    return [complex(r.evalf(20)) for r in poly.all_roots()]


def _complex(expr: sympy.Expr, nominals: Mapping[sympy.Symbol, Fraction]) -> complex | None:
    if expr.free_symbols - set(nominals):
        return None
    value = expr.xreplace({x: rational(nominals[x]) for x in expr.free_symbols})
    try:
        return complex(value.evalf(20))
    except (TypeError, ValueError):
        return None


def _tidy_root(root: sympy.Expr) -> sympy.Expr:
    return sympy.together(root) if root.free_symbols else root


def complex_text(value: complex, unit: str) -> str:
    """`−6.283 k ± …`: a complex number in engineering notation."""
    from ..model.units import eng

    if abs(value.imag) <= 1e-12 * max(abs(value.real), 1e-300):
        return eng(value.real, unit)
    sign = "+" if value.imag >= 0 else "−"
    return f"{eng(value.real, '')} {sign} j·{eng(abs(value.imag), '')} {unit}".replace("  ", " ")


def _order_message(response: Response) -> str:
    if response.order in (1, 2):
        return "the response has a pole at s = 0 (an integrator): no ω0 or Q; ask for .poles"
    return (f"ω0, Q and the other section parameters belong to a first- or second-order "
            f"response; this one has order {response.order}: ask for .poles, .zeros, .dc, .hf "
            "or .f3db")


def continuous_phase(numerator: Sequence[float], denominator: Sequence[float],
                     frequencies: object) -> object:
    """∠H in degrees at `frequencies` (Hz), unwrapped along a dense logarithmic sweep from
    well below the lowest one, so that sparse table points keep the branch a continuous
    curve takes (a high-Q section turns by nearly 180° between two table rows)."""
    import numpy as np

    f = np.asarray(frequencies, dtype=float)
    low, high = math.log10(f.min()) - 3, math.log10(f.max())
    grid = np.union1d(np.logspace(low, high, 4000), f)
    jw = 2j * np.pi * grid
    h = np.polyval(list(reversed(numerator)), jw) / np.polyval(list(reversed(denominator)), jw)
    phase = np.degrees(np.unwrap(np.angle(h)))
    return phase[np.searchsorted(grid, f)]


# ---------------------------------------------------------------- Monte Carlo band


@dataclass(frozen=True)
class Band:
    """Magnitude (dB) and phase (degrees) over frequency: nominal and the sampled band."""

    frequencies: object  # numpy array, Hz
    nominal_db: object
    nominal_phase: object
    low_db: object
    high_db: object
    low_phase: object
    high_phase: object
    samples: int
    quantiles: tuple[float, float]


BAND_CHUNK = 32
"""Frequencies evaluated at once: samples × chunk complex arrays stay a few MB."""


def band(response: Response, symbols: Sequence[sympy.Symbol], columns: Sequence[object],
         fixed: Mapping[sympy.Symbol, Fraction], nominal_point: Mapping[sympy.Symbol, Fraction],
         frequencies: object, quantiles: tuple[float, float] = (0.001, 0.999)) -> Band:
    """The band of |H| and ∠H over `frequencies` (Hz) from sampled `columns` of `symbols`:
    every coefficient of N and D evaluated once per sample (numpy), then N(jω)/D(jω) by
    Horner's rule for all samples and a chunk of frequencies at a time."""
    import numpy as np

    values = {x: sympy.Float(float(v), 17) for x, v in fixed.items()}
    size = len(columns[0]) if columns else 1
    f = np.asarray(frequencies, dtype=float)

    def sampled(coefficients):
        out = []
        for c in coefficients:
            c = c.xreplace(values)
            if c.free_symbols:
                evaluate = sympy.lambdify(symbols, c, modules="numpy")
                out.append(np.broadcast_to(np.asarray(evaluate(*columns), dtype=float),
                                           (size,)))
            else:
                out.append(np.full(size, float(c)))
        return out

    top, bottom = sampled(response.numerator), sampled(response.denominator)
    point = {**values, **{x: sympy.Float(float(v), 17) for x, v in nominal_point.items()}}
    n0 = [float(c.xreplace(point)) for c in response.numerator]
    d0 = [float(c.xreplace(point)) for c in response.denominator]
    h0 = np.polyval(n0[::-1], 2j * np.pi * f) / np.polyval(d0[::-1], 2j * np.pi * f)
    nominal_phase = continuous_phase(n0, d0, f)
    low_db, high_db = np.empty(len(f)), np.empty(len(f))
    low_phase, high_phase = np.empty(len(f)), np.empty(len(f))
    for start in range(0, len(f), BAND_CHUNK):
        part = slice(start, start + BAND_CHUNK)
        jw = 2j * np.pi * f[part]
        h = _horner(top, jw, size)
        h /= _horner(bottom, jw, size)
        db = 20 * np.log10(np.abs(h))
        phase = np.degrees(np.angle(h))
        # sampled phases follow the nominal curve's branch, so a band never splits at ±180°
        phase += 360 * np.round((nominal_phase[None, part] - phase) / 360)
        (low_db[part], high_db[part]) = np.quantile(db, quantiles, axis=0)
        (low_phase[part], high_phase[part]) = np.quantile(phase, quantiles, axis=0)
    return Band(f, 20 * np.log10(np.abs(h0)), nominal_phase, low_db, high_db, low_phase,
                high_phase, size, quantiles)


def _horner(coefficients: Sequence[object], jw: object, size: int) -> object:
    """Σ c_k·(jω)^k for sampled coefficients (arrays over samples), samples × frequencies."""
    import numpy as np

    total = np.zeros((size, len(jw)), dtype=complex)
    for c in reversed(coefficients):
        total *= jw[None, :]
        total += c[:, None]
    return total
