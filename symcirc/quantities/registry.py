"""Which function derives each quantity name of the language.

Values are "module:function" strings, imported on first use so that a command only
pays for what it derives. Every handler has the signature

    handler(circuit: Circuit, quantity: syntax.Quantity, options: DeriveOptions) -> list[Result]

and returns one Result per scalar quantity (`thevenin(out)` gives `.voltage` and
`.impedance`; `thevenin(out).impedance` gives one).
"""

from __future__ import annotations

from dataclasses import dataclass

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
}


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
