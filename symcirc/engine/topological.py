"""Passive networks solved topologically: every result from spanning-forest sums.

By the all-minors matrix-tree theorem, with F1 the spanning-tree sum and F2(X|Y) the sum
over spanning 2-forests with the nodes X in one tree and Y in the other (each forest
weighted by the inward weights of its edges and the outward weights of the others, so
everything stays polynomial):
- a unit current driven into a and drawn from b gives V(c) - V(d) = [F2(ac|bd) - F2(ad|bc)] / F1;
- a unit voltage between p and n (every other voltage source shorted) gives
  V(c) - V(d) = [F2(pc|nd) - F2(pd|nc)] / F2(p|n), on the graph without that source;
  its own current is -F1 / F2(p|n).
These sums have no cancelling terms, so the cost follows the size of the answer. Anything
this module cannot express (a current through a source between two other sources) is
delegated to the elimination path.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from math import comb

from ..algebra.polynomials import LAPLACE_NAME, AlgebraError, Poly
from ..algebra.rational import RationalFunction
from ..model.circuit import REFERENCE
from . import forests
from .mna import Current, Measure, MnaSolution, Voltage, port_excitation
from .network import Network

Partition = frozenset[frozenset[str]]

MAX_TERMS = 5_000_000
"""Largest forest sum derived (terms): beyond it memory, not time, runs out (and the
polynomial library aborts the process rather than raising), so such jobs are refused."""


def spanning_trees(nodes: list[str], edges: list[tuple[str, str]]) -> int:
    """Number of spanning trees of a multigraph (Kirchhoff's matrix-tree theorem, exact:
    a fraction-free Bareiss determinant of the reduced Laplacian)."""
    index = {n: i for i, n in enumerate(nodes)}
    size = len(nodes) - 1
    if size <= 0:
        return 1
    m = [[0] * size for _ in range(size)]
    for u, v in edges:
        i, j = index[u] - 1, index[v] - 1
        for a, b in ((i, j), (j, i)):
            if a >= 0:
                m[a][a] += 1
                if b >= 0:
                    m[a][b] -= 1
    sign, previous = 1, 1
    for k in range(size - 1):
        if m[k][k] == 0:
            swap = next((r for r in range(k + 1, size) if m[r][k]), None)
            if swap is None:
                return 0
            m[k], m[swap] = m[swap], m[k]
            sign = -sign
        for i in range(k + 1, size):
            for j in range(k + 1, size):
                m[i][j] = (m[i][j] * m[k][k] - m[i][k] * m[k][j]) // previous
        previous = m[k][k]
    return sign * m[size - 1][size - 1]


def check_size(nodes: list[str], edges: list[tuple[str, str]], terminals: list[str]) -> None:
    """Refuse a forest sum whose largest polynomial would exceed MAX_TERMS terms.

    The largest sums are the spanning trees of the graph and of the graph with its
    terminals merged; both are counted exactly, but only when a cheap bound (the number
    of ways to choose the edges of a tree) does not already settle it."""
    if comb(len(edges), max(len(nodes) - 1, 0)) <= MAX_TERMS:
        return
    merged = {t: terminals[0] for t in terminals}
    joined_nodes = [n for n in nodes if n not in merged or n == terminals[0]]
    joined = [(merged.get(u, u), merged.get(v, v)) for u, v in edges]
    joined = [(u, v) for u, v in joined if u != v]
    count = max(spanning_trees(nodes, edges), spanning_trees(joined_nodes, joined))
    if count > MAX_TERMS:
        from ..model.units import eng

        raise AlgebraError(
            f"the exact result would have about {eng(count)} terms (more than "
            f"{MAX_TERMS:,}); that is too large to derive exactly. Give some parts "
            "numbers in the quantity (e.g. equal arms) or split the network into blocks")


def _tree_sum_is_prime(edges: list, joined: tuple[str, str] | None,
                       ring) -> bool:
    """True when the graph's spanning-tree sum is irreducible up to a monomial factor: the
    graph (with `joined` merged, loops dropped) is 2-connected and each edge's weights are
    monomials holding one variable of its own, of degree one (besides powers of s)."""
    merge = {joined[1]: joined[0]} if joined and joined[0] != joined[1] else {}
    owner: dict[str, int] = {}
    graph: dict[str, list[tuple[str, int]]] = {}
    for i, (u, v, inward, outward) in enumerate(edges):
        u, v = merge.get(u, u), merge.get(v, v)
        own = []
        for weight in (inward, outward):
            if len(weight) != 1:
                return False
            for name, degree in zip(ring.names, weight.degrees(), strict=True):
                if degree and name != LAPLACE_NAME:
                    if degree != 1 or name in owner:
                        return False
                    owner[name] = i
                    own.append(name)
        if len(own) != 1:
            return False
        if u != v:
            graph.setdefault(u, []).append((v, i))
            graph.setdefault(v, []).append((u, i))
    return _biconnected(graph)


def _biconnected(graph: dict[str, list[tuple[str, int]]]) -> bool:
    """Connected with no cut vertex (Hopcroft and Tarjan's depth-first search)."""
    if not graph:
        return True
    root = next(iter(graph))
    order = {root: 0}
    low = {root: 0}
    root_children = 0
    stack = [(root, -1, iter(graph[root]))]
    while stack:
        node, via, neighbours = stack[-1]
        step = next(neighbours, None)
        if step is None:
            stack.pop()
            if stack:
                parent = stack[-1][0]
                low[parent] = min(low[parent], low[node])
                if parent != root and low[node] >= order[parent]:
                    return False
            continue
        other, edge = step
        if edge == via:
            continue
        if other in order:
            low[node] = min(low[node], order[other])
        else:
            order[other] = low[other] = len(order)
            if node == root:
                root_children += 1
            stack.append((other, edge, iter(graph[other])))
    return len(order) == len(graph) and root_children <= 1


class _Contraction:
    """Nodes merged by shorted voltage sources (union-find), each named by a representative."""

    def __init__(self, nodes, joins) -> None:
        self.parent = {n: n for n in nodes}
        for a, b in joins:
            ra, rb = self.find(a), self.find(b)
            if ra != rb:
                self.parent[rb] = ra

    def find(self, node: str) -> str:
        while self.parent[node] != node:
            self.parent[node] = self.parent[self.parent[node]]
            node = self.parent[node]
        return node


class ForestSolution:
    """Transfers of a passive network (see the module docstring), computed on demand."""

    def __init__(self, network: Network, shorted: Mapping[str, tuple[str, str]],
                 tested: Mapping[str, tuple[str, str]],
                 fallback: Callable[[], MnaSolution]) -> None:
        self.network = network
        self.ring = network.ring
        self.nodes = (REFERENCE, *network.nodes)
        # voltage-type excitations: independent voltage sources and shorted test ports
        self.voltages: dict[str, tuple[str, str]] = {
            name: (s.a, s.b) for name, s in network.sources.items() if s.kind == "voltage"}
        self.voltages.update({port_excitation(p): ab for p, ab in shorted.items()})
        # current-type excitations: driven into the first node, drawn from the second
        self.currents: dict[str, tuple[str, str]] = {
            name: (s.a, s.b) for name, s in network.sources.items() if s.kind == "current"}
        self.currents.update({port_excitation(p): ab for p, ab in tested.items()})
        self._fallback = fallback
        self._mna: MnaSolution | None = None
        self._graphs: dict[str | None, tuple[_Contraction, list]] = {}
        self._sums: dict[tuple[str | None, frozenset[str]], dict[Partition, Poly]] = {}
        self._primes: dict[tuple[str | None, tuple[str, str] | None], bool] = {}

    # -- graphs and forest sums
    def _graph(self, without: str | None) -> tuple[_Contraction, list]:
        """Contraction by every voltage excitation but `without`, and the remaining edges."""
        if without not in self._graphs:
            joins = [ab for name, ab in self.voltages.items() if name != without]
            merged = _Contraction(self.nodes, joins)
            edges = []
            for b in self.network.branches.values():
                u, v = merged.find(b.a), merged.find(b.b)
                if u != v and self._is_edge(b.name):
                    edges.append((u, v, b.inward, b.outward))
            self._graphs[without] = (merged, edges)
        return self._graphs[without]

    def _is_edge(self, branch: str) -> bool:
        """Whether the branch is an edge of the graph (every branch of a passive network)."""
        return True

    def _forests(self, without: str | None, terminals: frozenset[str]) -> dict[Partition, Poly]:
        key = (without, terminals)
        if key not in self._sums:
            merged, edges = self._graph(without)
            nodes = sorted({merged.find(n) for n in self.nodes})
            check_size(nodes, [(u, v) for u, v, _, _ in edges], sorted(terminals))
            self._sums[key] = forests.forest_polynomials(nodes, edges, sorted(terminals),
                                                          self.ring)
        return self._sums[key]

    def _fraction(self, num: Poly, den: Poly, without: str | None,
                  joined: tuple[str, str] | None) -> RationalFunction:
        """num/den in lowest terms, where den is the spanning-tree sum of the graph without
        `without` and with the nodes `joined` merged.

        When that graph is 2-connected and every edge carries its own variable (of degree
        one, times at most a power of s), its tree sum is irreducible but for a monomial
        (the basis polynomial of a connected matroid is irreducible; a shared s only
        scales it, by homogeneity), so the common factor is a monomial or den's
        non-monomial part itself: found without a general gcd, which on results of
        100,000 terms costs more than deriving them."""
        ring = self.ring
        if ring.backend != "flint" or not self._prime(without, joined):
            return RationalFunction(num, den, ring)
        common = ring.gcd(num.term_content(), den.term_content())
        if common != 1:
            num, den = ring.exquo(num, common), ring.exquo(den, common)
        monomial = den.term_content()
        prime = den if monomial == 1 else ring.exquo(den, monomial)
        if not ring.is_constant(prime) and not ring.is_zero(num):
            try:
                num, den = num / prime, monomial
            except Exception:  # flint's DomainError: prime does not divide num
                pass
        return RationalFunction.coprime(num, den, ring)

    def _prime(self, without: str | None, joined: tuple[str, str] | None) -> bool:
        """`_tree_sum_is_prime` of the graph without `without`, once per graph."""
        key = (without, joined)
        if key not in self._primes:
            self._primes[key] = _tree_sum_is_prime(self._graph(without)[1], joined, self.ring)
        return self._primes[key]

    def _two(self, sums: dict[Partition, Poly], first: set[str], second: set[str]) -> Poly:
        """F2(first|second): 2-forests with `first` in one tree and `second` in the other."""
        if first & second:
            return self.ring.zero
        total = self.ring.zero
        for partition, value in sums.items():
            if len(partition) != 2:
                continue
            x, y = partition
            if (first <= x and second <= y) or (first <= y and second <= x):
                total = total + value
        return total

    def _trees(self, sums: dict[Partition, Poly]) -> Poly:
        return next((v for p, v in sums.items() if len(p) == 1), self.ring.zero)

    def check(self) -> None:
        """A connected passive network always has a unique solution (nothing to do)."""

    # -- transfers
    def transfer(self, measure: Measure, excitation: str) -> RationalFunction:
        """The measure per unit of `excitation`, every other excitation zero."""
        result = self._transfer(measure, excitation)
        if result is None:
            return self._delegate().transfer(measure, excitation)
        return result

    def _delegate(self) -> MnaSolution:
        if self._mna is None:
            self._mna = self._fallback()
        return self._mna

    def _zero(self) -> RationalFunction:
        return RationalFunction(0, 1, self.ring, canonical=True)

    def _transfer(self, measure: Measure, excitation: str) -> RationalFunction | None:
        if isinstance(measure, Voltage):
            return self._voltage(measure.a, measure.b, excitation)
        name = measure.element
        branch = self.network.branches.get(name)
        if branch is not None:
            v = self._voltage(branch.a, branch.b, excitation)
            if v is None:
                return None
            return v * RationalFunction(branch.inward, branch.outward, self.ring)
        if name in self.currents:  # I(X) of a current source is minus its value
            return RationalFunction(-1, 1, self.ring) if name == excitation else self._zero()
        if name in self.voltages:
            return self._source_current(name, excitation)
        return None

    def _voltage(self, c: str, d: str, excitation: str) -> RationalFunction | None:
        if excitation in self.voltages:
            p, n = self.voltages[excitation]
            merged, _ = self._graph(excitation)
            p, n, c, d = (merged.find(x) for x in (p, n, c, d))
            if p == n:
                return None  # a loop of voltage sources: let elimination explain it
            if c == d:
                return self._zero()
            sums = self._forests(excitation, frozenset((p, n, c, d)))
            den = self._two(sums, {p}, {n})
            if self.ring.is_zero(den):
                return None
            num = self._two(sums, {p, c}, {n, d}) - self._two(sums, {p, d}, {n, c})
            return self._fraction(num, den, excitation, (p, n))
        if excitation in self.currents:
            a, b = self.currents[excitation]
            merged, _ = self._graph(None)
            a, b, c, d = (merged.find(x) for x in (a, b, c, d))
            if a == b or c == d:
                return self._zero()
            sums = self._forests(None, frozenset((a, b, c, d)))
            den = self._trees(sums)
            if self.ring.is_zero(den):
                return None
            num = self._two(sums, {a, c}, {b, d}) - self._two(sums, {a, d}, {b, c})
            return self._fraction(num, den, None, None)
        return self._zero()  # not an excitation of this network: nothing drives it

    def _source_current(self, name: str, excitation: str) -> RationalFunction | None:
        """Current through a voltage-type excitation (from its first node to its second)."""
        p, n = self.voltages[name]
        if name == excitation:
            merged, _ = self._graph(name)
            rp, rn = merged.find(p), merged.find(n)
            if rp == rn:
                return None
            sums = self._forests(name, frozenset((rp, rn)))
            den = self._two(sums, {rp}, {rn})
            if self.ring.is_zero(den):
                return None
            return self._fraction(-self._trees(sums), den, name, (rp, rn))
        # the current balance at a terminal that no other voltage-type element touches
        for node, sign in ((p, 1), (n, -1)):
            if any(node in ab for other, ab in self.voltages.items() if other != name):
                continue
            total = self._zero()
            if excitation in self.currents:
                a, b = self.currents[excitation]
                total = total + (int(node == a) - int(node == b))
            for branch in self.network.branches.values():
                if branch.a == branch.b or node not in (branch.a, branch.b):
                    continue
                current = self._transfer(Current(branch.name), excitation)
                if current is None:
                    return None
                total = total - current if node == branch.a else total + current
            return total if sign == 1 else -total
        return None
