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
