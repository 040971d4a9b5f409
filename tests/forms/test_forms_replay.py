"""Every step list re-derives its result: each step is evaluated with numbers from its own
data, by this file's reading of the operation, and the last value is compared with the
canonical result (from sympy.solve on current laws) at the same numbers."""

from __future__ import annotations

import pytest
import sympy
from circuits import (
    BRIDGE,
    BRIDGE_CURRENT,
    BRIDGE_LOADED,
    BUFFERED_RC,
    LOADED_DIVIDER,
    MFB_BAND_PASS,
    SALLEN_KEY_LOW,
)
from forms_support import (
    S,
    annotated,
    numbers,
    reference_impedance,
    reference_solution,
    reference_voltage,
    replay,
)

import symcirc
from symcirc.forms import approximate
from symcirc.model.circuit import Assumption

LADDER = """
voltage source Us (in, gnd)
resistor R1 (in, m)
resistor R4 (m, gnd)
resistor R2 (m, x)
capacitor C3 (x, gnd)
port out (x, gnd)
"""

TWO_SOURCES = """
voltage source Ua (in, gnd)
current source Iq (gnd, o)
resistor R1 (in, o)
resistor R2 (o, gnd)
inductor L1 (o, gnd)
port out (o, gnd)
"""

FINITE_GAIN = """
param A
voltage source Uin (in, gnd)
resistor Rg (in, n)
resistor Rf (n, o)
opamp U1 (gnd, n, o) = A
port out (o, gnd)
"""

TRANSFORMER = """
param N "turns ratio"
voltage source Ug (in, gnd)
resistor Rs (in, p)
transformer T1 (p, gnd; s2, gnd) = N
resistor RL (s2, gnd)
port out (s2, gnd)
"""


LONG_LADDER = "voltage source U (n0, gnd)\n" + "".join(
    f"resistor Rs{i} (n{i - 1}, n{i})\nresistor Rp{i} (n{i}, gnd)\n" for i in range(1, 6)
) + "port out (n5, gnd)\n"

TAPPED_BRIDGE = BRIDGE_LOADED + "port left (a, gnd)\n"

def _voltage(source, pos, neg, active=None):
    return reference_voltage(symcirc.parse(source), pos, neg, active)


def _impedance(source, pos, neg):
    return reference_impedance(symcirc.parse(source), pos, neg)


def _z21(source):
    volts, test = reference_solution(symcirc.parse(source), set(), ("exc", "gnd"))
    return sympy.cancel((volts["a"] - volts["b"]) / test)


def _chain_a(source):
    """A = V1/V2 with port 2 open: drive port 1 (exc, gnd) with a test current."""
    volts, _ = reference_solution(symcirc.parse(source), set(), ("exc", "gnd"))
    return sympy.cancel(volts["exc"] / (volts["a"] - volts["b"]))


CASES = [
    (
        BRIDGE,
        "thevenin(out)",
        lambda: {"voltage": _voltage(BRIDGE, "a", "b"), "impedance": _impedance(BRIDGE, "a", "b")},
    ),
    (
        BRIDGE,
        "norton(out)",
        lambda: {
            "current": _voltage(BRIDGE, "a", "b") / _impedance(BRIDGE, "a", "b"),
            "admittance": 1 / _impedance(BRIDGE, "a", "b"),
        },
    ),
    (BRIDGE_LOADED, "V(out)", lambda: {None: _voltage(BRIDGE_LOADED, "a", "b")}),
    (BRIDGE_CURRENT, "V(out)", lambda: {None: _voltage(BRIDGE_CURRENT, "a", "b")}),
    (BRIDGE_CURRENT, "Z(supply)", lambda: {None: _impedance(BRIDGE_CURRENT, "exc", "gnd")}),
    (
        BRIDGE_CURRENT,
        "I(R5)",
        lambda: {None: _voltage(BRIDGE_CURRENT, "a", "b") / sympy.Symbol("R5")},
    ),
    (BRIDGE_CURRENT, "twoport(supply, out)", lambda: {"z21": _z21(BRIDGE_CURRENT)}),
    (LADDER, "gain(Us, out)", lambda: {None: _voltage(LADDER, "x", "gnd") / sympy.Symbol("Us")}),
    (TWO_SOURCES, "V(out)", lambda: {None: _voltage(TWO_SOURCES, "o", "gnd")}),
    (
        SALLEN_KEY_LOW,
        "gain(Uin, out)",
        lambda: {None: _voltage(SALLEN_KEY_LOW, "o", "gnd") / sympy.Symbol("Uin")},
    ),
    (SALLEN_KEY_LOW, "Z(out)", lambda: {None: _impedance(SALLEN_KEY_LOW, "o", "gnd")}),
    (FINITE_GAIN, "V(out)", lambda: {None: _voltage(FINITE_GAIN, "o", "gnd")}),
    (TRANSFORMER, "V(out)", lambda: {None: _voltage(TRANSFORMER, "s2", "gnd")}),
    (TRANSFORMER, "Z(out)", lambda: {None: _impedance(TRANSFORMER, "s2", "gnd")}),
    (TAPPED_BRIDGE, "V(left)", lambda: {None: _voltage(TAPPED_BRIDGE, "a", "gnd")}),
    (BRIDGE_CURRENT, "twoport(supply, out)", lambda: {"A": _chain_a(BRIDGE_CURRENT)}),
    (
        MFB_BAND_PASS,
        "gain(Uin, out)",
        lambda: {None: _voltage(MFB_BAND_PASS, "o", "gnd") / sympy.Symbol("Uin")},
    ),
    (
        BUFFERED_RC,
        "gain(Uin, out)",
        lambda: {None: _voltage(BUFFERED_RC, "x3", "gnd") / sympy.Symbol("Uin")},
    ),
    (LONG_LADDER, "thevenin(out)", lambda: {
        "voltage": _voltage(LONG_LADDER, "n5", "gnd"),
        "impedance": _impedance(LONG_LADDER, "n5", "gnd"),
    }),
]


@pytest.mark.parametrize(
    "source, quantity, canonical", CASES, ids=[f"{i}:{q}" for i, (_, q, _) in enumerate(CASES)]
)
def test_steps_replay_to_the_canonical_result(source, quantity, canonical):
    _, results = annotated(source, quantity, canonical())
    for seed, result in enumerate(results):
        assert result.steps, f"{result.quantity} has no steps"
        assert result.form is not None
        env = numbers(result.expression + S, seed)
        values, final = replay(result.steps, env)
        assert final is not None
        expected = result.expression.xreplace(env)
        assert sympy.cancel(values[final] - expected) == 0, result.quantity
        for step in result.steps:  # each equation's own right-hand side agrees with the replay
            for symbol, rhs in step.data["rhs"].items():
                if step.kind not in ("star-delta", "delta-star"):
                    assert sympy.cancel(rhs.doit().xreplace(values) - values[symbol]) == 0


def test_limit_steps_replay():
    finite = _voltage(FINITE_GAIN, "o", "gnd") / sympy.Symbol("Uin")
    a = sympy.Symbol("A")
    limit = sympy.limit(finite, a, sympy.oo)
    _, (h,) = annotated(
        FINITE_GAIN, "gain(Uin, out)", {None: limit}, (Assumption("limit", "A", "oo"),)
    )
    env = numbers(finite, 3, keep=(a,))
    values, final = replay(h.steps, env)
    assert sympy.cancel(values[final] - limit.xreplace(env)) == 0


def test_open_circuit_limit_steps_replay():
    """`where RL -> oo`: the load drops out and the rest is derived by its structure."""
    exact = _voltage(LOADED_DIVIDER, "o", "gnd")
    rl = sympy.Symbol("RL")
    limit = sympy.limit(exact, rl, sympy.oo)
    _, (v,) = annotated(LOADED_DIVIDER, "V(out)", {None: limit}, (Assumption("limit", "RL", "oo"),))
    assert [s.kind for s in v.steps] == ["open", "divider", "error"]
    env = numbers(exact, 5, keep=(rl,))
    values, final = replay(v.steps, env)
    assert sympy.cancel(values[final] - limit.xreplace(env)) == 0


def test_approximation_steps_replay():
    source = LADDER.replace("capacitor C3", "resistor R3")
    circuit = symcirc.parse(source)
    exact = reference_voltage(circuit, "x", "gnd")
    _, (v,) = annotated(source, "V(out)", {None: exact})
    approximated = approximate(circuit, v, Assumption("much_greater", "R4", "R1"))
    r4 = sympy.Symbol("R4")
    env = numbers(exact, 4, keep=(r4,))
    values, final = replay(approximated.steps, env)
    assert sympy.cancel(values[final] - approximated.expression.xreplace(env)) == 0
