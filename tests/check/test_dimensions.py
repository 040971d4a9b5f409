"""Units of formulas: symbols' dimensions from their kinds and units, sums of like terms,
and errors that name the offending term. Reference: the SI brochure (BIPM, 9th ed.,
table 4, derived units in base units): Ω = kg·m²·s⁻³·A⁻², F = kg⁻¹·m⁻²·s⁴·A², etc."""

from fractions import Fraction

import pytest
import sympy

import symcirc
from symcirc.check.dimensions import (
    DIMENSIONLESS,
    UNITS,
    Dimension,
    DimensionMismatch,
    check_assumption,
    check_circuit,
    check_expression,
    describe,
    parse_unit,
    symbol_dimensions,
    syntax_dimension,
)
from symcirc.errors import Location, SymcircError
from symcirc.language.parser import parse_expression
from symcirc.model.circuit import Assumption

CIRCUIT = """\
title "Sensor input stage, dimension checks"
param Rb = 4k7 Ω         "bias resistor"
param tau = Rb*Cf        "time constant"
param gm                 "transconductance"
param T = 25             "temperature, °C"
resistor  R1 (in, a) = 10 kΩ
resistor  R2 (a, gnd)
capacitor Cf (a, out) = 10 nF
inductor  L1 (out, b)
conductance Gp (b, gnd)
voltage source Uin (in, gnd)
current source Igm (out, gnd) = gm*V(a, gnd)
opamp U1 (gnd, a, out) = A0/(1 + s*tau)
param A0 = 100000
port o (out, gnd)
"""


def si(kg=0, m=0, s=0, a=0) -> Dimension:
    return Dimension((Fraction(kg), Fraction(m), Fraction(s), Fraction(a)))


@pytest.fixture(scope="module")
def circuit():
    return symcirc.parse(CIRCUIT, "stage.circuit")


def test_units_in_si_base_units():
    # SI brochure, 9th edition, table 4 (from memory).
    assert UNITS["Ω"] == si(1, 2, -3, -2)
    assert UNITS["F"] == si(-1, -2, 4, 2)
    assert UNITS["H"] == si(1, 2, -2, -2)
    assert UNITS["S"] == si(-1, -2, 3, 2)
    assert UNITS["V"] == si(1, 2, -3, -1)
    assert UNITS["W"] == si(1, 2, -3)
    # Common practice: RC is a time, L/R is a time, sqrt(LC) is a time.
    assert UNITS["Ω"] * UNITS["F"] == UNITS["s"]
    assert UNITS["H"] / UNITS["Ω"] == UNITS["s"]
    assert (UNITS["H"] * UNITS["F"]) ** Fraction(1, 2) == UNITS["s"]


@pytest.mark.parametrize("text, expected", [
    ("Ω", "Ω"), ("V/V", "dimensionless"), ("A/V", "S"), ("1/s", "1/s"), ("s^-1", "1/s"),
    ("Hz", "1/s"), ("Ω·s", "H"), ("V/A", "Ω"), ("", "dimensionless"), ("F", "F"),
])
def test_parse_and_describe(text, expected):
    assert describe(parse_unit(text)) == expected


def test_unknown_units_are_not_guessed():
    assert parse_unit("furlong") is None


def test_symbol_dimensions(circuit):
    dims = symbol_dimensions(circuit)
    assert dims["R1"] == dims["R2"] == UNITS["Ω"]
    assert dims["Cf"] == UNITS["F"] and dims["L1"] == UNITS["H"] and dims["Gp"] == UNITS["S"]
    assert dims["Uin"] == UNITS["V"] and dims["Igm"] == UNITS["A"]
    assert dims["U1"] == DIMENSIONLESS and dims["s"] == UNITS["Hz"]
    assert dims["Rb"] == UNITS["Ω"]
    assert dims["tau"] == UNITS["s"]  # from its definition Rb*Cf
    assert dims["gm"] == UNITS["S"]  # from the controlled source it scales
    assert dims["T"] is None  # no unit written: free


def expr(text):
    return parse_expression(text, "<test>")


def test_sums_of_like_terms(circuit):
    dims = symbol_dimensions(circuit)
    assert syntax_dimension(expr("1 + s*R1*Cf"), dims) == DIMENSIONLESS
    assert syntax_dimension(expr("R1 + 2 kΩ"), dims) == UNITS["Ω"]
    assert syntax_dimension(expr("sqrt(L1*Cf)"), dims) == UNITS["s"]
    assert syntax_dimension(expr("R1*(1 + T)"), dims) == UNITS["Ω"]  # T is free
    assert syntax_dimension(expr("V(a)/R1"), dims) == UNITS["A"]


@pytest.mark.parametrize("text, term, words", [
    ("1 + s*R1", "s*R1", "1/F"),  # a missing capacitor: Ω/s added to 1
    ("R1 + Cf", "Cf", "in F"),
    ("R1 + R2 + L1", "L1", "in H"),
    ("R1 + 100", "100", "a plain number"),
    ("R1^Cf", "Cf", "needs pure numbers"),
])
def test_mismatch_names_the_offending_term(circuit, text, term, words):
    dims = symbol_dimensions(circuit)
    with pytest.raises(DimensionMismatch) as caught:
        syntax_dimension(expr(text), dims)
    assert f"`{term}`" in caught.value.message and words in caught.value.message
    assert caught.value.node.column == text.index(term) + 1


def test_check_expression_points_at_the_term(circuit):
    text = "R1 + Cf*R2"
    with pytest.raises(SymcircError) as caught:
        check_expression(circuit, expr(text), "Ω", Location("<claim>", 1, 1), source=text)
    err = caught.value
    assert (err.line, err.column) == (1, 6)
    assert "`Cf*R2`" in err.message
    assert err.format().splitlines()[-1].index("^") == 4 + 5


def test_check_expression_against_the_expected_unit(circuit):
    with pytest.raises(SymcircError, match="is dimensionless, but the value is in Ω"):
        check_expression(circuit, expr("R1/R2"), "Ω", Location("x", 3, 1))
    assert check_expression(circuit, expr("4k7"), "Ω", None) == UNITS["Ω"]
    assert check_expression(circuit, sympy.Symbol("R1") * 2, "Ω", None) == UNITS["Ω"]


def test_where_clause_compares_like_with_like(circuit):
    check_assumption(circuit, Assumption("much_greater", "R1", "R2"))
    with pytest.raises(SymcircError, match="compares Ω with F"):
        check_assumption(circuit, Assumption("much_greater", "R1", "Cf",
                                             Location("stage.circuit", 20, 1)))


def test_check_circuit_accepts_a_consistent_circuit(circuit):
    check_circuit(circuit)


def test_check_circuit_reports_a_bad_where_clause():
    with pytest.raises(SymcircError) as caught:  # every input check runs on reading
        symcirc.parse(CIRCUIT + "derive V(o) where R1 >> Cf\n", "stage.circuit")
    assert caught.value.line == CIRCUIT.count("\n") + 1


# ---------------------------------------------------------------- through the commands

STAGE = """\
title "Sensor input stage"
voltage source Uin (in, gnd)
resistor  R1 (in, a) = 10 kΩ
resistor  R2 (a, gnd)
capacitor C1 (a, gnd)
"""


@pytest.mark.parametrize("command", ["derive", "check"])
@pytest.mark.parametrize("extra, position, words", [
    # A `where` clause comparing a resistance with a capacitance.
    ("derive V(a) where R1 >> C1\n", (6, 19), "`R1 >> C1` compares Ω with F"),
    # A transconductance written as a capacitance: the coefficient is named and pointed at.
    ("current source Igm (a, gnd) = C1*V(in, gnd)\nderive V(a)\n", (6, 31),
     "`C1` is in F, but the coefficient of V(..) in current source Igm is in S"),
    # A defining value adding a capacitance to a resistance names both terms.
    ("resistor R3 (a, gnd) = R1 + 10 nF\nderive V(a)\n", (6, 24),
     "adds Ω and F: the terms' units differ (`R1` is in Ω, `10 nF` in F)"),
])
def test_commands_report_dimension_mismatches(tmp_path, cli, command, extra, position,
                                              words):
    path = tmp_path / "stage.circuit"
    path.write_text(STAGE + extra, encoding="utf-8")
    arguments = [command, str(path)] + (["V(a) = Uin"] if command == "check" else [])
    status, _, err = cli(*arguments)
    assert status == 2
    assert f"{path}:{position[0]}:{position[1]}: error: " in err and words in err
    assert "Traceback" not in err
    caret = err.splitlines()[-1]
    assert caret.index("^") == 4 + position[1] - 1
