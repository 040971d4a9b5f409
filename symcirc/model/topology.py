"""Checks on how the elements connect: loops of voltage sources, node groups with no path
to the reference, cut sets of current sources, and dangling nodes (a warning).

Every check is a union-find pass over the elements (near-linear in the circuit's size);
graph searches run only to describe a problem once one is found.
"""

from __future__ import annotations

from collections import deque
from collections.abc import Iterable, Mapping, Sequence

from ..errors import SymcircError
from .circuit import REFERENCE, Circuit, Element, Notice

MAX_LISTED = 12
"""How many nodes or elements a message lists before saying "and N more"."""


class UnionFind:
    """Disjoint sets of node names with path halving and union by size."""

    def __init__(self) -> None:
        self.parent: dict[str, str] = {}
        self.size: dict[str, int] = {}

    def find(self, item: str) -> str:
        parent = self.parent
        if item not in parent:
            parent[item] = item
            self.size[item] = 1
            return item
        while parent[item] != item:
            parent[item] = parent[parent[item]]
            item = parent[item]
        return item

    def union(self, a: str, b: str) -> bool:
        """Join the sets of a and b; False when they were already one set."""
        ra, rb = self.find(a), self.find(b)
        if ra == rb:
            return False
        if self.size[ra] < self.size[rb]:
            ra, rb = rb, ra
        self.parent[rb] = ra
        self.size[ra] += self.size[rb]
        return True


def check(
    circuit: Circuit,
    origins: Mapping[str, tuple[str, ...]] | None = None,
    used_nodes: Iterable[str] = (),
) -> list[Notice]:
    """Raise SymcircError for a structural problem; return warnings otherwise.

    `origins` gives, per element expanded from a block, notes saying which instance it
    came from; `used_nodes` are nodes named by ports, controls and `derive`/`claim`
    quantities (never "dangling").
    """
    checker = _Checker(circuit, origins or {})
    checker.voltage_source_loops()
    checker.floating_groups()
    checker.current_source_cut_sets()
    return checker.warnings(set(used_nodes))


class _Checker:
    def __init__(self, circuit: Circuit, origins: Mapping[str, tuple[str, ...]]) -> None:
        self.circuit = circuit
        self.origins = origins

    # -------------------------------------------------------------- errors

    def voltage_source_loops(self) -> None:
        """Voltage sources and opamp outputs (each an ideal source from its output node to
        the reference) must not form a loop: their currents would be undetermined."""
        sets = UnionFind()
        placed: list[tuple[Element, str, str]] = []
        for element in self.circuit.elements.values():
            if element.kind in ("voltage source", "noise voltage"):
                a, b = element.nodes
            elif element.kind == "opamp":
                a, b = element.nodes[2], REFERENCE
            else:
                continue
            if a == b:
                raise self._error(element, _self_loop(element, a))
            if not sets.union(a, b):
                loop = [element, *_path(placed, a, b)]
                if any(e.kind == "opamp" for e in loop):
                    names = _and([_source_name(e) for e in loop])
                else:
                    names = "voltage sources " + ", ".join(e.name for e in loop)
                notes = ("an opamp's output is an ideal voltage source from its output node "
                         f"to {REFERENCE}",) if any(e.kind == "opamp" for e in loop) else ()
                raise self._error(
                    element,
                    f"{names} form a loop made only of voltage sources: "
                    "their voltages cannot all be imposed; put a resistance in series with one",
                    loop[1:],
                    notes,
                )
            placed.append((element, a, b))

    def floating_groups(self) -> None:
        sets = UnionFind()
        sets.find(REFERENCE)
        for element in self.circuit.elements.values():
            for a, b in _conducting_pairs(element, include_current_sources=True):
                sets.union(a, b)
        self._join_ports(sets)
        group = self._first_group_without_reference(sets)
        if group is None:
            return
        touching = self._elements_touching(group)
        nodes = _listing(group)
        notes = []
        kinds = {e.kind for e in touching}
        if "transformer" in kinds:
            notes.append("a transformer's windings do not connect its primary to its secondary")
        if "opamp" in kinds:
            notes.append("an opamp's inputs draw no current, so they are no path either")
        raise self._error(
            touching[0],
            f"node{'s' if len(group) > 1 else ''} {nodes} "
            f"{'have' if len(group) > 1 else 'has'} no path through elements to the reference "
            f"node {REFERENCE}; connect one of them to {REFERENCE} (or to the rest of the "
            "circuit)",
            touching[1:],
            tuple(notes),
        )

    def _join_ports(self, sets: UnionFind) -> None:
        """A port is where the circuit meets its source or load, which ties the port's nodes
        together (a series part between two ports to gnd is a valid two-port)."""
        for port in self.circuit.ports.values():
            sets.union(port.positive, port.negative)

    def current_source_cut_sets(self) -> None:
        sets = UnionFind()
        sets.find(REFERENCE)
        for element in self.circuit.elements.values():
            for a, b in _conducting_pairs(element, include_current_sources=False):
                sets.union(a, b)
        self._join_ports(sets)
        group = self._first_group_without_reference(sets)
        if group is None:
            return
        inside = set(group)
        sources = [
            e for e in self.circuit.elements.values()
            if e.kind == "current source" and (e.nodes[0] in inside) != (e.nodes[1] in inside)
        ]
        names = ", ".join(e.name for e in sources)
        raise self._error(
            sources[0],
            f"node{'s' if len(group) > 1 else ''} {_listing(group)} "
            f"connect{'' if len(group) > 1 else 's'} to the rest of the circuit only through "
            f"current source{'s' if len(sources) > 1 else ''} {names}: the currents into "
            f"{'them' if len(group) > 1 else 'it'} cannot balance; add a resistance from one of "
            f"them to {REFERENCE}",
            sources[1:],
        )

    # -------------------------------------------------------------- warnings

    def warnings(self, used: set[str]) -> list[Notice]:
        touches: dict[str, int] = {}
        first_toucher: dict[str, Element] = {}
        notices: list[Notice] = []
        for element in self.circuit.elements.values():
            for node in element.nodes:
                touches[node] = touches.get(node, 0) + 1
                first_toucher.setdefault(node, element)
            if (
                element.entry.carries_current
                and element.kind != "voltage source"
                and element.nodes[0] == element.nodes[1]
            ):
                notices.append(Notice(
                    "warning",
                    f"both terminals of {element.name} are on node {element.nodes[0]}: "
                    "it carries no current",
                    element.location,
                ))
        for node in self.circuit.nodes:
            if node != REFERENCE and touches.get(node) == 1 and node not in used:
                element = first_toucher[node]
                notices.append(Notice(
                    "warning",
                    f"node {node} is touched only by {element.name} and used by no port, "
                    "control or quantity: is it a typo?",
                    element.location,
                ))
        return notices

    # -------------------------------------------------------------- helpers

    def _first_group_without_reference(self, sets: UnionFind) -> list[str] | None:
        root = sets.find(REFERENCE)
        first = next(
            (n for n in self.circuit.nodes if n != REFERENCE and sets.find(n) != root), None
        )
        if first is None:
            return None
        group_root = sets.find(first)
        return [n for n in self.circuit.nodes if sets.find(n) == group_root]

    def _elements_touching(self, nodes: list[str]) -> list[Element]:
        inside = set(nodes)
        return [e for e in self.circuit.elements.values() if inside.intersection(e.nodes)]

    def _error(
        self,
        element: Element,
        message: str,
        others: Sequence[Element] = (),
        notes: tuple[str, ...] = (),
    ) -> SymcircError:
        listed = others[:MAX_LISTED]
        more = [f"{e.name} is at line {e.location.line}" for e in listed]
        if len(others) > len(listed):
            more.append(f"and {len(others) - len(listed)} more elements")
        return SymcircError.at(
            element.location,
            message,
            self.circuit.source,
            (*self.origins.get(element.name, ()), *notes, *more),
        )


def _conducting_pairs(element: Element, include_current_sources: bool):
    """Node pairs an element joins for the purpose of a path to the reference."""
    kind = element.kind
    if kind == "noise current":  # an open circuit for signals
        return ()
    if element.entry.carries_current or kind == "noise voltage":  # the two-terminal kinds
        if kind == "current source" and not include_current_sources:
            return ()
        return (element.nodes,)
    if kind == "opamp":  # the output is a source referred to the reference node
        return ((element.nodes[2], REFERENCE),)
    if kind == "transformer":  # each winding joins its own two terminals only
        return ((element.nodes[0], element.nodes[1]), (element.nodes[2], element.nodes[3]))
    return ()


def _self_loop(element: Element, node: str) -> str:
    if element.kind == "opamp":
        return (f"the output of opamp {element.name} is the reference node {REFERENCE}: the "
                "output is a voltage source to the reference, so it would short itself")
    return (f"voltage source {element.name} has both terminals on node {node}: it forms "
            "a loop by itself")


def _source_name(element: Element) -> str:
    if element.kind == "opamp":
        return f"the output of opamp {element.name}"
    return f"voltage source {element.name}"


def _and(items: list[str]) -> str:
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " and " + items[-1]


def _path(edges: list[tuple[Element, str, str]], start: str, goal: str) -> list[Element]:
    """The elements on the path from start to goal in a forest of (element, a, b) edges."""
    adjacent: dict[str, list[tuple[str, Element]]] = {}
    for element, a, b in edges:
        adjacent.setdefault(a, []).append((b, element))
        adjacent.setdefault(b, []).append((a, element))
    came_from: dict[str, tuple[str, Element] | None] = {start: None}
    queue = deque([start])
    while queue:
        node = queue.popleft()
        if node == goal:
            break
        for neighbour, element in adjacent.get(node, ()):
            if neighbour not in came_from:
                came_from[neighbour] = (node, element)
                queue.append(neighbour)
    path: list[Element] = []
    step = came_from.get(goal)
    while step is not None:
        node, element = step
        path.append(element)
        step = came_from[node]
    return path


def _listing(names: list[str]) -> str:
    shown = ", ".join(names[:MAX_LISTED])
    if len(names) > MAX_LISTED:
        shown += f" and {len(names) - MAX_LISTED} more"
    return shown
