"""The circuit seen as an engineer reduces it: a multigraph of two-terminal impedances.

Independent sources are handled by the caller (shorted, opened or kept as the driving
source); every other element that is not a passive two-terminal part is an *active* edge:
if one lies on the part of the network that matters, structural reduction gives up and the
nodal equations take over.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import sympy

from ..model.circuit import REFERENCE, Circuit


@dataclass
class Branch:
    """A two-terminal impedance between nodes `a` and `b`."""

    a: str
    b: str
    label: sympy.Expr
    """What the steps call it: an element's impedance (`R1`, `1/(s·C1)`) or an intermediate
    symbol (`R12`)."""
    form: sympy.Expr
    """Its design form in element symbols (`R1∥R2`)."""
    parts: tuple[str, ...]
    """Names of the elements it was made from (for naming intermediates)."""
    resistive: bool
    """True when made of resistors only (names start with R then)."""

    def other(self, node: str) -> str:
        return self.b if node == self.a else self.a


@dataclass
class Network:
    """Branches keyed by an integer id, with an adjacency index."""

    branches: dict[int, Branch] = field(default_factory=dict)
    adjacent: dict[str, set[int]] = field(default_factory=dict)
    active: list[tuple[str, str, str]] = field(default_factory=list)
    """Edges of elements that are not passive two-terminal parts: (name, node, node)."""
    next_id: int = 0

    def add(self, branch: Branch) -> int:
        key = self.next_id
        self.next_id += 1
        self.branches[key] = branch
        self.adjacent.setdefault(branch.a, set()).add(key)
        self.adjacent.setdefault(branch.b, set()).add(key)
        return key

    def remove(self, key: int) -> Branch:
        branch = self.branches.pop(key)
        self.adjacent[branch.a].discard(key)
        self.adjacent[branch.b].discard(key)
        return branch

    def degree(self, node: str) -> int:
        return len(self.adjacent.get(node, ()))

    def nodes(self) -> list[str]:
        return [n for n, keys in self.adjacent.items() if keys]

    def copy(self) -> Network:
        out = Network(active=list(self.active), next_id=self.next_id)
        out.branches = dict(self.branches)
        out.adjacent = {n: set(k) for n, k in self.adjacent.items()}
        return out

    def contracted(self, keep: str, drop: str) -> Network:
        """A copy with node `drop` joined to `keep` (a short); branches from one to the
        other are shorted out and dropped."""
        out = Network(
            active=[
                (name, keep if x == drop else x, keep if y == drop else y)
                for name, x, y in self.active
            ],
            next_id=self.next_id,
        )
        for key, branch in self.branches.items():
            a = keep if branch.a == drop else branch.a
            b = keep if branch.b == drop else branch.b
            if a == b:
                continue
            moved = replace(branch, a=a, b=b)
            out.branches[key] = moved
            out.adjacent.setdefault(a, set()).add(key)
            out.adjacent.setdefault(b, set()).add(key)
        return out

    def restricted(self, keys: set[int]) -> Network:
        """A network with only the branches `keys` (ids kept)."""
        out = Network(next_id=self.next_id)
        for key in sorted(keys):
            branch = self.branches[key]
            out.branches[key] = branch
            out.adjacent.setdefault(branch.a, set()).add(key)
            out.adjacent.setdefault(branch.b, set()).add(key)
        return out


class Contraction:
    """Union-find of nodes joined by shorts; the reference node represents its group."""

    def __init__(self, nodes: tuple[str, ...]) -> None:
        self.order = {n: i for i, n in enumerate(nodes)}
        self.parent = {n: n for n in nodes}

    def find(self, node: str) -> str:
        while self.parent[node] != node:
            self.parent[node] = self.parent[self.parent[node]]
            node = self.parent[node]
        return node

    def join(self, a: str, b: str) -> None:
        ra, rb = self.find(a), self.find(b)
        if ra == rb:
            return
        keep, drop = sorted((ra, rb), key=lambda n: (n != REFERENCE, self.order.get(n, 0)))
        self.parent[drop] = keep


def build(
    circuit: Circuit, shorted: set[str], opened: set[str]
) -> tuple[Network, Contraction, list[str]]:
    """The network with the sources in `shorted` set to zero volts and those in `opened` to
    zero amperes. Returns it, the node contraction, and the names of passive elements that a
    short puts out of circuit (both ends on one node)."""
    contraction = Contraction(circuit.nodes)
    for name in shorted:
        contraction.join(*circuit.elements[name].nodes[:2])
    network = Network()
    out_of_circuit: list[str] = []
    coupled = {
        n for e in circuit.elements.values() if e.kind == "coupling" for n in (e.coupled or ())
    }
    for element in circuit.elements.values():
        if element.name in shorted or element.name in opened:
            continue
        nodes = [contraction.find(n) for n in element.nodes]
        if element.law is not None and element.name not in coupled:
            a, b = nodes
            if a == b:
                out_of_circuit.append(element.name)
                continue
            z = element.impedance
            network.add(Branch(a, b, z, z, (element.name,), element.kind == "resistor"))
        elif element.kind == "opamp":
            network.active.append((element.name, nodes[2], contraction.find(REFERENCE)))
        elif element.kind == "transformer":
            network.active.append((element.name, nodes[0], nodes[1]))
            network.active.append((element.name, nodes[2], nodes[3]))
        elif element.law is not None:  # a coupled inductor
            network.active.append((element.name, nodes[0], nodes[1]))
        elif element.is_source:
            network.active.append((element.name, nodes[0], nodes[1]))
    return network, contraction, out_of_circuit


def block(network: Network, a: str, b: str) -> tuple[set[int], list[str]]:
    """Branches and active elements that can carry current between `a` and `b`.

    That is the biconnected component holding a virtual edge a–b: any other part hangs on
    the network by a single node and carries no current for a source at a–b.
    """
    edges: list[tuple[str, str, object]] = [
        (br.a, br.b, key) for key, br in network.branches.items()
    ]
    edges += [(x, y, ("active", name)) for name, x, y in network.active if x != y]
    virtual = ("virtual",)
    edges.append((a, b, virtual))
    for component in _biconnected(edges):
        if virtual in component:
            keys = {k for k in component if isinstance(k, int)}
            names = sorted({k[1] for k in component if isinstance(k, tuple) and k[0] == "active"})
            return keys, names
    return set(), []


def _biconnected(edges: list[tuple[str, str, object]]) -> list[set[object]]:
    """Edge sets of the biconnected components (iterative Hopcroft–Tarjan)."""
    incident: dict[str, list[tuple[str, object]]] = {}
    for x, y, key in edges:
        incident.setdefault(x, []).append((y, key))
        incident.setdefault(y, []).append((x, key))
    discovered: dict[str, int] = {}
    low: dict[str, int] = {}
    components: list[set[object]] = []
    stack: list[object] = []
    for root in incident:
        if root in discovered:
            continue
        discovered[root] = low[root] = 0
        counter = 1
        work = [(root, None, iter(incident[root]))]
        while work:
            node, via, it = work[-1]
            advanced = False
            for nxt, key in it:
                if key == via:
                    continue
                if nxt not in discovered:
                    discovered[nxt] = low[nxt] = counter
                    counter += 1
                    stack.append(key)
                    work.append((nxt, key, iter(incident[nxt])))
                    advanced = True
                    break
                if discovered[nxt] < discovered[node]:
                    stack.append(key)
                    low[node] = min(low[node], discovered[nxt])
            if advanced:
                continue
            work.pop()
            if work:
                parent = work[-1][0]
                low[parent] = min(low[parent], low[node])
                if low[node] >= discovered[parent]:
                    component: set[object] = set()
                    while True:
                        key = stack.pop()
                        component.add(key)
                        if key == via:
                            break
                    components.append(component)
    return components
