"""Rejection ratios as levels in dB: `cmrr(A_dm, A_cm)` and `psrr(A, A_supply)`.

CMRR = 20·log10|A_dm/A_cm| (differential against common-mode gain) and
PSRR = 20·log10|A/A_supply| (signal gain against the gain from a supply source). Both are
20·log10|A_wanted/A_unwanted|: large when the unwanted gain is small. Each argument is a
quantity, or a quantity divided by (or times) a part, parameter, number or quantity, so that
the two gains can be brought to the same unit (`gain(Iload, sense)/Rs`, a transresistance
per the shunt, is a voltage gain).

The unwanted gain is near zero and may change sign across the tolerances (a perfect match
lies inside the box): the CMRR is then unbounded above. So its tolerance is analysed through
the rejection r = A_unwanted/A_wanted, which has no pole: CMRR = −20·log10|r|, the worst
(lowest) CMRR at the largest |r| over the box, the best unbounded when r's range holds 0.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import sympy

from ..language import syntax
from ..model.circuit import LAPLACE, Circuit
from ..model.units import decibels, eng
from ..model.units import per as unit_per
from ..quantities.registry import DeriveOptions
from ..results import Result
from . import tolerance
from .quantities import Reader, _names, _unit_of, definitions, tolerances
from .tidy import tidy
from .values import exact_value

WORDS = {
    "cmrr": ("CMRR", "differential gain A_dm", "common-mode gain A_cm"),
    "psrr": ("PSRR", "signal gain A", "gain from the supply A_supply"),
}
"""Each ratio's name and the words for its two arguments."""


@dataclass(frozen=True)
class Gain:
    """One argument: its expression, unit and text."""

    expression: sympy.Expr
    unit: str
    text: str


@dataclass(frozen=True)
class Ratio:
    """A rejection ratio read from `cmrr(..)` or `psrr(..)`."""

    name: str
    text: str
    wanted: Gain
    unwanted: Gain

    @property
    def level(self) -> sympy.Expr:
        """20·log10|wanted| − 20·log10|unwanted| in dB: the two gains' levels, each in
        lowest terms, read as the difference an engineer draws on a Bode plot."""
        from sympy.codegen.cfunctions import log10

        return sympy.Add(20 * log10(sympy.Abs(tidy(self.wanted.expression))),
                         -20 * log10(sympy.Abs(tidy(self.unwanted.expression))),
                         evaluate=False)

    @property
    def rejection(self) -> sympy.Expr:
        """r = unwanted/wanted, the ratio's level being −20·log10|r|."""
        return tidy(self.unwanted.expression / self.wanted.expression)


def _gain(read: Reader, node, what: str) -> Gain:
    """A quantity, or a quantity divided by or times a name, number or another quantity."""
    if isinstance(node, syntax.Binary) and node.op in ("/", "*"):
        left = _gain(read, node.left, what)
        right = _factor(read, node.right)
        if node.op == "/":
            return Gain(left.expression / right.expression, unit_per(left.unit, right.unit),
                        f"({left.text}/{right.text})")
        if left.unit and right.unit:
            raise read.error(node, f"{what}: multiply a quantity only by a pure number; divide "
                                   "by a part or quantity to change its unit")
        return Gain(left.expression * right.expression, left.unit or right.unit,
                    f"({left.text}*{right.text})")
    if isinstance(node, syntax.Quantity | syntax.Voltage | syntax.Current):
        result = read.single(node)
        if LAPLACE in result.expression.free_symbols:
            raise read.error(node, f"{what}: {result.quantity} depends on s; take its DC value "
                                   f"({read.quantity(node).text}.dc) or its magnitude at a "
                                   f"frequency (at({read.quantity(node).text}, 1 kHz).magnitude)")
        return Gain(result.expression, result.unit, result.quantity)
    raise read.error(node, f"{what}: expected a quantity here, such as gain(Ucm, out), "
                           "optionally divided by a part: gain(Iload, out)/Rs")


def _factor(read: Reader, node) -> Gain:
    if isinstance(node, syntax.Quantity | syntax.Voltage | syntax.Current):
        return _gain(read, node, "a divisor")
    if isinstance(node, syntax.Name):
        symbol = read.symbol(node)
        return Gain(symbol, _unit_of(read.circuit, symbol), node.name)
    if isinstance(node, syntax.Number):
        return Gain(sympy.Rational(node.value.numerator, node.value.denominator),
                    node.unit or "", node.text)
    raise read.error(node, "expected a part or parameter name, a number or a quantity here")


def read_ratio(circuit: Circuit, quantity: syntax.Quantity, options: DeriveOptions) -> Ratio:
    """The two gains of `cmrr(A_dm, A_cm)` or `psrr(A, A_supply)`, in the same unit."""
    read = Reader(circuit, options)
    short, first, second = WORDS[quantity.name]
    args = read.arguments(quantity, 2, 2, f"the {first} and the {second}: "
                                          f"{quantity.name}(gain(Udm, out), gain(Ucm, out))")
    wanted = _gain(read, args[0], f"the {first}")
    unwanted = _gain(read, args[1], f"the {second}")
    if wanted.unit != unwanted.unit:
        def unit(g: Gain) -> str:
            return f"in {g.unit}" if g.unit else "a pure number"

        raise read.error(quantity, f"{short} compares two gains of one unit: {wanted.text} is "
                                   f"{unit(wanted)}, {unwanted.text} {unit(unwanted)}; divide "
                                   "one by the part that converts it (e.g. gain(Iload, out)/Rs "
                                   "for a current through a shunt Rs)")
    nominals = circuit.symbol_nominals()
    if exact_value(wanted.expression, nominals) == 0:
        raise read.error(args[0], f"the {first} {wanted.text} is 0 at the nominal values: "
                                  f"no {short} to give")
    return Ratio(quantity.name, quantity.text, wanted, unwanted)


def ratio_quantity(circuit: Circuit, quantity: syntax.Quantity,
                   options: DeriveOptions) -> list[Result]:
    """`cmrr(A_dm, A_cm)` or `psrr(A, A_supply)` in dB, with both gains at nominal."""
    ratio = read_ratio(circuit, quantity, options)
    short, first, second = WORDS[ratio.name]
    nominals = circuit.symbol_nominals()
    wanted = exact_value(ratio.wanted.expression, nominals)
    unwanted = exact_value(ratio.unwanted.expression, nominals)
    if unwanted == 0:
        raise Reader(circuit, options).error(
            quantity, f"the {second} {ratio.unwanted.text} is 0 at the nominal values (a "
                      f"perfect match), so the {short} is unbounded there; "
                      f"tolerance({quantity.text}) gives its worst case over the tolerances")
    notes = [f"{short} = 20·log10|{ratio.wanted.text} / {ratio.unwanted.text}|, the {first} "
             f"over the {second}, in dB."]
    if wanted is not None and unwanted is not None:
        unit = ratio.wanted.unit
        notes.append(f"At the nominal values: {first} {eng(wanted, unit)}, {second} "
                     f"{eng(unwanted, unit)}: {short} "
                     f"{decibels(20 * math.log10(abs(float(wanted / unwanted))))}.")
    details = {"ratio": ratio.name, "wanted": ratio.wanted.text,
               "unwanted": ratio.unwanted.text, "gain_unit": ratio.wanted.unit,
               "wanted_nominal": None if wanted is None else float(wanted),
               "unwanted_nominal": None if unwanted is None else float(unwanted)}
    return [Result(quantity.text, ratio.level, "dB", _names(nominals), tuple(notes),
                   details={"rejection": details}, parsed=quantity)]


def level(r: float) -> float:
    """−20·log10|r|, +∞ for r = 0."""
    return math.inf if r == 0 else -20 * math.log10(abs(r))


@dataclass(frozen=True)
class LevelSpread:
    """A rejection ratio's spread over the tolerances, in dB (∞ for a perfect match)."""

    ratio: Ratio
    analysis: tolerance.ToleranceAnalysis
    """The tolerance analysis of the rejection r."""
    nominal: float
    worst: float
    best: float
    levels: Any
    """The Monte Carlo samples as levels in dB (numpy array)."""

    @property
    def label(self) -> str:
        return WORDS[self.ratio.name][0]


def spread(circuit: Circuit, inner: syntax.Quantity, options: DeriveOptions,
           distribution: str = "uniform") -> LevelSpread:
    """The spread of `cmrr(..)` or `psrr(..)` through its rejection r (module docstring)."""
    import numpy as np

    ratio = read_ratio(circuit, inner, options)
    try:
        a = tolerance.analyse(ratio.rejection, circuit.symbol_nominals(), tolerances(circuit),
                              definitions(circuit), distribution=distribution,
                              seed=options.seed)
    except tolerance.ToleranceInputError as problem:
        raise Reader(circuit, options).error(
            inner, f"tolerance of {inner.text}: {problem}") from None
    low, high = float(a.extremes.low), float(a.extremes.high)
    best = math.inf if low <= 0 <= high else level(min(abs(low), abs(high)))
    with np.errstate(divide="ignore"):
        levels = -20 * np.log10(np.abs(a.monte_carlo.values))
    return LevelSpread(ratio, a, level(float(a.nominal)), level(max(abs(low), abs(high))),
                       best, levels)


def tolerance_quantity(circuit: Circuit, quantity: syntax.Quantity, inner: syntax.Quantity,
                       options: DeriveOptions, distribution: str) -> list[Result]:
    """`tolerance(cmrr(..))`: the worst and best level over the tolerance box and its Monte
    Carlo spread, through the rejection r = A_unwanted/A_wanted (see the module docstring)."""
    import numpy as np

    found = spread(circuit, inner, options, distribution)
    ratio, a, levels = found.ratio, found.analysis, found.levels
    nominal, worst, best = found.nominal, found.worst, found.best
    short, first, second = WORDS[ratio.name]
    low, high = float(a.extremes.low), float(a.extremes.high)
    through_zero = math.isinf(best)
    mc = a.monte_carlo
    q_low, q_high = (float(v) for v in np.quantile(levels, [0.001, 0.999]))
    finite = levels[np.isfinite(levels)]
    at_worst = a.extremes.high_at if abs(high) >= abs(low) else a.extremes.low_at
    worst_at = ", ".join(f"{name} = {eng(value, _unit_of(circuit, sympy.Symbol(name)))}"
                         for name, value in sorted(at_worst.items()))

    def db(value: float) -> str:
        return "unbounded (∞ dB)" if math.isinf(value) else decibels(value)

    notes = [
        f"{short} = −20·log10|r| with the rejection r, the {second} over the {first}, "
        f"analysed over the tolerance box (r has no pole where the {first} is away from "
        "zero).",
        f"Nominal {db(nominal)}; r from {eng(low)} to "
        f"{eng(high)} over the box ({a.extremes.method}).",
        f"Worst case {db(worst)} at {worst_at or 'the nominal values'}; best "
        + ("unbounded: r changes sign inside the box, so a perfect match is among the "
           "tolerances." if through_zero else f"{db(best)}."),
        f"Monte Carlo, {mc.samples:,} samples, seed {mc.seed}, "
        f"{tolerance.DISTRIBUTION_TEXT[mc.distribution]}: 0.1 % quantile {db(q_low)} (the "
        f"{short} that 99.9 % of builds exceed), median "
        f"{db(float(np.median(finite)) if finite.size else math.inf)}, 99.9 % quantile "
        f"{db(q_high)}.",
        *a.warnings,
    ]
    details = {
        "ratio": ratio.name, "rejection": sympy.sstr(ratio.rejection),
        "nominal_dB": None if math.isinf(nominal) else nominal,
        "worst_dB": None if math.isinf(worst) else worst,
        "best_dB": None if math.isinf(best) else best,
        "best_unbounded": math.isinf(best),
        "worst_at": {k: float(v) for k, v in at_worst.items()},
        "rejection_low": low, "rejection_high": high, "method": a.extremes.method,
        "monte_carlo": {"distribution": mc.distribution, "samples": mc.samples,
                        "seed": mc.seed, "quantile_0.1%_dB": q_low,
                        "quantile_99.9%_dB": None if math.isinf(q_high) else q_high,
                        "median_dB": float(np.median(finite)) if finite.size else None},
    }
    # a perfect match at nominal has no finite level: the result then shows no value
    shown = {} if a.nominal == 0 else _names(circuit.symbol_nominals())
    return [Result(f"tolerance({inner.text})", ratio.level, "dB", shown, tuple(notes),
                   details={"rejection_tolerance": details}, parsed=quantity)]
