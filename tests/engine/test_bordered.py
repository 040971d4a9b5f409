"""Coupled inductors, controls by a source's current and controlled voltage sources with a
constant part on the spanning-forest path (engine.bordered, engine.controlled).

The forest path must give the canonical functions of elimination, text for text; both are
checked against a nodal solve written here with numpy (`numpy.linalg.solve` at random
values: an independent computation), and against closed forms of the trade.
"""

from __future__ import annotations

import random
from fractions import Fraction

import numpy
import pytest
import sympy

import symcirc
from symcirc.engine.bordered import MAX_BLOCK
from symcirc.engine.controlled import ControlledForestSolution, controls_of, terms_bound
from symcirc.engine.mna import Current, MnaSolution, Voltage, port_excitation
from symcirc.engine.network import build_network
from symcirc.engine.system import _solve, solution


def _random_bordered(rng: random.Random) -> tuple[str, list[tuple], dict[str, Fraction]]:
    """A random connected network of resistors and capacitors with two or three coupled
    inductors, an independent voltage source whose current a controlled current source
    and a controlled voltage source read, a controlled voltage source with a constant
    part, a current source and a port; also the elements as a list for the numeric solve
    and random values (inductances are squares, so that M = k·√(L1·L2) is rational)."""
    n = rng.randint(3, 5)
    nodes = ["gnd"] + [f"n{i}" for i in range(1, n)]
    lines: list[str] = []
    elements: list[tuple] = []
    values: dict[str, Fraction] = {}
    tied = {x: x for x in nodes}  # voltage-type elements must not close a loop

    def root(x: str) -> str:
        while tied[x] != x:
            x = tied[x]
        return x

    def voltage_pair(among: list[str]) -> tuple[str, str]:
        for _ in range(40):
            a, b = rng.sample(among, 2)
            if root(a) != root(b):
                tied[root(a)] = root(b)
                return a, b
        raise AssertionError("no room for a voltage source")

    def value(name: str, low: int = 1, high: int = 60) -> str:
        values[name] = Fraction(rng.randint(low, high), rng.randint(1, 7))
        return name

    edges = [(nodes[i], nodes[rng.randrange(i)]) for i in range(1, n)]
    edges += [tuple(rng.sample(nodes, 2)) for _ in range(rng.randint(0, 2))]
    for count, (a, b) in enumerate(edges, 1):
        kind = rng.choice(("resistor", "capacitor"))
        name = value(f"{kind[0].upper()}{count}")
        lines.append(f"{kind} {name} ({a}, {b})")
        elements.append((kind, name, a, b))
    inductors = []
    roots = {}
    for i in range(1, rng.randint(2, 3) + 1):
        a, b = rng.sample(nodes, 2)
        name = f"L{i}"
        roots[name] = Fraction(rng.randint(1, 9), rng.randint(1, 4))
        values[name] = roots[name] ** 2
        lines.append(f"inductor {name} ({a}, {b})")
        elements.append(("inductor", name, a, b))
        inductors.append(name)
    for first, second in zip(inductors, inductors[1:], strict=False):
        k = f"k{first[1:]}{second[1:]}"
        values[k] = Fraction(rng.randint(1, 9), 10)
        values[f"M_{k}"] = values[k] * roots[first] * roots[second]
        lines.append(f"coupling {k} ({first}, {second})")
        elements.append(("coupling", k, first, second))
    a, b = voltage_pair(nodes)
    value("U1")
    lines.append(f"voltage source U1 ({a}, {b})")
    elements.append(("voltage", "U1", a, b))
    values["g"] = Fraction(rng.randint(2, 9), 11)  # never 1: a mirror of its own source
    gain = "g"
    read = rng.choice(["U1", *inductors])
    a, b = rng.sample(nodes, 2)
    lines.append(f"current source Ibeta ({a}, {b}) = {gain}*I({read})")
    elements.append(("cccs", "Ibeta", a, b, gain, read))
    # a controlled voltage source with a constant part, on nodes of its own
    values["k"] = Fraction(rng.randint(2, 9), 11)
    k = "k"
    c, d = rng.sample(nodes, 2)
    lines.append(f"voltage source Uoff (u, gnd) = {k}*V({c}, {d}) + 1 V")
    lines.append("resistor Ru (u, n1)")
    value("Ru")
    elements += [("vcvs", "Uoff", "u", "gnd", k, c, d), ("resistor", "Ru", "u", "n1")]
    # a transresistance stage reading the source's current or a coupled inductor's
    r = value("r", 1, 9)
    read = rng.choice(["U1", "Uoff", *inductors])
    load = rng.choice(nodes)
    lines.append(f"voltage source Urm (w, gnd) = {r}*I({read})")
    lines.append(f"resistor Rw (w, {load})")
    value("Rw")
    elements += [("ccvs", "Urm", "w", "gnd", r, read), ("resistor", "Rw", "w", load)]
    a, b = rng.sample(nodes, 2)
    lines.append(f"current source J1 ({a}, {b})")
    elements.append(("current", "J1", a, b))
    a, b = rng.sample(nodes + ["u", "w"], 2)
    lines.append(f"port p ({a}, {b})")
    lines[:0] = [f"param {x}" for x in ("g", "k", "r")]
    values["s"] = Fraction(rng.randint(1, 40), rng.randint(1, 7))
    return "\n".join(lines) + "\n", elements, values


def _numeric(elements: list[tuple], values: dict[str, Fraction],
             excitation: str) -> dict[str, complex]:
    """Node voltages and the bordered currents per unit of one excitation: a nodal solve
    written here (numpy), every inductor and voltage-type source with a current unknown
    and an equation of its own, each coupling a −s·M entry between two inductors' rows."""
    v = {name: float(x) for name, x in values.items()}
    s = v["s"]
    nodes = sorted({x for e in elements if e[0] != "coupling" for x in e[2:4]} - {"gnd"})
    index = {x: i for i, x in enumerate(nodes)}
    own = [e[1] for e in elements if e[0] in ("inductor", "voltage", "vcvs", "ccvs")]
    for name in own:
        index[name] = len(index)
    size = len(index)
    A = numpy.zeros((size, size), dtype=complex)
    b = numpy.zeros(size, dtype=complex)

    def add(row: str, column: str, x: complex) -> None:
        if row != "gnd" and column != "gnd":
            A[index[row], index[column]] += x

    def incidence(name: str, a: str, bb: str, row: str, weight: complex) -> None:
        """weight·(V(a) − V(b)) into `row`; the element's current leaves a, enters b."""
        add(row, a, weight), add(row, bb, -weight)
        add(a, name, 1), add(bb, name, -1)

    for e in elements:
        kind, name = e[:2]
        if kind in ("resistor", "capacitor"):
            y = 1 / v[name] if kind == "resistor" else s * v[name]
            _, _, a, bb = e
            add(a, a, y), add(bb, bb, y), add(a, bb, -y), add(bb, a, -y)
        elif kind == "inductor":
            incidence(name, e[2], e[3], name, 1)
            add(name, name, -s * v[name])
        elif kind == "coupling":
            first, second = e[2:]
            add(first, second, -s * v[f"M_{name}"]), add(second, first, -s * v[f"M_{name}"])
        elif kind in ("voltage", "vcvs", "ccvs"):
            incidence(name, e[2], e[3], name, 1)
            if kind == "vcvs":  # V(a, b) − k·V(c, d) = 1 V
                add(name, e[5], -v[e[4]]), add(name, e[6], v[e[4]])
            if kind == "ccvs":  # V(a, b) − r·I(read) = 0
                add(name, e[5], -v[e[4]])
            if name == excitation:
                b[index[name]] = 1
        elif kind == "cccs":  # drives g·I(read) into a
            add(e[2], e[5], -v[e[4]]), add(e[3], e[5], v[e[4]])
        elif kind == "current" and name == excitation:  # driven into a, drawn from b
            for node, sign in ((e[2], 1), (e[3], -1)):
                if node != "gnd":
                    b[index[node]] += sign
    x = numpy.linalg.solve(A, b)
    return {name: x[i] for name, i in index.items()}


def _forest(circuit) -> ControlledForestSolution:
    """The forest path even past MAX_CONTROLS (what `path="forest"` takes below it)."""
    network = build_network(circuit)
    ports = {name: (p.positive, p.negative) for name, p in circuit.ports.items()}
    return ControlledForestSolution(network, {}, ports, lambda: pytest.fail("fell back"),
                                    controls_of(network, limit=None))


def _regular(eliminated) -> bool:
    try:
        eliminated.check()
    except symcirc.SymcircError:
        return False
    return True


@pytest.mark.parametrize("seed", range(16))
def test_coupled_and_current_controlled_networks_agree_on_both_paths(seed):
    text, elements, _ = _random_bordered(random.Random(seed))
    circuit = symcirc.parse(text)
    forest = _forest(circuit)
    eliminated = solution(circuit, path="elimination")
    assert isinstance(eliminated, MnaSolution)
    if not _regular(eliminated):
        with pytest.raises(symcirc.SymcircError):
            forest.check()
        return
    measures = [Voltage(x, "gnd") for x in circuit.nodes if x != "gnd"]
    measures += [Current(e[1]) for e in elements if e[0] not in ("coupling", "resistor")]
    for excitation in ("U1", "Uoff", "J1", port_excitation("p")):
        for measure in measures:
            a = forest.transfer(measure, excitation)
            b = eliminated.transfer(measure, excitation)
            assert a.to_text() == b.to_text(), (measure, excitation)


@pytest.mark.parametrize("seed", range(10))
def test_coupled_networks_match_a_numpy_nodal_solve(seed):
    rng = random.Random(300 + seed)
    text, elements, values = _random_bordered(rng)
    circuit = symcirc.parse(text)
    if not _regular(solution(circuit, path="elimination")):
        return
    forest = _forest(circuit)
    names = set(build_network(circuit).ring.names)
    point = {name: x for name, x in values.items() if name in names}
    for excitation in ("U1", "Uoff", "J1"):
        expected = _numeric(elements, values, excitation)
        for name, number in expected.items():
            measure = Current(name) if name in circuit.elements else Voltage(name, "gnd")
            exact = forest.transfer(measure, excitation).evaluate(point)
            assert complex(float(exact)) == pytest.approx(number, rel=1e-7, abs=1e-9)


def test_loaded_transformer_input_impedance_is_the_reflected_impedance_formula():
    """Z = s·L1 − (s·M)²/(s·L2 + ZL), i.e. jωL1 + ω²M²/(jωL2 + ZL): the reflected
    impedance of a linear transformer (Alexander and Sadiku, "Fundamentals of Electric
    Circuits", magnetically coupled circuits; from memory). The sign of M drops out."""
    circuit = symcirc.parse("param k\ninductor Lp (a, gnd)\ninductor Ls (b, gnd)\n"
                            "coupling k12 (Lp, Ls) = k\nimpedance ZL (b, gnd)\nport in (a, gnd)\n")
    forest = solution(circuit, path="forest")
    assert isinstance(forest, ControlledForestSolution)
    z = forest.transfer(Voltage("a", "gnd"), port_excitation("in"))
    s, Lp, Ls, M, ZL = sympy.symbols("s Lp Ls M_k12 ZL")
    assert sympy.cancel(z.to_sympy() - (s * Lp - (s * M) ** 2 / (s * Ls + ZL))) == 0
    eliminated = solution(circuit, path="elimination")
    assert z.to_text() == eliminated.transfer(Voltage("a", "gnd"),
                                              port_excitation("in")).to_text()


def test_current_mirror_and_transresistance_stage_read_a_sense_source():
    """A 0 V source senses the input current Uin/R1; a mirror of ratio m drives m times it
    into RL (Vout = m·RL·Uin/R1), a transresistance stage gives rm·Uin/R1 (common
    practice)."""
    circuit = symcirc.parse(
        "param m\nparam rm\nvoltage source Uin (a, gnd)\nresistor R1 (a, b)\n"
        "voltage source Usense (b, gnd) = 0 V\ncurrent source Imir (o, gnd) = m*I(Usense)\n"
        "resistor RL (o, gnd)\nvoltage source Urm (t, gnd) = rm*I(Usense)\n"
        "resistor Rt (t, gnd)\n")
    forest = solution(circuit, path="forest")
    assert isinstance(forest, ControlledForestSolution)
    assert forest.transfer(Voltage("o", "gnd"), "Uin").to_text() == "m*RL/R1"
    assert forest.transfer(Voltage("t", "gnd"), "Uin").to_text() == "rm/R1"


def test_a_controlled_voltage_source_with_a_constant_part_excites_its_row():
    """Uamp = k·V(a) + U0: V(o) per unit of U0 is the divider R2/(R2 + Ro)."""
    circuit = symcirc.parse("param k\nvoltage source U (a, gnd)\nresistor R1 (a, gnd)\n"
                            "voltage source Uamp (x, gnd) = k*V(a) + 1 V\n"
                            "resistor Ro (x, o)\nresistor R2 (o, gnd)\n")
    forest = solution(circuit, path="forest")
    assert isinstance(forest, ControlledForestSolution)
    assert forest.transfer(Voltage("o", "gnd"), "Uamp").to_text() == "R2/(R2 + Ro)"
    assert forest.transfer(Voltage("o", "gnd"), "U").to_text() == "k*R2/(R2 + Ro)"


def _active_corpus() -> list[str]:
    """The example and valid corpus files with an active element."""
    from pathlib import Path

    root = Path(__file__).resolve().parents[2]
    files = sorted([*root.glob("examples/*.circuit"), *root.glob("tests/valid/*.circuit")])
    return [pytest.param(str(f), id=f.name) for f in files
            if not build_network(symcirc.load(str(f))).is_passive]


@pytest.mark.parametrize("path", _active_corpus())
def test_corpus_files_with_active_elements_agree(path):
    circuit = symcirc.load(path)
    forest = _forest(circuit)
    eliminated = _solve(circuit, build_network(circuit), frozenset(), "elimination")
    excitations = list(eliminated.equations.rhs)[:3]
    measures = [Voltage(x, "gnd") for x in circuit.nodes if x != "gnd"][-6:]
    measures += [Current(x) for x, e in circuit.elements.items()
                 if e.kind in ("inductor", "voltage source")][:4]
    assert measures and excitations
    for excitation in excitations:
        for measure in measures:
            assert (forest.transfer(measure, excitation).to_text()
                    == eliminated.transfer(measure, excitation).to_text()), (measure, excitation)


@pytest.mark.parametrize("seed", range(8))
def test_the_size_bound_covers_coupled_networks(seed):
    text, *_ = _random_bordered(random.Random(900 + seed))
    circuit = symcirc.parse(text)
    eliminated = solution(circuit, path="elimination")
    if not _regular(eliminated):
        return
    bound = terms_bound(build_network(circuit), [])
    assert bound is not None
    for node in [x for x in circuit.nodes if x != "gnd"][:3]:
        assert eliminated.transfer(Voltage(node, "gnd"), "U1").size()[1] <= bound


def test_networks_beyond_the_forest_path_go_to_elimination():
    """A control reading an independent current source (its value is an excitation), and a
    block of more coupled inductors than bordered.MAX_BLOCK."""
    circuit = symcirc.parse("param g\ncurrent source J (a, gnd)\nresistor R1 (a, gnd)\n"
                            "current source Ib (o, gnd) = g*I(J)\nresistor R2 (o, gnd)\n")
    assert controls_of(build_network(circuit)) is None
    assert isinstance(solution(circuit), MnaSolution)
    lines = ["voltage source U (r0, gnd)", "resistor Rs (r0, r1)"]
    for i in range(1, MAX_BLOCK + 2):
        lines += [f"inductor L{i} (r{i}, gnd)", f"capacitor C{i} (r{i}, gnd)"]
    lines += [f"coupling k{i} (L{i}, L{i + 1})" for i in range(1, MAX_BLOCK + 1)]
    chain = symcirc.parse("\n".join(lines) + "\n")
    assert controls_of(build_network(chain), limit=None) is None
    assert terms_bound(build_network(chain), []) is None


def _gain_chain(k: int) -> str:
    """k inverting stages of finite-gain opamps (a gain's row has two terms)."""
    lines = ["voltage source Uin (o0, gnd)"]
    for i in range(1, k + 1):
        lines += [f"param A{i}", f"resistor Ri{i} (o{i - 1}, n{i})",
                  f"resistor Rf{i} (n{i}, o{i})", f"capacitor Cf{i} (n{i}, o{i})",
                  f"resistor Ro{i} (o{i}, gnd)", f"opamp X{i} (gnd, n{i}, o{i}) = A{i}"]
    return "\n".join(lines) + "\n"


def _sense_chain(k: int) -> str:
    """k stages, each sensing its input current with a 0 V source mirrored onward."""
    lines = ["voltage source Uin (x0, gnd)"]
    for i in range(1, k + 1):
        lines += [f"param m{i}", f"resistor Ri{i} (x{i - 1}, s{i})",
                  f"capacitor Cs{i} (s{i}, gnd)", f"voltage source Us{i} (s{i}, z{i}) = 0 V",
                  f"resistor Rz{i} (z{i}, gnd)",
                  f"current source Im{i} (x{i}, gnd) = m{i}*I(Us{i})",
                  f"resistor Ro{i} (x{i}, gnd)", f"capacitor Co{i} (x{i}, x{i - 1})"]
    return "\n".join(lines) + "\n"


@pytest.mark.parametrize(("text", "node", "terms"), [(_gain_chain(7), "o7", 78125),
                                                     (_sense_chain(4), "x4", 6504)])
def test_the_size_bound_counts_every_term_a_tree_leaves_free(text, node, terms):
    """A tree holding a gain's output pair leaves its equation's terms free (and one holding
    a sensing source's row, the columns of the sources that read it): each is counted."""
    circuit = symcirc.parse(text)
    denominator = solution(circuit, path="elimination").transfer(Voltage(node, "gnd"), "Uin")
    assert denominator.size()[1] == terms
    assert terms_bound(build_network(circuit), []) >= terms


@pytest.mark.parametrize("backend", ["flint", "sympy"])
def test_both_polynomial_backends_expand_the_blocks_alike(monkeypatch, backend):
    monkeypatch.setenv("SYMCIRC_POLYNOMIALS", backend)
    text, *_ = _random_bordered(random.Random(5))
    circuit = symcirc.parse(text)
    forest, eliminated = _forest(circuit), solution(circuit, path="elimination")
    for node in [x for x in circuit.nodes if x != "gnd"]:
        a = forest.transfer(Voltage(node, "gnd"), "U1")
        assert a.ring.backend == backend
        assert a.to_text() == eliminated.transfer(Voltage(node, "gnd"), "U1").to_text()
