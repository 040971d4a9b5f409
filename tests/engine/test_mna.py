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
from symcirc.engine.memo import Memo
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
        "voltage source Uamp (o, gnd) = A/(1 + s*tau)*V(b)\nresistor R2 (b, gnd)\n"
        "resistor R3 (o, gnd)\n")
    equations = Equations(build_network(circuit))
    ring = equations.ring
    for row in equations.rows:
        for entry in row.values():
            assert ring.is_zero(entry) or ring.terms(entry)  # a polynomial of the ring
    (gain,) = circuit.derive("gain(U, V(o))")
    # Uamp's output is A/(1 + s*tau) times the divider R2/(R1 + R2) (common practice)
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
    memo = Memo()
    assert solution(circuit, memo=memo) is solution(circuit, memo=memo)
    assert solution(circuit) is not solution(circuit)  # no memo: nothing kept
    # the pipeline owns the circuit's memo: the gain reuses the Thevenin derivation's work
    circuit.thevenin("out")
    store = circuit.pipeline.memo.of(circuit)
    before = dict(store)
    circuit.gain("U", "out")
    assert {k for k in store if k not in before} <= {"definitions", "nominals"}


def test_both_polynomial_backends_print_the_same_result(monkeypatch):
    text = _random_passive(random.Random(3))
    outputs = []
    for backend in ("flint", "sympy"):
        monkeypatch.setenv("SYMCIRC_POLYNOMIALS", backend)
        circuit = symcirc.parse(text)
        outputs.append([r.text() for r in circuit.derive("thevenin(p)")])
    assert outputs[0] == outputs[1]


# ---------------------------------------------------------------- backends and determinism

EVERY_KIND = """\
param k
param g
param rm
param beta
param A0
param wa
voltage source U (in, gnd)
current source J (m, gnd)
resistor R1 (in, m)
conductance Gp (m, gnd)
capacitor C1 (m, x)
inductor L1 (x, gnd)
inductor L2 (y, gnd)
coupling k12 (L1, L2) = 0.5
impedance Z1 (y, t)
transformer T1 (t, gnd; w, gnd) = 3
admittance Y1 (w, gnd)
voltage source Uamp (e, gnd) = k*V(m, x)
resistor R2 (e, n)
resistor R3 (n, o)
opamp X (gnd, n, o)
current source Igm (o, gnd) = g*V(x) + beta*I(R2)
voltage source Urm (h, gnd) = rm*I(L1)
resistor R4 (h, p)
resistor R5 (p, q)
capacitor C2 (q, gnd)
opamp B (p, q, q) = A0/(1 + s/wa)
port out (q, gnd)
port src (m, gnd)
"""

QUANTITIES = ("V(o)", "V(q)", "I(L2)", "I(X)", "thevenin(out)", "gain(U, V(w))",
              "twoport(src, out).z21", "sensitivity(V(o), k)")


def _texts(monkeypatch, backend: str, text: str, quantities) -> list[str]:
    monkeypatch.setenv("SYMCIRC_POLYNOMIALS", backend)
    circuit = symcirc.parse(text)
    out = []
    for quantity in quantities:
        for result in circuit.derive(quantity):
            exact = getattr(result.exact, "function", result.exact)  # a value with atoms
            assert exact.ring.backend == backend  # the variable really selects it
            out.append(f"{result.quantity} = {result.text()}")
    return out


def test_flint_and_sympy_polynomials_give_identical_results_for_every_element_kind(monkeypatch):
    flint_texts = _texts(monkeypatch, "flint", EVERY_KIND, QUANTITIES)
    sympy_texts = _texts(monkeypatch, "sympy", EVERY_KIND, QUANTITIES)
    assert flint_texts == sympy_texts
    assert all(" = 0" != t[-4:] for t in flint_texts[:3])  # non-trivial results compared


@pytest.mark.parametrize("seed", range(4))
def test_flint_and_sympy_polynomials_agree_on_random_passive_networks(monkeypatch, seed):
    text = _random_passive(random.Random(100 + seed))
    quantities = ("thevenin(p)", "I(U1)", "V(n1)", "gain(U1, p)", "gain(J1, p)")
    assert _texts(monkeypatch, "flint", text, quantities) == \
        _texts(monkeypatch, "sympy", text, quantities)


def test_every_quantity_prints_the_same_whatever_the_order_of_the_lines():
    """Deterministic term order: the variable order and term order come from the names, not
    from the order the circuit was written in or from hashing."""
    lines = EVERY_KIND.splitlines()
    params = [line for line in lines if line.startswith("param")]
    rest = [line for line in lines if not line.startswith("param")]
    shuffled = rest[:]
    random.Random(5).shuffle(shuffled)
    first = symcirc.parse(EVERY_KIND)
    second = symcirc.parse("\n".join(params + shuffled) + "\n")
    for quantity in QUANTITIES:
        assert [r.text() for r in first.derive(quantity)] == \
            [r.text() for r in second.derive(quantity)]


def test_the_same_circuit_prints_the_same_formula_in_every_process(tmp_path):
    import os
    import subprocess
    import sys

    path = tmp_path / "every.circuit"
    path.write_text(EVERY_KIND, encoding="utf-8")
    outputs = []
    for hash_seed in ("1", "2"):
        environment = dict(os.environ, PYTHONHASHSEED=hash_seed)
        done = subprocess.run(
            [sys.executable, "-c", "import sys; from symcirc.cli import main; "
             "sys.exit(main(sys.argv[1:]))", "derive", str(path), "V(o)", "thevenin(out)"],
            capture_output=True, text=True, env=environment, check=True)
        outputs.append(done.stdout)
    assert outputs[0] == outputs[1] and outputs[0].count("\n") >= 3


def _ladder(n: int) -> str:
    lines = ["voltage source U (n0, gnd)"]
    for i in range(1, n + 1):
        lines += [f"resistor Rs{i} (n{i - 1}, n{i})", f"resistor Rp{i} (n{i}, gnd)"]
    return "\n".join(lines) + f"\nport out (n{n}, gnd)\n"


def test_large_results_are_written_from_their_terms_without_building_sympy():
    """Text and LaTeX come straight from the polynomial terms; the text still reads back
    (sympy's parser, the JSON contract) to exactly the expression `to_sympy` builds."""
    from sympy.parsing.sympy_parser import parse_expr

    (impedance,) = symcirc.parse(_ladder(6)).derive("thevenin(out).impedance")
    function = impedance.exact
    assert function.size() == (144, 233)  # Fibonacci-sized continued fraction of a ladder
    text, latex = impedance.text(), impedance.latex()
    assert "_sympy" not in function.__dict__  # no sympy expression was needed to print
    assert latex.startswith(r"\frac{") and text.count("+") == 144 + 233 - 2
    local = {n: sympy.Symbol(n) for n in impedance.symbols}
    assert parse_expr(text, local_dict=local) == function.to_sympy()


def test_transfer_functions_are_collected_in_powers_of_s():
    circuit = symcirc.parse("voltage source U (i, gnd)\nresistor R1 (i, a)\n"
                            "capacitor C1 (a, gnd)\nresistor R2 (a, o)\ncapacitor C2 (o, gnd)\n"
                            "port out (o, gnd)\n")
    (gain,) = circuit.derive("gain(U, out)")
    # one coefficient per power of s, ascending (the layout of every transfer function)
    assert gain.text() == "1/(1 + (C1*R1 + C2*R1 + C2*R2)*s + C1*C2*R1*R2*s**2)"
