"""Independent numeric cross-checks of the exact engine.

1. `networkx.resistance_distance` against Z(port) on random resistor networks.
2. A nodal solve written here from the element list (complex floats, `numpy.linalg.solve`,
   resistors stamped as conductances: a different formulation from symcirc's engine)
   against node voltages and element currents of random circuits mixing every element
   kind, at random rational values of the symbols and of s.
"""

from __future__ import annotations

import random
from fractions import Fraction

import networkx
import numpy
import pytest

import symcirc
from symcirc.errors import SymcircError

# ---------------------------------------------------------------- resistor networks


def _random_resistor_network(rng: random.Random) -> tuple[str, dict, networkx.Graph]:
    """A connected random graph of resistors (parallel edges merged for networkx)."""
    n = rng.randint(3, 7)
    nodes = ["gnd"] + [f"n{i}" for i in range(1, n)]
    edges = [(nodes[i], nodes[rng.randrange(i)]) for i in range(1, n)]  # a spanning tree
    for _ in range(rng.randint(0, n + 2)):
        a, b = rng.sample(nodes, 2)
        edges.append((a, b))
    values = {}
    lines = []
    graph = networkx.Graph()
    graph.add_nodes_from(nodes)
    for k, (a, b) in enumerate(edges, 1):
        value = Fraction(rng.randint(1, 1000), rng.randint(1, 50))
        values[f"R{k}"] = value
        lines.append(f"resistor R{k} ({a}, {b})")
        conductance = 1 / value
        if graph.has_edge(a, b):  # parallel resistors: conductances add
            conductance += graph[a][b]["weight"]
        graph.add_edge(a, b, weight=float(conductance))
    a, b = rng.sample(nodes, 2)
    lines.append(f"port p ({a}, {b})")
    return "\n".join(lines) + "\n", values, graph


@pytest.mark.parametrize("seed", range(60))
def test_port_impedance_matches_networkx_resistance_distance(seed):
    rng = random.Random(seed)
    text, values, graph = _random_resistor_network(rng)
    circuit = symcirc.parse(text)
    port = circuit.ports["p"]
    result = circuit.impedance("p")
    exact = result.exact.evaluate(values)
    # networkx: effective resistance with edge weights as conductances (networkx >= 3.2)
    expected = networkx.resistance_distance(graph, port.positive, port.negative,
                                            weight="weight", invert_weight=False)
    assert float(exact) == pytest.approx(expected, rel=1e-9)


# ---------------------------------------------------------------- mixed circuits


class _Mixed:
    """A random circuit using every element kind, as text and as a list for the solver."""

    def __init__(self, rng: random.Random) -> None:
        self.rng = rng
        self.nodes = ["gnd"] + [f"n{i}" for i in range(1, rng.randint(4, 5))]
        self.lines: list[str] = []
        self.elements: list[tuple] = []  # (kind, name, nodes, extra)
        self.values: dict[str, Fraction] = {}
        self.sources_tree = {n: n for n in self.nodes}
        self.count = 0

    def value(self, name: str, low: int = 1, high: int = 100) -> str:
        self.values[name] = Fraction(self.rng.randint(low, high), self.rng.randint(1, 9))
        return name

    def pick(self, k: int = 2) -> list[str]:
        return self.rng.sample(self.nodes, k)

    def name(self, prefix: str) -> str:
        self.count += 1
        return f"{prefix}{self.count}"

    def add(self, kind: str, prefix: str, nodes: tuple, text_value: str = "", extra=None,
            written_nodes: str | None = None) -> str:
        name = self.name(prefix)
        shown = written_nodes or ", ".join(nodes)
        self.lines.append(f"{kind} {name} ({shown})" + (f" = {text_value}" if text_value else ""))
        self.elements.append((kind, name, nodes, extra))
        return name

    def find(self, n: str) -> str:
        while self.sources_tree[n] != n:
            n = self.sources_tree[n]
        return n

    def voltage_pair(self) -> tuple[str, str]:
        """Two nodes not yet joined by voltage-type elements (no source loops)."""
        for _ in range(50):
            a, b = self.pick()
            if self.find(a) != self.find(b):
                self.sources_tree[self.find(a)] = self.find(b)
                return a, b
        raise RuntimeError("no room for another voltage source")


def _mixed_circuit(rng: random.Random) -> _Mixed:
    m = _Mixed(rng)
    passive = [("resistor", "R"), ("capacitor", "C"), ("inductor", "L"), ("conductance", "G"),
               ("impedance", "Z"), ("admittance", "Y")]
    nodes = m.nodes
    for i in range(1, len(nodes)):  # a spanning tree of resistors keeps every node tied
        name = m.add("resistor", "R", (nodes[i], nodes[rng.randrange(i)]))
        m.value(name)
    for kind, prefix in passive:
        name = m.add(kind, prefix, tuple(m.pick()))
        m.value(name)
    # independent sources
    for kind, prefix in (("voltage source", "U"), ("current source", "J")):
        nodes_ = m.voltage_pair() if kind == "voltage source" else tuple(m.pick())
        m.value(m.add(kind, prefix, tuple(nodes_)))
    # controlled sources: VCVS, VCCS, CCVS, CCCS (current control through passive elements)
    # controlling currents through any two-terminal element or source, not only passive ones
    controllable = ("resistor", "capacitor", "inductor", "impedance", "voltage source",
                    "current source")
    controller, controller2 = (rng.choice([e[1] for e in m.elements if e[0] in controllable])
                               for _ in range(2))
    c, d = m.pick()
    k1 = m.name("k")
    m.values[k1] = Fraction(rng.choice([2, 3, 4, 5, 6, 8, 9]), 7)  # never 1: singular
    m.add("voltage source", "Uamp", m.voltage_pair(), f"{k1}*V({c}, {d})", ("V", k1, c, d))
    k2 = m.value(m.name("g"), 1, 5)
    c, d = m.pick()
    m.add("current source", "Igm", tuple(m.pick()), f"{k2}*V({c}, {d})", ("V", k2, c, d))
    k3 = m.value(m.name("r"), 1, 50)
    m.add("voltage source", "Urm", m.voltage_pair(), f"{k3}*I({controller})",
          ("I", k3, controller))
    k4 = m.value(m.name("b"), 1, 5)
    m.add("current source", "Ibeta", tuple(m.pick()), f"-{k4}*I({controller2})",
          ("I", -1, k4, controller2))
    # an ideal opamp as an inverting stage on new nodes, output tied back by a resistor
    src = rng.choice(nodes)
    m.nodes += ["x1", "o1"]
    m.value(m.add("resistor", "R", (src, "x1")))
    m.value(m.add("resistor", "R", ("x1", "o1")))
    m.add("opamp", "OA", ("gnd", "x1", "o1"))
    m.value(m.add("resistor", "R", ("o1", rng.choice(nodes[:-2] or ["gnd"]))))
    # a finite-gain opamp with a pole: gain A/(1 + s/w)
    gain, pole = m.value(m.name("A"), 10, 1000), m.value(m.name("w"), 1, 100)
    src = rng.choice(nodes[:4])
    m.nodes += ["x2", "o2"]
    m.value(m.add("resistor", "R", (src, "x2")))
    m.value(m.add("capacitor", "C", ("x2", "o2")))
    m.add("opamp", "OB", (src, "x2", "o2"), f"{gain}/(1 + s/{pole})", (gain, pole))
    m.value(m.add("resistor", "R", ("o2", "gnd")))
    # an ideal transformer with a loaded secondary
    p1, n1 = rng.sample(nodes[:4], 2)
    m.nodes += ["t2"]
    ratio = m.value(m.name("N"), 1, 9)
    m.lines.append(f"param {ratio}")
    t = m.name("T")
    m.lines.append(f"transformer {t} ({p1}, {n1}; t2, gnd) = {ratio}")
    m.elements.append(("transformer", t, (p1, n1, "t2", "gnd"), ratio))
    m.values[t] = m.values[ratio]  # results use the transformer's own symbol
    m.value(m.add("resistor", "R", ("t2", "gnd")))
    # two coupled inductors; L values are squares so that M = k*sqrt(La*Lb) is rational
    la = m.add("inductor", "L", tuple(rng.sample(nodes[:4], 2)))
    lb = m.add("inductor", "L", tuple(rng.sample(nodes[:4], 2)))
    for name in (la, lb):
        m.values[name] = Fraction(rng.randint(1, 9), rng.randint(1, 4)) ** 2
    k = m.name("kc")
    m.values[k] = Fraction(rng.randint(1, 9), 10)
    m.lines.append(f"coupling {k} ({la}, {lb})")
    m.elements.append(("coupling", k, (), (la, lb)))
    for name in (k1, k2, k3, k4, gain, pole):
        m.lines.insert(0, f"param {name}")
    m.values["s"] = Fraction(rng.randint(1, 50), rng.randint(1, 7))
    return m


def _sqrt(value: Fraction) -> Fraction:
    from math import isqrt

    root = Fraction(isqrt(value.numerator), isqrt(value.denominator))
    assert root * root == value
    return root


def _numeric_solve(m: _Mixed) -> tuple[dict[str, complex], dict[str, complex]]:
    """Node voltages and element currents by an independent textbook nodal analysis."""
    v = {k: float(x) for k, x in m.values.items()}
    s = v["s"]
    nodes = [n for n in m.nodes if n != "gnd"]
    index = {n: i for i, n in enumerate(nodes)}
    extra: dict[str, int] = {}  # branch-current unknowns
    for kind, name, _, data in m.elements:
        if kind in ("voltage source", "opamp", "transformer", "inductor") or \
                (kind == "current source" and data is not None):
            extra[name] = len(nodes) + len(extra)
    # the controlling element's current also gets an unknown when it is a passive element
    size = len(nodes) + len(extra)
    A = numpy.zeros((size, size), dtype=complex)
    b = numpy.zeros(size, dtype=complex)
    rows = iter(range(len(nodes), size))

    def admittance(kind, name):
        x = v.get(name)
        return {"resistor": lambda: 1 / x, "capacitor": lambda: s * x,
                "conductance": lambda: x, "impedance": lambda: 1 / x,
                "admittance": lambda: x}[kind]()

    couplings = {}
    for kind, name, _, extra_data in m.elements:
        if kind == "coupling":
            la, lb = extra_data
            mutual = v[name] * float(_sqrt(m.values[la] * m.values[lb]))
            couplings[(la, lb)] = couplings[(lb, la)] = mutual

    def current_terms(element) -> tuple[dict[int, complex], complex]:
        """I(element) as ({column: coefficient}, constant)."""
        kind, name, (a, bb), data = next(e for e in m.elements if e[1] == element)
        if name in extra:  # an element with its own current unknown
            return {extra[name]: 1}, 0
        if kind == "current source":  # independent: I(J) = -J by the sign rule
            return {}, -v[name]
        y = admittance(kind, name)
        out = {}
        if a != "gnd":
            out[index[a]] = y
        if bb != "gnd":
            out[index[bb]] = out.get(index[bb], 0) - y
        return out, 0

    row_of = {}
    for kind, name, nodes_, data in m.elements:
        if kind in ("resistor", "capacitor", "conductance", "impedance", "admittance"):
            a, bb = nodes_
            y = admittance(kind, name)
            for p in (a, bb):
                for q in (a, bb):
                    if p != "gnd" and q != "gnd":
                        A[index[p], index[q]] += y if p == q else -y
        elif kind == "current source" and data is None:  # independent: drives into a
            a, bb = nodes_
            if a != "gnd":
                b[index[a]] += v[name]
            if bb != "gnd":
                b[index[bb]] -= v[name]
        elif name in extra:
            col = extra[name]
            row = next(rows)
            row_of[name] = row
            if kind in ("voltage source", "inductor") or kind == "current source":
                a, bb = nodes_
                # the element's current leaves a and enters b
                if a != "gnd":
                    A[index[a], col] += 1
                if bb != "gnd":
                    A[index[bb], col] -= 1
            if kind == "inductor":
                a, bb = nodes_
                for p, sign in ((a, 1), (bb, -1)):
                    if p != "gnd":
                        A[row, index[p]] += sign
                A[row, col] -= s * v[name]
                for (x, y_), mutual in couplings.items():
                    if x == name:
                        A[row, extra[y_]] -= s * mutual
            elif kind == "voltage source":
                a, bb = nodes_
                for p, sign in ((a, 1), (bb, -1)):
                    if p != "gnd":
                        A[row, index[p]] += sign
                if data is None:
                    b[row] = v[name]
                elif data[0] == "V":
                    _, k, c, d = data
                    for p, sign in ((c, 1), (d, -1)):
                        if p != "gnd":
                            A[row, index[p]] -= sign * v[k]
                else:
                    _, k, controller = data
                    terms, constant = current_terms(controller)
                    for column, coefficient in terms.items():
                        A[row, column] -= v[k] * coefficient
                    b[row] += v[k] * constant
            elif kind == "current source":  # controlled: I(element) = -value
                A[row, col] += 1
                if data[0] == "V":
                    _, k, c, d = data
                    for p, sign in ((c, 1), (d, -1)):
                        if p != "gnd":
                            A[row, index[p]] += sign * v[k]
                else:
                    _, sign, k, controller = data
                    terms, constant = current_terms(controller)
                    for column, coefficient in terms.items():
                        A[row, column] += sign * v[k] * coefficient
                    b[row] -= sign * v[k] * constant
            elif kind == "opamp":
                p, n, o = nodes_
                A[index[o], col] -= 1  # output current delivered into node o
                if data is None:
                    for q, sign in ((p, 1), (n, -1)):
                        if q != "gnd":
                            A[row, index[q]] += sign
                else:
                    gain = v[data[0]] / (1 + s / v[data[1]])
                    A[row, index[o]] += 1
                    for q, sign in ((p, 1), (n, -1)):
                        if q != "gnd":
                            A[row, index[q]] -= sign * gain
            elif kind == "transformer":
                p1, n1, p2, n2 = nodes_
                ratio = v[name]
                for q, coefficient in ((p1, 1), (n1, -1), (p2, -ratio), (n2, ratio)):
                    if q != "gnd":
                        A[index[q], col] += coefficient
                        A[row, index[q]] += coefficient
    x = numpy.linalg.solve(A, b)
    voltages = {n: x[index[n]] for n in nodes}
    voltages["gnd"] = 0
    currents = {}
    for kind, name, nodes_, _ in m.elements:
        if name in extra:
            currents[name] = x[extra[name]]
        elif kind in ("resistor", "capacitor", "conductance", "impedance", "admittance"):
            a, bb = nodes_
            currents[name] = admittance(kind, name) * (voltages[a] - voltages[bb])
        elif kind == "current source":
            currents[name] = -v[name]
    return voltages, currents


@pytest.mark.parametrize("seed", range(50))
def test_mixed_circuit_matches_independent_numeric_nodal_solve(seed):
    rng = random.Random(1000 + seed)
    m = _mixed_circuit(rng)
    circuit = symcirc.parse("\n".join(m.lines) + "\n")
    voltages, currents = _numeric_solve(m)
    values = dict(m.values)
    for coupling in [e for e in m.elements if e[0] == "coupling"]:
        la, lb = coupling[3]
        values[f"M_{coupling[1]}"] = values[coupling[1]] * _sqrt(values[la] * values[lb])
    checked = 0
    for node in m.nodes[1:]:
        (result,) = circuit.derive(f"V({node})")
        exact = result.exact.evaluate({n: values[n] for n in result.symbols})
        assert complex(float(exact)) == pytest.approx(voltages[node], rel=1e-7, abs=1e-9)
        checked += 1
    for name, expected in currents.items():
        (result,) = circuit.derive(f"I({name})")
        exact = result.exact.evaluate({n: values[n] for n in result.symbols})
        assert complex(float(exact)) == pytest.approx(expected, rel=1e-7, abs=1e-9)
        checked += 1
    assert checked >= len(m.nodes)


def test_every_element_kind_is_in_the_mixed_circuits():
    kinds = {e[0] for seed in range(3) for e in _mixed_circuit(random.Random(seed)).elements}
    assert kinds == {"resistor", "capacitor", "inductor", "conductance", "impedance",
                     "admittance", "voltage source", "current source", "opamp", "transformer",
                     "coupling"}


def test_numeric_solver_agrees_on_a_hand_checked_divider():
    """The test's own solver on a divider (U*R2/(R1 + R2), common practice)."""
    m = _Mixed(random.Random(0))
    m.nodes = ["gnd", "a", "b"]
    m.elements = [("voltage source", "U", ("a", "gnd"), None),
                  ("resistor", "R1", ("a", "b"), None), ("resistor", "R2", ("b", "gnd"), None)]
    m.values = {"U": Fraction(10), "R1": Fraction(3), "R2": Fraction(2), "s": Fraction(1)}
    voltages, currents = _numeric_solve(m)
    assert voltages["b"] == pytest.approx(4)
    assert currents["U"] == pytest.approx(-2)  # flows from a through the source to gnd


def test_singular_random_circuit_is_reported_not_crashed():
    """An opamp whose output cannot reach its inputs: both solvers see a singular system."""
    text = ("voltage source U (a, gnd)\nresistor R1 (a, gnd)\nopamp X (a, gnd, o)\n"
            "resistor R2 (o, gnd)\n")
    circuit = symcirc.parse(text)
    with pytest.raises(SymcircError, match="opamp X"):
        circuit.derive("V(o)")
