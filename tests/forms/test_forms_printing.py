"""The ∥ operator, how forms print, the exact equality proof, and the JSON shape."""

from __future__ import annotations

import json

import sympy
from circuits import BRIDGE
from forms_support import annotated, reference_impedance, reference_voltage

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


def test_equality_against_the_engines_own_result():
    """The proof takes the engine's rational function as it is (no sympy conversion)."""
    import symcirc

    circuit = symcirc.parse(BRIDGE)
    voltage, impedance = circuit.derive("thevenin(out)")
    assert impedance.exact is not None
    # Wheatstone bridge (common practice): R1∥R2 + R3∥R4, U·(R2/(R1 + R2) − R4/(R3 + R4))
    assert equal(Parallel(R1, R2) + Parallel(R3, R4), impedance.exact)
    assert equal(U * (R2 / (R1 + R2) - R4 / (R3 + R4)), voltage.exact)
    assert not equal(Parallel(R1, R2) + Parallel(R3, R4) + 1, impedance.exact)
    assert not equal(U * (R4 / (R3 + R4) - R2 / (R1 + R2)), voltage.exact)
    # a symbol the result does not have
    assert not equal(Parallel(R1, R2) + Parallel(R3, s), impedance.exact)


def test_the_pipeline_shows_what_the_command_and_the_notes_show():
    import symcirc
    from symcirc.model.circuit import Assumption

    circuit = symcirc.parse(BRIDGE)
    pipeline = circuit.pipeline
    voltage, impedance = circuit.derive("thevenin(out)", steps=True)
    assert impedance.form.expression == Parallel(R1, R2) + Parallel(R3, R4)
    assert [step.kind for step in voltage.steps] == ["divider", "divider", "loop"]
    (quiet,) = circuit.derive("Z(out)")
    assert quiet.form is None and quiet.steps == ()
    # `where R3 >> R1`: the approximation first, its derivation before it
    (approximated,) = pipeline.derive(pipeline.request(
        "V(out)", assumptions=(Assumption("much_greater", "R3", "R1"),)))
    assert approximated.details["assumption"] == "R3 >> R1"
    assert [step.kind for step in approximated.steps][-2:] == ["approximate", "error"]
    # leading term in 1/R3: the b side of the bridge sits at U·R4/R3 → 0, so U·R2/(R1 + R2)
    # (common practice: a divider with an open upper arm passes nothing)
    assert sympy.cancel(approximated.expression - U * R2 / (R1 + R2)) == 0


def test_results_above_the_size_bound_say_why_they_have_no_form(monkeypatch):
    import importlib

    import symcirc

    annotate_module = importlib.import_module("symcirc.forms.annotate")
    monkeypatch.setattr(annotate_module, "MAX_TERMS", 8)
    circuit = symcirc.parse(BRIDGE)
    voltage, impedance = circuit.derive("thevenin(out)", steps=True)
    # the voltage has 2 + 4 terms, the impedance 4 + 4 (counted from the engine's result)
    assert sum(voltage.exact.size()) == 6 and sum(impedance.exact.size()) == 8
    assert voltage.form is not None
    monkeypatch.setattr(annotate_module, "MAX_TERMS", 7)
    circuit = symcirc.parse(BRIDGE)
    _, impedance = circuit.derive("thevenin(out)", steps=True)
    assert impedance.form is None and impedance.steps == ()
    assert any("8 terms, more than the 7" in note for note in impedance.notes)


def test_derive_command_json_text_and_switch(tmp_path, cli):

    path = tmp_path / "bridge.circuit"
    path.write_text(BRIDGE, encoding="utf-8")
    run = cli("derive", str(path), "thevenin(out)", "--steps", "--format", "json")
    assert run.status == 0
    data = json.loads(run.out)
    voltage, impedance = data["results"]
    assert impedance["form"]["text"] == "R1∥R2 + R3∥R4"
    assert r"\parallel" in impedance["form"]["latex"]
    assert [s["kind"] for s in impedance["steps"]] == [
        "deactivate",
        "parallel",
        "parallel",
        "series",
    ]
    assert [s["defines"] for s in impedance["steps"]] == [None, "R12", "R34", "R_th"]
    assert impedance["steps"][1]["latex"] == r"R_{12} = R_{1} \parallel R_{2}"
    assert all(s["sentence"].endswith(".") for s in voltage["steps"])
    status, text_output, _ = cli("derive", str(path), "thevenin(out)", "--steps")
    assert status == 0
    assert "  design form: R1∥R2 + R3∥R4" in text_output
    assert "   2. R1 and R2 are in parallel between nodes gnd and a." in text_output
    assert "        R12 = R1∥R2" in text_output
    run = cli("derive", str(path), "thevenin(out)", "--no-steps", "--format", "json")
    assert run.status == 0
    plain = json.loads(run.out)["results"]
    assert all("form" not in r and "steps" not in r for r in plain)


def test_a_power_of_a_parallel_form_is_set_in_parentheses():
    """sympy's LaTeX printer hands a power of a function its exponent (`exp=`)."""
    r1, r2 = sympy.symbols("R1 R2", positive=True)
    assert latex(Parallel(r1, r2) ** 2) == r"\left(R_{1} \parallel R_{2}\right)^{2}"


def test_a_difference_of_ratios_comes_before_the_fraction_it_multiplies():
    r1, r2, r3, r4, rd, u, k = sympy.symbols("R1 R2 R3 R4 Rd U K")
    difference = r2 / (r1 + r2) - r4 / (r3 + r4)
    loaded = u * difference * rd / (rd + Parallel(r1, r2) + Parallel(r3, r4))
    assert text(loaded) == "U·(R2/(R1 + R2) − R4/(R3 + R4))·Rd/(Rd + R1∥R2 + R3∥R4)"
    assert latex(loaded).startswith(r"U \left(\frac{R_{2}}{R_{1} + R_{2}}")
    assert latex(loaded).endswith(r"\right) \frac{R_{\mathrm{d}}}{R_{\mathrm{d}} + R_{1} "
                                  r"\parallel R_{2} + R_{3} \parallel R_{4}}")
    # nothing over the fraction shares a symbol with its denominator: one fraction as before
    assert text(-u * difference / k) == "−U·(R2/(R1 + R2) − R4/(R3 + R4))/K"
