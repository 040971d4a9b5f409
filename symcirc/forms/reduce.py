"""Structural reduction: series and parallel merges, then Kennelly's star–delta and
delta–star conversions when no merge remains, each recorded as a step.

Every operation keeps the count (branches, nodes) falling in lexicographic order (a
delta–star conversion is only taken when it frees a series merge), so reduction ends, and
each pass is linear in the size of the network.
"""

from __future__ import annotations

from collections.abc import Callable
from itertools import combinations

import sympy

from .network import Branch, Network
from .parallel import Parallel
from .printing import text
from .steps import Recorder

FinalName = Callable[[bool], sympy.Symbol]
"""Gives the name of the last branch standing (argument: whether it is resistive)."""


def merge_all(
    net: Network, terminals: set[str], rec: Recorder, final: FinalName | None = None
) -> None:
    """Parallel and series merges until none remains (parallels first, as on paper)."""
    changed = True
    while changed:
        changed = False
        for group in _parallel_groups(net):
            _merge_parallel(net, group, terminals, rec, final)
            changed = True
        for node in list(net.adjacent):
            if node in terminals or net.degree(node) != 2:
                continue
            keys = sorted(net.adjacent[node])
            if net.branches[keys[0]].other(node) == net.branches[keys[1]].other(node) == node:
                continue
            _merge_series(net, node, keys, terminals, rec, final)
            changed = True
            break  # a series merge may create new parallels: take those first
        for node in list(net.adjacent):
            if node not in terminals and net.degree(node) == 1:
                (key,) = net.adjacent[node]
                branch = net.remove(key)
                rec.add(
                    "open",
                    f"{text(branch.label)} ends at node {node}, which nothing else "
                    "touches: it carries no current and drops out.",
                    equation=(
                        f"I({text(branch.label)}) = 0",
                        rf"I\left({_latex(branch.label)}\right) = 0",
                    ),
                )
                changed = True


def internal_nodes(net: Network, terminals: set[str]) -> list[str]:
    return [n for n in net.nodes() if n not in terminals]


def transform(
    net: Network, terminals: set[str], rec: Recorder, fixed: tuple[str, str] | None = None
) -> bool:
    """One star–delta or delta–star conversion (Kennelly); False when none applies.

    `fixed` is a pair of nodes held at known potentials: a branch between them does not
    matter, which makes a star–delta conversion that produces one more attractive.
    """
    best: tuple[int, int, Callable[[], None]] | None = None
    for node in internal_nodes(net, terminals):
        keys = sorted(net.adjacent[node])
        if len(keys) != 3:
            continue
        ends = [net.branches[k].other(node) for k in keys]
        if len(set(ends)) != 3 or node in ends:
            continue
        # star–delta at `node`: score the parallels it creates
        pairs = list(combinations(ends, 2))
        score = sum(1 for u, v in pairs if _between(net, u, v) or {u, v} == set(fixed or ()))
        candidate = (score, 1, lambda n=node, k=keys: _star_to_delta(net, n, k, rec))
        best = candidate if best is None or candidate[:2] > best[:2] else best
        # delta–star on a triangle through `node`: score the series merges it frees
        for (k1, u), (k2, v) in combinations(zip(keys, ends, strict=True), 2):
            across = _between(net, u, v)
            if len(across) != 1:
                continue
            triangle = (node, u, v)
            score = sum(1 for x in triangle if x not in terminals and net.degree(x) == 3)
            candidate = (
                score,
                2,
                lambda t=triangle, e=(k1, across[0], k2): _delta_to_star(net, t, e, rec),
            )
            best = candidate if best is None or candidate[:2] > best[:2] else best
    if best is None:
        return False
    best[2]()
    return True


def reduce_two_terminal(
    net: Network, a: str, b: str, rec: Recorder, final: FinalName | None = None
) -> Branch | None:
    """Reduce to one branch between `a` and `b`; None when the network will not reduce."""
    terminals = {a, b}
    while True:
        merge_all(net, terminals, rec, final)
        if not internal_nodes(net, terminals):
            keys = net.adjacent.get(a, set())
            if len(keys) == 1:
                return net.branches[next(iter(keys))]
            return None
        if not transform(net, terminals, rec):
            return None


# ------------------------------------------------------------------ the operations


def _between(net: Network, u: str, v: str) -> list[int]:
    return sorted(k for k in net.adjacent.get(u, ()) if net.branches[k].other(u) == v)


def _parallel_groups(net: Network) -> list[list[int]]:
    by_pair: dict[tuple[str, str], list[int]] = {}
    for key in sorted(net.branches):
        branch = net.branches[key]
        by_pair.setdefault(tuple(sorted((branch.a, branch.b))), []).append(key)
    return [keys for keys in by_pair.values() if len(keys) > 1]


def _is_last(net: Network, terminals: set[str]) -> bool:
    return len(net.branches) == 1 and set(net.nodes()) == terminals


def _name(
    net: Network,
    parts: tuple[str, ...],
    resistive: bool,
    terminals: set[str],
    rec: Recorder,
    final: FinalName | None,
) -> sympy.Symbol:
    if final is not None and len(terminals) == 2 and _is_last(net, terminals):
        return final(resistive)
    return rec.name_for_parts(parts, resistive)


def _merge_parallel(
    net: Network, keys: list[int], terminals: set[str], rec: Recorder, final: FinalName | None
) -> None:
    branches = [net.remove(k) for k in keys]
    a, b = branches[0].a, branches[0].b
    parts = tuple(p for br in branches for p in br.parts)
    resistive = all(br.resistive for br in branches)
    merged = Branch(a, b, sympy.Dummy(), Parallel(*[br.form for br in branches]), parts, resistive)
    net.add(merged)
    symbol = _name(net, parts, resistive, terminals, rec, final)
    merged.label = symbol
    operands = [br.label for br in branches]
    rhs = Parallel(*operands)
    names = _and([text(x) for x in operands])
    rec.add(
        "parallel",
        f"{names} are in parallel between nodes {a} and {b}.",
        symbol,
        rhs,
        operands=operands,
    )


def _merge_series(
    net: Network,
    node: str,
    keys: list[int],
    terminals: set[str],
    rec: Recorder,
    final: FinalName | None,
) -> None:
    first, second = (net.remove(k) for k in keys)
    a, b = first.other(node), second.other(node)
    parts = first.parts + second.parts
    resistive = first.resistive and second.resistive
    merged = Branch(a, b, sympy.Dummy(), first.form + second.form, parts, resistive)
    net.add(merged)
    symbol = _name(net, parts, resistive, terminals, rec, final)
    merged.label = symbol
    operands = [first.label, second.label]
    rec.add(
        "series",
        f"{text(first.label)} and {text(second.label)} are in series: node {node} joins only them.",
        symbol,
        sympy.Add(*operands),
        operands=operands,
    )


def _star_to_delta(net: Network, node: str, keys: list[int], rec: Recorder) -> None:
    arms = [net.remove(k) for k in keys]
    ends = [br.other(node) for br in arms]
    labels = [br.label for br in arms]
    products = labels[0] * labels[1] + labels[1] * labels[2] + labels[2] * labels[0]
    symbols, values = [], []
    for i, j, k in ((0, 1, 2), (1, 2, 0), (2, 0, 1)):
        parts = arms[i].parts + arms[j].parts
        resistive = arms[i].resistive and arms[j].resistive
        symbol = rec.name_for_parts(parts, resistive)
        value = products / labels[k]
        form = rec.substitute(value)
        net.add(Branch(ends[i], ends[j], symbol, form, parts, resistive))
        symbols.append(symbol)
        values.append(value)
    star = dict(zip("uvw", labels, strict=True))
    rec.add(
        "star-delta",
        f"No series or parallel merge is left: convert the star "
        f"{_and([text(x) for x in labels])} at node {node} into the "
        f"equivalent delta between {_and(ends)} (Kennelly).",
        symbols,
        values,
        vertices=ends,
        star=star,
        delta=dict(zip(("uv", "vw", "wu"), symbols, strict=True)),
    )


def _delta_to_star(
    net: Network, triangle: tuple[str, str, str], edges: tuple[int, int, int], rec: Recorder
) -> None:
    # edges: (x–u, u–v, x–w... ) given as keys (node–u, u–v, node–v) for triangle (node, u, v)
    x, u, v = triangle
    k_xu, k_uv, k_xv = edges
    sides = {
        ("x", "u"): net.remove(k_xu),
        ("u", "v"): net.remove(k_uv),
        ("x", "v"): net.remove(k_xv),
    }
    z_xu, z_uv, z_xv = (sides[p].label for p in (("x", "u"), ("u", "v"), ("x", "v")))
    total = z_xu + z_uv + z_xv
    centre = _fresh_node(net, rec)
    arms = {
        x: (z_xu * z_xv, sides[("x", "u")], sides[("x", "v")]),
        u: (z_xu * z_uv, sides[("x", "u")], sides[("u", "v")]),
        v: (z_uv * z_xv, sides[("u", "v")], sides[("x", "v")]),
    }
    symbols, values = [], []
    for vertex, (product, one, two) in arms.items():
        parts = one.parts + two.parts
        resistive = one.resistive and two.resistive
        symbol = rec.name_for_parts(parts, resistive)
        value = product / total
        net.add(Branch(vertex, centre, symbol, rec.substitute(value), parts, resistive))
        symbols.append(symbol)
        values.append(value)
    labels = [z_xu, z_uv, z_xv]
    rec.add(
        "delta-star",
        f"No series or parallel merge is left: convert the delta "
        f"{_and([text(z) for z in labels])} between nodes {x}, {u} and {v} "
        f"into the equivalent star with centre {centre} (Kennelly).",
        symbols,
        values,
        vertices=[x, u, v],
        delta={"uv": z_xu, "vw": z_uv, "wu": z_xv},
        star=dict(zip("uvw", symbols, strict=True)),
    )


def _fresh_node(net: Network, rec: Recorder) -> str:
    k = 1
    while f"Y{k}" in net.adjacent or f"Y{k}" in rec.taken:
        k += 1
    rec.taken.add(f"Y{k}")
    return f"Y{k}"


def _and(items: list[str]) -> str:
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " and " + items[-1]


def _latex(expr: sympy.Expr) -> str:
    from .printing import latex

    return latex(expr)
