"""The design-oriented form attached to a result (`result.form`)."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import sympy


@dataclass
class Form:
    """A design form, proved equal to its result before it is attached.

    `expression` is the sympy expression (with `Parallel` nodes for `∥`); `text` and
    `latex` are how it is shown; `parameters` are the named quantities of a standard
    transfer-function form (K, ω0, f0, Q, ζ, zeros, poles) when one applies.
    """

    expression: sympy.Expr
    text: str
    latex: str
    parameters: dict[str, dict[str, Any]] = field(default_factory=dict)
    kind: str = "structure"
    """'structure' (from the circuit's structure), a standard form's name, 'grouped' (the
    canonical result factored) or 'canonical' (the canonical result, when it is the shortest)."""

    def to_json(self) -> dict[str, Any]:
        return {"text": self.text, "latex": self.latex, "parameters": self.parameters}

    def __str__(self) -> str:
        return self.text
