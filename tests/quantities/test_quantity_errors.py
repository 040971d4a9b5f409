"""Quantities that do not exist for a circuit say so plainly, at the place they were asked.

Each case names the circuit situation and checks the message, the position and, through the
command line, the exit status 2 with the `FILE:LINE:COL: error:` layout.
"""

from __future__ import annotations

import pytest

import symcirc
from symcirc.errors import SymcircError

DIVIDER = ("voltage source U (i, gnd)\nresistor R1 (i, o)\nresistor R2 (o, gnd)\n"
           "port out (o, gnd)\nport src (i, gnd)\n")


def error_of(text: str, quantity: str, **options) -> SymcircError:
    circuit = symcirc.parse(text)
    with pytest.raises(SymcircError) as caught:
        circuit.derive(quantity, **options)
    return caught.value


# ---------------------------------------------------------------- equivalents


def test_port_across_a_voltage_source_has_no_norton_equivalent():
    err = error_of(DIVIDER, "norton(src)")
    assert "port src has no Norton equivalent" in err.message
    assert "voltage source U is connected across port src" in err.message
    assert "thevenin(src)" in err.message


def test_shorted_port_has_zero_impedance_stated_and_no_admittance():
    circuit = symcirc.parse(DIVIDER)
    (z,) = circuit.derive("Z(src)")
    assert z.expression == 0
    assert any("voltage source U" in note for note in z.notes)
    err = error_of(DIVIDER, "Y(src)")
    assert "Y(src) is infinite" in err.message and "Z(src) = 0" in err.message


def test_ideal_opamp_output_port_has_zero_thevenin_impedance_and_no_norton():
    text = ("voltage source U (i, gnd)\nresistor R1 (i, n)\nresistor R2 (n, o)\n"
            "opamp X (gnd, n, o)\nport out (o, gnd)\n")
    (impedance,) = symcirc.parse(text).derive("thevenin(out).impedance")
    assert impedance.expression == 0
    assert any("opamp X" in note for note in impedance.notes)
    err = error_of(text, "norton(out)")
    assert "no Norton equivalent" in err.message and "opamp X" in err.message


NEGATIVE_CONDUCTANCE = (
    # a controlled source that exactly cancels Rx: the port sees an ideal current source
    "current source Iq (gnd, a)\nresistor Rx (a, gnd)\n"
    "current source Ineg (a, gnd) = V(a)/Rx\nport out (a, gnd)\n"
)


def test_port_driven_by_an_ideal_current_source_has_no_thevenin_equivalent():
    err = error_of(NEGATIVE_CONDUCTANCE, "thevenin(out)")
    assert "port out has no Thevenin equivalent" in err.message
    assert "use norton(out)" in err.message
    # ... but its Norton equivalent exists: the source current, zero admittance
    norton = symcirc.parse(NEGATIVE_CONDUCTANCE).norton("out")
    assert norton.admittance.expression == 0
    assert str(norton.current.expression) == "-Iq"  # Iq drives into gnd, draws from a


def test_infinite_port_impedance_is_reported():
    err = error_of(NEGATIVE_CONDUCTANCE, "Z(out)")
    assert "Z(out) is infinite" in err.message and "Y(out) is 0" in err.message
    (y,) = symcirc.parse(NEGATIVE_CONDUCTANCE).derive("Y(out)")
    assert y.expression == 0


# ---------------------------------------------------------------- transfers


def test_transfer_from_a_source_the_quantity_does_not_depend_on_is_zero_and_says_so():
    # a buffer isolates the first stage from the second one's source
    text = ("voltage source U1 (a, gnd)\nresistor R1 (a, b)\nresistor R2 (b, gnd)\n"
            "opamp X (b, o, o)\nvoltage source U2 (c, gnd)\nresistor R3 (c, o)\n"
            "port out (b, gnd)\n")
    (gain,) = symcirc.parse(text).derive("gain(U2, out)")
    assert gain.expression == 0
    assert gain.notes == ("V(out) does not depend on source U2: the gain is 0.",)


def test_gain_from_a_controlled_source_or_an_element_is_refused():
    text = DIVIDER + "param k\nvoltage source Uamp (e, gnd) = k*V(o)\nresistor R3 (e, gnd)\n"
    err = error_of(text, "gain(Uamp, out)")
    assert "Uamp is a controlled source" in err.message
    err = error_of(text, "gain(R1, out)")
    assert "R1 is a resistor, not a source" in err.message


def test_circuit_without_sources_has_zero_voltages_with_a_note():
    (v,) = symcirc.parse("resistor R1 (a, gnd)\nresistor R2 (a, b)\nresistor R3 (b, gnd)\n"
                         ).derive("V(b)")
    assert v.expression == 0 and "no independent source" in v.notes[0]


# ---------------------------------------------------------------- two-ports


SERIES_THEN_NOTHING = ("impedance Z (a, b)\nadmittance Y (b, gnd)\nport p1 (a, gnd)\n"
                       "port p2 (b, gnd)\n")


def test_twoport_parameter_set_that_does_not_exist_is_named():
    # a shunt admittance alone: no z parameters? it has them; y does not exist
    shunt = "admittance Y (a, gnd)\nport p1 (a, gnd)\nport p2 (a, gnd)\n"
    err = error_of(shunt, "twoport(p1, p2).y11")
    assert "twoport(p1, p2) has no y parameters" in err.message
    assert "short-circuit admittances are unbounded" in err.message
    (z11,) = symcirc.parse(shunt).derive("twoport(p1, p2).z11")
    assert str(z11.expression) == "1/Y"


def test_twoport_lists_the_missing_sets_in_a_note_and_the_api_raises_on_them():
    shunt = "admittance Y (a, gnd)\nport p1 (a, gnd)\nport p2 (a, gnd)\n"
    circuit = symcirc.parse(shunt)
    results = circuit.derive("twoport(p1, p2)")
    names = [r.quantity.rsplit(".", 1)[1] for r in results]
    assert "y11" not in names and "z11" in names and "A" in names
    assert "no y parameters" in results[0].notes[0]
    with pytest.raises(SymcircError, match="no y parameters"):
        _ = circuit.twoport("p1", "p2").y21


def test_twoport_without_transmission_has_no_chain_parameters():
    # two ports with nothing between them: z21 = 0, so no A B C D
    text = ("resistor Ra (a, gnd)\nresistor Rb (b, gnd)\nport p1 (a, gnd)\nport p2 (b, gnd)\n")
    err = error_of(text, "twoport(p1, p2).A")
    assert "no chain parameters A B C D" in err.message


def test_twoport_of_one_port_twice_is_refused():
    err = error_of(SERIES_THEN_NOTHING, "twoport(p1, p1)")
    assert "two different ports" in err.message


# ---------------------------------------------------------------- singular systems


def test_opamp_without_feedback_is_named():
    text = ("voltage source U (a, gnd)\nresistor R1 (a, gnd)\nopamp X (a, gnd, o)\n"
            "resistor R2 (o, gnd)\nport out (o, gnd)\n")
    err = error_of(text, "V(out)")
    assert "opamp X has no feedback" in err.message
    assert err.line == 1 and err.file == "<quantity>"


def test_voltage_source_that_sets_its_own_voltage_is_singular_and_named():
    text = "param k\nvoltage source Uamp (o, gnd) = V(o)\nresistor R (o, gnd)\nport out (o, gnd)\n"
    err = error_of(text, "V(out)")
    assert "no unique solution" in err.message
    assert "controlled source Uamp makes them dependent" in err.message
    assert "set by V(o)" in err.message


def test_current_source_that_cancels_the_current_it_copies_is_named_with_its_control():
    # Icopy drives into gnd exactly the current R draws from node a: node a is left undetermined
    text = "current source Iq (gnd, a)\nresistor R (a, gnd)\ncurrent source Icopy (a, gnd) = I(R)\n"
    err = error_of(text, "V(a)")
    assert "controlled source Icopy makes them dependent" in err.message
    assert "set by I(R)" in err.message


def test_only_the_opamp_without_feedback_is_blamed():
    # X has feedback through R2; Y shares X's inputs but nothing returns from its output
    text = ("voltage source U (i, gnd)\nresistor R1 (i, n)\nopamp X (gnd, n, o)\n"
            "resistor R2 (n, o)\nopamp Y (gnd, n, o2)\nresistor R3 (o2, gnd)\n")
    err = error_of(text, "V(o)")
    assert "opamp Y has no feedback" in err.message
    assert "X" not in err.message.split("no unique solution")[1]


def test_loop_of_sources_through_a_transformer_names_them():
    # the transformer ties V(a) = T*V(b) while U and U2 set both: its current is undetermined
    text = ("voltage source U (a, gnd)\nresistor R1 (a, gnd)\n"
            "transformer T (a, gnd; b, gnd) = 2\nvoltage source U2 (b, gnd)\n")
    err = error_of(text, "I(R1)")
    assert "the current of T is not determined" in err.message
    assert "among U, T, U2" in err.message


def test_a_job_too_large_to_derive_stops_with_a_clear_error(tmp_path, cli, monkeypatch):
    """python-flint aborts the process when memory runs out, so the engine refuses
    polynomials past a size limit (lowered here so that a small circuit reaches it)."""
    from symcirc.algebra import polynomials as polys

    lines = ["voltage source U (n0, gnd)"]
    for i in range(1, 7):
        lines += [f"resistor Rs{i} (n{i - 1}, n{i})", f"resistor Rp{i} (n{i}, gnd)"]
    lines += ["opamp X (n6, o, o)", "resistor RL (o, gnd)", "port out (o, gnd)"]
    path = tmp_path / "ladder.circuit"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    (voltage,) = symcirc.load(str(path)).derive("thevenin(out).voltage")
    assert voltage.exact.size() == (1, 233)  # 233 terms: fine at the normal limit
    monkeypatch.setattr(polys, "MAX_TERMS", 100)
    code, _, err = cli("derive", str(path), "thevenin(out).voltage")
    assert code == 2 and "Traceback" not in err
    assert err.startswith("<command line>:1:1: error: the exact derivation is too large")
    assert "the limit is 100" in err and "note: derive the circuit in parts" in err


# ---------------------------------------------------------------- arguments


@pytest.mark.parametrize("quantity, message", [
    ("thevenin(nowhere)", "`nowhere` is not a port of this circuit"),
    ("thevenin(o)", "`o` is a node, not a port"),
    ("thevenin(out).power", "thevenin(..) has no part `.power`"),
    ("thevenin(out, src)", "thevenin(..) takes one port"),
    ("V(q)", "`q` is not a node of this circuit"),
    ("I(R9)", "`R9` is not an element of this circuit"),
    ("I(R12)", "`R12` is not an element of this circuit; did you mean `R"),
    ("gain(U, o)", "`o` is a node; write V(o)"),
    ("sensitivity(V(out), Q)", "`Q` is not a parameter or element"),
    ("frobnicate(out)", "unknown quantity `frobnicate(..)`"),
    ("twoport(out, src).w11", "twoport(..) has no part `.w11`"),
])
def test_bad_arguments_are_reported_with_their_position(quantity, message):
    err = error_of(DIVIDER, quantity)
    assert message in err.message
    assert err.file == "<quantity>" and err.line == 1 and err.column >= 1
    assert err.source_line == quantity


def test_current_of_a_coupling_is_refused():
    text = ("voltage source U (a, gnd)\ninductor L1 (a, gnd)\ninductor L2 (b, gnd)\n"
            "resistor R (b, gnd)\ncoupling k12 (L1, L2) = 0.9\n")
    err = error_of(text, "I(k12)")
    assert "carries no current" in err.message and "I(L1)" in err.message


def test_relative_sensitivity_of_a_zero_quantity_is_undefined():
    text = DIVIDER + "resistor R3 (x, gnd)\nresistor R4 (x, y)\nresistor R5 (y, gnd)\n"
    err = error_of(text, "relative_sensitivity(V(x), R3)")
    assert "undefined" in err.message and "V(x) is 0" in err.message


def test_limit_that_grows_without_bound_is_reported_at_the_where_clause(cli, tmp_path):
    path = tmp_path / "grow.circuit"
    path.write_text("voltage source U (i, gnd)\nresistor R1 (i, o)\nresistor R2 (o, gnd)\n"
                    "port out (o, gnd)\nderive Z(out) where R1 -> oo, R2 -> oo\n")
    assert cli("derive", str(path)).status == 2


def test_limit_that_grows_without_bound_names_the_quantity_and_the_clause(tmp_path, cli):
    path = tmp_path / "grow.circuit"
    path.write_text("voltage source U (i, gnd)\nresistor R1 (i, o)\nresistor R2 (o, gnd)\n"
                    "port out (o, gnd)\nderive Z(out) where R2 -> oo\n")
    code, out, _ = cli("derive", str(path))
    # Z(out) = R1*R2/(R1 + R2) tends to R1 as the shunt opens (common practice): finite
    assert code == 0 and out == "Z(out) where R2 -> oo = R1\n"
    # I(R2) per volt is 1/(R1 + R2): 1/R1 as R2 -> 0, then unbounded as R1 -> 0
    path.write_text("voltage source U (i, gnd)\nresistor R1 (i, o)\nresistor R2 (o, gnd)\n"
                    "port out (o, gnd)\nderive gain(U, I(R2)) where R2 -> 0, R1 -> 0\n")
    code, _, err = cli("derive", str(path))
    assert code == 2 and "Traceback" not in err
    assert "I(R2)" in err and "grows without bound" in err
    assert f"{path}:5:" in err.splitlines()[0]


def test_command_line_error_layout_and_exit_status(tmp_path, cli):
    path = tmp_path / "divider.circuit"
    path.write_text(DIVIDER)
    code, _, err = cli("derive", str(path), "norton(src)")
    assert code == 2
    first, line, caret = err.splitlines()[:3]
    assert first.startswith("<command line>:1:1: error: port src has no Norton equivalent")
    assert line.strip() == "norton(src)" and caret.strip() == "^"
    assert "Traceback" not in err


def test_error_in_a_file_derive_statement_points_into_the_file(tmp_path, cli):
    path = tmp_path / "divider.circuit"
    path.write_text(DIVIDER + "derive V(out), norton(src)\n")
    code, _, err = cli("derive", str(path))
    assert code == 2
    assert err.startswith(f"{path}:6:16: error: port src has no Norton equivalent")
