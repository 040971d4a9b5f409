"""Tolerance analysis of a closed form: linearised worst case, root-sum-square spread, true
extremes over the tolerance box (all corners, or a bounded search), and Monte Carlo.

Every independent toleranced symbol is counted once: defined symbols (`Rt = R0*(1 + alpha*T)`)
are replaced by their definitions first, so a tolerance on `R0` reaches `Q` through `Rt`.
A defined symbol with a tolerance of its own gets an extra factor (relative tolerance) or
term (absolute tolerance) for it.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Any, Literal

import sympy

from ..algebra.rational import RationalFunction, UndefinedValue
from ..model.circuit import LAPLACE, Tolerance
from .evaluate import RationalForm, closed_form
from .values import exact_value, expand_definitions

MAX_CORNER_SYMBOLS = 16
"""Up to this many toleranced symbols, every corner of the tolerance box is evaluated."""
DEFAULT_SAMPLES = 100_000
DEFAULT_SEED = 1
"""Monte Carlo seed when none is given, so that notes come out the same on every run."""
INTERIOR_CHECKS = 4096
"""Random interior points (and, above 16 symbols, random corners) of the monotonicity check."""
SEARCH_GRID = 65
"""Points per symbol in one sweep of the bounded coordinate search."""

Distribution = Literal["uniform", "normal"]

DISTRIBUTION_TEXT = {
    "uniform": "each toleranced value uniformly distributed over its tolerance band",
    "normal": "each toleranced value normally distributed about its nominal value with the "
              "tolerance taken as 3σ (an asymmetric tolerance: 3σ on each side)",
}


class ToleranceInputError(ValueError):
    """The expression cannot be analysed (a symbol without a value, or `s`)."""


class PoleInBox(ToleranceInputError):
    """Q has no finite value somewhere in the tolerance box; `symbol` is the toleranced
    symbol whose band reaches the pole (a band reaching zero), when one is to blame."""

    def __init__(self, message: str, symbol: sympy.Symbol | None = None) -> None:
        super().__init__(message)
        self.symbol = symbol


@dataclass(frozen=True)
class Variable:
    """One independent toleranced value: its symbol, a label for tables, nominal and band."""

    symbol: sympy.Symbol
    label: str
    nominal: Fraction
    low: Fraction
    high: Fraction
    tolerance: Tolerance


@dataclass(frozen=True)
class Contribution:
    """How far one variable moves Q at the linear order: ∂Q/∂x at nominal times its band."""

    variable: Variable
    derivative: Fraction
    down: Fraction
    """Change of Q when x goes from nominal to the end of its band that lowers Q (≤ 0)."""
    up: Fraction
    """Change of Q when x goes to the end that raises Q (≥ 0)."""


@dataclass(frozen=True)
class Extremes:
    """The lowest and highest Q over the tolerance box and where they occur."""

    low: Fraction
    high: Fraction
    low_at: dict[str, Fraction]
    high_at: dict[str, Fraction]
    method: str
    monotonic: bool
    """True when every partial derivative kept its sign at every point checked."""
    non_monotonic: tuple[str, ...] = ()
    """Labels of the variables whose partial derivative changed sign."""


@dataclass(frozen=True)
class MonteCarlo:
    distribution: Distribution
    samples: int
    seed: int
    mean: float
    std: float
    quantile_low: float
    """0.1 % quantile."""
    quantile_high: float
    """99.9 % quantile."""
    minimum: float
    maximum: float
    values: Any = field(repr=False, compare=False)
    """The sampled values of Q (numpy array), for histograms."""


@dataclass(frozen=True)
class ToleranceAnalysis:
    expression: sympy.Expr | RationalFunction
    """Q in the independent symbols (definitions expanded; untoleranced ones not set)."""
    nominal: Fraction
    variables: tuple[Variable, ...]
    contributions: tuple[Contribution, ...]
    """Largest first."""
    linear_low: Fraction
    linear_high: Fraction
    rss: float
    """Root-sum-square of each variable's half-band times |∂Q/∂x|."""
    extremes: Extremes
    monte_carlo: MonteCarlo
    warnings: tuple[str, ...] = ()


def independent(
    expression: sympy.Expr | RationalFunction,
    nominals: Mapping[sympy.Symbol, Fraction],
    tolerances: Mapping[sympy.Symbol, Tolerance],
    definitions: Mapping[sympy.Symbol, sympy.Expr],
) -> tuple[sympy.Expr | RationalFunction, list[Variable], dict[sympy.Symbol, Fraction]]:
    """Q with definitions expanded, its toleranced variables, and the values of the others.

    The engine's rational function stays one (no sympy) when no definition reaches it."""
    own: dict[sympy.Symbol, sympy.Expr] = {}
    variables: list[Variable] = []
    for x, tol in tolerances.items():
        if x in definitions and (tol.plus or tol.minus):
            k = sympy.Dummy(f"{x.name}_own")
            base = Fraction(1) if tol.relative else Fraction(0)
            own[x] = definitions[x] * k if tol.relative else definitions[x] + k
            low, high = base - tol.minus, base + tol.plus
            variables.append(Variable(k, f"{x.name} (own tolerance)", base, low, high, tol))
    reaching = _reaching(definitions, own, nominals, tolerances)
    if isinstance(expression, RationalFunction):
        used = {sympy.Symbol(n) for n in expression.symbol_names()}
        expanded = expression
        if used & set(reaching):
            expression = expression.to_sympy()
    if not isinstance(expression, RationalFunction):
        expanded = expand_definitions(expression, reaching)
        used = expanded.free_symbols
    if LAPLACE in used:
        raise ToleranceInputError(
            "the quantity depends on s (a transfer function); ask at a frequency, e.g. "
            "at(Q, 1 kHz).magnitude or .dB, for a design parameter such as Q.f0 or Q.Q, or "
            "for response(Q) with its Monte Carlo band")
    for x, tol in tolerances.items():
        if x in definitions or x not in used or not (tol.plus or tol.minus):
            continue
        if x not in nominals:
            raise ToleranceInputError(f"{x} has a tolerance but no nominal value")
        low, high = tol.bounds(nominals[x])
        variables.append(Variable(x, x.name, nominals[x], low, high, tol))
    variables = [v for v in variables if v.symbol in used]
    toleranced = {v.symbol for v in variables}
    missing = sorted(str(x) for x in used - toleranced - set(nominals))
    if missing:
        raise ToleranceInputError("no value for " + ", ".join(missing))
    variables.sort(key=lambda v: v.label)
    fixed = {x: nominals[x] for x in sorted(used - toleranced, key=str)}
    return expanded, variables, fixed


def _reaching(
    definitions: Mapping[sympy.Symbol, sympy.Expr],
    own: Mapping[sympy.Symbol, sympy.Expr],
    nominals: Mapping[sympy.Symbol, Fraction],
    tolerances: Mapping[sympy.Symbol, Tolerance],
) -> dict[sympy.Symbol, sympy.Expr]:
    """The definitions to expand: those through which a tolerance reaches Q. The others
    (`Uin = Uref` with no tolerance on Uref) stay symbols at their nominal values, which
    spares rebuilding a large closed form for nothing."""
    spread = {x for x, t in tolerances.items() if t.plus or t.minus}
    out = dict(own)
    for x, definition in definitions.items():
        if x in out:
            continue
        reached = expand_definitions(definition, definitions).free_symbols
        if x not in nominals or reached & spread or any(y in own for y in reached):
            out[x] = definition
    return out


def analyse(
    expression: sympy.Expr | RationalFunction,
    nominals: Mapping[sympy.Symbol, Fraction],
    tolerances: Mapping[sympy.Symbol, Tolerance],
    definitions: Mapping[sympy.Symbol, sympy.Expr] | None = None,
    distribution: Distribution = "uniform",
    samples: int = DEFAULT_SAMPLES,
    seed: int | None = None,
    order: Sequence[str] = (),
) -> ToleranceAnalysis:
    """The tolerance analysis of `expression` (see the module docstring for the methods);
    `order`: the circuit's names in the order they were written (for the evaluator)."""
    import numpy as np

    seed = DEFAULT_SEED if seed is None else seed
    q, variables, fixed = independent(expression, nominals, tolerances, dict(definitions or {}))
    if distribution not in DISTRIBUTION_TEXT:
        raise ToleranceInputError(f"unknown distribution {distribution!r}: uniform or normal")
    at_nominal = {v.symbol: v.nominal for v in variables}
    if not variables:
        return _fixed(q, fixed, distribution, samples, seed)
    form = closed_form(q, [v.symbol for v in variables], fixed, order)
    nominal = form.exact(at_nominal)
    if nominal is None:
        raise ToleranceInputError("the quantity has no finite value at the nominal point")

    contributions = []
    gradient = form.exact_gradient(at_nominal)
    for v, slope in zip(variables, gradient, strict=True):
        ends = (slope * (v.low - v.nominal), slope * (v.high - v.nominal))
        contributions.append(Contribution(v, slope, min(ends), max(ends)))
    linear_low = nominal + sum((c.down for c in contributions), Fraction(0))
    linear_high = nominal + sum((c.up for c in contributions), Fraction(0))
    rss = math.sqrt(sum(float(c.derivative * (c.variable.high - c.variable.low) / 2) ** 2
                        for c in contributions))
    slopes = [c.derivative for c in contributions]
    contributions.sort(key=lambda c: (-(c.up - c.down), c.variable.label))

    warnings = _bands_reaching_zero(variables)
    warnings += _check_denominator(form, variables)
    extremes = _extremes(form, variables, slopes, np.random.default_rng(seed))
    sampled, sampling_warnings = monte_carlo(form, variables, distribution, samples, seed)
    warnings += sampling_warnings
    return ToleranceAnalysis(
        expression=q, nominal=nominal, variables=tuple(variables),
        contributions=tuple(contributions), linear_low=linear_low, linear_high=linear_high,
        rss=rss, extremes=extremes, monte_carlo=sampled, warnings=tuple(warnings),
    )


def _reaches_zero(v: Variable) -> bool:
    return v.nominal > 0 >= v.low or v.nominal < 0 <= v.high


def _bands_reaching_zero(variables: list[Variable]) -> list[str]:
    """A note for each band that reaches zero or changes sign: no real part sits there."""
    return [f"The tolerance band of {v.label} ({_number(v.low)} … {_number(v.high)}) reaches "
            "zero: the extremes and samples include values no real part takes; a band that "
            "wide is better written as a range of designs than as a tolerance."
            for v in variables if _reaches_zero(v)]


def _number(value: Fraction) -> str:
    return f"{float(value):.6g}"


def _check_denominator(form, variables: list[Variable]) -> list[str]:
    """Raise PoleInBox when Q's denominator vanishes somewhere in the tolerance box.

    The denominator's sign is taken at every corner (all of them up to MAX_CORNER_SYMBOLS
    variables): a zero or a change of sign means a pole in the box (the denominator is
    continuous). With no change, the box is free of poles when the denominator is of degree
    at most one in each variable (its extremes over a box are then at corners), or when
    interval arithmetic over the box keeps it away from zero; otherwise a warning says that
    a pole inside the box was not ruled out."""
    import numpy as np

    if not isinstance(form, RationalForm):  # no rational function (a square root): sampled
        return []
    if form.denominator_is_constant():
        return []
    n = len(variables)
    lows = [float(v.low) for v in variables]
    highs = [float(v.high) for v in variables]
    if n <= MAX_CORNER_SYMBOLS:
        values = form.denominator_corners(lows, highs)
        indices = range(2**n)
    else:
        rng = np.random.default_rng(DEFAULT_SEED)
        corners = _random_corners(variables, rng, INTERIOR_CHECKS)
        values = form.denominator_values(corners, INTERIOR_CHECKS)
        indices = None
    signs = set(np.sign(values).tolist())
    if len(signs) > 1 or 0.0 in signs:
        if indices is not None:  # decide the corners near zero exactly, in rational numbers
            scale = float(np.max(np.abs(values))) or 1.0
            signs = {form.denominator_sign(_corner(variables, i))
                     if abs(values[i]) <= 1e-9 * scale else int(np.sign(values[i]))
                     for i in indices}
        if len(signs) > 1 or 0 in signs:
            used = form.denominator_names()
            blamed = next((v for v in variables if _reaches_zero(v)
                           and v.symbol.name in used), None)
            what = ("its denominator is zero or changes sign between corners of the tolerance "
                    "box, so the quantity has a pole inside the box")
            if blamed is not None:
                what += (f": the band of {blamed.label} ({_number(blamed.low)} … "
                         f"{_number(blamed.high)}) reaches zero, where no extreme exists; "
                         "narrow the band so that it stays on one side of zero")
            raise PoleInBox(what, blamed.symbol if blamed is not None else None)
    if n <= MAX_CORNER_SYMBOLS and form.denominator_degree() <= 1:
        return []
    if _interval_excludes_zero(form.denominator_terms(), lows, highs):
        return []
    return ["A pole inside the tolerance box was not ruled out: the denominator keeps its "
            "sign at the corners checked, but is not of degree one in each toleranced symbol "
            "and interval arithmetic over the box does not keep it away from zero."]


def _interval_excludes_zero(terms, lows: list[float], highs: list[float]) -> bool:
    """Interval arithmetic: is the polynomial of these terms (exponents as terms ×
    variables, coefficients) kept away from zero over the box?"""
    import numpy as np

    exponents, coefficients = terms
    low, high = coefficients.astype(float), coefficients.astype(float)
    for j, (a, b) in enumerate(zip(lows, highs, strict=True)):
        power = exponents[:, j]
        if not power.any():
            continue
        ends = np.vstack([np.float64(a) ** power, np.float64(b) ** power])
        p_low = np.where((power % 2 == 0) & (a < 0 < b), 0.0, ends.min(axis=0))
        p_low = np.where(power == 0, 1.0, p_low)
        p_high = np.where(power == 0, 1.0, ends.max(axis=0))
        products = np.vstack([low * p_low, low * p_high, high * p_low, high * p_high])
        low, high = products.min(axis=0), products.max(axis=0)
    low_sum, high_sum = float(low.sum()), float(high.sum())
    margin = 1e-9 * max(abs(low_sum), abs(high_sum), 1e-300)
    return low_sum > margin or high_sum < -margin


def _fixed(q: sympy.Expr, fixed: dict[sympy.Symbol, Fraction], distribution: Distribution,
           samples: int, seed: int):
    """The analysis of a quantity no tolerance reaches: every figure is the nominal value."""
    import numpy as np

    nominal = _value(q, fixed)
    if nominal is None:
        raise ToleranceInputError("the quantity has no finite value at the nominal point")
    x = float(nominal)
    method = "no toleranced symbol: Q is fixed"
    return ToleranceAnalysis(
        expression=q, nominal=nominal, variables=(), contributions=(), linear_low=nominal,
        linear_high=nominal, rss=0.0,
        extremes=Extremes(nominal, nominal, {}, {}, method, True),
        monte_carlo=MonteCarlo(distribution, samples, seed, x, 0.0, x, x, x, x,
                               np.full(samples, x)),
    )


def _value(q: sympy.Expr | RationalFunction,
           values: Mapping[sympy.Symbol, Fraction]) -> Fraction | None:
    """q at `values` exactly; None at a pole."""
    if not isinstance(q, RationalFunction):
        return exact_value(q, values)
    try:
        return q.evaluate({x.name: v for x, v in values.items()})
    except UndefinedValue:
        return None


def _random_corners(variables: list[Variable], rng, count: int):
    import numpy as np

    bits = rng.integers(0, 2, size=(count, len(variables)))
    return [np.where(bits[:, j] == 1, float(v.high), float(v.low))
            for j, v in enumerate(variables)]


def _interior(variables: list[Variable], rng, count: int):
    return [rng.uniform(float(v.low), float(v.high), count) for v in variables]


def _corner(variables: list[Variable], index: int) -> dict[sympy.Symbol, Fraction]:
    """Corner number `index`: variable j at its high end when bit j is set."""
    return {v.symbol: v.high if index >> j & 1 else v.low for j, v in enumerate(variables)}


def _extremes(form, variables: list[Variable], slopes: list[Fraction], rng) -> Extremes:
    """Corner extremes with a monotonicity check; a bounded search where it fails."""
    import numpy as np

    n = len(variables)
    lows = [float(v.low) for v in variables]
    highs = [float(v.high) for v in variables]
    enumerate_all = n <= MAX_CORNER_SYMBOLS
    inside = _interior(variables, rng, INTERIOR_CHECKS)
    if enumerate_all:
        values = form.corners(lows, highs)
        at_corners = form.corner_partials(lows, highs)
    else:
        corners = _random_corners(variables, rng, INTERIOR_CHECKS)
        at_corners = form.partials(corners, INTERIOR_CHECKS)
    partials = np.vstack([at_corners, form.partials(inside, INTERIOR_CHECKS)])
    rising = (partials > 0).any(axis=0)
    falling = (partials < 0).any(axis=0)
    bad = tuple(v.label for v, up, down in zip(variables, rising, falling, strict=True)
                if up and down)
    corners_checked = f"all {2**n:,} corners" if enumerate_all else \
        f"{INTERIOR_CHECKS:,} random corners"
    where_checked = (f"the sign of each partial derivative was checked at {corners_checked} "
                     f"and {INTERIOR_CHECKS:,} random interior points of the tolerance box")

    def exact_at(point: dict[sympy.Symbol, Fraction]) -> Fraction:
        value = form.exact(point)
        if value is None:
            raise ToleranceInputError("the quantity has a pole inside the tolerance box")
        return value

    if enumerate_all:
        if not np.isfinite(values).all():
            raise ToleranceInputError("the quantity has a pole at a corner of the tolerance box")
        low_at = min((_corner(variables, i) for i in _near(values, lowest=True)), key=exact_at)
        high_at = max((_corner(variables, i) for i in _near(values, lowest=False)), key=exact_at)
        method = f"exact closed form evaluated at all {2**n:,} corners of the tolerance box"
    else:
        low_at = {v.symbol: (v.low if s >= 0 else v.high) for v, s in zip(variables, slopes,
                                                                            strict=True)}
        high_at = {v.symbol: (v.high if s >= 0 else v.low) for v, s in zip(variables, slopes,
                                                                             strict=True)}
        # a random corner that beats the gradient's choice is the better start
        sampled = form.values(corners, INTERIOR_CHECKS)
        if np.isfinite(sampled).any():
            for best, at, lower in ((np.nanargmin(sampled), low_at, True),
                                    (np.nanargmax(sampled), high_at, False)):
                point = {v.symbol: _snap(float(c[best]), v)
                         for v, c in zip(variables, corners, strict=True)}
                if (exact_at(point) < exact_at(at)) == lower and exact_at(point) != exact_at(at):
                    at.update(point)
        method = (f"{n} toleranced symbols (more than {MAX_CORNER_SYMBOLS}, too many corners "
                  "to evaluate them all): a bounded search, starting from the corners chosen by "
                  "the sign of each partial derivative at the nominal point")
    low, high = exact_at(low_at), exact_at(high_at)

    if bad or not enumerate_all:
        searched_low = _coordinate_search(form, variables, low_at, maximise=False)
        searched_high = _coordinate_search(form, variables, high_at, maximise=True)
        if exact_at(searched_low) < low:
            low_at, low = searched_low, exact_at(searched_low)
        if exact_at(searched_high) > high:
            high_at, high = searched_high, exact_at(searched_high)
        searched = (
            f"a bounded coordinate search (sweeps of {SEARCH_GRID} points per symbol across its "
            "band, repeated until no sweep improves, then the best interval narrowed tenfold per "
            "round); a search can miss a narrow interior extremum"
        )
        if bad:
            method += (f"; Q is not monotonic in {', '.join(bad)} over the box ({where_checked}), "
                       f"so the extremes were then refined by {searched}")
        else:
            method += (f"; no partial derivative changed sign ({where_checked}), and the "
                       f"extremes were then refined by {searched}")
    else:
        method += f"; Q is monotonic in every toleranced symbol over the box ({where_checked}), " \
                  "so the corner extremes are the extremes"
    names = {v.symbol: v.label for v in variables}
    return Extremes(
        low=low, high=high,
        low_at={names[x]: value for x, value in low_at.items()},
        high_at={names[x]: value for x, value in high_at.items()},
        method=method, monotonic=not bad, non_monotonic=bad,
    )


def _near(values, lowest: bool) -> list[int]:
    """Corners whose float value ties the best within rounding: decided exactly afterwards."""
    import numpy as np

    best = values[np.argmin(values) if lowest else np.argmax(values)]
    scale = max(abs(float(best)), 1e-300)
    return [int(i) for i in np.flatnonzero(np.abs(values - best) <= 1e-12 * scale)[:8]]


def _coordinate_search(form, variables, start, maximise: bool) -> dict:
    """Bounded coordinate search from `start`: sweep each symbol across its band, keep the
    best point, repeat until nothing improves; then narrow the sweeps around the best point."""
    import numpy as np

    sign = 1.0 if maximise else -1.0
    point = np.array([float(start[v.symbol]) for v in variables])
    lows = np.array([float(v.low) for v in variables])
    highs = np.array([float(v.high) for v in variables])
    width = highs - lows

    def score(columns, size):
        values = sign * form.values(columns, size)
        return np.where(np.isfinite(values), values, -np.inf)

    best = float(score([np.array([p]) for p in point], 1)[0])
    span = width.copy()
    for _ in range(60):
        improved = False
        for k in range(len(variables)):
            grid = np.clip(np.linspace(point[k] - span[k] / 2, point[k] + span[k] / 2, SEARCH_GRID)
                           if span[k] < width[k] else np.linspace(lows[k], highs[k], SEARCH_GRID),
                           lows[k], highs[k])
            columns = [grid if i == k else np.full(SEARCH_GRID, point[i])
                       for i in range(len(variables))]
            values = score(columns, SEARCH_GRID)
            j = int(np.argmax(values))
            if values[j] > best + 1e-15 * max(abs(best), 1e-300):
                best, point[k], improved = float(values[j]), grid[j], True
        if not improved:
            if np.all(span < width * 1e-9):
                break
            span = span / 10
    return {v.symbol: _snap(float(p), v) for v, p in zip(variables, point, strict=True)}


def _snap(value: float, variable: Variable) -> Fraction:
    """A float coordinate as an exact one inside the band (the ends exactly)."""
    if value <= float(variable.low):
        return variable.low
    if value >= float(variable.high):
        return variable.high
    return Fraction(value)


def draw(variables, distribution: str, samples: int, seed: int) -> list:
    """One column of `samples` values per variable, drawn independently: uniform over the
    band, or normal with the band's ends at 3σ (an asymmetric band scales each side)."""
    import numpy as np

    rng = np.random.default_rng(seed)
    columns = []
    for v in variables:
        low, nominal, high = float(v.low), float(v.nominal), float(v.high)
        if distribution == "uniform":
            columns.append(rng.uniform(low, high, samples))
        else:
            z = rng.standard_normal(samples)
            spread = np.where(z >= 0, z * (high - nominal), z * (nominal - low)) / 3
            columns.append(nominal + spread)
    return columns


def monte_carlo(form, variables, distribution, samples, seed) -> tuple[MonteCarlo, list[str]]:
    """Samples of Q with every variable drawn independently (see DISTRIBUTION_TEXT)."""
    import numpy as np

    columns = draw(variables, distribution, samples, seed)
    values = form.values(columns, samples)
    warnings = []
    finite = np.isfinite(values)
    if not finite.all():
        warnings.append(f"{int((~finite).sum())} of {samples:,} Monte Carlo samples gave no finite "
                        "value (a pole inside the tolerance box); they are left out")
        values = values[finite]
    low_q, high_q = np.quantile(values, [0.001, 0.999])
    return MonteCarlo(
        distribution=distribution, samples=samples, seed=seed,
        mean=float(values.mean()), std=float(values.std(ddof=1)),
        quantile_low=float(low_q), quantile_high=float(high_q),
        minimum=float(values.min()), maximum=float(values.max()), values=values,
    ), warnings
