"""Safety cautions of a note: node voltages above 50 V or part dissipation above 0.25 W at
the nominal values (DC, every source at its nominal value), found with the engine.

Nothing is said when a source has no value: the operating point is then unknown.
"""

from __future__ import annotations

from fractions import Fraction

import sympy

from ..model.circuit import LAPLACE, REFERENCE, SOURCES, Circuit

VOLTAGE_LIMIT = 50.0
"""Volts at a node (DC, against gnd) from which a note cautions (common practice: the
extra-low-voltage limit of electrical safety rules is of this order)."""
POWER_LIMIT = 0.25
"""Watts in one part from which a note cautions (common practice: a 0805 chip resistor is
rated about 1/8 W, a small through-hole one 1/4 W)."""

DEFER = ("Check ratings, clearances and protection against the applicable standards and "
         "local codes, and have the design reviewed by a licensed or otherwise qualified "
         "person before building or connecting it.")

_DISSIPATING = ("resistor", "conductance")


def cautions(circuit: Circuit) -> list[str]:
    """Plain sentences naming each node and part beyond the limits (empty when none is)."""
    sources = [e for e in circuit.elements.values() if e.kind in SOURCES and not e.controls]
    if not sources or any(e.nominal is None for e in sources):
        return []
    voltages = _node_voltages(circuit)
    if voltages is None:
        return []
    out = []
    for node, value in voltages.items():
        if abs(value) > VOLTAGE_LIMIT:
            out.append(f"Node {node} is at {float(value):.4g} V against gnd at the nominal "
                       f"values (DC): above {VOLTAGE_LIMIT:g} V, a shock hazard.")
    for element in circuit.elements.values():
        if element.kind not in _DISSIPATING or element.nominal in (None, 0):
            continue
        first, second = element.nodes[:2]
        across = voltages.get(first, Fraction(0)) - voltages.get(second, Fraction(0))
        power = across**2 / element.nominal if element.kind == "resistor" \
            else across**2 * element.nominal
        if power > POWER_LIMIT:
            out.append(f"{element.name} dissipates {float(power):.4g} W at the nominal values "
                       f"(DC): above {POWER_LIMIT:g} W, check its rating and temperature.")
    return out


def _node_voltages(circuit: Circuit) -> dict[str, Fraction] | None:
    """Every node's DC voltage at the nominal values, or None when one is not a number."""
    from ..errors import SymcircError
    from ..quantities import derive

    values = {symbol: sympy.Rational(v.numerator, v.denominator)
              for symbol, v in circuit.symbol_nominals().items()}
    values[LAPLACE] = sympy.Integer(0)
    out: dict[str, Fraction] = {}
    for node in circuit.nodes:
        if node == REFERENCE:
            continue
        try:
            (result,) = derive(circuit, f"V({node})")
        except (SymcircError, ValueError):
            return None
        value = result.expression.xreplace(values)
        if not value.is_Rational:
            return None
        out[node] = Fraction(int(value.p), int(value.q))
    return out
