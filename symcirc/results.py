"""Results: one scalar quantity derived from a circuit, as the JSON and the notes show it.

A `Result` holds its value as an exact rational function (engine polynomials) or as a
sympy expression; the sympy expression, text and LaTeX are built on first use, because
turning a large polynomial into a sympy expression costs far more than deriving it.
"""

from __future__ import annotations

import dataclasses
import sys
from collections.abc import Callable, Mapping
from dataclasses import KW_ONLY, dataclass, field
from fractions import Fraction
from functools import cached_property
from types import MappingProxyType
from typing import TYPE_CHECKING, Any, Protocol

from .errors import Location, SymcircError

if TYPE_CHECKING:  # pragma: no cover
    import sympy


def symbolic(value: object) -> bool:
    """Whether a value is a sympy expression (none exists before sympy is imported, so
    asking imports nothing)."""
    sympy = sys.modules.get("sympy")
    return sympy is not None and isinstance(value, sympy.Basic)


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


class Deferred:
    """A detail computed only when shown: the LaTeX of a large closed form costs seconds,
    and text output never shows it (`Result.to_json` computes it)."""

    def __init__(self, compute: Callable[[], Any]) -> None:
        self._compute = compute

    @cached_property
    def value(self) -> Any:
        return self._compute()


def shown(value: Any) -> Any:
    """`value` with every Deferred in it computed (mappings and sequences walked)."""
    if isinstance(value, Deferred):
        return value.value
    if isinstance(value, dict):
        return {k: shown(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return type(value)(shown(v) for v in value)
    return value


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


@dataclass(frozen=True, eq=False)
class Result:
    """One derived scalar quantity: `.quantity`, `.expression`, `.unit`, `.nominal`.

    Immutable: a stage that adds something (notes, a form, steps, details) makes a new
    result with `with_notes`, `with_details` or `replace`.
    """

    quantity: str
    """The quantity as shown: `thevenin(out).impedance where A -> oo`."""
    value: ExactValue | sympy.Expr
    """The exact value: the engine's rational function or a sympy expression."""
    unit: str = ""
    nominals: Mapping[str, Fraction] = field(default_factory=dict)
    """The nominal value of each symbol that has one."""
    notes: tuple[str, ...] = ()
    """Plain sentences for the reader (e.g. why a result is zero)."""
    _: KW_ONLY
    part: str | None = None
    """The part of a quantity with several (`impedance`, `z21`, `error`), or None."""
    base: str | None = None
    """The quantity without its `where` clause: `thevenin(out).impedance` (the quantity
    when not given)."""
    condition: str = ""
    """The `where` clause of its limits as written (`A -> oo`), or ''."""
    parsed: Any = None
    """The quantity as the grammar read it, its part included (`syntax.Quantity`), set by
    the handlers, the frequency analyses and `solve`; None otherwise (the report then sets
    the quantity's text upright)."""
    form: Any = None
    """Design-oriented form (symcirc.forms), shown when verified equal."""
    steps: tuple[Step, ...] = ()
    details: Mapping[str, Any] = field(default_factory=dict)
    """Extra named results (analyses put tables here)."""
    cautions: tuple[str, ...] = ()
    """Safety cautions shown with the result (see symcirc.analysis.cautions.attach)."""
    typeset: Mapping[str, str] = field(default_factory=dict)
    """Names' forms given by the circuit's file (`typeset`), used by `latex()`."""
    name_latex: str | None = None
    """How the quantity is set in LaTeX when it has a symbol of the trade (`\\omega_{0}`)."""
    origin: tuple[Location, str | None] | None = None
    """Where the quantity was asked for (location, source text), for messages."""

    def __post_init__(self) -> None:
        # sequences become tuples and mappings read-only copies, so nothing a caller keeps
        # can change the result afterwards
        fixed = {"notes": tuple(self.notes), "steps": tuple(self.steps),
                 "cautions": tuple(self.cautions),
                 "nominals": MappingProxyType(dict(self.nominals)),
                 "details": MappingProxyType(dict(self.details)),
                 "typeset": MappingProxyType(dict(self.typeset))}
        if self.base is None:
            fixed["base"] = self.quantity
        for name, value in fixed.items():
            object.__setattr__(self, name, value)

    def replace(self, **changes: Any) -> Result:
        """A new result with `changes`; what was computed from the value is kept when the
        value and nominals stay (turning a large value into sympy costs much)."""
        made = dataclasses.replace(self, **changes)
        if "value" not in changes and "nominals" not in changes:
            for name in _COMPUTED:
                if name in self.__dict__:
                    made.__dict__[name] = self.__dict__[name]
        return made

    def with_notes(self, *more: str) -> Result:
        """A new result with `more` notes after its own."""
        return self.replace(notes=(*self.notes, *more)) if more else self

    def with_new_notes(self, *more: str) -> Result:
        """A new result with those of `more` notes it does not have yet."""
        fresh: list[str] = []
        for note in more:
            if note not in self.notes and note not in fresh:
                fresh.append(note)
        return self.with_notes(*fresh)

    def with_details(self, **more: Any) -> Result:
        """A new result with `more` details (replacing those of the same name)."""
        return self.replace(details={**self.details, **more})

    # -- the value
    @property
    def exact(self) -> ExactValue | None:
        """The engine's rational function, when the result came from the engine."""
        return None if symbolic(self.value) else self.value

    @cached_property
    def expression(self) -> sympy.Expr:
        if symbolic(self.value):
            return self.value
        return self.value.to_sympy()

    @cached_property
    def symbols(self) -> tuple[str, ...]:
        """Every name the expression uses, sorted."""
        if symbolic(self.value):
            return tuple(sorted(str(x) for x in self.value.free_symbols))
        return tuple(sorted(self.value.symbol_names()))

    @cached_property
    def missing(self) -> tuple[str, ...]:
        """Symbols without a nominal value (`s` included: a transfer function has none)."""
        return tuple(n for n in self.symbols if n not in self.nominals)

    @cached_property
    def nominal_exact(self) -> Fraction | None:
        """Exact value at the nominal values, or None when a symbol has no value."""
        if self.missing:
            return None
        if symbolic(self.value):
            import sympy

            subs = {sympy.Symbol(n): sympy.Rational(v.numerator, v.denominator)
                    for n, v in self.nominals.items()}
            value = self.value
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
                number = float(value)
                if 0 < abs(number) < 1e-6:  # a noise power: keep its digits, not 10⁻¹⁵ steps
                    return Fraction(number)
                return Fraction(number).limit_denominator(10**15)
            except TypeError:  # a complex number: no real value to show
                return None
        try:
            return self.value.evaluate({n: self.nominals[n] for n in self.symbols})
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
        if symbolic(self.value):
            import sympy

            return sympy.sstr(self.value)
        return self.value.to_text()

    def latex(self) -> str:
        from .model.typeset import latex_of, names

        with names(self.typeset):
            # the engine writes LaTeX straight from its terms: far faster than sympy for
            # big results
            if not symbolic(self.value) and hasattr(self.value, "to_latex"):
                return self.value.to_latex()
            if symbolic(self.value) and self.value.is_Float:  # a value found numerically
                from .model.units import number_latex

                return number_latex(float(self.value), self.unit)
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
            out.setdefault(key, shown(value))
        return out


_COMPUTED = ("expression", "symbols", "missing", "nominal_exact")
"""The cached properties that depend only on the value and the nominals."""
