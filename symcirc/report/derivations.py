"""Derive what a document shows: one section per quantity of the file's `derive` statements
(or per quantity given on the command line), each result with its design form and steps,
and, where a result has a nominal value, its sensitivities and tolerance spread.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace

from ..errors import SymcircError
from ..model.circuit import Circuit
from ..pipeline import Pipeline, Request
from ..quantities.registry import DeriveOptions
from ..results import Result
from .content import (
    ResultView,
    Section,
    anchor,
    assumption_latex,
    assumption_text,
    result_view,
)
from .progress import Progress
from .tables import (
    contribution_table,
    detail_tables,
    noise_band_table,
    noise_table,
    response_table,
    sensitivity_table,
    spread,
    tolerance_notes,
    tolerance_tables,
)

ANALYSIS_QUANTITIES = ("sensitivities", "tolerance")
AUTOMATIC = ("tolerance",)
"""Analyses added to every result with a nominal value. The tolerance analysis brings the
sensitivity of each toleranced part at the nominal point; closed-form sensitivities (costly
for large results) appear where a `derive sensitivities(Q)` statement asks for them."""


__all__ = ["Request", "requests", "sections"]


def requests(pipeline: Pipeline, quantities: Sequence[str] | None) -> list[Request]:
    """The quantities a document shows: the command line's, else the derive statements',
    with design forms and steps."""
    return pipeline.requests(quantities, steps=True)


def sections(pipeline: Pipeline, wanted: list[Request],
             analyses: tuple[str, ...] = AUTOMATIC,
             progress: Progress | None = None) -> list[Section]:
    """Derive every request, adding the named analyses (`sensitivities`, `tolerance`) to each
    result that has a nominal value."""
    circuit = pipeline.circuit
    out = []
    for request in wanted:
        if progress is not None:
            progress.step(request.text)
        results = pipeline.derive(request)
        assumptions = request.options.assumptions
        section = Section(
            heading=request.text, anchor=anchor(request.text),
            assumptions=tuple(assumption_latex(a) for a in assumptions),
            assumptions_text=tuple(assumption_text(a) for a in assumptions),
            results=[],
        )
        name = request.quantity.name
        table = sensitivity_table(results, request.text) if name == "sensitivities" else \
            contribution_table(results, request.text) if name == "noise_contributions" else None
        if table is not None:
            section.tables.append(table)
        else:
            for result in results:
                view = result_view(result)
                _attach_details(circuit, view, result)
                if name not in ANALYSIS_QUANTITIES:
                    _attach_analyses(pipeline, view, request.options, analyses)
                section.results.append(view)
        out.append(section)
    return out


def _attach_details(circuit: Circuit, view: ResultView, result: Result) -> None:
    details = dict(result.details)
    if "tolerance" in details:
        view.tables.extend(tolerance_tables(details.pop("tolerance"), result.unit,
                                            _units(circuit)))
        view.notes = tolerance_notes(view.notes)
        view.spread = spread(result.details)
    details.pop("sensitivity", None)
    if "response" in details:  # response(Q): its table replaces the sentences giving it
        table = response_table(details.pop("response"), result.unit)
        if table is not None:
            view.tables.append(table)
            view.notes = [n for n in view.notes if not n.startswith(("At ", "Spreads "))]
    if "noise" in details:
        table = noise_table(details.pop("noise"))
        if table is not None:
            view.tables.append(table)
    if "noise_band" in details:
        table = noise_band_table(details.pop("noise_band"))
        if table is not None:
            view.tables.append(table)
    view.tables.extend(detail_tables(details))


def _attach_analyses(pipeline: Pipeline, view: ResultView, options: DeriveOptions,
                     analyses: tuple[str, ...]) -> None:
    """Sensitivities and tolerance of a result with a nominal value, from the analyses stage."""
    if view.nominal is None or not view.result.symbols:
        return
    circuit = pipeline.circuit
    def derive(text: str) -> list[Result]:
        return pipeline.derive(pipeline.request(
            text, steps=False, assumptions=options.assumptions, seed=options.seed,
            substitute=options.substitute))

    # A quantity the analyses cannot take (e.g. a result from a limit), or a sensitivity
    # table too large to print, goes without that analysis; each is tried on its own.
    if "sensitivities" in analyses:
        try:
            table = sensitivity_table(derive(f"sensitivities({view.quantity})"), "Q")
        except SymcircError:
            table = None
        if table is not None:
            view.tables.append(replace(table, title="Sensitivities"))
    try:
        if "tolerance" in analyses and _toleranced(circuit, view):
            tolerance = derive(f"tolerance({view.quantity})")
            if tolerance and "tolerance" in tolerance[0].details:
                details = tolerance[0].details["tolerance"]
                view.tables.extend(tolerance_tables(details, view.unit, _units(circuit)))
                view.notes.extend(tolerance_notes(tolerance[0].notes))
                view.spread = spread(tolerance[0].details)
    except SymcircError:
        return


def _units(circuit: Circuit) -> dict[str, str]:
    """The unit of every element's and parameter's symbol, by name."""
    from ..quantities.common import unit_of_symbol

    return {name: unit_of_symbol(circuit, name)
            for name in (*circuit.elements, *circuit.parameters)}


def _toleranced(circuit: Circuit, view: ResultView) -> bool:
    from ..analysis.quantities import definitions, tolerances

    toleranced = {str(s) for s in tolerances(circuit)}
    names = set(view.result.symbols)
    defined = definitions(circuit)
    for symbol, definition in defined.items():
        if str(symbol) in names:
            names |= {str(x) for x in definition.free_symbols}
    return bool(names & toleranced)
