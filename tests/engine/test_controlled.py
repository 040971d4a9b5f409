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
from symcirc.engine.controlled import ControlledForestSolution, terms_bound
from symcirc.engine.mna import Current, MnaSolution, Voltage, port_excitation
from symcirc.engine.network import build_network
from symcirc.engine.system import solution

PASSIVE = ("resistor", "capacitor", "conductance")


def _random_active(rng: random.Random, active: bool = False) -> tuple[str, list[tuple]]:
    """A connected random network of resistors, capacitors and conductances with one to
    three controlled current sources (by a voltage, or by a passive element's current),
    with `active` also opamps and a controlled voltage source, an independent voltage
    source, an independent current source and a port; also the elements as a list for
    the numeric solve."""
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
    for k in range(1, rng.randint(2, 3 if active else 4)):
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
    base = nodes
    if active:
        # an ideal opamp and a finite-gain one, each with a feedback resistor, and a
        # controlled voltage source (grounded or floating)
        for k, gain in ((1, ""), (2, " = A0/(1 + s/wa)")):
            p, m = rng.sample(nodes, 2)
            out = f"o{k}"
            lines.append(f"opamp X{k} ({p}, {m}, {out}){gain}")
            lines.append(f"resistor Rf{k} ({out}, {m})")
            elements.append(("opamp", f"X{k}", out, "gnd", p, m, bool(gain)))
            elements.append(("resistor", f"Rf{k}", out, m))
            nodes = [*nodes, out]
        lines[:0] = ["param A0", "param wa", "param k"]
        b = rng.choice(["gnd", rng.choice(nodes[1:])])
        c, d = rng.sample(nodes, 2)
        load = rng.choice(nodes)
        lines.append(f"voltage source Uamp (u, {b}) = k*V({c}, {d})")
        lines.append(f"resistor Ru (u, {load})")
        elements.append(("vcvs", "Uamp", "u", b, "k", c, d))
        elements.append(("resistor", "Ru", "u", load))
        nodes = [*nodes, "u"]
    a, b = rng.sample(base, 2)  # no loop of voltage sources with the outputs
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


@pytest.mark.parametrize("seed", range(34))
def test_forest_and_elimination_paths_give_identical_canonical_results(seed):
    active = seed >= 25  # with opamps and a controlled voltage source
    text, _ = _random_active(random.Random(seed), active)
    circuit = symcirc.parse(text)
    forest, eliminated = _paths(circuit)
    if not _regular(eliminated):
        with pytest.raises(symcirc.SymcircError):
            forest.check()
        return
    forest.check()
    measures = _measures(circuit)
    if active:  # every node, and the currents of the controlled sources and the port
        measures = [m for m in measures if isinstance(m, Voltage)
                    or m.element.startswith(("I", "U1"))]
    for excitation in ("U1", "J1", port_excitation("p")):
        for measure in measures:
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
    capacitors and conductances stamped as admittances, controlled current sources as
    entries of the nodal matrix, each voltage source and opamp output by one more current
    unknown and its own equation (numpy)."""
    v = {k: float(x) for k, x in values.items()}
    s = v["s"]
    nodes = sorted({x for e in elements for x in e[2:4]} - {"gnd"})
    index = {n: i for i, n in enumerate(nodes)}
    forced = [e for e in elements if e[0] in ("voltage", "opamp", "vcvs")]
    size = len(nodes) + len(forced)
    A = numpy.zeros((size, size), dtype=complex)
    b = numpy.zeros(size, dtype=complex)

    def admittance(name: str) -> complex:
        kind = next(e[0] for e in elements if e[1] == name)
        return {"resistor": 1 / v[name], "capacitor": s * v[name],
                "conductance": v[name]}[kind]

    def stamp(row: str | int, col: str, value: complex) -> None:
        if row != "gnd" and col != "gnd":
            A[index.get(row, row), index[col]] += value

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
    for row, element in enumerate(forced, len(nodes)):
        kind, name, a, bb = element[:4]
        for node, sign in ((a, 1), (bb, -1)):  # its current leaves a, enters b
            if node != "gnd":
                A[index[node], row] += sign
        stamp(row, a, 1) if kind != "opamp" else None
        stamp(row, bb, -1) if kind != "opamp" else None
        if kind == "voltage":
            b[row] = 1.0 if name == excitation else 0.0
        elif kind == "vcvs":  # V(a) - V(b) = k*V(c, d)
            c, d = element[5:7]
            stamp(row, c, -v[element[4]]), stamp(row, d, v[element[4]])
        elif element[6]:  # finite gain: V(out) = A0/(1 + s/wa) * V(p, n)
            gain = v["A0"] / (1 + s / v["wa"])
            stamp(row, a, 1), stamp(row, element[4], -gain), stamp(row, element[5], gain)
        else:  # ideal: V(p) = V(n)
            stamp(row, element[4], 1), stamp(row, element[5], -1)
    x = numpy.linalg.solve(A, b)
    return {n: x[index[n]] for n in nodes}


@pytest.mark.parametrize("seed", range(16))
def test_node_voltages_match_a_numpy_nodal_solve(seed):
    rng = random.Random(500 + seed)
    active = seed % 2 == 1
    text, elements = _random_active(rng, active)
    circuit = symcirc.parse(text)
    forest = solution(circuit, path="forest")
    names = {e[1] for e in elements if e[0] in PASSIVE} | {
        e[4] for e in elements if e[0] in ("vccs", "cccs", "vcvs")}
    if active:
        names |= {"A0", "wa"}
    values = {name: Fraction(rng.randint(1, 90), rng.randint(1, 9)) for name in names}
    values["s"] = Fraction(rng.randint(1, 40), rng.randint(1, 7))
    if not _regular(solution(circuit, path="elimination")):
        return
    for excitation in ("U1", "J1"):
        expected = _numeric_node_voltages(elements, values, excitation)
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
    gm, rpi, Rs, Rc, Re = sympy.symbols("gm rpi Rs Rc Re")
    beta = gm * rpi
    textbook = -beta * Rc / (Rs + rpi + (beta + 1) * Re)
    (gain,) = circuit.derive("gain(Uin, out)")
    assert sympy.cancel(gain.expression - textbook) == 0
    forest = solution(circuit, path="forest").transfer(Voltage("c", "gnd"), "Uin")
    assert sympy.cancel(forest.to_sympy() - textbook) == 0


def test_inverting_amplifier_is_minus_the_resistor_ratio_on_the_forest_path():
    """An ideal opamp as a nullor: gain -R2/R1 (common practice)."""
    circuit = symcirc.parse("voltage source U (a, gnd)\nresistor R1 (a, n)\n"
                            "resistor R2 (n, o)\nopamp X (gnd, n, o)\n")
    gain = solution(circuit, path="forest").transfer(Voltage("o", "gnd"), "U")
    assert gain.to_text() == "-R2/R1"


@pytest.mark.parametrize("seed", range(8))
def test_transformer_networks_agree_on_both_paths(seed):
    """An ideal transformer is one group of columns: (p1, n1) − N·(p2, n2) on both sides."""
    rng = random.Random(seed)
    p1, n1 = rng.choice([("b", "gnd"), ("b", "d"), ("a", "b")])
    p2, n2 = rng.choice([("c", "gnd"), ("d", "gnd"), ("c", "d")])
    text = ("param N\nparam g\nvoltage source U1 (a, gnd)\nresistor R1 (a, b)\n"
            "resistor R2 (c, gnd)\ncapacitor C1 (b, gnd)\nresistor R3 (d, c)\n"
            f"transformer T1 ({p1}, {n1}; {p2}, {n2}) = N\n"
            "current source Igm (d, gnd) = g*V(b)\nresistor R4 (d, gnd)\nport p (c, gnd)\n")
    circuit = symcirc.parse(text)
    forest = solution(circuit, path="forest")
    eliminated = solution(circuit, path="elimination")
    for excitation in ("U1", port_excitation("p")):
        for measure in [*(Voltage(n, "gnd") for n in "abcd"), Current("R1"), Current("R4")]:
            assert forest.transfer(measure, excitation) == eliminated.transfer(measure,
                                                                               excitation)


def test_controlled_current_sources_take_the_forest_path_and_opamps_elimination():
    """The defaults measured fastest (engine.system._forest_wins)."""
    assert isinstance(solution(symcirc.parse(_ce_stages(1))), ControlledForestSolution)
    with_transformer = symcirc.parse("voltage source U (a, gnd)\nresistor R1 (a, p)\n"
                                     "transformer T (p, gnd; s, gnd) = 3\n"
                                     "resistor RL (s, gnd)\n")
    assert isinstance(solution(with_transformer), ControlledForestSolution)
    with_opamp = symcirc.parse("voltage source U (a, gnd)\nresistor R1 (a, n)\n"
                               "resistor R2 (n, o)\nopamp X (gnd, n, o)\n")
    assert isinstance(solution(with_opamp), MnaSolution)


def _ce_stages(k: int) -> str:
    """k small-signal common-emitter stages, each collector driving the next base."""
    lines = ["voltage source Uin (in, gnd)", "resistor Rs (in, b1)"]
    for i in range(1, k + 1):
        b, c, e = f"b{i}", (f"b{i + 1}" if i < k else "c"), f"e{i}"
        lines += [f"param gm{i}", f"resistor rpi{i} ({b}, {e})", f"capacitor Cpi{i} ({b}, {e})",
                  f"capacitor Cmu{i} ({b}, {c})", f"resistor ro{i} ({c}, {e})",
                  f"resistor Rc{i} ({c}, gnd)", f"resistor Re{i} ({e}, gnd)",
                  f"current source Igm{i} ({e}, {c}) = gm{i}*V({b}, {e})"]
    return "\n".join(lines) + "\n"


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


@pytest.mark.parametrize("seed", range(12))
def test_the_size_bound_is_never_below_a_denominator(seed):
    """terms_bound counts spanning trees of one graph: an upper bound on the common trees,
    hence on every transfer's denominator (the guard must never refuse below it)."""
    active = seed % 2 == 1
    text, _ = _random_active(random.Random(700 + seed), active)
    circuit = symcirc.parse(text)
    eliminated = solution(circuit, path="elimination")
    if not _regular(eliminated):
        return
    bound = terms_bound(build_network(circuit), [])
    for measure in _measures(circuit)[:4]:
        transfer = eliminated.transfer(measure, "U1")
        assert transfer.size()[1] <= bound


def test_the_size_bound_follows_the_answer_on_ce_stages():
    """Within a factor of 2 of the denominator on three and four stages (measured)."""
    for k, terms in ((3, 11452), (4, 227836)):
        circuit = symcirc.parse(_ce_stages(k))
        bound = terms_bound(build_network(circuit), [])
        assert terms <= bound <= 2 * terms
        gain = solution(circuit).transfer(Voltage("c", "gnd"), "Uin")
        assert gain.size()[1] == terms
