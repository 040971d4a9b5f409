"""What every quantity handler shares: reading arguments against the circuit, the solved
systems, and turning an exact function into a `Result` (limits, substitution, nominals).

Handlers first produce `Raw` results (exact functions in the circuit's own symbols) so that
`sensitivity(..)` can work on any of them; `finish` then applies the `where` limits and
`--substitute` and attaches units and nominal values.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable, Iterable, Iterator, Mapping
from contextlib import contextmanager
from dataclasses import dataclass
from difflib import get_close_matches
from fractions import Fraction
from functools import partial
from typing import TYPE_CHECKING, Any

from ..algebra.convert import (
    atom_name,
    atom_value,
    atoms_of,
    exact_value,
    names_of,
    substitute_root,
    to_function,
)
from ..algebra.formulas import function_of, is_rational
from ..algebra.polynomials import LAPLACE_NAME, AlgebraError, PolynomialRing
from ..algebra.rational import InfiniteLimit, RationalFunction
from ..engine.mna import Current, Measure, Voltage
from ..engine.network import Network, build_network
from ..engine.system import solution
from ..errors import Location, SymcircError
from ..language import syntax
from ..limits import MAX_EXPANSION_TERMS, power_terms
from ..model.circuit import REFERENCE, Circuit, Element
from ..model.formula import Formula, fold
from ..results import Result
from .registry import RESPONSE_PARTS, RESPONSE_QUANTITIES, DeriveOptions

if TYPE_CHECKING:  # pragma: no cover
    import sympy


@dataclass(frozen=True)
class Raw:
    """One scalar quantity as derived, before limits and substitution."""

    quantity: str
    function: RationalFunction
    unit: str
    notes: tuple[str, ...] = ()
    part: str | None = None
    """The part of a quantity with several (`voltage`, `z21`)."""


def per(numerator: str, denominator: str) -> str:
    """The unit of a ratio: `V/Ω`, '' for V/V, `1/Ω` for a pure number over ohms."""
    if numerator == denominator:
        return ""
    if not denominator:
        return numerator
    return f"{numerator or '1'}/{denominator}"


RATIO_UNITS = {("V", "V"): "", ("A", "A"): "", ("V", "A"): "Ω", ("A", "V"): "S"}
"""Unit of (measured)/(source): voltage and current gains, transimpedance, transadmittance."""


class Context:
    """One derivation: the circuit, the options, and where the quantity text came from."""

    def __init__(self, circuit: Circuit, options: DeriveOptions) -> None:

        self.circuit = circuit
        self.options = options
        origin = getattr(options, "origin", None)
        self.file, self.source = origin if origin else (circuit.file, circuit.source)
        self.memo = options.memo.of(circuit)
        self.network: Network = build_network(circuit, options.memo)
        self.atoms: dict[str, sympy.Expr] = dict(self.network.atoms)

    # -- errors
    def error(self, node: syntax.Node | None, message: str,
              notes: tuple[str, ...] = ()) -> SymcircError:
        if node is None:
            return SymcircError(message, self.file, notes=notes)
        where = Location(self.file, node.line, node.column)
        return SymcircError.at(where, message, self.source, notes)

    @contextmanager
    def at(self, node: syntax.Node) -> Iterator[None]:
        """Engine errors raised inside are reported at `node` (the quantity asked for)."""
        try:
            yield
        except AlgebraError as problem:
            raise self.error(node, problem.message, problem.notes) from None

    # -- arguments
    def arguments(self, quantity: syntax.Quantity, least: int, most: int,
                  usage: str) -> tuple:
        if not least <= len(quantity.args) <= most:
            raise self.error(quantity, f"{quantity.name}(..) takes {usage}")
        return quantity.args

    def no_attribute(self, quantity: syntax.Quantity) -> None:
        if quantity.attribute is None:
            return
        hint = ""
        if quantity.name in RESPONSE_QUANTITIES:  # the design parameters of a response in s
            close = get_close_matches(quantity.attribute, RESPONSE_PARTS, n=1)
            hint = (f"; as a response in s it has {', '.join('.' + p for p in RESPONSE_PARTS)}"
                    + (f"; did you mean `.{close[0]}`?" if close else ""))
        raise self.error(quantity, f"{quantity.name}(..) has no part "
                                   f"`.{quantity.attribute}`{hint}")

    def name(self, arg, what: str) -> str:
        if isinstance(arg, syntax.Name):
            return arg.name
        if isinstance(arg, syntax.Number) and arg.text.isdigit() and what == "node":
            return arg.text
        raise self.error(arg, f"expected {_article(what)} {what} name here")

    def port(self, arg) -> tuple[str, str, str]:
        """A port argument: (name, positive node, negative node)."""
        name = self.name(arg, "port")
        port = self.circuit.ports.get(name)
        if port is None:
            if self.circuit.resolve_node(name) is not None:
                raise self.error(arg, f"`{name}` is a node, not a port; declare one, e.g. "
                                      f"`port P ({name}, {REFERENCE})`")
            raise self.error(arg, self._unknown(name, "port", self.circuit.ports))
        return name, port.positive, port.negative

    def node(self, arg) -> str:
        name = self.name(arg, "node")
        node = self.circuit.resolve_node(name)
        if node is None:
            raise self.error(arg, self._unknown(name, "node", self.circuit.nodes))
        return node

    def element(self, arg) -> Element:
        name = self.name(arg, "element")
        element = self.circuit.elements.get(name)
        if element is None:
            raise self.error(arg, self._unknown(name, "element", self.circuit.elements))
        return element

    def symbol(self, arg) -> str:
        """A parameter or element name (a symbol results may depend on)."""
        name = self.name(arg, "symbol")
        if name not in self.circuit.parameters and name not in self.circuit.elements:
            pool = [*self.circuit.parameters, *self.circuit.elements]
            raise self.error(arg, self._unknown(name, "parameter or element", pool))
        return name

    def _unknown(self, name: str, what: str, pool: Iterable[str]) -> str:
        close = get_close_matches(name, list(pool), n=1)
        hint = f"; did you mean `{close[0]}`?" if close else ""
        return f"`{name}` is not {_article(what)} {what} of this circuit{hint}"

    def measure(self, arg) -> tuple[Measure, str, str, tuple[str, ...]]:
        """V(..), I(..) or a port: (measure, text, unit 'V' or 'A', notes)."""
        if isinstance(arg, syntax.Name) and arg.name in self.circuit.ports:
            _, a, b = self.port(arg)
            return Voltage(a, b), f"V({arg.name})", "V", ()
        if isinstance(arg, syntax.Voltage | syntax.Current):
            arg = _as_quantity(arg)
        if isinstance(arg, syntax.Quantity) and arg.name == "V" and arg.attribute is None:
            return self.voltage_measure(arg) + ((),)
        if isinstance(arg, syntax.Quantity) and arg.name == "I" and arg.attribute is None:
            return self.current_measure(arg)
        if isinstance(arg, syntax.Name) and self.circuit.resolve_node(arg.name) is not None:
            raise self.error(arg, f"`{arg.name}` is a node; write V({arg.name}) for its voltage")
        raise self.error(arg, "expected V(..), I(..) or a port here")

    def voltage_measure(self, quantity: syntax.Quantity) -> tuple[Voltage, str, str]:
        args = self.arguments(quantity, 1, 2, "a port, a node or two nodes: V(out), V(a, b)")
        if len(args) == 1 and isinstance(args[0], syntax.Name) \
                and args[0].name in self.circuit.ports:
            _, a, b = self.port(args[0])
            return Voltage(a, b), quantity.text, "V"
        nodes = [self.node(a) for a in args]
        return Voltage(nodes[0], nodes[1] if len(nodes) == 2 else REFERENCE), quantity.text, "V"

    def current_measure(self, quantity: syntax.Quantity
                        ) -> tuple[Current, str, str, tuple[str, ...]]:
        (arg,) = self.arguments(quantity, 1, 1, "one element name: I(R1)")
        element = self.element(arg)
        notes: tuple[str, ...] = ()
        if element.kind == "coupling":
            first, second = element.coupled
            raise self.error(arg, f"coupling {element.name} carries no current of its own; "
                                  f"ask for I({first}) or I({second})")
        if element.kind == "opamp":
            notes = (f"I({element.name}) is the current the output of {element.name} delivers "
                     f"into node {element.nodes[2]}.",)
        elif element.kind == "transformer":
            notes = (f"I({element.name}) is the primary current, flowing into node "
                     f"{element.nodes[0]} and through the winding to {element.nodes[1]}; the "
                     f"secondary carries -{element.name} times it.",)
        elif element.kind == "current source":
            notes = (f"By the sign rule I({element.name}) flows from {element.nodes[0]} through "
                     f"the source to {element.nodes[1]}: minus the current it drives into "
                     f"{element.nodes[0]}.",)
        return Current(element.name), quantity.text, "A", notes

    # -- solving
    def transfer(self, measure: Measure, excitation: str, shorted: Iterable[str] = ()
                 ) -> RationalFunction:
        return solution(self.circuit, shorted, memo=self.options.memo).transfer(measure, excitation)

    def response(self, measure: Measure, shorted: Iterable[str] = ()) -> RationalFunction:
        """The measure with every independent source at its value."""
        shorted = tuple(shorted)
        if not self.network.excitations():  # nothing to solve for, but it must be solvable
            solution(self.circuit, shorted, memo=self.options.memo).check()
        total = RationalFunction(0, 1, self.network.ring, canonical=True)
        for name, value in self.network.excitations().items():
            part = self.transfer(measure, name, shorted)
            if not part.is_zero():
                total = total + part * value
        return total

    def zero(self) -> RationalFunction:
        return RationalFunction(0, 1, self.network.ring, canonical=True)

    # -- definitions, limits, substitution
    @property
    def definitions(self) -> dict[str, sympy.Expr]:
        """Every defined symbol, expanded down to symbols that have no definition."""
        cached = self.memo.get("definitions")
        if cached is None:
            cached = self.memo["definitions"] = expanded_definitions(self.circuit)
        return cached

    def through_definitions(self, function: RationalFunction, name: str
                            ) -> tuple[RationalFunction, tuple[str, ...]]:
        """`function` with the definitions that mention `name` substituted (chain rule)."""
        used = function.symbol_names()
        if name in used:
            return function, ()
        plain = self.plain_definitions
        if all(plain.get(k, True) is not None for k in used):
            via = tuple(k for k, d in plain.items()
                        if k in used and d is not None and name in d.names)
        else:
            via = tuple(k for k, d in self.definitions.items()
                        if k in used and name in names_of(d))
        for k in via:
            function = self.substitute_definition(function, k)
        return function, via

    def substitute_definition(self, function: RationalFunction, name: str
                              ) -> RationalFunction:
        """`function` with the defined symbol `name` replaced by its expanded definition:
        built in the algebra when it is plain, else through sympy."""
        plain = self.plain_definitions.get(name)
        if plain is None:
            return self.substitute(function, name, self.definitions[name])
        return self._substituted(function, name, plain.terms,
                                 partial(plain.function, function.ring))

    @property
    def plain_definitions(self) -> dict[str, PlainDefinition | None]:
        """Every defined symbol (in the order of `definitions`) as a `PlainDefinition`, or
        None for one whose expansion needs sympy."""
        cached = self.memo.get("plain definitions")
        if cached is None:
            cached = self.memo["plain definitions"] = plain_definitions(self.circuit)
        return cached

    def substitute(self, function: RationalFunction, name: str, expr: sympy.Expr
                   ) -> RationalFunction:
        self.atoms.update(atoms_of(expr))
        return self._substituted(function, name, _expanded_terms(expr),
                                 lambda: to_function(expr, function.ring))

    def _substituted(self, function: RationalFunction, name: str, bound: int,
                     value_of: Callable[[], RationalFunction]) -> RationalFunction:
        """`function` with `name` = the value `value_of` builds, refused before anything
        is multiplied out when `bound` (the definition's terms) or the result's bound
        passes MAX_EXPANSION_TERMS."""
        if bound <= MAX_EXPANSION_TERMS:
            value = value_of()
            bound = _substituted_terms(function, name, value)
        if bound > MAX_EXPANSION_TERMS:
            raise self.error(None, f"substituting the definition of {name} would expand the "
                             f"result to up to {bound:,} terms (the limit is "
                             f"{MAX_EXPANSION_TERMS:,}); stopped before memory runs out",
                             ("derive it without --substitute: the definitions are listed "
                              "beside the result",))
        return function.substitute(name, value)

    def substitute_all(self, function: RationalFunction) -> RationalFunction:
        """Every definition replaced (`--substitute`)."""
        for name in function.symbol_names():
            if name in self.plain_definitions:
                function = self.substitute_definition(function, name)
        return function

    def resolved(self, function: RationalFunction) -> RationalFunction:
        """In the language's terms: each mutual inductance as k·√(L1·L2) (the engine holds
        it as a symbol of its own), and a transformer's or coupling's name replaced by the
        ratio or factor it is defined by (`transformer T1 (..) = N` gives results in N)."""
        used = function.symbol_names()
        couplings = [c for c in self.network.couplings.values() if c.mutual in used]
        if couplings:
            import sympy

            roots = []
            for coupling in couplings:
                root = sympy.sqrt(sympy.Symbol(coupling.first) * sympy.Symbol(coupling.second))
                roots.append(atom_name(root))
                self.atoms[roots[-1]] = root
            # the engine's ring already holds these names (engine.network), so this is the
            # same ring unless a substitution made a new one; then one move for all
            ring = function.ring.extend([*roots, *(n for c in couplings
                                                   for n in (c.name, c.first, c.second))])
            function = function.in_ring(ring)
            for coupling, name in zip(couplings, roots, strict=True):
                factor = RationalFunction.symbol(coupling.name, ring)
                radicand = RationalFunction(ring.gen(coupling.first) * ring.gen(coupling.second),
                                            1, ring)
                function = substitute_root(function, coupling.mutual, factor, radicand, name)
        for element in self.circuit.elements.values():
            if element.kind in ("transformer", "coupling") \
                    and element.definition_formula is not None \
                    and element.name in function.symbol_names():
                function = self.substitute_definition(function, element.name)
        return function

    def mutual_chain(self, function: RationalFunction, derivative: RationalFunction,
                     name: str) -> RationalFunction:
        """`derivative` (∂/∂name with the mutual inductances held fixed) plus the part
        through each M = k·√(L1·L2): ∂M/∂L1 = M/(2·L1), ∂M/∂k = M/k."""
        for c in self.network.couplings.values():
            if c.mutual not in function.symbol_names() or name not in (c.name, c.first,
                                                                        c.second):
                continue
            ring = derivative.ring
            m = RationalFunction.symbol(c.mutual, ring)
            x = RationalFunction.symbol(name, ring)
            two = RationalFunction(2, 1, ring) if name != c.name else RationalFunction(1, 1, ring)
            derivative = derivative + function.derivative(c.mutual) * m / (two * x)
        return derivative

    @property
    def nominals(self) -> dict[str, Fraction]:
        """Nominal value of every symbol that has one (mutual inductances to 40 digits)."""
        cached = self.memo.get("nominals")
        if cached is None:
            cached = self.circuit.name_nominals()
            for c in self.network.couplings.values():
                if all(n in cached for n in (c.name, c.first, c.second)):
                    import sympy

                    m = sympy.Symbol(c.name) * sympy.sqrt(sympy.Symbol(c.first)
                                                          * sympy.Symbol(c.second))
                    cached[c.mutual] = atom_value(m, cached)
            self.memo["nominals"] = cached
        return cached

    def finish(self, raws: Iterable[Raw], asked: syntax.Quantity | None = None
               ) -> list[Result]:
        """Apply the `where` limits and `--substitute`; attach unit and nominal values, and
        the quantity `asked` for (each result of a part carries it with that part)."""
        limits = [a for a in self.options.assumptions if a.kind == "limit"]
        clause = ", ".join(f"{a.symbol} -> {a.target}" for a in limits)
        out = []
        for raw in raws:
            function, notes = raw.function, list(raw.notes)
            for assumption in limits:
                function, note = self.limit(function, assumption, raw.quantity)
                if note:
                    notes.append(note)
            function = self.resolved(function)
            if self.options.substitute:
                function = self.substitute_all(function)
            text = f"{raw.quantity} where {clause}" if clause else raw.quantity
            out.append(Result(text, exact_value(function, self.atoms), raw.unit, self.nominals,
                              tuple(notes), part=raw.part, base=raw.quantity, condition=clause,
                              parsed=_with_part(asked, raw.part)))
        return out

    def limit(self, function: RationalFunction, assumption, quantity: str
              ) -> tuple[RationalFunction, str | None]:
        name, target = assumption.symbol, assumption.target
        function, _ = self.through_definitions(function, name)
        if name not in function.symbol_names():
            return function, f"{quantity} does not depend on {name}: the limit {name} -> " \
                             f"{target} changes nothing."
        try:
            return function.limit(name, target), None
        except InfiniteLimit:
            location = assumption.location
            message = (f"{quantity} grows without bound as {name} -> {target}: the limit does "
                       "not exist")
            if location is None:
                raise SymcircError(message, self.circuit.file) from None
            raise SymcircError.at(location, message, self.circuit.source) from None


def expanded_definitions(circuit: Circuit) -> dict[str, sympy.Expr]:
    """Every element and parameter defined by an expression, expanded down to symbols
    without a definition (`Rt` → `R0*(T*alpha + 1)`)."""
    import sympy

    raw: dict[str, sympy.Expr] = {str(k): v for k, v in circuit.definitions().items()}
    for p in circuit.parameters.values():
        if p.value is not None and p.value.free_symbols:
            raw[p.name] = p.value
    symbols = {sympy.Symbol(k): v for k, v in raw.items()}
    expanded: dict[str, sympy.Expr] = {}
    for name, expr in raw.items():
        for _ in range(len(raw) + 1):
            used = expr.free_symbols & set(symbols)
            if not used:
                break
            expr = expr.xreplace({x: symbols[x] for x in used})
        expanded[name] = expr
    return expanded


@dataclass(frozen=True)
class PlainDefinition:
    """A definition expanded down to undefined symbols in which every name occurs once and
    nothing is irrational, so nothing can cancel: its names are the formulas' names and its
    value is built in the algebra straight from the model's formulas, without sympy (the
    same canonical rational function as `to_function` of `expanded_definitions`)."""

    formula: Formula
    nested: tuple[tuple[str, PlainDefinition], ...]
    """The defined names the formula uses, each with its own expansion."""
    names: frozenset[str]
    """The names of the expansion (`s` among them when it uses s)."""
    bounds: tuple[int, int]
    """Bounds on the terms of its numerator and denominator once multiplied out (as
    `_expanded_terms` bounds the sympy expression)."""

    @property
    def terms(self) -> int:
        return sum(self.bounds)

    def function(self, ring: PolynomialRing) -> RationalFunction:
        """The expansion as a rational function over `ring` extended by the names it
        lacks, as `to_function` extends it."""
        missing = self.names - set(ring.names)
        if missing:
            ring = ring.extend(sorted(missing))
        value = function_of(self.formula, ring)
        for name, definition in self.nested:
            value = value.substitute(name, definition.function(ring))
        return value.in_ring(ring)


def plain_definitions(circuit: Circuit) -> dict[str, PlainDefinition | None]:
    """Every element and parameter defined by an expression, in the order of
    `expanded_definitions`, as a `PlainDefinition`; None for one whose expansion is not
    plain (π, a root, a name used twice, a definition through itself), which sympy expands."""
    formulas: dict[str, Formula] = {
        e.name: e.definition_formula for e in circuit.elements.values()
        if e.definition_formula is not None and e.kind != "opamp"}
    for p in circuit.parameters.values():
        value = p.value_formula
        if value is not None and (value.names or value.laplace if value.plain
                                  else value.free_names() or value.has_laplace()):
            formulas[p.name] = value
    done: dict[str, PlainDefinition | None] = {}

    def expand(name: str, open_: frozenset[str]) -> PlainDefinition | None:
        if name in done:
            return done[name]
        formula = formulas[name]
        found = None
        if formula.plain and is_rational(formula) and name not in open_:
            nested = tuple((n, expand(n, open_ | {name}))
                           for n in sorted(formula.names & formulas.keys()))
            parts = [formula.names - formulas.keys(), *(d.names - {LAPLACE_NAME}
                                                      for _, d in nested if d is not None)]
            laplace = formula.laplace + sum(LAPLACE_NAME in d.names
                                            for _, d in nested if d is not None)
            if all(d is not None for _, d in nested) and laplace <= 1 \
                    and sum(map(len, parts)) == len(frozenset().union(*parts)):
                names = frozenset().union(*parts) | ({LAPLACE_NAME} if laplace else set())
                bounds = {n: d.bounds for n, d in nested}  # type: ignore[union-attr]
                found = PlainDefinition(formula, nested, names,  # type: ignore[arg-type]
                                        _formula_bounds(formula, bounds))
        done[name] = found
        return found

    return {name: expand(name, frozenset()) for name in formulas}


def _formula_bounds(formula: Formula, names: Mapping[str, tuple[int, int]]
                    ) -> tuple[int, int]:
    """`_expanded_terms` of a rational formula, each name in `names` standing for an
    expression with those bounds (numerator, denominator)."""
    return fold(formula, lambda node, done: _node_bounds(node, done, names))


def _node_bounds(node: Formula, done: Mapping[int, tuple[int, int]],
                 names: Mapping[str, tuple[int, int]]) -> tuple[int, int]:
    if node.number is not None or node.op == "s":
        return 1, 1
    if node.op == "name":
        return names.get(node.args[0], (1, 1))
    if node.op in ("neg", "scale"):
        return done[id(node.args[-1])]
    (n1, d1), (n2, d2) = (done[id(a)] for a in node.args)
    if node.op in ("+", "-"):
        return n1 * d2 + n2 * d1, d1 * d2
    if node.op == "*":
        return n1 * n2, d1 * d2
    if node.op == "/":
        return n1 * d2, d1 * n2
    k = int(node.args[1].number)  # "^" by an integer: a rational formula has no other
    if k < 0:
        n1, d1, k = d1, n1, -k
    return power_terms(n1, k), power_terms(d1, k)


def _with_part(quantity: syntax.Quantity | None, part: str | None) -> syntax.Quantity | None:
    """`thevenin(out)` asked for, `.voltage` derived: the quantity `thevenin(out).voltage`."""
    if quantity is None or part is None or quantity.attribute is not None:
        return quantity
    return dataclasses.replace(quantity, attribute=part, text=f"{quantity.text}.{part}")


def _as_quantity(node: syntax.Voltage | syntax.Current) -> syntax.Quantity:
    if isinstance(node, syntax.Voltage):
        text = "V(" + ", ".join(n.name for n in node.nodes) + ")"
        return syntax.Quantity(node.line, node.column, "V", node.nodes, None, text)
    return syntax.Quantity(node.line, node.column, "I", (node.element,), None,
                           f"I({node.element.name})")


def _article(word: str) -> str:
    return "an" if word[:1] in "aeiou" else "a"


def unit_of_symbol(circuit: Circuit, name: str) -> str:
    """The unit of an element's or parameter's symbol ('' when none is known)."""
    element = circuit.elements.get(name)
    if element is not None:
        return element.unit
    parameter = circuit.parameters.get(name)
    if parameter is not None:
        return parameter.unit
    return circuit.noise_units().get(name, "")


def handler(raw: Callable[..., Iterable[Raw]], **fixed: Any
            ) -> Callable[[Circuit, syntax.Quantity, DeriveOptions], list[Result]]:
    """The registry's handler for a `raw_*` derivation: a Context around it, then `finish`."""
    def derive(circuit: Circuit, quantity: syntax.Quantity,
               options: DeriveOptions) -> list[Result]:
        context = Context(circuit, options)
        return context.finish(raw(context, quantity, **fixed), quantity)

    derive.__doc__ = raw.__doc__
    return derive


def _substituted_terms(function: RationalFunction, name: str, value: RationalFunction) -> int:
    """A bound on the terms of `function` with `name` = p/q, known before substituting:
    each term c*name^k of a polynomial of degree n becomes c*p^k*q^(n-k), which has at most
    the binomial count of n factors drawn from the terms of p and q."""
    ring = value.ring
    drawn = ring.nterms(value.numerator) + ring.nterms(value.denominator)
    total = 0
    for poly in (function.numerator, function.denominator):
        degree = function.ring.degree(poly, name) if name in function.ring.names else 0
        total += function.ring.nterms(poly) * power_terms(drawn, max(degree, 0))
    return total


def _expanded_terms(expr: sympy.Expr) -> int:
    """A bound on the terms of numerator plus denominator of `expr` once multiplied out,
    from its tree alone (a sum over a common denominator, products of the parts, powers by
    the binomial count); radicals and `pi` count as single variables."""


    def bound(e: sympy.Expr) -> tuple[int, int]:
        if e.is_Add:
            parts = [bound(a) for a in e.args]
            denominator = 1
            for _, d in parts:
                denominator *= d
            return sum(n * denominator // d for n, d in parts), denominator
        if e.is_Mul:
            numerator = denominator = 1
            for n, d in map(bound, e.args):
                numerator, denominator = numerator * n, denominator * d
            return numerator, denominator
        if e.is_Pow and e.exp.is_Integer:
            n, d = bound(e.base)
            k = int(e.exp)
            if k < 0:
                n, d, k = d, n, -k
            return power_terms(n, k), power_terms(d, k)
        return 1, 1

    return sum(bound(expr))
