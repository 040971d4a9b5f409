"""Attaching forms and steps to results, and approximate results under `>>` assumptions.

A derivation is attached only when its final value is proved equal to the canonical
result; otherwise the next route is tried (structure first, then the nodal equations),
and when none proves out the result keeps no form and no steps.
"""

from __future__ import annotations

import dataclasses
from fractions import Fraction
from typing import Any

import sympy

from ..language import syntax
from ..model.circuit import Assumption, Circuit
from ..model.units import eng
from ..quantities.registry import DeriveOptions
from ..results import Result, Step
from . import approximate as approx
from .derivation import Target, nodal_route, structural_route, target_of
from .dividers import Unsupported
from .form import Form
from .nodal import Singular
from .parallel import expand_parallel
from .printing import code, latex, name_text, text
from .standard import StandardForm, nominal, standard_form
from .steps import Recorder
from .verify import equal

TRANSFER_KINDS = ("voltage", "gain", "norton", "current", "twoport")
"""Targets whose natural design form is a standard transfer-function form."""

MAX_TERMS = 20_000
"""Results with more terms (numerator and denominator together) get no design form and no
steps: a form of that size helps no reader, and finding and proving it would take longer
than the derivation itself (a 10-section ladder, 17 711 terms, takes about a second)."""

MAX_APPROXIMATED_TERMS = 300
"""Results with more terms keep their exact value under `where big >> small`: the neglected
term and the relative error of such a result run to thousands of terms (a 6-section
ladder, 377 terms, takes seconds), which no reader can use."""


def annotate(
    circuit: Circuit, quantity: syntax.Quantity, results: list[Result], options: DeriveOptions
) -> list[Result]:
    """The results, each with its `form` and `steps` where forms can derive and prove them."""
    if not options.steps:
        return results
    return [_annotated(circuit, quantity, result, options) for result in results]


def _annotated(
    circuit: Circuit, quantity: syntax.Quantity, result: Result, options: DeriveOptions
) -> Result:
    attribute = quantity.attribute or result.part
    target = target_of(circuit, quantity, attribute)
    if target is not None:
        terms = size(result)
    if target is None:
        return result
    if terms > MAX_TERMS:
        return result.with_new_notes(
            f"no design form or derivation steps: the result has {terms} terms, more "
            f"than the {MAX_TERMS} up to which they are worked out"
        )
    key = (
        "forms",
        result.quantity,
        options.substitute,
        tuple(a for a in options.assumptions if a.kind == "limit"),
    )
    store = options.memo.of(circuit)
    if key not in store:
        store[key] = _annotation(circuit, target, result, options)
    found = store[key]
    if found is None:
        return result
    steps, form, details, warnings = found
    merged = dict(result.details)
    for name, value in details.items():
        merged.setdefault(name, value)
    return result.with_new_notes(*warnings).replace(steps=steps, form=form, details=merged)


def size(result: Result) -> int:
    """Terms of the result's numerator and denominator together."""
    if result.exact is not None and hasattr(result.exact, "ring"):
        return sum(result.exact.size())
    num, den = sympy.fraction(result.expression)
    return len(sympy.Add.make_args(num)) + len(sympy.Add.make_args(den))


def _annotation(circuit: Circuit, target: Target, result: Result, options: DeriveOptions):
    canonical = _canonical(result)
    nominals = _nominals(circuit)
    limits = [a for a in options.assumptions if a.kind == "limit"]
    for route in (structural_route, nodal_route):
        rec = Recorder(_taken(circuit))
        try:
            symbol = route(circuit, target, rec)
        except (Unsupported, Singular):
            continue
        value = rec.substitute(symbol)
        structural = route is structural_route
        if options.substitute:
            value = _substitute(circuit, rec, symbol, value)
        details: dict[str, Any] = {}
        expansions: list[approx.Expansion] = []
        try:
            for assumption in limits:
                variable = _symbol(circuit, assumption.symbol)
                if variable in expand_parallel(value).free_symbols:
                    value, symbol = _limit_step(
                        rec, symbol, value, variable, assumption, nominals, details, expansions
                    )
        except approx.NoExpansion:
            continue
        if not equal(value, canonical):
            continue
        warnings: list[str] = []
        if expansions and not options.substitute:
            opened = _opened(circuit, target, result, limits, expansions, nominals, warnings)
            if opened is not None:
                return (*opened, details, tuple(warnings))
            warnings.clear()
        form = _form(
            value,
            result,
            target,
            structural and not expansions,
            nominals,
            rec,
            symbol,
            warnings,
        )
        return rec.steps, form, details, tuple(warnings)
    return None


def _opened(
    circuit: Circuit,
    target: Target,
    result: Result,
    limits: list[Assumption],
    expansions: list[approx.Expansion],
    nominals: dict[str, Fraction],
    warnings: list[str],
):
    """A part whose limit is an open circuit (`RL -> oo`): take it out and derive the rest
    by its structure, which gives the form an engineer writes; None when that fails.
    Warnings for the reader go into `warnings`."""
    names = []
    for assumption in limits:
        element = circuit.elements.get(assumption.symbol)
        law = element.law if element is not None else None
        if law is None or law.opens_at != (assumption.target or "oo"):
            return None
        names.append(element.name)
    reduced = dataclasses.replace(
        circuit, elements={k: e for k, e in circuit.elements.items() if k not in names}
    )
    rec = Recorder(_taken(circuit))
    parts = ", ".join(names)
    neglected = " + ".join(text(e.neglected) for e in expansions)
    rec.add(
        "open",
        f"In the limit {', '.join(f'{a.symbol} → {_arrow(a)}' for a in limits)}, "
        f"{parts} {'is an open circuit' if len(names) == 1 else 'are open circuits'}"
        f" and drop{'s' if len(names) == 1 else ''} out; the first neglected term "
        f"is {neglected}.",
        equation=(
            "; ".join(f"I({n}) = 0" for n in names),
            r",\quad ".join(f"I_{{{n}}} = 0" for n in names),
        ),
        opened=names,
    )
    try:
        symbol = structural_route(reduced, target, rec)
    except Unsupported:
        return None
    value = rec.substitute(symbol)
    if not equal(value, _canonical(result)):
        return None
    form = _form(value, result, target, True, nominals, rec, symbol, warnings)
    for assumption, expansion in zip(limits, expansions, strict=False):
        _error_step(rec, expansion, f"{assumption.symbol} → {_arrow(assumption)}")
    return rec.steps, form


def _canonical(result: Result) -> Any:
    """The engine's exact value when there is one (proofs use it as it is), else sympy's."""
    exact = result.exact
    return exact if exact is not None and hasattr(exact, "ring") else result.expression


def _arrow(assumption: Assumption) -> str:
    return "0" if assumption.target == "0" else "∞"


def _form(
    value: sympy.Expr,
    result: Result,
    target: Target,
    structural: bool,
    nominals: dict[str, Fraction],
    rec: Recorder,
    symbol: sympy.Expr,
    warnings: list[str],
) -> Form:
    """The design form of `value`; an instability it shows goes into `warnings`."""
    standard = standard_form(_canonical(result), result.unit) if "s" in result.symbols else None
    parameters = _parameters(standard, nominals) if standard else {}
    if standard is not None:
        _standard_step(rec, symbol, standard, parameters)
        warning = _instability(parameters)
        if warning:
            warnings.append(warning)
    if standard is not None and (target.kind in TRANSFER_KINDS or not structural):
        return Form(standard.expression, standard.text, standard.latex, parameters, standard.kind)
    candidates = [(value, "structure")] if structural else []
    return shortest_form(candidates, result, parameters)


TEXT_PER_TERM = 3
"""Fewest characters a term of a sum takes in plain text (`R1` and a sign): a canonical
result of n terms is printed only when a form is longer than this many characters per term,
since it could not be shorter otherwise."""


def shortest_form(
    candidates: list[tuple[sympy.Expr, str]], result: Result, parameters: dict[str, dict]
) -> Form:
    """The shortest in plain text of the proved `candidates` (expression, kind), the grouped
    canonical result (factored, proved here) and the canonical result itself; earlier
    candidates win ties. A reader takes in a short formula first, and every one of them is
    exactly the result."""
    shown = [(expr, kind, text(expr)) for expr, kind in candidates]
    bound = TEXT_PER_TERM * size(result)
    if not shown or min(len(t) for _, _, t in shown) > bound:
        canonical = result.expression
        grouped = approx.grouped(canonical)
        if grouped != canonical and equal(grouped, _canonical(result)):
            shown.append((grouped, "grouped", text(grouped)))
        shown.append((canonical, "canonical", text(canonical)))
    expr, kind, plain = min(shown, key=lambda item: len(item[2]))
    return Form(expr, plain, latex(expr), parameters, kind)


def _instability(parameters: dict[str, dict]) -> str | None:
    """The words for a design form whose Q (or real pole) puts a pole in the right half-plane
    at the nominal values, else None."""
    for name, described in parameters.items():
        value = described.get("nominal")
        if value is None:
            continue
        if name.startswith("Q") and value < 0:
            return (f"Unstable: {name} = {eng(value)} < 0 at the nominal values, so the pole "
                    "pair lies in the right half-plane and the response grows without bound.")
        if name.startswith("p") and value > 0:
            return (f"Unstable: the pole {name} = {eng(value, 'rad/s')} lies in the right "
                    "half-plane at the nominal values.")
    return None


def _parameters(standard: StandardForm, nominals: dict[str, Fraction]) -> dict[str, dict]:
    return {parameter_name(p.name): p.describe(nominals) for p in standard.parameters}


def parameter_name(name: str) -> str:
    """`omega_0` → `ω0`, `f_0` → `f0`, `Q_p2` → `Qp2`."""
    return name_text(name).replace("_", "")


def _standard_step(
    rec: Recorder, symbol: sympy.Expr, standard: StandardForm, parameters: dict[str, dict]
) -> None:
    shown = [p for p in standard.parameters if p.name == "K" or p.name.startswith(("omega", "Q"))]
    rec.add(
        "standard-form",
        f"Written in the standard {standard.kind} form, with its parameters in closed form.",
        equation=(
            "; ".join(
                [f"{text(symbol)} = {standard.text}"]
                + [f"{parameter_name(p.name)} = {text(p.expression)}" for p in shown]
            ),
            r",\quad ".join(
                [f"{latex(symbol)} = {standard.latex}"]
                + [f"{latex(sympy.Symbol(p.name))} = {latex(p.expression)}" for p in shown]
            ),
        ),
        form=standard.expression,
        parameters={p.name: p.expression for p in standard.parameters},
    )


def _limit_step(
    rec: Recorder,
    symbol: sympy.Expr,
    value: sympy.Expr,
    variable: sympy.Symbol,
    assumption: Assumption,
    nominals: dict[str, Fraction],
    details: dict[str, Any],
    expansions: list[approx.Expansion],
) -> tuple[sympy.Expr, sympy.Symbol]:
    infinite = assumption.target in ("oo", None)
    exact = value
    expansion = approx.limit(exact, variable, infinite)
    expansions.append(expansion)
    arrow, arrow_latex = ("∞", r"\infty") if infinite else ("0", "0")
    result = rec.fresh([f"{symbol}_lim" if isinstance(symbol, sympy.Symbol) else "H_lim"], "H")
    loop = approx.loop_gain_term(exact, expansion.leading, variable) if infinite else None
    if loop is not None:
        shape = (
            f"{text(symbol)} = {_lead(expansion.leading)}·1/(1 + ({text(loop)})/{text(variable)})"
        )
        shape_latex = (
            rf"{latex(symbol)} = \frac{{{latex(expansion.leading)}}}"
            rf"{{1 + \frac{{{latex(loop)}}}{{{latex(variable)}}}}}"
        )
    else:
        shape, shape_latex = f"{text(symbol)} = {text(exact)}", f"{latex(symbol)} = {latex(exact)}"
    rec.add(
        "limit",
        f"Let {variable} → {arrow}: the result tends to its leading term; the first "
        f"neglected term is {text(expansion.neglected)}.",
        result,
        expansion.leading,
        equation=(
            f"{shape};  {text(result)} = lim {text(variable)}→{arrow} = {text(expansion.leading)}",
            rf"{shape_latex},\quad {latex(result)} = \lim_{{{latex(variable)} \to "
            rf"{arrow_latex}}} {latex(symbol)} = {latex(expansion.leading)}",
        ),
        operand=symbol,
        variable=variable,
        infinite=infinite,
        neglected=expansion.neglected,
        relative_error=expansion.relative_error,
        loop_gain_term=loop,
    )
    _error_step(rec, expansion, f"{variable} → {arrow}")
    details["neglected"] = describe(expansion.neglected, nominals)
    details["relative_error"] = describe(expansion.relative_error, nominals)
    return expansion.leading, result


def _lead(expr: sympy.Expr) -> str:
    shown = text(expr)
    if expr.could_extract_minus_sign() and "/" in shown:
        return "−(" + text(-expr) + ")"
    return "(" + shown + ")" if "/" in shown or "+" in shown else shown


def _error_step(rec: Recorder, expansion: approx.Expansion, assumption: str) -> None:
    rec.add(
        "error",
        f"The relative error of the approximation {assumption}, "
        "(approximation − exact)/exact, in closed form.",
        equation=(
            f"δ = {text(expansion.relative_error)}",
            rf"\delta = {latex(expansion.relative_error)}",
        ),
        exact=expansion.exact,
        leading=expansion.leading,
        relative_error=expansion.relative_error,
    )


def describe(expr: sympy.Expr, nominals: dict[str, Fraction]) -> dict[str, Any]:
    return {
        "expression": code(expr),
        "text": text(expr),
        "latex": latex(expr),
        "nominal": nominal(expr, nominals),
    }


def _substitute(
    circuit: Circuit, rec: Recorder, symbol: sympy.Expr, value: sympy.Expr
) -> sympy.Expr:
    definitions = {k: v for k, v in circuit.definitions().items() if k in value.free_symbols}
    if not definitions:
        return value
    rec.add(
        "substitute",
        "Substitute the parts' defining expressions.",
        equation=(
            "; ".join(f"{text(k)} = {text(v)}" for k, v in definitions.items()),
            r",\quad ".join(f"{latex(k)} = {latex(v)}" for k, v in definitions.items()),
        ),
        definitions=definitions,
    )
    return value.xreplace(definitions)


def _nominals(circuit: Circuit) -> dict[str, Fraction]:
    return {s.name: v for s, v in circuit.symbol_nominals().items()}


def _taken(circuit: Circuit) -> set[str]:
    return (
        set(circuit.elements)
        | set(circuit.parameters)
        | set(circuit.nodes)
        | set(circuit.ports)
        | {"s"}
    )


def _symbol(circuit: Circuit, name: str) -> sympy.Symbol:
    if name in circuit.parameters:
        return circuit.parameters[name].symbol
    if name in circuit.elements:
        return circuit.elements[name].symbol
    return sympy.Symbol(name)


# ------------------------------------------------------------------ approximations


def approximate(circuit: Circuit, result: Result, assumption: Assumption) -> Result:
    """The result under `big >> small`: its leading term in small/big, with the neglected
    first-order term and the exact relative error in `details`, and the steps."""
    big, small = _symbol(circuit, assumption.symbol), _symbol(circuit, assumption.target)
    terms = size(result)
    if terms > MAX_APPROXIMATED_TERMS:
        return result.with_notes(
            f"{big} >> {small} is not applied: the result has {terms} terms, more than the "
            f"{MAX_APPROXIMATED_TERMS} up to which approximations are worked out; exact "
            "result kept"
        )
    exact = result.expression
    try:
        expansion = approx.much_greater(exact, big, small)
    except approx.NoExpansion as err:
        return result.with_notes(
            f"{big} >> {small} gives no expansion here ({err}); exact result kept")
    if not result.steps:  # the exact result's own derivation comes first
        result = _annotate_alone(circuit, result)
    nominals = _nominals(circuit)
    rec = Recorder(_taken(circuit) | {step.defines for step in result.steps if step.defines})
    symbol = rec.fresh([f"{_result_name(result)}_approx"], "X")
    rec.add(
        "approximate",
        f"{big} ≫ {small}: expand in the small ratio ε = {small}/{big} and keep the "
        f"leading term; the first neglected term is {text(expansion.neglected)}.",
        symbol,
        expansion.leading,
        equation=(
            f"{text(symbol)} = {text(expansion.leading)}   "
            f"(neglected: {text(expansion.neglected)})",
            rf"{latex(symbol)} = {latex(expansion.leading)} \quad "
            rf"\left(\text{{neglected: }} {latex(expansion.neglected)}\right)",
        ),
        exact=exact,
        big=big,
        small=small,
        neglected=expansion.neglected,
        order=expansion.order,
    )
    _error_step(rec, expansion, f"{big} ≫ {small}")
    leading = _Value(expansion.leading)
    form = None
    if equal(expansion.leading, leading.to_sympy()):
        standard = standard_form(expansion.leading, result.unit)
        parameters = _parameters(standard, nominals) if standard else {}
        form = Form(
            expansion.leading,
            text(expansion.leading),
            latex(expansion.leading),
            parameters,
            "approximation",
        )
    return Result(
        result.quantity, leading, result.unit, nominals, result.notes,
        part=result.part, base=result.base, condition=result.condition, parsed=result.parsed,
        form=form, steps=(*result.steps, *rec.steps),
        details={
            "neglected": describe(expansion.neglected, nominals),
            "relative_error": describe(expansion.relative_error, nominals),
            "assumption": f"{big} >> {small}",
        },
    )


class _Value:
    """An approximation as the Result's exact value: evaluated by exact substitution and
    printed by the forms printers (sympy's generic paths are slow for these)."""

    def __init__(self, expression: sympy.Expr) -> None:
        self.expression = expression

    def to_sympy(self) -> sympy.Expr:
        return self.expression

    def to_text(self) -> str:
        return code(self.expression)

    def to_latex(self) -> str:
        return latex(self.expression)

    def symbol_names(self) -> tuple[str, ...]:
        return tuple(sorted(s.name for s in self.expression.free_symbols))

    def evaluate(self, values: dict[str, Fraction]) -> Fraction:
        exact = {
            s: sympy.Rational(values[s.name].numerator, values[s.name].denominator)
            for s in self.expression.free_symbols
        }
        value = sympy.Rational(self.expression.xreplace(exact))
        return Fraction(int(value.p), int(value.q))


def _annotate_alone(circuit: Circuit, result: Result) -> Result:
    """Annotate a result known only by its quantity text (`V(out) where ...`)."""
    from ..errors import SymcircError
    from ..language.parser import parse_quantity

    try:
        quantity = parse_quantity(result.base)
    except SymcircError:
        return result
    (annotated,) = annotate(circuit, quantity, [result], DeriveOptions())
    return annotated


def _result_name(result: Result) -> str:
    for step in reversed(result.steps):
        if step.data.get("defines"):
            return step.data["defines"][0]
    return "X"


def steps_text(result: Result) -> str:
    """The result's steps, numbered, each a sentence and its equation."""
    from .steps import steps_text as render

    return render(result.steps)


__all__ = ["annotate", "approximate", "steps_text", "Step"]
