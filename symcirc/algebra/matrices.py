"""Determinants of square matrices of integer polynomials, exactly.

Fraction-free (Bareiss) elimination in a `PolynomialRing`: every division is exact, so
entries stay polynomials the size of the minors they stand for; the pivot of each column is
its entry with the fewest terms. Works on either polynomial backend.
"""

from __future__ import annotations

from collections.abc import Sequence

from .polynomials import Poly, PolynomialRing


def determinant(ring: PolynomialRing, matrix: Sequence[Sequence[Poly]]) -> Poly:
    """det(matrix) of a square matrix of polynomials of `ring`."""
    n = len(matrix)
    if n == 0:
        return ring.one
    a = [list(row) for row in matrix]
    sign, previous = 1, ring.one
    for k in range(n - 1):
        candidates = [r for r in range(k, n) if not ring.is_zero(a[r][k])]
        if not candidates:
            return ring.zero
        pivot = min(candidates, key=lambda r: ring.nterms(a[r][k]))
        if pivot != k:
            a[k], a[pivot] = a[pivot], a[k]
            sign = -sign
        for i in range(k + 1, n):
            for j in range(k + 1, n):
                a[i][j] = ring.exquo(a[i][j] * a[k][k] - a[i][k] * a[k][j], previous)
        previous = a[k][k]
    return a[n - 1][n - 1] if sign == 1 else -a[n - 1][n - 1]
