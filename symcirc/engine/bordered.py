"""Unknown currents that border the nodal matrix, with an impedance block between them.

An element whose current the nodal form cannot express (an opamp's output, a voltage
source, a transformer, coupled inductors) borders the nodal matrix with a column (its
current's incidence, Σ α·(a, b)) and a row (its equation, Σ β·V(c, d) + Σ z·I), so the
matrix is A = [[Y, C], [R, Z]], Z the block of the equations' current terms: −s·L and
−s·M of coupled inductors, the coefficient of a source's current read by a controlled
voltage source. Expanding the border columns into their C and Z parts and Laplace's rule
along the Z parts give

    det A = Σ_{T, R} (−1)^(ΣR + ΣT̄ + |T|) · det Z[R, T̄] · det[[Y, C_T], [−R_R̄, 0]]

over the sets T of columns that take their C part and R of rows that take their Z part
(|R| = |T̄|), and the last determinant is the two-graph sum of the columns T matched to
the rows R̄ in order (engine.controlled), each α·β times its pairs' sum. A border with no
Z entries is a norator's group: it takes its column and its row in every term.

Borders joined by Z entries form a block; blocks are expanded apart, each with the sign
(−1)^k of its k borders, which the two-graph sums of a group already carry.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from itertools import combinations

from ..algebra.polynomials import Poly, PolynomialRing

MAX_BLOCK = 6
"""Most borders in one block: its expansion looks at every pair of subsets of them (4^k)."""

Impedance = Mapping[tuple[int, int], Poly]
"""Z entries by (row's border, column's border)."""


@dataclass(frozen=True)
class Border:
    """An unknown current x of the bordered matrix: its column (α·x leaves a and enters b
    for each (a, b, α)) and its equation's row (Σ β·V(c, d) for each (c, d, β), besides
    the Z entries). I(element) = sign·scale·x, `scale` the factor the column was multiplied
    by to make its entries polynomial; the row was multiplied by `row_scale`."""

    element: str
    column: tuple[tuple[str, str, Poly], ...]
    row: tuple[tuple[str, str, Poly], ...]
    sign: int
    scale: Poly
    row_scale: Poly


def blocks(count: int, impedance: Impedance) -> list[tuple[int, ...]]:
    """The borders joined by nonzero Z entries (connected components, each sorted); a
    border with none is not in any block (a group)."""
    parent = list(range(count))

    def find(i: int) -> int:
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    touched = set()
    for (r, t) in impedance:
        touched |= {r, t}
        parent[find(r)] = find(t)
    found: dict[int, list[int]] = {}
    for i in sorted(touched):
        found.setdefault(find(i), []).append(i)
    return [tuple(members) for members in found.values()]


def minor(ring: PolynomialRing, impedance: Impedance, rows: Sequence[int],
          columns: Sequence[int], known: dict | None = None) -> Poly:
    """det Z[rows, columns] (both sorted, of equal length) by Laplace along the first row;
    `known` keeps the minors already expanded (a block asks for all of them)."""
    if not rows:
        return ring.one
    known = {} if known is None else known
    key = (tuple(rows), tuple(columns))
    if key not in known:
        first, rest = rows[0], rows[1:]
        total = ring.zero
        for i, t in enumerate(columns):
            entry = impedance.get((first, t))
            if entry is None:
                continue
            sub = minor(ring, impedance, rest, columns[:i] + columns[i + 1:], known)
            if not ring.is_zero(sub):
                total = total + entry * sub if i % 2 == 0 else total - entry * sub
        known[key] = total
    return known[key]


class Block:
    """The expansion of one block: which (column, row) matchings occur, and the
    coefficient of each (module docstring)."""

    def __init__(self, ring: PolynomialRing, members: tuple[int, ...],
                 impedance: Impedance) -> None:
        self.ring = ring
        self.members = members
        self.impedance = impedance
        self._minors: dict[tuple[tuple[int, ...], tuple[int, ...]], Poly] = {}
        self._expanded: dict = {}
        k = len(members)
        self.pairs: set[tuple[int, int]] = set()
        """(column, row) that some matching with a nonzero minor pairs."""
        for m in range(k + 1):
            for taken in combinations(members, m):
                for rows in combinations(members, m):
                    if self.factor(taken, rows) is not None:
                        self.pairs.update(zip(taken, rows, strict=True))

    def factor(self, columns: tuple[int, ...], rows: tuple[int, ...]) -> Poly | None:
        """(−1)^(k + ΣR + ΣT̄ + |T|)·det Z[R, T̄] for the columns T taking their pairs
        matched in order to the rows R̄ (both sorted), or None when it is zero."""
        key = (columns, rows)
        if key not in self._minors:
            local = {b: i for i, b in enumerate(self.members)}
            free_rows = tuple(b for b in self.members if b not in rows)
            free_columns = tuple(b for b in self.members if b not in columns)
            value = minor(self.ring, self.impedance, free_rows, free_columns, self._expanded)
            parity = (len(self.members) + len(columns) + sum(local[b] for b in free_rows)
                      + sum(local[b] for b in free_columns))
            self._minors[key] = None if self.ring.is_zero(value) else (
                -value if parity % 2 else value)
        return self._minors[key]

    def coefficient(self, chosen: Sequence[tuple[int, int]]) -> Poly | None:
        """The factor of a set of chosen (column, row) pairs: None unless its columns and
        its rows are distinct and matched in order."""
        ordered = sorted(chosen)
        columns = tuple(t for t, _ in ordered)
        rows = tuple(r for _, r in ordered)
        if len(set(columns)) != len(columns) or list(rows) != sorted(set(rows)):
            return None
        return self.factor(columns, rows)


_KEPT: dict[tuple, Block] = {}


def block(ring: PolynomialRing, members: tuple[int, ...], impedance: Impedance) -> Block:
    """`Block(ring, members, impedance)`, kept for the next caller: the default path's
    choice, the size bound and the walk each ask for the same blocks, and a block of six
    coupled inductors expands its 924 pairings of columns and rows (12 ms) each time."""
    entries = tuple(sorted((k, str(v)) for k, v in impedance.items()
                           if k[0] in members and k[1] in members))
    key = (ring, members, entries)
    if key not in _KEPT:
        if len(_KEPT) >= 64:
            _KEPT.clear()
        _KEPT[key] = Block(ring, members, impedance)
    return _KEPT[key]

