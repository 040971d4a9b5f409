"""Structural derivations: reduction, dividers, star–delta, superposition, Norton, and the
nodal fallback. Canonical results come from sympy.solve on current laws written here."""

from __future__ import annotations

import random

import networkx
import pytest
import sympy
from circuits import BRIDGE, BRIDGE_CURRENT, BRIDGE_LOADED
from forms_support import (
    annotated,
    reference_impedance,
    reference_voltage,
)

from symcirc.forms import Parallel
from symcirc.forms.verify import equal

R1, R2, R3, R4, R5, U = sympy.symbols("R1 R2 R3 R4 R5 U")


def kinds(result) -> list[str]:
    return [step.kind for step in result.steps]


def test_bridge_thevenin_steps_and_forms():
    import symcirc

    circuit = symcirc.parse(BRIDGE)
    voltage = reference_voltage(circuit, "a", "b")
    impedance = reference_impedance(circuit, "a", "b")
    # Wheatstone bridge, open diagonal: difference of two dividers; source shorted, two
    # parallel pairs in series (common practice)
    assert equal(voltage, U * (R2 / (R1 + R2) - R4 / (R3 + R4)))
    _, (v, z) = annotated(BRIDGE, "thevenin(out)", {"voltage": voltage, "impedance": impedance})

    assert kinds(z) == ["deactivate", "parallel", "parallel", "series"]
    assert kinds(v) == ["divider", "divider", "loop"]
    assert sorted(kinds(z) + kinds(v)) == sorted(
        ["deactivate", "parallel", "parallel", "series", "divider", "divider", "loop"]
    )
    # the forms as expressions (structure, not just value), up to the port's orientation
    assert z.form.expression == Parallel(R1, R2) + Parallel(R3, R4)
    assert v.form.expression in (
        U * (R4 / (R3 + R4) - R2 / (R1 + R2)),
        U * (R2 / (R1 + R2) - R4 / (R3 + R4)),
    )
    assert z.form.text == "R1∥R2 + R3∥R4"
    assert r"R_{1} \parallel R_{2}" in z.form.latex
    # intermediates are named after their parts, the last one after the quantity
    assert [s.defines for s in z.steps[1:]] == ["R12", "R34", "R_th"]
    assert z.form.to_json()["text"] == "R1∥R2 + R3∥R4"


def test_bridge_impedance_matches_resistance_distance():
    values = {R1: 120, R2: 330, R3: 470, R4: 1000}
    _, (z,) = annotated(BRIDGE, "Z(out)", {None: (R1 * R2 / (R1 + R2) + R3 * R4 / (R3 + R4))})
    # the source shorted: exc and gnd are one node g
    graph = networkx.MultiGraph()
    for r, a, b in ((R1, "g", "a"), (R2, "a", "g"), (R3, "g", "b"), (R4, "b", "g")):
        graph.add_edge(a, b, weight=1 / values[r])
    expected = networkx.resistance_distance(
        networkx.Graph(_merge_parallel(graph)), "a", "b", weight="weight", invert_weight=False
    )
    assert float(sympy.N(z.form.expression.doit().subs(values))) == pytest.approx(expected)


def _merge_parallel(multigraph: networkx.MultiGraph) -> networkx.Graph:
    """Conductances of parallel edges add (networkx's resistance_distance wants a Graph)."""
    graph = networkx.Graph()
    for a, b, data in multigraph.edges(data=True):
        before = graph.get_edge_data(a, b, {"weight": 0})["weight"]
        graph.add_edge(a, b, weight=before + data["weight"])
    return graph


def test_loaded_bridge_input_impedance_needs_star_delta():
    import symcirc

    circuit = symcirc.parse(BRIDGE_CURRENT)
    canonical = reference_impedance(circuit, "exc", "gnd")
    _, (z,) = annotated(BRIDGE_CURRENT, "Z(supply)", {None: canonical})
    assert {"star-delta", "delta-star"} & set(kinds(z))
    assert z.form is not None and equal(z.form.expression, canonical)
    # numerically against networkx's resistance distance of the same five resistors
    rng = random.Random(5)
    values = {r: rng.randint(10, 5000) for r in (R1, R2, R3, R4, R5)}
    graph = networkx.Graph()
    for r, a, b in (
        (R1, "exc", "a"),
        (R2, "a", "gnd"),
        (R3, "exc", "b"),
        (R4, "b", "gnd"),
        (R5, "a", "b"),
    ):
        graph.add_edge(a, b, weight=values[r])
    expected = networkx.resistance_distance(
        graph, "exc", "gnd", weight="weight", invert_weight=True
    )
    assert float(z.form.expression.doit().subs(values)) == pytest.approx(expected, rel=1e-12)


def test_bridge_with_detector_is_thevenin_then_divider():
    import symcirc

    circuit = symcirc.parse(BRIDGE_LOADED)
    canonical = reference_voltage(circuit, "a", "b")
    _, (v,) = annotated(BRIDGE_LOADED, "V(out)", {None: canonical})
    # detector across a bridge: open-circuit voltage, source impedance, then the divider
    # with the detector (common practice)
    assert kinds(v) == [
        "divider",
        "divider",
        "loop",
        "deactivate",
        "parallel",
        "parallel",
        "series",
        "divider",
    ]
    expected = (
        U * (R2 / (R1 + R2) - R4 / (R3 + R4)) * R5 / (R5 + Parallel(R1, R2) + Parallel(R3, R4))
    )
    assert v.form.expression == expected
    assert equal(v.form.expression, canonical)


def test_current_driven_bridge_with_detector():
    import symcirc

    circuit = symcirc.parse(BRIDGE_CURRENT)
    canonical = reference_voltage(circuit, "a", "b")
    _, (v,) = annotated(BRIDGE_CURRENT, "V(out)", {None: canonical})
    assert kinds(v)[:4] == ["series", "series", "parallel", "ohm"]
    assert equal(v.form.expression, canonical)


LADDER = """
voltage source Us (in, gnd)
resistor R1 (in, m)
resistor R4 (m, gnd)
resistor R2 (m, x)
resistor R3 (x, gnd)
port out (x, gnd)
"""


def test_ladder_is_a_chain_of_dividers():
    import symcirc

    circuit = symcirc.parse(LADDER)
    canonical = reference_voltage(circuit, "x", "gnd")
    _, (v,) = annotated(LADDER, "V(out)", {None: canonical})
    assert kinds(v) == ["series", "parallel", "divider", "divider"]
    r2, r3, r4 = sympy.symbols("R2 R3 R4")
    us = sympy.Symbol("Us")
    # the load beyond m merged first, then divider to m, then divider from m to x
    tap = Parallel(r4, r2 + r3)
    assert equal(v.form.expression, us * tap / (R1 + tap) * r3 / (r2 + r3))
    assert v.steps[0].defines == "R23"


TWO_SOURCES = """
voltage source Ua (in, gnd)
current source Iq (gnd, o)
resistor R1 (in, o)
resistor R2 (o, gnd)
port out (o, gnd)
"""


def test_superposition_of_two_sources():
    import symcirc

    circuit = symcirc.parse(TWO_SOURCES)
    canonical = reference_voltage(circuit, "o", "gnd")
    _, (v,) = annotated(TWO_SOURCES, "V(out)", {None: canonical})
    assert kinds(v).count("deactivate") == 2
    assert kinds(v)[-1] == "superposition"
    ua, iq = sympy.symbols("Ua Iq")
    # superposition: divider for Ua, and Iq (drawn out of node o) through R1∥R2
    # (common practice)
    assert equal(v.form.expression, ua * R2 / (R1 + R2) - iq * R1 * R2 / (R1 + R2))


CURRENT_DIVIDER = """
current source Iin (a, gnd)
resistor R1 (a, gnd)
resistor R2 (a, m)
resistor R3 (m, gnd)
"""


def test_current_divider():
    import symcirc

    circuit = symcirc.parse(CURRENT_DIVIDER)
    canonical = sympy.cancel(reference_voltage(circuit, "a", "gnd") / R1)
    _, (i,) = annotated(CURRENT_DIVIDER, "I(R1)", {None: canonical})
    assert kinds(i) == ["series", "current-divider"]
    iin = sympy.Symbol("Iin")
    # current divider: I1 = I·(R2 + R3)/(R1 + R2 + R3) (common practice)
    assert equal(i.form.expression, iin * (R2 + R3) / (R1 + R2 + R3))


def test_norton_from_thevenin():
    import symcirc

    circuit = symcirc.parse(BRIDGE)
    v = reference_voltage(circuit, "a", "b")
    z = reference_impedance(circuit, "a", "b")
    _, (i, y) = annotated(BRIDGE, "norton(out)", {"current": v / z, "admittance": 1 / z})
    assert kinds(i)[-1] == "ohm" and kinds(y)[-1] == "reciprocal"
    assert i.form.expression == U * (R2 / (R1 + R2) - R4 / (R3 + R4)) / (
        Parallel(R1, R2) + Parallel(R3, R4)
    )


INVERTING = """
voltage source Uin (in, gnd)
resistor Rg (in, n)
resistor Rf (n, o)
opamp U1 (gnd, n, o)
port out (o, gnd)
"""


def test_opamp_circuit_goes_to_the_nodal_equations():
    import symcirc

    circuit = symcirc.parse(INVERTING)
    canonical = reference_voltage(circuit, "o", "gnd") / sympy.Symbol("Uin")
    _, (h,) = annotated(INVERTING, "gain(Uin, out)", {None: canonical})
    assert kinds(h) == ["nodal", "solve", "ratio"]
    rf, rg = sympy.symbols("Rf Rg")
    assert h.form.expression == -rf / rg  # inverting amplifier, ideal opamp (common practice)
    assert r"\begin{bmatrix}" in h.steps[0].latex
    assert h.steps[1].data["index"] == 1  # V_o is the second unknown


def test_a_form_that_does_not_prove_out_is_not_shown():
    _, (z,) = annotated(BRIDGE, "Z(out)", {None: R1 + R2 + R3 + R4})
    assert z.form is None and z.steps == ()


def test_grounded_port_impedance_of_an_rc_network_keeps_s():
    source = """
voltage source Uin (in, gnd)
resistor R (in, o)
capacitor C (o, gnd)
port out (o, gnd)
"""
    import symcirc

    circuit = symcirc.parse(source)
    r, c, s = sympy.symbols("R C s")
    canonical = reference_impedance(circuit, "o", "gnd")
    _, (z,) = annotated(source, "Z(out)", {None: canonical})
    assert z.form.expression == Parallel(r, 1 / (s * c))
    assert z.form.text == "R∥(1/(s·C))"
    # first-order low-pass shape: K = R, ω0 = 1/(R·C) (common practice)
    assert z.form.parameters["K"]["expression"] == "R"
    assert sympy.parse_expr(
        z.form.parameters["ω0"]["expression"], local_dict={"R": r, "C": c}
    ) == 1 / (r * c)


def test_loaded_bridge_tap_voltage_needs_star_delta():
    """V(a) of the bridge with R5 across its diagonal: no series or parallel pair is left,
    so the star R3, R4, R5 at node b becomes a delta, after which it is a divider."""
    import numpy

    import symcirc

    source = BRIDGE_LOADED + "port left (a, gnd)\n"
    circuit = symcirc.parse(source)
    canonical = reference_voltage(circuit, "a", "gnd")
    _, (v,) = annotated(source, "V(left)", {None: canonical})
    assert kinds(v) == ["star-delta", "parallel", "parallel", "divider"]
    assert equal(v.form.expression, canonical)
    # Kennelly's star-to-delta rule (A. E. Kennelly, Electrical World and Engineer, 1899,
    # from memory): each delta side is the sum of the pairwise products of the star arms
    # over the arm opposite it
    star = v.steps[0].data["star"]
    delta = v.steps[0].data["delta"]
    za, zb, zc = star["u"], star["v"], star["w"]
    products = za * zb + zb * zc + zc * za
    for side, opposite in (("uv", zc), ("vw", za), ("wu", zb)):
        value = v.steps[0].data["rhs"][delta[side]]
        assert sympy.cancel(value - products / opposite) == 0
    # numerically: node equations solved by numpy.linalg.solve at random part values
    rng = random.Random(11)
    values = {x: rng.randint(100, 9000) for x in (R1, R2, R3, R4, R5)}
    g = {x: 1 / values[x] for x in values}
    # unknowns V(a), V(b); V(exc) = U = 1
    matrix = numpy.array(
        [
            [g[R1] + g[R2] + g[R5], -g[R5]],
            [-g[R5], g[R3] + g[R4] + g[R5]],
        ]
    )
    rhs = numpy.array([g[R1], g[R3]])
    expected = numpy.linalg.solve(matrix, rhs)[0]
    shown = float(v.form.expression.doit().subs({**values, U: 1}))
    assert shown == pytest.approx(expected, rel=1e-12)
