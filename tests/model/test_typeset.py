"""Symbol names in LaTeX: descriptive subscripts upright, the quantity letter italic.

ISO 80000-2 (from memory: subscripts that are descriptive words or abbreviations are
printed in roman type, those standing for quantities or indices in italic) is how
engineers write R_in or U_ref; every other name is left as sympy sets it.
"""

from __future__ import annotations

import pytest
import sympy

from symcirc.model.typeset import latex_of, symbol_latex


@pytest.mark.parametrize(("name", "expected"), [
    ("Rin", r"R_{\mathrm{in}}"),
    ("Uref", r"U_{\mathrm{ref}}"),
    ("Rs1", r"R_{\mathrm{s}1}"),
    ("gm", r"g_{\mathrm{m}}"),
    ("R1", "R_{1}"),
    ("A0", "A_{0}"),
    ("T", "T"),
    ("alpha", r"\alpha"),
    ("omega0", r"\omega_{0}"),
    ("omega_0", r"\omega_{0}"),
    ("R_th", r"R_{\mathrm{th}}"),
    ("R4t", r"R_{4\mathrm{t}}"),
    ("V_a", "V_{a}"),
])
def test_symbol_names(name, expected):
    assert symbol_latex(name) == expected


def test_expressions_use_the_same_names():
    Rin, R1 = sympy.symbols("Rin R1")
    assert latex_of(R1 / (R1 + Rin)) == r"\frac{R_{1}}{R_{1} + R_{\mathrm{in}}}"


def test_results_and_forms_agree_on_names():
    import symcirc

    circuit = symcirc.parse("voltage source Uref (a, gnd)\nresistor Rin (a, b)\n"
                            "resistor R2 (b, gnd)\nport out (b, gnd)\n")
    (gain,) = circuit.derive("gain(Uref, out)", steps=True)
    assert r"R_{\mathrm{in}}" in gain.latex()
    assert r"R_{\mathrm{in}}" in gain.form.latex


# ---------------------------------------------------------------- the rules, one row each

@pytest.mark.parametrize(("name", "expected"), [
    # Greek names are the letters (upper case for the capitals)
    ("eps", r"\varepsilon"),
    ("epsilon", r"\varepsilon"),
    ("beta", r"\beta"),
    ("tau", r"\tau"),
    ("zeta", r"\zeta"),
    ("phi", r"\varphi"),
    ("theta", r"\theta"),
    ("Omega", r"\Omega"),
    ("Delta", r"\Delta"),
    ("Tau", r"\mathrm{T}"),
    ("beta2", r"\beta_{2}"),
    ("tau_ref", r"\tau_{\mathrm{ref}}"),
    # one letter and a word: the word is an upright subscript, capitals included
    ("RLa", r"R_{\mathrm{La}}"),
    ("RL", r"R_{\mathrm{L}}"),
    ("R_in", r"R_{\mathrm{in}}"),
    # further parts after `_` are further subscripts
    ("Ra_ref", r"R_{\mathrm{a,ref}}"),
    ("x_1_2", "x_{1,2}"),
    ("R_in_a", r"R_{\mathrm{in,a}}"),
    ("Rs1_max", r"R_{\mathrm{s}1,\mathrm{max}}"),
    ("omega_c", r"\omega_{c}"),
    ("R_theta", r"R_{\theta}"),
    # abbreviations and constants are left alone
    ("CMRR", "CMRR"),
    ("k12", "k_{12}"),
])
def test_typesetting_rules(name, expected):
    assert symbol_latex(name) == expected


def test_a_file_gives_a_names_form_and_it_is_used_in_results(tmp_path):
    import symcirc
    from symcirc.model.typeset import names

    circuit = symcirc.parse('typeset Rt "R_{\\vartheta}"\nparam eps = 500u\n'
                            "voltage source Uin (a, gnd)\nresistor Ra_ref (a, b) = 1k\n"
                            "resistor Rt (b, gnd) = 1k*(1 + eps)\nport out (b, gnd)\n")
    assert circuit.typeset == {"Rt": r"R_{\vartheta}"}
    (voltage,) = circuit.derive("V(out)")
    with names(circuit.typeset):
        shown = voltage.latex()
    assert r"R_{\vartheta}" in shown and r"R_{\mathrm{a,ref}}" in shown
    assert symbol_latex("Rt") == r"R_{\mathrm{t}}"  # outside the circuit, the rule again


def test_the_form_is_set_in_a_note(tmp_path):
    from symcirc.report.note import render_note_for

    path = tmp_path / "sensor.circuit"
    path.write_text('typeset Rt "R_{\\vartheta}"\nvoltage source Uin (a, gnd) = 1 V\n'
                    "resistor R1 (a, b) = 1k\nresistor Rt (b, gnd) = 1k\nport out (b, gnd)\n"
                    "derive V(out)\n", encoding="utf-8")
    for fmt in ("markdown", "html"):
        text = render_note_for(path, fmt)
        assert r"R_{\vartheta}" in text or "&#x003D1;" in text, fmt


@pytest.mark.parametrize(("form", "why"), [
    ("\\input{/etc/passwd}", "`\\input` is not allowed"),
    ("\\def\\x{1}", "`\\def` is not allowed"),
    ("\\write18{rm}", "`\\write` is not allowed"),
    ("\\catcode", "`\\catcode` is not allowed"),
    ("R$x$", "`$` is not allowed"),
    ("R<script>", "`<` is not allowed"),
    ("R_{a", "never closed"),
    ("R}", "closes no"),
    ("", "empty"),
])
def test_unsafe_forms_are_refused_where_they_are_written(form, why):
    import symcirc
    from symcirc.errors import SymcircError

    text = f'resistor Rt (a, gnd) = 1k\ntypeset Rt "{form}"\n'
    with pytest.raises(SymcircError) as caught:
        symcirc.parse(text)
    assert why in caught.value.message
    assert (caught.value.line, caught.value.column) == (2, 12)


def test_a_form_for_an_unknown_name_or_twice_is_an_error():
    import symcirc
    from symcirc.errors import SymcircError

    with pytest.raises(SymcircError, match="no parameter or element"):
        symcirc.parse('resistor R1 (a, gnd) = 1k\ntypeset Rx "R_{x}"\n')
    with pytest.raises(SymcircError, match="given twice"):
        symcirc.parse('resistor R1 (a, gnd) = 1k\ntypeset R1 "R"\ntypeset R1 "r"\n')


def test_the_form_is_set_by_derive_and_the_python_api(tmp_path, capsys):
    import symcirc
    from symcirc.cli import main

    path = tmp_path / "sensor.circuit"
    path.write_text('typeset Rt "R_{\\vartheta}"\nvoltage source Uin (a, gnd) = 1 V\n'
                    "resistor R1 (a, b) = 1k\nresistor Rt (b, gnd) = 1k\nport out (b, gnd)\n"
                    "derive V(out)\n", encoding="utf-8")
    assert main(["derive", str(path), "--format", "latex"]) == 0
    assert r"R_{\vartheta}" in capsys.readouterr().out
    (voltage,) = symcirc.load(str(path)).derive("V(out)")
    assert r"R_{\vartheta}" in voltage.latex()
    # the command's forms end with it: the same result elsewhere is set by the rule
    assert symbol_latex("Rt") == r"R_{\mathrm{t}}"


def test_inspect_shows_the_given_forms(tmp_path, capsys):
    import json

    from symcirc.cli import main

    path = tmp_path / "sensor.circuit"
    path.write_text('typeset Rt "R_{\\vartheta}"\nvoltage source Uin (a, gnd) = 1 V\n'
                    "resistor Rt (a, gnd) = 1k\n", encoding="utf-8")
    assert main(["inspect", str(path)]) == 0
    assert "Typeset\n  Rt  R_{\\vartheta}" in capsys.readouterr().out
    assert main(["inspect", str(path), "--format", "json"]) == 0
    assert json.loads(capsys.readouterr().out)["typeset"] == {"Rt": r"R_{\vartheta}"}
