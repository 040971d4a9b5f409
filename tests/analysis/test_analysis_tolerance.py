"""Tolerance analysis: linearised and root-sum-square spreads against the `uncertainties`
package, Monte Carlo against its linear propagation within statistical bounds, corner
extremes against brute force, a non-monotonic case, and definitions counted once."""

import itertools
import math
from fractions import Fraction

import numpy as np
import pytest
import sympy
from uncertainties import ufloat

from symcirc.analysis.tolerance import ToleranceInputError, analyse
from symcirc.model.circuit import Tolerance

R1, R2, R3, R4, Ub = sympy.symbols("R1 R2 R3 R4 Ub")
BRIDGE = Ub * (R1 / (R1 + R2) - R4 / (R3 + R4))
NOMINALS = {R1: Fraction(351), R2: Fraction(350), R3: Fraction(350), R4: Fraction(349),
            Ub: Fraction(5)}


def _pct(p) -> Tolerance:
    return Tolerance(Fraction(p) / 100, Fraction(p) / 100, True)


TOLERANCES = {R1: _pct("0.1"), R2: _pct("0.1"), R3: _pct("0.5"), R4: _pct("0.1"), Ub: _pct(1)}


def _with_uncertainties(expression, nominals, sigma_of):
    """The same expression evaluated by `uncertainties` (linear propagation)."""
    symbols = sorted(expression.free_symbols, key=str)
    function = sympy.lambdify(symbols, expression, modules="math")
    values = [ufloat(float(nominals[x]), sigma_of(x)) for x in symbols]
    return function(*values)


def _half_band(x):
    low, high = TOLERANCES[x].bounds(NOMINALS[x])
    return float(high - low) / 2


def test_rss_and_linearised_spread_match_uncertainties():
    a = analyse(BRIDGE, NOMINALS, TOLERANCES)
    reference = _with_uncertainties(BRIDGE, NOMINALS, _half_band)
    assert a.rss == pytest.approx(reference.std_dev, rel=1e-12)
    linear = sum(abs(v) for v in reference.error_components().values())
    assert float(a.linear_high - a.nominal) == pytest.approx(linear, rel=1e-12)
    assert float(a.nominal - a.linear_low) == pytest.approx(linear, rel=1e-12)
    assert float(a.nominal) == pytest.approx(reference.nominal_value, rel=1e-15)


@pytest.mark.parametrize("distribution, sigma_per_band", [("uniform", 1 / math.sqrt(3)),
                                                           ("normal", 1 / 3)])
def test_monte_carlo_agrees_with_linear_propagation(distribution, sigma_per_band):
    """Uniform over ±Δ has σ = Δ/√3; normal with Δ = 3σ has σ = Δ/3 (the stated conventions).
    With 100,000 samples the standard error of the mean is σ/316 and that of the standard
    deviation about σ/447; the bounds allow five standard errors plus the tiny
    non-linearity of the bridge over these tolerances."""
    a = analyse(BRIDGE, NOMINALS, TOLERANCES, distribution=distribution, seed=7)
    reference = _with_uncertainties(BRIDGE, NOMINALS, lambda x: _half_band(x) * sigma_per_band)
    n = a.monte_carlo.samples
    sigma = reference.std_dev
    assert n == 100_000 and a.monte_carlo.seed == 7
    mean_bound = 5 * sigma / math.sqrt(n) + 1e-4 * sigma
    assert abs(a.monte_carlo.mean - reference.nominal_value) < mean_bound
    assert abs(a.monte_carlo.std / sigma - 1) < 5 / math.sqrt(2 * n) + 1e-3
    assert a.monte_carlo.quantile_low < a.monte_carlo.mean < a.monte_carlo.quantile_high


def test_monte_carlo_is_reproducible_for_a_seed():
    first = analyse(BRIDGE, NOMINALS, TOLERANCES, seed=3).monte_carlo
    again = analyse(BRIDGE, NOMINALS, TOLERANCES, seed=3).monte_carlo
    other = analyse(BRIDGE, NOMINALS, TOLERANCES, seed=4).monte_carlo
    assert (first.mean, first.std) == (again.mean, again.std)
    assert first.mean != other.mean


def test_corner_extremes_equal_brute_force():
    a = analyse(BRIDGE, NOMINALS, TOLERANCES)
    symbols = sorted(TOLERANCES, key=str)
    corners = []
    for ends in itertools.product(*(TOLERANCES[x].bounds(NOMINALS[x]) for x in symbols)):
        value = BRIDGE.subs(dict(zip(symbols, ends, strict=True)))
        corners.append(Fraction(int(value.p), int(value.q)))
    assert a.extremes.low == min(corners)
    assert a.extremes.high == max(corners)
    assert "all 32 corners" in a.extremes.method
    # the box straddles balance, so ∂Q/∂Ub changes sign: checked, searched, still a corner
    assert a.extremes.non_monotonic == ("Ub",)
    # extremes lie outside or on the linearised bounds' neighbourhood, inside the MC range
    assert a.extremes.low <= a.monte_carlo.minimum and a.monte_carlo.maximum <= a.extremes.high


def test_asymmetric_tolerance_linear_bounds():
    C, R = sympy.symbols("C R")
    tau = R * C  # +80 % / -20 % electrolytic, 1 % resistor
    a = analyse(tau, {R: Fraction(1000), C: Fraction(1, 10**4)},
                {C: Tolerance(Fraction(80, 100), Fraction(20, 100), True), R: _pct(1)})
    # by hand: ∂τ/∂C·ΔC = 1000·(+80 µF, -20 µF); ∂τ/∂R·ΔR = 1e-4·(±10 Ω)
    assert a.linear_high == Fraction(1, 10) + Fraction(8, 100) + Fraction(1, 1000)
    assert a.linear_low == Fraction(1, 10) - Fraction(2, 100) - Fraction(1, 1000)
    assert a.extremes.high == Fraction(1010) * Fraction(18, 10**5)
    assert a.extremes.monotonic and "corner extremes are the extremes" in a.extremes.method


def test_non_monotonic_quantity_is_searched():
    """Power in a load from a 1 kΩ source peaks at RL = 1 kΩ, inside RL's ±10 % band:
    corners miss the peak; the bounded search must find U²/(4·Rs) (maximum power transfer,
    e.g. Hayt, Kemmerly & Durbin, Engineering Circuit Analysis, §5.6; from memory)."""
    Rs, RL, U = sympy.symbols("Rs RL U")
    power = U**2 * RL / (Rs + RL) ** 2
    a = analyse(power, {Rs: Fraction(1000), RL: Fraction(1000), U: Fraction(10)},
                {RL: _pct(10)})
    assert not a.extremes.monotonic and a.extremes.non_monotonic == ("RL",)
    assert "coordinate search" in a.extremes.method
    assert float(a.extremes.high) == pytest.approx(100 / 4000, rel=1e-9)
    loads = np.linspace(900.0, 1100.0, 401)
    grid = 100 * loads / (1000 + loads) ** 2  # numpy, independently of the closed form
    assert float(a.extremes.low) == pytest.approx(grid.min(), rel=1e-12)


def test_definitions_count_each_toleranced_symbol_once():
    """Rt = R0·(1 + alpha·T) and Rs = R0: the ratio Rt/Rs does not depend on R0 at all, so
    R0's tolerance must not spread it; alpha's does."""
    R0, alpha, T, Rt, Rs = sympy.symbols("R0 alpha T Rt Rs")
    definitions = {Rt: R0 * (1 + alpha * T), Rs: R0}
    nominals = {R0: Fraction(100), alpha: Fraction(385, 10**5), T: Fraction(50)}
    nominals[Rt] = Fraction(100) * (1 + Fraction(385, 10**5) * 50)
    nominals[Rs] = Fraction(100)
    a = analyse(Rt / Rs, nominals, {R0: _pct(1), alpha: _pct(2)}, definitions)
    assert [v.label for v in a.variables] == ["alpha"]
    assert a.extremes.high == 1 + Fraction(385, 10**5) * Fraction(102, 100) * 50


def test_own_tolerance_of_a_defined_symbol():
    R0, Rt = sympy.symbols("R0 Rt")
    a = analyse(Rt, {R0: Fraction(100), Rt: Fraction(200)}, {R0: _pct(1), Rt: _pct(5)},
                {Rt: 2 * R0})
    assert sorted(v.label for v in a.variables) == ["R0", "Rt (own tolerance)"]
    assert a.extremes.high == 200 * Fraction(101, 100) * Fraction(105, 100)


def test_more_than_sixteen_symbols_use_a_bounded_search_equal_to_brute_force():
    """18 toleranced symbols: no corner enumeration; the bounded search must still land on
    the extremes a brute-force numpy evaluation of all 262,144 corners finds."""
    xs = sympy.symbols("R1:19")
    q = sum(xs[:9]) / sum(xs)
    nominals = {x: Fraction(1000 + i) for i, x in enumerate(xs)}
    a = analyse(q, nominals, {x: _pct(1) for x in xs}, samples=2000)
    assert "more than 16" in a.extremes.method and "bounded search" in a.extremes.method
    assert "coordinate search" in a.extremes.method
    bits = (np.arange(2**18)[:, None] >> np.arange(18)) & 1
    lows = np.array([0.99 * float(nominals[x]) for x in xs])
    corners = lows + bits * (0.02 * lows / 0.99)
    values = corners[:, :9].sum(axis=1) / corners.sum(axis=1)
    assert float(a.extremes.high) == pytest.approx(values.max(), rel=1e-13)
    assert float(a.extremes.low) == pytest.approx(values.min(), rel=1e-13)


def test_more_than_sixteen_symbols_find_an_interior_maximum():
    """17 toleranced symbols, one of which (RL) puts a maximum inside its band (maximum
    power transfer at RL = Rs, Hayt, Kemmerly & Durbin; from memory): the search finds
    U²/(4·Rs) plus the other terms at their upper ends, which no corner reaches."""
    Rs, RL, U = sympy.symbols("Rs RL U")
    xs = sympy.symbols("x1:17")
    q = U**2 * RL / (Rs + RL) ** 2 + sum(xs) / 1000
    nominals = {Rs: Fraction(1000), RL: Fraction(1000), U: Fraction(10)}
    nominals.update({x: Fraction(1) for x in xs})
    a = analyse(q, nominals, {RL: _pct(10), **{x: _pct(5) for x in xs}}, samples=2000)
    assert "bounded search" in a.extremes.method and a.extremes.non_monotonic == ("RL",)
    assert float(a.extremes.high) == pytest.approx(100 / 4000 + 16 * 1.05 / 1000, rel=1e-9)
    assert a.extremes.high_at["RL"] == pytest.approx(1000, rel=1e-6)


def test_inputs_that_cannot_be_analysed():
    s = sympy.Symbol("s")
    with pytest.raises(ToleranceInputError, match="depends on s"):
        analyse(R1 / (1 + s * R1), {R1: Fraction(1)}, {R1: _pct(1)})
    with pytest.raises(ToleranceInputError, match="no value for R2"):
        analyse(R1 / (R1 + R2), {R1: Fraction(1)}, {R1: _pct(1)})
