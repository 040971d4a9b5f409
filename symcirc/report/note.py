"""Design notes: a circuit, its derivations and numbers as Markdown, LaTeX or HTML.

`render_note_for` is the one entry point for both `symcirc note` and `symcirc verify`: the
same arguments give byte-identical text, and the text never depends on the time or on
whether the figures are written.
"""

from __future__ import annotations

import hashlib
import json
import os
import stat
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from ..analysis.cautions import Assessment, assess, value_caution
from ..model import typeset
from ..model.circuit import Circuit
from ..model.typeset import latex_of
from ..pipeline import Pipeline
from ..version import __version__
from .content import (
    Figure,
    Parameter,
    Part,
    PortRow,
    Section,
    parameters,
    parts,
    ports,
)
from .files import Output, write_document
from .progress import Progress

TEMPLATES = {"markdown": "note.md.j2", "latex": "note.tex.j2", "html": "note.html.j2",
             "pdf": "note.tex.j2", "docx": "note.md.j2"}
"""The template of each format: a PDF is compiled from the LaTeX note, a Word document made
from the Markdown one (`report.documents`)."""
MARKER = "symcirc-note"
"""Name of the machine-readable marker `symcirc verify` reads back."""


@dataclass(frozen=True)
class ClaimView:
    """One `claim` of the file and whether it holds."""

    quantity: str
    expression: str
    """The claimed expression as written."""
    latex: str
    status: str
    """'holds', 'does not hold' or 'undecided'."""
    details: tuple[str, ...]
    line: int


@dataclass
class Note:
    """Everything a note template receives (as `note`); see the README for each field."""

    title: str
    source: str
    """Path of the circuit file relative to the note's folder (POSIX)."""
    source_name: str
    sha256: str
    version: str
    format: str
    parts: list[Part]
    parameters: list[Parameter]
    ports: list[PortRow]
    nodes: tuple[str, ...]
    notices: list[str]
    sections: list[Section]
    claims: list[ClaimView]
    conventions: list[str]
    cautions: list[str]
    """Safety cautions (symcirc.analysis.cautions), shown under the title."""
    caution_advice: str
    figures_folder: str | None
    marker: str
    """The marker comment's JSON (one line)."""
    circuit: Any = field(default=None, repr=False)
    not_assessed: list[str] = field(default_factory=list)
    """Sources and parts the cautions could not judge (shown when some were judged)."""
    caution_thresholds: list[str] = field(default_factory=list)
    """The limits used and where they come from (shown with the cautions)."""
    schematic: Figure | None = None
    """The circuit's schematic beside the note (None on standard output or when too big)."""
    schematic_statement: str | None = None
    """Why there is no schematic, when the circuit is too big to draw readably."""

    @property
    def results(self) -> list:
        """Every result view, in order (summaries)."""
        return [view for section in self.sections for view in section.results]


def render_note_for(
    path: str | Path,
    format: str,
    quantities: Sequence[str] | None = None,
    template: str | Path | None = None,
    output_path: str | Path | None = None,
    progress: bool = False,
) -> str:
    """The text of the design note of the circuit file `path`.

    format: 'markdown', 'latex', 'html', or 'pdf' / 'docx' (the text they are made from).
    quantities: the quantities to show (as written on the command line), or None for the
    file's `derive` statements. template: a folder whose templates override the built-in
    ones, or None. output_path: where the note is (or will be) written, which fixes the
    relative paths to the source and to the figures; None for standard output (paths
    relative to the working folder, no figures). progress: show a progress line on a
    terminal for long derivations. Raises SymcircError on bad input.
    """
    note, _ = build_note(path, format, quantities, template, output_path, progress)
    return render_note(note, template)


def write_note(
    path: str | Path,
    format: str,
    output: Output,
    quantities: Sequence[str] | None = None,
    template: str | Path | None = None,
    progress: bool = True,
) -> Note:
    """Render the note, draw its figures, then write figures and note together through the
    one writer (figures first, the note last; see `symcirc.output`), or, for 'pdf' and
    'docx', make the document with its figures inside and write it; returns the note's
    content (claims, figures) for the caller to report on."""
    from ..output import Transaction, write_file
    from .documents import SOURCE_FORMAT, document
    from .figures import figure_names, folder_name

    place = output.path
    if place is not None and format in SOURCE_FORMAT:
        # figures inside a document: a plain folder name, whatever the document's name
        place = place.with_name(f"document.{format}")
    note, drawings = build_note(path, format, quantities, template, place, progress)
    text = render_note(note, template)
    if output.path is None:
        write_document(output, text)
        return note
    with typeset.names(note.circuit.typeset):
        images = [(drawing.figure.path, drawing.draw()) for drawing in drawings]
    if format in SOURCE_FORMAT:  # figures go inside the document
        write_file(output.path, document(format, text, images, output.path), output.inputs)
        return note
    folder = output.folder / folder_name(output.stem)
    shown = {Path(name).name for name, _ in images}
    old = figure_names(_previous_text(output.path), output.stem)
    with Transaction(output.inputs) as files:
        if images:
            files.folder(folder)
        for name, data in images:
            files.add(output.folder / name, data)
        files.add(output.path, text.encode("utf-8"))
        files.remove_after_commit(folder / name for name in sorted(old - shown))
        files.commit()
    return note


def _previous_text(path: Path) -> str:
    """The note now at `path` (to find the figures it shows), or '' when there is none."""
    try:
        handle = os.open(path, os.O_RDONLY | os.O_NOFOLLOW | os.O_NONBLOCK)
    except OSError:
        return ""
    with os.fdopen(handle, "rb") as stream:
        if not stat.S_ISREG(os.fstat(handle).st_mode):
            return ""  # not a note (the writer refuses such a target anyway)
        return stream.read(PREVIOUS_NOTE_LIMIT).decode("utf-8", errors="replace")


PREVIOUS_NOTE_LIMIT = 64 * 1024 * 1024
"""Bytes of an old note read to find its figures (notes are far smaller)."""


def build_note(
    path: str | Path,
    format: str,
    quantities: Sequence[str] | None,
    template: str | Path | None,
    output_path: str | Path | None,
    progress: bool,
    pipeline: Pipeline | None = None,
) -> tuple[Note, list]:
    """(note content, figure drawings): the work behind `render_note_for` and `write_note`.
    `pipeline`: the circuit of `path` already read (its solved work is reused)."""
    source = Path(path)
    data = _read(source)
    pipeline = pipeline if pipeline is not None else Pipeline.load(source)
    with typeset.names(pipeline.circuit.typeset):
        return _build_note(pipeline, source, data, format, quantities, template, output_path,
                           progress)


def _build_note(pipeline: Pipeline, source: Path, data: bytes, format: str,
                quantities: Sequence[str] | None, template: str | Path | None,
                output_path: str | Path | None, progress: bool) -> tuple[Note, list]:
    from .derivations import requests, sections

    circuit = pipeline.circuit
    folder = Path(output_path).parent if output_path is not None else Path.cwd()
    wanted = requests(pipeline, quantities)
    with Progress(len(wanted) + 1, enabled=progress) as bar:
        derived = sections(pipeline, wanted, progress=bar)
        bar.step("checking claims and cautions")
        claim_views = claims(pipeline)
        assessment = assess(circuit, pipeline.memo)
    from .figures import folder_name, plan, schematic

    drawings: list = []
    origin = f"{hashlib.sha256(data).hexdigest()}\0{__version__}"
    stem = Path(output_path).stem if output_path is not None else None
    drawing, statement = schematic(circuit, stem, format, origin)
    if drawing is not None:
        drawings.append(drawing)
    if stem is not None:  # figures only beside a note written to a file
        drawings += plan(circuit, derived, wanted, stem, format, origin)
    note = _note(circuit, source, data, format, quantities, template, folder, derived,
                 claim_views, assessment, folder_name(stem) if drawings and stem else None)
    note.schematic = drawing.figure if drawing is not None else None
    note.schematic_statement = statement
    return note, drawings


def render_note(note: Note, template: str | Path | None = None) -> str:
    """The note's text from its content, with the built-in or the user's templates."""
    from .environment import environment, render

    with typeset.names(note.circuit.typeset if note.circuit is not None else {}):
        return render(environment(template, note.format), TEMPLATES[note.format], note=note)


def _note(circuit: Circuit, source: Path, data: bytes, fmt: str,
          quantities: Sequence[str] | None, template: str | Path | None, folder: Path,
          derived: list[Section], claim_views: list[ClaimView], assessment: Assessment,
          figures_folder: str | None) -> Note:
    from .conventions import conventions

    digest = hashlib.sha256(data).hexdigest()
    shown = [view.quantity for section in derived for view in section.results]
    shown += [section.heading for section in derived]
    marker = {
        "source": _relative(source, folder),
        "sha256": digest,
        "version": __version__,
        "format": fmt,
        "quantities": list(quantities) if quantities else None,
        "template": None if template is None else _relative(Path(template), folder),
    }
    mark_cautions(derived, assessment)
    uses_laplace = any(view.is_transfer_function for s in derived for view in s.results)
    return Note(
        title=circuit.title or source.stem,
        source=marker["source"],
        source_name=source.name,
        sha256=digest,
        version=__version__,
        format=fmt,
        parts=parts(circuit),
        parameters=parameters(circuit),
        ports=ports(circuit),
        nodes=circuit.nodes,
        notices=[_notice(n) for n in circuit.notices],
        sections=derived,
        claims=claim_views,
        conventions=conventions(circuit, shown, uses_laplace),
        cautions=list(assessment.cautions),
        not_assessed=list(assessment.not_assessed) if assessment.shown else [],
        caution_thresholds=list(assessment.thresholds) if assessment.shown else [],
        caution_advice=assessment.advice,
        figures_folder=figures_folder,
        marker=marker_json(marker),
        circuit=circuit,
    )


def marker_json(marker: dict[str, Any]) -> str:
    """The marker's JSON on one line, safe inside an HTML comment (no `--`)."""
    return json.dumps(marker, sort_keys=True, ensure_ascii=True).replace("--", "-\\u002d")


def _relative(path: Path, folder: Path) -> str:
    return Path(os.path.relpath(path.resolve(), folder.resolve())).as_posix()


def _read(source: Path) -> bytes:
    from ..errors import SymcircError

    try:
        return source.read_bytes()
    except OSError as err:
        raise SymcircError(f"cannot read the file: {err.strerror or err}", file=str(source)) \
            from None


def _notice(notice: Any) -> str:
    where = f"line {notice.location.line}: " if notice.location is not None else ""
    return f"{notice.kind}: {where}{notice.message}"


def mark_cautions(derived: list[Section], assessment: Assessment) -> None:
    """Put a short caution beside every shown value that calls for one."""
    for section in derived:
        for view in section.results:
            view.caution = value_caution(view.nominal, view.unit, assessment.ac)


def claims(pipeline: Pipeline) -> list[ClaimView]:
    """The status of every `claim` of the file, as the pipeline decided it (the verdict
    `symcirc check` prints)."""
    return [
        ClaimView(o.claim.quantity_text, o.claim.expression_text, latex_of(o.claim.expression),
                  o.status, tuple(_verdict_details(o.verdict, o.problem if o.holds else None)),
                  o.claim.location.line)
        for o in pipeline.claims()
    ]


def _verdict_details(verdict: Any, note: str | None = None) -> list[str]:
    details = [note] if note else []
    details += list(verdict.diagnosis)
    if verdict.reason:
        details.append(verdict.reason)
    if verdict.counterexample is not None:
        example = verdict.counterexample
        at = ", ".join(f"{name} = {value}" for name, value in example.values.items())
        details.append(f"At {at}: claimed {example.claimed}, derived {example.derived}.")
    return details
