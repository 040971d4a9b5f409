"""Controlled current sources on the spanning-forest path (engine.controlled).

The forest path and elimination must give identical canonical functions on every network
the forest path takes; both are checked against a nodal solve written here with numpy
(`numpy.linalg.solve` at random values: an independent computation) and against the
textbook gain of a common-emitter stage.
"""

from __future__ import annotations

import random
from fractions import Fraction

import numpy
import pytest
import sympy

import symcirc
from symcirc.engine.controlled import ControlledForestSolution, controls_of
from symcirc.engine.mna import Current, MnaSolution, Voltage, port_excitation
from symcirc.engine.network import build_network
from symcirc.engine.system import solution

PASSIVE = ("resistor", "capacitor", "conductance")


def _random_active(rng: random.Random) -> tuple[str, list[tuple]]:
    """A connected random network of resistors, capacitors and conductances with one to
    three controlled current sources (by a voltage, or by a passive element's current),
    an independent voltage source, an independent current source and a port; also the
    elements as a list for the numeric solve."""
    n = rng.randint(3, 6)
    nodes = ["gnd"] + [f"n{i}" for i in range(1, n)]
    lines: list[str] = []
    elements: list[tuple] = []
    edges = [(nodes[i], nodes[rng.randrange(i)]) for i in range(1, n)]
    edges += [tuple(rng.sample(nodes, 2)) for _ in range(rng.randint(1, n))]
    for count, (a, b) in enumerate(edges, 1):
        kind = rng.choice(PASSIVE)
        name = f"{kind[0].upper()}{count}"
        lines.append(f"{kind} {name} ({a}, {b})")
        elements.append((kind, name, a, b))
    passive = [e[1] for e in elements]
    for k in range(1, rng.randint(2, 4)):
        a, b = rng.sample(nodes, 2)
        gain = f"g{k}"
        lines.insert(0, f"param {gain}")
        if rng.random() < 0.7:
            c, d = rng.sample(nodes, 2)
            lines.append(f"current source Igm{k} ({a}, {b}) = {gain}*V({c}, {d})")
            elements.append(("vccs", f"Igm{k}", a, b, gain, c, d))
        else:
            through = rng.choice(passive)
            lines.append(f"current source Ibeta{k} ({a}, {b}) = {gain}*I({through})")
            elements.append(("cccs", f"Ibeta{k}", a, b, gain, through))
    a, b = rng.sample(nodes, 2)
    lines.append(f"voltage source U1 ({a}, {b})")
    elements.append(("voltage", "U1", a, b))
    a, b = rng.sample(nodes, 2)
    lines.append(f"current source J1 ({a}, {b})")
    elements.append(("current", "J1", a, b))
    a, b = rng.sample(nodes, 2)
    lines.append(f"port p ({a}, {b})")
    return "\n".join(lines) + "\n", elements


def _measures(circuit) -> list:
    measures = [Voltage(n, "gnd") for n in circuit.nodes[1:]]
    return measures + [Current(name) for name in circuit.elements]


def _paths(circuit, shorted=()):
    forest = solution(circuit, shorted, path="forest")
    eliminated = solution(circuit, shorted, path="elimination")
    assert isinstance(forest, ControlledForestSolution)
    assert isinstance(eliminated, MnaSolution)
    return forest, eliminated


def _regular(eliminated) -> bool:
    """The random network has a unique solution (a few draws are singular for every value
    of the symbols, e.g. a current source copying its own voltage)."""
    try:
        eliminated.check()
    except symcirc.SymcircError:
        return False
    return True


@pytest.mark.parametrize("seed", range(40))
def test_forest_and_elimination_paths_give_identical_canonical_results(seed):
    text, _ = _random_active(random.Random(seed))
    circuit = symcirc.parse(text)
    forest, eliminated = _paths(circuit)
    if not _regular(eliminated):
        with pytest.raises(symcirc.SymcircError):
            forest.check()
        return
    forest.check()
    for excitation in ("U1", "J1", port_excitation("p")):
        for measure in _measures(circuit):
            a = forest.transfer(measure, excitation)
            b = eliminated.transfer(measure, excitation)
            assert a == b, (measure, excitation)
            assert a.to_text() == b.to_text()


@pytest.mark.parametrize("seed", range(8))
def test_shorted_port_paths_agree(seed):
    text, _ = _random_active(random.Random(100 + seed))
    circuit = symcirc.parse(text)
    forest, eliminated = _paths(circuit, ["p"])
    if not _regular(eliminated):
        return
    through = Current(port_excitation("p"))
    for excitation in ("U1", "J1", port_excitation("p")):
        for measure in (through, *_measures(circuit)[:3]):
            assert forest.transfer(measure, excitation) == eliminated.transfer(measure,
                                                                               excitation)


def _numeric_node_voltages(elements: list[tuple], values: dict[str, Fraction],
                           excitation: str) -> dict[str, complex]:
    """Node voltages per unit of one excitation by a nodal solve written here: resistors,
    capacitors and conductances stamped as admittances, controlled sources as entries of
    the nodal matrix, the voltage source by one extra current unknown (numpy)."""
    v = {k: float(x) for k, x in values.items()}
    s = v["s"]
    nodes = sorted({x for e in elements for x in e[2:4]} - {"gnd"})
    index = {n: i for i, n in enumerate(nodes)}
    size = len(nodes) + 1
    A = numpy.zeros((size, size), dtype=complex)
    b = numpy.zeros(size, dtype=complex)

    def admittance(name: str) -> complex:
        kind = next(e[0] for e in elements if e[1] == name)
        return {"resistor": 1 / v[name], "capacitor": s * v[name],
                "conductance": v[name]}[kind]

    def stamp(row: str, col: str, value: complex) -> None:
        if row != "gnd" and col != "gnd":
            A[index[row], index[col]] += value

    for element in elements:
        kind, name, a, bb = element[:4]
        if kind in PASSIVE:
            y = admittance(name)
            stamp(a, a, y), stamp(bb, bb, y), stamp(a, bb, -y), stamp(bb, a, -y)
        elif kind in ("vccs", "cccs"):
            gain = v[element[4]]
            if kind == "vccs":
                c, d = element[5:7]
            else:  # g*I(E) = g*y_E*V(E)
                through = next(e for e in elements if e[1] == element[5])
                c, d = through[2], through[3]
                gain *= admittance(element[5])
            # the source drives gain*V(c, d) into a: move it to the left side
            stamp(a, c, -gain), stamp(a, d, gain), stamp(bb, c, gain), stamp(bb, d, -gain)
        elif kind == "current" and name == excitation:
            for node, sign in ((a, 1), (bb, -1)):
                if node != "gnd":
                    b[index[node]] += sign
        elif kind == "voltage":
            k = len(nodes)  # current from a through the source to b
            for node, sign in ((a, 1), (bb, -1)):
                if node != "gnd":
                    A[index[node], k] += sign
                    A[k, index[node]] += sign
            b[k] = 1.0 if name == excitation else 0.0
    x = numpy.linalg.solve(A, b)
    return {n: x[index[n]] for n in nodes}


@pytest.mark.parametrize("seed", range(25))
def test_node_voltages_match_a_numpy_nodal_solve(seed):
    rng = random.Random(500 + seed)
    text, elements = _random_active(rng)
    circuit = symcirc.parse(text)
    forest = solution(circuit, path="forest")
    names = {e[1] for e in elements if e[0] in PASSIVE} | {
        e[4] for e in elements if e[0] in ("vccs", "cccs")}
    values = {name: Fraction(rng.randint(1, 90), rng.randint(1, 9)) for name in names}
    values["s"] = Fraction(rng.randint(1, 40), rng.randint(1, 7))
    for excitation in ("U1", "J1"):
        try:
            expected = _numeric_node_voltages(elements, values, excitation)
        except numpy.linalg.LinAlgError:
            return  # singular at every value (see _regular)
        for node, number in expected.items():
            exact = forest.transfer(Voltage(node, "gnd"), excitation)
            got = exact.evaluate(values)
            assert complex(float(got)) == pytest.approx(number, rel=1e-7, abs=1e-9)


def test_common_emitter_gain_with_emitter_resistor_is_the_textbook_formula():
    """Hybrid-π stage: Av = -β·RC/(Rs + rπ + (β + 1)·RE) with β = gm·rπ (Sedra and Smith,
    "Microelectronic Circuits", the CE amplifier with an emitter resistance, from memory)."""
    circuit = symcirc.parse(
        "param gm\nvoltage source Uin (in, gnd)\nresistor Rs (in, b)\nresistor rpi (b, e)\n"
        "current source Igm (e, c) = gm*V(b, e)\nresistor Rc (c, gnd)\n"
        "resistor Re (e, gnd)\nport out (c, gnd)\n")
    assert controls_of(build_network(circuit)) is not None  # the forest path takes it
    (gain,) = circuit.derive("gain(Uin, out)")
    gm, rpi, Rs, Rc, Re = sympy.symbols("gm rpi Rs Rc Re")
    beta = gm * rpi
    assert sympy.cancel(gain.expression + beta * Rc / (Rs + rpi + (beta + 1) * Re)) == 0


def test_networks_beyond_the_forest_path_go_to_elimination():
    with_opamp = symcirc.parse("voltage source U (a, gnd)\nresistor R1 (a, n)\n"
                               "resistor R2 (n, o)\nopamp X (gnd, n, o)\n")
    assert controls_of(build_network(with_opamp)) is None
    assert isinstance(solution(with_opamp), MnaSolution)
    vcvs = symcirc.parse("param k\nvoltage source U (a, gnd)\nresistor R1 (a, gnd)\n"
                         "voltage source Uamp (o, gnd) = k*V(a)\nresistor R2 (o, gnd)\n")
    assert controls_of(build_network(vcvs)) is None


@pytest.mark.parametrize("backend", ["flint", "sympy"])
def test_both_polynomial_backends_give_the_elimination_result(monkeypatch, backend):
    monkeypatch.setenv("SYMCIRC_POLYNOMIALS", backend)
    text, _ = _random_active(random.Random(3))
    circuit = symcirc.parse(text)
    forest, eliminated = _paths(circuit)
    for measure in _measures(circuit):
        a, b = forest.transfer(measure, "U1"), eliminated.transfer(measure, "U1")
        assert a.ring.backend == backend
        assert a.to_text() == b.to_text()
