"""What notes and sheets show, as plain data for the templates: rows of the parts and
parameters tables, one view per derived result (equations laid out, steps, tables), claims.

Nothing here is escaped or formatted for a particular format: the templates do that with
the filters. Numbers stay numbers (floats) so each format can show them its own way.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Any

import sympy

from ..model.circuit import LAPLACE, Assumption, Circuit, Tolerance
from ..model.typeset import symbol_latex
from ..model.units import engineering, percent
from ..vocabulary import QUANTITIES
from .formulas import Equation, equations, fraction_parts

# ---------------------------------------------------------------- the circuit


@dataclass(frozen=True)
class Part:
    """One row of the parts table."""

    name: str
    kind: str
    nodes: tuple[str, ...]
    value: str | None
    """The value as written (`4k7`, `R0*(1 + alpha*T)`), or None."""
    nominal: float | None
    unit: str
    tolerance: str | None
    description: str | None


@dataclass(frozen=True)
class Parameter:
    """One row of the parameters table."""

    name: str
    value: str | None
    nominal: float | None
    unit: str
    tolerance: str | None
    description: str | None


@dataclass(frozen=True)
class PortRow:
    name: str
    positive: str
    negative: str


def parts(circuit: Circuit) -> list[Part]:
    """The parts table, in the order the file lists them."""
    return [
        Part(e.name, e.kind, tuple(e.coupled or e.nodes), _value_text(e),
             _float(e.nominal),
             e.unit, tolerance_text(e.tolerance, e.unit), e.description)
        for e in circuit.elements.values()
    ]


def parameters(circuit: Circuit) -> list[Parameter]:
    """The parameters table, in the order the file lists them."""
    rows = []
    for p in circuit.parameters.values():
        written = None if p.value is None else _written(p.value, p.nominal, p.unit)
        rows.append(Parameter(p.name, written, _float(p.nominal), p.unit,
                              tolerance_text(p.tolerance, p.unit), p.description))
    return rows


def ports(circuit: Circuit) -> list[PortRow]:
    return [PortRow(p.name, p.positive, p.negative) for p in circuit.ports.values()]


def tolerance_text(tolerance: Tolerance | None, unit: str) -> str | None:
    """`± 1 %`, `± 5 Ω`, `+80 % / −20 %` (plain text; the filters escape it)."""
    if tolerance is None:
        return None

    def amount(x: Fraction) -> str:
        if tolerance.relative:
            return f"{percent(x)} %"
        return engineering(x, unit)

    if tolerance.symmetric:
        return f"± {amount(tolerance.plus)}"
    return f"+{amount(tolerance.plus)} / −{amount(tolerance.minus)}"


def _value_text(element) -> str | None:
    """The value as written without its tolerance, with a source's frequency (`325 V at 50 Hz`)."""
    value = _without_tolerance(element.written)
    if value and element.frequency_text:
        value += f" at {element.frequency_text}"
    return value


def _without_tolerance(written: str | None) -> str | None:
    """The value as written without its tolerance (the table has a column for that)."""
    if not written:
        return None
    return re.split(r"\s*(?:±|\+-|\+\s*[\d.]+\s*%?\s*-)", written, maxsplit=1)[0].strip()


def _written(value: sympy.Expr, nominal: Fraction | None, unit: str) -> str:
    """A parameter's value as a reader writes it: `1 kΩ` for a number, else the expression."""
    if value.is_Number and nominal is not None:
        from .filters import eng

        return eng(float(nominal), unit, digits=6)
    return sympy.sstr(value)


def _float(value: Fraction | None) -> float | None:
    return None if value is None else float(value)


# ---------------------------------------------------------------- derived results


@dataclass(frozen=True)
class Cell:
    """A table cell: plain text, or maths when `latex` is set."""

    text: str
    latex: str | None = None


LONG_CELL = 45.0
"""Printed width (characters of maths) beyond which a formula does not go in a table cell."""


@dataclass(frozen=True)
class Table:
    """A small table (sensitivities, tolerance, loading): header and rows of cells."""

    title: str
    columns: tuple[str, ...]
    rows: tuple[tuple[Cell, ...], ...]
    caption: str | None = None

    @property
    def wide_columns(self) -> tuple[int, ...]:
        """Columns holding formulas or text that fit a cell only when it wraps (LaTeX gives
        them a fixed width)."""
        from .formulas import visible_width

        def wraps(cell: Cell) -> bool:
            if cell.latex:
                return 30 < visible_width(cell.latex) <= LONG_CELL
            return len(cell.text) > 40  # a long text (a formula as text) wraps at its spaces

        return tuple(i for i in range(len(self.columns)) if any(
            wraps(row[i]) for row in self.rows if i < len(row)))

    @property
    def long_cells(self) -> tuple[tuple[int, int], ...]:
        """(row, column) of each formula too long for a cell: LaTeX gives it in full below
        the table, broken across lines, and the cell refers to it."""
        from .formulas import visible_width

        return tuple((i, j) for i, row in enumerate(self.rows) for j, c in enumerate(row)
                     if c.latex and visible_width(c.latex) > LONG_CELL)


@dataclass(frozen=True)
class StepView:
    """One derivation step: a sentence and its equation (laid out: a formula too wide for a
    line may take several equations, as 𝒩/𝒟 with numerator and denominator below)."""

    number: int
    kind: str
    sentence: str
    equations: tuple[Equation, ...]
    defines: str | None

    @property
    def equation(self) -> Equation | None:
        """The step's first equation (None when the step has none)."""
        return self.equations[0] if self.equations else None


@dataclass(frozen=True)
class FormParameter:
    """A design parameter of a standard form (K, ω0, f0, Q, ζ, poles and zeros)."""

    name: str
    latex: str
    """Its symbol as LaTeX."""
    expression: str
    """Its closed form as LaTeX."""
    nominal: float | None
    unit: str


@dataclass(frozen=True)
class Figure:
    """A plot written beside the note; `path` is relative to the note's folder (POSIX)."""

    path: str
    caption: str
    kind: str
    quantity: str


@dataclass(frozen=True)
class Spread:
    """The range a toleranced result can take: worst-case low and high, with the method."""

    low: float
    high: float
    method: str

    def relative(self, nominal: float | None) -> tuple[float, float] | None:
        """(low, high) relative to `nominal` (−0.01, +0.012), or None when the result is near
        zero (0 at nominal, or the band reaching zero: `analysis.nearzero`), where only the
        band in the result's unit means something."""
        from ..quantities.nearzero import band_reaches_zero

        if nominal is None or band_reaches_zero(nominal, self.low, self.high):
            return None
        return self.low / nominal - 1, self.high / nominal - 1


@dataclass
class ResultView:
    """Everything a note shows about one derived scalar quantity."""

    quantity: str
    anchor: str
    symbol: str
    """The quantity's symbol as an engineer writes it (LaTeX): `V_{\\mathrm{Th}}`."""
    unit: str
    nominal: float | None
    missing: tuple[str, ...]
    """Symbols without a value (why there is no nominal value)."""
    design: list[Equation]
    """The design-oriented form (empty when none was verified)."""
    design_text: str | None
    design_latex: str | None
    canonical: list[Equation]
    canonical_latex: str
    parameters: list[FormParameter]
    steps: list[StepView]
    notes: list[str]
    tables: list[Table] = field(default_factory=list)
    figures: list[Figure] = field(default_factory=list)
    spread: Spread | None = None
    caution: str | None = None
    """A short safety caution beside the nominal value (symcirc.analysis.cautions), or None."""
    result: Any = None
    """The symcirc.results.Result itself, for templates that want more."""

    @property
    def is_transfer_function(self) -> bool:
        return "s" in self.missing

    @property
    def short_formula(self) -> str | None:
        """The one-line formula when it fits a summary table's cell, else None."""
        from .formulas import WIDTH, visible_width

        return self.formula if visible_width(self.formula) <= WIDTH else None

    @property
    def formula(self) -> str:
        """The formula on one line (sheets): the shorter of the design form and the
        canonical result (the design form on a tie)."""
        return f"{self.symbol} = {self.shortest_latex}"

    @property
    def shortest_latex(self) -> str:
        """The right side of `formula`."""
        from .formulas import visible_width

        if self.design_latex and (visible_width(self.design_latex)
                                  <= visible_width(self.canonical_latex)):
            return self.design_latex
        return self.canonical_latex

    @property
    def summary(self) -> tuple[str, ...]:
        """`formula` broken before `+`/`−` into lines that fit the summary's formula column
        (a fraction too wide for it as 𝒩/𝒟 with numerator and denominator below; each line
        balanced, so each can be set on its own): the summary always shows it."""
        from .formulas import SUMMARY_WIDTH

        return summary_lines(self.symbol, self.shortest_latex, SUMMARY_WIDTH)


def summary_lines(lhs: str, rhs: str, width: float) -> tuple[str, ...]:
    """`lhs = rhs` as the lines of a narrow column of `width` characters of maths."""
    return tuple(line for equation in equations(lhs, rhs, None, width)
                 for line in equation.lines)


@dataclass
class Section:
    """The results of one quantity as written in a `derive` statement or on the command line."""

    heading: str
    anchor: str
    assumptions: tuple[str, ...]
    """Assumptions in LaTeX (`A \\to \\infty`)."""
    assumptions_text: tuple[str, ...]
    results: list[ResultView]
    tables: list[Table] = field(default_factory=list)
    """Tables that belong to the whole section (the sensitivities of `sensitivities(Q)`)."""
    figures: list[Figure] = field(default_factory=list)
    """Figures of the whole section (the loading curve of `loading(..)`)."""


def result_view(result: Any, symbol: str | None = None) -> ResultView:
    """The view of one `symcirc.results.Result` (form, steps and details where present)."""
    symbol = symbol or quantity_symbol(result)
    canonical_latex = result.latex()
    # a single fraction is split from its own LaTeX; only other shapes need the expression
    # (a large result's sympy form costs as much as its derivation)
    expression = None if fraction_parts(canonical_latex) is not None else result.expression
    canonical = equations(symbol, canonical_latex, expression)
    design: list[Equation] = []
    design_text = design_latex = None
    parameters_: list[FormParameter] = []
    form = getattr(result, "form", None)
    if form is not None:
        form_latex = getattr(form, "latex", None)
        shown_apart = getattr(form, "kind", "") != "canonical"  # else it is the canonical
        if form_latex and form_latex != canonical_latex and shown_apart:
            design_latex = form_latex
            design = equations(symbol, form_latex, getattr(form, "expression", None))
        design_text = getattr(form, "text", None)
        for name, item in sorted((getattr(form, "parameters", None) or {}).items(),
                                 key=lambda kv: _parameter_order(kv[0])):
            parameters_.append(FormParameter(
                name, item.get("symbol_latex") or _parameter_latex(name),
                item.get("latex") or "", item.get("nominal"), item.get("unit") or ""))
    steps = [
        StepView(i, s.kind, s.sentence, _step_equations(s.latex), s.defines)
        for i, s in enumerate(getattr(result, "steps", None) or [], start=1)
    ]
    nominal = result.nominal
    return ResultView(
        quantity=result.quantity, anchor=anchor(result.quantity), symbol=symbol,
        unit=result.unit, nominal=nominal, missing=tuple(result.missing),
        design=design, design_text=design_text, design_latex=design_latex,
        canonical=canonical, canonical_latex=canonical_latex,
        parameters=parameters_, steps=steps, notes=list(result.notes),
        result=result,
    )


def _step_equations(latex: str | None) -> tuple[Equation, ...]:
    if not latex:
        return ()
    if " = " in latex:
        lhs, rhs = latex.split(" = ", 1)
        return tuple(equations(lhs, rhs))
    return (Equation((latex,)),)


_PARAMETER_ORDER = ("K", "omega0", "ω0", "w0", "f0", "Q", "zeta", "ζ")


def _parameter_order(name: str) -> tuple[int, str]:
    return (_PARAMETER_ORDER.index(name) if name in _PARAMETER_ORDER else len(_PARAMETER_ORDER),
            name)


_GREEK = {"omega": r"\omega", "ω": r"\omega", "zeta": r"\zeta", "ζ": r"\zeta", "w": r"\omega",
          "tau": r"\tau", "τ": r"\tau"}


def _parameter_latex(name: str) -> str:
    match = re.fullmatch(r"([A-Za-zωζτ]+?)(\d*)", name)
    if match is None:
        return latex_text(name)
    base, index = match.groups()
    head = _GREEK.get(base, base if len(base) == 1 else latex_text(base))
    return f"{head}_{{{index}}}" if index else head


# ---------------------------------------------------------------- names as LaTeX


def latex_text(text: str) -> str:
    """Arbitrary text (a quantity as written) as upright maths that prints literally."""
    out = []
    for c in text:
        if c in "_%#&$":
            out.append("\\" + c)
        elif c in "{}":
            out.append("\\" + c)
        elif c == "\\":
            out.append(r"\backslash ")
        elif c == " ":
            out.append(r"\ ")
        elif c == "Ω":
            out.append(r"\Omega ")
        elif c in "µμ":
            out.append(r"\mu ")
        elif c == "^":
            out.append(r"\hat{}")
        elif c == "~":
            out.append(r"\sim ")
        else:
            out.append(c)
    return r"\mathrm{" + "".join(out) + "}"


def name_latex(name: str) -> str:
    """An element or parameter name as the expressions print it (`R1` → `R_{1}`)."""
    return symbol_latex(name)


def node_latex(name: str) -> str:
    """A node or port name as a subscript: single letters italic, words upright."""
    if len(name) == 1 or name.isdigit():
        return name
    return latex_text(name)


def quantity_symbol(result: Any) -> str:
    """The symbol an engineer writes for a result's quantity: `thevenin(out).voltage` →
    `V_{\\mathrm{Th},\\mathrm{out}}`, `gain(Uref, out)` → `V_{out}/U_{ref}`; others upright;
    its `where` limits (`Rin -> oo`) as a subscript bar."""
    quantity, condition = result.parsed, result.condition
    symbol = _symbol(quantity) if quantity is not None else None
    if symbol is None and result.name_latex and not condition:
        return result.name_latex  # a symbol of the trade the analysis names (B_n, SNR)
    if symbol is None:
        return latex_text(result.quantity)
    return symbol + (r"\big|_{" + _condition_latex(condition) + "}" if condition else "")


_RELATIONS = {"->": r"\to", "oo": r"\infty", ">>": r"\gg", "<<": r"\ll", ",": ","}


def _condition_latex(condition: str) -> str:
    """A `where` condition as maths: `Rin -> oo` → `Rin \\to \\infty`."""
    tokens = re.findall(r"->|>>|<<|,|[A-Za-z_]\w*|\S+", condition)
    return " ".join(_RELATIONS.get(t) or (name_latex(t) if t.isidentifier() else latex_text(t))
                    for t in tokens)


def _arg_name(arg: Any) -> str | None:
    return getattr(arg, "name", None) if type(arg).__name__ == "Name" else None


def _symbol(q: Any) -> str | None:
    names = [_arg_name(a) for a in q.args]
    part = _response_part(q)
    if part is not None:
        return part
    entry = QUANTITIES.get(q.name)
    if entry is not None and entry.tag and q.attribute and names and names[0]:
        named = entry.part(q.attribute)
        tag = rf"\mathrm{{{entry.tag}}}"
        return f"{named.letter}_{{{tag},{node_latex(names[0])}}}" if named else None
    if q.name in ("Z", "Y") and len(names) == 1 and names[0] and not q.attribute:
        return f"{q.name}_{{{node_latex(names[0])}}}"
    if q.name == "V" and names and all(names) and not q.attribute:
        return "V_{" + ",".join(node_latex(n) for n in names) + "}"
    if q.name == "I" and len(names) == 1 and names[0] and not q.attribute:
        return f"I_{{{name_latex(names[0])}}}"
    if q.name == "gain" and len(q.args) == 2 and names[0] and not q.attribute:
        inner = q.args[1]
        output = _symbol(inner) if type(inner).__name__ == "Quantity" else (
            f"V_{{{node_latex(names[1])}}}" if names[1] else None)
        return rf"\frac{{{output}}}{{{name_latex(names[0])}}}" if output else None
    if q.name == "twoport" and q.attribute:
        if q.attribute in ("A", "B", "C", "D"):
            return rf"\mathrm{{{q.attribute}}}"
        return f"{q.attribute[0]}_{{{q.attribute[1:]}}}"
    if q.name in ("cmrr", "psrr"):
        return rf"\mathrm{{{q.name.upper()}}}"
    if q.name == "tolerance" and q.args and getattr(q.args[0], "name", None) in ("cmrr", "psrr"):
        return _symbol(q.args[0])
    if q.name in ("sensitivity", "relative_sensitivity") and len(q.args) == 2 and names[1]:
        inner = q.args[0]
        of = _symbol(inner) if type(inner).__name__ == "Quantity" else None
        if of is None:
            return None
        x = name_latex(names[1])
        if q.name == "sensitivity":
            return rf"\frac{{\partial {of}}}{{\partial {x}}}"
        return f"S^{{{of}}}_{{{x}}}"
    return None


def _response_part(q: Any) -> str | None:
    """ω0, Q, ζ … of a response (`gain(Uin, out).w0` → ω0 of V_out/U_in) and the response
    at a frequency (`at(gain(Uin, out), 1 kHz).dB`), as an engineer writes them."""
    from ..analysis.frequency import AT_PARTS, PARTS
    from ..quantities.registry import RESPONSE_QUANTITIES

    if q.name == "response" and q.args and type(q.args[0]).__name__ == "Quantity":
        return _symbol(q.args[0])  # the response itself, tabulated
    if q.name == "solve" and len(q.args) == 2 and _arg_name(q.args[1]):
        return name_latex(_arg_name(q.args[1]))  # the part value that meets the target
    if q.name in RESPONSE_QUANTITIES and q.attribute in PARTS:
        base = _symbol(type(q)(q.line, q.column, q.name, q.args, None, q.text))
        symbol = PARTS[q.attribute][1]
        return symbol + (rf"\left({base}\right)" if base else "")
    if q.name == "at" and len(q.args) == 2 and q.attribute in AT_PARTS \
            and type(q.args[0]).__name__ == "Quantity":
        base = _symbol(q.args[0])
        if base is None:
            return None
        where = q.args[1]
        # the frequency as the quantity's text writes it: `1kHz`
        text = "".join((getattr(where, "text", None) or getattr(where, "name", "")).split())
        at = {"0": r"\mathrm{DC}", "oo": r"f \to \infty"}.get(text) or \
            "f = " + latex_text(text)
        if q.attribute == "magnitude":
            return rf"\left\lvert {base}\right\rvert_{{{at}}}"
        if q.attribute == "dB":
            return rf"20 \log_{{10}} \left\lvert {base}\right\rvert_{{{at}}}"
        return rf"\angle {base}\big\vert_{{{at}}}"
    return None


def anchor(text: str) -> str:
    """A stable identifier for links (`thevenin(out).voltage` → `thevenin-out-voltage`)."""
    slug = re.sub(r"[^A-Za-z0-9]+", "-", text).strip("-").lower()
    return slug or "quantity"


def assumption_latex(assumption: Assumption) -> str:
    """`A \\to \\infty`, `R_{m} \\gg R_{1}`."""
    symbol = name_latex(assumption.symbol)
    if assumption.kind == "limit":
        return symbol + (r" \to \infty" if assumption.target == "oo" else r" \to 0")
    return f"{symbol} \\gg {name_latex(assumption.target or '')}"


def assumption_text(assumption: Assumption) -> str:
    """`A → ∞`, `Rm ≫ R1`."""
    if assumption.kind == "limit":
        return f"{assumption.symbol} → {'∞' if assumption.target == 'oo' else '0'}"
    return f"{assumption.symbol} ≫ {assumption.target}"


def has_laplace(expression: sympy.Expr) -> bool:
    return LAPLACE in expression.free_symbols
