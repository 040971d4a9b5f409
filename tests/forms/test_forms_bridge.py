"""Bridges read as an engineer writes them: the output is the voltage across the bridge times
the difference of its two divider ratios, found before any star–delta transform; and among
the proved forms of a result the shortest is shown. Canonical results come from the test's
own current laws (forms_support) or from numpy solving the nodal equations."""

from __future__ import annotations

from pathlib import Path

import numpy
import sympy
from forms_support import annotated, reference_voltage

import symcirc
from symcirc.forms import Parallel
from symcirc.forms.annotate import shortest_form
from symcirc.forms.parallel import expand_parallel
from symcirc.forms.printing import text
from symcirc.forms.verify import equal
from symcirc.results import Result

ROOT = Path(__file__).resolve().parents[2]
R1, R2, R3, R4, R5, Ra, Rb, U = sympy.symbols("R1 R2 R3 R4 R5 Ra Rb U")

# A load-cell bridge fed over two long leads Ra and Rb (invented scenario).
LEADS = """
voltage source U (exc, gnd)
resistor Ra (exc, top)
resistor Rb (bot, gnd)
resistor R1 (top, a)
resistor R2 (a, bot)
resistor R3 (top, b)
resistor R4 (b, bot)
port out (a, b)
port reversed (b, a)
"""

# The Wheatstone bridge with a detector Rd across its diagonal.
DETECTOR = """
voltage source U (exc, gnd)
resistor R1 (exc, a)
resistor R2 (a, gnd)
resistor R3 (exc, b)
resistor R4 (b, gnd)
resistor Rd (a, b)
port diag (a, b)
"""


def kinds(result) -> list[str]:
    return [step.kind for step in result.steps]


def same(form: sympy.Expr, expected: sympy.Expr) -> bool:
    """Equal as rational functions, by sympy alone (not by the forms' own proof)."""
    return sympy.cancel(expand_parallel(form) - expand_parallel(expected)) == 0


def test_bridge_over_leads_is_the_difference_of_two_dividers():
    circuit = symcirc.parse(LEADS)
    canonical = reference_voltage(circuit, "a", "b")
    _, (v,) = annotated(LEADS, "V(out)", {None: canonical})
    # the Wheatstone bridge's output, U_bridge·(R2/(R1 + R2) − R4/(R3 + R4)), with the
    # voltage across the bridge divided from U by the leads in series with the bridge's
    # own resistance (R1 + R2)∥(R3 + R4) (common practice)
    bridge = Parallel(R1 + R2, R3 + R4)
    expected = U * bridge / (Ra + Rb + bridge) * (R2 / (R1 + R2) - R4 / (R3 + R4))
    assert same(expected, canonical)
    assert same(v.form.expression, canonical) and equal(v.form.expression, canonical)
    assert v.form.kind == "structure"
    assert v.form.text == ("U·(R2/(R1 + R2) − R4/(R3 + R4))·((R1 + R2)∥(R3 + R4))"
                           "/(Ra + Rb + (R1 + R2)∥(R3 + R4))")
    # the arms merged, the leads as the bridge's source impedance, then the bridge: no
    # star–delta transform
    assert kinds(v) == ["series", "series", "parallel", "deactivate", "series", "divider",
                        "bridge"]
    assert v.steps[-1].data["corners"] == ("top", "bot")


def test_reversed_bridge_output_keeps_its_sign():
    circuit = symcirc.parse(LEADS)
    canonical = reference_voltage(circuit, "b", "a")
    _, (v,) = annotated(LEADS, "V(reversed)", {None: canonical})
    assert "bridge" in kinds(v)
    assert equal(v.form.expression, canonical) and not equal(v.form.expression, -canonical)
    assert "(R4/(R3 + R4) − R2/(R1 + R2))" in v.form.text


def test_wheatstone_bridge_with_detector():
    circuit = symcirc.parse(DETECTOR)
    rd = sympy.Symbol("Rd")
    loaded = circuit.derive("V(diag)", steps=True)[0]
    opened = circuit.derive("V(diag) where Rd -> oo", steps=True)[0]
    # the Wheatstone bridge formula, open and loaded by the detector through the bridge's
    # Thevenin resistance R1∥R2 + R3∥R4 (common practice)
    difference = R2 / (R1 + R2) - R4 / (R3 + R4)
    assert same(opened.expression, U * difference)
    thevenin = U * difference * rd / (rd + Parallel(R1, R2) + Parallel(R3, R4))
    assert same(loaded.expression, thevenin) and same(loaded.form.expression, thevenin)
    assert opened.form.text == "U·(R2/(R1 + R2) − R4/(R3 + R4))"
    assert loaded.form.text == "U·(R2/(R1 + R2) − R4/(R3 + R4))·Rd/(Rd + R1∥R2 + R3∥R4)"


def _nodal_output(values: dict[str, float]) -> float:
    """V(a) − V(b) of the strain-gauge bridge with its amplifier input open, from numpy
    solving the nodal equations (nodes top, a, b, bot; exc held at Uex)."""
    nodes = ["top", "a", "b", "bot"]
    branches = [("exc", "top", "RLa"), ("bot", "gnd", "RLb"), ("top", "a", "Rg1"),
                ("a", "bot", "Rg2"), ("top", "b", "Rg3"), ("b", "bot", "Rg4")]
    known = {"exc": values["Uex"], "gnd": 0.0}
    g = numpy.zeros((4, 4))
    rhs = numpy.zeros(4)
    for x, y, name in branches:
        conductance = 1 / values[name]
        for here, there in ((x, y), (y, x)):
            if here in known:
                continue
            i = nodes.index(here)
            g[i, i] += conductance
            if there in known:
                rhs[i] += conductance * known[there]
            else:
                g[i, nodes.index(there)] -= conductance
    v = numpy.linalg.solve(g, rhs)
    return float(v[1] - v[2])


def test_strain_gauge_bridge_with_leads():
    circuit = symcirc.load(str(ROOT / "tests" / "forms" / "strain_bridge.circuit"))
    (result,) = circuit.derive("V(out) where Rid -> oo", steps=True)
    assert "star-delta" not in kinds(result) and "bridge" in kinds(result)
    assert result.form.text == (
        "Uex·(Rg2/(Rg1 + Rg2) − Rg4/(Rg3 + Rg4))·((Rg1 + Rg2)∥(Rg3 + Rg4))"
        "/(RLa + RLb + (Rg1 + Rg2)∥(Rg3 + Rg4))")
    # the nominal value against numpy's solution of the same network
    r0, k, eps = 350.0, 2.1, 500e-6
    values = {"Uex": 5.0, "RLa": 1.5, "RLb": 1.5, "Rg1": r0 * (1 + k * eps),
              "Rg2": r0 * (1 - k * eps), "Rg3": r0 * (1 - k * eps), "Rg4": r0 * (1 + k * eps)}
    expected = _nodal_output(values)
    assert abs(result.nominal - expected) <= 1e-12 * abs(expected)
    shown = expand_parallel(result.form.expression).subs(values)
    assert abs(float(shown) - expected) <= 1e-12 * abs(expected)


def test_example_bridge_forms():
    circuit = symcirc.load(str(ROOT / "examples" / "bridge_adc.circuit"))
    forms = {r.quantity: r.form.text for q in ("V(out) where Rin -> oo", "thevenin(out)")
             for r in circuit.derive(q, steps=True)}
    assert forms["V(out) where Rin -> oo"] == "Uref·(R2/(R1 + R2) − R4/(R4 + Rt))"
    assert forms["thevenin(out).voltage"] == (
        "Uref·(R2/(R1 + R2) − R4/(R4 + Rt))·Rin/(Rin + R1∥R2 + Rt∥R4)")
    assert forms["thevenin(out).impedance"] == "Rin∥(R1∥R2 + Rt∥R4)"


def test_the_canonical_result_is_shown_when_it_is_shorter():
    canonical = R2 * U / (R1 + R2 + R3)
    result = Result("V(mid)", canonical, "V", {})
    longer = U * (R2 + R3) / (R1 + R2 + R3) - U * R3 / (R1 + R2 + R3)
    assert len(text(longer)) > len(text(canonical))
    form = shortest_form([(longer, "structure")], result, {})
    assert form.kind == "canonical" and form.text == text(canonical)
    shorter = shortest_form([(Parallel(R1, R2), "structure")],
                            Result("Z(x)", R1 * R2 / (R1 + R2), "Ω", {}), {})
    assert shorter.kind == "structure" and shorter.text == "R1∥R2"


def test_no_form_is_longer_than_the_canonical_result():
    files = [*sorted((ROOT / "examples").glob("*.circuit")),
             ROOT / "tests" / "forms" / "strain_bridge.circuit"]
    checked = 0
    for path in files:
        circuit = symcirc.load(str(path))
        for result in circuit.derive_statements(steps=True):
            form = result.form
            if form is None or form.kind not in ("structure", "grouped", "canonical"):
                continue
            assert len(form.text) <= len(text(result.expression)), (path.name, form.text)
            assert equal(form.expression, result.expression)
            checked += 1
    assert checked >= 5


def test_a_controlled_source_at_a_tap_is_not_taken_for_a_bridge():
    circuit = symcirc.parse(LEADS + "param gm\ncurrent source Igm (a, bot) = gm*V(b, bot)\n")
    (result,) = circuit.derive("V(out)", steps=True)
    assert "bridge" not in kinds(result)
    assert result.form is not None and equal(result.form.expression, result.expression)
    gm = sympy.Symbol("gm")
    # the current laws at top, a, b and bot written here, solved by sympy at set values
    values = {U: 5, Ra: 2, Rb: 3, R1: 100, R2: 120, R3: 110, R4: 90, gm: sympy.Rational(1, 50)}
    va, vb, vt, vbot = sympy.symbols("va vb vt vbot")
    equations = [
        (U - vt) / Ra - (vt - va) / R1 - (vt - vb) / R3,
        (vt - va) / R1 - (va - vbot) / R2 + gm * (vb - vbot),
        (vt - vb) / R3 - (vb - vbot) / R4,
        (va - vbot) / R2 + (vb - vbot) / R4 - gm * (vb - vbot) - vbot / Rb,
    ]
    solved = sympy.solve([e.subs(values) for e in equations], [va, vb, vt, vbot])
    assert result.expression.subs(values) == solved[va] - solved[vb]
