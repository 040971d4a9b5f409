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

from symcirc.algebra.polynomials import PolynomialRing
from symcirc.engine.forests import forest_polynomials


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


HANGING_TRIANGLE = """
voltage source U (a, gnd)
resistor R1 (a, b)
resistor R2 (b, gnd)
capacitor C3 (b, gnd)
resistor R4 (b, x)
inductor L5 (x, y)
resistor R6 (y, b)
port out (b, gnd)
"""

BRIDGE = """
voltage source U (top, gnd)
resistor R1 (top, l)
resistor R2 (l, gnd)
capacitor C3 (top, r)
resistor R4 (r, gnd)
resistor R5 (l, r)
port out (l, r)
"""


@pytest.mark.parametrize("text", [HANGING_TRIANGLE, BRIDGE])
def test_lowest_terms_without_a_general_gcd_match_elimination(text):
    """The forest path's shortcut to lowest terms (a prime tree sum for 2-connected
    graphs) gives the canonical result of elimination, with and without a cut vertex."""
    import symcirc
    from symcirc.engine.mna import Current, Voltage, port_excitation
    from symcirc.engine.system import solution

    circuit = symcirc.parse(text)
    forest = solution(circuit, path="forest")
    eliminated = solution(circuit, path="elimination")
    measures = [Voltage(n, "gnd") for n in circuit.nodes[1:]]
    measures += [Current(name) for name in circuit.elements]
    for excitation in ("U", port_excitation("out")):
        for measure in measures:
            assert forest.transfer(measure, excitation) == eliminated.transfer(measure,
                                                                               excitation)


def test_prime_tree_sum_needs_two_connected_graph_and_own_variables():
    from symcirc.engine.topological import _tree_sum_is_prime

    ring = PolynomialRing(["s", "C1", "R1", "R2", "R3", "R4"])
    one, s, c1 = ring.one, ring.gen("s"), ring.gen("C1")
    r = {n: ring.gen(n) for n in ("R1", "R2", "R3", "R4")}
    square = [("a", "b", one, r["R1"]), ("b", "c", one, r["R2"]),
              ("c", "d", one, r["R3"]), ("d", "a", s * c1, one)]
    assert _tree_sum_is_prime(square, None, ring)
    path = square[:3]  # a-b-c-d: every inner node is a cut vertex
    assert not _tree_sum_is_prime(path, None, ring)
    assert _tree_sum_is_prime(path, ("a", "d"), ring)  # closing it makes a cycle
    shared = square[:3] + [("d", "a", one, r["R1"])]  # R1 on two edges
    assert not _tree_sum_is_prime(shared, None, ring)
    squared = square[:3] + [("d", "a", one, r["R4"] ** 2)]
    assert not _tree_sum_is_prime(squared, None, ring)
