"""The design-analysis quantities of the language: `sensitivities(Q)`, `tolerance(Q)`,
`loading(port, Zload)`, `minimum_load(port, error)` and `solve(Q = target, x)`.

Each handler reads its syntax-tree arguments against the circuit, derives the inner
quantity through the quantity registry, runs the analysis (sensitivity, tolerance,
loading, components) and returns Results: closed forms as expressions, numbers at the
nominal values in sentences (`notes`) and tables in `details`.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from fractions import Fraction
from functools import partial

import sympy

from ..algebra.unexpanded import Unexpanded
from ..errors import Location, SymcircError
from ..language import syntax
from ..limits import MAX_TABLE_TERMS
from ..model.circuit import Circuit
from ..model.typeset import latex_of
from ..model.units import degrees, eng
from ..model.units import per as _per
from ..model.units import percent_text as percent
from ..quantities import nearzero
from ..quantities.registry import DeriveOptions
from ..results import Deferred, Result
from . import components, loading, numeric_spread, sensitivity, tolerance
from .values import exact_value

# ---------------------------------------------------------------- reading arguments


class Reader:
    """Reads a quantity's arguments against the circuit; errors point where it was written."""

    def __init__(self, circuit: Circuit, options: DeriveOptions) -> None:
        self.circuit = circuit
        self.options = options
        self.file, self.source = options.origin or (circuit.file, circuit.source)

    def error(self, node: syntax.Node, message: str) -> SymcircError:
        return SymcircError.at(Location(self.file, node.line, node.column), message, self.source)

    def arguments(self, quantity: syntax.Quantity, least: int, most: int, usage: str,
                  parts: bool = False) -> tuple:
        """The arguments; `parts`: the quantity may name one of its results (`.error`)."""
        if not least <= len(quantity.args) <= most:
            raise self.error(quantity, f"{quantity.name}(..) takes {usage}")
        if quantity.attribute is not None and not parts:
            raise self.error(quantity, f"{quantity.name}(..) has no part `.{quantity.attribute}`")
        return quantity.args

    def select(self, quantity: syntax.Quantity, results: list[Result]) -> list[Result]:
        """The results a part names (`loading(out, Rm).error`), or all of them."""
        if quantity.attribute is None:
            return results
        chosen = [r for r in results if r.part == quantity.attribute]
        if not chosen:
            known = sorted({r.part for r in results if r.part})
            raise self.error(quantity, f"{quantity.name}(..) has no part `.{quantity.attribute}`"
                                       f"; it has {', '.join('.' + k for k in known)}")
        return chosen

    def quantity(self, arg) -> syntax.Quantity:
        """A quantity argument: `V(out)` read as an expression is a quantity too."""
        if isinstance(arg, syntax.Quantity):
            return arg
        if isinstance(arg, syntax.Voltage):
            return syntax.Quantity(arg.line, arg.column, "V", arg.nodes, None,
                                   "V(" + ", ".join(n.name for n in arg.nodes) + ")")
        if isinstance(arg, syntax.Current):
            return syntax.Quantity(arg.line, arg.column, "I", (arg.element,), None,
                                   f"I({arg.element.name})")
        raise self.error(arg, "expected a quantity here (such as V(out) or gain(Uin, out))")

    def derive(self, arg) -> list[Result]:
        """Derive a quantity argument through the registry."""
        from ..quantities import derive_quantity

        return derive_quantity(self.circuit, self.quantity(arg), self.options)

    def single(self, arg) -> Result:
        results = self.derive(arg)
        if len(results) != 1:
            names = ", ".join(r.quantity for r in results)
            raise self.error(arg, f"this needs a single quantity; {self.quantity(arg).text} "
                                  f"gives {len(results)} ({names}): name one of them")
        return results[0]

    def expression(self, expr) -> sympy.Expr:
        from ..model.expressions import expression_in

        if isinstance(expr, syntax.Quantity | syntax.Equation):
            raise self.error(expr, "expected an expression of parameters and elements here")
        return expression_in(self.circuit, expr, self.file, self.source)

    def symbol(self, arg) -> sympy.Symbol:
        if isinstance(arg, syntax.Name) and (arg.name in self.circuit.parameters
                                             or arg.name in self.circuit.elements):
            return sympy.Symbol(arg.name)
        raise self.error(arg, "expected the name of a parameter or element here")

    def number(self, arg, what: str, units: tuple[str | None, ...]) -> Fraction:
        """A numeric argument (`0.1 %`, `1 kHz`, or an expression of valued parameters)."""
        if isinstance(arg, syntax.Number):
            if arg.unit not in units:
                wanted = " or ".join(u for u in units if u) or "no unit"
                raise self.error(arg, f"{what} is given in {wanted}, not {arg.unit}")
            return arg.value
        if isinstance(arg, syntax.Unary) and isinstance(arg.operand, syntax.Number):
            value = self.number(arg.operand, what, units)
            return -value if arg.op == "-" else value
        value = exact_value(self.expression(arg), self.circuit.symbol_nominals())
        if value is None:
            raise self.error(arg, f"{what} must be a number (or parameters with values)")
        return value

    def port(self, arg) -> str:
        if isinstance(arg, syntax.Name) and arg.name in self.circuit.ports:
            return arg.name
        raise self.error(arg, "expected a port name here")


def base_text(quantity: syntax.Quantity) -> str:
    """The quantity's text without the part it names: `loading(out, Rm)`."""
    if quantity.attribute is None:
        return quantity.text
    return quantity.text[: -len(quantity.attribute) - 1]


def _unit_of(circuit: Circuit, symbol: sympy.Symbol) -> str:
    """The unit of an element's or parameter's symbol ('' when none is known)."""
    name = str(symbol)
    if name in circuit.elements:
        return circuit.elements[name].unit
    parameter = circuit.parameters.get(name)
    if parameter is not None:
        return parameter.unit
    return circuit.noise_units().get(name, "")


def _names(nominals: dict[sympy.Symbol, Fraction]) -> dict[str, Fraction]:
    return {str(k): v for k, v in nominals.items()}


def definitions(circuit: Circuit) -> dict[sympy.Symbol, sympy.Expr]:
    """Every symbol defined by an expression of others: elements and derived parameters."""
    out = dict(circuit.definitions())
    for p in circuit.parameters.values():
        if p.value is not None and p.value.free_symbols:
            out[p.symbol] = p.value
    return out


def tolerances(circuit: Circuit) -> dict[sympy.Symbol, object]:
    out = {p.symbol: p.tolerance for p in circuit.parameters.values() if p.tolerance}
    out.update({e.symbol: e.tolerance for e in circuit.elements.values() if e.tolerance})
    return out


def _float(value: Fraction | None) -> float | None:
    return None if value is None else float(value)


def _text(expression: sympy.Expr | Unexpanded) -> str:
    if isinstance(expression, Unexpanded):
        return expression.to_text()
    return sympy.sstr(expression)


def _latex(expression: sympy.Expr | Unexpanded) -> str:
    if isinstance(expression, Unexpanded):
        return expression.to_latex()
    return latex_of(expression)


# ---------------------------------------------------------------- sensitivities


def _excitation(circuit: Circuit, names: set[str]) -> sympy.Symbol | None:
    """The one independent source with a nonzero value that Q (using `names`) depends on,
    if exactly one."""
    nominals = circuit.symbol_nominals()
    found = [e.symbol for e in circuit.elements.values()
             if e.is_source and not e.controls and nominals.get(e.symbol) and e.name in names]
    if not found:  # a source defined by a parameter (`= Ub`): Q may carry the parameter
        found = [p.symbol for p in circuit.parameters.values()
                 if nominals.get(p.symbol) and p.symbol.name in names
                 and any(e.is_source and e.definition == p.symbol
                         for e in circuit.elements.values())]
    return found[0] if len(found) == 1 else None


def sensitivity_tables(circuit: Circuit, quantity: syntax.Quantity, options: DeriveOptions):
    """(inner result, sensitivity table) for each result of `sensitivities(Q[, reference])`."""
    read = Reader(circuit, options)
    args = read.arguments(quantity, 1, 2, "a quantity and optionally a reference: "
                                          "sensitivities(V(out)) or sensitivities(V(out), Ub)",
                          parts=True)
    named = read.expression(args[1]) if len(args) == 2 else None
    if getattr(args[0], "name", None) in ("cmrr", "psrr"):
        raise read.error(args[0], f"a level in dB has no sensitivity table; ask for the "
                                  f"sensitivities of its two gains, or tolerance({args[0].name}"
                                  "(..)) for its worst case over the tolerances")
    nominals = circuit.symbol_nominals()
    out = []
    valued = {x.name for x in (*nominals, *definitions(circuit))}
    for result in read.derive(args[0]):
        numeric = _numeric(circuit, args[0], options, result)
        if numeric is not None:
            symbols, evaluate, error = numeric
            if named is not None:
                raise read.error(args[1], f"{result.quantity} is integrated numerically: its "
                                          "sensitivities are relative to itself, with no "
                                          "reference")
            out.append((result, numeric_spread.sensitivities(evaluate, symbols, nominals,
                                                             error)))
            continue
        rows = len(set(result.symbols) & valued)
        size = rows * _terms(result)
        if size > MAX_TABLE_TERMS:
            one = f"sensitivity({result.quantity}, x) for one symbol x"
            raise read.error(quantity, f"the sensitivity table of {result.quantity} is too "
                             f"large: {rows} rows, each a derivative of a result of "
                             f"{_terms(result):,} terms ({size:,} terms in all; the limit is "
                             f"{MAX_TABLE_TERMS:,}); ask for " + (
                                 f"it without --substitute, or {one}" if options.substitute
                                 else one))
        value = result.exact if result.exact is not None else result.expression
        table = sensitivity.sensitivities(value, nominals, definitions(circuit), named)
        if named is None and nearzero.near_zero(
                table.nominal, nearzero.swings(table.rows, tolerances(circuit), nominals)):
            reference = _excitation(circuit, set(result.symbols)) or sympy.Integer(1)
            table = sensitivity.sensitivities(value, nominals, definitions(circuit), reference)
        out.append((result, table))
    return out


def _numeric(circuit: Circuit, arg, options: DeriveOptions, result: Result):
    """(symbols, evaluate, relative error) of a result known only numerically, else None."""
    if not isinstance(arg, syntax.Quantity) or "noise_band" not in result.details:
        return None
    from .noise_quantities import numeric_band

    found = numeric_band(circuit, arg, options, result)
    if found is None:
        return None
    symbols, evaluate, error = found
    return (*numeric_spread.through_definitions(evaluate, symbols, definitions(circuit),
                                                circuit.symbol_nominals()), error)


def is_near_zero(circuit: Circuit, table) -> bool:
    """Whether the table's Q is near zero by the rule of `nearzero` (its rows referred to
    something other than Q for that reason)."""
    nominals = circuit.symbol_nominals()
    return nearzero.near_zero(table.nominal,
                              nearzero.swings(table.rows, tolerances(circuit), nominals))


def _terms(result: Result) -> int:
    """Terms of a result's numerator and denominator (as written, when it is no ratio of
    polynomials)."""
    if result.exact is not None:
        return sum(result.exact.size())
    numerator, denominator = sympy.fraction(result.expression)
    return len(sympy.Add.make_args(numerator)) + len(sympy.Add.make_args(denominator))


def _sensitivity_heading(circuit: Circuit, inner: Result, table) -> tuple[str, str, str]:
    """(what the rows are relative to, their unit, the sentence that says so)."""
    q = inner.quantity
    if table.reference is None:
        return q, "", f"Relative sensitivities (x/Q)·∂Q/∂x of Q = {q}, largest first."
    if table.nominal == 0:
        zero = (f"{q} is zero at the nominal values (a balanced bridge), so its relative "
                "sensitivity is undefined; ")
    elif is_near_zero(circuit, table):
        zero = (f"Q = {q} is near zero at the nominal values ({eng(table.nominal, inner.unit)}): "
                f"{nearzero.RULE}, and a relative sensitivity (x/Q)·∂Q/∂x would be divided by "
                "an accident of the nominal values; ")
    else:
        zero = ""
    if table.reference == 1:
        return "1", inner.unit, (
            f"{zero}shown is x·∂Q/∂x, the change of {q} per unit relative change of x (no "
            "single excitation to refer it to), largest first.")
    reference = str(table.reference)
    unit = ""
    if isinstance(table.reference, sympy.Symbol):
        unit = _per(inner.unit, _unit_of(circuit, table.reference))
    return reference, unit, (
        f"{zero}the sensitivities are referred to {reference}: (x/{reference})·∂Q/∂x, the change "
        f"of {q} as a fraction of {reference} per unit relative change of x, largest first.")


def sensitivity_unit(circuit: Circuit, inner: Result, table) -> str:
    """The unit of a table's rows: '' relative to Q, else Q's unit over the reference's."""
    return _sensitivity_heading(circuit, inner, table)[1]


def sensitivities_quantity(circuit: Circuit, quantity: syntax.Quantity,
                           options: DeriveOptions) -> list[Result]:
    """One Result per valued symbol x, largest first: `sensitivities(Q).x` = (x/Q)·∂Q/∂x."""
    results: list[Result] = []
    nominals = _names(circuit.symbol_nominals())
    for inner, table in sensitivity_tables(circuit, quantity, options):
        relative_to, unit, heading = _sensitivity_heading(circuit, inner, table)
        near = table.nominal == 0 or is_near_zero(circuit, table)
        q = inner.quantity
        largest = max((abs(r.relative_value) for r in table.rows
                       if r.relative_value is not None), default=0)
        source = _excitation(circuit, set(inner.symbols))
        if table.reference is None and largest > 10 and source is not None:
            heading += (f" Relative sensitivities up to {eng(largest)} mean {q} is near "
                        f"balance: sensitivities({q}, {source}) refers them to the excitation.")
        if not table.rows:
            results.append(Result(f"{quantity.name}({q})", sympy.Integer(0), "", nominals,
                                  (f"{q} depends on no symbol with a value.",)))
            continue
        for rank, row in enumerate(table.rows, start=1):
            derivative_unit = _per(inner.unit, _unit_of(circuit, row.symbol))
            said = []
            if rank == 1 or quantity.attribute == str(row.symbol):  # a row named alone
                said.append(heading[0].upper() + heading[1:]
                            + (f" {table.method}" if table.method else ""))
            at = "" if row.derivative_value is None else \
                f" = {eng(row.derivative_value, derivative_unit)} at the nominal values"
            via = f" (through {', '.join(map(str, row.via))})" if row.via else ""
            derivative = _text(row.derivative)
            said.append(f"∂({q})/∂{row.symbol}{via} = {derivative}{at}.")
            details = {
                "symbol": str(row.symbol),
                "rank": rank,
                "relative_to": relative_to,
                "referred": table.reference is not None,
                "derivative": derivative,
                "derivative_latex": Deferred(partial(_latex, row.derivative)),
                "derivative_unit": derivative_unit,
                "derivative_nominal": _float(row.derivative_value),
                "relative_nominal": _float(row.relative_value),
                "near_zero": near,
                "absolute_nominal": _float(None if row.derivative_value is None
                                           or row.symbol not in circuit.symbol_nominals()
                                           else row.derivative_value
                                           * circuit.symbol_nominals()[row.symbol]),
                "absolute_unit": inner.unit,
                "via": [str(v) for v in row.via],
            }
            results.append(Result(f"{quantity.name}({q}).{row.symbol}", row.relative, unit,
                                  nominals, tuple(said), part=str(row.symbol),
                                  details={"sensitivity": details}))
    return Reader(circuit, options).select(quantity, results)


# ---------------------------------------------------------------- tolerance


def tolerance_analyses(circuit: Circuit, quantity: syntax.Quantity, options: DeriveOptions):
    """(inner result, analysis) for each result of `tolerance(Q[, uniform|normal])`."""
    read = Reader(circuit, options)
    args = read.arguments(quantity, 1, 2, "a quantity and optionally a distribution: "
                                          "tolerance(V(out)) or tolerance(V(out), normal)")
    distribution = "uniform"
    if len(args) == 2:
        if not (isinstance(args[1], syntax.Name) and args[1].name in tolerance.DISTRIBUTION_TEXT):
            raise read.error(args[1], "the distribution is `uniform` or `normal`")
        distribution = args[1].name
    out = []
    for result in read.derive(args[0]):
        numeric = _numeric(circuit, args[0], options, result)
        try:
            if numeric is not None:
                symbols, evaluate, _ = numeric
                out.append((result, numeric_spread.analyse(
                    evaluate, symbols, circuit.symbol_nominals(), tolerances(circuit),
                    distribution, options.seed)))
                continue
            value = result.exact if result.exact is not None else result.expression
            analysis = tolerance.analyse(
                value, circuit.symbol_nominals(), tolerances(circuit), definitions(circuit),
                distribution=distribution, seed=options.seed,
                order=[*circuit.elements, *circuit.parameters])
        except tolerance.PoleInBox as problem:
            raise _at_tolerance(read, args[0], result, problem) from None
        except tolerance.ToleranceInputError as problem:
            raise read.error(args[0], f"tolerance of {result.quantity}: {problem}") from None
        out.append((result, analysis))
    return out


def _at_tolerance(read: Reader, arg, result: Result,
                  problem: tolerance.PoleInBox) -> SymcircError:
    """The error at the tolerance to blame (its statement in the file), the quantity in a
    note; at the quantity when no single band is to blame."""
    circuit = read.circuit
    message = f"tolerance of {result.quantity}: {problem}"
    name = None if problem.symbol is None else problem.symbol.name
    owner = circuit.parameters.get(name) or circuit.elements.get(name) if name else None
    if owner is None:
        return read.error(arg, message)
    asked = f"{read.file}:{arg.line}:{arg.column}"
    return SymcircError.at(owner.location, message, circuit.source,
                           notes=(f"tolerance({result.quantity}) is asked for at {asked}",))


def tolerance_quantity(circuit: Circuit, quantity: syntax.Quantity,
                       options: DeriveOptions) -> list[Result]:
    """One Result per inner result: Q's closed form, with the spread in notes and details;
    a rejection ratio in dB (`cmrr(..)`, `psrr(..)`) through its own analysis."""
    inner = quantity.args[0] if quantity.args else None
    if isinstance(inner, syntax.Quantity) and inner.name in ("cmrr", "psrr"):
        from . import rejection

        read = Reader(circuit, options)
        args = read.arguments(quantity, 1, 2, "a quantity and optionally a distribution: "
                                              "tolerance(V(out)) or tolerance(V(out), normal)")
        distribution = "uniform"
        if len(args) == 2:
            if not (isinstance(args[1], syntax.Name)
                    and args[1].name in tolerance.DISTRIBUTION_TEXT):
                raise read.error(args[1], "the distribution is `uniform` or `normal`")
            distribution = args[1].name
        return rejection.tolerance_quantity(circuit, quantity, inner, options, distribution)
    out = []
    for inner, a in tolerance_analyses(circuit, quantity, options):
        value = inner.expression if inner.exact is None else _WrittenBySympy(inner)
        out.append(Result(f"tolerance({inner.quantity})", value, inner.unit,
                          _names(circuit.symbol_nominals()), tuple(_tolerance_sentences(inner, a)),
                          details={"tolerance": _tolerance_details(a)}))
    return out


class _WrittenBySympy:
    """The value of an engine result, written as sympy writes it (as `tolerance(Q)` always
    has been) but turned into sympy only when shown: a note reads only the analysis."""

    def __init__(self, inner: Result) -> None:
        self.inner = inner

    def to_sympy(self) -> sympy.Expr:
        return self.inner.expression

    def to_text(self) -> str:
        return sympy.sstr(self.inner.expression)

    def to_latex(self) -> str:
        return latex_of(self.inner.expression)

    def symbol_names(self) -> tuple[str, ...]:
        return self.inner.symbols

    def evaluate(self, values: dict[str, Fraction]) -> Fraction:
        return self.inner.exact.evaluate(values)


def _tolerance_sentences(inner: Result, a: tolerance.ToleranceAnalysis) -> list[str]:
    u, mc = inner.unit, a.monte_carlo
    if not a.variables:
        return [f"No tolerance reaches {inner.quantity} (with definitions substituted, no "
                f"toleranced symbol remains): it is fixed at {eng(a.nominal, u)}."]

    near = near_zero(a)

    def span(low, high) -> str:
        text = f"{eng(low, u)} to {eng(high, u)}"
        if near:
            text += (f" (offsets {signed(Fraction(low) - a.nominal, u)} / "
                     f"{signed(Fraction(high) - a.nominal, u)} from nominal)")
        elif a.nominal:
            text += (f" ({percent((Fraction(low) - a.nominal) / abs(a.nominal), signed=True)} / "
                     f"{percent((Fraction(high) - a.nominal) / abs(a.nominal), signed=True)})")
        return text

    names = ", ".join(v.label for v in a.variables)
    rss = f"±{eng(a.rss, u)}" + (f" (±{percent(a.rss / abs(a.nominal))})"
                                  if a.nominal and not near else "")
    said = ([f"Near zero: {nearzero.RULE}; {inner.quantity} is, so its spread is given as "
             f"absolute offsets in its unit, not relative to its nominal value."]
            if near else [])
    return [
        f"Nominal {eng(a.nominal, u)}; toleranced: {names}.",
        *said,
        f"Linearised worst case, nominal ± Σ|∂Q/∂x|·Δx: {span(a.linear_low, a.linear_high)}.",
        f"Extremes over the tolerance box: {span(a.extremes.low, a.extremes.high)}; "
        f"method: {a.extremes.method}.",
        f"Root-sum-square spread √Σ(∂Q/∂x·Δx)²: {rss}.",
        f"Monte Carlo, {mc.samples:,} samples, seed {mc.seed}, "
        f"{tolerance.DISTRIBUTION_TEXT[mc.distribution]}: mean {eng(mc.mean, u)}, standard "
        f"deviation {eng(mc.std, u)}, 0.1 % and 99.9 % quantiles {eng(mc.quantile_low, u)} "
        f"and {eng(mc.quantile_high, u)}.",
        "Largest contributions (linearised): " + ", ".join(
            f"{c.variable.label} {_contribution(c, u)}" for c in a.contributions[:5]) + ".",
        *a.warnings,
    ]


def near_zero(a: tolerance.ToleranceAnalysis) -> bool:
    """Whether a toleranced quantity is near zero (`nearzero`): its linearised worst-case
    band reaches zero."""
    return bool(a.variables) and nearzero.band_reaches_zero(a.nominal, a.linear_low,
                                                            a.linear_high) \
        or a.nominal == 0


def signed(value, unit: str) -> str:
    """An offset with its sign: `+3.81 mV`, `−3.81 mV`."""
    return ("+" if value > 0 else "") + eng(value, unit)


def _contribution(c: tolerance.Contribution, unit: str) -> str:
    """`±1.25 mV`, `-0.2 mV/+0.8 mV`, or `0 V (∂Q/∂x = 0 at nominal)`."""
    if c.up == c.down == 0:
        return f"{eng(0, unit)} (∂Q/∂x = 0 at the nominal point)"
    if c.up == -c.down:
        return f"±{eng(c.up, unit)}"
    return f"{eng(c.down, unit)}/+{eng(c.up, unit)}"


def _tolerance_details(a: tolerance.ToleranceAnalysis) -> dict:
    mc = a.monte_carlo
    nominal = a.nominal

    def offsets(low, high) -> dict:
        return {"low": float(Fraction(low) - nominal), "high": float(Fraction(high) - nominal)}

    return {
        "nominal": float(a.nominal),
        "near_zero": near_zero(a),
        "near_zero_rule": nearzero.RULE,
        "offsets": {
            "linearised": offsets(a.linear_low, a.linear_high),
            "extremes": offsets(a.extremes.low, a.extremes.high),
            "monte_carlo": offsets(mc.quantile_low, mc.quantile_high),
        },
        "linearised": {"low": float(a.linear_low), "high": float(a.linear_high)},
        "extremes": {
            "low": float(a.extremes.low), "high": float(a.extremes.high),
            "low_at": {k: float(v) for k, v in a.extremes.low_at.items()},
            "high_at": {k: float(v) for k, v in a.extremes.high_at.items()},
            "method": a.extremes.method, "monotonic": a.extremes.monotonic,
        },
        "rss": a.rss,
        "monte_carlo": {
            "distribution": mc.distribution,
            "convention": tolerance.DISTRIBUTION_TEXT[mc.distribution],
            "samples": mc.samples, "seed": mc.seed, "mean": mc.mean, "std": mc.std,
            "quantile_0.1%": mc.quantile_low, "quantile_99.9%": mc.quantile_high,
            "minimum": mc.minimum, "maximum": mc.maximum,
        },
        "contributions": [
            {"symbol": c.variable.label, "nominal": float(c.variable.nominal),
             "low": float(c.variable.low), "high": float(c.variable.high),
             "derivative": float(c.derivative), "down": float(c.down), "up": float(c.up),
             "absolute": float(c.variable.nominal * c.derivative)}
            for c in a.contributions
        ],
    }


# ---------------------------------------------------------------- loading


@dataclass(frozen=True)
class LoadingCase:
    """A port, its Thevenin equivalent and what loads it (read from loading/minimum_load)."""

    label: str
    port: str
    thevenin_voltage: Result
    thevenin_impedance: Result
    load: sympy.Expr | None
    frequency: float | None
    bound: Fraction | None
    nominals: dict[sympy.Symbol, Fraction]

    @property
    def source_impedance_value(self) -> complex:
        z = self.thevenin_impedance.expression
        if self.frequency is not None:
            return loading.phasor(z, self.nominals, self.frequency)
        value = exact_value(z, self.nominals)
        return complex("nan") if value is None else complex(float(value))

    @property
    def load_value(self) -> float | None:
        if self.load is None or loading.is_reactive(self.load):
            return None
        return _float(exact_value(self.load, self.nominals))




def _without(read: Reader, element_name: str, port: str, node: syntax.Node) -> Circuit:
    """The circuit with the load element taken out, so the Thevenin equivalent excludes it."""
    circuit = read.circuit
    element = circuit.elements[element_name]
    p = circuit.ports[port]
    if element.law is None or set(element.nodes) != {p.positive, p.negative}:
        raise read.error(node, f"{element_name} is not a two-terminal part across port {port}; "
                               "write the load's impedance as an expression instead")
    for other in circuit.elements.values():
        if any(c.element == element_name for c in other.controls) or \
                (other.coupled and element_name in other.coupled):
            raise read.error(node, f"{element_name} is used by {other.name}, so it cannot be "
                                   "taken out as the load")
    elements = {k: v for k, v in circuit.elements.items() if k != element_name}
    return dataclasses.replace(circuit, elements=elements, derives=(), claims=())


def _thevenin(circuit: Circuit, port: str, node: syntax.Node, options: DeriveOptions):
    read = Reader(circuit, options)
    name = syntax.Name(node.line, node.column, port)
    return tuple(
        read.single(syntax.Quantity(node.line, node.column, "thevenin", (name,), attribute,
                                    f"thevenin({port}).{attribute}"))
        for attribute in ("voltage", "impedance"))


def loading_case(
    circuit: Circuit, quantity: syntax.Quantity, options: DeriveOptions
) -> LoadingCase:
    """Read `loading(port, Zload[, f])` or `minimum_load(port, error[, f])`."""
    read = Reader(circuit, options)
    usage = ("a port, a load and optionally a frequency: loading(out, Rm), "
             "loading(out, 10 kΩ, 1 kHz)" if quantity.name == "loading" else
             "a port, an error bound and optionally a frequency: minimum_load(out, 0.1 %), "
             "minimum_load(out, 0.1 %, 1 kHz)")
    args = read.arguments(quantity, 2, 3, usage, parts=True)
    port = read.port(args[0])
    frequency = None
    if len(args) == 3:
        frequency = float(read.number(args[2], "a frequency", ("Hz", None)))
        if frequency <= 0:
            raise read.error(args[2], "the frequency must be positive")
    source, load, bound = circuit, None, None
    if quantity.name == "loading":
        arg = args[1]
        if isinstance(arg, syntax.Name) and arg.name in circuit.elements:
            source = _without(read, arg.name, port, arg)
            element = circuit.elements[arg.name]
            load = element.impedance
        else:
            load = read.expression(arg)
    else:
        bound = abs(read.number(args[1], "the loading error", ("%", None)))
        if not 0 < bound < 1:
            raise read.error(args[1], "the loading error bound lies between 0 and 100 %")
    voltage, impedance = _thevenin(source, port, args[0], options)
    return LoadingCase(base_text(quantity), port, voltage, impedance, load, frequency, bound,
                       circuit.symbol_nominals())


def loading_quantity(circuit: Circuit, quantity: syntax.Quantity,
                     options: DeriveOptions) -> list[Result]:
    """`.voltage`, `.error`, `.power` and `.maximum_power` of a loaded port."""
    case = loading_case(circuit, quantity, options)
    u, z = case.thevenin_voltage.expression, case.thevenin_impedance.expression
    read = Reader(circuit, options)
    try:
        analysis = loading.loading(u, z, case.load, case.nominals, case.frequency)
    except loading.NoAnswer as problem:
        raise read.error(quantity.args[1], f"{case.label} at port {case.port}: {problem}") \
            from None
    if analysis.no_maximum is not None and quantity.attribute == "maximum_power":
        raise read.error(quantity, f"{case.label}.maximum_power: {analysis.no_maximum}")
    nominals = _names(case.nominals)
    label, port = case.label, case.port

    def value(expression):
        return exact_value(expression, case.nominals)

    voltage_notes = (
        f"Thevenin equivalent at {port}: U_th = {_text(u)}, Z_th = {_text(z)}; "
        f"load Z_L = {_text(case.load)}.",
        "Loaded port voltage U_th·Z_L/(Z_th + Z_L).",
        *loading.cautions(_float(value(u)), None, f"port {port} (open circuit)"))
    error_notes = ["Relative loading error (U_loaded − U_open)/U_open = −Z_th/(Z_th + Z_L)."]
    e = value(analysis.error)
    if e is not None:
        error_notes.append(f"At the nominal values the loaded port reads {percent(abs(e))} "
                           + ("low." if e < 0 else "high." if e > 0 else "true."))
    own: dict = {}  # the loading details of voltage and error of their own
    extra: list[Result] = []
    if case.frequency is not None:
        sentence, extra = _at_frequency(analysis.at_frequency, case)
        error_notes.append(sentence)
        # the numbers their notes show, for the JSON too
        own = {"at_frequency": extra[0].details["loading"]["at_frequency"]}
    else:
        if analysis.power is not None:
            extra.append(Result(f"{label}.power", analysis.power, "W", nominals, (
                "Power delivered to the load, U_th²·R_L/(R_th + R_L)² (= U_loaded²/R_L).",
                *loading.cautions(None, _float(value(analysis.power)), "the load")),
                part="power"))
        if analysis.maximum_power is not None:
            extra.append(_maximum_power(analysis.maximum_power, z, case, value))
        elif analysis.no_maximum is not None:
            error_notes.append(analysis.no_maximum[0].upper() + analysis.no_maximum[1:] + ".")
        if loading.is_reactive(u, z, case.load):
            error_notes.append("Source or load is reactive: for numbers, power and the "
                               f"conjugate match give a frequency, e.g. {_with_frequency(label)}.")
    results = [Result(f"{label}.voltage", analysis.voltage, "V", nominals, voltage_notes,
                      part="voltage", details={"loading": own}),
               Result(f"{label}.error", analysis.error, "", nominals, tuple(error_notes),
                      part="error", details={"loading": own}), *extra]
    common = {"port": port, "source_voltage": _text(u), "source_impedance": _text(z),
              "load": _text(case.load), "frequency": case.frequency}
    results = [r.with_details(loading={**r.details.get("loading", {}), **common})
               for r in results]
    return read.select(quantity, results)


def _maximum_power(maximum: sympy.Expr, z: sympy.Expr, case: LoadingCase, value) -> Result:
    matched = value(z)
    result = Result(f"{case.label}.maximum_power", maximum, "W", _names(case.nominals), (
        "Maximum power transfer: a resistive load equal to the source resistance, "
        f"R_L = R_th = {_text(z)}" + (f" = {eng(matched, 'Ω')}" if matched is not None else "")
        + ", takes U_th²/(4·R_th).",
        *loading.cautions(None, _float(value(maximum)), "a matched load")),
        part="maximum_power", details={"loading": {"matched_load": _text(z),
                                                   "matched_load_nominal": _float(matched)}})
    return result


def _with_frequency(label: str) -> str:
    return label[:-1] + ", 1 kHz)"


def _at_frequency(at: loading.AtFrequency,
                  case: LoadingCase) -> tuple[str, list[Result]]:
    """The error's note at the frequency, and power and maximum power there (numbers)."""
    import cmath
    import math

    f = eng(at.frequency, "Hz")
    sentence = (f"At {f}: |error| = {percent(abs(at.error))}, phase "
                f"{degrees(math.degrees(cmath.phase(at.error)))}; |U_loaded| = "
                f"{eng(abs(at.voltage), 'V')}.")
    power_notes = [f"Average power in the load at {f}, the source value taken as RMS: "
                   "|U_th/(Z_th + Z_L)|²·Re Z_L.", *loading.cautions(None, at.power, "the load")]
    match = at.matched_load
    sign = "+" if match.imag >= 0 else "−"
    match_text = f"{eng(match.real, 'Ω')} {sign} j·{eng(abs(match.imag), 'Ω')}"
    if at.maximum_power is None:
        power_notes.append(f"No conjugate match exists at {f}: Re Z_th is not positive.")
    out = [Result(f"{case.label}.power", sympy.Float(at.power, 15), "W", {},
                  tuple(power_notes), part="power")]
    if at.maximum_power is not None:
        out.append(Result(f"{case.label}.maximum_power", sympy.Float(at.maximum_power, 15),
                          "W", {}, (f"Maximum power transfer at {f}: the conjugate-matched load "
                                    f"Z_L = Z_th* = {match_text} takes |U_th|²/(4·Re Z_th).",
                                    *loading.cautions(None, at.maximum_power, "a matched load")),
                          part="maximum_power"))
    numbers = {"at_frequency": {
        "frequency": at.frequency,
        "voltage": [at.voltage.real, at.voltage.imag],
        "error": [at.error.real, at.error.imag],
        "power": at.power,
        "matched_load": [match.real, match.imag],
        "maximum_power": at.maximum_power,
    }}
    return sentence, [r.with_details(loading=numbers) for r in out]


def minimum_load_quantity(circuit: Circuit, quantity: syntax.Quantity,
                          options: DeriveOptions) -> list[Result]:
    """`.resistance` (smallest load resistance) and, at a frequency, `.capacitance` (largest)."""
    case = loading_case(circuit, quantity, options)
    z = case.thevenin_impedance.expression
    if loading.is_reactive(z) and case.frequency is None:
        raise Reader(circuit, options).error(
            quantity, f"the source impedance at {case.port} depends on s; give a frequency: "
                      f"{_with_frequency(case.label)}")
    try:
        bound = loading.minimum_load(z, case.bound, case.nominals, case.frequency)
    except loading.NoAnswer as problem:
        raise Reader(circuit, options).error(
            quantity, f"{case.label} at port {case.port}: {problem}") from None
    nominals = _names(case.nominals)
    within = f"keeps the loading error within {percent(case.bound)}"
    at_f = "" if case.frequency is None else f" at {eng(case.frequency, 'Hz')}"
    numbers_only = " (numbers only: the source is reactive)" if loading.is_reactive(z) else ""

    def closed(expression, value):
        return expression if expression is not None else sympy.Float(value, 15)

    resistance = Result(
        f"{case.label}.resistance", closed(bound.resistance, bound.resistance_value), "Ω",
        nominals, (f"The smallest resistive load that {within}{at_f}{numbers_only}"
                   + ("" if numbers_only else ": R_L ≥ R_th·(1 − e)/e") + "."
                   + (f" At the nominal values: {eng(bound.resistance_value, 'Ω')}."
                      if bound.resistance_value is not None else ""),), part="resistance")
    results = [resistance]
    if bound.capacitance_value is not None:
        results.append(Result(
            f"{case.label}.capacitance", closed(bound.capacitance, bound.capacitance_value), "F",
            nominals, (f"The largest load capacitance that {within}{at_f}{numbers_only}"
                       + ("" if numbers_only else ": C_L ≤ e/(2π·f·R_th·√(1 − e²))") + ". "
                       f"At the nominal values: {eng(bound.capacitance_value, 'F')}.",),
            part="capacitance"))
    bounds = {
        "port": case.port, "bound": float(case.bound), "frequency": case.frequency,
        "source_impedance": _text(z), "resistance": bound.resistance_value,
        "capacitance": bound.capacitance_value,
    }
    results = [r.with_details(minimum_load=bounds) for r in results]
    return Reader(circuit, options).select(quantity, results)


# ---------------------------------------------------------------- component values


def solve_quantity(circuit: Circuit, quantity: syntax.Quantity,
                   options: DeriveOptions) -> list[Result]:
    """One Result per solution: the closed form for x, with the series values in notes/details."""
    read = Reader(circuit, options)
    args = read.arguments(quantity, 2, 2, "an equation and a symbol: solve(Q = target, x)")
    if not isinstance(args[0], syntax.Equation):
        raise read.error(args[0], "expected an equation here: solve(gain(Uin, out) = -10, Rf)")
    inner = read.single(args[0].left)
    target = read.expression(args[0].right)
    x = read.symbol(args[1])
    if x not in inner.expression.free_symbols:
        raise read.error(args[1], f"{inner.quantity} does not depend on {x}")
    nominals = circuit.symbol_nominals()
    try:
        solved = components.solve_for(inner.expression, target, x, nominals)
    except components.SolveError as problem:
        raise read.error(quantity, str(problem)) from None
    unit = _unit_of(circuit, x)
    others = _names({k: v for k, v in nominals.items() if k != x})
    missing = sorted(str(s) for s in inner.expression.free_symbols | target.free_symbols
                     if s != x and s not in nominals)
    results = []
    for k, solution in enumerate(solved.solutions, start=1):
        answered = quantity if len(solved.solutions) == 1 else dataclasses.replace(
            quantity, attribute=f"solution{k}", text=f"{quantity.text}.solution{k}")
        expression = solution.expression if solution.expression is not None else \
            sympy.Float(float(solution.value), 15)
        said = []
        if k == 1:
            said.append(_solve_heading(solved, inner.quantity, unit, missing))
        if solution.expression is None:
            said.append(f"{x} is a root of {_text(solved.polynomial.as_expr())} = 0 "
                        f"(degree {solved.polynomial.degree()}): no closed form is given.")
        if solution.value is None and not missing:
            said.append("Not real and positive at the nominal values.")
        said += [_series_sentence(c, unit, inner.unit) for c in solution.choices]
        details = {
            "symbol": str(x), "quantity": inner.quantity, "target": _text(target),
            "solution": k, "of": len(solved.solutions), "value": _float(solution.value),
            "series": {c.series: {"below": float(c.below), "above": float(c.above),
                                  "q_below": _float(c.q_below), "q_above": _float(c.q_above),
                                  "best": float(c.best)} for c in solution.choices},
        }
        results.append(Result(answered.text, expression, unit, others, tuple(said),
                              details={"solve": details}, parsed=answered))
    return results


def _series_sentence(c: components.SeriesChoice, unit: str, q_unit: str) -> str:
    def q(value: Fraction | None) -> str:
        return "no value" if value is None else eng(value, q_unit, digits=5)

    if c.below == c.above:
        return f"{c.series}: {eng(c.below, unit)} is in the series and gives {q(c.q_below)}."
    return (f"{c.series}: {eng(c.below, unit)} gives {q(c.q_below)}, {eng(c.above, unit)} "
            f"gives {q(c.q_above)}; nearer the target: {eng(c.best, unit)}.")


def _solve_heading(solved: components.ComponentSolution, q: str, unit: str,
                   missing: list[str]) -> str:
    head = f"{solved.symbol} from {q} = {_text(solved.target)}"
    positive = solved.positive
    if missing == ["s"]:
        return head + (": no value, as s has none; solve at a frequency, e.g. "
                       f"solve(at({q}, 1 kHz).magnitude = ..., {solved.symbol}), or for a "
                       f"design parameter, e.g. solve({q}.f0 = 1 kHz, {solved.symbol}).")
    if missing:
        return head + f": no value, as {', '.join(missing)} has none."
    if not positive:
        return head + ": no real positive solution at the nominal values."
    if len(positive) == 1:
        return head + f": {eng(positive[0].value, unit)} at the nominal values of the others."
    values = ", ".join(eng(s.value, unit) for s in positive)
    return head + f": {len(positive)} real positive solutions ({values}); each is listed."
