"""Networks with controlled sources solved by forest sums (the two-graph method).

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
determinants (`signed_forest_sum`). With S_U = S_V the product det U·det V has the sign of
the permutation taking each row's U column to its V column, so a state keeps only that
permutation's open paths and the columns a tree can still reach, and partial forests
merge as in the passive walk. Terms cancel only where a Laplace expansion of a zero
determinant (a set S whose pairs close a cycle) pairs up with opposite signs, or where
two weights share a variable (a current control and the element it reads); states that
can no longer reach a common spanning tree are dropped as soon as that is certain.

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
are both (p1, n1) − N·(p2, n2), a group of four. A voltage source whose current a control
reads is a border too (column and row (p, n)), and the controlled current source adds
its pair to that column. Coupled inductors (−s·L and −s·M between their rows) and a
controlled voltage source reading a bordered current (−r in its row) give the borders a
Z block, expanded by engine.bordered: its columns and rows are then controls a term holds
at most one of each, matched in order. An excitation of a border's row (a controlled
voltage source's constant part, a read voltage source) and a bordered current follow by
Cramer's rule: the row, or the column, replaced by what drives the transfer.
"""

from __future__ import annotations

import heapq
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, replace
from itertools import combinations
from math import comb

from ..algebra.polynomials import LAPLACE_NAME, Poly, TooLarge
from ..algebra.rational import RationalFunction
from ..model.circuit import REFERENCE
from . import bordered, forests
from .bordered import Border
from .mna import Current, Measure, MnaSolution
from .network import CurrentControl, Network, VoltageControl
from .topological import ForestSolution, _Contraction, spanning_trees

MAX_COMMON_TREES = 20_000_000
"""Largest bound on a determinant's terms (module docstring) derived: four times the
largest result (`polynomials.MAX_TERMS`), as the bound counts trees of one graph only."""

EXACT_COUNT_FROM = 20_000
"""Below this many terms by the cheap bound (the ways to choose a tree's edges), the
spanning trees are not counted: the bound already says the determinant is small."""

MAX_CONTROLS = 40
"""Most controls taken by forest sums. A state of the walk keeps only the open paths of
the column permutation and the columns a tree can still reach, so the states follow the
frontier rather than the subsets of controls: 12 controlled ladder sections (358,390
terms) take 0.10 s, 12 sections controlled across the ladder (V of the mirror node,
413,408 terms) 0.85 s, 8 finite-gain opamp stages (16 controls, 390,626 terms) 0.073 s.
The up-front bound on the terms (`terms_bound`) refuses what would be too large. Controls
that read nodes far apart in the walk keep many columns open, and the states multiply:
16 controlled sources at random nodes of a 3-by-3 grid (75,516 terms) took 26 s, where
elimination stops at its entry limit after 1.1 s; `MAX_WALK_STATES` bounds that."""

MAX_WALK_STATES = 10_000
"""Most states the walk holds at once before it gives the transfer to elimination (which
derives it or refuses at its own limit). The families of `tests/perf/bench_engine.py
--active` peak at 6-562 states (common-emitter stages k = 4: 562; 12 controlled ladder
sections: 26); controlled sources reading random nodes of a 3-by-3 grid reach 3,746
states with 12 controls (1.0 s), 7,350-38,724 with 14 (2.5-6 s) and more with 18 or 24
(28 s; unfinished after 100 s)."""


class WalkTooLarge(Exception):
    """The walk's states passed MAX_WALK_STATES: elimination takes the transfer."""


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
    """A network's controlled current sources (rank-one controls) and its bordered unknown
    currents (engine.bordered), with the Z entries between them."""

    rank_one: tuple[Control, ...]
    borders: tuple[Border, ...] = ()
    impedance: tuple[tuple[tuple[int, int], Poly], ...] = ()

    @property
    def controls(self) -> tuple[Control, ...]:
        """Every column of the two-graph determinant: the rank-one controls and, as a group,
        each border's alternatives (a term of its column times a term of its row)."""
        found = list(self.rank_one)
        for t, border in enumerate(self.borders):
            for a, b, alpha in border.column:
                for c, d, beta in border.row:
                    found.append(Control(a, b, c, d, alpha * beta, alpha ** 0, t))
        return tuple(found)


Term = tuple[str, str, str, RationalFunction]
"""("V", c, d, k): k·V(c, d); ("I", element, "", k): k times a bordered unknown current."""


def controls_of(network: Network, limit: int | None = MAX_CONTROLS) -> TwoGraph | None:
    """The network's controls, or None when it has an element the forest sums cannot take
    (a control by an independent current source's current or by a controlled current
    source with a constant part, controls reading each other in a circle, a block of more
    than bordered.MAX_BLOCK borders, or more than `limit` controls).

    Elements whose current is an unknown of its own become borders: controlled voltage
    sources, opamps, transformers, coupled inductors and the independent voltage sources
    whose current a control reads. A controlled current source reading a border's current
    adds a term to that border's column; a controlled voltage source reading it, a Z entry."""
    ring = network.ring
    one = ring.one
    known = {REFERENCE, *network.nodes}
    coupled = {name for c in network.couplings.values() for name in (c.first, c.second)}
    read = {c.element for s in network.sources.values() for c in s.controls
            if isinstance(c, CurrentControl)}
    names = [s.name for s in network.sources.values()
             if s.kind == "voltage" and (s.controls or s.name in read)]
    names += [*network.opamps, *network.transformers,
              *(b for b in network.branches if b in coupled)]
    index = {name: t for t, name in enumerate(names)}
    sign = {name: -1 if name in network.opamps else 1 for name in names}
    columns: list[list[tuple[str, str, RationalFunction]]] = [[] for _ in names]
    rows: list[list[tuple[str, str, RationalFunction]]] = [[] for _ in names]
    entries: dict[tuple[int, int], RationalFunction] = {}
    unit = RationalFunction(1, 1, ring, canonical=True)

    def terms(k: RationalFunction, control, seen: frozenset[str]) -> list[Term] | None:
        """k times a control's value (its coefficient times what it reads) as Terms."""
        k = k * control.coefficient
        if isinstance(control, VoltageControl):
            if not {control.a, control.b} <= known:
                return None
            return [("V", control.a, control.b, k)]
        element = control.element
        if element in index:
            return [("I", element, "", k * sign[element])]
        branch = network.branches.get(element)
        if branch is not None:
            return [("V", branch.a, branch.b,
                     k * RationalFunction(branch.inward, branch.outward, ring))]
        source = network.sources.get(element)
        if (source is None or source.kind != "current" or source.independent
                or source.constant is not None or element in seen):
            return None
        found: list[Term] = []  # I(X) of a controlled current source is minus its value
        for inner in source.controls:
            more = terms(-k, inner, seen | {element})
            if more is None:
                return None
            found += more
        return found

    def add(key: tuple[int, int], value: RationalFunction) -> None:
        entries[key] = entries[key] + value if key in entries else value

    rank_one: list[Control] = []
    for source in network.sources.values():
        if source.independent:
            if source.name in index:  # a voltage source whose current is read
                t = index[source.name]
                columns[t].append((source.a, source.b, unit))
                rows[t].append((source.a, source.b, unit))
            continue
        found: list[Term] = []
        for control in source.controls:
            more = terms(unit, control, frozenset({source.name}))
            if more is None:
                return None
            found += more
        if source.kind == "current":  # drives its value into a: −value leaves a
            for what, x, y, k in found:
                if what == "V":
                    rank_one.append(Control(source.a, source.b, x, y,
                                            -k.numerator, k.denominator))
                else:
                    columns[index[x]].append((source.a, source.b, -k))
            continue
        t = index[source.name]  # V(a, b) − Σ k·(what it reads) = constant
        columns[t].append((source.a, source.b, unit))
        rows[t].append((source.a, source.b, unit))
        for what, x, y, k in found:
            if what == "V":
                rows[t].append((x, y, -k))
            else:
                add((t, index[x]), -k)
    for opamp in network.opamps.values():
        t = index[opamp.name]
        columns[t].append((opamp.out, REFERENCE, unit))  # the current drawn from out
        if opamp.gain is None:  # a nullor: V(p) = V(n)
            rows[t].append((opamp.p, opamp.n, unit))
        else:
            rows[t] += [(opamp.out, REFERENCE, unit), (opamp.p, opamp.n, -opamp.gain)]
    for x in network.transformers.values():
        # V1 − N·V2 = 0 with the current I1 into p1 and −N·I1 into p2: the unknown's column
        # and its row are both (p1, n1) − N·(p2, n2)
        t = index[x.name]
        ratio = RationalFunction(x.ratio, one, ring, canonical=True)
        sides = [(x.p1, x.n1, unit), (x.p2, x.n2, -ratio)]
        columns[t] += sides
        rows[t] += sides
    s = ring.gen(LAPLACE_NAME)
    for name in names:
        branch = network.branches.get(name)
        if branch is None:
            continue
        # inward·V(a, b) − outward·I − Σ s·M·I(other) = 0 (engine.mna)
        t = index[name]
        columns[t].append((branch.a, branch.b, unit))
        rows[t].append((branch.a, branch.b, RationalFunction(branch.inward, one, ring)))
        add((t, t), RationalFunction(-branch.outward, one, ring))
        for c in network.coupling_of(name):
            other = c.second if c.first == name else c.first
            add((t, index[other]), RationalFunction(-s * ring.gen(c.mutual), one, ring))
    borders, impedance = _polynomial(ring, names, sign, columns, rows, entries)
    if any(len(block) > bordered.MAX_BLOCK
           for block in bordered.blocks(len(borders), dict(impedance))):
        return None
    two_graph = TwoGraph(tuple(rank_one), borders, impedance)
    if limit is not None and _count(ring, two_graph) > limit:
        return None
    return two_graph


def _lcm(ring, values: list[Poly]) -> Poly:
    out = ring.one
    for den in values:
        if den != ring.one:
            out = ring.exquo(out * den, ring.gcd(out, den))
    return out


def _polynomial(ring, names: list[str], sign: dict[str, int], columns, rows,
                entries: dict[tuple[int, int], RationalFunction]
                ) -> tuple[tuple[Border, ...], tuple[tuple[tuple[int, int], Poly], ...]]:
    """Borders with polynomial entries: each row times its denominators' lcm, then each
    column (node part and Z part) times its own."""
    row_scales = []
    for t, row in enumerate(rows):
        dens = [k.denominator for *_, k in row]
        dens += [k.denominator for (r, _), k in entries.items() if r == t]
        row_scales.append(_lcm(ring, dens))
    scales = [_lcm(ring, [k.denominator for *_, k in column]) for column in columns]
    borders = []
    for t, name in enumerate(names):
        column = tuple((a, b, k.numerator * ring.exquo(scales[t], k.denominator))
                       for a, b, k in columns[t])
        row = tuple((c, d, k.numerator * ring.exquo(row_scales[t], k.denominator))
                    for c, d, k in rows[t])
        borders.append(Border(name, column, row, sign[name], scales[t], row_scales[t]))
    impedance = tuple(
        ((r, t), k.numerator * ring.exquo(row_scales[r], k.denominator) * scales[t])
        for (r, t), k in sorted(entries.items()) if not ring.is_zero(k.numerator))
    return tuple(borders), impedance


def _count(ring, two_graph: TwoGraph) -> int:
    """Columns of the two-graph determinant the walk takes (its states grow with them)."""
    borders, impedance = two_graph.borders, dict(two_graph.impedance)
    count = len(two_graph.rank_one)
    members = bordered.blocks(len(borders), impedance)
    inside = {t for block in members for t in block}
    for t, border in enumerate(borders):
        if t not in inside:
            count += len(border.column) * len(border.row)
    for block in members:
        pairs = bordered.block(ring, block, impedance).pairs
        count += sum(len(borders[t].column) * len(borders[r].row) for t, r in pairs)
    return count


def terms_bound(network: Network, shorted: Sequence[tuple[str, str]]) -> int | None:
    """A bound on the terms of the network's determinant, known before any work (None
    when the network has elements the two-graph form does not take); TooLarge when it
    passes MAX_COMMON_TREES.

    Its terms are the common spanning trees of the current and voltage graphs (module
    docstring), each times a term of its sources' coefficients, so they number at most
    the spanning trees of either graph (Kirchhoff's count, exact and cheap) times the
    largest term count of each coefficient. Every transfer of the network has that
    determinant, or one of its size, as denominator, whichever path derives it. A block
    of borders (engine.bordered) puts its column pairs in the current graph and its row
    pairs in the voltage graph; a tree of one fixes the block's columns T (or rows R̄),
    and each choice of the other side that has a nonzero Z minor brings the minor's terms
    and its pairs' coefficients. The count is skipped when choosing the edges of a tree
    is already few enough."""
    two_graph = controls_of(network, limit=None)
    if two_graph is None or not two_graph.controls:
        return None
    ring = network.ring
    borders, impedance = two_graph.borders, dict(two_graph.impedance)
    block_list = [bordered.block(ring, members, impedance)
                  for members in bordered.blocks(len(borders), impedance)]
    inside = {t for block in block_list for t in block.members}
    named = {b.element for b in borders}
    joins = [(s.a, s.b) for s in network.sources.values()
             if s.kind == "voltage" and s.independent and s.name not in named]
    everything = (REFERENCE, *network.nodes)
    passive = [(b.a, b.b) for b in network.branches.values() if b.name not in named]
    graphs = []
    for side in (0, 1):  # the current graph, then the voltage graph
        merged_pairs, edges = [], list(passive)
        edges += [(k.a, k.b) if side == 0 else (k.c, k.d) for k in two_graph.rank_one]
        for t, border in enumerate(borders):
            pairs = {(a, b) for a, b, _ in (border.column if side == 0 else border.row)}
            # a pair in every tree is merged, as the sources are: a group's single pair, or
            # a block's column (row) without Z entries; other pairs are edges (a tree holds
            # one of a group's, or of a block column's, or none)
            always = t not in inside or not any(key[1 - side] == t for key in impedance)
            if always and len(pairs) == 1:
                merged_pairs.extend(pairs)
            else:
                edges.extend(pairs)
        merged = _Contraction(everything, [*joins, *shorted, *merged_pairs])
        edges = [(merged.find(u), merged.find(v)) for u, v in edges]
        graphs.append((sorted({merged.find(n) for n in everything}),
                       [(u, v) for u, v in edges if u != v]))
    def fixed(alternatives) -> int:
        """Terms of a column's (or row's) coefficients once a tree holds one of its pairs."""
        by_pair: dict[tuple[str, str], int] = {}
        for a, b, value in alternatives:
            by_pair[a, b] = by_pair.get((a, b), 0) + ring.nterms(value)
        return max(by_pair.values(), default=1)

    def free(alternatives) -> int:
        """Terms of a column's (or row's) coefficients that the tree leaves to choose."""
        return sum(ring.nterms(value) for *_, value in alternatives) or 1

    weight = 1
    for k in two_graph.rank_one:
        weight *= max(ring.nterms(k.numerator), ring.nterms(k.denominator))
    # a tree of the current graph fixes a group's column pair, not its row's (a finite
    # gain's output with the terms of its equation): those it leaves are all counted
    sides = [weight, weight]
    for t, border in enumerate(borders):
        if t not in inside:
            sides[0] *= fixed(border.column) * free(border.row)
            sides[1] *= free(border.column) * fixed(border.row)
    # a tree of one graph fixes a block's columns T (or rows R̄); the other side's choices
    # each bring their minor's terms and their pairs' coefficients
    for block in block_list:
        for side in (0, 1):
            most = 0
            for m in range(len(block.members) + 1):
                for held in combinations(block.members, m):
                    total = 0
                    for other in combinations(block.members, m):
                        taken, rows = (held, other) if side == 0 else (other, held)
                        factor = block.factor(taken, rows)
                        if factor is None:
                            continue
                        terms = ring.nterms(factor)
                        for t in taken:
                            terms *= (fixed if side == 0 else free)(borders[t].column)
                        for r in rows:
                            terms *= (free if side == 0 else fixed)(borders[r].row)
                        total += terms
                    most = max(most, total)
            sides[side] *= most

    def bound_by(count: Callable[[list[str], list[tuple[str, str]]], int]) -> int:
        return min(count(nodes, edges) * factor
                   for (nodes, edges), factor in zip(graphs, sides, strict=True))

    bound = bound_by(lambda nodes, edges: comb(len(edges), max(len(nodes) - 1, 0)))
    if bound <= EXACT_COUNT_FROM:
        return bound
    bound = bound_by(spanning_trees)
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
                      weights: Sequence[tuple[Poly, Poly]],
                      apart: Sequence[tuple[str, str]], one: Poly,
                      groups: Sequence[int] = (),
                      exclusive: Mapping[int, tuple[int, int]] | None = None,
                      remember: int = 0) -> dict[int, Poly]:
    """Σ_S Π_{j∈S} num_j·Π_{j∉S} den_j·Σ_F weight(F)·det U_S(F)·det V_S(F), over the
    spanning forests F and the sets S of the `pairs` ((a, b) current pair, (c, d) voltage
    pair; `weights` their (num, den)) holding one pair of every group (`groups`: bit masks
    of pairs; a norator's alternatives, or a single pair every term holds), keyed by S's
    pairs among `remember` (a bit mask: a block's pairs, whose coefficient is not a
    product of their own); empty when no forest contributes. `exclusive` maps a pair to
    the pairs it excludes in U and in V (a block's pairs sharing its border's column, or
    its row).

    The walk is the frontier walk of `forests.py`, but a tree is not remembered when it
    closes: its rows of U and V (its incidence on the pairs) are expanded at once, each
    row choosing a column ju of U and jv of V. With S_U = S_V = S at the end, the sign of
    det U·det V is that of the permutation ju → jv of S, (−1)^(|S| − cycles): each row
    gives one −1, each cycle it closes another, so a state keeps only the open paths of
    that permutation (their first and last columns) and the columns used that a tree can
    still reach; a column's weight is taken when it enters S (num) or can no longer
    enter it (den). Partial forests that agree on these and on the frontier merge. A
    state is dropped as soon as it cannot end with every path closed and one pair of
    every group: an end that can no longer come, too few trees left to close, two pairs
    of a group that cannot match. A tree without ground whose rows are zero ends its
    forests."""
    names = sorted({x for ab, cd in pairs for x in (*ab, *cd)} | {ground})
    bit = {t: 1 << i for i, t in enumerate(names)}
    ground_bit = bit[ground]
    apart_bits = tuple(bit[a] | bit[b] for a, b in apart)
    partners = [(bit[a], bit[b]) for a, b in apart]
    reach = [[(bit[a] | bit[b]) & ~ground_bit for a, b in (ab, cd)] for ab, cd in pairs]
    family = [1 << j for j in range(len(pairs))]  # the pairs of j's group, or j alone
    wanted = []  # (group, any of its current pairs' nodes, any of its voltage pairs')
    for mask in groups:
        current = voltage = 0
        for j in range(len(pairs)):
            if mask >> j & 1:
                family[j] = mask
                current |= reach[j][0]
                voltage |= reach[j][1]
        wanted.append((mask, current, voltage))
    family_u, family_v = list(family), list(family)
    for j, (u_side, v_side) in (exclusive or {}).items():
        family_u[j] |= u_side
        family_v[j] |= v_side
    numerators = [None if num == one else num for num, _ in weights]
    denominators = [(j, den) for j, (_, den) in enumerate(weights) if den != one]
    everything = (1 << len(pairs)) - 1
    pending = sum(bit.values()) & ~ground_bit  # terminals not yet on the frontier

    reachable: dict[int, tuple] = {}

    def columns(alive: int) -> tuple:
        """For the terminals `alive` (in open trees without ground, or not yet reached):
        the columns a closing tree can still take in U and in V, the columns a state
        keeps in U and in V (those, and every pair of a group not yet settled), and the
        groups that can no longer be met."""
        if alive not in reachable:
            in_u = in_v = kept = 0
            for j, (current, voltage) in enumerate(reach):
                if current & alive:
                    in_u |= 1 << j
                if voltage & alive:
                    in_v |= 1 << j
            lost = []
            for mask, current, voltage in wanted:
                if (in_u | in_v) & mask:
                    kept |= mask
                if not (current & alive and voltage & alive):
                    lost.append(mask)
            kept |= remember
            reachable[alive] = (in_u, in_v, in_u | kept, in_v | kept, tuple(lost))
        return reachable[alive]

    def settle(inner: dict, before: tuple, alive: int, closures: int, into: dict) -> None:
        """Add the states `inner` (taken with the columns `before` of `columns`) to `into`
        once the terminals `alive` remain and at most `closures` trees without ground can
        still close: the dead ones dropped, den_j taken for each column that can no
        longer enter S, the columns no tree can reach forgotten."""
        in_u, in_v, keep_u, keep_v, lost = columns(alive)
        gone = before[0] & ~in_u
        unsettled = [mask for mask, _, _ in wanted if mask & before[2]]
        for key, p in inner.items():
            paths, su, sv = key
            if len(paths) > closures:
                continue
            if any(not (in_v >> x & 1 and in_u >> y & 1) for x, y in paths):
                continue
            unmet = 0
            for mask in unsettled:
                gu, gv = su & mask, sv & mask
                if gu | gv:
                    if gu and gv and gu != gv:
                        break  # two pairs of one group can never match
                elif mask in lost:
                    break
                else:
                    unmet += 1
            else:
                if len(paths) + unmet > closures:
                    continue
                for j, den in denominators:
                    if gone >> j & 1 and not su >> j & 1:
                        p = p * den
                key = (paths, su & keep_u, sv & keep_v)
                into.setdefault(key, []).append(p)

    pair_bits = [[(j, bit[pair[which][0]], bit[pair[which][1]]) for j, pair in enumerate(pairs)]
                 for which in (0, 1)]

    def rows(mask: int, which: int) -> list[tuple[int, int]]:
        out = []
        for j, a, b in pair_bits[which]:
            if mask & a:
                if not mask & b:
                    out.append((j, 1))
            elif mask & b:
                out.append((j, -1))
        return out

    expansions: dict[int, list[tuple[int, int, int, int, bool]]] = {}

    def expand(mask: int) -> list[tuple[int, int, int, int, bool]]:
        """For a tree without ground with these terminals, each (column of U, its group;
        the same for V; whether the entries' product is positive)."""
        if mask not in expansions:
            expansions[mask] = [(ju, family_u[ju], jv, family_v[jv], eu * ev > 0)
                                for ju, eu in rows(mask, 0) for jv, ev in rows(mask, 1)]
        return expansions[mask]

    def close(inner: dict, mask: int) -> dict:
        """The states after the tree with these terminals closes: each row choice, its
        path of ju → jv extended, joined or closed into a cycle, and its sign."""
        out: dict = {}
        choices = expand(mask)
        for (paths, su, sv), p in inner.items():
            negative = None
            ends = {path[1]: path for path in paths}
            starts = {path[0]: path for path in paths}
            for ju, fu, jv, fv, positive in choices:
                if su & fu or sv & fv:
                    continue  # a column (or another of its group) already used
                start, end = ends.get(ju), starts.get(jv)  # the open paths ju ends, jv starts
                cycle = start is end if start is not None else ju == jv
                if start is None and end is None:
                    following = paths if cycle else tuple(sorted((*paths, (ju, jv))))
                elif cycle:
                    following = tuple(x for x in paths if x is not start)
                else:
                    rest = [x for x in paths if x is not start and x is not end]
                    rest.append((ju if start is None else start[0],
                                 jv if end is None else end[1]))
                    following = tuple(sorted(rest))
                if positive == cycle:
                    value = p
                else:
                    negative = -p if negative is None else negative
                    value = negative
                if numerators[ju] is not None:
                    value = value * numerators[ju]
                out.setdefault((following, su | 1 << ju, sv | 1 << jv), []).append(value)
        return {key: _sum(values) for key, values in out.items()}

    order = forests._edge_order(nodes, [(u, v) for u, v, _, _ in edges])
    loops = [e for e in edges if e[0] == e[1]]
    edges = [edges[i] for i in order if edges[i][0] != edges[i][1]]
    last = {}
    for i, (u, v, _, _) in enumerate(edges):
        last[u] = last[v] = i
    start: dict = {((), 0, 0): one}
    for node in nodes:
        if node not in last:  # an isolated node is a tree of its own
            mask = bit.get(node, 0)
            pending &= ~mask
            if not mask & ground_bit:
                start = close(start, mask)
    ended: dict = {}
    settle(start, (everything,) * 4, pending, pending.bit_count(), ended)
    # frontier (groups, masks) -> (open paths, columns kept of U, of V) -> polynomial
    states: dict[tuple, dict[tuple, Poly]] = {((), ()): {k: _sum(v) for k, v in ended.items()}}

    def alive_of(masks: Sequence[int]) -> tuple[int, int]:
        """The terminals still alive and the trees without ground that can still close."""
        alive, closures = pending, pending.bit_count()
        for mask in masks:
            if not mask & ground_bit:
                alive |= mask
                closures += 1
        return alive, closures

    def trimmed(front: tuple, alive: int) -> tuple:
        """The frontier with the ground's tree keeping, of its terminals, only the ground
        and those that must stay apart from one still alive: it has no row, so which
        terminals reached it is history, and forests differing only there merge."""
        groups, masks = front
        keep = ground_bit
        for x, y in partners:
            if y & alive:
                keep |= x
            if x & alive:
                keep |= y
        return groups, tuple(m & keep if m & ground_bit else m for m in masks)

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
        collected: dict[tuple, dict[tuple, list[Poly]]] = {}
        for front, inner in states.items():
            target = collected.setdefault(front, {})
            for key, p in inner.items():
                target.setdefault(key, []).append(p if outward_one else p * outward)
            joined = _join(front, iu, iv, apart_bits)
            if joined is None:
                continue
            taken = {key: p if inward_one else p * inward for key, p in inner.items()}
            masks = front[1]
            a, b = masks[front[0][iu]], masks[front[0][iv]]
            if (a | b) & ground_bit:
                # a tree joins the ground's: its terminals leave every row
                alive, closures = alive_of(joined[1])
                target = collected.setdefault(trimmed(joined, alive), {})
                settle(taken, columns(alive_of(masks)[0]), alive, closures, target)
            else:
                target = collected.setdefault(joined, {})
                for key, p in taken.items():
                    target.setdefault(key, []).append(p)
        states = _summed(collected)
        for node in [n for n in frontier if last[n] == i]:
            k = frontier.index(node)
            frontier.pop(k)
            collected = {}
            for (groups, masks), inner in states.items():
                g = groups[k]
                rest = groups[:k] + groups[k + 1:]
                front = forests._canonical(rest, masks)
                if g in rest or masks[g] & ground_bit:
                    # no tree closes; fewer may still close than at the last test
                    alive, closures = alive_of(front[1])
                    settle(inner, columns(alive), alive, closures,
                           collected.setdefault(front, {}))
                    continue
                alive, closures = alive_of(front[1])
                target = collected.setdefault(trimmed(front, alive), {})
                before = columns(alive_of(masks)[0])
                settle(close(inner, masks[g]), before, alive, closures, target)
            states = {front: inner for front, inner in _summed(collected).items() if inner}
        if sum(map(len, states.values())) > MAX_WALK_STATES:
            raise WalkTooLarge
    found: dict[int, list[Poly]] = {}
    for inner in states.values():
        for (_, su, _), p in inner.items():
            found.setdefault(su & remember, []).append(p)
    result = {chosen: _sum(values) for chosen, values in found.items()}
    for _u, _v, _inward, outward in loops:
        result = {chosen: p * outward for chosen, p in result.items()}
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


Modification = tuple | None
"""A change of one border for a transfer (ControlledForestSolution._expand)."""


class ControlledForestSolution(ForestSolution):
    """Transfers of a network with controlled sources and bordered unknowns (module
    docstring)."""

    def __init__(self, network: Network, shorted: Mapping[str, tuple[str, str]],
                 tested: Mapping[str, tuple[str, str]],
                 fallback: Callable[[], MnaSolution], two_graph: TwoGraph) -> None:
        super().__init__(network, shorted, tested, fallback)
        self.controls = two_graph.controls
        self.rank_one = two_graph.rank_one
        self.borders = two_graph.borders
        self.impedance = dict(two_graph.impedance)
        self.border_of = {b.element: t for t, b in enumerate(self.borders)}
        # a controlled source is an excitation only through its constant part; a voltage
        # source that is a border is not merged away but excites its own row
        self.bordered: dict[str, int] = {}
        for name, source in network.sources.items():
            if name in self.border_of:
                self.voltages.pop(name, None)
                if source.constant is not None:
                    self.bordered[name] = self.border_of[name]
            if not source.independent and source.constant is None:
                self.currents.pop(name, None)
                self.voltages.pop(name, None)
        self.norators = {x for b in self.borders for a, bb, _ in b.column for x in (a, bb)}
        self._determinants: dict[tuple, Poly] = {}
        self._gave_up = False

    def check(self) -> None:
        """Raise mna.SingularCircuit when det M is zero (elimination names the culprits)."""
        try:
            if self.ring.is_zero(self._determinant(None, None)):
                self._delegate().check()
        except WalkTooLarge:
            self._gave_up = True
            self._delegate().check()

    def transfer(self, measure: Measure, excitation: str) -> RationalFunction:
        """As ForestSolution's; once the walk has held too many states, by elimination."""
        if not self._gave_up:
            try:
                return super().transfer(measure, excitation)
            except WalkTooLarge:
                self._gave_up = True
        return self._delegate().transfer(measure, excitation)

    def _is_edge(self, branch: str) -> bool:
        """Every branch but the coupled inductors (they are borders)."""
        return branch not in self.border_of

    # -- the expansion
    def _determinant(self, without: str | None,
                     extra: tuple[tuple[str, str], tuple[str, str]] | None,
                     row: Modification = None, column: Modification = None) -> Poly:
        """det M of the graph without `without` (times the weights' denominators) or, with
        `extra` = ((a, b), (c, d)), its coefficient of x after adding x·u·vᵀ; `row` =
        (t, (c, d)) replaces border t's row by V(c, d) (Cramer's rule for an excitation of
        that row), `column` = (t, what) border t's column by what drives the transfer:
        ("pair", a, b), a current; ("border", s), border s's row; ("extra",), the row of
        the voltage excitation `extra`, then a border of its own."""
        key = (without, extra, row, column)
        if key not in self._determinants:
            self._determinants[key] = self._expand(without, extra, row, column)
        return self._determinants[key]

    def _expand(self, without: str | None,
                extra: tuple[tuple[str, str], tuple[str, str]] | None,
                row: Modification, column: Modification) -> Poly:
        ring = self.ring
        one = ring.one
        merged, edges = self._graph(without)
        find = merged.find
        borders = list(self.borders)
        impedance = dict(self.impedance)
        if row is not None:
            s, (c, d) = row
            borders[s] = replace(borders[s], row=((c, d, one),))
            impedance = {k: v for k, v in impedance.items() if k[0] != s}
        if column is not None:
            t, what = column
            if "extra" in (t, what[0]):  # the voltage excitation becomes a border
                (p, n), _ = extra
                borders.append(Border("", ((p, n, one),), ((p, n, one),), 1, one, one))
                extra = None
                t = len(borders) - 1 if t == "extra" else t
            impedance = {k: v for k, v in impedance.items() if k[1] != t}
            if what[0] == "pair":
                borders[t] = replace(borders[t], column=((what[1], what[2], one),))
            else:
                source = len(borders) - 1 if what[0] == "extra" else what[1]
                borders[t] = replace(borders[t], column=())
                impedance[source, t] = one
        # the columns of the walk: rank-one controls, groups (borders outside blocks,
        # and the transfer's extra), and the pairs of each block
        pairs: list[tuple[tuple[str, str], tuple[str, str]]] = []
        weights: list[Poly] = []
        for k in self.rank_one:
            pairs.append(((find(k.a), find(k.b)), (find(k.c), find(k.d))))
        members = bordered.blocks(len(borders), impedance)
        inside = {t for block in members for t in block}
        groups: list[list[int]] = []
        for t, border in enumerate(borders):
            if t in inside:
                continue
            js = []
            for a, b, alpha in border.column:
                for c, d, beta in border.row:
                    js.append(len(pairs))
                    pairs.append(((find(a), find(b)), (find(c), find(d))))
                    weights.append(alpha * beta)
            if not js:
                return ring.zero  # a border with no column or no row
            groups.append(js)
        if extra is not None:
            (a, b), (c, d) = extra
            groups.append([len(pairs)])
            pairs.append(((find(a), find(b)), (find(c), find(d))))
            weights.append(one)
        expansions = []  # (block, {j: (column, row)})
        exclusive: dict[int, tuple[int, int]] = {}
        for block_members in members:
            block = bordered.block(ring, block_members, impedance)
            tags: dict[int, tuple[int, int]] = {}
            for t, r in sorted(block.pairs):
                for a, b, alpha in borders[t].column:
                    for c, d, beta in borders[r].row:
                        tags[len(pairs)] = (t, r)
                        pairs.append(((find(a), find(b)), (find(c), find(d))))
                        weights.append(alpha * beta)
            for j, (t, r) in tags.items():
                # a column or a row once, and no two pairs matched out of order
                clash = sum(1 << i for i, (x, y) in tags.items()
                            if x == t or (x - t) * (y - r) < 0)
                same_row = sum(1 << i for i, (_, y) in tags.items() if y == r)
                exclusive[j] = (clash, same_row)
            expansions.append((block, tags))
            # a column without Z entries is in every term, as a group's pair is (the walk
            # takes groups apart from each other: columns only, not rows as well)
            for t in block_members:
                if not any(key[1] == t for key in impedance):
                    groups.append([j for j, (x, _) in tags.items() if x == t])
        # a group is in every term: a pair all its members share joins two trees, so its
        # two nodes end in different trees
        apart = []
        for js in groups:
            for side in (0, 1):
                if len({pairs[j][side] for j in js}) == 1:
                    apart.append(pairs[js[0]][side])
        if any(x == y for x, y in apart):
            return ring.zero
        masks = [sum(1 << j for j in js) for js in groups]
        ground = find(REFERENCE)
        nodes = sorted({find(n) for n in self.nodes})
        # each column's weight (num if in S, den if not); a block's pairs are remembered
        # to the end, where their Z minor multiplies them
        column_weights = [(k.numerator, k.denominator) for k in self.rank_one]
        column_weights += [(w, one) for w in weights]
        remember = sum(1 << j for _, tags in expansions for j in tags)
        sums = signed_forest_sum(nodes, edges, ground, pairs, column_weights, apart, one,
                                 masks, exclusive, remember)
        parts = []
        for chosen, value in sorted(sums.items()):
            factor = one
            for block, tags in expansions:
                coefficient = block.coefficient([tag for j, tag in tags.items()
                                                 if chosen >> j & 1])
                if coefficient is None:
                    break
                factor = factor * coefficient
            else:
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
        if excitation in self.bordered:  # Cramer's rule on the border's row
            t = self.bordered[excitation]
            merged, _ = self._graph(None)
            if merged.find(c) == merged.find(d):
                return self._zero()
            den = self._determinant(None, None)
            if self.ring.is_zero(den):
                return None
            num = self._determinant(None, None, row=(t, (c, d)))
            return RationalFunction(num * self.borders[t].row_scale, den, self.ring)
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
            if measure.element in self.border_of:
                return self._border_current(self.border_of[measure.element], excitation)
            source = self.network.sources.get(measure.element)
            if source is not None and not source.independent:
                return self._controlled_current(measure.element, excitation)
        return super()._transfer(measure, excitation)

    def _border_current(self, t: int, excitation: str) -> RationalFunction | None:
        """A bordered unknown current by Cramer's rule: its column replaced by what drives
        the transfer, over det M."""
        border = self.borders[t]
        factor = border.scale * border.sign
        if excitation in self.voltages:
            p, n = self.voltages[excitation]
            merged, _ = self._graph(excitation)
            if merged.find(p) == merged.find(n):
                return None
            den = self._determinant(excitation, ((p, n), (p, n)))
            column = ("extra",)
        else:
            den = self._determinant(None, None)
            if excitation in self.bordered:
                s = self.bordered[excitation]
                factor = factor * self.borders[s].row_scale
                column = ("border", s)
            elif excitation in self.currents:
                column = ("pair", *self.currents[excitation])
            else:
                return self._zero()
        if self.ring.is_zero(den):
            return None
        if excitation in self.voltages:
            num = self._determinant(excitation, ((p, n), (p, n)), column=(t, column))
        else:
            num = self._determinant(None, None, column=(t, column))
        return RationalFunction(num * factor, den, self.ring)

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
        # Cramer's rule with the source as a border: its column replaced by the excitation
        merged, _ = self._graph(name)
        if merged.find(p) != merged.find(n) and (excitation in self.currents
                                                 or excitation in self.bordered):
            den = self._determinant(name, ((p, n), (p, n)))
            if self.ring.is_zero(den):
                return None
            if excitation in self.currents:
                num = self._determinant(name, (self.currents[excitation], (p, n)))
            else:
                t = self.bordered[excitation]
                num = self._determinant(name, ((p, n), (p, n)),
                                        column=("extra", ("border", t)))
                num = num * self.borders[t].row_scale
            return RationalFunction(num, den, self.ring)
        # the current balance at a terminal that no other voltage-type element touches
        network = self.network
        for node, sign in ((p, 1), (n, -1)):
            if any(node in ab for other, ab in self.voltages.items() if other != name):
                continue
            if node in self.norators:  # a border's terminal (an opamp's output ...)
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
