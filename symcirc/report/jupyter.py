"""What Jupyter shows of a circuit and of a result: HTML fragments, maths as MathML and numbers
in the one number style, rendered from templates in the sandbox as the notes are.

A result is shown as a note shows it (`derivations.sections`: design form, derivation steps,
nominal value, and the tolerance spread where parts have tolerances), derived again through
the circuit's pipeline when it came without its steps; a circuit with its parts table and its
schematic (inline, as an SVG image).
"""

from __future__ import annotations

import base64
from dataclasses import dataclass

from ..analysis.cautions import assess
from ..errors import SymcircError
from ..model import typeset
from ..model.circuit import Circuit
from ..pipeline import Pipeline
from ..results import Result
from .content import (
    Figure,
    Parameter,
    Part,
    PortRow,
    ResultView,
    parameters,
    parts,
    ports,
    result_view,
)


@dataclass(frozen=True)
class ResultDisplay:
    """What `jupyter_result.html.j2` receives (as `shown`)."""

    view: ResultView
    cautions: list[str]
    """Safety cautions of the value and the circuit (the Python API attaches them)."""
    problem: str | None
    """Why the steps or the spread could not be shown, or None."""


@dataclass(frozen=True)
class CircuitDisplay:
    """What `jupyter_circuit.html.j2` receives (as `shown`)."""

    title: str
    parts: list[Part]
    parameters: list[Parameter]
    ports: list[PortRow]
    nodes: tuple[str, ...]
    schematic: Figure | None
    """The schematic as a `data:` address, or None."""
    schematic_statement: str | None
    cautions: list[str]
    not_assessed: list[str]
    caution_thresholds: list[str]
    caution_advice: str


def result_html(pipeline: Pipeline, result: Result) -> str:
    """A result as an HTML fragment: formula, nominal value, steps, spread and cautions."""
    from .environment import environment, render

    with typeset.names(pipeline.circuit.typeset):
        view, problem = _view(pipeline, result)
        return render(environment(), "jupyter_result.html.j2",
                      shown=ResultDisplay(view, list(result.cautions), problem))


def _view(pipeline: Pipeline, result: Result) -> tuple[ResultView, str | None]:
    """The note's view of `result`: derived again with steps and the tolerance analysis."""
    from .derivations import sections

    try:
        (section,) = sections(pipeline, pipeline.requests([result.quantity], steps=True))
    except SymcircError as problem:
        return result_view(result), problem.message
    for view in section.results:
        if view.quantity == result.quantity:
            return view, None
    return result_view(result), None


def circuit_html(circuit: Circuit, pipeline: Pipeline) -> str:
    """A circuit as an HTML fragment: title, schematic, parts, parameters, ports, cautions."""
    from .environment import environment, render
    from .figures import schematic

    with typeset.names(circuit.typeset):
        drawing, statement = schematic(circuit, "jupyter", "html", "jupyter")
        figure = None
        if drawing is not None:
            address = "data:image/svg+xml;base64," + \
                base64.b64encode(drawing.draw()).decode("ascii")
            figure = Figure(address, drawing.figure.caption, "schematic", "")
        assessment = assess(circuit, pipeline.memo)
        shown = CircuitDisplay(
            circuit.title or circuit.file, parts(circuit), parameters(circuit), ports(circuit),
            circuit.nodes, figure, statement, list(assessment.cautions),
            list(assessment.not_assessed) if assessment.shown else [],
            list(assessment.thresholds) if assessment.shown else [], assessment.advice)
        return render(environment(), "jupyter_circuit.html.j2", shown=shown)

