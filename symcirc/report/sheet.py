"""Formula sheets: one compact table per circuit (quantity, formula, nominal value, unit,
spread) for a datasheet page; several circuit files make one sheet."""

from __future__ import annotations

import hashlib
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from ..model import typeset
from ..version import __version__
from .content import ResultView
from .progress import Progress

TEMPLATES = {"markdown": "sheet.md.j2", "latex": "sheet.tex.j2", "html": "sheet.html.j2",
             "pdf": "sheet.tex.j2", "docx": "sheet.md.j2"}


@dataclass(frozen=True)
class SheetCircuit:
    """One circuit of a sheet: its title, file and the results of its derive statements."""

    title: str
    source: str
    sha256: str
    results: list[ResultView]
    cautions: list[str]
    """Safety cautions of the circuit (symcirc.analysis.cautions)."""
    not_assessed: list[str]


@dataclass(frozen=True)
class Sheet:
    """What a sheet template receives (as `sheet`)."""

    circuits: list[SheetCircuit]
    version: str
    format: str
    caution_thresholds: list[str]
    """The limits the cautions use and where they come from."""
    caution_advice: str
    typeset: dict[str, str]
    """Names' forms given by the circuits' files (`typeset`), used while it is rendered."""


def render_sheet_for(paths: Sequence[str | Path], format: str,
                     template: str | Path | None = None, progress: bool = False) -> str:
    """The formula sheet of the circuit files `paths` ('markdown', 'latex' or 'html'); the
    design form of each result where one exists, the spread from the tolerance analysis where
    toleranced."""
    from .environment import environment, render

    sheet = build_sheet(paths, format, progress)
    with typeset.names(sheet.typeset):
        return render(environment(template, format), TEMPLATES[format], sheet=sheet)


def build_sheet(paths: Sequence[str | Path], format: str, progress: bool = False) -> Sheet:
    """What the sheet of `paths` shows (the work behind `render_sheet_for`)."""
    from ..analysis.cautions import DEFER, THRESHOLDS, assess
    from ..pipeline import Pipeline
    from .derivations import requests, sections
    from .note import _read, mark_cautions

    loaded = []
    for path in paths:
        data = _read(Path(path))
        pipeline = Pipeline.load(path)
        loaded.append((Path(path), data, pipeline, requests(pipeline, None)))
    total = sum(len(wanted) for *_, wanted in loaded)
    circuits = []
    with Progress(total, enabled=progress) as bar:
        for path, data, pipeline, wanted in loaded:
            circuit = pipeline.circuit
            with typeset.names(circuit.typeset):
                derived = sections(pipeline, wanted, analyses=("tolerance",), progress=bar)
            assessment = assess(circuit, pipeline.memo)
            mark_cautions(derived, assessment)
            results = [view for section in derived for view in section.results]
            circuits.append(SheetCircuit(
                circuit.title or path.stem, path.as_posix(), hashlib.sha256(data).hexdigest(),
                results, list(assessment.cautions),
                list(assessment.not_assessed) if assessment.shown else []))
    forms = {name: form for _, _, pipeline, _ in loaded
             for name, form in pipeline.circuit.typeset.items()}
    return Sheet(circuits, __version__, format, list(THRESHOLDS), DEFER, forms)
