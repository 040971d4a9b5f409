"""The reference node exists in every circuit: ports may name gnd though no part touches it.
Chain parameters against Pozar, Microwave Engineering, section 4.4, the table of ABCD
parameters of some useful two-port circuits (section and table from memory): a series
impedance Z has A = 1, B = Z, C = 0, D = 1; a shunt admittance Y has A = 1, B = 0, C = Y,
D = 1. The project's chain parameters take the port-2 current flowing out, as Pozar's do."""

import pytest
import sympy

import symcirc
from symcirc.errors import SymcircError

L, C, R, s = sympy.symbols("L C R s")

SERIES = """\
title "Series choke between two ports"
inductor L (p1, p2)
port P1 (p1, gnd)
port P2 (p2, gnd)
"""


def chain(text: str) -> dict[str, sympy.Expr]:
    circuit = symcirc.parse(text, "twoport.circuit")
    found = {r.quantity.rsplit(".", 1)[1]: r.expression
             for r in circuit.derive("twoport(P1, P2)")}
    return {k: found[k] for k in "ABCD"}


def test_series_inductor_on_a_bare_gnd_is_pozars_series_impedance():
    assert chain(SERIES) == {"A": 1, "B": L * s, "C": 0, "D": 1}


def test_series_resistor_with_ports_written_as_node_0():
    text = SERIES.replace("inductor L", "resistor R").replace("gnd", "0")
    assert chain(text) == {"A": 1, "B": R, "C": 0, "D": 1}


def test_shunt_capacitor_is_pozars_shunt_admittance():
    text = """\
title "Shunt capacitor"
capacitor C (a, gnd)
port P1 (a, gnd)
port P2 (a, gnd)
"""
    assert chain(text) == {"A": 1, "B": 0, "C": C * s, "D": 1}


def test_series_element_has_no_z_parameters_and_says_why():
    circuit = symcirc.parse(SERIES, "twoport.circuit")
    results = circuit.derive("twoport(P1, P2)")
    assert not any(r.quantity.endswith(".z11") for r in results)
    assert any("no z parameters" in note for r in results for note in r.notes)
    y = {r.quantity.rsplit(".", 1)[1]: r.expression for r in results}
    assert sympy.simplify(y["y11"] - 1 / (L * s)) == 0
    assert sympy.simplify(y["y21"] + 1 / (L * s)) == 0


def test_the_open_port_impedance_is_infinite_with_a_located_message():
    circuit = symcirc.parse(SERIES, "twoport.circuit")
    with pytest.raises(SymcircError, match=r"Z\(P1\) is infinite: .*nothing conducts"):
        circuit.derive("Z(P1)")


def test_a_group_floating_apart_from_every_port_is_still_refused():
    text = """\
title "Island"
voltage source Ub (in, gnd) = 1 V
resistor R1 (in, gnd) = 1k
resistor R2 (x, y) = 1k
port P (x, y)
"""
    with pytest.raises(SymcircError, match="no path through elements to the reference node"):
        symcirc.parse(text, "island.circuit")


def test_an_unknown_node_in_a_port_is_still_an_error():
    text = SERIES.replace("port P2 (p2, gnd)", "port P2 (p3, gnd)")
    with pytest.raises(SymcircError, match="unknown node `p3` in a port"):
        symcirc.parse(text, "twoport.circuit")


def test_asking_the_api_for_missing_z_parameters_is_a_located_error():
    circuit = symcirc.parse(SERIES, "twoport.circuit")
    with pytest.raises(SymcircError) as caught:
        circuit.twoport("P1", "P2").z11  # noqa: B018 -- the attribute raises
    assert caught.value.file == "<quantity>" and caught.value.line == 1
    assert caught.value.message.startswith("twoport(P1, P2): no z parameters")
