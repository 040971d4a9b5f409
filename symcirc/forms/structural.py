"""Quantities found from the circuit's structure: impedances by reduction, voltages by
dividers and superposition, currents by Ohm's law or a current divider."""

from __future__ import annotations

import sympy

from ..model.circuit import REFERENCE, Circuit, Element
from .dividers import Unsupported, factor_text, node_voltage, ratio_equation
from .network import Network, block, build
from .printing import latex, text
from .reduce import reduce_two_terminal
from .steps import Recorder


def independent_sources(circuit: Circuit) -> list[Element]:
    return [
        e
        for e in circuit.elements.values()
        if e.is_source and not e.is_controlled
    ]


def deactivate(circuit: Circuit, rec: Recorder, keep: Element | None = None) -> None:
    """Record setting every independent source but `keep` to zero (if there is one)."""
    others = [e for e in independent_sources(circuit) if e is not keep]
    if not others:
        return
    shorted = [e.name for e in others if e.kind == "voltage source"]
    opened = [e.name for e in others if e.kind == "current source"]
    what = "; ".join(
        part
        for part in (
            "short " + ", ".join(shorted) if shorted else "",
            "open " + ", ".join(opened) if opened else "",
        )
        if part
    )
    _, _, out = build(circuit, set(shorted), set(opened))
    lead = (
        f"Only {keep.name} acts: set the other independent sources to zero"
        if keep is not None
        else "Set the independent sources to zero"
    )
    tail = f" ({', '.join(out)} then has both ends on one node and drops out)" if out else ""
    zeros = [e.symbol for e in others]
    rec.add(
        "deactivate",
        f"{lead}: {what}{tail}.",
        equation=(
            "; ".join(f"{text(z)} = 0" for z in zeros),
            r",\quad ".join(f"{latex(z)} = 0" for z in zeros),
        ),
        shorted=shorted,
        opened=opened,
    )


def _network(circuit: Circuit, keep: Element | None) -> tuple[Network, callable]:
    """Network with every independent source but `keep` at zero, and `keep` left out."""
    others = [e for e in independent_sources(circuit) if e is not keep]
    shorted = {e.name for e in others if e.kind == "voltage source"}
    opened = {e.name for e in others if e.kind == "current source"}
    if keep is not None:
        opened.add(keep.name)
    net, contraction, _ = build(circuit, shorted, opened)
    return net, contraction.find


def impedance(circuit: Circuit, pos: str, neg: str, rec: Recorder, final: str) -> sympy.Expr:
    """Impedance between two nodes, sources at zero: returns its symbol (or element label)."""
    deactivate(circuit, rec)
    net, find = _network(circuit, None)
    return _reduce_between(net, find(pos), find(neg), rec, final)


def _reduce_between(net: Network, a: str, b: str, rec: Recorder, final: str) -> sympy.Expr:
    if a == b:
        raise Unsupported("the port is shorted")
    keys, active = block(net, a, b)
    if active:
        raise Unsupported("controlled sources or opamps are in the way: " + ", ".join(active))
    if not keys:
        raise Unsupported("nothing connects the port")
    branch = reduce_two_terminal(
        net.restricted(keys),
        a,
        b,
        rec,
        lambda resistive: rec.fresh([("R_" if resistive else "Z_") + final]),
    )
    if branch is None:
        raise Unsupported("the network does not reduce")
    return branch.label


def voltage(
    circuit: Circuit, pos: str, neg: str, rec: Recorder, final: str, only: Element | None = None
) -> sympy.Expr:
    """V(pos) − V(neg) by superposition over the independent sources (or `only` one)."""
    sources = [only] if only is not None else independent_sources(circuit)
    if not sources:
        raise Unsupported("no independent source")
    several = len(sources) > 1
    parts = []
    for source in sources:
        tag = f"^({source.name})" if several else ""
        if several or only is not None:
            deactivate(circuit, rec, keep=source)
        name = f"{final}{tag}"
        parts.append(_one_source_voltage(circuit, source, pos, neg, rec, name, tag))
    if not several:
        return parts[0]
    symbol = rec.fresh([final])
    rec.add(
        "superposition",
        "Superposition: add the contributions of the sources acting one at a time.",
        symbol,
        sympy.Add(*parts),
        operands=parts,
    )
    return symbol


def _one_source_voltage(
    circuit: Circuit, source: Element, pos: str, neg: str, rec: Recorder, name: str, tag: str
) -> sympy.Expr:
    net, find = _network(circuit, source)
    p, n = (find(x) for x in source.nodes[:2])
    a, b = find(pos), find(neg)
    if p == n:
        raise Unsupported(f"{source.name} is shorted")
    # Measure from the source terminal that is the reference node, when one is.
    sign = 1
    if p == find(REFERENCE):
        p, n, sign = n, p, -1
    load = [k for k, br in net.branches.items() if {br.a, br.b} == {a, b}]
    if load and a != b and not {a, b} & {p, n}:  # a floating load: Thevenin, then divider
        mark = rec.mark()
        try:
            return _loaded(net, source, p, n, sign, a, b, load, rec, name, tag)
        except Unsupported:
            rec.rewind(mark)
    vp = _source_voltage(net, source, p, n, sign, rec, tag)
    return _open_voltage(net, source, p, n, sign, a, b, vp, rec, name, tag)


def _open_voltage(
    net: Network,
    source: Element,
    p: str,
    n: str,
    sign: int,
    a: str,
    b: str,
    vp: sympy.Expr,
    rec: Recorder,
    name: str,
    tag: str,
) -> sympy.Expr:
    """V(a) − V(b): across a bridge, its excitation times the difference of its two divider
    ratios; otherwise from the dividers of each node against n."""
    corners = bridge_corners(net, p, n, a, b)
    if corners is not None:
        mark = rec.mark()
        try:
            return _bridge(net, source, p, n, sign, a, b, corners, vp, rec, name, tag)
        except Unsupported:
            rec.rewind(mark)
    if b == n:
        return node_voltage(net, p, n, a, vp, rec, name=name, tag=tag)
    if a == n:
        vb = node_voltage(net, p, n, b, vp, rec, tag=tag)
        return _loop(rec, name, [(-1, vb, b)], n)
    va = node_voltage(net, p, n, a, vp, rec, tag=tag)
    vb = node_voltage(net, p, n, b, vp, rec, tag=tag)
    return _loop(rec, name, [(1, va, a), (-1, vb, b)], n)


def _loaded(
    net: Network,
    source: Element,
    p: str,
    n: str,
    sign: int,
    a: str,
    b: str,
    load: list[int],
    rec: Recorder,
    name: str,
    tag: str,
) -> sympy.Expr:
    """A load across a–b: the Thevenin equivalent of the rest, then the divider it forms
    with the load (the way a bridge with a meter across its diagonal is worked out)."""
    rest = net.copy()
    loads = [rest.remove(k) for k in load]
    vp = _source_voltage(rest, source, p, n, sign, rec, tag)
    v_open = _open_voltage(rest, source, p, n, sign, a, b, vp, rec, f"V_oc{tag}", tag)
    shorted = source.kind == "voltage source"
    zeroed = rest.contracted(n, p) if shorted else rest
    rec.add(
        "deactivate",
        f"Seen from the load between nodes {a} and {b}, set {source.name} "
        f"to zero ({'short' if shorted else 'open'} it).",
        equation=(f"{text(source.symbol)} = 0", f"{latex(source.symbol)} = 0"),
        shorted=[source.name] if shorted else [],
        opened=[] if shorted else [source.name],
    )
    seen = [n if shorted and x == p else x for x in (a, b)]
    z_source = _reduce_between(zeroed, *seen, rec, f"th{tag}")
    load_net = Network()
    for branch in loads:
        load_net.add(branch)
    z_load = reduce_two_terminal(load_net, a, b, rec).label
    symbol = rec.fresh([name], "V")
    rec.add(
        "divider",
        f"The load {text(z_load)} and the source impedance {text(z_source)} "
        f"divide the open-circuit voltage {text(v_open)}.",
        symbol,
        v_open * z_load / (z_source + z_load),
        equation=ratio_equation(symbol, v_open, z_load, z_source + z_load),
        source=v_open,
        top=z_source,
        bottom=z_load,
    )
    return symbol


def bridge_corners(net: Network, p: str, n: str, a: str, b: str) -> tuple[str, str] | None:
    """The corners (top, bottom) of a bridge whose output is a–b, or None.

    A bridge here is two dividers across the same pair of nodes: a and b are their taps,
    each joined to nothing but one impedance to each corner (and no active element). When
    the corners are the source's own terminals the dividers of each node against n already
    read as a bridge, so that case is left to them. `top` is the corner nearer the source's
    terminal p."""
    if n in (a, b) or p in (a, b) or any({a, b} & {x, y} for _, x, y in net.active):
        return None
    pair = _tap_corners(net, a)
    if pair is None or _tap_corners(net, b) != pair or set(pair) == {p, n}:
        return None
    distance = _distances(net, p, n)
    top, bottom = sorted(pair, key=lambda x: (distance.get(x, len(distance) + 1), x != p, x))
    return top, bottom


def _tap_corners(net: Network, x: str) -> tuple[str, str] | None:
    """The two nodes a divider's tap x is joined to (sorted), when it has exactly one
    impedance to each and nothing else."""
    keys = net.adjacent.get(x, set())
    if len(keys) != 2:
        return None
    ends = sorted(net.branches[k].other(x) for k in keys)
    return (ends[0], ends[1]) if ends[0] != ends[1] else None


def _distances(net: Network, start: str, blocked: str) -> dict[str, int]:
    """Branches from `start` to each node, not passing `blocked`."""
    distance = {start: 0}
    frontier = [start]
    while frontier:
        following = []
        for node in frontier:
            for key in sorted(net.adjacent.get(node, ())):
                other = net.branches[key].other(node)
                if other not in distance and other != blocked:
                    distance[other] = distance[node] + 1
                    following.append(other)
        frontier = following
    return distance


def _bridge(
    net: Network,
    source: Element,
    p: str,
    n: str,
    sign: int,
    a: str,
    b: str,
    corners: tuple[str, str],
    vp: sympy.Expr,
    rec: Recorder,
    name: str,
    tag: str,
) -> sympy.Expr:
    """V(a) − V(b) across a bridge: its arms merged into one impedance, the voltage across
    it found as for any load (before any star–delta transform), then each tap's divider."""
    top, bottom = corners
    rest = net.copy()
    ratios: dict[str, tuple[sympy.Expr, sympy.Expr]] = {}
    arms = Network()
    for tap in (a, b):
        upper = next(k for k in rest.adjacent[tap] if rest.branches[k].other(tap) == top)
        lower = next(k for k in rest.adjacent[tap] if rest.branches[k].other(tap) == bottom)
        ratios[tap] = (rest.branches[upper].label, rest.branches[lower].label)
        arms.add(rest.remove(upper))
        arms.add(rest.remove(lower))
    merged = reduce_two_terminal(
        arms, top, bottom, rec, lambda resistive: rec.fresh(["R_br" if resistive else "Z_br"])
    )
    if merged is None:
        raise Unsupported("the bridge arms do not reduce")
    rest.add(merged)
    across = f"V_br{tag}"
    if {top, bottom} & {p, n}:
        v_bridge = _open_voltage(rest, source, p, n, sign, top, bottom, vp, rec, across, tag)
    else:
        load = [k for k, br in rest.branches.items() if {br.a, br.b} == {top, bottom}]
        v_bridge = _loaded(rest, source, p, n, sign, top, bottom, load, rec, across, tag)
    (upper_a, lower_a), (upper_b, lower_b) = ratios[a], ratios[b]
    difference = lower_a / (upper_a + lower_a) - lower_b / (upper_b + lower_b)
    symbol = rec.fresh([name], "V")
    rec.add(
        "bridge",
        f"A bridge between nodes {top} and {bottom}: nodes {a} and {b} are the taps of "
        f"two dividers across {text(v_bridge)}, so the output is {text(v_bridge)} times "
        "the difference of the divider ratios.",
        symbol,
        v_bridge * difference,
        equation=(
            f"{text(symbol)} = {factor_text(v_bridge)}·({text(difference)})",
            rf"{latex(symbol)} = {latex(v_bridge)} \left({latex(difference)}\right)",
        ),
        source=v_bridge,
        corners=(top, bottom),
        output=(a, b),
        taps=dict(ratios),
    )
    return symbol


def _source_voltage(
    net: Network, source: Element, p: str, n: str, sign: int, rec: Recorder, tag: str
) -> sympy.Expr:
    """V(p) − V(n) set by the source: its value, or I·Z for a current source (`sign` −1
    when p and n are the source's second and first terminal)."""
    if source.kind == "voltage source":
        return sign * source.symbol
    z = _reduce_between(net.copy(), p, n, rec, source.name)
    symbol = rec.fresh([f"V_{p}{tag}"], "V")
    rec.add(
        "ohm",
        f"{source.name} drives its current through {text(z)}, the impedance "
        f"it sees between nodes {p} and {n}.",
        symbol,
        sign * source.symbol * z,
        current=sign * source.symbol,
        impedance=z,
    )
    return symbol


def _loop(
    rec: Recorder, name: str, terms: list[tuple[int, sympy.Expr, str]], reference: str
) -> sympy.Expr:
    live = [(sign, v, node) for sign, v, node in terms if v != 0]
    if not live:
        return sympy.Integer(0)
    rhs = sympy.Add(*[sign * v for sign, v, _ in live])
    if len(live) == 1 and live[0][0] == 1:
        return live[0][1]
    symbol = rec.fresh([name], "V")
    if len(terms) == 2:
        sentence = (
            f"Around the loop through the port: its voltage is the difference of the "
            f"voltages of nodes {terms[0][2]} and {terms[1][2]}, both against node "
            f"{reference}."
        )
    else:
        sentence = (
            f"Around the loop through the port: its negative terminal is node "
            f"{terms[0][2]}, its positive one node {reference}."
        )
    rec.add("loop", sentence, symbol, rhs, terms=[(sign, v) for sign, v, _ in live])
    rec.forms[symbol] = common_factor(rec.forms[symbol])
    return symbol


def common_factor(expr: sympy.Expr) -> sympy.Expr:
    """`U·a − U·b` → `U·(a − b)`: pull out symbols that every term of a sum shares."""
    if not expr.is_Add:
        return expr
    shared: set[sympy.Expr] | None = None
    for term in expr.args:
        factors = {f for f in sympy.Mul.make_args(term) if f.is_Symbol}
        shared = factors if shared is None else shared & factors
    if not shared:
        return expr
    factor = sympy.Mul(*sorted(shared, key=sympy.default_sort_key))
    return factor * sympy.Add(*[t / factor for t in expr.args])


def current(
    circuit: Circuit, element: Element, rec: Recorder, final: str, only: Element | None = None
) -> sympy.Expr:
    """Current through a passive element: a current divider when a lone current source
    feeds it and one other impedance, otherwise Ohm's law on its voltage."""
    if element.law is None:
        raise Unsupported("current of a source or active element")
    sources = [only] if only is not None else independent_sources(circuit)
    z = element.impedance
    if len(sources) == 1 and sources[0].kind == "current source":
        divided = _current_divider(circuit, element, sources[0], rec, final, only is not None)
        if divided is not None:
            return divided
    v = voltage(circuit, element.nodes[0], element.nodes[1], rec, f"V_{element.name}", only)
    return ohm(rec, element, final, v, z)


def ohm(rec: Recorder, element: Element, name: str, v: sympy.Expr, z: sympy.Expr
        ) -> sympy.Symbol:
    """The step `I = V/Z` for an element whose voltage v is known; returns its symbol."""
    symbol = rec.fresh([name], "I")
    rec.add(
        "ohm",
        f"Ohm's law for {element.name}: its current is its voltage over its impedance.",
        symbol,
        v / z,
        voltage=v,
        impedance=z,
    )
    return symbol


def _current_divider(
    circuit: Circuit, element: Element, source: Element, rec: Recorder, final: str, announce: bool
) -> sympy.Expr | None:
    net, find = _network(circuit, source)
    p, n = (find(x) for x in source.nodes[:2])
    a, b = (find(x) for x in element.nodes)
    if {a, b} != {p, n}:
        return None
    own = next(k for k, br in net.branches.items() if br.parts == (element.name,))
    net.remove(own)
    if announce:
        deactivate(circuit, rec, keep=source)
    rest = _reduce_between(net, p, n, rec, f"{p}{n}")
    z = element.impedance
    sign = 1 if a == p else -1
    symbol = rec.fresh([final], "I")
    rec.add(
        "current-divider",
        f"{source.name} divides between {element.name} and the rest "
        f"of the network, {text(rest)}, in parallel with it.",
        symbol,
        sign * source.symbol * rest / (z + rest),
        equation=ratio_equation(symbol, sign * source.symbol, rest, z + rest),
        source=sign * source.symbol,
        own=z,
        other=rest,
    )
    return symbol
