"""Equation assembly and the two solution paths.

The spanning-forest path (passive networks) and the elimination path must give identical
canonical functions; the sign conventions of the assembly are checked against facts of
circuit theory (power conservation of an ideal transformer, KCL, source conventions).
"""

from __future__ import annotations

import random

import pytest
import sympy

import symcirc
from symcirc.engine.mna import Current, Equations, Voltage, port_excitation
from symcirc.engine.network import build_network
from symcirc.engine.system import solution

PASSIVE = ("resistor", "capacitor", "inductor", "conductance", "impedance", "admittance")


def _random_passive(rng: random.Random) -> str:
    """A connected random network of every passive kind, with independent sources and a port."""
    n = rng.randint(3, 5)
    nodes = ["gnd"] + [f"n{i}" for i in range(1, n)]
    lines = []
    count = 0
    edges = [(nodes[i], nodes[rng.randrange(i)]) for i in range(1, n)]
    edges += [tuple(rng.sample(nodes, 2)) for _ in range(rng.randint(1, n))]
    for a, b in edges:
        count += 1
        kind = rng.choice(PASSIVE)
        lines.append(f"{kind} {kind[0].upper()}{count} ({a}, {b})")
    a, b = rng.sample(nodes, 2)
    lines.append(f"voltage source U1 ({a}, {b})")
    a, b = rng.sample(nodes, 2)
    lines.append(f"current source J1 ({a}, {b})")
    a, b = rng.sample(nodes, 2)
    lines.append(f"port p ({a}, {b})")
    return "\n".join(lines) + "\n"


@pytest.mark.parametrize("seed", range(30))
def test_forest_and_elimination_paths_give_identical_canonical_results(seed):
    circuit = symcirc.parse(_random_passive(random.Random(seed)))
    forest = solution(circuit, path="forest")
    eliminated = solution(circuit, path="elimination")
    measures = [Voltage(n, "gnd") for n in circuit.nodes[1:]]
    measures += [Current(name) for name in circuit.elements]
    for excitation in ("U1", "J1", port_excitation("p")):
        for measure in measures:
            a = forest.transfer(measure, excitation)
            b = eliminated.transfer(measure, excitation)
            assert a == b, (measure, excitation)
            assert a.to_text() == b.to_text()  # same canonical form prints the same


def test_shorted_port_paths_agree():
    circuit = symcirc.parse(_random_passive(random.Random(7)))
    forest = solution(circuit, ["p"], path="forest")
    eliminated = solution(circuit, ["p"], path="elimination")
    through = Current(port_excitation("p"))
    for excitation in ("U1", "J1", port_excitation("p")):
        assert forest.transfer(through, excitation) == eliminated.transfer(through, excitation)


def test_every_matrix_entry_is_a_polynomial_even_with_rational_coefficients():
    """A controlled source with coefficient A/(1 + s*tau) is multiplied through."""
    circuit = symcirc.parse(
        "param A\nparam tau\nvoltage source U (a, gnd)\nresistor R1 (a, b)\n"
        "voltage source E (o, gnd) = A/(1 + s*tau)*V(b)\nresistor R2 (b, gnd)\n"
        "resistor R3 (o, gnd)\n")
    equations = Equations(build_network(circuit))
    ring = equations.ring
    for row in equations.rows:
        for entry in row.values():
            assert ring.is_zero(entry) or ring.terms(entry)  # a polynomial of the ring
    (gain,) = circuit.derive("gain(U, V(o))")
    # E's output is A/(1 + s*tau) times the divider R2/(R1 + R2) (common practice)
    A, tau, s, R1, R2 = sympy.symbols("A tau s R1 R2")
    assert sympy.cancel(gain.expression - A / (1 + s * tau) * R2 / (R1 + R2)) == 0


def test_ideal_transformer_conserves_power():
    """V1*I1 + V2*I2 = 0 for an ideal transformer (port currents into the dotted terminals):
    a fact of circuit theory (e.g. Desoer & Kuh, Basic Circuit Theory, ch. 8, from memory)."""
    circuit = symcirc.parse(
        "voltage source U (a, gnd)\nresistor Rs (a, p)\ntransformer T (p, gnd; q, gnd) = 3\n"
        "resistor RL (q, gnd)\n")
    v1, = circuit.derive("V(p)")
    v2, = circuit.derive("V(q)")
    i1, = circuit.derive("I(T)")  # primary current into p
    i_load, = circuit.derive("I(RL)")  # secondary current into q is -I(RL)
    power = v1.exact * i1.exact + v2.exact * (-i_load.exact)
    assert power.is_zero()
    ratio = v1.exact / v2.exact
    assert ratio.to_text() == "T"


def test_current_source_current_follows_the_sign_rule():
    """I(X) of a current source flows from its first terminal through it: minus its value."""
    circuit = symcirc.parse("current source J (a, gnd)\nresistor R (a, gnd)\n")
    (current,) = circuit.derive("I(J)")
    assert current.text() == "-J"
    (resistor,) = circuit.derive("I(R)")
    assert resistor.text() == "J"  # KCL at node a (common practice)


def test_voltage_source_current_flows_through_it_from_first_to_second_terminal():
    circuit = symcirc.parse("voltage source U (a, gnd)\nresistor R (a, gnd)\n")
    (current,) = circuit.derive("I(U)")
    assert current.text() == "-U/R"  # the source delivers U/R out of its first terminal


def test_opamp_current_is_what_its_output_delivers():
    circuit = symcirc.parse(
        "voltage source U (i, gnd)\nresistor R1 (i, n)\nresistor R2 (n, o)\n"
        "opamp X (gnd, n, o)\nresistor RL (o, gnd)\n")
    (current,) = circuit.derive("I(X)")
    # V(o) = -U*R2/R1; the output feeds RL and, through R2, the input current U/R1
    (load,) = circuit.derive("I(RL)")
    (feedback,) = circuit.derive("I(R2)")
    assert current.exact == load.exact - feedback.exact


def test_solutions_are_cached_per_circuit():
    circuit = symcirc.parse("voltage source U (a, gnd)\nresistor R1 (a, b)\n"
                            "resistor R2 (b, gnd)\nport out (b, gnd)\n")
    assert solution(circuit) is solution(circuit)
    circuit.thevenin("out")
    before = dict(circuit.cache)
    circuit.gain("U", "out")
    assert {k for k in circuit.cache if k not in before} <= {"definitions"}


def test_both_polynomial_backends_print_the_same_result(monkeypatch):
    text = _random_passive(random.Random(3))
    outputs = []
    for backend in ("flint", "sympy"):
        monkeypatch.setenv("SYMCIRC_POLYNOMIALS", backend)
        circuit = symcirc.parse(text)
        outputs.append([r.text() for r in circuit.derive("thevenin(p)")])
    assert outputs[0] == outputs[1]
