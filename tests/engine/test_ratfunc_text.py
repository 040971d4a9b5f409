"""The fast text printer for python-flint polynomials writes exactly what the generic
printer writes (term by term in Python), on random rational functions with and without s."""

from __future__ import annotations

import random

import flint  # noqa: F401  (a runtime dependency: the fast path must exist)
import pytest

from symcirc.algebra.polynomials import PolynomialRing
from symcirc.algebra.rational import _TEXT, _FlintText, _Printer


def _random_poly(ring: PolynomialRing, rng: random.Random):
    terms = []
    for _ in range(rng.randint(0, 6)):
        exponents = tuple(rng.choice((0, 0, 1, 2)) for _ in ring.names)
        terms.append((exponents, rng.choice((-3, -1, 1, 1, 2, 5))))
    return ring.from_terms(terms)


@pytest.mark.parametrize("names", [("R1", "R2", "R10"), ("s", "C1", "R1", "R2"), ("s",)])
def test_fast_text_equals_generic_text(names):
    ring = PolynomialRing(names, "flint")
    rng = random.Random(len(names))
    for _ in range(400):
        num, den = _random_poly(ring, rng), _random_poly(ring, rng)
        if ring.is_zero(den):
            continue
        generic = _Printer(ring, _TEXT)
        fast = _FlintText(ring)
        assert fast.polynomial(num) == generic.polynomial(num)
        assert fast.fraction(num, den) == generic.fraction(num, den)
