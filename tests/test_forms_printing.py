"""The ∥ operator, how forms print, the exact equality proof, and the JSON shape."""

from __future__ import annotations

import json

import sympy
from forms_support import BRIDGE, annotated, reference_impedance, reference_voltage

from symcirc.forms import Parallel, steps_text
from symcirc.forms.parallel import expand_parallel
from symcirc.forms.printing import latex, text
from symcirc.forms.verify import equal

R1, R2, R3, R4, U, s, C1, L1 = sympy.symbols("R1 R2 R3 R4 U s C1 L1")


def test_parallel_keeps_its_shape_and_flattens():
    assert Parallel(R1, Parallel(R2, R3)) == Parallel(R1, R2, R3)
    assert Parallel(R1) == R1
    # R1∥R2 = R1·R2/(R1 + R2); three in parallel: 1/(1/R1 + 1/R2 + 1/R3) (common practice)
    assert sympy.cancel(Parallel(R1, R2).doit() - R1 * R2 / (R1 + R2)) == 0
    assert sympy.cancel(expand_parallel(Parallel(R1, R2, R3)) - 1 / (1 / R1 + 1 / R2 + 1 / R3)) == 0


def test_text_and_latex_as_an_engineer_writes_them():
    assert text(Parallel(R1, R2) + Parallel(R3, R4)) == "R1∥R2 + R3∥R4"
    assert text(U * (R2 / (R1 + R2) - R4 / (R3 + R4))) == "U·(R2/(R1 + R2) − R4/(R3 + R4))"
    assert text(U * Parallel(R1, R2)) == "U·(R1∥R2)"
    assert text(Parallel(R1, s * L1)) == "R1∥(s·L1)"
    assert text(Parallel(R1 + R2, R3)) == "(R1 + R2)∥R3"
    assert text(1 / (s * C1)) == "1/(s·C1)"
    assert text(1 / sympy.sqrt(R1 * C1)) == "1/√(C1·R1)"
    assert (
        latex(Parallel(R1, R2) + Parallel(R3, R4))
        == r"R_{1} \parallel R_{2} + R_{3} \parallel R_{4}"
    )
    assert latex(U * Parallel(R1, R2)) == r"U \left(R_{1} \parallel R_{2}\right)"


def test_equality_is_exact_and_can_fail():
    assert equal(
        Parallel(R1, R2) + Parallel(R3, R4),
        (R1 * R2 * (R3 + R4) + R3 * R4 * (R1 + R2)) / ((R1 + R2) * (R3 + R4)),
    )
    assert not equal(Parallel(R1, R2), R1 * R2 / (R1 + R2 + 1))
    assert not equal(R1 / R2, R2 / R1)
    # a form with a zero denominator proves nothing
    assert not equal(R1 / (R2 - R2), R1)
    # irrational pieces must match term for term
    assert equal(sympy.sqrt(R1 * R2) / R1, sympy.sqrt(R1 * R2) * R2 / (R1 * R2))


def test_json_and_text_output():
    import symcirc

    circuit = symcirc.parse(BRIDGE)
    _, results = annotated(
        BRIDGE,
        "thevenin(out)",
        {
            "voltage": reference_voltage(circuit, "a", "b"),
            "impedance": reference_impedance(circuit, "a", "b"),
        },
    )
    for result in results:
        data = json.loads(json.dumps(result.to_json()))
        assert set(data["form"]) == {"text", "latex", "parameters"}
        assert all(set(step) == {"kind", "sentence", "latex", "defines"} for step in data["steps"])
    printed = steps_text(results[1])
    assert printed.splitlines()[0].startswith(" 1. Set the independent sources to zero: short U")
    assert "R12 = R1∥R2" in printed
