"""Elaboration details: names and scopes, value conversion, units, controls, nominals."""

from fractions import Fraction

import pytest
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

import symcirc
from symcirc.language.parser import parse_document, parse_expression
from symcirc.model.circuit import LAPLACE, REFERENCE
from symcirc.model.elaborate import elaborate
from symcirc.model.expressions import expression_in

S = sympy.Symbol


def error_of(text: str) -> symcirc.SymcircError:
    with pytest.raises(symcirc.SymcircError) as caught:
        symcirc.parse(text, filename="t.circuit")
    return caught.value


DIVIDER = """\
voltage source U1 (a, gnd) = 1 V
resistor R1 (a, b) = 1k
resistor R2 (b, gnd) = 3k
port out (b, gnd)
"""


def test_duplicate_points_at_second_and_notes_first():
    error = error_of(DIVIDER + "param R1 = 2\n")
    assert (error.line, error.column) == (5, 7)
    assert any("first declared at line 2" in note for note in error.notes)


def test_ground_spellings_are_one_node():
    circuit = symcirc.parse("voltage source U (a, 0) = 1 V\nresistor R (a, gnd) = 1k\n")
    assert circuit.elements["U"].nodes == ("a", REFERENCE) == circuit.elements["R"].nodes
    assert circuit.nodes == (REFERENCE, "a") and not circuit.reference_chosen


def test_expression_in_resolves_against_the_circuit():
    circuit = symcirc.parse(DIVIDER)
    expr = expression_in(circuit, parse_expression("R2/(R1 + R2) * 2 kΩ + s"), "cmd", None)
    assert expr == S("R2") / (S("R1") + S("R2")) * 2000 + LAPLACE
    with pytest.raises(symcirc.SymcircError) as caught:
        expression_in(circuit, parse_expression("R1 + R3"), "<command line>", "R1 + R3")
    assert caught.value.column == 6 and "R3" in caught.value.message
    assert caught.value.file == "<command line>"


def test_pi_and_sqrt_build_exact_sympy():
    circuit = symcirc.parse(DIVIDER + "param w = 2*pi*sqrt(4)*1 kHz\n")
    w = circuit.parameters["w"]
    assert w.value == 4000 * sympy.pi
    # nominal: a rational within 1e-20 of 4000π (mpmath, independent of sympy's printing)
    import mpmath

    mpmath.mp.dps = 40
    assert abs(mpmath.mpf(w.nominal.numerator) / w.nominal.denominator - 4000 * mpmath.pi) < 1e-20


def test_every_symbol_is_a_plain_symbol():
    circuit = symcirc.parse(DIVIDER + "param g = R1*R2\n")
    for symbol in circuit.parameters["g"].value.free_symbols:
        assert symbol == sympy.Symbol(symbol.name)  # no assumptions attached


def test_port_voltage_in_a_control_and_current_of_source():
    circuit = symcirc.parse(DIVIDER + "voltage source Uamp (o, gnd) = 3*V(out) + I(U1)\n"
                            "resistor RL (o, gnd) = 1k\n")
    controls = {(c.kind, c.nodes, c.element): c.coefficient
                for c in circuit.elements["Uamp"].controls}
    assert controls == {("voltage", ("b", REFERENCE), None): 3, ("current", (), "U1"): 1}


@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(st.integers(-9, 9), st.sampled_from(["V(a)", "V(b)", "V(a, b)",
                                                               "I(R1)", "I(U1)"]),
                          st.sampled_from(["", "*k", "/k", "*(k + 1)"])),
                min_size=1, max_size=6))
def test_controls_match_sympy_derivatives(terms):
    # A random linear combination; sympy differentiates the same sum independently.
    text = " + ".join(f"({c}){m}*{v}" for c, v, m in terms)
    source = (DIVIDER + "param k = 2\n" + f"current source Igm (gnd, o) = {text}\n"
              "resistor RL (o, gnd) = 1k\n")
    placeholders = {v: S(f"x{i}") for i, v in enumerate(["V(a)", "V(b)", "V(a, b)",
                                                         "I(R1)", "I(U1)"])}
    k = S("k")
    factors = {"": 1, "*k": k, "/k": 1 / k, "*(k + 1)": k + 1}
    reference = sum(c * factors[m] * placeholders[v] for c, v, m in terms)
    expected = {
        ("voltage", ("a", REFERENCE)): reference.diff(placeholders["V(a)"]),
        ("voltage", ("b", REFERENCE)): reference.diff(placeholders["V(b)"]),
        ("voltage", ("a", "b")): reference.diff(placeholders["V(a, b)"]),
        ("current", "R1"): reference.diff(placeholders["I(R1)"]),
        ("current", "U1"): reference.diff(placeholders["I(U1)"]),
    }
    circuit = elaborate(parse_document(source))  # elaboration alone: no dimension checks
    if all(sympy.simplify(v) == 0 for v in expected.values()):
        # every term cancelled: an independent source of value 0
        assert not circuit.elements["Igm"].controls and circuit.elements["Igm"].nominal == 0
    got = {(c.kind, c.nodes if c.kind == "voltage" else c.element): c.coefficient
           for c in circuit.elements["Igm"].controls}
    for key, value in expected.items():
        assert sympy.simplify(got.get(key, 0) - value) == 0, (text, key)


def test_nominals_follow_a_long_chain_without_recursion():
    lines = ["param p0 = 1"] + [f"param p{i} = p{i - 1} + 1" for i in range(1, 3000)]
    circuit = symcirc.parse("\n".join(lines) + "\n" + DIVIDER)
    assert circuit.parameters["p2999"].nominal == 3000


def test_definition_cycle_through_elements():
    error = error_of(DIVIDER.replace("= 3k", "= 2*R3") + "resistor R3 (b, gnd) = R2\n")
    assert "defined in terms of itself" in error.message and "R2 → R3 → R2" in error.message


def test_nominal_from_elements_and_unknown_with_s():
    circuit = symcirc.parse(DIVIDER + "capacitor C (b, gnd) = 1/(2*pi*R2*1 kHz)\n"
                            "impedance Z (b, gnd) = R1 + s*1m\n")
    c = circuit.elements["C"]
    assert c.definition == 1 / (2 * sympy.pi * S("R2") * 1000)
    assert abs(float(c.nominal) - 1 / (2 * 3.141592653589793 * 3e6)) < 1e-22
    assert circuit.elements["Z"].nominal is None


def test_units_of_expressions_are_checked():
    # F = s/Ω: a capacitance from a time constant and a resistance is fine ...
    ok = symcirc.parse(DIVIDER + "param tau = 1 ms\ncapacitor C (b, gnd) = tau/R1\n")
    assert ok.elements["C"].nominal == Fraction(1, 10**6)
    # ... a conductance given in ohms is not
    error = error_of(DIVIDER + "conductance G (b, gnd) = R1 + 1k\n")
    assert "given in Ω" in error.message and "in S" in error.message
    # a plain factor may carry an unwritten unit: no verdict on `s*1m` (1 mH) or `2*R1`
    symcirc.parse(DIVIDER + "impedance Z (b, gnd) = R1 + s*1m\nconductance G (b, gnd) = 2*R1\n")


def test_plain_numbers_take_any_unit():
    circuit = symcirc.parse(DIVIDER + "current source Igm (gnd, b) = 10m*V(a)\n")
    assert circuit.elements["Igm"].controls[0].coefficient == Fraction(1, 100)


def test_block_defined_inside_a_block_and_recursion_through_nesting():
    text = (
        "voltage source U (a, gnd) = 1 V\n"
        "block outer (x, y)\n"
        "    block inner (p, q)\n"
        "        resistor R (p, q) = 1k\n"
        "    end\n"
        "    inner i (x, y)\n"
        "end\n"
        "outer o (a, gnd)\n"
    )
    circuit = symcirc.parse(text)
    assert list(circuit.elements) == ["U", "R_i_o"]
    error = error_of(text.replace("resistor R (p, q) = 1k", "outer again (p, q)"))
    assert "recursive" in error.message and "outer → inner → outer" in error.message


def test_unused_recursive_block_is_still_an_error():
    error = error_of("block loop (a, b)\n    loop again (a, b)\nend\n" + DIVIDER)
    assert (error.line, error.column) == (2, 5) and "loop → loop" in error.message


def test_rename_target_collides_with_existing_name():
    error = error_of("block pair (t, b)\n    resistor Ra (t, b) = 1k\nend\n" + DIVIDER
                     + "pair x (a, gnd) with Ra = R1\n")
    assert error.line == 8 and "duplicate name `R1`" in error.message


def test_errors_inside_instances_say_which_instance():
    error = error_of("block pair (t, b)\n    resistor Ra (t, b) = Rq\nend\n" + DIVIDER
                     + "pair x (a, gnd)\n")
    assert error.line == 2 and "`Rq`" in error.message
    assert any("instance `x` of block pair at line 8" in note for note in error.notes)


def test_derive_checks_quantity_names():
    assert "not a node" in error_of(DIVIDER + "derive V(q)\n").message
    assert "not an element" in error_of(DIVIDER + "derive I(Rx)\n").message
    assert "not an independent source" in error_of(
        DIVIDER + "derive gain(R1, V(b))\n").message
    circuit = symcirc.parse(DIVIDER + "derive V(out), V(b, a), I(R1), Z(out), twoport(out, out)"
                            ".z21, sensitivity(V(out), R2), tolerance(V(out))\n")
    assert len(circuit.derives[0].quantities) == 7
