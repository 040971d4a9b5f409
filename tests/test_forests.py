"""Spanning-forest sums against independent counts.

With every weight 1 the sums count forests: the spanning-tree sum must equal networkx's
`number_of_spanning_trees` (Kirchhoff's matrix-tree theorem), and the 2-forest sum
F2(a|b) must equal the determinant of the Laplacian with the rows and columns of a and b
removed (the all-minors matrix-tree theorem: Chaiken, "A combinatorial proof of the all
minors matrix tree theorem", SIAM J. Algebraic Discrete Methods 3, 1982), computed here
by sympy's integer determinant. With symbolic weights, each forest must appear once as
its own monomial (checked against a brute-force enumeration of edge subsets).
"""

from __future__ import annotations

import itertools
import random

import networkx as nx
import pytest
import sympy

from symcirc.engine.forests import forest_polynomials
from symcirc.engine.polys import PolynomialRing


def _random_graph(seed: int) -> tuple[list[str], list[tuple[str, str]]]:
    rng = random.Random(seed)
    n = rng.randint(3, 7)
    nodes = [f"v{i}" for i in range(n)]
    edges = [(nodes[i], nodes[rng.randrange(i)]) for i in range(1, n)]  # connected
    for _ in range(rng.randint(0, 2 * n)):
        a, b = rng.sample(nodes, 2)
        edges.append((a, b))
    return nodes, edges


def _laplacian_minor(nodes, edges, removed) -> int:
    keep = [v for v in nodes if v not in removed]
    index = {v: i for i, v in enumerate(keep)}
    m = sympy.zeros(len(keep), len(keep))
    for a, b in edges:
        for x, y in ((a, b), (b, a)):
            if x in index:
                m[index[x], index[x]] += 1
                if y in index:
                    m[index[x], index[y]] -= 1
    return int(m.det(method="bareiss")) if keep else 1


@pytest.mark.parametrize("seed", range(25))
@pytest.mark.parametrize("backend", ["flint", "sympy"])
def test_unit_weights_count_trees_and_two_forests(seed, backend):
    nodes, edges = _random_graph(seed)
    ring = PolynomialRing([], backend)
    weighted = [(a, b, ring.one, ring.one) for a, b in edges]
    a, b = nodes[0], nodes[-1]
    sums = forest_polynomials(nodes, weighted, [a, b], ring)
    trees = sums[frozenset({frozenset({a, b})})]
    two = sums[frozenset({frozenset({a}), frozenset({b})})]
    multigraph = nx.MultiGraph()
    multigraph.add_nodes_from(nodes)
    multigraph.add_edges_from(edges)
    assert ring.constant_value(trees) == round(nx.number_of_spanning_trees(multigraph))
    assert ring.constant_value(two) == _laplacian_minor(nodes, edges, {a, b})


@pytest.mark.parametrize("seed", range(10))
def test_symbolic_weights_list_each_forest_once(seed):
    nodes, edges = _random_graph(seed + 100)
    names = [f"x{i}" for i in range(len(edges))]
    ring = PolynomialRing(names)
    weighted = [(a, b, ring.gen(n), ring.one) for (a, b), n in zip(edges, names, strict=True)]
    terminals = [nodes[0], nodes[1], nodes[-1]]
    sums = forest_polynomials(nodes, weighted, terminals, ring)

    expected: dict[frozenset, set] = {}
    for size in (len(nodes) - 1, len(nodes) - 2):
        for chosen in itertools.combinations(range(len(edges)), size):
            graph = nx.MultiGraph()
            graph.add_nodes_from(nodes)
            graph.add_edges_from(edges[i] for i in chosen)
            if not nx.is_forest(graph):
                continue
            parts = [set(c) & set(terminals) for c in nx.connected_components(graph)]
            if not all(parts):
                continue
            key = frozenset(frozenset(p) for p in parts)
            expected.setdefault(key, set()).add(frozenset(names[i] for i in chosen))

    assert set(sums) == set(expected)
    for key, forests in expected.items():
        terms = ring.terms(sums[key])
        assert all(c == 1 for _, c in terms)
        found = {frozenset(n for n, e in zip(ring.names, m, strict=True) if e) for m, _ in terms}
        assert found == forests
