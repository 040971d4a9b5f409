"""Networks with controlled current sources solved by forest sums (the two-graph method).

The nodal matrix of such a network is M = Y + Σ_j w_j·u_j·v_jᵀ: Y the admittance matrix
of its passive part and, for each control j of a current source X (a, b) = g·V(c, d),
u_j = e(a) − e(b), v_j = e(c) − e(d) and w_j = −g (the source drives g·V(c, d) into a).
A current control g·I(E) of a passive element E is the voltage control g·y_E·V(E).

det M is multilinear in the w_j, and the coefficient of Π_{j∈S} w_j is the bordered
determinant det[[Y, U_S], [−V_Sᵀ, 0]]. By the all-minors matrix-tree theorem that is a
sum over the spanning forests F of the passive graph (each tree holding a terminal) of
weight(F)·det U_S(F)·det V_S(F), where U_S(F) is the incidence of the current pairs
(a_j, b_j), j ∈ S, on F's trees (the reference's tree left out) and V_S(F) that of the
voltage pairs: ±1 exactly when F with the current pairs of S, and F with the voltage
pairs, are spanning trees, so that F ∪ S is a common spanning tree of the current graph
and the voltage graph (the two-graph method: Mayeda, "Graph Theory", 1972; Chen, "Applied
Graph Theory", 1976; from memory), and 0 otherwise. The forests come from the frontier
walk of `forests.py`; as each tree closes, its rows of U and V are expanded into the two
determinants (`signed_forest_sum`), so states keep only the columns used and still
merge. Terms cancel only where a Laplace expansion of a zero determinant (a set S whose
pairs close a cycle) pairs up with opposite signs, or where two weights share a
variable (a current control and the element it reads); states that can no longer reach
a common spanning tree are dropped as soon as that is certain.

A transfer is one more control: V(c, d) per unit current driven from a to b is the
coefficient of x in det(M + x·u·vᵀ), u = e(a) − e(b), v = e(c) − e(d), over det M; per
unit of a voltage source (p, n) it is that coefficient with u = e(p) − e(n) over the same
with v = u, on the network without the source. Rational coefficients are multiplied
through by their denominators, every group alike.

An element with an unknown current of its own borders M with a column (its current's
incidence) and a row (its equation), and the bordered determinant is linear in both: an
ideal opamp is a nullor, one control every term holds (norator (out, ref), nullator
(p, n)); a gain's output V(a, b) = Σ k_i·V(c_i, d_i) (a finite-gain opamp, a controlled
voltage source) is a group of controls on the current pair (a, b), one per term of its
equation, of which every term holds exactly one; an ideal transformer's column and row
are both (p1, n1) − N·(p2, n2), a group of four.
"""

from __future__ import annotations

import heapq
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from math import comb

from ..algebra.polynomials import Poly, TooLarge
from ..algebra.rational import RationalFunction
from ..model.circuit import REFERENCE
from . import forests
from .mna import Current, Measure, MnaSolution
from .network import Network, VoltageControl
from .topological import ForestSolution, _Contraction, spanning_trees

MAX_COMMON_TREES = 20_000_000
"""Largest bound on a determinant's terms (module docstring) derived: four times the
largest result (`polynomials.MAX_TERMS`), as the bound counts trees of one graph only."""

EXACT_COUNT_FROM = 20_000
"""Below this many terms by the cheap bound (the ways to choose a tree's edges), the
spanning trees are not counted: the bound already says the determinant is small."""

MAX_CONTROLS = 12
"""Most controls taken by forest sums: the walk's states are keyed by the columns used in
U and in V, up to 4 to the power of the controls; at 12 (a ladder of 12 controlled
sections, 358,390 terms) the walk took 3 s, where elimination refuses 9 sections."""


@dataclass(frozen=True)
class Control:
    """A column of the two-graph determinant: current pair (a, b), voltage pair (c, d), and
    its weight in a term that holds it (`numerator`) or does not (`denominator`).

    A controlled current source's control is w·V(c, d) driven into a, w = numerator /
    denominator. A `group` (a number) is the column and row of an element with an unknown
    current of its own (a norator's): every term holds exactly one control of each group,
    the group's alternatives being the terms of its column and of its equation: an ideal
    opamp V(p) = V(n) is one control, (out, ref) with (p, n); a gain, V(a, b) =
    Σ k_i·V(c_i, d_i), is (a, b) with (a, b) weighted by the common denominator D, and
    (a, b) with each (c_i, d_i) weighted by −k_i·D (the determinant is linear in the
    column and in the row); a transformer's four are in `controls_of`."""

    a: str
    b: str
    c: str
    d: str
    numerator: Poly
    denominator: Poly
    group: int | None = None

    @property
    def norator(self) -> bool:
        """A column every term holds one of its group's (not a controlled current's)."""
        return self.group is not None


@dataclass(frozen=True)
class TwoGraph:
    """A network's controls (see Control)."""

    controls: tuple[Control, ...]


def controls_of(network: Network, limit: int | None = MAX_CONTROLS) -> TwoGraph | None:
    """The network's controls, or None when it has an element the forest sums cannot take
    (a coupling, a controlled voltage source with a constant part, a current control of
    anything but a passive element, or more than `limit` controls)."""
    if network.couplings:
        return None
    ring = network.ring
    one = ring.one
    known = {REFERENCE, *network.nodes}
    found: list[Control] = []

    def linear(control) -> tuple[str, str, Poly, Poly] | None:
        """(c, d, numerator, denominator) of a control's coefficient times its voltage."""
        g = control.coefficient
        if isinstance(control, VoltageControl):
            return control.a, control.b, g.numerator, g.denominator
        branch = network.branches.get(control.element)
        if branch is None:
            return None
        return branch.a, branch.b, g.numerator * branch.inward, g.denominator * branch.outward

    def output(a: str, b: str, terms: list[tuple[str, str, Poly, Poly]]) -> None:
        """V(a, b) = Σ num_i/den_i·V(c_i, d_i) held by a norator across (a, b)."""
        group = len({k.group for k in found if k.group is not None})
        common = one
        for *_, den in terms:
            common = common * den
        found.append(Control(a, b, a, b, common, one, group))
        for i, (c, d, num, _) in enumerate(terms):
            weight = -num
            for m, (*_, den) in enumerate(terms):
                if m != i:
                    weight = weight * den
            found.append(Control(a, b, c, d, weight, one, group))

    for source in network.sources.values():
        if source.independent:
            continue
        if source.constant is not None and source.kind == "voltage":
            return None
        terms = [linear(control) for control in source.controls]
        if any(t is None or not {t[0], t[1]} <= known for t in terms):
            return None
        if source.kind == "current":
            found += [Control(source.a, source.b, c, d, -num, den) for c, d, num, den in terms]
        else:
            output(source.a, source.b, terms)
    for opamp in network.opamps.values():
        if opamp.gain is None:
            group = len({k.group for k in found if k.group is not None})
            found.append(Control(opamp.out, REFERENCE, opamp.p, opamp.n, one, one, group))
        else:
            gain = opamp.gain
            output(opamp.out, REFERENCE,
                   [(opamp.p, opamp.n, gain.numerator, gain.denominator)])
    for t in network.transformers.values():
        # V1 − N·V2 = 0 with the current I1 into p1 and −N·I1 into p2: the unknown's column
        # and its row are both (p1, n1) − N·(p2, n2), so each term takes one of each
        group = len({k.group for k in found if k.group is not None})
        sides = (((t.p1, t.n1), one), ((t.p2, t.n2), -t.ratio))
        for (a, b), u in sides:
            for (c, d), v in sides:
                found.append(Control(a, b, c, d, u * v, one, group))
    if limit is not None and len(found) > limit:
        return None
    return TwoGraph(tuple(found))


def terms_bound(network: Network, shorted: Sequence[tuple[str, str]]) -> int | None:
    """A bound on the terms of the network's determinant, known before any work (None
    when the network has elements the two-graph form does not take); TooLarge when it
    passes MAX_COMMON_TREES.

    Its terms are the common spanning trees of the current and voltage graphs (module
    docstring), each times a term of its sources' coefficients, so they number at most
    the spanning trees of either graph (Kirchhoff's count, exact and cheap) times the
    largest term count of each coefficient. Every transfer of the network has that
    determinant, or one of its size, as denominator, whichever path derives it. The count
    is skipped when choosing the edges of a tree is already few enough."""
    two_graph = controls_of(network, limit=None)
    if two_graph is None or not two_graph.controls:
        return None
    controls = two_graph.controls
    joins = [(s.a, s.b) for s in network.sources.values()
             if s.kind == "voltage" and s.independent]
    everything = (REFERENCE, *network.nodes)
    passive = [(b.a, b.b) for b in network.branches.values()]
    shared: dict[tuple[int, int], set[tuple[str, str]]] = {}
    for k in controls:
        if k.group is not None:
            shared.setdefault((k.group, 0), set()).add((k.a, k.b))
            shared.setdefault((k.group, 1), set()).add((k.c, k.d))
    graphs = []
    for side in (0, 1):  # the current graph, then the voltage graph
        merged_pairs, edges = [], list(passive)
        for k in controls:
            pair = (k.a, k.b) if side == 0 else (k.c, k.d)
            # a pair in every tree is merged, as the sources are; a group's alternatives
            # are edges (a tree holds one of them)
            if k.group is not None and len(shared[k.group, side]) == 1:
                merged_pairs.append(pair)
            else:
                edges.append(pair)
        merged = _Contraction(everything, [*joins, *shorted, *merged_pairs])
        edges = [(merged.find(u), merged.find(v)) for u, v in edges]
        graphs.append((sorted({merged.find(n) for n in everything}),
                       [(u, v) for u, v in edges if u != v]))
    ring = network.ring
    weight = 1
    largest: dict[int, int] = {}
    for k in controls:
        if k.group is None:
            weight *= max(ring.nterms(k.numerator), ring.nterms(k.denominator))
        else:
            largest[k.group] = max(largest.get(k.group, 1), ring.nterms(k.numerator))
    for terms in largest.values():
        weight *= terms
    bound = min(comb(len(edges), max(len(nodes) - 1, 0)) for nodes, edges in graphs) * weight
    if bound <= EXACT_COUNT_FROM:
        return bound
    bound = min(spanning_trees(nodes, edges) for nodes, edges in graphs) * weight
    if bound > MAX_COMMON_TREES:
        from ..model.units import eng

        raise TooLarge(
            f"the exact derivation is too large: the circuit's determinant would have up to "
            f"{eng(bound)} terms (its controlled sources' common spanning trees; the limit is "
            f"{MAX_COMMON_TREES:,} terms); refused before any work",
            notes=("derive the circuit in parts: a section at a time, each joined to the "
                   "next through its Thevenin equivalent",))
    return bound


def signed_forest_sum(nodes: Sequence[str], edges: Sequence[forests.Edge], ground: str,
                      pairs: Sequence[tuple[tuple[str, str], tuple[str, str]]],
                      apart: Sequence[tuple[str, str]], one: Poly,
                      groups: Sequence[int] = ()) -> dict[int, Poly]:
    """Σ weight(F)·det U_S(F)·det V_S(F) over the spanning forests F, for every set S of
    the `pairs` ((a, b) current pair, (c, d) voltage pair), keyed by S as a bit mask.

    The walk is the frontier walk of `forests.py`, but a tree is not remembered when it
    closes: its rows of U and V (its incidence on the pairs) are expanded into the two
    determinants at once, column by column (Laplace), so a state keeps only the columns
    used so far in each (S_U, S_V), and the partial forests that agree on them and on the
    frontier merge. A tree without ground whose rows are zero ends its forests; at the
    end only S_U = S_V is kept. `groups` are bit masks of pairs of which S holds exactly
    one (a norator's alternatives, or a single pair that every term holds): a state is
    dropped as soon as a column it still needs in U or V can no longer come (both nodes
    of its pair are in trees already closed)."""
    names = sorted({x for ab, cd in pairs for x in (*ab, *cd)} | {ground})
    bit = {t: 1 << i for i, t in enumerate(names)}
    ground_bit = bit[ground]
    apart_bits = tuple(bit[a] | bit[b] for a, b in apart)
    reach = [[(bit[a] | bit[b]) & ~ground_bit for a, b in (ab, cd)] for ab, cd in pairs]
    family = [1 << j for j in range(len(pairs))]  # the pairs of j's group, or j alone
    wanted = []  # (group, any of its current pairs' nodes, any of its voltage pairs')
    for mask in groups:
        js = [j for j in range(len(pairs)) if mask >> j & 1]
        current = voltage = 0
        for j in js:
            family[j] = mask
            current |= reach[j][0]
            voltage |= reach[j][1]
        wanted.append((mask, current, voltage))
    pending = sum(bit.values()) & ~ground_bit  # terminals not yet on the frontier
    group_masks = [mask for mask in groups if mask & (mask - 1)]  # of two or more pairs

    def feasible(alive: int, closures: int):
        """A test of (S_U, S_V): can they still end equal, with one pair of every group?
        `alive`: the terminals in open trees or not yet reached; `closures`: the most trees
        without ground that can still close (each adds one column to U and one to V)."""
        dead_u = dead_v = 0  # columns whose pair can no longer join a closing tree
        for j, (current, voltage) in enumerate(reach):
            if not current & alive:
                dead_u |= 1 << j
            if not voltage & alive:
                dead_v |= 1 << j
        lost = [mask for mask, current, voltage in wanted
                if not (current & alive and voltage & alive)]

        def test(key: tuple[int, int]) -> bool:
            su, sv = key
            missing_v, missing_u = su & ~sv, sv & ~su
            if missing_v & dead_v or missing_u & dead_u:
                return False
            unmet = sum(1 for mask, _, _ in wanted if not (su | sv) & mask)
            if max(missing_v.bit_count(), missing_u.bit_count()) + unmet > closures:
                return False
            if any(not (su | sv) & mask for mask in lost):
                return False
            # one pair of a group in U and another in V can never match
            return not any(su & mask and sv & mask and su & mask != sv & mask
                           for mask in group_masks)

        return test

    def rows(mask: int, which: int) -> list[tuple[int, int]]:
        out = []
        for j, pair in enumerate(pairs):
            a, b = pair[which]
            entry = int(bool(mask & bit[a])) - int(bool(mask & bit[b]))
            if entry:
                out.append((j, entry))
        return out

    expansions: dict[int, list[tuple[int, int, int, int, int, int, bool]] | None] = {}

    def expand(mask: int) -> list[tuple[int, int, int, int, int, int, bool]] | None:
        """For a tree with these terminals, each (column of U, its group, the columns above
        it; the same for V; whether the entries' product is positive), or None for the
        ground's tree, which has no row."""
        if mask not in expansions:
            if mask & ground_bit:
                expansions[mask] = None
            else:
                expansions[mask] = [
                    (1 << ju, family[ju], -1 << (ju + 1), 1 << jv, family[jv], -1 << (jv + 1),
                     eu * ev > 0)
                    for ju, eu in rows(mask, 0) for jv, ev in rows(mask, 1)]
        return expansions[mask]

    def close(su: int, sv: int, mask: int, p: Poly, into: dict) -> None:
        choices = expand(mask)
        if choices is None:
            into.setdefault((su, sv), []).append(p)
            return
        negative = None
        for bu, fu, above_u, bv, fv, above_v, positive in choices:
            if su & fu or sv & fv:
                continue  # a column (or another of its group) already used
            # the row goes last: its sign is that of the columns it passes
            flips = (su & above_u).bit_count() + (sv & above_v).bit_count()
            if positive == (flips % 2 == 0):
                value = p
            else:
                negative = -p if negative is None else negative
                value = negative
            into.setdefault((su | bu, sv | bv), []).append(value)

    order = forests._edge_order(nodes, [(u, v) for u, v, _, _ in edges])
    loops = [e for e in edges if e[0] == e[1]]
    edges = [edges[i] for i in order if edges[i][0] != edges[i][1]]
    last = {}
    for i, (u, v, _, _) in enumerate(edges):
        last[u] = last[v] = i
    start: dict[tuple[int, int], list[Poly]] = {(0, 0): [one]}
    for node in nodes:
        if node not in last:  # an isolated node is a tree of its own
            ended: dict[tuple[int, int], list[Poly]] = {}
            for (su, sv), values in start.items():
                for p in values:
                    close(su, sv, bit.get(node, 0), p, ended)
            start = ended
    # frontier (groups, masks) -> columns used (S_U, S_V) -> polynomial
    states: dict[tuple, dict[tuple[int, int], Poly]] = {
        ((), ()): {key: _sum(values) for key, values in start.items()}}
    frontier: list[str] = []
    for i, (u, v, inward, outward) in enumerate(edges):
        for node in (u, v):
            if node not in frontier:
                frontier.append(node)
                mask = bit.get(node, 0)
                pending &= ~mask
                states = {((*groups, len(masks)), (*masks, mask)): inner
                          for (groups, masks), inner in states.items()}
        iu, iv = frontier.index(u), frontier.index(v)
        outward_one, inward_one = outward == one, inward == one
        collected: dict[tuple, dict[tuple[int, int], list[Poly]]] = {}
        for front, inner in states.items():
            target = collected.setdefault(front, {})
            for key, p in inner.items():
                target.setdefault(key, []).append(p if outward_one else p * outward)
            joined = _join(front, iu, iv, apart_bits)
            if joined is not None:
                target = collected.setdefault(joined, {})
                for key, p in inner.items():
                    target.setdefault(key, []).append(p if inward_one else p * inward)
        states = _summed(collected)
        for node in [n for n in frontier if last[n] == i]:
            k = frontier.index(node)
            frontier.pop(k)
            collected = {}
            for (groups, masks), inner in states.items():
                g = groups[k]
                rest = groups[:k] + groups[k + 1:]
                target = collected.setdefault(forests._canonical(rest, masks), {})
                if g in rest:
                    for key, p in inner.items():
                        target.setdefault(key, []).append(p)
                    continue
                for (su, sv), p in inner.items():
                    close(su, sv, masks[g], p, target)
            states = {}
            for front, inner in _summed(collected).items():
                alive = pending
                closures = pending.bit_count()
                for mask in front[1]:
                    alive |= mask
                    closures += not mask & ground_bit
                test = feasible(alive, closures)
                kept = {key: p for key, p in inner.items() if test(key)}
                if kept:
                    states[front] = kept
    result: dict[int, Poly] = {}
    for inner in states.values():
        for (su, sv), p in inner.items():
            if su == sv:
                result[su] = result[su] + p if su in result else p
    for _u, _v, _inward, outward in loops:
        result = {key: p * outward for key, p in result.items()}
    return result


def _join(front: tuple, iu: int, iv: int, apart: Sequence[int]) -> tuple | None:
    """The frontier after taking the edge between positions iu and iv (None when it closes
    a cycle or joins a pair that must stay apart)."""
    groups, masks = front
    a, b = groups[iu], groups[iv]
    if a == b:
        return None
    merged_mask = masks[a] | masks[b]
    if apart and any(merged_mask & pair == pair for pair in apart):
        return None
    new_masks = list(masks)
    new_masks[a] = merged_mask
    return forests._canonical([a if g == b else g for g in groups], new_masks)


def _summed(collected: dict) -> dict:
    return {front: {key: _sum(values) for key, values in inner.items()}
            for front, inner in collected.items()}


def _sum(values: list[Poly]) -> Poly:
    """The sum, smallest parts first (each addition costs the terms of both operands)."""
    if len(values) == 1:
        return values[0]
    if len(values) == 2:
        return values[0] + values[1]
    heap = [(len(v), i, v) for i, v in enumerate(values)]
    heapq.heapify(heap)
    count = len(heap)
    while len(heap) > 1:
        _, _, a = heapq.heappop(heap)
        _, _, b = heapq.heappop(heap)
        total = a + b
        heapq.heappush(heap, (len(total), count, total))
        count += 1
    return heap[0][2]


class ControlledForestSolution(ForestSolution):
    """Transfers of a network with controlled current sources (module docstring)."""

    def __init__(self, network: Network, shorted: Mapping[str, tuple[str, str]],
                 tested: Mapping[str, tuple[str, str]],
                 fallback: Callable[[], MnaSolution], two_graph: TwoGraph) -> None:
        super().__init__(network, shorted, tested, fallback)
        self.controls = two_graph.controls
        # a controlled source is an excitation only through its constant part; a
        # controlled voltage source is no excitation (its constant sends it to elimination)
        for name, source in network.sources.items():
            if not source.independent and source.constant is None:
                self.currents.pop(name, None)
                self.voltages.pop(name, None)
        self.norators = {x for k in self.controls if k.norator for x in (k.a, k.b)}
        self._determinants: dict[tuple, Poly] = {}

    def check(self) -> None:
        """Raise mna.SingularCircuit when det M is zero (elimination names the culprits)."""
        if self.ring.is_zero(self._determinant(None, None)):
            self._delegate().check()

    # -- the expansion
    def _determinant(self, without: str | None,
                     extra: tuple[tuple[str, str], tuple[str, str]] | None) -> Poly:
        """det M of the graph without `without` (times the weights' denominators) or, with
        `extra` = ((a, b), (c, d)), its coefficient of x after adding x·u·vᵀ."""
        key = (without, extra)
        if key not in self._determinants:
            self._determinants[key] = self._expand(without, extra)
        return self._determinants[key]

    def _expand(self, without: str | None,
                extra: tuple[tuple[str, str], tuple[str, str]] | None) -> Poly:
        ring = self.ring
        merged, edges = self._graph(without)
        find = merged.find
        pairs = [((find(k.a), find(k.b)), (find(k.c), find(k.d)), k.numerator, k.denominator)
                 for k in self.controls]
        groups = [k.group for k in self.controls]
        if extra is not None:
            (a, b), (c, d) = extra
            groups.append(max((g for g in groups if g is not None), default=-1) + 1)
            pairs.append(((find(a), find(b)), (find(c), find(d)), ring.one, ring.one))
        members: dict[int, list[int]] = {}
        for j, g in enumerate(groups):
            if g is not None:
                members.setdefault(g, []).append(j)
        # a group is in every term: a pair all its members share joins two trees, so its
        # two nodes end in different trees
        apart = []
        for js in members.values():
            for side in (0, 1):
                if len({pairs[j][side] for j in js}) == 1:
                    apart.append(pairs[js[0]][side])
        if any(x == y for x, y in apart):
            return ring.zero
        masks = [sum(1 << j for j in js) for js in members.values()]
        ground = find(REFERENCE)
        nodes = sorted({find(n) for n in self.nodes})
        sums = signed_forest_sum(nodes, edges, ground, [(ab, cd) for ab, cd, _, _ in pairs],
                                 apart, ring.one, masks)
        parts = []
        for chosen, value in sorted(sums.items()):
            if not all(chosen & mask for mask in masks):
                continue
            factor = ring.one
            for j, (_, _, num, den) in enumerate(pairs):
                factor = factor * (num if chosen >> j & 1 else den)
            parts.append(value * factor)
        return _sum(parts) if parts else ring.zero

    # -- transfers
    def _voltage(self, c: str, d: str, excitation: str) -> RationalFunction | None:
        if excitation in self.voltages:
            p, n = self.voltages[excitation]
            merged, _ = self._graph(excitation)
            if merged.find(p) == merged.find(n):
                return None  # a loop of voltage sources: let elimination explain it
            if merged.find(c) == merged.find(d):
                return self._zero()
            den = self._determinant(excitation, ((p, n), (p, n)))
            if self.ring.is_zero(den):
                return None
            num = self._determinant(excitation, ((p, n), (c, d)))
            return RationalFunction(num, den, self.ring)
        if excitation in self.currents:
            a, b = self.currents[excitation]
            merged, _ = self._graph(None)
            if merged.find(a) == merged.find(b) or merged.find(c) == merged.find(d):
                return self._zero()
            den = self._determinant(None, None)
            if self.ring.is_zero(den):
                return None
            num = self._determinant(None, ((a, b), (c, d)))
            return RationalFunction(num, den, self.ring)
        return self._zero()

    def _transfer(self, measure: Measure, excitation: str) -> RationalFunction | None:
        if isinstance(measure, Current):
            source = self.network.sources.get(measure.element)
            if source is not None and not source.independent:
                if source.kind == "voltage":
                    return None  # a nullor's current: elimination finds it
                return self._controlled_current(measure.element, excitation)
        return super()._transfer(measure, excitation)

    def _controlled_current(self, name: str, excitation: str) -> RationalFunction | None:
        """I(X) of a controlled current source: minus its value (it drives it into a)."""
        source = self.network.sources[name]
        total = RationalFunction(-1, 1, self.ring) if name == excitation else self._zero()
        for control in source.controls:
            if isinstance(control, VoltageControl):
                value = self._voltage(control.a, control.b, excitation)
            else:
                value = self._transfer(Current(control.element), excitation)
            if value is None:
                return None
            total = total - control.coefficient * value
        return total

    def _source_current(self, name: str, excitation: str) -> RationalFunction | None:
        """Current through a voltage-type excitation (from its first node to its second)."""
        p, n = self.voltages[name]
        if name == excitation:
            merged, _ = self._graph(name)
            if merged.find(p) == merged.find(n):
                return None
            den = self._determinant(name, ((p, n), (p, n)))
            if self.ring.is_zero(den):
                return None
            return RationalFunction(-self._determinant(name, None), den, self.ring)
        # the current balance at a terminal that no other voltage-type element touches
        network = self.network
        for node, sign in ((p, 1), (n, -1)):
            if any(node in ab for other, ab in self.voltages.items() if other != name):
                continue
            if node in self.norators:  # an opamp's or a controlled voltage's output
                continue
            total = self._zero()
            if excitation in self.currents and excitation not in network.sources:
                a, b = self.currents[excitation]  # a test current at a port
                total = total + (int(node == a) - int(node == b))
            elements = [(x.name, x.a, x.b) for x in network.branches.values()]
            elements += [(x.name, x.a, x.b) for x in network.sources.values()
                         if x.kind == "current"]
            for element, a, b in elements:
                if a == b or node not in (a, b):
                    continue
                current = self._transfer(Current(element), excitation)
                if current is None:
                    return None
                total = total - current if node == a else total + current
            return total if sign == 1 else -total
        return None

