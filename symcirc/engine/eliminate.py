"""Exact sparse linear solving over integer polynomials: fraction-free elimination.

Rows are equations; scaling one by a nonzero polynomial does not change the solution,
so after each update a row is divided by the gcd of its entries ("content" scaling) and
stays near the size of the minors it stands for. Pivots follow a Markowitz order (fewest
fill-ins; ties go to constant, then single-term, then smaller pivots, then the lowest
row and column), and the requested unknowns are eliminated last, so the answer comes out
of the last rows directly. `method="bareiss"` uses Bareiss' exact division by the
previous pivot instead (every stored entry a true minor of the pivoted block): kept for
comparison and for `determinant`.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from functools import cache
from math import gcd

from ..algebra import polynomials as polys
from ..algebra.polynomials import AlgebraError, Poly, PolynomialRing
from ..algebra.rational import RationalFunction
from ..limits import MAX_ELIMINATION_TERMS, MAX_PRODUCT_TERMS

Row = dict[int, Poly]


class SingularSystem(AlgebraError):
    """The system has no unique solution; `rows` and `columns` (0-based indices of the
    original system) name the equations and unknowns involved."""

    def __init__(self, message: str, rows: Sequence[int] = (), columns: Sequence[int] = ()) -> None:
        super().__init__(message)
        self.rows = tuple(sorted(set(rows)))
        self.columns = tuple(sorted(set(columns)))


def solve(rows: list[dict[int, Poly]], rhs: list[dict[int, Poly]], unknowns: Sequence[int],
          ring: PolynomialRing, method: str = "content") -> list[list[RationalFunction]]:
    """Values of `unknowns` in A x = b for each right-hand side b (sparse columns {row: value}).

    Returns one list per right-hand side, in the order of `unknowns`.
    """
    n = len(rows)
    wanted = list(dict.fromkeys(unknowns))
    for k in wanted:
        if not 0 <= k < n:
            raise IndexError(f"unknown {k} is not a column of a {n}-by-{n} system")
    elimination = _Elimination(rows, rhs, ring, method)
    elimination.eliminate(exclude=set(wanted))
    values = elimination.solve_remaining(wanted)
    return [[values[r][k] for k in unknowns] for r in range(len(rhs))]


def solve_one(rows: list[dict[int, Poly]], rhs: list[dict[int, Poly]], unknown: int,
              ring: PolynomialRing) -> list[Callable[[], RationalFunction]]:
    """As `solve` for one unknown, but each right-hand side's value is brought to lowest
    terms only when first called: a caller that needs one excitation of several takes one
    gcd, not one per excitation."""
    n = len(rows)
    if not 0 <= unknown < n:
        raise IndexError(f"unknown {unknown} is not a column of a {n}-by-{n} system")
    elimination = _Elimination(rows, rhs, ring, "content")
    elimination.eliminate(exclude={unknown})
    return elimination.ratios(unknown)


def determinant(rows: list[dict[int, Poly]], ring: PolynomialRing) -> Poly:
    """det(A) of a square sparse matrix, exactly (Bareiss elimination in Markowitz order)."""
    elimination = _Elimination(rows, [], ring, "bareiss", singular_ok=True)
    elimination.eliminate(exclude=set())
    return elimination.determinant()


class _Elimination:
    """State of one elimination: rows (with right-hand sides as extra columns n, n+1, ...)."""

    def __init__(self, rows: list[dict[int, Poly]], rhs: list[dict[int, Poly]],
                 ring: PolynomialRing, method: str, singular_ok: bool = False) -> None:
        if method not in ("content", "bareiss"):
            raise ValueError(f"unknown elimination method {method!r}")
        self.ring = ring
        self.method = method
        self.singular_ok = singular_ok
        self.n = n = len(rows)
        self.nrhs = len(rhs)
        self.rows: dict[int, Row] = {}
        for i, row in enumerate(rows):
            entries = {}
            for j, value in row.items():
                if not 0 <= j < n:
                    raise IndexError(f"row {i} has an entry in column {j} of a {n}-by-{n} system")
                value = ring.convert(value) if isinstance(value, int) else value
                if not ring.is_zero(value):
                    entries[j] = value
            self.rows[i] = entries
        for r, column in enumerate(rhs):
            for i, value in column.items():
                if not 0 <= i < n:
                    raise IndexError(f"right-hand side {r} has an entry in row {i}")
                value = ring.convert(value) if isinstance(value, int) else value
                if not ring.is_zero(value):
                    self.rows[i][n + r] = value
        self.columns: dict[int, set[int]] = {j: set() for j in range(n)}
        for i, row in self.rows.items():
            for j in row:
                if j < n:
                    self.columns[j].add(i)
        self.initial_columns = {i: {j for j in row if j < n} for i, row in self.rows.items()}
        self.origin: dict[int, set[int]] = {i: {i} for i in range(n)}
        """Which original rows each current row is a combination of (to name dependencies)."""
        self.pivots: list[tuple[int, int, Row]] = []
        """(row, column, row entries) of each pivot, in order."""
        # Bareiss bookkeeping: the true value of row i is stored * p_current / p_last[i]
        self.pivot_values: list[Poly] = [ring.one]
        self.last_step: dict[int, int] = dict.fromkeys(range(n), 0)
        self.zero_determinant = False
        self.primitive_rows: set[int] = set()
        """Rows divided by the gcd of their entries since their last update."""

    # -- choosing pivots
    def _choose_pivot(self, exclude: set[int]) -> tuple[int, int] | None:
        ring = self.ring
        n = self.n
        best = None
        best_key = None
        row_counts: dict[int, int] = {}  # off-pivot entries of each row, counted once per call
        for j, rows_of_j in self.columns.items():
            if j in exclude or not rows_of_j:
                continue
            col_count = len(rows_of_j) - 1
            for i in rows_of_j:
                row = self.rows[i]
                row_count = row_counts.get(i)
                if row_count is None:
                    row_count = row_counts[i] = sum(1 for c in row if c < n) - 1
                fill = row_count * col_count
                if best_key is not None and fill > best_key[0]:
                    continue  # cannot win: skip looking at the entry itself
                value = row[j]
                terms = ring.nterms(value)
                shape = 0 if ring.is_constant(value) else (1 if terms == 1 else 2)
                key = (fill, shape, terms, i, j)
                if best_key is None or key < best_key:
                    best_key, best = key, (i, j)
        return best

    def eliminate(self, exclude: set[int]) -> None:
        """Pivot on every column not in `exclude`."""
        todo = [j for j in range(self.n) if j not in exclude]
        for _ in range(len(todo)):
            choice = self._choose_pivot(exclude)
            if choice is None:
                self._singular([j for j in todo if j not in {c for _, c, _ in self.pivots}])
                return
            self._pivot(*choice)

    def _singular(self, columns: list[int]) -> None:
        if self.singular_ok:
            self.zero_determinant = True
            return
        # the equations that mention the unknowns left over, and any that cancelled out
        rows = {i for i, cols in self.initial_columns.items() if cols & set(columns)}
        for i, row in self.rows.items():
            if not any(c < self.n for c in row):
                rows |= self.origin[i]
        raise SingularSystem(
            "the equations do not determine "
            + ("these unknowns" if len(columns) > 1 else "this unknown")
            + ": the system is singular", rows, columns)

    def _pivot(self, m: int, c: int) -> None:
        ring = self.ring
        pivot_row = self.rows.pop(m)
        for j in pivot_row:
            if j < self.n:
                self.columns[j].discard(m)
        p = pivot_row[c]
        step = len(self.pivots) + 1
        for i in sorted(self.columns[c]):
            row = self.rows[i]
            a = row[c]
            if self.method == "bareiss":
                new = self._bareiss_update(row, pivot_row, p, a, i, m, step)
            else:
                new = self._content_update(row, pivot_row, p, a)
            for j in row:
                if j < self.n and j not in new:
                    self.columns[j].discard(i)
            for j in new:
                if j < self.n:
                    self.columns[j].add(i)
            self.rows[i] = new
            if self.method == "content":
                self.primitive_rows.add(i)
            self.origin[i] = self.origin[i] | self.origin[m]
            if self.method == "bareiss":
                self.last_step[i] = step
        self.columns[c] = set()
        self.pivots.append((m, c, pivot_row))
        if self.method == "bareiss":
            # true value of the pivot = stored * p_{step-1} / p_{last[m]}
            true_pivot = ring.exquo(p * self.pivot_values[step - 1],
                                    self.pivot_values[self.last_step[m]])
            self.pivot_values.append(true_pivot)

    def _content_update(self, row: Row, pivot_row: Row, p: Poly, a: Poly) -> Row:
        ring = self.ring
        g = _common_factor(p, a, ring)
        if g is not None:
            p, a = ring.exquo(p, g), ring.exquo(a, g)
        new = _combine(row, pivot_row, p, a, ring)
        return _remove_content(new, ring)

    def _bareiss_update(self, row: Row, pivot_row: Row, p: Poly, a: Poly, i: int, m: int,
                        step: int) -> Row:
        ring = self.ring
        new = _combine(row, pivot_row, p, a, ring)
        scale = self.pivot_values[step - 1]
        divisor = self.pivot_values[self.last_step[m]] * self.pivot_values[self.last_step[i]]
        g = ring.gcd(scale, divisor)
        scale, divisor = ring.exquo(scale, g), ring.exquo(divisor, g)
        return {j: ring.exquo(v * scale, divisor) for j, v in new.items()}

    # -- results
    def solve_remaining(self, wanted: list[int]) -> list[dict[int, RationalFunction]]:
        """Solve the rows left (in the `wanted` columns) for every right-hand side."""
        ring = self.ring
        left = self._rows_left(wanted)
        if len(wanted) == 1:
            (k,) = wanted
            return [{k: value()} for value in self.ratios(k)]
        # a small dense system left: finish with rational-function Gaussian elimination
        matrix = [[_rf(self.rows[i].get(j), ring) for j in wanted] +
                  [_rf(self.rows[i].get(self.n + r), ring) for r in range(self.nrhs)]
                  for i in left]
        size = len(wanted)
        order = list(range(size))
        for col in range(size):
            candidates = [r for r in order[col:] if not matrix[r][col].is_zero()]
            if not candidates:
                rows = set().union(*(self.origin[left[r]] for r in order[col:]))
                raise SingularSystem("the equations are dependent: the system is singular",
                                     rows, [wanted[col]])
            best = min(candidates, key=lambda r: (sum(matrix[r][col].size()), r))
            position = order.index(best)
            order[col], order[position] = order[position], order[col]
            pivot = matrix[order[col]]
            for r in order[col + 1:]:
                factor = matrix[r][col] / pivot[col]
                if factor.is_zero():
                    continue
                matrix[r] = [x - factor * y for x, y in zip(matrix[r], pivot, strict=True)]
        results = []
        for rr in range(self.nrhs):
            x: dict[int, RationalFunction] = {}
            for col in range(size - 1, -1, -1):
                line = matrix[order[col]]
                total = line[size + rr]
                for later in range(col + 1, size):
                    total = total - line[later] * x[wanted[later]]
                x[wanted[col]] = total / line[col]
            results.append(x)
        return results

    def _rows_left(self, wanted: list[int]) -> list[int]:
        """The rows left after elimination, one per wanted unknown; SingularSystem if not."""
        left = sorted(self.rows)
        empty = [i for i in left if not any(j < self.n for j in self.rows[i])]
        if empty or len(left) != len(wanted):
            rows = set().union(*(self.origin[i] for i in empty)) if empty else set(left)
            missing = [j for j in wanted if not self.columns[j]]
            raise SingularSystem("the equations are dependent: the system is singular",
                                 rows, missing or wanted)
        return left

    def ratios(self, k: int) -> list[Callable[[], RationalFunction]]:
        """Unknown k for each right-hand side, from the one row left, each made on first call."""
        (i,) = self._rows_left([k])
        row = self.rows[i]
        # a row of two entries without common factor: their ratio needs no gcd
        ratio = (RationalFunction.coprime if i in self.primitive_rows and len(row) == 2
                 else RationalFunction)
        return [cache(lambda r=r: ratio(row.get(self.n + r, self.ring.zero), row[k], self.ring))
                for r in range(self.nrhs)]

    def determinant(self) -> Poly:
        """det of the original matrix (after eliminating every column with Bareiss)."""
        if self.zero_determinant or len(self.pivots) < self.n:
            return self.ring.zero
        rows = [m for m, _, _ in self.pivots]
        cols = [c for _, c, _ in self.pivots]
        sign = _permutation_sign(rows) * _permutation_sign(cols)
        det = self.pivot_values[-1]
        return det if sign > 0 else -det


def _rf(value: Poly | None, ring: PolynomialRing) -> RationalFunction:
    if value is None:
        return RationalFunction(0, 1, ring, canonical=True)
    return RationalFunction(value, ring.one, ring, canonical=True)


def _combine(row: Row, pivot_row: Row, p: Poly, a: Poly, ring: PolynomialRing) -> Row:
    """p*row - a*pivot_row, without the pivot column and without zero entries."""
    new: Row = {}
    for j, v in row.items():
        if j in pivot_row:
            continue
        new[j] = _product(p, v)
    for j, v in pivot_row.items():
        if j in row:
            value = _product(p, row[j]) - _product(a, v)
        else:
            value = -_product(a, v)
        if not ring.is_zero(value):
            new[j] = _checked(value)
    return new


def _product(x: Poly, y: Poly) -> Poly:
    """x*y, refused before it is formed when it could pass MAX_PRODUCT_TERMS terms (the
    bound len(x)*len(y) also bounds the work), and after when it passes
    MAX_ELIMINATION_TERMS: intermediate entries grow step by step, so the first one past
    the limit stops the derivation seconds in, long before memory runs out."""
    bound = len(x) * len(y)
    if bound > MAX_PRODUCT_TERMS:
        raise polys.TooLarge(
            f"the exact derivation is too large: eliminating the circuit's equations would "
            f"multiply polynomials of {len(x):,} and {len(y):,} terms (up to {bound:,} terms; "
            f"the limit is {MAX_PRODUCT_TERMS:,}); stopped before memory runs out",
            notes=_TOO_LARGE_NOTES)
    return _checked(x * y)


def _checked(value: Poly) -> Poly:
    if len(value) > MAX_ELIMINATION_TERMS:
        raise polys.TooLarge(
            f"the exact derivation is too large: eliminating the circuit's equations forms "
            f"an entry of {len(value):,} terms (the limit is {MAX_ELIMINATION_TERMS:,}); "
            "stopped before memory runs out", notes=_TOO_LARGE_NOTES)
    return value


_TOO_LARGE_NOTES = ("derive the circuit in parts: a section at a time, each joined to the "
                    "next through its Thevenin equivalent",)


def _common_factor(p: Poly, a: Poly, ring: PolynomialRing) -> Poly | int | None:
    """A common factor of p and a worth dividing out (None when there is none)."""
    if ring.is_constant(p) or ring.is_constant(a):
        g = gcd(ring.content(p), ring.content(a))
        if ring.leading_coefficient(p) < 0:
            g = -g
        return None if g == 1 else g
    g = ring.gcd(p, a)
    if ring.is_constant(g) and ring.constant_value(g) == 1:
        g = None
    if ring.leading_coefficient(p) < 0:
        g = -(g if g is not None else ring.one)
    return g


def _remove_content(row: Row, ring: PolynomialRing) -> Row:
    """The row divided by the gcd of its entries (an equation keeps its solutions)."""
    if not row:
        return row
    values = sorted(row.values(), key=ring.nterms)
    g = values[0]
    for v in values[1:]:
        if ring.is_constant(g):
            break
        g = ring.gcd(g, v)
    if ring.is_constant(g):
        c = 0
        for v in values:
            c = gcd(c, ring.content(v))
            if c == 1:
                return row
        return {j: ring.exquo(v, c) for j, v in row.items()}
    c = 0
    for v in values:
        c = gcd(c, ring.content(ring.exquo(v, g)))
        if c == 1:
            break
    divisor = g * c if c > 1 else g
    return {j: ring.exquo(v, divisor) for j, v in row.items()}


def _permutation_sign(sequence: list[int]) -> int:
    """Sign of the permutation that sorts `sequence` (distinct items)."""
    seen = set()
    sign = 1
    position = {v: k for k, v in enumerate(sorted(sequence))}
    for start in range(len(sequence)):
        if start in seen:
            continue
        length = 0
        k = start
        while k not in seen:
            seen.add(k)
            k = position[sequence[k]]
            length += 1
        if length % 2 == 0:
            sign = -sign
    return sign
