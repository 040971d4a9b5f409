"""The polynomial gcd's shortcuts (term content, exact division by the smaller operand,
trial division by its factors, coprimality checks) give exactly the general gcd of the
backend's own algorithm, on both backends: the same polynomial, sign included; and the
elimination that takes its gcds lazily gives the values of the full solve."""

from __future__ import annotations

import random

import pytest

from symcirc.algebra.polynomials import PolynomialRing

NAMES = ["s", "R1", "R2", "C1", "gm", "ro"]


@pytest.fixture(params=["flint", "sympy"])
def ring(request) -> PolynomialRing:
    return PolynomialRing(NAMES, request.param)


def _general(ring: PolynomialRing, a, b):
    """The backend's own gcd, normalised to a positive leading coefficient."""
    g = a.gcd(b)
    return -g if ring.leading_coefficient(g) < 0 else g


def _variables(ring: PolynomialRing):
    return [ring.gen(n) for n in NAMES]


def _random(ring: PolynomialRing, rng: random.Random, terms: int, degree: int = 2):
    out = []
    for _ in range(terms):
        exps = [rng.randint(0, degree) if rng.random() < 0.4 else 0 for _ in NAMES]
        out.append((tuple(exps), rng.choice([-3, -2, -1, 1, 1, 2, 5])))
    return ring.from_terms(out)


def test_coprime_operands_have_gcd_one(ring):
    s, r1, r2, c1, gm, ro = _variables(ring)
    a = s * c1 * r1 + 1
    b = (gm * ro + 1) * (r1 + r2) ** 3 + s * c1 * r2
    assert ring.gcd(a, b) == ring.one == _general(ring, a, b)
    assert ring.gcd(r1 + r2, gm * ro - 1) == ring.one  # no shared variable


def test_small_operand_dividing_the_large_is_the_gcd(ring):
    s, r1, r2, c1, gm, ro = _variables(ring)
    small = -(s * c1 * r1 - gm * r1 + 1)
    large = small * ((r1 + r2 + ro) ** 4 + s * c1 * gm)
    g = ring.gcd(small, large)
    assert g == -small  # positive leading coefficient
    assert g == _general(ring, small, large)
    assert ring.gcd(large, small) == g


def test_monomial_and_integer_content(ring):
    s, r1, r2, c1, gm, ro = _variables(ring)
    a = 6 * r1**2 * r2 * ro * (s * c1 + gm)
    b = -4 * r1 * r2**3 * (s * c1 * ro + 1)
    g = ring.gcd(a, b)
    assert g == 2 * r1 * r2
    assert g == _general(ring, a, b)
    assert ring.gcd(a, ring.constant(-9)) == ring.constant(3)
    assert ring.gcd(ring.zero, b) == -b
    assert ring.gcd(ring.zero, ring.zero) == ring.zero


def test_common_factor_of_the_small_operand_found_by_its_factors(ring):
    s, r1, r2, c1, gm, ro = _variables(ring)
    shared = s * c1 * r1 + s * c1 * r2 + 1
    small = shared**2 * (gm * ro + 1) * (r1 - r2)
    large = shared * (r1 - r2) * ((r1 + r2 + ro + gm) ** 4 + s**2 * c1)
    g = ring.gcd(small, large)
    assert g == _general(ring, small, large)
    assert ring.exquo(g, shared * (r1 - r2)) in (ring.one, -ring.one)


def test_random_polynomials_match_the_general_gcd(ring):
    rng = random.Random(20261204)
    for _ in range(60):
        common = _random(ring, rng, rng.randint(1, 3))
        if ring.is_zero(common):
            continue
        a = common * _random(ring, rng, rng.randint(1, 4))
        b = common * _random(ring, rng, rng.randint(4, 30)) * _random(ring, rng, 2, 1)
        if rng.random() < 0.3:
            b = b * a  # a divides b
        assert ring.gcd(a, b) == _general(ring, a, b), (a, b)
        assert ring.gcd(b, a) == _general(ring, a, b), (a, b)


def test_both_backends_give_the_same_gcd():
    rng = random.Random(7)
    flint_ring, sympy_ring = PolynomialRing(NAMES, "flint"), PolynomialRing(NAMES, "sympy")
    for _ in range(20):
        terms = [(tuple(rng.randint(0, 2) for _ in NAMES), rng.randint(-4, 4)) for _ in range(6)]
        cofactor = [(tuple(rng.randint(0, 1) for _ in NAMES), rng.randint(-4, 4))
                    for _ in range(20)]
        results = []
        for ring in (flint_ring, sympy_ring):
            a = ring.from_terms(terms)
            b = a * ring.from_terms(cofactor) + ring.from_terms(terms[:2])
            results.append(ring.terms(ring.gcd(a * 3, b * 6)))
        assert results[0] == results[1]


def test_one_unknown_solved_lazily_equals_the_full_solve(ring):
    """`eliminate.solve_one` gives each right-hand side's value, in lowest terms, only when
    called, and the same value as `eliminate.solve`; a singular system still says so."""
    from symcirc.engine import eliminate

    s, r1, r2, c1, gm, ro = _variables(ring)
    rows = [{0: r1 + r2, 1: -r2, 2: s * c1}, {0: gm * ro, 1: ro + r1, 2: ring.one},
            {0: ring.one, 1: s * c1 * r2, 2: r1 * r2 + ro}]
    rhs = [{0: ring.one}, {1: gm, 2: ring.one}, {}]
    for unknown in range(3):
        expected = eliminate.solve(rows, rhs, [unknown], ring)
        lazy = eliminate.solve_one(rows, rhs, unknown, ring)
        assert [value() for value in lazy] == [values[0] for values in expected]
        assert [value() for value in lazy][2].is_zero()
    singular = [{0: r1, 1: r2}, {0: 2 * r1, 1: 2 * r2}]
    with pytest.raises(eliminate.SingularSystem):
        eliminate.solve_one(singular, [{0: ring.one}], 1, ring)
