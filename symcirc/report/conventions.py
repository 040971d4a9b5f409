"""The sign conventions a note states: those of the language that the circuit and the
derived quantities actually use (plain sentences; templates escape them)."""

from __future__ import annotations

import re
from collections.abc import Iterable

from ..model.circuit import Circuit

_ALWAYS = (
    "Every two-terminal part: its voltage is V(first terminal) − V(second terminal); its "
    "current I(E) flows from the first terminal through the part to the second.",
    "Node voltages V(x) are measured against the reference node gnd.",
)
_BY_KIND = {
    "voltage source": "A voltage source X (p, n) = v sets V(p) − V(n) = v; its current "
                      "follows the two-terminal rule (from p through the source to n).",
    "current source": "A current source X (p, n) = i drives i out of its terminal p into "
                      "node p and draws it from node n.",
    "opamp": "An opamp (p, n, out) draws no input current; its output is referred to gnd. "
             "Ideal: V(p) = V(n); with a gain A(s): V(out) = A(s)·(V(p) − V(n)).",
    "transformer": "An ideal transformer (p1, n1; p2, n2) = N has the turns ratio N "
                   "primary:secondary, dots at p1 and p2.",
    "coupling": "A coupling (L1, L2) = k adds the mutual inductance M = k·√(L1·L2), "
                "dots at the first terminals.",
}
_PORT = "A port P (a, b) has the voltage V(P) = V(a) − V(b)."
_BY_QUANTITY = {
    "thevenin": "Thevenin equivalent: .voltage is the open-circuit port voltage, .impedance "
                "the impedance seen at the port with independent sources set to zero "
                "(voltage sources shorted, current sources opened).",
    "norton": "Norton equivalent: .current is the short-circuit current, flowing from the "
              "port's first node through the short to its second; .admittance as seen at "
              "the port with independent sources set to zero.",
    "gain": "gain(X, Q) is Q divided by the value of the independent source X, every other "
            "independent source set to zero.",
    "twoport": "Two-port parameters take the port currents flowing into each port's first "
               "node; the chain parameters A B C D take the port-2 current flowing out: "
               "V1 = A·V2 + B·I2, I1 = C·V2 + D·I2.",
    "sensitivity": "sensitivity(Q, x) is ∂Q/∂x.",
    "relative_sensitivity": "relative_sensitivity(Q, x) is (x/Q)·∂Q/∂x.",
    "sensitivities": "Relative sensitivities are (x/Q)·∂Q/∂x: the relative change of Q per "
                     "relative change of x.",
}
_LAPLACE = "s is the Laplace variable; put s = j·2π·f for the response at frequency f."


def conventions(circuit: Circuit, quantities: Iterable[str], uses_laplace: bool) -> list[str]:
    """The sentences that apply to `circuit` and the quantities shown (by name, in order)."""
    out = list(_ALWAYS)
    kinds = {e.kind for e in circuit.elements.values()}
    out += [sentence for kind, sentence in _BY_KIND.items() if kind in kinds]
    if circuit.ports:
        out.append(_PORT)
    names = {name for text in quantities for name in re.findall(r"([A-Za-z_]\w*)\s*\(", text)}
    out += [sentence for name, sentence in _BY_QUANTITY.items() if name in names]
    if uses_laplace:
        out.append(_LAPLACE)
    return out
