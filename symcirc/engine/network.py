"""The circuit as the engine sees it: every element's value as exact polynomials of one ring.

Built once per circuit from the model (`symcirc.model.circuit.Circuit`) and shared by both
solution paths (spanning forests for passive networks, elimination for the rest).

Conventions fixed here (and stated in the results that depend on them):
- a passive element's value is its own symbol: R1, C1*s, L1*s, G1, Z1, Y1, each written as
  an admittance `y = inward / outward` with both parts polynomial (resistor 1/R, capacitor
  C*s/1, inductor 1/(L*s), conductance G/1, impedance 1/Z, admittance Y/1);
- an independent source's value is its own symbol (`Ub`); a controlled source is a linear
  combination of V(..) and I(..) with rational coefficients, plus an optional constant;
- an opamp's open-loop gain is its definition (`A0/(1 + s/wa)`), its symbol when it has
  only a number, or absent (ideal);
- a transformer `T1 (p1, n1; p2, n2)` of ratio N imposes V1 = N*V2 and I2 = -N*I1, where
  V1 = V(p1) - V(n1), V2 = V(p2) - V(n2) and I1, I2 flow into p1 and p2 (dots at p1, p2);
- coupled inductors have mutual inductance M_K = K*sqrt(L1*L2), held as its own symbol
  `M_<coupling>` (the square root is not polynomial) and substituted on request.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Literal

from ..algebra.convert import product_root_name
from ..algebra.formulas import atoms_in, function_of, names_in
from ..algebra.polynomials import LAPLACE_NAME, Poly, PolynomialRing
from ..algebra.rational import RationalFunction
from ..model.circuit import REFERENCE, Circuit, Element
from ..vocabulary import ImpedanceLaw
from .memo import Memo

if TYPE_CHECKING:  # pragma: no cover
    import sympy

    from ..model.formula import Formula


@dataclass(frozen=True)
class Branch:
    """A passive two-terminal element: admittance inward/outward between a and b."""

    name: str
    kind: str
    a: str
    b: str
    inward: Poly
    outward: Poly


@dataclass(frozen=True)
class VoltageControl:
    """coefficient * V(a, b)."""

    coefficient: RationalFunction
    a: str
    b: str


@dataclass(frozen=True)
class CurrentControl:
    """coefficient * I(element)."""

    coefficient: RationalFunction
    element: str


@dataclass(frozen=True)
class Source:
    """An independent or controlled source. `constant` is the independent part (the
    source's symbol for an independent source; None when a controlled source has none)."""

    name: str
    kind: Literal["voltage", "current"]
    a: str
    b: str
    controls: tuple[VoltageControl | CurrentControl, ...]
    constant: RationalFunction | None

    @property
    def independent(self) -> bool:
        return not self.controls


@dataclass(frozen=True)
class Opamp:
    """`opamp U (p, n, out)`: gain None is ideal (a nullor)."""

    name: str
    p: str
    n: str
    out: str
    gain: RationalFunction | None


@dataclass(frozen=True)
class Transformer:
    name: str
    p1: str
    n1: str
    p2: str
    n2: str
    ratio: Poly


@dataclass(frozen=True)
class Coupling:
    """Mutual inductance `mutual` (a ring symbol) between inductors `first` and `second`."""

    name: str
    first: str
    second: str
    mutual: str


@dataclass
class Network:
    """Every element of a circuit in engine terms, over one polynomial ring."""

    ring: PolynomialRing
    nodes: tuple[str, ...]
    """Nodes other than the reference, in the circuit's order."""
    branches: dict[str, Branch] = field(default_factory=dict)
    sources: dict[str, Source] = field(default_factory=dict)
    opamps: dict[str, Opamp] = field(default_factory=dict)
    transformers: dict[str, Transformer] = field(default_factory=dict)
    couplings: dict[str, Coupling] = field(default_factory=dict)
    atoms: dict[str, sympy.Expr] = field(default_factory=dict)
    """Irrational pieces held as ring variables (see algebra.convert)."""

    @property
    def is_passive(self) -> bool:
        """Only passive elements and independent sources: the spanning-forest path applies."""
        return (not self.opamps and not self.transformers and not self.couplings
                and all(s.independent for s in self.sources.values()))

    def excitations(self) -> dict[str, RationalFunction]:
        """Each independent excitation of the circuit and its value (sources' constants)."""
        return {name: s.constant for name, s in self.sources.items() if s.constant is not None}

    def coupling_of(self, inductor: str) -> list[Coupling]:
        return [c for c in self.couplings.values() if inductor in (c.first, c.second)]


def mutual_name(coupling: str, taken: set[str]) -> str:
    """`M_k12`, or with trailing underscores when the circuit already uses that name."""
    name = f"M_{coupling}"
    while name in taken:
        name += "_"
    return name


def build_network(circuit: Circuit, memo: Memo | None = None) -> Network:
    """The engine's view of `circuit` (kept in `memo` when one is given)."""
    if memo is None:
        return _build(circuit)
    store = memo.of(circuit)
    cached = store.get("network")
    if cached is None:
        cached = store["network"] = _build(circuit)
    return cached


def _build(circuit: Circuit) -> Network:
    taken = set(circuit.elements) | set(circuit.parameters)
    mutuals = {e.name: mutual_name(e.name, taken) for e in circuit.elements.values()
               if e.kind == "coupling"}
    names: set[str] = {LAPLACE_NAME, *mutuals.values()}
    for element in circuit.elements.values():
        if element.kind == "coupling":  # the names M = k·√(L1·L2) is written in, up front:
            first, second = element.coupled  # a large result then never changes rings
            names |= {element.name, first, second, product_root_name(first, second)}
    atoms: dict[str, sympy.Expr] = {}
    for element in circuit.elements.values():
        for value in _formulas(element):
            names |= names_in(value)
            atoms.update(atoms_in(value))
        if element.law is not None or element.kind == "transformer" or (
                element.is_source and not element.controls):
            names.add(element.name)
        if (element.kind == "opamp" and element.definition_formula is None
                and element.nominal is not None):
            names.add(element.name)
    ring = PolynomialRing(sorted(names))
    used = {n for e in circuit.elements.values() for n in e.nodes}
    used |= {n for p in circuit.ports.values() for n in (p.positive, p.negative)}
    nodes = tuple(n for n in circuit.nodes if n != REFERENCE and n in used)
    network = Network(ring, nodes, atoms=atoms)
    for element in circuit.elements.values():
        _add(network, element, mutuals)
    return network


def _admittance(ring: PolynomialRing, name: str, law: ImpedanceLaw) -> tuple[Poly, Poly]:
    """Y = 1/Z as (numerator, denominator) monomials for Z = x^value_power · s^s_power."""
    x, s = ring.gen(name), ring.gen(LAPLACE_NAME)
    numerator, denominator = ring.one, ring.one
    for generator, power in ((x, -law.value_power), (s, -law.s_power)):
        if power > 0:
            numerator = numerator * generator**power
        elif power < 0:
            denominator = denominator * generator**-power
    return numerator, denominator


def _formulas(element: Element) -> list[Formula]:
    """The model's values the engine uses directly for this element."""
    out = [c.coefficient_formula for c in element.controls]
    if element.controls and element.independent_formula is not None:
        out.append(element.independent_formula)
    if element.kind == "opamp" and element.definition_formula is not None:
        out.append(element.definition_formula)
    return out


def _add(network: Network, element: Element, mutuals: dict[str, str]) -> None:
    """Enter one element into the network the way its kind's `stamp` says."""
    ring = network.ring
    kind, name, nodes = element.kind, element.name, element.nodes
    stamp = element.entry.stamp
    if element.law is not None:
        inward, outward = _admittance(ring, name, element.law)
        network.branches[name] = Branch(name, kind, nodes[0], nodes[1], inward, outward)
    elif stamp in ("voltage source", "current source"):
        controls: list[VoltageControl | CurrentControl] = []
        for control in element.controls:
            coefficient = function_of(control.coefficient_formula, ring)
            if control.kind == "voltage":
                controls.append(VoltageControl(coefficient, *control.nodes))
            else:
                controls.append(CurrentControl(coefficient, control.element))
        if element.controls:
            constant = (function_of(element.independent_formula, ring)
                        if element.independent_formula is not None else None)
        else:
            constant = RationalFunction.symbol(name, ring)
        network.sources[name] = Source(name, "voltage" if stamp == "voltage source" else "current",
                                       nodes[0], nodes[1], tuple(controls), constant)
    elif stamp == "noise voltage":  # a short for signals: a source of no value of its own
        network.sources[name] = Source(name, "voltage", nodes[0], nodes[1], (), None)
    elif stamp == "opamp":
        if element.definition_formula is not None:
            gain = function_of(element.definition_formula, ring)
        elif element.nominal is not None:
            gain = RationalFunction.symbol(name, ring)
        else:
            gain = None
        network.opamps[name] = Opamp(name, *nodes, gain)
    elif stamp == "transformer":
        network.transformers[name] = Transformer(name, *nodes, ring.gen(name))
    elif stamp == "coupling":
        first, second = element.coupled
        network.couplings[name] = Coupling(name, first, second, mutuals[name])
    # a noise current is an open circuit for signals: nothing to enter
