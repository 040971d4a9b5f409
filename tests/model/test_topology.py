"""Topology checks against networkx, which finds the same components and cycles independently."""

import random

import networkx as nx
import pytest

import symcirc
from symcirc.model.circuit import REFERENCE
from symcirc.model.topology import UnionFind


def _random_circuit(rng: random.Random) -> tuple[str, list[tuple[str, str, str, str]]]:
    nodes = [REFERENCE] + [f"n{i}" for i in range(rng.randint(1, 6))]
    parts = []
    for index in range(rng.randint(1, 9)):
        kind = rng.choices(["resistor", "current source", "voltage source"], [6, 2, 2])[0]
        a, b = rng.choice(nodes), rng.choice(nodes)
        parts.append((kind, f"X{index}", a, b))
    text = "\n".join(f"{kind} {name} ({a}, {b}) = 1" for kind, name, a, b in parts) + "\n"
    return text, parts


def _expected(parts) -> str | None:
    """What networkx says is wrong first: loop, floating group, cut set, or nothing."""
    if all(REFERENCE not in (a, b) for _, _, a, b in parts):
        # no reference named: the first node seen becomes it (docs/language.md)
        first = parts[0][2]
        parts = [(k, n, *(REFERENCE if x == first else x for x in (a, b)))
                 for k, n, a, b in parts]
    sources = nx.MultiGraph()
    for kind, _, a, b in parts:
        if kind == "voltage source":
            sources.add_edge(a, b)
    if any(True for _ in nx.simple_cycles(sources)) or nx.number_of_selfloops(sources):
        return "loop"
    every = nx.Graph()
    every.add_node(REFERENCE)
    without_current = nx.Graph()
    without_current.add_node(REFERENCE)
    for kind, _, a, b in parts:
        every.add_edge(a, b)
        without_current.add_nodes_from((a, b))
        if kind != "current source":
            without_current.add_edge(a, b)
    if nx.number_connected_components(every) > 1:
        return "floating"
    if nx.number_connected_components(without_current) > 1:
        return "cut set"
    return None


def _verdict(text: str) -> str | None:
    try:
        symcirc.parse(text)
    except symcirc.SymcircError as error:
        message = error.message
        if "form a loop" in message or "forms a loop by itself" in message \
                or "would short itself" in message:
            return "loop"
        if "no path through elements" in message:
            return "floating"
        if "only through current source" in message:
            return "cut set"
        raise
    return None


def test_random_circuits_agree_with_networkx():
    rng = random.Random(20240611)
    seen = set()
    for _ in range(400):
        text, parts = _random_circuit(rng)
        expected = _expected(parts)
        assert _verdict(text) == expected, text
        seen.add(expected)
    assert seen == {None, "loop", "floating", "cut set"}  # every case was exercised


def test_floating_group_lists_exactly_the_component():
    text = ("voltage source U (a, gnd) = 1\nresistor R1 (a, gnd) = 1\n"
            "resistor R2 (c, d) = 1\nresistor R3 (d, e) = 1\nresistor R4 (f, g) = 1\n")
    graph = nx.Graph([("a", "gnd"), ("c", "d"), ("d", "e"), ("f", "g")])
    first = sorted(nx.node_connected_component(graph, "c"))
    with pytest.raises(symcirc.SymcircError) as caught:
        symcirc.parse(text)
    assert f"nodes {', '.join(first)} have no path" in caught.value.message
    assert caught.value.line == 3 and any("R3 is at line 4" in n for n in caught.value.notes)


def test_voltage_source_loop_names_the_cycle():
    text = ("voltage source V1 (a, gnd) = 1\nvoltage source V2 (b, a) = 1\n"
            "resistor R (a, c) = 1\nresistor R2 (c, gnd) = 1\nvoltage source V3 (gnd, b) = 1\n")
    cycle = nx.find_cycle(nx.Graph([("a", "gnd"), ("b", "a"), ("gnd", "b")]))
    with pytest.raises(symcirc.SymcircError) as caught:
        symcirc.parse(text)
    assert len(cycle) == 3
    # named in the order of a walk around the loop: V3 (gnd→b), V2 (b→a), V1 (a→gnd)
    assert "voltage sources V3, V2, V1 form a loop" in caught.value.message
    assert caught.value.line == 5


def test_transformer_windings_and_opamp_output():
    # The secondary floats: the windings join p1-n1 and p2-n2, never primary to secondary.
    floating = ("voltage source U (p, gnd) = 1\ntransformer T (p, gnd; s, t) = 2\n"
                "resistor R (s, t) = 8\n")
    with pytest.raises(symcirc.SymcircError) as caught:
        symcirc.parse(floating)
    assert "nodes s, t" in caught.value.message
    assert any("transformer's windings" in note for note in caught.value.notes)
    symcirc.parse(floating + "resistor Rg (t, gnd) = 1M\n")  # grounding one fixes it
    # An opamp output is driven against the reference; its inputs carry no current.
    follower = "voltage source U (p, gnd) = 1\nopamp A (p, o, o)\nresistor RL (o, x) = 1k\n"
    with pytest.raises(symcirc.SymcircError):
        symcirc.parse(follower.replace("opamp A (p, o, o)", "opamp A (q, o, o)"))
    symcirc.parse(follower + "resistor R2 (x, gnd) = 1k\n")


def test_controlled_current_source_cut_set():
    text = ("voltage source U (b, gnd) = 1\nresistor Rb (b, gnd) = 1k\n"
            "current source Igm (c, gnd) = gm*V(b)\nparam gm = 1m\n")
    with pytest.raises(symcirc.SymcircError) as caught:
        symcirc.parse(text)
    assert "node c connects to the rest of the circuit only through current source Igm" \
        in caught.value.message


def test_union_find_matches_networkx_components():
    rng = random.Random(7)
    edges = [(f"v{rng.randrange(300)}", f"v{rng.randrange(300)}") for _ in range(250)]
    sets = UnionFind()
    for a, b in edges:
        sets.union(a, b)
    graph = nx.Graph(edges)
    for component in nx.connected_components(graph):
        roots = {sets.find(node) for node in component}
        assert len(roots) == 1
    assert len({sets.find(n) for n in graph.nodes}) == nx.number_connected_components(graph)


def test_opamp_outputs_count_as_voltage_sources_in_loops():
    # An opamp's output is an ideal voltage source from its output node to the reference
    # (docs/language.md: the output is ideal); networkx finds the loops independently.
    rng = random.Random(31)
    seen = set()
    for _ in range(300):
        nodes = [REFERENCE] + [f"n{i}" for i in range(rng.randint(1, 4))]
        lines, parts = [], []
        for index in range(rng.randint(1, 7)):
            kind = rng.choices(["resistor", "voltage source", "opamp"], [5, 2, 2])[0]
            if kind == "opamp":
                p, n, o = (rng.choice(nodes) for _ in range(3))
                lines.append(f"opamp X{index} ({p}, {n}, {o})")
                parts.append((kind, p, n, o))
            else:
                a, b = rng.choice(nodes), rng.choice(nodes)
                lines.append(f"{kind} X{index} ({a}, {b}) = 1")
                parts.append((kind, a, b))
        named = {x for part in parts for x in part[1:]}
        if REFERENCE not in named:  # the first node seen becomes the reference
            first = parts[0][1]
            parts = [(k, *(REFERENCE if x == first else x for x in rest)) for k, *rest in parts]
        sources = nx.MultiGraph()
        every = nx.Graph()
        every.add_node(REFERENCE)
        for kind, *terminals in parts:
            every.add_nodes_from(terminals)
            edge = (terminals[2], REFERENCE) if kind == "opamp" else tuple(terminals)
            every.add_edge(*edge)
            if kind != "resistor":
                sources.add_edge(*edge)
        if nx.number_of_selfloops(sources) or any(True for _ in nx.simple_cycles(sources)):
            expected = "loop"
        elif nx.number_connected_components(every) > 1:
            expected = "floating"
        else:
            expected = None
        text = "\n".join(lines) + "\n"
        assert _verdict(text) == expected, text
        seen.add(expected)
    assert seen == {None, "loop", "floating"}
