"""Node voltages the way they are found on paper: voltage dividers, chained along a ladder.

With a known voltage between nodes p and n (an ideal source, or a current source's voltage
found first), the voltage of a node x is a divider of the two impedances p–x and x–n once
everything else is merged. When a node m separates p from x, the part beyond m is merged
into m's load first, then the divider to m, then the divider from m to x.
"""

from __future__ import annotations

from collections import deque

import sympy

from .network import Network
from .printing import latex, text
from .reduce import internal_nodes, merge_all, reduce_two_terminal, transform
from .steps import Recorder


class Unsupported(Exception):
    """The structure does not give this quantity; the nodal equations will."""


def node_voltage(
    net: Network,
    p: str,
    n: str,
    x: str,
    vp: sympy.Expr,
    rec: Recorder,
    name: str | None = None,
    tag: str = "",
) -> sympy.Expr:
    """V(x) − V(n) when V(p) − V(n) = vp; returns a symbol defined by a recorded step
    (or `vp`, or 0). `name` names the result; otherwise it is `V_x` plus `tag`."""
    if x == p:
        return vp
    if x == n:
        return sympy.Integer(0)
    reach = _component(net, x, {p, n})
    keys = {k for node in reach for k in net.adjacent.get(node, ())}
    if any(node in reach for _, a, b in net.active for node in (a, b)):
        raise Unsupported("an active element is in the way")
    touches = {net.branches[k].other(node) for node in reach for k in net.adjacent[node]}
    if p not in touches:
        if n not in touches:
            raise Unsupported(f"node {x} floats")
        return sympy.Integer(0)
    if n not in touches:
        return vp
    sub = net.restricted(keys)
    terminals = {p, n, x}
    while True:
        merge_all(sub, terminals, rec)
        for key in [k for k in sub.adjacent.get(p, set()) if sub.branches[k].other(p) == n]:
            sub.remove(key)  # across the known voltage: changes nothing at x
        if not internal_nodes(sub, terminals):
            return _divider(sub, p, n, x, vp, rec, name, tag)
        cuts = _separating_nodes(sub, p, n, x)
        if cuts:
            return _ladder(sub, p, n, x, cuts, vp, rec, name, tag)
        if not transform(sub, terminals, rec, fixed=(p, n)):
            raise Unsupported("the network does not reduce")


def _reduce_segment(
    net: Network, p: str, n: str, x: str, rec: Recorder, keep_across: bool = False
) -> None:
    """Merge (and convert star–delta when stuck) keeping p, n and x, until no other node is
    left or a separating node appears. Branches across p–n change nothing at x once V(p, n)
    is known and are dropped, unless `keep_across` (they still load the section before)."""
    terminals = {p, n, x}
    while True:
        merge_all(net, terminals, rec)
        for key in [k for k in net.adjacent.get(p, set()) if net.branches[k].other(p) == n]:
            if not keep_across:
                net.remove(key)
        if not internal_nodes(net, terminals) or _separating_nodes(net, p, n, x):
            return
        if not transform(net, terminals, rec, fixed=(p, n)):
            raise Unsupported("the network does not reduce")


def _divider(
    net: Network, p: str, n: str, x: str, vp: sympy.Expr, rec: Recorder, name: str | None, tag: str
) -> sympy.Expr:
    top, bottom = _between(net, x, p), _between(net, x, n)
    if not top:
        return sympy.Integer(0)
    if not bottom:
        return vp
    return _divide(vp, top[0].label, bottom[0].label, p, n, x, rec, name, tag)


def _ladder(
    net: Network,
    p: str,
    n: str,
    x: str,
    cuts: list[str],
    vp: sympy.Expr,
    rec: Recorder,
    name: str | None,
    tag: str,
) -> sympy.Expr:
    """A ladder: nodes m1 … mk that every path from p to x passes. Loads are merged from
    the far end back (each section's load once), then the dividers run forward."""
    taps = [*cuts, x]
    starts = [p, *cuts]
    beyond = [_beyond(net, m, n, x) for m in cuts]
    sections = (
        [set(net.branches) - beyond[0]]
        + [beyond[i - 1] - beyond[i] for i in range(1, len(cuts))]
        + [beyond[-1]]
    )
    splits: list[tuple[sympy.Expr | None, sympy.Expr | None]] = [(None, None)] * len(taps)
    load = None
    for i in reversed(range(len(taps))):
        section = net.restricted(sections[i])
        if load is not None:
            section.add(load)
        start, tap = starts[i], taps[i]
        _reduce_segment(section, start, n, tap, rec, keep_across=i > 0)
        if internal_nodes(section, {start, n, tap}):
            raise Unsupported("a ladder section does not reduce")
        top = _between(section, start, tap)
        bottom = _between(section, tap, n)
        splits[i] = (top[0].label if top else None, bottom[0].label if bottom else None)
        if i > 0:  # this section, with its load, is the load of the one before
            section_load = section.restricted(set(section.branches))
            merged = reduce_two_terminal(section_load, start, n, rec)
            if merged is None:
                raise Unsupported("a ladder section does not reduce")
            load = merged
    v = vp
    for i, (start, tap) in enumerate(zip(starts, taps, strict=True)):
        top, bottom = splits[i]
        last = i == len(taps) - 1
        if top is None:
            v = sympy.Integer(0)
        elif bottom is not None:
            v = _divide(v, top, bottom, start, n, tap, rec, name if last else None, tag)
    return v


def _divide(
    vp: sympy.Expr,
    z_top: sympy.Expr,
    z_bottom: sympy.Expr,
    p: str,
    n: str,
    x: str,
    rec: Recorder,
    name: str | None,
    tag: str,
) -> sympy.Symbol:
    symbol = rec.fresh([name or f"V_{x}{tag}"], "V")
    rhs = vp * z_bottom / (z_top + z_bottom)
    rec.add(
        "divider",
        f"{text(z_top)} and {text(z_bottom)} divide {text(vp)} "
        f"(between nodes {p} and {n}); node {x} is the tap.",
        symbol,
        rhs,
        equation=ratio_equation(symbol, vp, z_bottom, z_top + z_bottom),
        source=vp,
        top=z_top,
        bottom=z_bottom,
    )
    return symbol


def _between(net: Network, a: str, b: str) -> list:
    return [
        net.branches[k] for k in sorted(net.adjacent.get(a, ())) if net.branches[k].other(a) == b
    ]


def _beyond(net: Network, m: str, n: str, x: str) -> set[int]:
    """Branches on x's side of the separating node m, with those straight from m to n."""
    side = _component(net, x, {m, n})
    keys = {k for node in side for k in net.adjacent[node]}
    return keys | {k for k in net.adjacent.get(m, ()) if net.branches[k].other(m) == n}


def _component(net: Network, start: str, blocked: set[str]) -> set[str]:
    """Nodes reachable from `start` without passing through `blocked`."""
    seen = {start}
    queue = deque([start])
    while queue:
        node = queue.popleft()
        for key in net.adjacent.get(node, ()):
            other = net.branches[key].other(node)
            if other not in seen and other not in blocked:
                seen.add(other)
                queue.append(other)
    return seen


def _separating_nodes(net: Network, p: str, n: str, x: str) -> list[str]:
    """Nodes through which every path from p to x (avoiding n) must pass, nearest p first."""
    order = [node for node in _bfs_order(net, p, {n}) if node not in (p, n, x)]
    return [m for m in order if x not in _component(net, p, {m, n})]


def _bfs_order(net: Network, start: str, blocked: set[str]) -> list[str]:
    seen = [start]
    queue = deque([start])
    while queue:
        node = queue.popleft()
        for key in sorted(net.adjacent.get(node, ())):
            other = net.branches[key].other(node)
            if other not in seen and other not in blocked:
                seen.append(other)
                queue.append(other)
    return seen


def ratio_equation(
    symbol: sympy.Expr, factor: sympy.Expr, part: sympy.Expr, whole: sympy.Expr
) -> tuple[str, str]:
    """`V_x = U·Z2/(Z1 + Z2)` with the ratio kept as written (sympy would merge it)."""
    head = "" if factor == 1 else ("−" if factor == -1 else factor_text(factor) + "·")
    head_latex = "" if factor == 1 else ("-" if factor == -1 else latex(factor) + " ")
    part_text = text(part)
    if len(sympy.Add.make_args(part)) > 1 or ("/" in part_text and head):
        part_text = f"({part_text})"
    return (
        f"{text(symbol)} = {head}{part_text}/({text(whole)})",
        rf"{latex(symbol)} = {head_latex}\frac{{{latex(part)}}}{{{latex(whole)}}}",
    )


def factor_text(factor: sympy.Expr) -> str:
    """A factor as plain text, in parentheses when it is a sum or a fraction."""
    shown = text(factor)
    return f"({shown})" if len(sympy.Add.make_args(factor)) > 1 or "/" in shown else shown
