"""Results: one scalar quantity derived from a circuit, as the JSON and the notes show it.

A `Result` holds its value as an exact rational function (engine polynomials) or as a
sympy expression; the sympy expression, text and LaTeX are built on first use, because
turning a large polynomial into a sympy expression costs far more than deriving it.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction
from functools import cached_property
from types import MappingProxyType
from typing import Any, Protocol

import sympy

from .errors import Location, SymcircError


def markdown_text(text: str) -> str:
    """Plain text safe in Markdown (no markup characters act)."""
    for char in "\\`*_[]<>#|$":
        text = text.replace(char, "\\" + char)
    return text


class ExactValue(Protocol):
    """What the engine hands over: a canonical ratio of polynomials (algebra.rational)."""

    def to_sympy(self) -> sympy.Expr: ...

    def to_text(self) -> str: ...

    def symbol_names(self) -> tuple[str, ...]: ...

    def evaluate(self, values: dict[str, Fraction]) -> Fraction: ...


@dataclass(frozen=True)
class Step:
    """One step of a derivation (filled by `symcirc.forms`)."""

    kind: str
    """e.g. 'deactivate', 'parallel', 'series', 'star-delta', 'divider', 'loop', 'solve'."""
    sentence: str
    latex: str
    defines: str | None = None
    """The intermediate symbol the step defines (`R12`), if any."""
    data: dict[str, Any] = field(default_factory=dict, compare=False)
    """Machine-readable detail for replaying the step."""

    def to_json(self) -> dict[str, Any]:
        return {"kind": self.kind, "sentence": self.sentence, "latex": self.latex,
                "defines": self.defines}


class Result:
    """One derived scalar quantity: `.quantity`, `.expression`, `.unit`, `.nominal`.

    The stages that derive a result complete it (forms, steps, notes); the pipeline then
    seals it, and from there on it cannot change (`copy()` gives one that can).
    """

    _sealed = False

    def __init__(
        self,
        quantity: str,
        value: ExactValue | sympy.Expr,
        unit: str = "",
        nominals: dict[str, Fraction] | None = None,
        notes: tuple[str, ...] = (),
        *,
        part: str | None = None,
        base: str | None = None,
        condition: str = "",
        parsed: Any = None,
    ) -> None:
        self.quantity = quantity
        """The quantity as shown: `thevenin(out).impedance where A -> oo`."""
        self.part = part
        """The part of a quantity with several (`impedance`, `z21`, `error`), or None."""
        self.base = base if base is not None else quantity
        """The quantity without its `where` clause: `thevenin(out).impedance`."""
        self.condition = condition
        """The `where` clause of its limits as written (`A -> oo`), or ''."""
        self.parsed = parsed
        """The quantity as the grammar read it, its part included (`syntax.Quantity`), set by
        the handlers, the frequency analyses and `solve`; None otherwise (the report then
        sets the quantity's text upright)."""
        self.unit = unit
        self._value = value
        self._nominals = dict(nominals or {})
        self.notes: list[str] = list(notes)
        """Plain sentences for the reader (e.g. why a result is zero)."""
        self.form: Any = None
        """Design-oriented form (symcirc.forms), shown when verified equal."""
        self.steps: list[Step] = []
        self.details: dict[str, Any] = {}
        """Extra named results (analyses put tables here)."""
        self.cautions: list[str] = []
        """Safety cautions shown with the result (set by `Circuit.derive`; see
        symcirc.analysis.cautions)."""
        self.typeset: dict[str, str] = {}
        """Names' forms given by the circuit's file (`typeset`), used by `latex()`."""
        self.name_latex: str | None = None
        """How the quantity is set in LaTeX when it has a symbol of the trade (`\\omega_{0}`)."""
        self.origin: tuple[Location, str | None] | None = None
        """Where the quantity was asked for (location, source text), for messages."""

    def __setattr__(self, name: str, value: Any) -> None:
        if self._sealed:
            raise AttributeError(f"a derived result cannot change (`{name}`); copy() it first")
        object.__setattr__(self, name, value)

    def seal(self) -> Result:
        """Make the result immutable (notes, steps and details included); returns it."""
        self.notes = tuple(self.notes)  # type: ignore[assignment]
        self.steps = tuple(self.steps)  # type: ignore[assignment]
        self.cautions = tuple(self.cautions)  # type: ignore[assignment]
        self.details = MappingProxyType(dict(self.details))  # type: ignore[assignment]
        object.__setattr__(self, "_sealed", True)
        return self

    def copy(self) -> Result:
        """An unsealed copy to complete further (an approximation of this result)."""
        made = Result(self.quantity, self._value, self.unit, self._nominals, tuple(self.notes),
                      part=self.part, base=self.base, condition=self.condition,
                      parsed=self.parsed)
        made.form = self.form
        made.typeset = self.typeset
        made.steps = list(self.steps)
        made.details = dict(self.details)
        made.cautions = list(self.cautions)
        made.origin = self.origin
        return made

    # -- the value
    @property
    def exact(self) -> ExactValue | None:
        """The engine's rational function, when the result came from the engine."""
        return None if isinstance(self._value, sympy.Basic) else self._value

    @cached_property
    def expression(self) -> sympy.Expr:
        if isinstance(self._value, sympy.Basic):
            return self._value
        return self._value.to_sympy()

    @cached_property
    def symbols(self) -> tuple[str, ...]:
        """Every name the expression uses, sorted."""
        if isinstance(self._value, sympy.Basic):
            return tuple(sorted(str(x) for x in self._value.free_symbols))
        return tuple(sorted(self._value.symbol_names()))

    @cached_property
    def missing(self) -> tuple[str, ...]:
        """Symbols without a nominal value (`s` included: a transfer function has none)."""
        return tuple(n for n in self.symbols if n not in self._nominals)

    @cached_property
    def nominal_exact(self) -> Fraction | None:
        """Exact value at the nominal values, or None when a symbol has no value."""
        if self.missing:
            return None
        if isinstance(self._value, sympy.Basic):
            subs = {sympy.Symbol(n): sympy.Rational(v.numerator, v.denominator)
                    for n, v in self._nominals.items()}
            value = self._value
            if value.free_symbols:
                value = value.xreplace(subs)
            if not value.is_number:
                return None
            if value.has(sympy.zoo, sympy.nan, sympy.oo, -sympy.oo):
                raise self.error("no finite value at the nominal values (a division by zero)")
            if value.is_real is False:
                return None  # complex (a pole pair) has no single real value
            if value.is_Rational:
                return Fraction(int(value.p), int(value.q))
            try:
                return Fraction(float(value)).limit_denominator(10**15)
            except TypeError:  # a complex number: no real value to show
                return None
        try:
            return self._value.evaluate({n: self._nominals[n] for n in self.symbols})
        except ValueError:  # an irrational atom (√a) that is not real at the nominal values
            return None
        except SymcircError as problem:
            raise self.error(f"no value at the nominal values: {problem.message}",
                             problem.notes) from None

    def error(self, message: str, notes: tuple[str, ...] = ()) -> SymcircError:
        """A SymcircError about this result, at the place its quantity was asked for."""
        text = f"{self.quantity}: {message}"
        if self.origin is None:
            return SymcircError(text, notes=notes)
        location, source = self.origin
        return SymcircError.at(location, text, source, notes)

    @property
    def nominal(self) -> float | None:
        value = self.nominal_exact
        return None if value is None else float(value)

    # -- showing it
    def text(self) -> str:
        if isinstance(self._value, sympy.Basic):
            return sympy.sstr(self._value)
        return self._value.to_text()

    def latex(self) -> str:
        from .model.typeset import latex_of, names

        with names(self.typeset):
            # the engine writes LaTeX straight from its terms: far faster than sympy for
            # big results
            if not isinstance(self._value, sympy.Basic) and hasattr(self._value, "to_latex"):
                return self._value.to_latex()
            if isinstance(self._value, sympy.Float):  # a value found numerically
                from .model.units import number_latex

                return number_latex(float(self._value), self.unit)
            return latex_of(self.expression)

    def _repr_latex_(self) -> str:
        return f"$\\displaystyle {self.quantity_latex()} = {self.latex()}$"

    def _repr_markdown_(self) -> str | None:
        """In Jupyter: the formula, then its cautions (None without any: LaTeX is shown)."""
        if not self.cautions:
            return None
        lines = [f"$$ {self.quantity_latex()} = {self.latex()} $$", ""]
        lines += [f"> **Caution.** {markdown_text(c)}\n>" for c in self.cautions]
        return "\n".join(lines)

    def quantity_latex(self) -> str:
        written = r"\mathrm{" + self.quantity.replace("_", r"\_") + "}"
        if self.name_latex is None:
            return written
        return self.name_latex + r"\big[" + written + r"\big]"

    def __repr__(self) -> str:
        return f"<Result {self.quantity} = {self.text()}>"

    def to_json(self) -> dict[str, Any]:
        """The object of `--format json` (one per result)."""
        out: dict[str, Any] = {
            "quantity": self.quantity,
            "expression": self.text(),
            "symbols": list(self.symbols),
            "latex": self.latex(),
            "unit": self.unit,
            "nominal": self.nominal,
        }
        if self.notes:
            out["notes"] = list(self.notes)
        if self.form is not None and hasattr(self.form, "to_json"):
            out["form"] = self.form.to_json()
        if self.steps:
            out["steps"] = [s.to_json() for s in self.steps]
        for key, value in self.details.items():
            out.setdefault(key, value)
        return out
