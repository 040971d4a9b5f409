"""`symcirc derive`: formats, nominal values, substitution, the file's own derive statements,
and the JSON contract (the expression reads back with sympy to the same expression)."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
import sympy
from sympy.parsing.sympy_parser import parse_expr

import symcirc

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"

# A sensor front end (invented): an RTD divider, buffered, then an RC filter
FRONT_END = """\
title "RTD divider into a filtered ADC input"
param R0 = 100 Ω     "RTD at 0 °C"
param alpha = 3.85m  "RTD coefficient"
param T = 50         "temperature, °C"
voltage source Uref (ref, gnd) = 2.5 V
resistor  Rs (ref, a) = 1 kΩ
resistor  Rt (a, gnd) = R0*(1 + alpha*T)
opamp     U1 (a, b, b)       "buffer"
resistor  Rf (b, o) = 10 kΩ
capacitor Cf (o, gnd) = 100 nF
port out (o, gnd)
port tap (a, gnd)
derive thevenin(tap)
derive gain(Uref, out) where Cf -> 0
"""


@pytest.fixture
def front_end(tmp_path):
    path = tmp_path / "front_end.circuit"
    path.write_text(FRONT_END, encoding="utf-8")
    return str(path)


def test_default_derives_the_files_statements_with_their_where_clauses(front_end, cli):
    code, out, _ = cli("derive", front_end)
    assert code == 0
    lines = out.splitlines()
    assert lines[0].startswith("thevenin(tap).voltage = ")
    assert lines[1].startswith("thevenin(tap).impedance = ")
    # with Cf -> 0 the RC filter passes the divider ratio Rt/(Rs + Rt) (common practice)
    assert lines[2] == "gain(Uref, out) where Cf -> 0 = Rt/(Rs + Rt)"


def test_text_lines_and_values_in_engineering_notation(front_end, cli):
    code, out, _ = cli("derive", front_end, "Z(tap)", "gain(Uref, out)", "--values")
    assert code == 0
    z_line, gain_line = out.splitlines()
    assert z_line.startswith("Z(tap) = Rs*Rt/(Rs + Rt)")
    # Rt = 100*(1 + 0.00385*50) = 119.25 Ω; Rs || Rt = 106.54... Ω (hand arithmetic)
    assert z_line.endswith("≈ 106.5 Ω")  # four digits, as the notes show it
    assert gain_line.endswith("no nominal value: it depends on s (a function of frequency)")


def test_substitute_replaces_definitions(front_end, cli):
    code, out, _ = cli("derive", front_end, "thevenin(tap).voltage", "--substitute")
    assert code == 0
    expression = out.split(" = ", 1)[1]
    assert "R0" in expression and "alpha" in expression and "Rt" not in expression


def test_json_contract_and_readback(front_end, cli):
    code, out, _ = cli("derive", front_end, "--format", "json", "thevenin(tap)",
                       "gain(Uref, out)", "sensitivity(V(tap), T)")
    assert code == 0
    data = json.loads(out)
    assert data["file"] == front_end
    assert data["title"] == "RTD divider into a filtered ADC input"
    quantities = [r["quantity"] for r in data["results"]]
    assert quantities == ["thevenin(tap).voltage", "thevenin(tap).impedance",
                          "gain(Uref, out)", "sensitivity(V(tap), T)"]
    circuit = symcirc.load(front_end)
    expected = [*circuit.derive("thevenin(tap)"), *circuit.derive("gain(Uref, out)"),
                *circuit.derive("sensitivity(V(tap), T)")]
    for item, result in zip(data["results"], expected, strict=True):
        local = {n: sympy.Symbol(n) for n in item["symbols"]}
        read = parse_expr(item["expression"], local_dict=local)
        assert read == result.expression  # the same expression tree, not just equal
        assert sorted(str(x) for x in read.free_symbols) == item["symbols"]
        assert item["unit"] == result.unit
        assert item["latex"]
    voltage, impedance, gain, sensitivity = data["results"]
    assert voltage["unit"] == "V" and impedance["unit"] == "Ω" and gain["unit"] == ""
    assert gain["nominal"] is None and "s" in gain["symbols"]
    assert impedance["nominal"] == pytest.approx(1000 * 119.25 / 1119.25)
    # dV/dT through Rt = R0*(1 + alpha*T): unit V per unit of T (T has none)
    assert sensitivity["unit"] == "V"
    assert any("through the definition of Rt" in n for n in sensitivity["notes"])


def test_json_readback_with_pi_and_square_roots(tmp_path, cli):
    path = tmp_path / "coupled.circuit"
    path.write_text("param f0 = 1 kHz\nvoltage source U (a, gnd)\ninductor L1 (a, gnd)\n"
                    "inductor L2 (b, gnd)\nresistor R (b, gnd)\ncoupling k12 (L1, L2) = 0.5\n"
                    "capacitor C (b, gnd) = 1/(2*pi*f0*R)\nresistor R2 (a, gnd) = 1k\n"
                    "port out (b, gnd)\n", encoding="utf-8")
    code, out, _ = cli("derive", str(path), "gain(U, out)", "--substitute", "--format", "json")
    assert code == 0
    (item,) = json.loads(out)["results"]
    assert "pi" in item["expression"] and "sqrt(L1*L2)" in item["expression"]
    assert "pi" not in item["symbols"]
    read = parse_expr(item["expression"], local_dict={n: sympy.Symbol(n) for n in item["symbols"]})
    (result,) = symcirc.load(str(path)).derive("gain(U, out)", substitute=True)
    assert sympy.simplify(read - result.expression) == 0
    assert read.has(sympy.pi)


def test_latex_and_markdown_formats(front_end, cli):
    code, out, _ = cli("derive", front_end, "Z(tap)", "--format", "latex", "--values")
    assert code == 0
    assert out.startswith("\\begin{equation*}\n\\mathrm{Z(tap)} = \\frac{")
    assert "\\approx" in out and "\\end{equation*}" in out
    code, out, _ = cli("derive", front_end, "Z(tap)", "--format", "markdown")
    assert code == 0
    assert out.startswith("# RTD divider into a filtered ADC input")
    assert "**`Z(tap)`**" in out and "$$\n\\frac{" in out


def test_file_without_derive_statements_and_no_quantity_is_a_usage_error(tmp_path, cli):
    path = tmp_path / "bare.circuit"
    path.write_text("resistor R (a, gnd)\n", encoding="utf-8")
    code, out, err = cli("derive", str(path))
    assert code == 2 and out == ""
    assert "has no derive statements" in err


def test_bad_quantity_text_is_a_syntax_error_with_caret(front_end, cli):
    code, _, err = cli("derive", front_end, "thevenin(tap")
    assert code == 2
    assert err.startswith("<command line>:1:")
    assert "Traceback" not in err


def test_python_api_named_results_and_latex_display():
    circuit = symcirc.parse(FRONT_END)
    th = circuit.thevenin("tap")
    assert th.impedance.unit == "Ω" and th.voltage.unit == "V"
    assert th.impedance.nominal == pytest.approx(1000 * 119.25 / 1119.25)
    assert th._repr_latex_().startswith("$\\displaystyle \\begin{aligned}")
    assert th.impedance._repr_latex_().startswith("$\\displaystyle \\mathrm{thevenin(tap).")
    gain = circuit.gain("Uref", "V(out)")
    assert gain.quantity == "gain(Uref, V(out))"
    assert circuit.impedance("tap").expression == th.impedance.expression
    norton = circuit.norton("tap")
    assert sympy.simplify(norton.current.expression * th.impedance.expression
                          - th.voltage.expression) == 0
    limited = circuit.derive("gain(Uref, out)", limits={"Cf": "0"})[0]
    assert limited.text() == "Rt/(Rs + Rt)"


def test_seed_option_sets_the_monte_carlo_seed_of_tolerance(tmp_path, cli):
    path = tmp_path / "divider.circuit"
    path.write_text("voltage source U (i, gnd) = 5 V\nresistor R1 (i, o) = 10k ± 1 %\n"
                    "resistor R2 (o, gnd) = 10k ± 1 %\nport out (o, gnd)\n", encoding="utf-8")

    def monte_carlo(*extra):
        code, out, _ = cli("derive", str(path), "tolerance(V(out))", "--format", "json", *extra)
        assert code == 0
        (item,) = json.loads(out)["results"]
        return item["tolerance"]["monte_carlo"]

    first, again, other = monte_carlo("--seed", "7"), monte_carlo("--seed", "7"), \
        monte_carlo("--seed", "8")
    assert first["seed"] == 7 and other["seed"] == 8
    assert first["mean"] == again["mean"] and first["std"] == again["std"]
    assert first["mean"] != other["mean"]
    # both estimate the nominal 2.5 V of the equal-arm divider (common practice)
    assert first["mean"] == pytest.approx(2.5, rel=1e-3)


def test_no_steps_is_the_default_and_gives_the_canonical_forms_only(front_end, cli):
    code, plain, _ = cli("derive", front_end, "Z(tap)")
    assert code == 0
    code, explicit, _ = cli("derive", front_end, "Z(tap)", "--no-steps")
    assert code == 0 and plain == explicit == "Z(tap) = Rs*Rt/(Rs + Rt)\n"


def test_python_api_load_from_a_file(front_end):
    circuit = symcirc.load(front_end)
    (voltage, impedance) = circuit.derive("thevenin(tap)")
    assert circuit.thevenin("tap").voltage.text() == voltage.text()
    # Rt/(Rs + Rt) of the reference (common practice: a loaded divider's open voltage)
    assert voltage.text() == "Rt*Uref/(Rs + Rt)"
    assert voltage.nominal == pytest.approx(2.5 * 119.25 / 1119.25)
    assert impedance.quantity == "thevenin(tap).impedance" and impedance.unit == "Ω"


def test_python_results_carry_the_design_form_and_steps():
    """`Circuit.derive` shows results as `symcirc derive --steps` does: the impedance's form
    is the engineer's Rin∥(R1∥R2 + Rt∥R4) (common practice for a bridge read by a meter),
    checked as an expression; by default (as on the command line) the canonical result is
    left alone."""
    circuit = symcirc.load(EXAMPLES / "bridge_adc.circuit")
    impedance = circuit.derive("thevenin(out)", steps=True)[1]
    assert impedance.form is not None and impedance.steps
    R1, R2, Rt, R4, Rin = (sympy.Symbol(n) for n in ("R1", "R2", "Rt", "R4", "Rin"))

    def par(a, b):
        return a * b / (a + b)

    expected = par(Rin, par(R1, R2) + par(Rt, R4))
    shown = impedance.form.expression.doit()
    assert sympy.cancel(shown - expected) == 0
    assert sympy.cancel(impedance.expression - expected) == 0
    assert impedance.form.text == "Rin∥(R1∥R2 + Rt∥R4)"
    bare = circuit.derive("thevenin(out)")[1]
    assert bare.form is None and not bare.steps
