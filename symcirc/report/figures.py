"""Plots that go beside a note, in a folder named after it: the frequency response of each
transfer function (not of sensitivities), the Monte Carlo histogram of each `tolerance(Q)`
the file asks for, the loading curve of each loading analysis, the noise density (per
source) at the measure of each noise quantity. Names are decided when the
note is rendered (so the note's text does not depend on whether the files are written);
drawing happens only when they are.

A figure's name ends in a digest of what it is drawn from (the source's SHA-256, the
symcirc version, the note's format, the figure and its quantity), and drawing is
deterministic: a name always holds the same picture. So a new note never overwrites a figure
the old note shows, and writing the note last commits the note and its figures together
(`symcirc.output`).
"""

from __future__ import annotations

import hashlib
import re
from collections.abc import Callable
from dataclasses import dataclass, replace

from ..analysis.noise_quantities import MEASURE_ARGUMENT
from ..model.circuit import Circuit
from ..pipeline import Request
from ..vocabulary import QUANTITIES
from .content import Figure, ResultView, Section

IMAGE_EXTENSION = {"latex": ".png", "markdown": ".svg", "html": ".svg", "pdf": ".pdf",
                   "docx": ".png"}
"""pdflatex takes PNG (not SVG) beside a .tex note, and vector PDF inside a PDF note;
Markdown and HTML get scalable SVG; every Word reads PNG."""
SCHEMATIC_EXTENSION = {"latex": ".pdf", "markdown": ".svg", "html": ".svg", "pdf": ".pdf",
                       "docx": ".svg"}
"""A schematic is line art: PDF (vector) for pdflatex, SVG elsewhere (Word 2016 and later
show it; it has no raster form of its own)."""


@dataclass(frozen=True)
class Drawing:
    """A figure of the note and how to draw it into a file."""

    figure: Figure
    draw: Callable[[], bytes]
    """The figure's PNG or SVG bytes."""


DIGEST_LENGTH = 12


def folder_name(stem: str) -> str:
    """The figures folder of a note called `stem` (`bridge.md` → `bridge_figures`)."""
    return f"{stem}_figures"


def figure_names(text: str, stem: str) -> set[str]:
    """File names of the figures a note's text shows in its figures folder."""
    pattern = re.escape(folder_name(stem)) + \
        rf"/([a-z0-9-]+-[0-9a-f]{{{DIGEST_LENGTH}}}\.(?:svg|png|pdf))"
    return set(re.findall(pattern, text))


def schematic(circuit: Circuit, stem: str | None, fmt: str,
              origin: str) -> tuple[Drawing | None, str | None]:
    """(the drawing of the circuit's schematic, None) when it is drawn beside the note (a
    note written to a file, `stem` its name); (None, a sentence saying why not) when the
    circuit has too many parts to draw readably; (None, None) for a note on standard
    output."""
    from .schematic import MAXIMUM_PARTS, drawn_parts

    count = drawn_parts(circuit)
    if count > MAXIMUM_PARTS:
        return None, (f"The schematic is not drawn: the circuit has {count} parts, more than "
                      f"the {MAXIMUM_PARTS} a drawing keeps readable; the parts table "
                      "gives every part's nodes.")
    if stem is None or count == 0:
        return None, None
    extension = SCHEMATIC_EXTENSION[fmt]
    recipe = "\0".join((origin, fmt, "schematic"))
    digest = hashlib.sha256(recipe.encode("utf-8")).hexdigest()[:DIGEST_LENGTH]
    couplings = [e for e in circuit.elements.values() if e.kind == "coupling"]
    caption = ("Schematic of the circuit: ports as open circles, + at a voltage source's "
               "first terminal, a current source's arrow in the direction of its current"
               + "".join(f"; {e.name} couples {' and '.join(e.coupled or ())}"
                         for e in couplings) + ".")
    figure = Figure(f"{folder_name(stem)}/schematic-{digest}{extension}", caption,
                    "schematic", "")

    def draw() -> bytes:
        from .schematic import layout
        from .schematic_drawing import image

        return image(layout(circuit), extension[1:])
    return Drawing(figure, draw), None


def plan(circuit: Circuit, sections: list[Section], wanted: list[Request], stem: str,
         fmt: str, origin: str) -> list[Drawing]:
    """Decide every figure of the note and attach it to its result view; `origin` (the
    source's SHA-256 and the version) goes into each figure's digest."""
    folder = folder_name(stem)
    extension = IMAGE_EXTENSION[fmt]
    drawings: list[Drawing] = []
    used: set[str] = set()

    def add(view: ResultView | None, section: Section, kind: str, caption: str,
            draw: Callable[[], bytes], key: str) -> None:
        name = key
        while name in used:  # the same quantity shown twice (e.g. with and without `where`)
            name += "-2"
        used.add(name)
        recipe = "\0".join((origin, fmt, name, kind, caption, section.heading))
        digest = hashlib.sha256(recipe.encode("utf-8")).hexdigest()[:DIGEST_LENGTH]
        figure = Figure(f"{folder}/{name}-{digest}{extension}", caption, kind,
                        view.quantity if view else section.heading)
        (view.figures if view else section.figures).append(figure)
        drawings.append(Drawing(figure, draw))

    noise_shown: set[tuple] = set()  # one density figure per measure and band
    for section, request in zip(sections, wanted, strict=True):
        name = request.quantity.name
        if name in ("loading", "minimum_load") and not request.options.assumptions:
            add(None, section, "loading", f"Loading error of {request.text} against the load.",
                _plotted(circuit, request, extension), f"{section.anchor}-loading")
        if name in MEASURE_ARGUMENT and not request.options.assumptions:
            curves = _noise_curves(circuit, request)
            if curves is not None and (curves.label, curves.band) not in noise_shown:
                noise_shown.add((curves.label, curves.band))
                band = "" if curves.band is None else ", the band shaded"
                add(None, section, "noise density",
                    f"Noise density of {curves.label} at the nominal values: the total and "
                    f"each major source{band}.", _noise_density(curves, extension),
                    f"{section.anchor}-noise")
        for view in section.results:
            if view.is_transfer_function and _has_values(view) and _is_response(name):
                spread = name == "response"  # asked for with its Monte Carlo band
                add(view, section, "frequency response",
                    f"Magnitude and phase of {view.quantity} at the nominal values"
                    + (", with the Monte Carlo band of 10,000 samples (0.1 % … 99.9 %)."
                       if spread else "."),
                    _frequency_response(circuit, view, extension, spread, request),
                    f"{view.anchor}-response")
            if view.spread is not None and name == "tolerance":  # asked for by the file
                add(view, section, "histogram",
                    f"Monte Carlo histogram of {view.quantity} with the worst-case bounds.",
                    _histogram(circuit, view, request, extension),
                    f"{view.anchor}-histogram")
            elif name == "tolerance" and "rejection_tolerance" in view.result.details:
                add(view, section, "histogram",
                    f"Monte Carlo histogram of {view.quantity} in dB with its worst case over "
                    "the tolerance box.", _plotted(circuit, request, extension),
                    f"{view.anchor}-histogram")
    return drawings


def _noise_curves(circuit: Circuit, request: Request):
    """The density curves of a noise quantity, or None where they have no numbers (a
    symbol without a value): the note then shows no figure for it."""
    from ..analysis.noise_quantities import density_curves
    from ..errors import SymcircError

    options = replace(request.options, steps=False)
    try:
        return density_curves(circuit, request.quantity, options)
    except SymcircError:
        return None


def _noise_density(curves, extension: str) -> Callable[[], bytes]:
    def draw() -> bytes:
        from ..analysis import plots

        return plots.image(plots.noise_density_figure(curves.frequencies, curves.contributions,
                                                      curves.label, curves.unit, curves.band),
                           extension[1:])
    return draw


def _is_response(name: str) -> bool:
    """A quantity whose functions of s are responses of the circuit (a Bode plot costs a
    second or more to draw: only those get one)."""
    entry = QUANTITIES.get(name)
    return entry is None or entry.response


def _has_values(view: ResultView) -> bool:
    return view.missing == ("s",)


def _frequency_response(circuit: Circuit, view: ResultView, extension: str, spread: bool,
                        request: Request) -> Callable[[], bytes]:
    def draw() -> bytes:
        from ..analysis import plots

        frequencies, response = plots.frequency_response(
            view.result.expression, circuit.symbol_nominals())
        band = None
        if spread:
            from ..analysis.frequency import response_band

            band = response_band(circuit, view.result, frequencies, seed=request.options.seed)
        unstable = plots.is_unstable(view.result.expression, circuit.symbol_nominals())
        markers = plots.response_markers(view.result.expression, circuit.symbol_nominals())
        return plots.image(plots.frequency_response_figure(frequencies, response,
                                                           view.quantity, view.unit, band,
                                                           unstable, markers),
                           extension[1:])
    return draw


def _histogram(circuit: Circuit, view: ResultView, request: Request,
               extension: str) -> Callable[[], bytes]:
    def draw() -> bytes:
        from ..analysis import plots
        from ..analysis.quantities import tolerance_analyses

        options = replace(request.options, steps=False)
        pairs = tolerance_analyses(circuit, request.quantity, options)
        analysis = next((a for inner, a in pairs
                         if f"tolerance({inner.quantity})" == view.quantity), pairs[0][1])
        return plots.image(plots.histogram_figure(analysis, view.quantity, view.unit),
                           extension[1:])
    return draw


def _plotted(circuit: Circuit, request: Request, extension: str) -> Callable[[], bytes]:
    """The figure `symcirc plot` draws of the request (loading curves, a level's spread)."""
    def draw() -> bytes:
        from ..analysis import plots

        options = replace(request.options, steps=False)
        return plots.image(plots.figure_of(circuit, request.quantity, options), extension[1:])
    return draw
