"""The sign conventions a note states: those of the language that the circuit and the
derived quantities actually use (plain sentences; templates escape them)."""

from __future__ import annotations

import re
from collections.abc import Iterable

from ..model.circuit import Circuit
from ..vocabulary import ELEMENT_KINDS, QUANTITIES

_ALWAYS = (
    "Every two-terminal part: its voltage is V(first terminal) − V(second terminal); its "
    "current I(E) flows from the first terminal through the part to the second.",
    "Node voltages V(x) are measured against the reference node gnd.",
)
_PORT = "A port P (a, b) has the voltage V(P) = V(a) − V(b)."
_LAPLACE = "s is the Laplace variable; put s = j·2π·f for the response at frequency f."


def conventions(circuit: Circuit, quantities: Iterable[str], uses_laplace: bool) -> list[str]:
    """The sentences that apply to `circuit` and the quantities shown (by name, in order)."""
    out = list(_ALWAYS)
    kinds = {e.kind for e in circuit.elements.values()}
    out += [kind.convention for keyword, kind in ELEMENT_KINDS.items()
            if keyword in kinds and kind.convention]
    if circuit.ports:
        out.append(_PORT)
    names = {name for text in quantities for name in re.findall(r"([A-Za-z_]\w*)\s*\(", text)}
    out += [q.convention for name, q in QUANTITIES.items() if name in names and q.convention]
    if uses_laplace:
        out.append(_LAPLACE)
    return out
