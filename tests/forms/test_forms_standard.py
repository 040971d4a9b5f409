"""Standard forms of second-order sections: ω0 and Q against published formulas, and the
poles against numpy. Transfer functions come from sympy.solve on current laws (here)."""

from __future__ import annotations

import numpy
import pytest
import sympy
from circuits import BUFFERED_RC, MFB_BAND_PASS, SALLEN_KEY_LOW
from forms_support import annotated, reference_voltage

import symcirc

R1, R2, R3, C1, C2, L, R, C, s = sympy.symbols("R1 R2 R3 C1 C2 L R C s")
POSITIVE = {x: sympy.Symbol(x.name, positive=True) for x in (R1, R2, R3, C1, C2, L, R, C)}


def gain(source: str) -> tuple:
    circuit = symcirc.parse(source)
    h = sympy.cancel(reference_voltage(circuit, "o", "gnd") / sympy.Symbol("Uin"))
    _, (result,) = annotated(source, "gain(Uin, out)", {None: h})
    return h, result


def parameter(result, name: str) -> sympy.Expr:
    """A parameter read back from its JSON text (sympy.parse_expr is fine in tests)."""
    text = result.form.to_json()["parameters"][name]["expression"]
    names = {x.name: POSITIVE[x] for x in POSITIVE}
    names["pi"] = sympy.pi
    return sympy.parse_expr(text, local_dict=names)


def same(a: sympy.Expr, b: sympy.Expr) -> bool:
    return sympy.simplify(a.xreplace(POSITIVE) - b.xreplace(POSITIVE)) == 0


def check_poles(h: sympy.Expr, result, values: dict) -> None:
    """|p| = ω0 and Q = |p|/(−2·Re p) for the complex poles, computed by numpy.roots."""
    denominator = sympy.Poly(sympy.fraction(sympy.cancel(h))[1], s)
    coefficients = [float(c.subs(values)) for c in denominator.all_coeffs()]
    pole = numpy.roots(coefficients)[0]
    numbers = {POSITIVE[k]: v for k, v in values.items()}
    w0 = float(parameter(result, "ω0").subs(numbers))
    q = float(parameter(result, "Q").subs(numbers))
    assert abs(pole) == pytest.approx(w0, rel=1e-9)
    assert abs(pole) / (-2 * pole.real) == pytest.approx(q, rel=1e-9)
    assert result.form.to_json()["parameters"]["f0"]["unit"] == "Hz"


# Anti-alias filter of a data logger: unity-gain Sallen-Key low-pass (invented values)
def test_sallen_key_low_pass():
    h, result = gain(SALLEN_KEY_LOW)
    assert result.form.kind == "second-order low-pass"
    assert result.form.text == "K/(s²/ω0² + s/(Q·ω0) + 1)"
    # Mancini (ed.), "Op Amps for Everyone", TI, unity-gain Sallen-Key low-pass, from
    # memory: ω0 = 1/√(R1·R2·C1·C2), Q = √(R1·R2·C1·C2)/(C2·(R1 + R2)), C2 the capacitor
    # to ground
    assert same(parameter(result, "ω0"), 1 / sympy.sqrt(R1 * R2 * C1 * C2))
    assert same(parameter(result, "Q"), sympy.sqrt(R1 * R2 * C1 * C2) / (C2 * (R1 + R2)))
    assert parameter(result, "K") == 1
    assert same(parameter(result, "ζ"), (C2 * (R1 + R2)) / (2 * sympy.sqrt(R1 * R2 * C1 * C2)))
    check_poles(h, result, {R1: 10e3, R2: 22e3, C1: 10e-9, C2: 4.7e-9})


# Rumble filter in front of a vibration logger: unity-gain Sallen-Key high-pass
SALLEN_KEY_HIGH = """
voltage source Uin (in, gnd)
capacitor C1 (in, x)
capacitor C2 (x, p)
resistor R1 (x, o)
resistor R2 (p, gnd)
opamp U1 (p, o, o)
port out (o, gnd)
"""


def test_sallen_key_high_pass():
    h, result = gain(SALLEN_KEY_HIGH)
    assert result.form.kind == "second-order high-pass"
    # Mancini (ed.), "Op Amps for Everyone", TI, unity-gain Sallen-Key high-pass, from
    # memory: ω0 = 1/√(R1·R2·C1·C2), Q = √(R1·R2·C1·C2)/(R1·(C1 + C2)), R1 the feedback
    # resistor (equal capacitors: Q = √(R2/R1)/2, so Butterworth wants R2 = 2·R1)
    assert same(parameter(result, "ω0"), 1 / sympy.sqrt(R1 * R2 * C1 * C2))
    assert same(parameter(result, "Q"), sympy.sqrt(R1 * R2 * C1 * C2) / (R1 * (C1 + C2)))
    assert parameter(result, "K") == 1
    check_poles(h, result, {R1: 10e3, R2: 22e3, C1: 100e-9, C2: 100e-9})


# Tone detector of a test set: multiple-feedback band-pass
def test_multiple_feedback_band_pass():
    h, result = gain(MFB_BAND_PASS)
    assert result.form.kind == "second-order band-pass"
    # Mancini (ed.), "Op Amps for Everyone", TI, multiple-feedback band-pass, from memory
    # (names mapped: R1 input, R2 to ground, R3 feedback; C1 to the inverting input):
    # ω0 = √((R1 + R2)/(R1·R2·R3·C1·C2)), Q = √(R3·(R1 + R2)·C1·C2/(R1·R2))/(C1 + C2),
    # mid-band gain −R3·C1/(R1·(C1 + C2)) (−R3/(2·R1) for equal capacitors)
    assert same(parameter(result, "ω0"), sympy.sqrt((R1 + R2) / (R1 * R2 * R3 * C1 * C2)))
    assert same(
        parameter(result, "Q"), sympy.sqrt(R3 * (R1 + R2) * C1 * C2 / (R1 * R2)) / (C1 + C2)
    )
    assert same(parameter(result, "K"), -R3 * C1 / (R1 * (C1 + C2)))
    check_poles(h, result, {R1: 4.7e3, R2: 220.0, C1: 47e-9, C2: 47e-9, R3: 100e3})


# Output filter of a sensor excitation supply: series RLC, output across the capacitor
SERIES_RLC = """
voltage source Uin (in, gnd)
resistor R (in, a)
inductor L (a, o)
capacitor C (o, gnd)
port out (o, gnd)
"""


def test_series_rlc():
    h, result = gain(SERIES_RLC)
    assert result.form.kind == "second-order low-pass"
    # series RLC: ω0 = 1/√(L·C), Q = √(L/C)/R (common practice)
    assert same(parameter(result, "ω0"), 1 / sympy.sqrt(L * C))
    assert same(parameter(result, "Q"), sympy.sqrt(L / C) / R)
    # found by structure: a series merge and a divider, then the standard form
    assert [x.kind for x in result.steps] == ["series", "divider", "ratio", "standard-form"]
    check_poles(h, result, {R: 10.0, L: 1e-3, C: 1e-6})


def test_first_order_forms_and_factored_real_poles():
    from symcirc.forms.standard import standard_form

    low = standard_form(1 / (1 + s * R * C), "")
    assert low.kind == "first-order low-pass" and low.text == "K/(1 + s/ω0)"
    high = standard_form(s * R * C / (1 + s * R * C), "")
    assert high.kind == "first-order high-pass"
    # two buffered RC sections: poles at −1/(R1·C1) and −1/(R2·C2) (common practice)
    cascade = standard_form(1 / ((1 + s * R1 * C1) * (1 + s * R2 * C2)), "")
    assert cascade.kind.startswith("factored")
    poles = {p.expression for p in cascade.parameters if p.name.startswith("p_")}
    assert poles == {-1 / (R1 * C1), -1 / (R2 * C2)}
    # no standard form without s
    assert standard_form(R1 / (R1 + R2), "") is None




def test_buffered_rc_chain_factors_into_real_poles():
    circuit = symcirc.parse(BUFFERED_RC)
    h = sympy.cancel(reference_voltage(circuit, "x3", "gnd") / sympy.Symbol("Uin"))
    _, (result,) = annotated(BUFFERED_RC, "gain(Uin, out)", {None: h})
    assert result.form.kind == "factored, order 3"
    # the opamps are on the way: the nodal equations, solved by Cramer's rule
    assert [x.kind for x in result.steps][:2] == ["nodal", "solve"]
    c3 = sympy.Symbol("C3")
    r3 = sympy.Symbol("R3")
    names = {x.name: x for x in (R1, R2, r3, C1, C2, c3)}
    poles = {
        sympy.parse_expr(p["expression"], local_dict=names)
        for name, p in result.form.parameters.items()
        if name.startswith("p")
    }
    # buffered sections do not load each other: poles at −1/(Rk·Ck) (common practice)
    assert poles == {-1 / (R1 * C1), -1 / (R2 * C2), -1 / (r3 * c3)}
    values = {R1: 1e3, C1: 1e-6, R2: 2.2e3, C2: 1e-6, r3: 4.7e3, c3: 1e-7}
    denominator = sympy.Poly(sympy.fraction(h)[1], s)
    roots = numpy.roots([float(c.subs(values)) for c in denominator.all_coeffs()])
    assert sorted(roots.real) == pytest.approx(sorted(float(p.subs(values)) for p in poles))
    assert parameter(result, "K") == 1
