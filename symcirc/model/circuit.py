"""The flat, validated circuit: what every later stage reads.

Built by `symcirc.model.elaborate` from the syntax tree; never built from text directly.
Names are final (blocks expanded), the reference node is called `gnd`, every value is a
formula of the model's own (`formula.py`, built from the syntax tree, never by evaluating
text); the sympy expressions later stages read (`value`, `definition`, `coefficient` ...)
are built from it on first use, so reading a circuit needs no computer algebra.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction
from functools import cached_property
from typing import TYPE_CHECKING, Any, Literal

from ..errors import Location
from ..vocabulary import ELEMENT_KINDS, ElementKind, ImpedanceLaw
from .formula import Formula

if TYPE_CHECKING:  # pragma: no cover
    import sympy

    from ..language.syntax import Expr, Quantity

REFERENCE = "gnd"
"""Name of the reference node in the model (`gnd` and `0` in a file both mean it)."""


def __getattr__(name: str) -> Any:
    """The sympy symbols of the model (`LAPLACE`, `BOLTZMANN_SYMBOL`, `TEMPERATURE_SYMBOL`),
    made on first use: reading a circuit needs no sympy."""
    names = {"LAPLACE": "s", "BOLTZMANN_SYMBOL": BOLTZMANN_NAME,
             "TEMPERATURE_SYMBOL": TEMPERATURE_NAME}
    if name in names:
        return _symbol(names[name])
    raise AttributeError(name)


def _sympy(formula: Formula | None) -> sympy.Expr | None:
    return None if formula is None else formula.to_sympy()


def _symbol(name: str) -> sympy.Symbol:
    import sympy

    return sympy.Symbol(name)

BOLTZMANN = Fraction(1380649, 10**29)
"""Boltzmann's constant in J/K, exact since the SI redefinition of 2019."""
BOLTZMANN_NAME = "k_B"
"""The name of Boltzmann's constant in noise results (`BOLTZMANN_SYMBOL` its sympy symbol)."""
TEMPERATURE_NAME = "T_amb"
"""The thermal noise temperature in K (the file's `temperature`; `TEMPERATURE_SYMBOL`)."""
DEFAULT_TEMPERATURE = Fraction(300)
"""The temperature of thermal noise when a file gives none: 300 K (about 27 °C)."""
NOISE_NAMES = (BOLTZMANN_NAME, TEMPERATURE_NAME)
"""Names the noise analyses use for k_B and T (a file may not declare them)."""

@dataclass(frozen=True)
class Tolerance:
    """A tolerance as written: `± 1 %` (relative), `± 5 Ω` (absolute), `+80 % -20 %`.

    `plus` and `minus` are both non-negative: the value may go up by `plus` and down by
    `minus`. Relative tolerances are fractions of the nominal (1 % is 1/100).
    """

    plus: Fraction
    minus: Fraction
    relative: bool

    def bounds(self, nominal: Fraction) -> tuple[Fraction, Fraction]:
        """Lowest and highest value around `nominal`."""
        if self.relative:
            return nominal - abs(nominal) * self.minus, nominal + abs(nominal) * self.plus
        return nominal - self.minus, nominal + self.plus

    @property
    def symmetric(self) -> bool:
        return self.plus == self.minus


@dataclass(frozen=True)
class Parameter:
    """`param NAME [= VALUE] ["description"]`."""

    name: str
    value_formula: Formula | None
    """As written: a number, an expression of other parameters, or None (free symbol)."""
    nominal: Fraction | None
    """The numeric value when it can be computed from numbers alone; else None."""
    unit: str
    """SI unit written with the value ('' when none was written)."""
    tolerance: Tolerance | None
    description: str | None
    location: Location

    @cached_property
    def symbol(self) -> sympy.Symbol:
        return _symbol(self.name)

    @cached_property
    def value(self) -> sympy.Expr | None:
        """`value_formula` as a sympy expression."""
        return _sympy(self.value_formula)


@dataclass(frozen=True)
class Control:
    """One term `coefficient * V(positive, negative)` or `coefficient * I(element)`."""

    coefficient_formula: Formula
    kind: Literal["voltage", "current"]
    nodes: tuple[str, str] = ()  # type: ignore[assignment]
    element: str | None = None

    @cached_property
    def coefficient(self) -> sympy.Expr:
        return self.coefficient_formula.to_sympy()


@dataclass(frozen=True)
class Element:
    """One circuit element, after block expansion.

    Terminal order: two-terminal elements and sources `(first, second)`; opamp
    `(p, n, out)` (output referred to the reference node); transformer
    `(p1, n1, p2, n2)`; coupling has no nodes and names two inductors in `coupled`.
    """

    name: str
    kind: str
    """Its keyword in the vocabulary (`resistor`, `voltage source`)."""
    nodes: tuple[str, ...]
    definition_formula: Formula | None
    """Defining expression in parameters (`R0*(1 + alpha*T)`), or None when the value is a
    number or absent. For an opamp: its open-loop gain (may use `s`); None = ideal."""
    nominal: Fraction | None
    """Numeric value: the number written, or the definition at nominal parameter values."""
    tolerance: Tolerance | None
    unit: str
    description: str | None
    location: Location
    controls: tuple[Control, ...] = ()
    """For a controlled source: its terms in V(..) and I(..)."""
    independent_formula: Formula | None = None
    """For a controlled source: a part of its value that names no V(..) or I(..) (rare)."""
    coupled: tuple[str, str] | None = None
    """For a coupling: the two inductors it couples."""
    written: str | None = None
    """The value as the user wrote it (for tables in notes)."""
    frequency_formula: Formula | None = None
    """For an independent source given `at 50 Hz` (or `at f`): its frequency in Hz, a number
    or a parameter's symbol; its value is then a sinusoid's peak amplitude. None: DC."""
    corner: sympy.Expr | None = None
    """For a noise source: the 1/f corner in Hz (density e_n·√(1 + f_c/f)); None: white."""

    @cached_property
    def symbol(self) -> sympy.Symbol:
        """The element's own symbol (`R1`); results use it by default."""
        return _symbol(self.name)

    @cached_property
    def definition(self) -> sympy.Expr | None:
        """`definition_formula` as a sympy expression."""
        return _sympy(self.definition_formula)

    @cached_property
    def independent(self) -> sympy.Expr | None:
        return _sympy(self.independent_formula)

    @cached_property
    def frequency(self) -> sympy.Expr | None:
        return _sympy(self.frequency_formula)

    @property
    def frequency_text(self) -> str | None:
        """`50 Hz` or the parameter's name, as a source's frequency is shown; None for DC."""
        written = self.frequency_formula
        if written is None:
            return None
        if written.number is not None:
            from .units import engineering

            return engineering(written.number, "Hz")
        return written.args[0] if written.op == "name" else str(written)

    @property
    def is_controlled(self) -> bool:
        return bool(self.controls)

    @property
    def entry(self) -> ElementKind:
        """What the vocabulary says about its kind."""
        return ELEMENT_KINDS[self.kind]

    @property
    def law(self) -> ImpedanceLaw | None:
        """Its impedance law when it is a passive two-terminal element, else None."""
        return ELEMENT_KINDS[self.kind].law

    @property
    def is_source(self) -> bool:
        """A voltage or current source (independent or controlled)."""
        return ELEMENT_KINDS[self.kind].source

    @property
    def impedance(self) -> sympy.Expr:
        """The impedance of a passive element in its own symbol: `R1`, `1/(C1*s)`, `L1*s`."""
        law = self.law
        if law is None:
            raise TypeError(f"{self.kind} {self.name} has no impedance law")
        return self.symbol**law.value_power * _symbol("s")**law.s_power

    @property
    def is_ideal_opamp(self) -> bool:
        return (self.kind == "opamp" and self.definition_formula is None
                and self.nominal is None)


@dataclass(frozen=True)
class NoiseDensity:
    """An opamp's input noise density: `en = 4 nV/√Hz corner 10 Hz`."""

    symbol: sympy.Symbol
    """Its symbol in formulas (`en_U1`)."""
    value: sympy.Expr
    nominal: Fraction | None
    unit: str
    """`V/√Hz` or `A/√Hz`."""
    corner: sympy.Expr | None
    written: str
    location: Location


@dataclass(frozen=True)
class OpampNoise:
    """The input noise of one opamp: a voltage density in series with its + input and a
    current density from each input to gnd (uncorrelated)."""

    opamp: str
    voltage: NoiseDensity | None = None
    current: NoiseDensity | None = None


@dataclass(frozen=True)
class Noise:
    """What the noise analyses need beyond the elements."""

    temperature: Fraction = DEFAULT_TEMPERATURE
    """In K."""
    temperature_written: str | None = None
    """As the file wrote it (`27 °C`); None when the default holds."""
    noiseless: frozenset[str] = frozenset()
    """Parts marked `noiseless`."""
    opamps: dict[str, OpampNoise] = field(default_factory=dict)

    def densities(self) -> list[NoiseDensity]:
        return [d for o in self.opamps.values() for d in (o.voltage, o.current) if d is not None]


@dataclass(frozen=True)
class Port:
    """`port NAME (positive, negative)`: V(NAME) = V(positive) - V(negative)."""

    name: str
    positive: str
    negative: str
    location: Location


@dataclass(frozen=True)
class Assumption:
    """A `where` clause: `X -> oo`, `X -> 0`, or `big >> small`."""

    kind: Literal["limit", "much_greater"]
    symbol: str
    """Limit: the symbol that goes to its limit. much_greater: the large one."""
    target: str | None = None
    """Limit: 'oo' or '0'. much_greater: the small symbol."""
    location: Location | None = None


@dataclass(frozen=True)
class Derive:
    """`derive Q1, Q2 [where ...]`."""

    quantities: tuple[Quantity, ...]
    texts: tuple[str, ...]
    """Each quantity as written (normalised spacing), for headings."""
    assumptions: tuple[Assumption, ...]
    location: Location


@dataclass(frozen=True)
class Claim:
    """`claim QUANTITY = EXPRESSION`: a hand-derived result to check (from the file, or
    given on the command line)."""

    quantity: Quantity
    quantity_text: str
    expression_formula: Formula
    expression_text: str
    location: Location
    written: Expr | None = None
    """The claimed expression as parsed (numbers keep their units, for dimension checks)."""
    origin: tuple[str, str] | None = None
    """(name, text) of a claim given outside the file, for error positions; None: the
    circuit's own file."""

    @cached_property
    def expression(self) -> sympy.Expr:
        """The claimed expression as a sympy expression."""
        return self.expression_formula.to_sympy()


@dataclass(frozen=True)
class Notice:
    """A warning or an informational notice about the input (not an error)."""

    kind: Literal["warning", "notice"]
    message: str
    location: Location | None


@dataclass
class Circuit:
    """A flat, validated circuit."""

    file: str
    source: str
    title: str | None
    parameters: dict[str, Parameter]
    elements: dict[str, Element]
    ports: dict[str, Port]
    nodes: tuple[str, ...]
    """Every node, reference (`gnd`) first, then in order of first appearance."""
    derives: tuple[Derive, ...] = ()
    claims: tuple[Claim, ...] = ()
    notices: tuple[Notice, ...] = ()
    reference_chosen: bool = False
    """True when the file never named the reference node and one was chosen."""
    aliases: dict[str, str] = field(default_factory=dict)
    """Other names of nodes: the user's name of a chosen reference node → `gnd`."""
    typeset: dict[str, str] = field(default_factory=dict)
    """Names' LaTeX forms given by the file's `typeset` statements (checked safe)."""
    noise: Noise = field(default_factory=Noise)
    """Temperature, noiseless parts and opamp noise densities (noise analyses)."""

    def name_nominals(self) -> dict[str, Fraction]:
        """`symbol_nominals` by name (no sympy symbols made)."""
        out = {p.name: p.nominal for p in self.parameters.values() if p.nominal is not None}
        out.update((e.name, e.nominal) for e in self.elements.values() if e.nominal is not None)
        out.update((str(d.symbol), d.nominal) for d in self.noise.densities()
                   if d.nominal is not None)
        out[BOLTZMANN_NAME] = BOLTZMANN
        out[TEMPERATURE_NAME] = self.noise.temperature
        return out

    def symbol_nominals(self) -> dict[sympy.Symbol, Fraction]:
        """Nominal value of every element and parameter symbol that has one."""
        out: dict[sympy.Symbol, Fraction] = {}
        for p in self.parameters.values():
            if p.nominal is not None:
                out[p.symbol] = p.nominal
        for e in self.elements.values():
            if e.nominal is not None:
                out[e.symbol] = e.nominal
        for d in self.noise.densities():
            if d.nominal is not None:
                out[d.symbol] = d.nominal
        out[_symbol(BOLTZMANN_NAME)] = BOLTZMANN
        out[_symbol(TEMPERATURE_NAME)] = self.noise.temperature
        return out

    def noise_units(self) -> dict[str, str]:
        """The units of the symbols noise results add: k_B, T_amb, f and opamp densities."""
        units = {BOLTZMANN_NAME: "J/K", TEMPERATURE_NAME: "K"}
        if "f" not in self.parameters and "f" not in self.elements:
            units["f"] = "Hz"
        units.update({str(d.symbol): d.unit for d in self.noise.densities()})
        return units

    def definitions(self) -> dict[sympy.Symbol, sympy.Expr]:
        """Element symbols that are defined by an expression of parameters (for --substitute)."""
        return {
            e.symbol: e.definition
            for e in self.elements.values()
            if e.definition is not None and e.kind != "opamp"
        }

    def resolve_node(self, name: str) -> str | None:
        """The model's name of a node written by the user (`0`, `007`, an alias), or None."""
        if name.isascii() and name.isdigit():
            name = name.lstrip("0") or REFERENCE
        name = self.aliases.get(name, name)
        return name if name in self.nodes else None

    def node_location(self, node: str) -> Location | None:
        """Where a node is first used (for error messages)."""
        for e in self.elements.values():
            if node in e.nodes:
                return e.location
        return None
