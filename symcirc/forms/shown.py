"""Results as symcirc shows them (the pipeline's last derivation stage, for every command
and the Python API): the canonical results, then the `where big >> small` approximations,
then the design forms and derivation steps (when `options.steps`), each proved equal first."""

from __future__ import annotations

from typing import Any

from ..language import syntax
from ..model.circuit import Circuit
from ..quantities.registry import DeriveOptions
from ..results import Result


def finish(
    circuit: Circuit,
    quantity: syntax.Quantity,
    results: list[Result],
    options: DeriveOptions,
) -> list[Result]:
    """Apply the `>>` approximations of `options`, then attach forms and steps (unless a
    stage before already did, or `options.steps` is off)."""
    from .annotate import annotate

    approximations = [a for a in options.assumptions if a.kind == "much_greater"]
    if approximations:
        results = [_approximated(circuit, r, approximations) for r in results]
    if options.steps and not any(r.form is not None or r.steps for r in results):
        results = annotate(circuit, quantity, results, options)
    return results


def _approximated(circuit: Circuit, result: Result, assumptions: list[Any]) -> Result:
    """`result` under each assumption in turn; one that gives no expansion leaves the
    result exact and says so in its notes."""
    from .annotate import approximate

    if "neglected" in result.details:  # already approximated by the derivation stage
        return result
    for assumption in assumptions:
        result = approximate(circuit, result, assumption)
    return result
