"""Sensitivities and tolerance of a quantity known only as a number at given values (a noise
band integrated numerically): central differences, corners found by evaluating again, and a
reduced Monte Carlo. Each figure says how it was found.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Callable, Collection, Mapping
from fractions import Fraction

import sympy

from ..model.circuit import Tolerance
from . import tolerance
from .sensitivity import Sensitivity, SensitivityTable
from .values import exact_value, expand_definitions

Evaluate = Callable[[Mapping[sympy.Symbol, Fraction]], float]

STEP = Fraction(1, 1000)
"""Relative step h of the central differences: Q(x·(1 ± h)). Its truncation error is of
order h² (1e-6 relative) and the integration's error of 1e-10 becomes 1e-7 after the
division by 2h, both far below any tolerance."""
MAX_CORNERS = 10
"""Up to this many toleranced values, every corner of the box is evaluated (2^10 = 1024)."""
SAMPLES = 200
"""Monte Carlo samples of a numerically evaluated quantity: each costs a full evaluation, so
far fewer than the closed forms get; the quantiles are coarse and said to be."""


def _moved(point: Mapping[sympy.Symbol, Fraction], x: sympy.Symbol,
           factor: Fraction) -> dict[sympy.Symbol, Fraction]:
    return {**point, x: point[x] * factor}


def derivatives(evaluate: Evaluate, symbols: Collection[sympy.Symbol],
                point: Mapping[sympy.Symbol, Fraction]) -> dict[sympy.Symbol, float]:
    """∂Q/∂x at `point` by central differences (Q(x(1+h)) − Q(x(1−h)))/(2hx), each x ≠ 0."""
    found = {}
    for x in sorted(symbols, key=str):
        if not point[x]:
            continue
        up = evaluate(_moved(point, x, 1 + STEP))
        down = evaluate(_moved(point, x, 1 - STEP))
        found[x] = (up - down) / (2 * float(STEP) * float(point[x]))
    return found


def sensitivities(evaluate: Evaluate, symbols: Collection[sympy.Symbol],
                  nominals: Mapping[sympy.Symbol, Fraction],
                  relative_error: float) -> SensitivityTable:
    """The sensitivity table of a numerically evaluated Q over its valued symbols."""
    valued = [x for x in symbols if x in nominals]
    point = {x: nominals[x] for x in valued}
    nominal = evaluate(point)
    rows = []
    for x, slope in derivatives(evaluate, valued, point).items():
        relative = float(point[x]) * slope / nominal if nominal else None
        rows.append(Sensitivity(x, sympy.Float(slope, 15),
                                sympy.Float(relative, 15) if relative is not None
                                else sympy.nan,
                                Fraction(slope), None if relative is None
                                else Fraction(relative)))
    rows.sort(key=lambda r: (r.relative_value is None, -abs(r.relative_value or 0),
                             str(r.symbol)))
    method = (f"No closed form: each sensitivity is a central difference, "
              f"(Q(x·(1+h)) − Q(x·(1−h)))/(2h·x) with h = {float(STEP):g}, Q integrated "
              f"numerically each time (its estimated error {relative_error:.1e} relative, "
              f"the differences' about {relative_error / float(STEP) + float(STEP) ** 2:.0e}).")
    return SensitivityTable(sympy.Float(nominal, 15), Fraction(nominal), None, tuple(rows),
                            method)


def through_definitions(evaluate: Evaluate, symbols: Collection[sympy.Symbol],
                        definitions: Mapping[sympy.Symbol, sympy.Expr],
                        nominals: Mapping[sympy.Symbol, Fraction],
                        ) -> tuple[frozenset[sympy.Symbol], Evaluate]:
    """Q over its symbols and the symbols they are defined by (R1 = R0·(1 + α·Tc) adds R0, α
    and Tc), as the closed forms' tolerance and sensitivities read them: a defined symbol
    takes its own value times the ratio its definition moved by, so it can move itself (its
    own tolerance) and through what defines it."""
    expanded = {x: expand_definitions(x, definitions) for x in symbols if x in definitions}
    roots = frozenset().union(*(e.free_symbols for e in expanded.values())) if expanded \
        else frozenset()
    at_nominal = {x: exact_value(e, nominals) for x, e in expanded.items()}
    moving = {x: e for x, e in expanded.items() if at_nominal[x]}
    if not moving:
        return frozenset(symbols), evaluate

    def through(point: Mapping[sympy.Symbol, Fraction]) -> float:
        values = dict(point)
        for x, e in moving.items():
            now = exact_value(e, {**nominals, **point})
            if now is not None and x in values:
                values[x] = values[x] * now / at_nominal[x]
        return evaluate(values)

    return frozenset(symbols) | roots, through


class _Sampled:
    """Q evaluated sample by sample, as `tolerance.monte_carlo` reads a closed form."""

    def __init__(self, evaluate: Evaluate, variables: list[tolerance.Variable],
                 fixed: Mapping[sympy.Symbol, Fraction]) -> None:
        self.evaluate, self.variables, self.fixed = evaluate, variables, fixed

    def values(self, columns, samples: int):
        import numpy as np

        return np.array([self.evaluate({**self.fixed, **{
            v.symbol: Fraction(float(column[k])) for v, column in
            zip(self.variables, columns, strict=True)}}) for k in range(samples)])


def analyse(evaluate: Evaluate, symbols: Collection[sympy.Symbol],
            nominals: Mapping[sympy.Symbol, Fraction],
            tolerances: Mapping[sympy.Symbol, Tolerance],
            distribution: tolerance.Distribution = "uniform",
            seed: int | None = None) -> tolerance.ToleranceAnalysis:
    """The tolerance analysis of a numerically evaluated Q: linearised and RSS from central
    differences, extremes over every corner (up to MAX_CORNERS values, else the linearised
    ones) and a Monte Carlo of SAMPLES samples."""
    seed = tolerance.DEFAULT_SEED if seed is None else seed
    missing = sorted(str(x) for x in symbols if x not in nominals)
    if missing:
        raise tolerance.ToleranceInputError("no value for " + ", ".join(missing))
    variables = []
    for x in sorted(symbols, key=str):
        tol = tolerances.get(x)
        if tol is not None and (tol.plus or tol.minus):
            low, high = tol.bounds(nominals[x])
            variables.append(tolerance.Variable(x, x.name, nominals[x], low, high, tol))
    point = {x: nominals[x] for x in symbols}
    toleranced = {v.symbol for v in variables}
    fixed = {x: value for x, value in point.items() if x not in toleranced}
    nominal = Fraction(evaluate(point))
    slopes = derivatives(evaluate, [v.symbol for v in variables], point)
    contributions = []
    for v in variables:
        slope = Fraction(slopes.get(v.symbol, 0.0))
        ends = (slope * (v.low - v.nominal), slope * (v.high - v.nominal))
        contributions.append(tolerance.Contribution(v, slope, min(ends), max(ends)))
    linear_low = nominal + sum((c.down for c in contributions), Fraction(0))
    linear_high = nominal + sum((c.up for c in contributions), Fraction(0))
    rss = math.sqrt(sum(float(c.derivative * (c.variable.high - c.variable.low) / 2) ** 2
                        for c in contributions))
    contributions.sort(key=lambda c: (-(c.up - c.down), c.variable.label))
    extremes = _extremes(evaluate, variables, point, contributions, linear_low, linear_high)
    sampled, warnings = tolerance.monte_carlo(_Sampled(evaluate, variables, fixed), variables,
                                              distribution, SAMPLES, seed)
    warnings.append(f"The Monte Carlo has {SAMPLES} samples only (each one integrates the "
                    "band again): its 0.1 % and 99.9 % quantiles are rough.")
    return tolerance.ToleranceAnalysis(
        expression=sympy.Float(float(nominal), 15), nominal=nominal,
        variables=tuple(variables), contributions=tuple(contributions),
        linear_low=linear_low, linear_high=linear_high, rss=rss, extremes=extremes,
        monte_carlo=sampled, warnings=tuple(warnings))


def _extremes(evaluate: Evaluate, variables: list[tolerance.Variable],
              point: Mapping[sympy.Symbol, Fraction],
              contributions: list[tolerance.Contribution],
              linear_low: Fraction, linear_high: Fraction) -> tolerance.Extremes:
    """Every corner evaluated when there are few; else the linearised worst case."""
    if len(variables) > MAX_CORNERS:
        at = {c.variable.label: c.variable.nominal for c in contributions}
        return tolerance.Extremes(
            linear_low, linear_high, at, at,
            f"linearised only: {len(variables)} toleranced values are more than the "
            f"{MAX_CORNERS} whose 2^n corners are each integrated again", False)
    best: tuple[float, dict] | None = None
    worst: tuple[float, dict] | None = None
    for ends in itertools.product(*((v.low, v.high) for v in variables)):
        corner = {**point, **{v.symbol: end for v, end in zip(variables, ends, strict=True)}}
        value = evaluate(corner)
        labels = {v.label: end for v, end in zip(variables, ends, strict=True)}
        if best is None or value < best[0]:
            best = (value, labels)
        if worst is None or value > worst[0]:
            worst = (value, labels)
    assert best is not None and worst is not None
    return tolerance.Extremes(
        Fraction(best[0]), Fraction(worst[0]), best[1], worst[1],
        f"all {2 ** len(variables)} corners, each integrated again numerically (extremes "
        "inside the box are not searched)", True)
