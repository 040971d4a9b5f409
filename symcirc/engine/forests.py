"""Weighted spanning-forest sums of a graph, grouped by how the forests split the terminals.

A forest here spans every node and each of its trees holds at least one terminal; its
weight is the product of the `inward` weights of its edges and the `outward` weights of
the edges left out. `forest_polynomials` returns, for every way the terminals can be
split among one or two trees, the sum of the weights of those forests: the spanning-tree
sum F1 and the 2-forest sums F2(X|Y) of the all-minors matrix-tree theorem.

The sums are built edge by edge over a frontier (the nodes that have both decided and
undecided edges), merging partial forests that agree on the frontier (the frontier-based
decision diagrams of Sekine, Imai and Tani, "Computing the Tutte polynomial of a graph of
moderate size", ISAAC 1995). Each edge costs one multiplication by a weight per merged
state, and no term ever cancels, so the work follows the size of the sums.
"""

from __future__ import annotations

import heapq
from collections.abc import Sequence

from ..algebra.polynomials import Poly, PolynomialRing

Edge = tuple[str, str, Poly, Poly]
"""(node, node, inward weight, outward weight)."""

Partition = frozenset[frozenset[str]]

MAX_TREES = 2
"""Forests with more trees than this are not needed by the engine and are dropped early."""

# A state: the group of each frontier node (groups numbered by first appearance), the
# terminal mask of each group, and the sorted masks of the trees already closed.
State = tuple[tuple[int, ...], tuple[int, ...], tuple[int, ...]]


def forest_polynomials(nodes: Sequence[str], edges: Sequence[Edge], terminals: Sequence[str],
                       ring: PolynomialRing) -> dict[Partition, Poly]:
    """Forest sums keyed by the partition of `terminals` among the trees (one or two)."""
    bit = {t: 1 << i for i, t in enumerate(terminals)}
    order = _edge_order(nodes, [(u, v) for u, v, _, _ in edges])
    loops = [e for e in edges if e[0] == e[1]]
    edges = [edges[i] for i in order if edges[i][0] != edges[i][1]]
    last = {}
    for i, (u, v, _, _) in enumerate(edges):
        last[u] = last[v] = i

    closed0: list[int] = []
    for node in nodes:
        if node not in last:  # an isolated node is a tree of its own
            if not bit.get(node):
                return {}
            closed0.append(bit[node])
    if len(closed0) > MAX_TREES:
        return {}

    frontier: list[str] = []
    states: dict[State, Poly] = {((), (), tuple(sorted(closed0))): ring.one}
    for i, (u, v, inward, outward) in enumerate(edges):
        for node in (u, v):
            if node not in frontier:
                frontier.append(node)
                states = {_enter(state, bit.get(node, 0)): p for state, p in states.items()}
        iu, iv = frontier.index(u), frontier.index(v)
        following: dict[State, Poly] = {}
        for state, p in states.items():
            _add(following, state, p * outward)
            joined = _join(state, iu, iv)
            if joined is not None:
                _add(following, joined, p * inward)
        states = following
        for node in [n for n in frontier if last[n] == i]:
            k = frontier.index(node)
            frontier.pop(k)
            states = _leave_all(states, k)
    for _u, _v, _inward, outward in loops:
        states = {state: p * outward for state, p in states.items()}

    names = {b: t for t, b in bit.items()}
    result: dict[Partition, Poly] = {}
    for (_, _, closed), p in states.items():
        key = frozenset(frozenset(names[b] for b in names if mask & b) for mask in closed)
        result[key] = result[key] + p if key in result else p
    return result


def _add(states: dict[State, Poly], state: State, p: Poly) -> None:
    states[state] = states[state] + p if state in states else p


def _canonical(groups: Sequence[int], masks: Sequence[int]) -> tuple[tuple[int, ...],
                                                                    tuple[int, ...]]:
    """Renumber groups by first appearance so that equal partial forests share a state."""
    renumber: dict[int, int] = {}
    for g in groups:
        renumber.setdefault(g, len(renumber))
    new_masks = [0] * len(renumber)
    for old, new in renumber.items():
        new_masks[new] = masks[old]
    return tuple(renumber[g] for g in groups), tuple(new_masks)


def _enter(state: State, mask: int) -> State:
    """A node joins the frontier as a tree of its own."""
    groups, masks, closed = state
    return (*groups, len(masks)), (*masks, mask), closed


def _join(state: State, iu: int, iv: int) -> State | None:
    """Take the edge between frontier positions iu and iv; None when it closes a cycle."""
    groups, masks, closed = state
    a, b = groups[iu], groups[iv]
    if a == b:
        return None
    merged = [a if g == b else g for g in groups]
    new_masks = list(masks)
    new_masks[a] |= masks[b]
    return (*_canonical(merged, new_masks), closed)


def _leave_all(states: dict[State, Poly], k: int) -> dict[State, Poly]:
    """The node at frontier position k has no undecided edges left: drop it, closing its
    tree when it was the tree's last frontier node."""
    following: dict[State, Poly] = {}
    for (groups, masks, closed), p in states.items():
        g = groups[k]
        rest = groups[:k] + groups[k + 1:]
        if g not in rest:
            if masks[g] == 0:
                continue  # a finished tree without a terminal
            closed = tuple(sorted((*closed, masks[g])))
            if len(closed) > MAX_TREES or (len(closed) == MAX_TREES and rest):
                continue
        state = (*_canonical(rest, masks), closed)
        _add(following, state, p)
    return following


def _edge_order(nodes: Sequence[str], edges: Sequence[tuple[str, str]]) -> list[int]:
    """Edges in an order that keeps the frontier narrow: nodes are visited greedily, each
    time the one with most edges to the nodes already visited (ties: fewest edges to the
    rest), and an edge comes when its second node is visited."""
    adjacent: dict[str, list[str]] = {n: [] for n in nodes}
    for u, v in edges:
        adjacent.setdefault(u, []).append(v)
        adjacent.setdefault(v, []).append(u)
    position: dict[str, int] = {}
    links = {n: 0 for n in adjacent}
    waiting = [(0, len(adjacent[n]), str(n), n) for n in adjacent]
    heapq.heapify(waiting)
    while waiting:
        _, _, _, node = heapq.heappop(waiting)
        if node in position:
            continue
        position[node] = len(position)
        for other in adjacent[node]:
            if other not in position:
                links[other] += 1
                heapq.heappush(waiting, (-links[other], len(adjacent[other]) - links[other],
                                         str(other), other))
    return sorted(range(len(edges)),
                  key=lambda i: (max(position[edges[i][0]], position[edges[i][1]]),
                                 min(position[edges[i][0]], position[edges[i][1]]), i))
