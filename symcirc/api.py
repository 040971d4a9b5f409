"""The Python API: a circuit read from text or a file, with its quantities as methods.

    circuit = symcirc.load("bridge.circuit")      # or symcirc.parse(text)
    circuit.derive("gain(Uref, out)")             # list of Result, as `symcirc derive`
    circuit.thevenin("out").impedance.nominal     # a Result's value at nominal parts

`Circuit` here is the model's circuit (every later stage reads it as such) with the
convenience methods added; each goes through the circuit's `Pipeline`, so Python gives
the answers the commands give.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from functools import cached_property
from pathlib import Path
from typing import Any

from .model import circuit as model
from .pipeline import ClaimOutcome, Pipeline
from .quantities import QUANTITY_ORIGIN, Norton, Thevenin, TwoPort
from .results import Result


@dataclass(frozen=True, eq=False, repr=False)
class CircuitResult(Result):
    """A result of one of a circuit's methods: in Jupyter it shows as the note shows it
    (formula, nominal value, steps, spread), derived through its circuit's pipeline."""

    circuit: Any = field(default=None, compare=False)

    def _repr_html_(self) -> str:
        from .report.jupyter import result_html

        return result_html(self.circuit.pipeline, self)


class Circuit(model.Circuit):
    """A flat, validated circuit with its quantities as methods (see the module)."""

    @cached_property
    def pipeline(self) -> Pipeline:
        """The pipeline every method goes through (one per circuit: it keeps solved work)."""
        return Pipeline(self)

    def derive(self, quantity: str, **options: Any) -> list[Result]:
        """Derive a quantity written as in the language (`"thevenin(out)"`), as `symcirc
        derive` shows it: `limits={"A": "oo"}` takes limits, `>>` approximations of the
        file's statements apply, and `steps=True` attaches the design form and derivation
        steps (off by default, as on the command line: they cost more than the derivation
        on large results). Other options: `substitute`, `seed`."""
        from .analysis.cautions import attach

        options.setdefault("steps", False)
        derived = self.pipeline.derive_text(quantity, origin=QUANTITY_ORIGIN, **options)
        # the cautions a reader must see beside each value (Python's display only)
        return self._own(attach(self, derived, self.pipeline.memo))

    def _own(self, results: list[Result]) -> list[Result]:
        """The results as this circuit's (`CircuitResult`), with what they computed kept."""
        owned = []
        for result in results:
            made = CircuitResult(**{f.name: getattr(result, f.name)
                                    for f in dataclasses.fields(result)}, circuit=self)
            for name, value in result.__dict__.items():  # cached values (expression ...)
                made.__dict__.setdefault(name, value)
            owned.append(made)
        return owned

    def _repr_html_(self) -> str:
        """In Jupyter: the title, the schematic, the parts table, ports and cautions."""
        from .report.jupyter import circuit_html

        return circuit_html(self, self.pipeline)

    def _repr_markdown_(self) -> str:
        """In Jupyter: the title, the parts and nodes, and the safety cautions."""
        from .analysis.cautions import assess
        from .results import markdown_text

        title = (self.title or self.file).replace("\n", " ")
        lines = [f"**{markdown_text(title)}**: {len(self.elements)} parts, "
                 f"{len(self.nodes)} nodes ({markdown_text(', '.join(self.nodes))})."]
        assessment = assess(self, self.pipeline.memo)
        if assessment.shown:
            lines.append("")
            lines += [f"> **Caution.** {markdown_text(c)}\n>" for c in assessment.cautions]
            lines += [f"> **Not assessed.** {markdown_text(n)}\n>"
                      for n in assessment.not_assessed]
            lines += [f"> {markdown_text(x)}\n>" for x in assessment.thresholds]
            lines.append(f"> {markdown_text(assessment.advice)}")
        return "\n".join(lines)

    def derive_statements(self, **options: Any) -> list[Result]:
        """The results of the file's `derive` statements (with their `where` clauses), as
        `symcirc derive FILE` gives them; options as for `derive`."""
        options.setdefault("steps", False)
        results: list[Result] = []
        for request in self.pipeline.requests(None, **options):
            results += self.pipeline.derive(request)
        return self._own(results)

    def check(self) -> list[ClaimOutcome]:
        """The file's claims, each decided exactly (as `symcirc check` decides them)."""
        return self.pipeline.claims()

    def plot(self, quantity: str, path: str | Path, seed: int | None = None) -> None:
        """Draw a quantity to `path` (.png or .svg), as `symcirc plot` does."""
        from .analysis.plots import plot

        request = self.pipeline.request(quantity, origin=QUANTITY_ORIGIN, seed=seed,
                                        steps=False)
        plot(self, request.quantity, request.options, path)

    def thevenin(self, port: str, **options: Any) -> Thevenin:
        voltage, impedance = self.derive(f"thevenin({port})", **options)
        return Thevenin(voltage, impedance)

    def norton(self, port: str, **options: Any) -> Norton:
        current, admittance = self.derive(f"norton({port})", **options)
        return Norton(current, admittance)

    def impedance(self, port: str, **options: Any) -> Result:
        (result,) = self.derive(f"Z({port})", **options)
        return result

    def admittance(self, port: str, **options: Any) -> Result:
        (result,) = self.derive(f"Y({port})", **options)
        return result

    def gain(self, source: str, quantity: str, **options: Any) -> Result:
        (result,) = self.derive(f"gain({source}, {quantity})", **options)
        return result

    def twoport(self, port1: str, port2: str, **options: Any) -> TwoPort:
        return TwoPort.of(self.derive(f"twoport({port1}, {port2})", **options))

    def noise_density(self, measure: str, frequency: str | None = None,
                      **options: Any) -> Result:
        """`noise(measure[, frequency]).density` in V/√Hz (A/√Hz); its `details['noise']`
        hold each source's term."""
        at = f", {frequency}" if frequency is not None else ""
        (result,) = self.derive(f"noise({measure}{at}).density", **options)
        return result

    def noise_rms(self, measure: str, low: str, high: str, **options: Any) -> Result:
        """`noise_rms(measure, low, high).rms`: the rms noise over a band, method stated."""
        (result,) = self.derive(f"noise_rms({measure}, {low}, {high}).rms", **options)
        return result


def _api(circuit: model.Circuit) -> Circuit:
    made = Circuit(**{f.name: getattr(circuit, f.name) for f in dataclasses.fields(circuit)})
    made.pipeline  # noqa: B018 - every input check runs on reading, not on first use
    return made


def parse(text: str, filename: str = "<input>") -> Circuit:
    """Read circuit text into a validated `Circuit`; raises `SymcircError` on any problem."""
    from .language.parser import parse_document
    from .model.elaborate import elaborate

    return _api(elaborate(parse_document(text, filename)))


def load(path: str | Path) -> Circuit:
    """Read a `.circuit` file into a validated `Circuit`; raises `SymcircError` on any problem."""
    from .language.parser import read_source

    return parse(read_source(path), str(path))
