"""Component values: closed forms for x from Q = target, several solutions, IEC 60063 picks."""

from fractions import Fraction

import numpy as np
import pytest
import sympy

from symcirc.analysis.components import SolveError, solve_for

Rf, Rin, R1, R2, C, f0 = sympy.symbols("Rf Rin R1 R2 C f0")


def test_inverting_amplifier_feedback_resistor_for_gain_minus_10():
    """Ideal inverting amplifier gain -Rf/Rin (e.g. Horowitz & Hill, The Art of Electronics,
    ch. 4; from memory): gain -10 from a 10 kΩ input needs 100 kΩ, a value of every series."""
    solved = solve_for(-Rf / Rin, -10, Rf, {Rin: Fraction(10_000), Rf: Fraction(47_000)})
    solution, = solved.solutions
    assert sympy.simplify(solution.expression - 10 * Rin) == 0
    assert solution.value == 100_000
    for choice in solution.choices:
        assert choice.best == choice.below == choice.above == 100_000
        assert choice.q_below == -10
    assert [c.series for c in solution.choices] == ["E6", "E12", "E24", "E48", "E96", "E192"]


def test_divider_lower_resistor_with_series_values_and_resulting_q():
    """R1 ∥ R2 = 3 kΩ with R1 = 10 kΩ: R2 = 30/7 kΩ ≈ 4.2857 kΩ (by hand: 1/R2 = 1/3k - 1/10k)."""
    solved = solve_for(R1 * R2 / (R1 + R2), 3000, R2, {R1: Fraction(10_000)})
    solution, = solved.positive
    assert solution.value == Fraction(30_000, 7)
    choices = {c.series: c for c in solution.choices}
    e24 = choices["E24"]
    assert (e24.below, e24.above) == (3900, 4300)
    assert e24.q_above == Fraction(10_000 * 4300, 14_300)
    assert e24.best == 4300  # 3.007 kΩ is nearer 3 kΩ than 2.806 kΩ
    e96 = choices["E96"]
    assert (e96.below, e96.above) == (4220, 4320)


def test_quadratic_gives_two_positive_solutions():
    """R1·R2/(R1 + R2)² = 1/5 has two positive roots, R2 = R1·(3 ± √5)/2 (by hand)."""
    solved = solve_for(R1 * R2 / (R1 + R2) ** 2, Fraction(1, 5), R2, {R1: Fraction(10_000)})
    values = sorted(float(s.value) for s in solved.positive)
    assert values == pytest.approx([10_000 * (3 - 5**0.5) / 2, 10_000 * (3 + 5**0.5) / 2])
    roots = {sympy.simplify(s.expression / R1) for s in solved.solutions}
    assert roots == {(3 - sympy.sqrt(5)) / 2, (3 + sympy.sqrt(5)) / 2}


def test_rc_corner_frequency_for_capacitor():
    """f0 = 1/(2π·R·C): C for 1 kHz with R = 15.9 kΩ is ≈ 10 nF (numpy check)."""
    solved = solve_for(1 / (2 * sympy.pi * R1 * C), 1000, C, {R1: Fraction(15_900)})
    solution, = solved.positive
    assert float(solution.value) == pytest.approx(1 / (2 * np.pi * 15_900 * 1000), rel=1e-12)
    e12 = {c.series: c for c in solution.choices}["E12"]
    assert e12.best == Fraction(10, 10**9)


def test_degree_three_has_numbers_only():
    solved = solve_for(R2**3 / (R1 + R2) ** 3, Fraction(1, 8), R2, {R1: Fraction(1000)})
    positive = solved.positive
    assert len(positive) == 1 and positive[0].expression is None
    assert float(positive[0].value) == pytest.approx(1000.0, rel=1e-12)


def test_no_dependence_is_an_error():
    with pytest.raises(SolveError, match="does not depend on Rf"):
        solve_for(R1 / R2, 3, Rf, {R1: Fraction(1), R2: Fraction(1)})
