"""The two-graph walk (engine.controlled.signed_forest_sum) on networks that stress what a
state keeps: controls that read nodes far along the walk (long open paths of the column
permutation), many controls, nullors whose pairs must stay apart, transformers on the
default path, and every active circuit of the corpus.

Each result is the elimination path's, exactly, and the node voltages match a nodal solve
by numpy.linalg.solve at random values (`_numeric_node_voltages` of test_controlled: an
independent computation).
"""

from __future__ import annotations

import random
from fractions import Fraction
from pathlib import Path

import numpy
import pytest
from test_controlled import _numeric_node_voltages

import symcirc
from symcirc.engine import controlled
from symcirc.engine.controlled import ControlledForestSolution, controls_of
from symcirc.engine.mna import MnaSolution, Voltage, port_excitation
from symcirc.engine.network import build_network
from symcirc.engine.system import solution

ROOT = Path(__file__).resolve().parents[2]
CORPUS = sorted([*(ROOT / "examples").glob("*.circuit"),
                 *(ROOT / "tests" / "valid").glob("*.circuit")])


def _crossed_ladder(rng: random.Random, sections: int) -> tuple[str, list[tuple]]:
    """Series resistors and shunt capacitors; each node also driven by a controlled current
    source reading a random node anywhere on the ladder (or a random resistor's current),
    so that columns stay open across the whole walk."""
    nodes = ["gnd", *(f"n{i}" for i in range(sections + 1))]
    lines = ["voltage source U1 (n0, gnd)", "current source J1 (gnd, n1)"]
    elements: list[tuple] = [("voltage", "U1", "n0", "gnd"), ("current", "J1", "gnd", "n1")]
    for i in range(1, sections + 1):
        lines += [f"resistor Rs{i} (n{i - 1}, n{i})", f"capacitor C{i} (n{i}, gnd)"]
        elements += [("resistor", f"Rs{i}", f"n{i - 1}", f"n{i}"),
                     ("capacitor", f"C{i}", f"n{i}", "gnd")]
    for i in range(1, sections + 1):
        lines.insert(0, f"param g{i}")
        if rng.random() < 0.8:
            c, d = rng.sample(nodes, 2)
            lines.append(f"current source Igm{i} (n{i}, gnd) = g{i}*V({c}, {d})")
            elements.append(("vccs", f"Igm{i}", f"n{i}", "gnd", f"g{i}", c, d))
        else:
            through = f"Rs{rng.randint(1, sections)}"
            lines.append(f"current source Ibeta{i} (n{i}, gnd) = g{i}*I({through})")
            elements.append(("cccs", f"Ibeta{i}", f"n{i}", "gnd", f"g{i}", through))
    return "\n".join(lines) + "\n", elements


def _values(rng: random.Random, elements: list[tuple]) -> dict[str, Fraction]:
    names = {e[1] for e in elements if e[0] in ("resistor", "capacitor", "conductance")}
    names |= {e[4] for e in elements if e[0] in ("vccs", "cccs", "vcvs")}
    values = {name: Fraction(rng.randint(1, 90), rng.randint(1, 9)) for name in names}
    values["s"] = Fraction(rng.randint(1, 40), rng.randint(1, 7))
    return values


@pytest.mark.parametrize("seed", range(10))
def test_controls_read_far_along_the_walk(seed):
    rng = random.Random(900 + seed)
    text, elements = _crossed_ladder(rng, rng.randint(3, 5))
    circuit = symcirc.parse(text)
    forest = solution(circuit)
    assert isinstance(forest, ControlledForestSolution)  # the default path
    eliminated = solution(circuit, path="elimination")
    values = _values(rng, elements)
    for excitation in ("U1", "J1"):
        expected = _numeric_node_voltages(elements, values, excitation)
        for node, number in expected.items():
            exact = forest.transfer(Voltage(node, "gnd"), excitation)
            assert exact.to_text() == eliminated.transfer(Voltage(node, "gnd"),
                                                          excitation).to_text()
            got = complex(float(exact.evaluate(values)))
            assert got == pytest.approx(number, rel=1e-7, abs=1e-9)


def test_a_walk_past_its_state_limit_hands_the_transfer_to_elimination(monkeypatch):
    """Controls reading nodes far apart multiply the walk's states; past MAX_WALK_STATES
    the transfer is elimination's (the same canonical function, checked against numpy)."""
    rng = random.Random(907)
    text, elements = _crossed_ladder(rng, 5)
    circuit = symcirc.parse(text)
    monkeypatch.setattr(controlled, "MAX_WALK_STATES", 2)
    forest = solution(circuit, path="forest")
    gain = forest.transfer(Voltage("n5", "gnd"), "U1")
    assert forest._gave_up  # the walk stopped at its limit
    monkeypatch.undo()
    walked = solution(symcirc.parse(text), path="forest")
    assert walked.transfer(Voltage("n5", "gnd"), "U1") == gain and not walked._gave_up
    values = _values(rng, elements)
    expected = _numeric_node_voltages(elements, values, "U1")["n5"]
    assert complex(float(gain.evaluate(values))) == pytest.approx(expected, rel=1e-7, abs=1e-9)


def test_fourteen_columns_take_the_forest_path():
    """Seven finite-gain inverting stages: fourteen columns (each opamp's output equation
    has two terms), the walk's states bounded by the frontier, not by their subsets."""
    lines = ["voltage source Uin (o0, gnd)"]
    for i in range(1, 8):
        lines += [f"param A{i}", f"resistor Ri{i} (o{i - 1}, n{i})", f"resistor Rf{i} (n{i}, o{i})",
                  f"resistor Ro{i} (o{i}, gnd)", f"opamp U{i} (gnd, n{i}, o{i}) = A{i}"]
    circuit = symcirc.parse("\n".join(lines) + "\n")
    assert len(controls_of(build_network(circuit)).controls) == 14
    forest = solution(circuit, path="forest")
    gain = forest.transfer(Voltage("o7", "gnd"), "Uin")
    assert gain == solution(circuit, path="elimination").transfer(Voltage("o7", "gnd"), "Uin")
    # at A_i → ∞ each stage is −Rf/Ri (the inverting amplifier, common practice): seven
    # stages give −Π Rf_i/Ri_i; at A_i = 10^9 the gain is within 1e-6 of it
    values = {f"{p}{i}": Fraction(k + i) for i in range(1, 8)
              for p, k in (("Ri", 1), ("Rf", 3), ("Ro", 2))}
    values.update({f"A{i}": Fraction(10**9) for i in range(1, 8)})
    ideal = -numpy.prod([float(values[f"Rf{i}"] / values[f"Ri{i}"]) for i in range(1, 8)])
    assert float(gain.evaluate(values)) == pytest.approx(ideal, rel=1e-6)


@pytest.mark.parametrize("sections", [3, 6])
def test_buffered_sections_keep_their_apart_pairs(sections):
    """RC sections each buffered by an ideal follower: every opamp's pairs must stay in
    different trees while the walk passes; the gain is Π 1/(1 + s·R_i·C_i) (each buffer
    isolates its section, common practice)."""
    lines = ["voltage source Uin (b0, gnd)"]
    for i in range(1, sections + 1):
        lines += [f"resistor R{i} (b{i - 1}, x{i})", f"capacitor C{i} (x{i}, gnd)",
                  f"opamp U{i} (x{i}, b{i}, b{i})"]
    circuit = symcirc.parse("\n".join(lines) + "\n")
    out = Voltage(f"b{sections}", "gnd")
    forest = solution(circuit, path="forest").transfer(out, "Uin")
    assert forest == solution(circuit, path="elimination").transfer(out, "Uin")
    rng = random.Random(sections)
    values = {f"{p}{i}": Fraction(rng.randint(1, 50), rng.randint(1, 5))
              for i in range(1, sections + 1) for p in "RC"}
    values["s"] = Fraction(rng.randint(1, 20), 3)
    expected = Fraction(1)
    for i in range(1, sections + 1):
        expected /= 1 + values["s"] * values[f"R{i}"] * values[f"C{i}"]
    assert forest.evaluate(values) == expected


@pytest.mark.parametrize("seed", range(6))
def test_transformer_networks_default_to_the_forest_path_and_match_numpy(seed):
    """V(p1, n1) = N·V(p2, n2), the secondary carrying −N times the primary's current
    (an ideal transformer: power in equals power out, common practice)."""
    rng = random.Random(700 + seed)
    p1, n1 = rng.choice([("b", "gnd"), ("b", "d"), ("a", "b")])
    p2, n2 = rng.choice([("c", "gnd"), ("d", "gnd"), ("c", "d")])
    text = ("param N\nparam g\nvoltage source U1 (a, gnd)\nresistor R1 (a, b)\n"
            "resistor R2 (c, gnd)\ncapacitor C1 (b, gnd)\nresistor R3 (d, c)\n"
            f"transformer T1 ({p1}, {n1}; {p2}, {n2}) = N\n"
            "current source Igm (d, gnd) = g*V(b)\nresistor R4 (d, gnd)\n")
    circuit = symcirc.parse(text)
    forest = solution(circuit)
    assert isinstance(forest, ControlledForestSolution)
    eliminated = solution(circuit, path="elimination")
    values = {name: Fraction(rng.randint(1, 90), rng.randint(1, 9))  # the engine names
              for name in ("R1", "R2", "R3", "R4", "C1", "T1", "g", "s")}  # the ratio T1
    v = {k: float(x) for k, x in values.items()}
    index = {n: i for i, n in enumerate("abcd")}
    A = numpy.zeros((6, 6))
    rhs = numpy.zeros(6)
    for (x, y), y_value in (((("a", "b")), 1 / v["R1"]), (("c", "gnd"), 1 / v["R2"]),
                            (("b", "gnd"), v["s"] * v["C1"]), (("d", "c"), 1 / v["R3"]),
                            (("d", "gnd"), 1 / v["R4"])):
        for p, q, sign in ((x, x, 1), (y, y, 1), (x, y, -1), (y, x, -1)):
            if p != "gnd" and q != "gnd":
                A[index[p], index[q]] += sign * y_value
    A[index["d"], index["b"]] -= v["g"]  # g·V(b) driven into d
    # row 4: the source U1 (its current leaves a); row 5: the transformer's primary
    # current I1 (leaves p1, enters n1; −N·I1 leaves p2, enters n2)
    A[index["a"], 4] += 1
    A[4, index["a"]] = 1
    rhs[4] = 1
    for node, weight in ((p1, 1), (n1, -1), (p2, -v["T1"]), (n2, v["T1"])):
        if node != "gnd":
            A[index[node], 5] += weight
            A[5, index[node]] += weight
    solved = numpy.linalg.solve(A, rhs)
    for node in "abcd":
        exact = forest.transfer(Voltage(node, "gnd"), "U1")
        assert exact == eliminated.transfer(Voltage(node, "gnd"), "U1")
        assert float(exact.evaluate(values)) == pytest.approx(solved[index[node]], rel=1e-9,
                                                             abs=1e-12)


def _excitations(circuit) -> list[str]:
    sources = [e.name for e in circuit.elements.values()
               if e.kind in ("voltage source", "current source") and not e.controls]
    return sources + [port_excitation(p) for p in circuit.ports]


@pytest.mark.parametrize("path", CORPUS, ids=lambda p: p.name)
def test_active_corpus_circuits_agree_on_every_path(path):
    """Every node voltage per every excitation of each example and valid circuit with an
    active element: the default path and the forest path (where it takes the network)
    give elimination's canonical functions."""
    circuit = symcirc.load(path)
    network = build_network(circuit)
    if network.is_passive:
        return
    eliminated = solution(circuit, path="elimination")
    assert isinstance(eliminated, MnaSolution)
    solved = [solution(circuit)]
    if controls_of(network) is not None:
        solved.append(solution(circuit, path="forest"))
    for excitation in _excitations(circuit):
        for node in circuit.nodes[1:]:
            expected = eliminated.transfer(Voltage(node, "gnd"), excitation)
            for other in solved:
                assert other.transfer(Voltage(node, "gnd"), excitation).to_text() == \
                    expected.to_text(), (node, excitation)
