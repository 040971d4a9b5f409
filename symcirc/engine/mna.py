"""Modified nodal analysis in s, every entry a polynomial, solved by fraction-free elimination.

Unknowns are node voltages and the currents the nodal form cannot express: of every
impedance-type element (resistor, inductor, impedance: its row `V(a) - V(b) = Z*I` keeps
1/R out of the matrix), of voltage sources, controlled current sources, opamp outputs,
transformer primaries, and of shorted test ports. Admittance-type elements (capacitor,
conductance, admittance) are stamped into the current balances. Rows with rational
coefficients (controlled sources, finite-gain opamps) are multiplied by their common
denominator. Every unknown `("I", E)` is the current of E by the language's sign rule
(from its first terminal through it to its second), except an opamp's, which is the
current its output delivers into its output node.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass

from ..algebra.polynomials import LAPLACE_NAME, AlgebraError, Poly
from ..algebra.rational import RationalFunction
from ..model.circuit import REFERENCE
from . import eliminate
from .network import Branch, CurrentControl, Network, Source, VoltageControl

Unknown = tuple[str, str]
"""("V", node) or ("I", element); test ports' shorts are ("I", "port:NAME")."""

Key = tuple[str, str]
"""An unknown, or ("exc", excitation) for a known excitation inside a linear form."""


def port_excitation(port: str) -> str:
    """Name of the test excitation at a port (cannot clash: `:` is not allowed in names)."""
    return f"port:{port}"


@dataclass(frozen=True)
class Voltage:
    """The measure V(a) - V(b)."""

    a: str
    b: str


@dataclass(frozen=True)
class Current:
    """The measure I(element) (or the current through a shorted test port `port:NAME`)."""

    element: str


Measure = Voltage | Current


@dataclass(frozen=True)
class Row:
    """What an equation says, for messages: a description and the elements it involves."""

    says: str
    elements: tuple[str, ...]


class SingularCircuit(AlgebraError):
    """The circuit's equations have no unique solution; `elements` are the likely culprits."""

    def __init__(self, message: str, elements: tuple[str, ...] = (),
                 notes: tuple[str, ...] = ()) -> None:
        super().__init__(message, notes=notes)
        self.elements = elements


class Equations:
    """The MNA system of a network, with shorted test ports and test currents at others.

    `shorted` and `tested` map port names to their (positive, negative) nodes: a shorted
    port gets a zero-ohm test voltage source (excitation `port:NAME`, current
    ("I", "port:NAME") from its first node through the short to its second); a tested port
    gets a test current (excitation `port:NAME`) driven into its first node.
    """

    def __init__(self, network: Network, shorted: Mapping[str, tuple[str, str]] = {},
                 tested: Mapping[str, tuple[str, str]] = {}) -> None:
        self.network = network
        self.ring = network.ring
        self.unknowns: list[Unknown] = []
        self.index: dict[Unknown, int] = {}
        self.rows: list[dict[int, Poly]] = []
        self.about: list[Row] = []
        self.rhs: dict[str, dict[int, Poly]] = {}
        self._assemble(shorted, tested)

    # -- building blocks
    def _unknown(self, key: Unknown) -> int:
        if key not in self.index:
            self.index[key] = len(self.unknowns)
            self.unknowns.append(key)
        return self.index[key]

    def _row(self, says: str, elements: Iterable[str]) -> int:
        self.rows.append({})
        self.about.append(Row(says, tuple(elements)))
        return len(self.rows) - 1

    def _add(self, row: int, key: Key, value: Poly) -> None:
        """Add value * key to the left side of `row` (an excitation moves to the right)."""
        if key[0] == "V" and key[1] not in self._node_row:
            return  # the reference node
        if key[0] == "exc":
            column = self.rhs.setdefault(key[1], {})
            total = column.get(row, self.ring.zero) - value
            column[row] = total
            return
        column = self._unknown(key)
        entries = self.rows[row]
        total = entries.get(column, self.ring.zero) + value
        if self.ring.is_zero(total):
            entries.pop(column, None)
        else:
            entries[column] = total

    def _inject(self, excitation: str, node: str, value: Poly) -> None:
        """Current `value` (per unit of the excitation) driven into `node`."""
        row = self._node_row.get(node)
        if row is not None:
            column = self.rhs.setdefault(excitation, {})
            column[row] = column.get(row, self.ring.zero) + value

    def _leaves(self, node: str, key: Key, value: Poly) -> None:
        """value * key is a current leaving `node` through an element."""
        row = self._node_row.get(node)
        if row is not None:
            self._add(row, key, value)

    # -- assembly
    def _assemble(self, shorted: Mapping[str, tuple[str, str]],
                  tested: Mapping[str, tuple[str, str]]) -> None:
        network, ring = self.network, self.ring
        one = ring.one
        self._node_row: dict[str, int] = {}
        for node in network.nodes:
            self._unknown(("V", node))
            touching = self._touching(node)
            self._node_row[node] = self._row(f"the current balance at node {node}", touching)
        for branch in network.branches.values():
            self._branch(branch)
        for source in network.sources.values():
            self._source(source)
        for opamp in network.opamps.values():
            key = ("I", opamp.name)
            self._leaves(opamp.out, key, -one)
            row = self._row(f"the input condition of opamp {opamp.name}", (opamp.name,))
            if opamp.gain is None:  # nullor: V(p) = V(n)
                self._add(row, ("V", opamp.p), one)
                self._add(row, ("V", opamp.n), -one)
            else:  # den * V(out) = num * (V(p) - V(n))
                num, den = opamp.gain.numerator, opamp.gain.denominator
                self._unknown(key)
                self._add(row, ("V", opamp.out), den)
                self._add(row, ("V", opamp.p), -num)
                self._add(row, ("V", opamp.n), num)
            self._unknown(key)
        for t in network.transformers.values():
            key = ("I", t.name)
            self._leaves(t.p1, key, one)
            self._leaves(t.n1, key, -one)
            self._leaves(t.p2, key, -t.ratio)
            self._leaves(t.n2, key, t.ratio)
            row = self._row(f"the winding voltages of transformer {t.name}", (t.name,))
            for node, sign in ((t.p1, one), (t.n1, -one), (t.p2, -t.ratio), (t.n2, t.ratio)):
                self._add(row, ("V", node), sign)
            self._unknown(key)
        for port, (a, b) in shorted.items():
            key = ("I", port_excitation(port))
            self._leaves(a, key, one)
            self._leaves(b, key, -one)
            row = self._row(f"the short across port {port}", ())
            self._add(row, ("V", a), one)
            self._add(row, ("V", b), -one)
            self._add(row, ("exc", port_excitation(port)), -one)
            self._unknown(key)
        for port, (a, b) in tested.items():
            self._inject(port_excitation(port), a, one)
            self._inject(port_excitation(port), b, -one)

    def _touching(self, node: str) -> list[str]:
        n = self.network
        out = [b.name for b in n.branches.values() if node in (b.a, b.b)]
        out += [s.name for s in n.sources.values() if node in (s.a, s.b)]
        out += [o.name for o in n.opamps.values() if node in (o.p, o.n, o.out)]
        out += [t.name for t in n.transformers.values() if node in (t.p1, t.n1, t.p2, t.n2)]
        return out

    def needs_current(self, branch: Branch) -> bool:
        """True when a branch gets its own current unknown (impedance type, or coupled)."""
        return (not self.ring.is_constant(branch.outward)
                or bool(self.network.coupling_of(branch.name)))

    def _branch(self, branch: Branch) -> None:
        ring = self.ring
        if not self.needs_current(branch):  # admittance stamp: y = inward
            y = branch.inward
            self._leaves(branch.a, ("V", branch.a), y)
            self._leaves(branch.a, ("V", branch.b), -y)
            self._leaves(branch.b, ("V", branch.a), -y)
            self._leaves(branch.b, ("V", branch.b), y)
            return
        key = ("I", branch.name)
        self._leaves(branch.a, key, ring.one)
        self._leaves(branch.b, key, -ring.one)
        couplings = self.network.coupling_of(branch.name)
        row = self._row(f"the voltage of {branch.kind} {branch.name}",
                        (branch.name, *(c.name for c in couplings)))
        self._add(row, ("V", branch.a), branch.inward)
        self._add(row, ("V", branch.b), -branch.inward)
        self._add(row, key, -branch.outward)
        s = ring.gen(LAPLACE_NAME)
        for c in couplings:
            other = c.second if c.first == branch.name else c.first
            self._add(row, ("I", other), -s * ring.gen(c.mutual))
        self._unknown(key)

    def _source(self, source: Source) -> None:
        ring = self.ring
        one = ring.one
        key = ("I", source.name)
        if source.kind == "current" and source.independent:
            # drives its value into node a, draws it from node b
            self._inject(source.name, source.a, one)
            self._inject(source.name, source.b, -one)
            return
        self._leaves(source.a, key, one)
        self._leaves(source.b, key, -one)
        scale = one
        for control in source.controls:  # least common multiple of the denominators
            den = control.coefficient.denominator
            scale = ring.exquo(scale * den, ring.gcd(scale, den))
        what = "controlled source" if source.controls else "source"
        row = self._row(f"the value of {source.kind} {what} {source.name}",
                        (source.name, *(c.element for c in source.controls
                                        if isinstance(c, CurrentControl))))
        if source.kind == "voltage":  # V(a) - V(b) = value
            self._add(row, ("V", source.a), scale)
            self._add(row, ("V", source.b), -scale)
        else:  # I(source) = -value: the source drives its value into node a
            self._add(row, key, scale)
        sign = -one if source.kind == "voltage" else one
        for control in source.controls:
            factor = ring.exquo(scale, control.coefficient.denominator) \
                * control.coefficient.numerator * sign
            for k, v in self.control_form(control).items():
                self._add(row, k, factor * v)
        if source.constant is not None:  # the excitation's value is the constant itself
            self._add(row, ("exc", source.name), sign * scale)
        self._unknown(key)

    # -- linear forms of measures
    def control_form(self, control: VoltageControl | CurrentControl) -> dict[Key, Poly]:
        """The controlling quantity (without its coefficient) as a polynomial linear form."""
        if isinstance(control, VoltageControl):
            return self._difference(control.a, control.b, self.ring.one)
        return self.current_form(control.element)

    def _difference(self, a: str, b: str, weight: Poly) -> dict[Key, Poly]:
        """weight * (V(a) - V(b)) as a linear form (the reference node drops out)."""
        form: dict[Key, Poly] = {}
        for node, value in ((a, weight), (b, -weight)):
            if node in self._node_row:
                form[("V", node)] = form.get(("V", node), self.ring.zero) + value
        return {k: v for k, v in form.items() if not self.ring.is_zero(v)}

    def current_form(self, element: str) -> dict[Key, Poly]:
        """I(element) as a linear form in unknowns and excitations (polynomial coefficients)."""
        ring = self.ring
        network = self.network
        branch = network.branches.get(element)
        if branch is not None and not self.needs_current(branch):
            return self._difference(branch.a, branch.b, branch.inward)
        source = network.sources.get(element)
        if source is not None and source.kind == "current" and source.independent:
            return {("exc", element): -ring.one}
        return {("I", element): ring.one}

    def measure_form(self, measure: Measure) -> dict[Key, Poly]:
        if isinstance(measure, Voltage):
            return self._difference(measure.a, measure.b, self.ring.one)
        return self.current_form(measure.element)

    # -- solving
    def solve(self) -> MnaSolution:
        """A solution that eliminates the system for each unknown asked about."""
        return MnaSolution(self)

    def solve_for(self, unknown: int) -> dict[str, Callable[[], RationalFunction]]:
        """One unknown per unit of every excitation (elimination keeps it for last), each
        brought to lowest terms when first called."""
        names = list(self.rhs)
        columns = [self.rhs[name] for name in names]
        try:
            solved = eliminate.solve_one(self.rows, columns, unknown, self.ring)
        except eliminate.SingularSystem as singular:
            raise self.diagnose(singular) from None
        return dict(zip(names, solved, strict=True))

    def check(self) -> None:
        """Raise SingularCircuit when the system has no unique solution."""
        if not self.unknowns:
            return
        try:
            eliminate.solve(self.rows, [], [0], self.ring)
        except eliminate.SingularSystem as singular:
            raise self.diagnose(singular) from None

    def diagnose(self, singular: eliminate.SingularSystem) -> SingularCircuit:
        """A message naming the likely cause of a singular system."""
        rows = [self.about[r] for r in getattr(singular, "rows", ()) if r < len(self.about)]
        columns = [self.unknowns[c] for c in getattr(singular, "columns", ())
                   if c < len(self.unknowns)]
        network = self.network
        opamps = [k[1] for k in columns if k[0] == "I" and k[1] in network.opamps]
        opamps += [e for r in rows for e in r.elements if e in network.opamps and e not in opamps]
        if len(opamps) > 1:
            # prefer the opamps whose output node's current balance is among the dependent
            # equations: an opamp with feedback only shares its inputs with the culprit
            outputs = {f"the current balance at node {network.opamps[o].out}": o for o in opamps}
            culprits = [outputs[r.says] for r in rows if r.says in outputs]
            opamps = culprits or opamps
        if opamps:
            names = list(dict.fromkeys(opamps))
            subject = (f"opamp {names[0]} has" if len(names) == 1
                       else f"opamps {', '.join(names)} have")
            return SingularCircuit(
                f"the circuit's equations have no unique solution: {subject} no feedback from "
                "output to inputs (or inputs held apart by sources), so the output voltage is "
                "not determined",
                tuple(names),
                ("an ideal opamp needs a path from its output back to an input; give it "
                 "feedback, or a finite gain (`opamp U (p, n, o) = A`)",))
        involved_all = tuple(dict.fromkeys(e for r in rows for e in r.elements))
        controlled = [e for e in involved_all
                      if e in network.sources and network.sources[e].controls]
        if controlled:
            controllers, through = [], []
            for name in controlled:
                for control in network.sources[name].controls:
                    if isinstance(control, CurrentControl):
                        controllers.append(f"I({control.element})")
                        through.append(control.element)
                    elif control.b == REFERENCE:
                        controllers.append(f"V({control.a})")
                    else:
                        controllers.append(f"V({control.a}, {control.b})")
            subject = (f"controlled source {controlled[0]} makes" if len(controlled) == 1
                       else "controlled sources " + ", ".join(controlled) + " make")
            return SingularCircuit(
                f"the circuit's equations have no unique solution: {subject} them "
                f"dependent (a value set by {', '.join(dict.fromkeys(controllers))} that "
                "cancels what it is connected to: for example a voltage source that equals "
                "its own voltage, or a current source that cancels the current it copies)",
                tuple(dict.fromkeys([*controlled, *(e for e in through if e in involved_all)])),
                ("check the controlled source's coefficient and the direction of its control",))
        floating = [k[1] for k in columns if k[0] == "V"]
        involved = tuple(dict.fromkeys(e for r in rows for e in r.elements))
        if floating:
            shown = ", ".join(floating[:8]) + (" ..." if len(floating) > 8 else "")
            return SingularCircuit(
                f"the circuit's equations have no unique solution: the voltage of node "
                f"{shown} is not fixed (a floating part of the circuit, or one joined to "
                "the rest only through opamp inputs, current sources or transformer "
                "windings)", involved)
        currents = [k[1] for k in columns if k[0] == "I"]
        if currents:
            shown = ", ".join(c.removeprefix("port:") for c in currents[:8])
            loop = [e for e in involved if e in network.transformers
                    or (e in network.sources and network.sources[e].kind == "voltage")]
            among = f" among {', '.join(loop)}" if loop else ""
            return SingularCircuit(
                f"the circuit's equations have no unique solution: the current of {shown} "
                f"is not determined (a loop of voltage sources, transformer windings or "
                f"shorts{among})", tuple(loop) or involved)
        listed = ", ".join(involved[:8]) or "the circuit"
        return SingularCircuit(
            f"the circuit's equations have no unique solution; the equations of {listed} "
            "are dependent", involved)


class MnaSolution:
    """Measures per unit of each excitation; each unknown is solved for when first needed."""

    def __init__(self, equations: Equations) -> None:
        self.equations = equations
        self.ring = equations.ring
        self._solved: dict[int, dict[str, Callable[[], RationalFunction]]] = {}

    def check(self) -> None:
        self.equations.check()

    def unknown(self, index: int, excitation: str) -> RationalFunction:
        if index not in self._solved:
            self._solved[index] = self.equations.solve_for(index)
        value = self._solved[index].get(excitation)
        return value() if value is not None else RationalFunction(0, 1, self.ring, canonical=True)

    def transfer(self, measure: Measure, excitation: str) -> RationalFunction:
        """The measure per unit of `excitation`, every other excitation zero."""
        eq = self.equations
        total = RationalFunction(0, 1, self.ring, canonical=True)
        for key, coefficient in eq.measure_form(measure).items():
            if key[0] == "exc":
                if key[1] == excitation:
                    total = total + RationalFunction(coefficient, 1, self.ring)
                continue
            if excitation not in eq.rhs:
                continue
            value = self.unknown(eq.index[key], excitation)
            total = total + value * RationalFunction(coefficient, 1, self.ring)
        return total
