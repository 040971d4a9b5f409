"""The fast evaluator of closed forms against plain sympy differentiation and numpy
evaluation of the same expression (lambdify), and against exact sympy substitution."""

import itertools
from fractions import Fraction

import numpy as np
import pytest
import sympy

from symcirc.analysis.evaluate import LambdifiedForm, RationalForm, closed_form

x, y, z, w, u = sympy.symbols("x y z w u")
# not multilinear, a constant term, a negative coefficient, five variables (odd split)
EXPRESSION = (x**2 * y - 3 * z * w + sympy.Rational(1, 7) + u**3 * x) / (1 + x * y * z + w**2 + u)
SYMBOLS = [x, y, z, w, u]
LOWS = [0.5, -1.0, 2.0, 0.0, 0.1]
HIGHS = [1.5, 2.0, 3.0, 0.25, 0.3]


def _reference(expression):
    function = sympy.lambdify(SYMBOLS, expression, modules="numpy")
    gradient = [sympy.lambdify(SYMBOLS, sympy.diff(expression, s), modules="numpy")
                for s in SYMBOLS]
    return function, gradient


def _columns(count: int, seed: int = 3):
    rng = np.random.default_rng(seed)
    return [rng.uniform(lo, hi, count) for lo, hi in zip(LOWS, HIGHS, strict=True)]


def test_values_and_partials_match_lambdify():
    form = RationalForm(EXPRESSION, SYMBOLS)
    function, gradient = _reference(EXPRESSION)
    columns = _columns(20_000)  # more than one chunk
    # a few points lie near a pole of EXPRESSION (its denominator cancels to ~1e-4), where
    # two evaluation orders agree only to the condition number times the rounding error
    assert np.allclose(form.values(columns, 20_000), function(*columns), rtol=1e-9)
    expected = np.column_stack([g(*columns) for g in gradient])
    assert np.allclose(form.partials(columns, 20_000), expected, rtol=1e-10, atol=1e-12)


def test_corners_in_index_order_including_a_zero_coordinate():
    form = RationalForm(EXPRESSION, SYMBOLS)
    function, gradient = _reference(EXPRESSION)
    corners = list(itertools.product(*zip(LOWS, HIGHS, strict=True)))
    # corner i has variable j high when bit j of i is set
    index = [sum(1 << j for j in range(5) if corner[j] == HIGHS[j]) for corner in corners]
    values = form.corners(LOWS, HIGHS)
    partials = form.corner_partials(LOWS, HIGHS)  # w = 0 at the low corners
    for corner, i in zip(corners, index, strict=True):
        assert values[i] == pytest.approx(function(*corner), rel=1e-12)
        for k, g in enumerate(gradient):
            assert partials[i, k] == pytest.approx(g(*corner), rel=1e-10, abs=1e-12)


def test_exact_values_and_gradient_match_sympy_substitution():
    form = RationalForm(EXPRESSION, SYMBOLS)
    point = dict(zip(SYMBOLS, [Fraction(3, 2), Fraction(-1, 3), Fraction(2), Fraction(0),
                               Fraction(1, 5)], strict=True))
    subs = {s: sympy.Rational(v.numerator, v.denominator) for s, v in point.items()}
    assert form.exact(point) == EXPRESSION.subs(subs)
    for k, s in enumerate(SYMBOLS):
        assert form.exact_gradient(point)[k] == sympy.diff(EXPRESSION, s).subs(subs)


def test_fixed_symbols_are_set_in_the_polynomials():
    form = RationalForm(EXPRESSION, [x, y, z], {w: Fraction(1, 4), u: Fraction(3)})
    reduced = EXPRESSION.subs({w: sympy.Rational(1, 4), u: 3})
    function = sympy.lambdify([x, y, z], reduced, modules="numpy")
    columns = _columns(100)[:3]
    assert np.allclose(form.values(columns, 100), function(*columns), rtol=1e-12)


def test_square_roots_fall_back_to_lambdify():
    form = closed_form(sympy.sqrt(x) * y, [x, y])
    assert isinstance(form, LambdifiedForm)
    assert form.exact({x: Fraction(4), y: Fraction(3)}) == 6
    assert form.values([np.array([9.0]), np.array([2.0])], 1)[0] == pytest.approx(6.0)


def test_an_atom_such_as_pi_falls_back_to_lambdify():
    form = closed_form(sympy.pi * x / (1 + y), [x, y])
    assert isinstance(form, LambdifiedForm)


def test_horner_diagram_against_exact_evaluation_of_an_engine_result():
    """A six-section ladder's output (the engine's rational function, 233 denominator
    terms): numbers at random points and corners against exact rational evaluation, and
    the circuit's order of parts giving the smaller diagram (Rs1, Rp1, Rs2, ... follows the
    ladder; the names' order does not)."""
    import symcirc

    lines = ["voltage source U (n0, gnd) = 1 V"]
    for i in range(1, 7):
        lines += [f"resistor Rs{i} (n{i - 1}, n{i}) = 1k", f"resistor Rp{i} (n{i}, gnd) = 3k"]
    circuit = symcirc.parse("\n".join([*lines, "port out (n6, gnd)"]) + "\n")
    (result,) = circuit.derive("V(out)")
    names = list(result.exact.symbol_names())
    symbols = [sympy.Symbol(n) for n in names]
    plain = RationalForm(result.exact, symbols)
    hinted = RationalForm(result.exact, symbols, order=list(circuit.elements))
    assert hinted._diagram.size < plain._diagram.size / 3
    rng = np.random.default_rng(5)
    points = [rng.integers(1, 20, 50).astype(float) for _ in symbols]
    for form in (plain, hinted):
        values = form.values(points, 50)
        partials = form.partials(points, 50)
        for i in range(50):
            point = {s: Fraction(int(c[i])) for s, c in zip(symbols, points, strict=True)}
            assert values[i] == pytest.approx(float(form.exact(point)), rel=1e-13)
            exact = form.exact_gradient(point)
            assert partials[i] == pytest.approx([float(g) for g in exact], rel=1e-12)
    lows, highs = [1.0] * len(symbols), [2.0] * len(symbols)
    corners = hinted.corners(lows, highs)
    for i in (0, 1, 2**len(symbols) - 1, 4321):
        point = {s: Fraction(2 if i >> j & 1 else 1) for j, s in enumerate(symbols)}
        assert corners[i] == pytest.approx(float(hinted.exact(point)), rel=1e-13)
