"""Which function derives each quantity name of the language (the `handler` of each entry
of `symcirc.vocabulary.QUANTITIES`).

Values are "module:function" strings, imported on first use so that a command only
pays for what it derives. Every handler has the signature

    handler(circuit: Circuit, quantity: syntax.Quantity, options: DeriveOptions) -> list[Result]

and returns one Result per scalar quantity (`thevenin(out)` gives `.voltage` and
`.impedance`; `thevenin(out).impedance` gives one).
"""

from __future__ import annotations

from dataclasses import dataclass, field

from ..engine.memo import Memo
from ..model.circuit import Assumption
from ..vocabulary import DESIGN_PARAMETERS, QUANTITIES

HANDLERS: dict[str, str] = {name: q.handler for name, q in QUANTITIES.items()}
"""Quantity name → "module:function", from the vocabulary's quantity table."""

RESPONSE_QUANTITIES = tuple(name for name, q in QUANTITIES.items() if q.part_handler)
"""Quantities in s whose parts may name a design parameter (`gain(Uin, out).w0`)."""
RESPONSE_PARTS = tuple(part.name for part in DESIGN_PARAMETERS)
"""The design parameters a response in s has as parts (symcirc.analysis.frequency.PARTS)."""
PART_SENSITIVITY_HANDLER = "symcirc.analysis.frequency:sensitivity_quantity"
"""`sensitivity(P, x)` and `relative_sensitivity(P, x)` of a design parameter or of an
at-frequency value P (closed forms with roots and angles, not rational functions)."""


def handler_for(quantity) -> str | None:
    """The "module:function" deriving a parsed quantity, or None for an unknown name."""
    entry = QUANTITIES.get(quantity.name)
    if entry is None:
        return None
    if entry.part_handler and quantity.attribute in entry.part_names:
        return entry.part_handler
    if quantity.name in ("sensitivity", "relative_sensitivity") and quantity.args:
        inner = quantity.args[0]
        inner_name, part = getattr(inner, "name", None), getattr(inner, "attribute", None)
        if inner_name == "at" or (inner_name in RESPONSE_QUANTITIES
                                  and part in RESPONSE_PARTS):
            return PART_SENSITIVITY_HANDLER
    return entry.handler


@dataclass(frozen=True)
class DeriveOptions:
    """How to derive: shared by every handler."""

    substitute: bool = False
    """Replace element symbols by their defining expressions (`Rt = R0*(1 + alpha*T)`)."""
    assumptions: tuple[Assumption, ...] = ()
    """`where` clauses: limits (`A -> oo`) and approximations (`Rm >> R1`)."""
    steps: bool = True
    """Attach design-oriented forms and derivation steps where available."""
    seed: int | None = None
    """Seed for Monte Carlo analyses (None: the analysis' documented default)."""
    origin: tuple[str, str] | None = None
    """(file name, text) the quantity was read from, for error positions; None: the
    circuit's own file (quantities of its `derive` statements)."""
    memo: Memo = field(default_factory=Memo, compare=False, repr=False)
    """Work done once per circuit; the pipeline passes its own so that every quantity it
    derives shares the solved systems."""
