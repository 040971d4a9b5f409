"""Which function derives each quantity name of the language.

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

HANDLERS: dict[str, str] = {
    # engine quantities
    "V": "symcirc.quantities.basic:voltage",
    "I": "symcirc.quantities.basic:current",
    "thevenin": "symcirc.quantities.equivalents:thevenin_quantity",
    "norton": "symcirc.quantities.equivalents:norton_quantity",
    "Z": "symcirc.quantities.equivalents:impedance_quantity",
    "Y": "symcirc.quantities.equivalents:admittance_quantity",
    "gain": "symcirc.quantities.basic:gain_quantity",
    "twoport": "symcirc.quantities.twoports:twoport_quantity",
    "sensitivity": "symcirc.quantities.sensitivity:sensitivity_quantity",
    "relative_sensitivity": "symcirc.quantities.sensitivity:relative_sensitivity_quantity",
    # design analyses
    "sensitivities": "symcirc.analysis.quantities:sensitivities_quantity",
    "tolerance": "symcirc.analysis.quantities:tolerance_quantity",
    "loading": "symcirc.analysis.quantities:loading_quantity",
    "minimum_load": "symcirc.analysis.quantities:minimum_load_quantity",
    "solve": "symcirc.analysis.quantities:solve_quantity",
    # frequency-domain analyses
    "at": "symcirc.analysis.frequency:at_quantity",
    "response": "symcirc.analysis.frequency:response_quantity",
}

RESPONSE_QUANTITIES = ("V", "I", "gain", "Z", "Y")
"""Quantities in s whose parts may name a design parameter (`gain(Uin, out).w0`)."""
RESPONSE_PARTS = ("dc", "hf", "K", "w0", "f0", "Q", "zeta", "wp", "fp", "tau", "wz", "fz",
                  "centre", "bandwidth", "poles", "zeros", "f3db")
"""The design parameters a response in s has as parts (symcirc.analysis.frequency.PARTS)."""
PART_HANDLER = "symcirc.analysis.frequency:part_quantity"
"""Derives `Q.part` for a part in RESPONSE_PARTS of a quantity in RESPONSE_QUANTITIES."""
PART_SENSITIVITY_HANDLER = "symcirc.analysis.frequency:sensitivity_quantity"
"""`sensitivity(P, x)` and `relative_sensitivity(P, x)` of a design parameter or of an
at-frequency value P (closed forms with roots and angles, not rational functions)."""


def handler_for(quantity) -> str | None:
    """The "module:function" deriving a parsed quantity, or None for an unknown name."""
    if quantity.name in RESPONSE_QUANTITIES and quantity.attribute in RESPONSE_PARTS:
        return PART_HANDLER
    if quantity.name in ("sensitivity", "relative_sensitivity") and quantity.args:
        inner = quantity.args[0]
        inner_name, part = getattr(inner, "name", None), getattr(inner, "attribute", None)
        if inner_name == "at" or (inner_name in RESPONSE_QUANTITIES
                                                and part in RESPONSE_PARTS):
            return PART_SENSITIVITY_HANDLER
    return HANDLERS.get(quantity.name)


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
