"""Solved systems of a circuit, cached per circuit and per set of shorted ports.

A *solution* answers `transfer(measure, excitation)`: a node-voltage difference or an
element current per unit of one excitation, every other excitation zero. Excitations are
the independent sources (and controlled sources' constant parts), named after their
source, and a test excitation `port:NAME` at every port: a test current driven into the
port's first node when the port is open, a test voltage when it is shorted.

Passive networks are solved topologically (engine.topological: spanning-forest sums, no
cancellation), and so are networks whose only active elements are current sources
controlled by voltages or by passive elements' currents, and ideal transformers
(engine.controlled: the same sums signed by the two-graph method); everything else by
elimination (engine.mna), though the forest path takes opamps, controlled voltage
sources, coupled inductors and controls by a voltage source's current when asked.
All give the same canonical functions; `path` forces one (for tests and benchmarks).
Every active network's determinant is bounded first, and one too large is refused.
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import Literal, Protocol

from ..algebra.rational import RationalFunction
from ..model.circuit import Circuit
from . import controlled
from .memo import Memo
from .mna import Equations, Measure, MnaSolution
from .network import Network, build_network

Path = Literal["forest", "elimination"]


class Solution(Protocol):
    ring: object

    def check(self) -> None:
        """Raise mna.SingularCircuit when the circuit has no unique solution."""

    def transfer(self, measure: Measure, excitation: str) -> RationalFunction: ...


def solution(circuit: Circuit, shorted: Iterable[str] = (), path: Path | None = None,
             memo: Memo | None = None) -> Solution:
    """The solved system of `circuit` with the ports in `shorted` short-circuited (kept in
    `memo` when one is given)."""
    shorted = frozenset(shorted)
    memo = memo if memo is not None else Memo()
    network = build_network(circuit, memo)
    store = memo.of(circuit)
    chosen = path
    if not network.is_passive:  # refuses a network too large, before the work
        if ("terms bound", shorted) not in store:
            store[("terms bound", shorted)] = _bound(circuit, network, shorted)
        if chosen is None:
            if "default path" not in store:
                store["default path"] = "forest" if _forest_wins(network) else "elimination"
            chosen = store["default path"]
    chosen = chosen or "forest"
    key = ("solution", shorted, chosen)
    cached = store.get(key)
    if cached is None:
        cached = store[key] = _solve(circuit, network, shorted, chosen)
    return cached


def _solve(circuit: Circuit, network: Network, shorted: frozenset[str], path: Path) -> Solution:
    ports = {name: (p.positive, p.negative) for name, p in circuit.ports.items()}
    short = {p: ports[p] for p in sorted(shorted)}
    tested = {p: ab for p, ab in ports.items() if p not in shorted}

    def eliminate() -> MnaSolution:
        return Equations(network, short, tested).solve()

    if path == "forest":
        if network.is_passive:
            from .topological import ForestSolution

            return ForestSolution(network, short, tested, eliminate)
        two_graph = controlled.controls_of(network)
        if two_graph is None:
            raise ValueError("the spanning-forest path needs a network without controls by "
                             "a current source's current, controls reading each other in "
                             "a circle, blocks of more than "
                             f"{controlled.bordered.MAX_BLOCK} coupled unknown currents, or "
                             f"more than {controlled.MAX_CONTROLS} controls")
        return controlled.ControlledForestSolution(network, short, tested, eliminate,
                                                   two_graph)
    return eliminate()


def _forest_wins(network: Network) -> bool:
    """The path measured faster (`tests/perf/bench_engine.py --active`, engine CPU time):
    forest sums for controlled current sources and ideal transformers, elimination when
    an opamp, a controlled voltage source, a coupling or a read voltage source's current
    is present.

    Forest against elimination, one transfer / every node voltage per source:
    common-emitter stages k = 4 (231,932 terms) 0.078 / 1.18 s against 0.34 / 3.8 s; a
    ladder of 8 controlled sections 0.013 / 0.065 s against 1.75 / 2.55 s (from 9
    sections only the forest sums finish); 5 RC sections coupled by transformers 0.0034 /
    0.084 s against 0.0040 / 0.107 s. With opamps elimination solves an output in one
    pivot and each further output from the same elimination: 8 finite-gain inverting
    stages (390,626 terms) 0.11 / 0.28 s against 0.073 / 1.15 s, 5 Sallen-Key sections
    0.0020 / 0.025 s against 0.0049 / 0.035 s, the three-opamp instrumentation amplifier
    0.0020 / 0.013 s against 0.0026 / 0.020 s; 6 coupled resonators 0.020 / 0.082 s
    against 0.082 / 0.236 s."""
    two_graph = controlled.controls_of(network)
    if two_graph is None or network.opamps or network.couplings:
        return False
    if any(s.kind == "voltage" and not s.independent for s in network.sources.values()):
        return False
    return all(b.element in network.transformers for b in two_graph.borders)


def _bound(circuit: Circuit, network: Network, shorted: frozenset[str]) -> int:
    """engine.controlled.terms_bound with `shorted` ports (0 when it does not apply)."""
    pairs = [(circuit.ports[p].positive, circuit.ports[p].negative) for p in sorted(shorted)]
    bound = controlled.terms_bound(network, pairs)
    return 0 if bound is None else bound
