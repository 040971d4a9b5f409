"""Fast evaluation of a closed form in many symbols: exact at single points, vectorised
(numpy) over many points and over every corner of a tolerance box.

A rational function is held as numerator and denominator polynomials (sympy's sparse
polynomials over QQ), so derivatives are exact polynomial operations. For vectorised work
the variables are split in two halves: each term's value is the product of one monomial of
each half, and the halves have few distinct monomials, so a term costs about one
multiplication per point; all 2**n corners of a box come from two small corner tables and
one matrix product. Closed forms that are no rational function (a square root) fall back
to sympy's lambdify.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from fractions import Fraction
from functools import cached_property
from typing import Any

import sympy

CHUNK_POINTS = 16384
"""Points evaluated at once (bounds the memory of the monomial tables)."""
DENSE_CORNER_LIMIT = 2**24
"""Largest dense coefficient table (monomials of one half × the other) for corner products."""


class _Monomials:
    """The distinct monomials of some variables, evaluated by repeated multiplication: each
    monomial is a smaller one (possibly added for the purpose) times one variable."""

    def __init__(self, exponents) -> None:
        import numpy as np

        rows = [tuple(int(e) for e in row) for row in exponents]
        width = exponents.shape[1]
        known: dict[tuple[int, ...], int] = {(0,) * width: 0}
        self.steps: list[tuple[int, int]] = []  # (parent row, variable)
        for row in sorted(set(rows), key=sum):
            self._add(row, known)
        self.count = len(known)
        self.index = np.array([known[row] for row in rows], dtype=np.int64)
        self.exponents = np.zeros((self.count, width), dtype=np.int64)
        for row, k in known.items():
            self.exponents[k] = row

    def _add(self, row: tuple[int, ...], known: dict[tuple[int, ...], int]) -> int:
        if row in known:
            return known[row]
        j = max(k for k, e in enumerate(row) if e)
        parent = self._add(row[:j] + (row[j] - 1,) + row[j + 1:], known)
        known[row] = len(known)
        self.steps.append((parent, j))
        return known[row]

    def table(self, columns: Sequence[Any], size: int, out: Any = None):
        """Monomials × points (row 0 is the constant 1), into `out` when given (reused
        between chunks: fresh large arrays cost page faults)."""
        import numpy as np

        out = np.empty((self.count, size)) if out is None else out[:, :size]
        out[0] = 1.0
        for row, (parent, j) in enumerate(self.steps, start=1):
            np.multiply(out[parent], columns[j], out=out[row])
        return out


class _Vectorised:
    """Polynomials in the same variables evaluated by numpy, sharing their monomial tables:
    values and gradients over many points, and values at every corner of a box.

    Terms are grouped by their first-half monomial A_α: P = Σ_α A_α·(Σ_β c_αβ·B_β), and,
    for gradients, also by their second-half monomial B_β."""

    def __init__(self, polys: Sequence[Any], n: int) -> None:
        import numpy as np

        self.n = n
        self.half = n // 2
        exponents = [np.array(list(p.keys()), dtype=np.int64).reshape(-1, n) for p in polys]
        self.coefficients = [np.array([float(c) for c in p.values()]) for p in polys]
        every = np.concatenate(exponents)
        self.a = _Monomials(every[:, :self.half])
        self.b = _Monomials(every[:, self.half:])
        bounds = np.cumsum([0, *(len(e) for e in exponents)])
        self.a_index = [self.a.index[s:e] for s, e in zip(bounds, bounds[1:], strict=False)]
        self.b_index = [self.b.index[s:e] for s, e in zip(bounds, bounds[1:], strict=False)]
        self.by_a = [_groups(a, b, c) for a, b, c in
                     zip(self.a_index, self.b_index, self.coefficients, strict=True)]
        self.by_b = [_groups(b, a, c) for a, b, c in
                     zip(self.a_index, self.b_index, self.coefficients, strict=True)]

    def _chunks(self, columns: Sequence[Any], size: int):
        """(start, a table, b table, points) for consecutive chunks of the points."""
        import numpy as np

        width = min(CHUNK_POINTS, size)
        a_buffer, b_buffer = np.empty((self.a.count, width)), np.empty((self.b.count, width))
        for start in range(0, size, CHUNK_POINTS):
            part = [np.asarray(c, dtype=float)[start:start + CHUNK_POINTS] for c in columns]
            m = min(CHUNK_POINTS, size - start)
            yield (start, self.a.table(part[:self.half], m, a_buffer),
                   self.b.table(part[self.half:], m, b_buffer), m)

    def values(self, columns: Sequence[Any], size: int):
        """Polynomials × points."""
        import numpy as np

        out = np.empty((len(self.by_a), size))
        scratch = _Scratch()
        for start, a, b, m in self._chunks(columns, size):
            for k, groups in enumerate(self.by_a):
                inner = _inner(groups, b, len(a), scratch)
                out[k, start:start + m] = np.einsum("ij,ij->j", a, inner)
        return out

    def weighted(self, columns: Sequence[Any], size: int):
        """Polynomials × points × variables: Σ_t c_t·e_tk·m_t, which is x_k·∂P/∂x_k."""
        import numpy as np

        out = np.empty((len(self.by_a), size, self.n))
        scratch = _Scratch()
        for start, a, b, m in self._chunks(columns, size):
            for k in range(len(self.by_a)):
                first = self.a.exponents.T @ (a * _inner(self.by_a[k], b, len(a), scratch))
                second = self.b.exponents.T @ (b * _inner(self.by_b[k], a, len(b), scratch))
                out[k, start:start + m] = np.vstack([first, second]).T
        return out

    def _corner_tables(self, lows: Sequence[float], highs: Sequence[float]):
        half = self.half
        a = self.a.table(_corner_columns(lows[:half], highs[:half]), 2**half)
        b = self.b.table(_corner_columns(lows[half:], highs[half:]), 2 ** (self.n - half))
        return a, b

    def _dense(self, k: int):
        import numpy as np

        table = np.zeros((self.a.count, self.b.count))
        np.add.at(table, (self.a_index[k], self.b_index[k]), self.coefficients[k])
        return table

    def _small(self) -> bool:
        return self.a.count * self.b.count <= DENSE_CORNER_LIMIT

    def corners(self, lows: Sequence[float], highs: Sequence[float]):
        """Polynomials × corners (2**n); bit j of a corner's index: variable j high."""
        import numpy as np

        if not self._small():
            return self.values(_corner_columns(lows, highs), 2**self.n)
        a, b = self._corner_tables(lows, highs)
        # corner a of the first half × corner b of the second; index a + b·2**half
        return np.array([(a.T @ self._dense(k) @ b).T.ravel() for k in range(len(self.by_a))])

    def corner_weighted(self, lows: Sequence[float], highs: Sequence[float]):
        """Polynomials × corners × variables: x_k·∂P/∂x_k at every corner."""
        import numpy as np

        if not self._small():
            return self.weighted(_corner_columns(lows, highs), 2**self.n)
        a, b = self._corner_tables(lows, highs)
        out = np.empty((len(self.by_a), 2**self.n, self.n))
        for k in range(len(self.by_a)):
            dense = self._dense(k)
            left, right = a.T @ dense, dense @ b
            # only the monomials that contain x_j contribute to x_j·∂P/∂x_j
            for j, powers in enumerate(self.a.exponents.T):
                used = np.flatnonzero(powers)
                out[k, :, j] = ((a.T[:, used] * powers[used]) @ right[used]).T.ravel()
            for j, powers in enumerate(self.b.exponents.T):
                used = np.flatnonzero(powers)
                weighted = b[used] * powers[used, None]
                out[k, :, self.half + j] = (left[:, used] @ weighted).T.ravel()
        return out


def _groups(outer, inner, coefficients) -> list[tuple[int, Any, Any]]:
    """Terms grouped by their `outer` monomial: (outer row, inner rows, coefficients)."""
    import numpy as np

    if len(outer) == 0:  # a zero polynomial (a derivative of what does not use x)
        return []
    order = np.argsort(outer, kind="stable")
    starts = np.flatnonzero(np.diff(outer[order], prepend=-1))
    ends = [*starts[1:], len(order)]
    return [(int(outer[order[s]]), inner[order[s:e]], coefficients[order[s:e]])
            for s, e in zip(starts, ends, strict=True)]


class _Scratch:
    """Work arrays kept between the chunks of one evaluation, grown when too small."""

    def __init__(self) -> None:
        self.arrays: dict[str, Any] = {}

    def get(self, name: str, rows: int, columns: int):
        import numpy as np

        array = self.arrays.get(name)
        if array is None or array.shape[0] < rows or array.shape[1] < columns:
            array = self.arrays[name] = np.empty((max(rows, 1), columns))
        return array[:rows, :columns]


def _inner(groups, table, count: int, scratch: _Scratch | None = None):
    """For every outer monomial, Σ c·(inner monomial) over its terms (rows × points)."""
    scratch = scratch or _Scratch()
    size = table.shape[1]
    out = scratch.get(f"inner{count}", count, size)
    out[...] = 0.0
    for row, rows, coefficients in groups:
        out[row] = coefficients @ table[rows]
    return out


def _corner_columns(lows: Sequence[float], highs: Sequence[float]):
    """Columns of every corner of a box, corner i having variable j high when bit j is set."""
    import numpy as np

    n = len(lows)
    bits = (np.arange(2**n)[:, None] >> np.arange(n)) & 1
    return [np.where(bits[:, j] == 1, highs[j], lows[j]) for j in range(n)]


class RationalForm:
    """A closed form as numerator/denominator polynomials in `symbols` (exact and numpy);
    the symbols in `fixed` are set to their values once, in the polynomials."""

    def __init__(self, expression: sympy.Expr, symbols: Sequence[sympy.Symbol],
                 fixed: Mapping[sympy.Symbol, Fraction] | None = None) -> None:
        from sympy import QQ
        from sympy.polys.rings import ring

        fixed = dict(fixed or {})
        self.symbols = list(symbols)
        if not self.symbols:
            raise ValueError("no variables")
        everything, *generators = ring([*self.symbols, *fixed], QQ)
        try:  # a result from the engine is already a ratio of expanded polynomials
            parts = [everything.from_expr(p) for p in sympy.fraction(expression)]
        except ValueError:
            parts = [everything.from_expr(p)
                     for p in sympy.fraction(sympy.together(expression))]
        values = [(g, QQ(v.numerator, v.denominator))
                  for g, v in zip(generators[len(self.symbols):], fixed.values(), strict=True)]
        if values:
            parts = [p.evaluate(values) for p in parts]
        self.numerator, self.denominator = parts
        self.generators = list(self.numerator.ring.gens)
        self._derivatives: dict[Any, tuple[Any, Any]] = {}

    @cached_property
    def _numeric(self) -> _Vectorised:
        return _Vectorised([self.numerator, self.denominator], len(self.symbols))

    @property
    def size(self) -> int:
        """Terms of numerator and denominator together."""
        return len(self.numerator) + len(self.denominator)

    @cached_property
    def _expressions(self) -> tuple[sympy.Expr, sympy.Expr]:
        return self.numerator.as_expr(), self.denominator.as_expr()

    def _derivative_expressions(self, k: int) -> tuple[sympy.Expr, sympy.Expr]:
        key = ("expressions", k)
        if key not in self._derivatives:
            self._derivatives[key] = tuple(p.as_expr() for p in self._derivative(k))
        return self._derivatives[key]

    def derivative_expression(self, k: int) -> sympy.Expr:
        """∂Q/∂x_k as (N'·D − N·D')/D², the polynomials kept as they are (not multiplied out)."""
        dn, dd = self._derivative_expressions(k)
        n, d = self._expressions
        return (dn * d - n * dd) / d**2

    def relative_expression(self, k: int) -> sympy.Expr:
        """(x_k/Q)·∂Q/∂x_k as x_k·N'/N − x_k·D'/D (the logarithmic derivative)."""
        dn, dd = self._derivative_expressions(k)
        n, d = self._expressions
        x = self.symbols[k]
        return x * dn / n - x * dd / d

    # -- exact
    def _terms(self, poly, point: Mapping[sympy.Symbol, Fraction]):
        """P and every x_k·∂P/∂x_k at `point`, exactly, from one pass over the terms."""
        from sympy import QQ

        x = [QQ(point[s].numerator, point[s].denominator) for s in self.symbols]
        total, weighted = QQ(0), [QQ(0)] * len(x)
        for monomial, coefficient in poly.items():
            term = coefficient
            for value, power in zip(x, monomial, strict=True):
                if power:
                    term *= value**power
            total += term
            for k, power in enumerate(monomial):
                if power:
                    weighted[k] += power * term
        return total, weighted

    @staticmethod
    def _fraction(value) -> Fraction:
        return Fraction(int(value.numerator), int(value.denominator))

    def exact(self, point: Mapping[sympy.Symbol, Fraction]) -> Fraction | None:
        """The value at `point`, exactly; None at a pole."""
        denominator = self._terms(self.denominator, point)[0]
        if denominator == 0:
            return None
        return self._fraction(self._terms(self.numerator, point)[0] / denominator)

    def exact_gradient(self, point: Mapping[sympy.Symbol, Fraction]) -> list[Fraction] | None:
        """Every ∂Q/∂x_k at `point`, exactly (quotient rule); None at a pole."""
        from sympy import QQ

        n, xn = self._terms(self.numerator, point)
        d, xd = self._terms(self.denominator, point)
        if d == 0:
            return None
        out = []
        for k, symbol in enumerate(self.symbols):
            x = point[symbol]
            if x != 0:
                value = (xn[k] * d - n * xd[k]) / (QQ(x.numerator, x.denominator) * d * d)
            else:  # x·∂P/∂x says nothing at x = 0: use the derivative polynomials
                dn, dd = self._derivative(k)
                value = (self._terms(dn, point)[0] * d - n * self._terms(dd, point)[0]) / (d * d)
            out.append(self._fraction(value))
        return out

    def _derivative(self, k: int):
        if k not in self._derivatives:
            g = self.generators[k]
            self._derivatives[k] = (self.numerator.diff(g), self.denominator.diff(g))
        return self._derivatives[k]

    # -- vectorised
    def values(self, columns: Sequence[Any], size: int):
        import numpy as np

        numerator, denominator = self._numeric.values(columns, size)
        with np.errstate(all="ignore"):
            return numerator / denominator

    def partials(self, columns: Sequence[Any], size: int):
        """Points × variables: every ∂Q/∂x_k."""
        n, d = self._numeric.values(columns, size)
        xn, xd = self._numeric.weighted(columns, size)
        return self._quotient(columns, size, n, d, xn, xd)

    def corner_partials(self, lows: Sequence[float], highs: Sequence[float]):
        """Corners × variables: every ∂Q/∂x_k at every corner (index as in `corners`)."""
        n, d = self._numeric.corners(lows, highs)
        xn, xd = self._numeric.corner_weighted(lows, highs)
        columns = _corner_columns(lows, highs)
        return self._quotient(columns, 2 ** len(lows), n, d, xn, xd)

    def _quotient(self, columns, size, n, d, xn, xd):
        """∂Q/∂x_k from x_k·∂P/∂x_k divided by x_k (where a coordinate is zero, from the
        derivative polynomials instead)."""
        import numpy as np

        x = np.column_stack([np.asarray(c, dtype=float) for c in columns])
        with np.errstate(all="ignore"):
            out = (xn * d[:, None] - n[:, None] * xd) / (x * (d * d)[:, None])
            for k in np.flatnonzero((x == 0).any(axis=0)):
                derivatives = _Vectorised(self._derivative(int(k)), len(self.symbols))
                dn, dd = derivatives.values(columns, size)
                out[:, k] = (dn * d - n * dd) / (d * d)
        return out

    def denominator_corners(self, lows: Sequence[float], highs: Sequence[float]):
        """The denominator at every corner of the box (index as in `corners`)."""
        return self._numeric.corners(lows, highs)[1]

    def denominator_values(self, columns: Sequence[Any], size: int):
        return self._numeric.values(columns, size)[1]

    def denominator_sign(self, point: Mapping[sympy.Symbol, Fraction]) -> int:
        """The sign of the denominator at `point`, exactly."""
        value = self._terms(self.denominator, point)[0]
        return (value > 0) - (value < 0)

    def corners(self, lows: Sequence[float], highs: Sequence[float]):
        import numpy as np

        numerator, denominator = self._numeric.corners(lows, highs)
        with np.errstate(all="ignore"):
            return numerator / denominator


class LambdifiedForm:
    """The same interface for closed forms that are no rational function (sympy throughout)."""

    def __init__(self, expression: sympy.Expr, symbols: Sequence[sympy.Symbol],
                 fixed: Mapping[sympy.Symbol, Fraction] | None = None) -> None:
        from .values import rational

        fixed = fixed or {}
        self.expression = expression.xreplace({x: rational(v) for x, v in fixed.items()})
        expression = self.expression
        self.symbols = list(symbols)
        self._function = sympy.lambdify(self.symbols, expression, modules="numpy")
        self._gradient = [sympy.diff(expression, x) for x in self.symbols]
        self._partials = [sympy.lambdify(self.symbols, g, modules="numpy")
                          for g in self._gradient]

    def exact(self, point: Mapping[sympy.Symbol, Fraction]) -> Fraction | None:
        from .values import exact_value

        return exact_value(self.expression, point)

    def exact_gradient(self, point: Mapping[sympy.Symbol, Fraction]) -> list[Fraction] | None:
        from .values import exact_value

        values = [exact_value(g, point) for g in self._gradient]
        return None if any(v is None for v in values) else values

    @staticmethod
    def _evaluate(function, columns, size: int):
        import numpy as np

        with np.errstate(all="ignore"):
            values = np.asarray(function(*columns), dtype=float)
        return np.broadcast_to(values, (size,)).copy() if values.shape != (size,) else values

    def values(self, columns: Sequence[Any], size: int):
        return self._evaluate(self._function, columns, size)

    def partials(self, columns: Sequence[Any], size: int):
        import numpy as np

        return np.column_stack([self._evaluate(p, columns, size) for p in self._partials]) \
            if self._partials else np.zeros((size, 0))

    def corners(self, lows: Sequence[float], highs: Sequence[float]):
        return self.values(_corner_columns(lows, highs), 2 ** len(lows))

    def corner_partials(self, lows: Sequence[float], highs: Sequence[float]):
        return self.partials(_corner_columns(lows, highs), 2 ** len(lows))


def closed_form(expression: sympy.Expr, symbols: Sequence[sympy.Symbol],
                fixed: Mapping[sympy.Symbol, Fraction] | None = None):
    """The fastest evaluator that can hold `expression` (variables `symbols`, the symbols of
    `fixed` at their values)."""
    try:
        return RationalForm(expression, symbols, fixed)
    except ValueError:
        return LambdifiedForm(expression, symbols, fixed)
