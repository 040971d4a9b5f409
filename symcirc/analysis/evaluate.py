"""Fast evaluation of a closed form in many symbols: exact at single points, vectorised
(numpy) over many points and over every corner of a tolerance box.

A rational function is held as numerator N and denominator D, polynomials of the algebra
package (python-flint), so exact values and derivatives are polynomial operations in C.
For numbers at many points, N and D become one shared Horner diagram: a polynomial in the
variables x1 … xn is Σ_j x1^j·P_j with each P_j a polynomial in x2 … xn, and equal P_j are
one node, so a ladder's 10,946-term denominator is a few dozen nodes in a good variable
order. A point costs one multiplication per edge of the diagram instead of one per term
and variable, and every partial derivative comes from one backward pass (reverse-mode
differentiation) at the cost of another evaluation. Closed forms that are no rational
function (a square root) fall back to sympy's lambdify.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from fractions import Fraction
from functools import cached_property
from typing import Any

import sympy

from ..algebra.polynomials import PolynomialRing
from ..algebra.rational import RationalFunction, substitute_quotient

CHUNK_CELLS = 2**22
"""Node values held at once (nodes × points of one chunk): bounds the working memory."""


class _Diagram:
    """N and D as one shared Horner diagram over the variables in `order` (see the module
    docstring). Node ids are topological: leaves (coefficients) first, parents after their
    children; a node in which a level's variable does not occur is its child itself."""

    def __init__(self, polynomials: Sequence[tuple[Any, Any]], width: int,
                 order: Sequence[int]) -> None:
        import numpy as np

        # a first column tells the polynomials apart: the top node is Σ_k w^k·P_k
        exponents = np.concatenate([
            np.column_stack([np.full(len(e), k, dtype=np.int64), e.reshape(-1, width)])
            for k, (e, _) in enumerate(polynomials)])
        coefficients = np.concatenate([c for _, c in polynomials])
        columns = [0, *(1 + j for j in order)]
        exponents = exponents[:, columns]
        self.variables = list(order)
        leaf_values, ids = np.unique(coefficients, return_inverse=True)
        self.leaves = leaf_values
        count = len(leaf_values)
        # prefix groups, top down: terms agreeing in their first k exponents share group k
        groups = [np.zeros(len(ids), dtype=np.int64)]
        for k in range(exponents.shape[1] - 1):
            key = groups[-1] * (int(exponents[:, k].max()) + 1) + exponents[:, k]
            groups.append(np.unique(key, return_inverse=True)[1].reshape(-1))
        self.levels: list[tuple[int, int, Any, Any, Any]] = []  # (level, first id, parents,
        # powers, children), bottom level first
        self.starts: dict[int, Any] = {}  # each level's first edge of every parent
        for k in range(exponents.shape[1] - 1, -1, -1):
            powers = exponents[:, k]
            span, width = int(powers.max()) + 1, count
            key = (groups[k] * span + powers) * width + ids
            edges = np.unique(key)
            edges = np.column_stack([edges // (span * width), edges // width % span,
                                     edges % width])
            starts = np.flatnonzero(np.diff(edges[:, 0], prepend=-1))
            ends = np.append(starts[1:], len(edges))
            memo: dict[bytes, int] = {}
            node_of_group = np.empty(len(starts), dtype=np.int64)
            parents, new_powers, children = [], [], []
            first = count
            for g, (a, b) in enumerate(zip(starts, ends, strict=True)):
                if b - a == 1 and edges[a, 1] == 0:  # the variable does not occur here
                    node_of_group[g] = edges[a, 2]
                    continue
                signature = edges[a:b, 1:].tobytes()
                node = memo.get(signature)
                if node is None:
                    node = memo[signature] = count
                    count += 1
                    parents.append(np.full(b - a, node - first, dtype=np.int64))
                    new_powers.append(edges[a:b, 1])
                    children.append(edges[a:b, 2])
                node_of_group[g] = node
            ids = node_of_group[groups[k]]
            if parents:
                parents = np.concatenate(parents)
                self.levels.append((k, first, parents, np.concatenate(new_powers),
                                    np.concatenate(children)))
                self.starts[k] = np.flatnonzero(np.diff(parents, prepend=-1))
        self.count = count
        self.levels.reverse()  # top level first
        top = int(ids[0])
        self.roots = self._roots(top, len(polynomials))

    def _roots(self, top: int, how_many: int) -> list[int | None]:
        """The node of each polynomial under the top node (None for a zero polynomial)."""
        roots: list[int | None] = [None] * how_many
        level = self.levels[0] if self.levels else None
        if level is None or level[0] != 0:  # one polynomial alone: the top node is its root
            roots[0] = top
            return roots
        _, first, parents, powers, children = level
        for parent, power, child in zip(parents, powers, children, strict=True):
            if parent + first == top:
                roots[int(power)] = int(child)
        return roots

    @property
    def size(self) -> int:
        """Edges: the multiplications per point."""
        return sum(len(level[2]) for level in self.levels)

    def _powers(self, column, degree: int):
        import numpy as np

        out = np.empty((degree + 1, len(column)))
        out[0] = 1.0
        for j in range(1, degree + 1):
            np.multiply(out[j - 1], column, out=out[j])
        return out

    def forward(self, columns: Sequence[Any]):
        """Every node's value at the points (nodes × points) and the powers of each level."""
        import numpy as np

        size = len(columns[0]) if columns else 1
        values = np.empty((self.count, size))
        values[:len(self.leaves)] = self.leaves[:, None]
        powers = {}
        for k, first, _, level_powers, children in reversed(self.levels):
            if k == 0:
                continue  # the top node only joins the polynomials
            column = np.asarray(columns[self.variables[k - 1]], dtype=float)
            table = powers[k] = self._powers(column, int(level_powers.max()))
            terms = values[children] * table[level_powers]
            starts = self.starts[k]
            values[first:first + len(starts)] = np.add.reduceat(terms, starts, axis=0)
        return values, powers

    def backward(self, values, powers, seeds: Mapping[int, Any], n: int):
        """Points × variables: Σ_root seed·∂root/∂x_j (reverse-mode differentiation)."""
        import numpy as np

        size = values.shape[1]
        adjoint = np.zeros_like(values)
        for node, seed in seeds.items():
            adjoint[node] += seed
        gradient = np.zeros((size, n))
        for k, first, parents, level_powers, children in self.levels:
            if k == 0:
                continue
            table = powers[k]
            upstream = adjoint[parents + first]
            np.add.at(adjoint, children, upstream * table[level_powers])
            used = level_powers > 0
            if used.any():
                slope = level_powers[used][:, None] * table[level_powers[used] - 1]
                gradient[:, self.variables[k - 1]] = np.einsum(
                    "ij,ij,ij->j", upstream[used], values[children[used]], slope)
        return gradient


def _exponent_arrays(ring: PolynomialRing, p, positions: Sequence[int]):
    """(exponents restricted to `positions` (terms × variables), float coefficients)."""
    import numpy as np

    terms = ring.terms(p)
    if not terms:
        return np.zeros((0, len(positions)), dtype=np.int64), np.zeros(0)
    exponents = np.array([m for m, _ in terms], dtype=np.int64).reshape(len(terms), -1)
    return exponents[:, positions], np.array([float(c) for _, c in terms])


class RationalForm:
    """A closed form as numerator/denominator polynomials in `symbols` (exact and numpy);
    the symbols in `fixed` are set to their values once, in the polynomials. `order`, names
    in an order that follows the circuit, is tried for the Horner diagram beside the
    symbols' own order (the smaller diagram is kept)."""

    def __init__(self, expression: sympy.Expr | RationalFunction,
                 symbols: Sequence[sympy.Symbol],
                 fixed: Mapping[sympy.Symbol, Fraction] | None = None,
                 order: Sequence[str] = ()) -> None:
        fixed = dict(fixed or {})
        self.symbols = list(symbols)
        if not self.symbols:
            raise ValueError("no variables")
        function = _function(expression, [*self.symbols, *fixed])
        ring = function.ring
        top, bottom = function.numerator, function.denominator
        for x, v in fixed.items():
            if str(x) in ring.names:
                top, bottom = substitute_quotient(top, bottom, str(x),
                                                  ring.constant(v.numerator),
                                                  ring.constant(v.denominator), ring)
        self.ring, self.numerator, self.denominator = ring, top, bottom
        self.names = [str(x) for x in self.symbols]  # as algebra.convert names them
        self.order = list(order)
        self._derivatives: dict[int, tuple[Any, Any]] = {}

    @property
    def size(self) -> int:
        """Terms of numerator and denominator together."""
        return len(self.numerator) + len(self.denominator)

    @cached_property
    def _used(self) -> list[int]:
        """Positions (in `symbols`) of the variables N or D use."""
        return [k for k, n in enumerate(self.names) if n in self.ring.names]

    @cached_property
    def _arrays(self) -> list[tuple[Any, Any]]:
        """(exponents in the order of `symbols`, float coefficients) of N and of D."""
        ring, used = self.ring, self._used
        positions = [ring.index(self.names[k]) for k in used]
        return [(_widen(e, used, len(self.names)), c) for e, c in
                (_exponent_arrays(ring, p, positions) for p in (self.numerator, self.denominator))]

    @cached_property
    def _diagram(self) -> _Diagram:
        used, polynomials = self._used, self._arrays
        candidates = [used]
        hinted = [self.names.index(n) for n in self.order if n in self.names]
        hinted = [k for k in hinted if k in used]
        hinted += [k for k in used if k not in hinted]
        if hinted != used:
            candidates.append(hinted)
        diagrams = [_Diagram(polynomials, len(self.names), order) for order in candidates]
        return min(diagrams, key=lambda d: d.size)

    # -- exact
    def _values(self, point: Mapping[sympy.Symbol, Fraction]) -> dict[str, Fraction]:
        return {str(x): Fraction(point[x]) for x in self.symbols}

    def exact(self, point: Mapping[sympy.Symbol, Fraction]) -> Fraction | None:
        """The value at `point`, exactly; None at a pole."""
        values = self._values(point)
        denominator = self.ring.evaluate(self.denominator, values)
        if denominator == 0:
            return None
        return self.ring.evaluate(self.numerator, values) / denominator

    def exact_gradient(self, point: Mapping[sympy.Symbol, Fraction]) -> list[Fraction] | None:
        """Every ∂Q/∂x_k at `point`, exactly (quotient rule); None at a pole."""
        ring, values = self.ring, self._values(point)
        n, d = ring.evaluate(self.numerator, values), ring.evaluate(self.denominator, values)
        if d == 0:
            return None
        out = []
        for k in range(len(self.symbols)):
            dn, dd = (ring.evaluate(p, values) for p in self._derivative(k))
            out.append((dn * d - n * dd) / (d * d))
        return out

    def _derivative(self, k: int):
        if k not in self._derivatives:
            name = self.names[k]
            self._derivatives[k] = (self.ring.derivative(self.numerator, name),
                                    self.ring.derivative(self.denominator, name))
        return self._derivatives[k]

    # -- vectorised
    def _chunks(self, columns: Sequence[Any], size: int):
        """(start, stop, the columns' slices) of chunks that bound the working memory."""
        import numpy as np

        step = max(256, min(16384, CHUNK_CELLS // max(self._diagram.count, 1)))
        arrays = [np.asarray(c, dtype=float) for c in columns]
        arrays = [a if a.shape == (size,) else np.broadcast_to(a, (size,)) for a in arrays]
        for start in range(0, size, step):
            stop = min(size, start + step)
            yield start, stop, [a[start:stop] for a in arrays]

    def _parts(self, columns: Sequence[Any], size: int):
        """N and D at the points."""
        import numpy as np

        diagram = self._diagram
        out = np.zeros((2, size))
        for start, stop, part in self._chunks(columns, size):
            values, _ = diagram.forward(part)
            for k, root in enumerate(diagram.roots):
                if root is not None:
                    out[k, start:stop] = values[root]
        return out

    def values(self, columns: Sequence[Any], size: int):
        import numpy as np

        numerator, denominator = self._parts(columns, size)
        with np.errstate(all="ignore"):
            return numerator / denominator

    def partials(self, columns: Sequence[Any], size: int):
        """Points × variables: every ∂Q/∂x_k, by one backward pass seeded with ∂Q/∂N = 1/D
        and ∂Q/∂D = −N/D²."""
        import numpy as np

        diagram = self._diagram
        out = np.zeros((size, len(self.symbols)))
        for start, stop, part in self._chunks(columns, size):
            values, powers = diagram.forward(part)
            n_root, d_root = diagram.roots
            n = values[n_root] if n_root is not None else np.zeros(stop - start)
            d = values[d_root]
            seeds = {d_root: -n / (d * d)} if n_root is None else \
                {n_root: 1.0 / d, d_root: -n / (d * d)}
            with np.errstate(all="ignore"):
                if n_root == d_root:
                    seeds = {d_root: 1.0 / d - n / (d * d)}
                out[start:stop] = diagram.backward(values, powers, seeds, len(self.symbols))
        return out

    def corner_partials(self, lows: Sequence[float], highs: Sequence[float]):
        """Corners × variables: every ∂Q/∂x_k at every corner (index as in `corners`)."""
        return self.partials(_corner_columns(lows, highs), 2 ** len(lows))

    def denominator_corners(self, lows: Sequence[float], highs: Sequence[float]):
        """The denominator at every corner of the box (index as in `corners`)."""
        return self._parts(_corner_columns(lows, highs), 2 ** len(lows))[1]

    def denominator_values(self, columns: Sequence[Any], size: int):
        return self._parts(columns, size)[1]

    def denominator_sign(self, point: Mapping[sympy.Symbol, Fraction]) -> int:
        """The sign of the denominator at `point`, exactly."""
        value = self.ring.evaluate(self.denominator, self._values(point))
        return (value > 0) - (value < 0)

    def denominator_is_constant(self) -> bool:
        return self.ring.is_constant(self.denominator)

    def denominator_names(self) -> tuple[str, ...]:
        """The variables the denominator uses."""
        return self.ring.variables(self.denominator)

    def denominator_degree(self) -> int:
        """The highest power of any one variable in the denominator."""
        return max(self.ring.degrees(self.denominator), default=0)

    def denominator_terms(self) -> tuple[Any, Any]:
        """(exponents in the order of `symbols` (terms × variables), float coefficients) of
        the denominator."""
        return self._arrays[1]

    def corners(self, lows: Sequence[float], highs: Sequence[float]):
        return self.values(_corner_columns(lows, highs), 2 ** len(lows))


def _widen(exponents, used: list[int], width: int):
    """Exponent columns of the `used` variables placed among `width` (zeros elsewhere)."""
    import numpy as np

    out = np.zeros((len(exponents), width), dtype=np.int64)
    out[:, used] = exponents
    return out


def _function(expression: sympy.Expr | RationalFunction,
              symbols: Sequence[sympy.Symbol]) -> RationalFunction:
    """`expression` as the engine's rational function; ValueError when it is none."""
    if isinstance(expression, RationalFunction):
        return expression
    from ..algebra.convert import to_function
    from ..algebra.polynomials import AlgebraError

    used = sorted(expression.free_symbols, key=str)
    numerator, denominator = sympy.fraction(sympy.together(expression))
    if not (numerator.is_polynomial(*used) and denominator.is_polynomial(*used)):
        raise ValueError("not a rational function of its symbols")
    names = [str(x) for x in (*symbols, *used)]
    try:
        function = to_function(expression, PolynomialRing(names))
    except AlgebraError as problem:
        raise ValueError(str(problem)) from None
    if set(function.symbol_names()) - set(names):  # an atom such as pi
        raise ValueError("not a rational function of its symbols")
    return function


def _corner_columns(lows: Sequence[float], highs: Sequence[float]):
    """Columns of every corner of a box, corner i having variable j high when bit j is set."""
    import numpy as np

    n = len(lows)
    bits = (np.arange(2**n)[:, None] >> np.arange(n)) & 1
    return [np.where(bits[:, j] == 1, highs[j], lows[j]) for j in range(n)]


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


def closed_form(expression: sympy.Expr | RationalFunction, symbols: Sequence[sympy.Symbol],
                fixed: Mapping[sympy.Symbol, Fraction] | None = None, order: Sequence[str] = ()):
    """The fastest evaluator that can hold `expression` (variables `symbols`, the symbols of
    `fixed` at their values; `order` see RationalForm)."""
    try:
        return RationalForm(expression, symbols, fixed, order)
    except ValueError:
        return LambdifiedForm(expression, symbols, fixed)
