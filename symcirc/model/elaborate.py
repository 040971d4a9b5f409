"""Syntax tree → flat, validated `Circuit`.

Blocks are expanded (names given by `with` are kept, other names get the instance's name
appended: `Ra` in instance `right` is `Ra_right`; a block's internal node `mid` becomes
`mid_right`), parameters and values are resolved, units and tolerances checked, the
reference node chosen when the file never names one, and the topology checked.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from difflib import get_close_matches
from fractions import Fraction
from typing import TYPE_CHECKING

from ..errors import Location, SymcircError
from ..language import syntax
from ..limits import MAX_INSTANCE_DEPTH, MAX_STATEMENTS
from ..vocabulary import (
    ELEMENT_KINDS,
    QUANTITIES,
    STATEMENT_KEYWORDS,
)
from . import formula, topology, typeset, units
from .circuit import (
    NOISE_NAMES,
    REFERENCE,
    Assumption,
    Circuit,
    Claim,
    Control,
    Derive,
    Element,
    Noise,
    NoiseDensity,
    Notice,
    OpampNoise,
    Parameter,
    Port,
    Tolerance,
)
from .expressions import (
    MAX_POWER_BITS,
    ExpressionProblem,
    formula_in,
    linear_form,
    mentions_control,
    to_formula,
    unknown_name_message,
)
from .formula import Formula, Inexact

if TYPE_CHECKING:  # pragma: no cover
    import sympy

RESERVED = ("s", "pi", "sqrt", "oo")
"""Names with a fixed meaning in expressions; nothing may be declared with them."""

def elaborate(document: syntax.Document) -> Circuit:
    """The flat, validated circuit of a parsed file; raises SymcircError on any problem."""
    return _Elaborator(document).run()


# ---------------------------------------------------------------- scopes


@dataclass
class _Scope:
    """The names and nodes visible in one block instance (or at the top level)."""

    parent: _Scope | None
    instance: str | None
    """Final name of the instance; None at the top level."""
    terminals: dict[str, str] = field(default_factory=dict)
    """Block terminal → the outer node it is connected to."""
    renames: dict[str, str] = field(default_factory=dict)
    """`with` renames: local name → final name."""
    names: dict[str, str] = field(default_factory=dict)
    """Declared local name → final name."""
    declared: dict[str, Location] = field(default_factory=dict)
    blocks: dict[str, tuple[syntax.Block, _Scope]] = field(default_factory=dict)
    trail: tuple[str, ...] = ()
    """Notes saying which instances (outermost last) this scope belongs to."""
    expanding: tuple[str, ...] = ()
    """Blocks being expanded around this scope (to report recursion)."""

    def final(self, local: str) -> str:
        if local in self.renames:
            return self.renames[local]
        return local if self.instance is None else f"{local}_{self.instance}"

    def lookup(self, local: str) -> str | None:
        scope: _Scope | None = self
        while scope is not None:
            if local in scope.names:
                return scope.names[local]
            scope = scope.parent
        return None

    def block(self, name: str) -> tuple[syntax.Block, _Scope] | None:
        scope: _Scope | None = self
        while scope is not None:
            if name in scope.blocks:
                return scope.blocks[name]
            scope = scope.parent
        return None

    def visible(self) -> set[str]:
        out: set[str] = set()
        scope: _Scope | None = self
        while scope is not None:
            out.update(scope.names)
            scope = scope.parent
        return out

    def visible_blocks(self) -> set[str]:
        out: set[str] = set()
        scope: _Scope | None = self
        while scope is not None:
            out.update(scope.blocks)
            scope = scope.parent
        return out


@dataclass
class _Draft:
    """A statement with its final name, final nodes and the scope it was written in."""

    statement: syntax.Param | syntax.ElementStatement | syntax.PortStatement
    name: str
    nodes: tuple[str, ...]
    scope: _Scope


# ---------------------------------------------------------------- the elaborator


class _Elaborator:
    def __init__(self, document: syntax.Document) -> None:
        self.file = document.file
        self.source = document.source
        self.document = document
        self.top = _Scope(parent=None, instance=None)
        self.title: str | None = None
        self.title_seen: syntax.Title | None = None
        self.typeset_statements: list[syntax.Typeset] = []
        self.what: dict[str, str] = {}
        """Final name → what it is: parameter, element, port, instance, block."""
        self.where: dict[str, Location] = {}
        self.params: list[_Draft] = []
        self.elements: list[_Draft] = []
        self.ports: list[_Draft] = []
        self.directives: list[syntax.DeriveStatement | syntax.ClaimStatement] = []
        self.node_order: dict[str, None] = {}
        self.node_owner: dict[str, tuple[str | None, Location]] = {}
        self.aliases: dict[str, str] = {}
        self.notices: list[Notice] = []
        self.used_nodes: set[str] = set()
        self.quantity_nodes: set[str | None] = set()
        """Nodes named by `derive` and `claim` quantities (never reported as dangling)."""
        self.dimensions: dict[str, units.Inferred] = {}
        self.draft_of: dict[str, _Draft] = {}
        self.noise_statements: list[syntax.Temperature | syntax.Noiseless
                                    | syntax.OpampNoise] = []

    # -------------------------------------------------------------- helpers

    def at(self, node: syntax.Node) -> Location:
        return Location(self.file, node.line, node.column)

    def error(self, node: syntax.Node, message: str, notes: tuple[str, ...] = ()) -> SymcircError:
        return SymcircError.at(self.at(node), message, self.source, notes)

    def located(self, problem: ExpressionProblem, scope: _Scope) -> SymcircError:
        error = problem.located(self.file, self.source)
        error.notes = (*error.notes, *scope.trail)
        return error

    def first_at(self, final: str) -> str:
        where = self.where[final]
        return f"`{final}` was first declared at line {where.line}"

    # -------------------------------------------------------------- pass 1: names and nodes

    def run(self) -> Circuit:
        self.check_expansion()
        self.walk(self.document.statements, self.top)
        self.draft_of = {d.name: d for d in (*self.params, *self.elements)}
        node_set = set(self.node_order)
        if any(REFERENCE in d.nodes for d in self.ports):
            node_set.add(REFERENCE)  # the reference node exists whether or not a part touches it
        self.check_ports(node_set)
        self.choose_reference(node_set)
        parameters = {d.name: self.parameter(d) for d in self.params}
        elements = {d.name: self.element(d, node_set) for d in self.elements}
        parameters, elements = self.resolve_nominals(parameters, elements)
        self.check_couplings(elements)
        noise = self.noise(parameters, elements)
        nodes = [REFERENCE, *(self.node(n) for n in self.node_order if self.node(n) != REFERENCE)]
        circuit = Circuit(
            file=self.file,
            source=self.source,
            title=self.title,
            parameters=parameters,
            elements=elements,
            ports={
                d.name: Port(d.name, self.node(d.nodes[0]), self.node(d.nodes[1]),
                             self.at(d.statement))
                for d in self.ports
            },
            nodes=tuple(nodes) if node_set else (),
            reference_chosen=bool(self.aliases),
            aliases=dict(self.aliases),
            typeset=self.typeset_forms(),
            noise=noise,
        )
        circuit.derives, circuit.claims = self.directives_of(circuit)
        origins = {d.name: d.scope.trail for d in self.elements if d.scope.trail}
        used = {self.node(n) for n in self.used_nodes} | self.quantity_nodes
        for port in circuit.ports.values():
            used.update((port.positive, port.negative))
        warnings = topology.check(circuit, origins, used)
        if not elements:
            warnings.append(Notice("warning", "the file describes no elements: there is no "
                                   "circuit to analyse", None))
        circuit.notices = (*self.notices, *sorted(warnings, key=_line_of))
        return circuit

    def walk(self, statements: tuple[syntax.Statement, ...], scope: _Scope) -> None:
        for statement in statements:
            if isinstance(statement, syntax.Block):
                self.define_block(statement, scope)
        self.check_recursion(scope)
        for statement in statements:
            if isinstance(statement, syntax.Param):
                name = self.declare(statement.name, "parameter", scope)
                self.params.append(_Draft(statement, name, (), scope))
            elif isinstance(statement, syntax.ElementStatement):
                self.element_statement(statement, scope)
            elif isinstance(statement, syntax.PortStatement):
                name = self.declare(statement.name, "port", scope)
                nodes = tuple(self.node_name(t, scope) for t in statement.terminals)
                self.ports.append(_Draft(statement, name, nodes, scope))
            elif isinstance(statement, syntax.Instance):
                self.expand(statement, scope)
            elif isinstance(statement, syntax.Title | syntax.DeriveStatement
                            | syntax.ClaimStatement | syntax.Typeset | syntax.Temperature
                            | syntax.Noiseless | syntax.OpampNoise):
                self.top_level_statement(statement, scope)

    def top_level_statement(self, statement, scope: _Scope) -> None:
        keyword = {syntax.Title: "title", syntax.DeriveStatement: "derive",
                   syntax.ClaimStatement: "claim", syntax.Typeset: "typeset",
                   syntax.Temperature: "temperature", syntax.Noiseless: "noiseless",
                   syntax.OpampNoise: "noise"}[type(statement)]
        if scope is not self.top:
            raise self.error(statement, f"`{keyword}` belongs at the top level, not inside a block")
        if isinstance(statement, syntax.Temperature | syntax.Noiseless | syntax.OpampNoise):
            self.noise_statements.append(statement)
        elif isinstance(statement, syntax.Title):
            if self.title_seen is not None:
                raise self.error(
                    statement, "the title is given twice",
                    (f"the first title is at line {self.title_seen.line}",),
                )
            self.title, self.title_seen = statement.text, statement
        elif isinstance(statement, syntax.Typeset):
            self.typeset_statements.append(statement)
        else:
            self.directives.append(statement)

    def typeset_forms(self) -> dict[str, str]:
        """The names' typeset forms given by `typeset` statements, checked for safety."""
        forms: dict[str, str] = {}
        seen: dict[str, syntax.Typeset] = {}
        for statement in self.typeset_statements:
            name = statement.name.name
            if self.what.get(name) not in ("parameter", "element"):
                raise self.error(statement.name, f"`typeset` names `{name}`, which is no "
                                 "parameter or element of the circuit")
            if name in seen:
                raise self.error(statement.name, f"the typeset form of `{name}` is given twice",
                                 (f"the first is at line {seen[name].line}",))
            problem = typeset.check_form(statement.form)
            if problem is not None:
                raise SymcircError.at(Location(self.file, statement.line, statement.form_column),
                                      problem, self.source)
            forms[name], seen[name] = statement.form, statement
        return forms

    def declare(self, name: syntax.Name, what: str, scope: _Scope) -> str:
        """Enter a name in its scope and in the flat namespace; returns its final name."""
        local = name.name
        if local in RESERVED:
            meaning = {"s": "the Laplace variable", "pi": "the number π",
                       "sqrt": "the square root", "oo": "infinity in `where` limits"}[local]
            raise self.error(name, f"`{local}` is reserved ({meaning}); choose another name")
        if local in NOISE_NAMES:
            meaning = "Boltzmann's constant" if local == "k_B" else "the noise temperature"
            raise self.error(name, f"`{local}` is reserved ({meaning} in noise results); "
                                   "choose another name")
        if local in scope.declared:
            first = scope.declared[local]
            raise self.error(
                name, f"duplicate name `{local}`: names of elements, parameters, ports and "
                "blocks must differ", (f"`{local}` was first declared at line {first.line}",
                                       *scope.trail),
            )
        final = scope.final(local)
        renamed = local in scope.renames
        if final in self.what and not renamed:
            raise self.error(
                name, f"duplicate name `{final}`" + (
                    f" (`{local}` in instance `{scope.instance}`)" if final != local else ""
                ) + ": names of elements, parameters, ports and blocks must differ",
                (self.first_at(final), *scope.trail),
            )
        if not renamed:
            self.where[final] = self.at(name)
        self.what[final] = what
        scope.declared[local] = self.at(name)
        scope.names[local] = final
        if scope is not self.top:
            self.top.names.setdefault(final, final)
        return final

    def node_name(self, name: syntax.Name, scope: _Scope) -> str:
        """The final name of a node written in `scope` (before the reference is chosen)."""
        text = name.name
        if text.isascii() and text.isdigit():
            text = text.lstrip("0") or REFERENCE  # `007` is node 7; `0` and `00` are gnd
        if text == REFERENCE:
            return REFERENCE
        if text in scope.terminals:
            return scope.terminals[text]
        final = text if scope.instance is None else f"{text}_{scope.instance}"
        owner = self.node_owner.get(final)
        if owner is None:
            self.node_owner[final] = (scope.instance, self.at(name))
        elif owner[0] != scope.instance:
            raise self.error(
                name, f"node `{final}` clashes with a node of the same name at line "
                f"{owner[1].line}: a block's internal node `{text}` in instance "
                f"`{scope.instance or owner[0]}` is named `{final}`; rename one of them",
                scope.trail,
            )
        return final

    def element_statement(self, statement: syntax.ElementStatement, scope: _Scope) -> None:
        name = self.declare(statement.name, "element", scope)
        if ELEMENT_KINDS[statement.kind].couples:  # its terminals name elements, not nodes
            nodes: tuple[str, ...] = ()
        else:
            nodes = tuple(self.node_name(t, scope) for t in statement.terminals)
            for node in nodes:
                self.node_order.setdefault(node, None)
        self.elements.append(_Draft(statement, name, nodes, scope))

    # -------------------------------------------------------------- blocks

    def check_expansion(self) -> None:
        """Refuse, before expanding anything, a circuit whose instances nest deeper than
        MAX_INSTANCE_DEPTH or would expand to more than MAX_STATEMENTS statements."""
        statements = self.document.statements
        sizes = _expansion_sizes(statements)
        instances = [(s, *sizes.get(id(s), (0, 0))) for s in statements
                     if isinstance(s, syntax.Instance)]
        for instance, _, depth in instances:
            if depth > MAX_INSTANCE_DEPTH:
                raise self.error(instance, f"instance `{instance.name.name}` of block "
                                 f"{instance.block.name} nests block instances {depth:,} levels "
                                 f"deep; the limit is {MAX_INSTANCE_DEPTH} levels")
        total = 0
        for statement in statements:
            if isinstance(statement, syntax.Instance):
                count = sizes.get(id(statement), (0, 0))[0]
                if count > MAX_STATEMENTS:
                    raise self.error(statement, f"instance `{statement.name.name}` of block "
                                     f"{statement.block.name} expands to {count:,} elements, "
                                     f"parameters and ports; a circuit may hold at most "
                                     f"{MAX_STATEMENTS:,}")
                total += count
            elif isinstance(statement, _DECLARATIONS):
                total += 1
            if total > MAX_STATEMENTS:
                raise self.error(statement, f"with its blocks expanded the circuit passes "
                                 f"{MAX_STATEMENTS:,} elements, parameters and ports here, the "
                                 "most it may hold")

    def define_block(self, block: syntax.Block, scope: _Scope) -> None:
        name = block.name.name
        self.declare(block.name, "block", scope)
        seen: dict[str, syntax.Name] = {}
        for terminal in block.terminals:
            if terminal.name in (REFERENCE, "0"):
                raise self.error(terminal, "the reference node cannot be a block terminal; "
                                 "use gnd inside the block directly")
            if terminal.name in seen:
                raise self.error(terminal, f"block {name} lists terminal `{terminal.name}` "
                                 "twice")
            seen[terminal.name] = terminal
        scope.blocks[name] = (block, scope)

    def check_recursion(self, scope: _Scope) -> None:
        """Blocks defined here must not instantiate themselves, directly or through others."""
        calls = {
            name: [s for s in block.body if isinstance(s, syntax.Instance)
                   and s.block.name in scope.blocks]
            for name, (block, _) in scope.blocks.items()
        }
        done: set[str] = set()
        for start in calls:
            path: list[str] = []
            stack = [(start, iter(calls[start]))]
            on_path = {start}
            path.append(start)
            while stack:
                name, pending = stack[-1]
                for instance in pending:
                    target = instance.block.name
                    if target in on_path:
                        cycle = " → ".join([*path[path.index(target):], target])
                        raise self.error(instance, f"block {target} is recursive: {cycle}")
                    if target not in done:
                        stack.append((target, iter(calls[target])))
                        on_path.add(target)
                        path.append(target)
                        break
                else:
                    stack.pop()
                    on_path.discard(name)
                    path.pop()
                    done.add(name)

    def expand(self, instance: syntax.Instance, scope: _Scope) -> None:
        found = scope.block(instance.block.name)
        if found is None:
            candidates = [*STATEMENT_KEYWORDS, *scope.visible_blocks()]
            close = get_close_matches(instance.block.name, candidates, n=1, cutoff=0.6)
            hint = f"; did you mean `{close[0]}`?" if close else ""
            raise self.error(
                instance.block,
                f"unknown statement or block `{instance.block.name}`{hint}", scope.trail,
            )
        block, defined_in = found
        if block.name.name in scope.expanding:
            cycle = " → ".join([*scope.expanding, block.name.name])
            raise self.error(instance, f"block {block.name.name} is recursive: {cycle}")
        if len(instance.terminals) != len(block.terminals):
            wanted = ", ".join(t.name for t in block.terminals)
            raise self.error(
                instance,
                f"block {block.name.name} has {len(block.terminals)} terminal"
                f"{'s' if len(block.terminals) != 1 else ''} ({wanted}), but instance "
                f"{instance.name.name} connects {len(instance.terminals)}",
                (f"block {block.name.name} is defined at line {block.line}", *scope.trail),
            )
        final = self.declare(instance.name, "instance", scope)
        terminals = {
            inner.name: self.node_name(outer, scope)
            for inner, outer in zip(block.terminals, instance.terminals, strict=True)
        }
        inner = _Scope(
            parent=defined_in,
            instance=final,
            terminals=terminals,
            trail=(f"in instance `{final}` of block {block.name.name} at line {instance.line}",
                   *scope.trail),
            expanding=(*scope.expanding, block.name.name),
        )
        body_names = _renamable(
            block, lambda name: (found[0] if (found := defined_in.block(name)) else None))
        for rename in instance.renames:
            if rename.inner.name not in body_names:
                close = get_close_matches(rename.inner.name, list(body_names), n=1)
                hint = f"; did you mean `{close[0]}`?" if close else ""
                raise self.error(
                    rename.inner, f"block {block.name.name} has no element or parameter "
                    f"`{rename.inner.name}` to rename{hint}", scope.trail,
                )
            if rename.inner.name in inner.renames:
                raise self.error(rename.inner, f"`{rename.inner.name}` is renamed twice")
            inner.renames[rename.inner.name] = self.declare(
                rename.outer, body_names[rename.inner.name], scope)
        self.walk(block.body, inner)

    # -------------------------------------------------------------- ports and the reference

    def check_ports(self, node_set: set[str]) -> None:
        for draft in self.ports:
            statement = draft.statement
            for terminal, node in zip(statement.terminals, draft.nodes, strict=True):
                if node not in node_set:
                    raise self.error(terminal, self.unknown_node(terminal.name, node, "port",
                                                                 node_set), draft.scope.trail)
            if draft.nodes[0] == draft.nodes[1]:
                raise self.error(statement, f"port {draft.name} has both terminals on node "
                                 f"{draft.nodes[0]}")
            if draft.name in node_set:
                raise self.error(
                    statement.name, f"port `{draft.name}` has the name of a node: V({draft.name}) "
                    "would be ambiguous; rename the port or the node",
                    (f"node {draft.name} is first used at line {self.node_line(draft.name)}",),
                )

    def node_line(self, node: str) -> int:
        return next(self.at(d.statement).line for d in self.elements if node in d.nodes)

    def unknown_node(self, written: str, node: str, user: str, node_set: set[str]) -> str:
        message = f"unknown node `{written}` in a {user}: no element is connected to it"
        close = get_close_matches(node, list(node_set), n=1)
        if close:
            message += f"; did you mean `{close[0]}`?"
        return message

    def choose_reference(self, node_set: set[str]) -> None:
        if not node_set or REFERENCE in node_set:
            return
        if self.ports:
            first = self.ports[0]
            chosen, why = first.nodes[1], f"the second terminal of port {first.name}"
            where = self.at(self.ports[0].statement)
        else:
            chosen, why = next(iter(self.node_order)), "the first node in the file"
            where = self.at(self.elements[0].statement)
        self.aliases[chosen] = REFERENCE
        self.notices.append(Notice(
            "notice",
            f"no node is named gnd or 0: node {chosen} ({why}) is taken as the reference "
            f"node {REFERENCE}; results that do not depend on the reference are unchanged",
            where,
        ))

    def node(self, name: str) -> str:
        return self.aliases.get(name, name)

    # -------------------------------------------------------------- pass 2: values

    def resolver(self, scope: _Scope):
        def resolve(name: syntax.Name) -> Formula:
            final = scope.lookup(name.name)
            if final is None:
                raise ExpressionProblem(
                    name, unknown_name_message(name.name, scope.visible()), scope.trail
                )
            what = self.what[final]
            if what not in ("parameter", "element"):
                hint = f"; use V({name.name})" if what == "port" else ""
                raise ExpressionProblem(
                    name, f"`{name.name}` is a {what}, not a parameter or element{hint}",
                    scope.trail,
                )
            return formula.name(final)

        return resolve

    def dimension_of(self, final: str | None) -> units.Inferred:
        """The dimension of a parameter or element symbol (None when unknown)."""
        if final is None:
            return None
        if final in self.dimensions:
            return self.dimensions[final]
        self.dimensions[final] = None  # a definition that names itself stays unknown
        result: units.Inferred = None
        draft = self.draft_of.get(final)
        if draft is not None and isinstance(draft.statement, syntax.ElementStatement):
            result = units.UNIT_DIMENSIONS[ELEMENT_KINDS[draft.statement.kind].unit]
        elif draft is not None and draft.statement.value is not None:
            literal = _literal(draft.statement.value.expression)
            if literal is not None:
                result = units.UNIT_DIMENSIONS.get(literal.unit) if literal.unit else None
            else:
                try:
                    result = units.expression_dimension(
                        draft.statement.value.expression,
                        lambda local, s=draft.scope: self.dimension_of(s.lookup(local)),
                    )
                except units.UnitMismatch:
                    result = None  # reported where the parameter itself is elaborated
        self.dimensions[final] = result if isinstance(result, tuple) else None
        return self.dimensions[final]

    def value_dimension(self, value: syntax.Value, scope: _Scope) -> units.Inferred:
        try:
            return units.expression_dimension(
                value.expression, lambda local: self.dimension_of(scope.lookup(local))
            )
        except units.UnitMismatch as mismatch:
            raise self.error(mismatch.node, mismatch.message, scope.trail) from None

    def parameter(self, draft: _Draft) -> Parameter:
        statement: syntax.Param = draft.statement  # type: ignore[assignment]
        value = statement.value
        expression = nominal = tolerance = None
        unit = ""
        if value is not None:
            if value.frequency is not None:
                raise self.error(value.frequency, f"`at` gives the frequency of a source; "
                                 f"parameter {draft.name} takes none", draft.scope.trail)
            expression = self.convert(value.expression, draft.scope)
            nominal = expression.rational()
            literal = _literal(value.expression)
            if literal is not None and literal.unit:
                unit = literal.unit
            else:
                dimension = self.value_dimension(value, draft.scope)
                if isinstance(dimension, tuple):
                    unit = units.unit_of(dimension) or ""
            tolerance = self.tolerance(value, unit, f"parameter {draft.name}", draft.scope)
        return Parameter(
            name=draft.name, value_formula=expression, nominal=nominal,
            unit=unit, tolerance=tolerance, description=statement.description,
            location=self.at(statement),
        )

    def element(self, draft: _Draft, node_set: set[str]) -> Element:
        statement: syntax.ElementStatement = draft.statement  # type: ignore[assignment]
        kind, value, scope = statement.kind, statement.value, draft.scope
        unit = ELEMENT_KINDS[kind].unit
        definition = nominal = tolerance = independent = None
        controls: tuple[Control, ...] = ()
        if value is not None:
            expression = None
            if ELEMENT_KINDS[kind].source and mentions_control(value.expression):
                constant, controls = self.controlled(value, scope, node_set)
                if controls:
                    independent = None if constant.is_zero() else constant
                else:  # every V(..)/I(..) term cancelled: the value is what is left
                    expression = constant
            else:
                nominal = units.constant_value(value.expression)  # plain numbers: no sympy
                if nominal is None:
                    expression = self.convert(value.expression, scope)
                self.check_unit(statement, value, scope)
            number = None if expression is None else expression.rational()
            if number is not None:
                nominal = number
            elif expression is not None:
                definition = expression
            tolerance = self.tolerance(value, unit, f"{kind} {draft.name}", scope)
        frequency = None
        if value is not None and value.frequency is not None:
            frequency = self.frequency(statement, value.frequency, bool(controls), scope)
        corner = None
        if ELEMENT_KINDS[kind].noise:
            what = f"{kind} {draft.name}"
            if value is None:
                raise self.error(statement, f"{what} needs its density: `= 5 nV/√Hz`",
                                 scope.trail)
            self.check_density(value, nominal, what, scope)
            if value.corner is not None:
                corner = self.corner(value.corner, what, scope)
        elif value is not None and value.corner is not None:
            raise self.error(value.corner, f"`corner` gives the 1/f corner of a noise density; "
                             f"{kind} {draft.name} takes none", scope.trail)
        coupled = None
        if ELEMENT_KINDS[kind].couples:
            coupled = tuple(self.coupled_element(kind, t, scope) for t in statement.terminals)
        return Element(
            name=draft.name, kind=kind, nodes=tuple(self.node(n) for n in draft.nodes),  # type: ignore[arg-type]
            definition_formula=definition, nominal=nominal,
            tolerance=tolerance, unit=unit, description=statement.description,
            location=self.at(statement), controls=controls, independent_formula=independent,
            coupled=coupled, written=value.text if value is not None else None,  # type: ignore[arg-type]
            frequency_formula=frequency, corner=corner,
        )

    def check_density(self, value: syntax.Value, nominal: Fraction | None, what: str,
                      scope: _Scope) -> None:
        """A noise density is not negative and takes no `at`."""
        if nominal is not None and nominal < 0:
            raise self.error(value, f"the density of {what} is negative; a noise density is "
                             "0 or more", scope.trail)

    def corner(self, written: syntax.Number | syntax.Name, what: str,
               scope: _Scope) -> sympy.Expr:
        """`corner 10 Hz` or `corner fc`: the 1/f corner frequency of a noise density."""
        import sympy  # noise densities are held as sympy expressions

        if isinstance(written, syntax.Name):
            return self.convert(written, scope).to_sympy()
        if written.unit not in (None, "Hz"):
            raise self.error(written, f"the 1/f corner of {what} is in Hz, not {written.unit}",
                             scope.trail)
        if written.value <= 0:
            raise self.error(written, f"the 1/f corner of {what} must be above 0 Hz",
                             scope.trail)
        return sympy.Rational(written.value.numerator, written.value.denominator)

    # -------------------------------------------------------------- noise

    def noise(self, parameters: dict[str, Parameter], elements: dict[str, Element]) -> Noise:
        """The file's temperature, noiseless parts and opamp noise densities, checked."""
        temperature, written = Noise().temperature, None
        noiseless: dict[str, None] = {}
        opamps: dict[str, OpampNoise] = {}
        seen: syntax.Temperature | None = None
        values = {name: p.nominal for name, p in parameters.items()}
        values.update({name: e.nominal for name, e in elements.items()})
        for statement in self.noise_statements:
            if isinstance(statement, syntax.Temperature):
                if seen is not None:
                    raise self.error(statement, "the temperature is given twice",
                                     (f"the first is at line {seen.line}",))
                seen = statement
                temperature, written = self.kelvin(statement.value), statement.value.text
            elif isinstance(statement, syntax.Noiseless):
                for name in statement.names:
                    element = elements.get(name.name)
                    if element is None:
                        raise self.error(name, self.unknown_element(name.name, elements))
                    if not element.entry.resistive and element.kind not in (
                            "impedance", "admittance"):
                        raise self.error(name, f"{element.kind} {name.name} makes no thermal "
                                         "noise; `noiseless` names resistors and conductances")
                    noiseless[name.name] = None
            else:
                opamps[statement.opamp.name] = self.opamp_noise(statement, elements, opamps,
                                                                values)
        return Noise(temperature, written, frozenset(noiseless), opamps)

    def unknown_element(self, name: str, elements: dict[str, Element]) -> str:
        close = get_close_matches(name, list(elements), n=1)
        return f"`{name}` is not an element of this circuit" + (
            f"; did you mean `{close[0]}`?" if close else "")

    def kelvin(self, number: syntax.Number) -> Fraction:
        """`300 K` or `27 °C` in K (above absolute zero)."""
        if number.unit == "K":
            value = number.value
        elif number.unit == "°C":
            value = number.value + Fraction(27315, 100)
        else:
            raise self.error(number, "a temperature is in K or °C: `temperature 300 K`, "
                                     "`temperature 27 °C`")
        if value <= 0:
            raise self.error(number, f"{number.text} is not above absolute zero")
        return value

    def opamp_noise(self, statement: syntax.OpampNoise, elements: dict[str, Element],
                    done: dict[str, OpampNoise], values: dict) -> OpampNoise:
        name = statement.opamp.name
        element = elements.get(name)
        if element is None:
            raise self.error(statement.opamp, self.unknown_element(name, elements))
        if element.kind != "opamp":
            raise self.error(statement.opamp, f"{element.kind} {name} is not an opamp; "
                             "`noise NAME en = .., in = ..` gives an opamp's input noise")
        if name in done:
            raise self.error(statement, f"the noise of opamp {name} is given twice")
        found: dict[str, NoiseDensity] = {}
        for density in statement.densities:
            which = density.which.name
            if which not in ("en", "in"):
                raise self.error(density.which, f"`{which}` is not an opamp noise density: "
                                 "write `en` (input voltage noise, V/√Hz) or `in` (current "
                                 "noise of each input, A/√Hz)")
            if which in found:
                raise self.error(density.which, f"`{which}` of opamp {name} is given twice")
            unit = "V/√Hz" if which == "en" else "A/√Hz"
            what = f"the {'voltage' if which == 'en' else 'current'} noise of opamp {name}"
            value = density.value
            dimension = self.value_dimension(value, self.top)
            if isinstance(dimension, tuple) and dimension != units.UNIT_DIMENSIONS[unit]:
                literal = _literal(value.expression)
                raise self.error(literal if literal is not None else value,
                                 f"{what} is given in {units.describe(dimension)}, but it is "
                                 f"in {unit}")
            expression = self.convert(value.expression, self.top)
            nominal = _nominal(expression, values)
            self.check_density(value, nominal, what, self.top)
            corner = self.corner(value.corner, what, self.top) if value.corner else None
            import sympy  # noise densities are held as sympy expressions

            found[which] = NoiseDensity(sympy.Symbol(f"{which}_{name}"), expression.to_sympy(),
                                        nominal, unit, corner, value.text, self.at(density))
        return OpampNoise(name, found.get("en"), found.get("in"))

    def frequency(self, statement: syntax.ElementStatement, written: syntax.Number | syntax.Name,
                  controlled: bool, scope: _Scope) -> Formula:
        """`at 50 Hz` or `at f`: only an independent source has a frequency of its own."""
        what = f"{statement.kind} {statement.name.name}"
        if not ELEMENT_KINDS[statement.kind].source or controlled:
            raise self.error(written, f"`at` gives the frequency of an independent source; "
                             f"{what} takes none", scope.trail)
        if isinstance(written, syntax.Name):
            return self.convert(written, scope)
        if written.unit not in (None, "Hz"):
            raise self.error(written, f"the frequency of {what} is in Hz, not {written.unit}",
                             scope.trail)
        if written.value <= 0:
            raise self.error(written, f"the frequency of {what} must be above 0 Hz", scope.trail)
        return formula.constant(written.value)

    def convert(self, expression: syntax.Expr, scope: _Scope) -> Formula:
        try:
            return to_formula(expression, self.resolver(scope))
        except ExpressionProblem as problem:
            raise self.located(problem, scope) from None

    def check_unit(self, statement: syntax.ElementStatement, value: syntax.Value,
                   scope: _Scope) -> None:
        dimension = self.value_dimension(value, scope)
        unit = ELEMENT_KINDS[statement.kind].unit
        expected = units.UNIT_DIMENSIONS[unit]
        if not isinstance(dimension, tuple) or dimension == expected:
            return
        literal = _literal(value.expression)
        written = units.describe(dimension)
        if unit:
            wanted = f"{_article(statement.kind)} {statement.kind}'s value is in " \
                     f"{unit}"
        else:
            wanted = f"{_article(statement.kind)} {statement.kind}'s value is a pure number"
        raise self.error(
            literal if literal is not None else value,
            f"{statement.kind} {statement.name.name} is given in {written}, but {wanted}",
            scope.trail,
        )

    def tolerance(self, value: syntax.Value, unit: str, what: str,
                  scope: _Scope) -> Tolerance | None:
        written = value.tolerance
        if written is None:
            return None
        plus, minus = written.plus.value, written.minus.value
        if plus < 0 or minus < 0:
            raise self.error(written, "a tolerance is written as magnitudes (± 1 %)")
        if written.percent:
            return Tolerance(plus / 100, minus / 100, relative=True)
        for number in (written.plus, written.minus):
            if number.unit and unit and number.unit != unit:
                raise self.error(
                    number, f"the tolerance of {what} is in {number.unit}, but its value is "
                    f"in {unit}", scope.trail,
                )
        return Tolerance(plus, minus, relative=False)

    def controlled(self, value: syntax.Value, scope: _Scope,
                   node_set: set[str]) -> tuple[Formula, tuple[Control, ...]]:
        """The part free of V/I and the control terms of a source value."""
        def key(term: syntax.Voltage | syntax.Current):
            if isinstance(term, syntax.Current):
                return ("current", self.current_element(term.element, scope))
            return ("voltage", self.control_nodes(term, scope, node_set))

        try:
            constant, terms = linear_form(value.expression, self.resolver(scope), key)
        except ExpressionProblem as problem:
            raise self.located(problem, scope) from None
        controls = tuple(
            Control(coefficient, "voltage", nodes=target)
            if kind == "voltage" else Control(coefficient, "current", element=target)
            for (kind, target), coefficient in terms.items()
        )
        return constant, controls

    def control_nodes(self, term: syntax.Voltage, scope: _Scope,
                      node_set: set[str]) -> tuple[str, str]:
        names = term.nodes
        if len(names) == 1:
            final = scope.lookup(names[0].name)
            if final is not None and self.what.get(final) == "port":
                port = next(d for d in self.ports if d.name == final)
                self.used_nodes.update(port.nodes)
                return self.node(port.nodes[0]), self.node(port.nodes[1])
        if len(names) not in (1, 2):
            raise ExpressionProblem(term, "V(..) takes one node (or port) or two nodes")
        nodes = [self.node_name(n, scope) for n in names]
        for written, node in zip(names, nodes, strict=True):
            if node not in node_set:
                raise ExpressionProblem(written, self.unknown_node(written.name, node,
                                                                   "control", node_set))
        self.used_nodes.update(nodes)
        positive = self.node(nodes[0])
        negative = self.node(nodes[1]) if len(nodes) == 2 else REFERENCE
        return positive, negative

    def current_element(self, name: syntax.Name, scope: _Scope) -> str:
        final = scope.lookup(name.name)
        if final is None or self.what.get(final) != "element":
            raise ExpressionProblem(
                name, f"I({name.name}) names no element" + (
                    "" if final is None else f": `{name.name}` is a {self.what[final]}"
                ),
            )
        kind = self.draft_of[final].statement.kind  # type: ignore[union-attr]
        if not ELEMENT_KINDS[kind].carries_current:
            raise ExpressionProblem(
                name, f"I({name.name}): the current of {_article(kind)} {kind} is not defined; "
                "use a two-terminal element or a source",
            )
        return final

    def coupled_element(self, kind: str, name: syntax.Name, scope: _Scope) -> str:
        """The final name of an element that a `kind` (a coupling) names as a terminal."""
        wanted = ELEMENT_KINDS[kind].couples
        final = scope.lookup(name.name)
        draft = self.draft_of.get(final) if final is not None else None
        if draft is None or not isinstance(draft.statement, syntax.ElementStatement):
            raise self.error(name, f"{kind} names `{name.name}`, which is no element; it must "
                             f"name two {wanted}s", scope.trail)
        if draft.statement.kind != wanted:
            raise self.error(name, f"{kind} names {draft.statement.kind} {name.name}; it must "
                             f"name two {wanted}s", scope.trail)
        return final  # type: ignore[return-value]

    def check_couplings(self, elements: dict[str, Element]) -> None:
        pairs: dict[frozenset[str], str] = {}
        for element in elements.values():
            if element.kind != "coupling":
                continue
            first, second = element.coupled  # type: ignore[misc]
            statement = self.draft_of[element.name].statement
            if first == second:
                raise self.error(statement, f"coupling {element.name} names inductor {first} "
                                 "twice; it couples two different inductors")
            pair = frozenset((first, second))
            if pair in pairs:
                raise self.error(statement, f"inductors {first} and {second} are already coupled "
                                 f"by {pairs[pair]}")
            pairs[pair] = element.name
            if element.nominal is not None and abs(element.nominal) > 1:
                raise self.error(statement, f"coupling coefficient {element.name} = "
                                 f"{units.engineering(element.nominal)} is outside -1 … 1")
            values = [elements[n].nominal for n in (first, second) if n in elements]
            if len(values) == 2 and None not in values and values[0] * values[1] <= 0:
                raise self.error(statement, f"coupling {element.name} joins inductors {first} "
                                 f"and {second}, whose values have opposite signs (or one is "
                                 f"zero): the mutual inductance {element.name}·√({first}·"
                                 f"{second}) has no real value")

    # -------------------------------------------------------------- nominal values

    def resolve_nominals(self, parameters: dict[str, Parameter], elements: dict[str, Element]):
        """Fill in nominal values computed from definitions; reports circular definitions."""
        definitions: dict[str, Formula] = {}
        known: dict[str, Fraction | None] = {}
        for p in parameters.values():
            if p.value_formula is not None and p.nominal is None:
                definitions[p.name] = p.value_formula
            else:
                known[p.name] = p.nominal
        for e in elements.values():
            if e.definition_formula is not None:
                definitions[e.name] = e.definition_formula
            else:
                known[e.name] = e.nominal
        values = _evaluate_all(definitions, known, self.cycle_error)
        parameters = {
            name: p if name not in definitions else replace(p, nominal=values[name])
            for name, p in parameters.items()
        }
        elements = {
            name: e if name not in definitions else replace(e, nominal=values[name])
            for name, e in elements.items()
        }
        return parameters, elements

    def cycle_error(self, cycle: list[str]) -> SymcircError:
        draft = self.draft_of[cycle[0]]
        path = " → ".join([*cycle, cycle[0]])
        return self.error(draft.statement, f"{cycle[0]} is defined in terms of itself: {path}",
                          draft.scope.trail)

    # -------------------------------------------------------------- directives

    def directives_of(self, circuit: Circuit) -> tuple[tuple[Derive, ...], tuple[Claim, ...]]:
        derives: list[Derive] = []
        claims: list[Claim] = []
        for statement in self.directives:
            if isinstance(statement, syntax.DeriveStatement):
                for quantity in statement.quantities:
                    self.check_quantity(quantity, circuit)
                derives.append(Derive(
                    quantities=statement.quantities,
                    texts=tuple(q.text for q in statement.quantities),
                    assumptions=tuple(self.assumption(a, circuit) for a in statement.assumptions),
                    location=self.at(statement),
                ))
            else:
                self.check_quantity(statement.quantity, circuit)
                claims.append(Claim(
                    quantity=statement.quantity,
                    quantity_text=statement.quantity.text,
                    expression_formula=formula_in(circuit, statement.expression, self.file,
                                                  self.source),
                    expression_text=statement.text,
                    location=self.at(statement),
                    written=statement.expression,
                ))
        return tuple(derives), tuple(claims)

    def assumption(self, written: syntax.Assumption, circuit: Circuit) -> Assumption:
        if not (written.kind == "limit" and written.symbol.name == "s"):
            self.expect(written.symbol, "symbol", circuit)  # `s -> 0`: DC, `s -> oo`: HF
        target: str | None
        if written.kind == "limit":
            if isinstance(written.target, syntax.Name) and written.target.name == "oo":
                target = "oo"
            elif isinstance(written.target, syntax.Number) and written.target.value == 0:
                target = "0"
            else:
                raise self.error(written.target or written,
                                 "a limit goes to oo or 0 (`A -> oo`, `Rs -> 0`)")
        else:
            self.expect(written.target, "symbol", circuit)
            target = written.target.name  # type: ignore[union-attr]
        return Assumption(written.kind, written.symbol.name, target,  # type: ignore[arg-type]
                          self.at(written))

    def check_quantity(self, quantity: syntax.Quantity, circuit: Circuit) -> None:
        """Check the names a quantity uses where the language says what they must be."""
        name, args = quantity.name, quantity.args
        entry = QUANTITIES.get(name)
        parts = entry.part_names if entry is not None else ()
        if parts and quantity.attribute is not None and quantity.attribute not in parts:
            close = get_close_matches(quantity.attribute, parts, n=1)
            hint = f"; did you mean `.{close[0]}`?" if close else ""
            raise self.error(quantity, f"{name}(..) has no part `.{quantity.attribute}`; it has "
                             f"{', '.join('.' + a for a in parts)}{hint}")
        roles = entry.arguments if entry is not None else ()
        if not (entry is not None and entry.least <= len(args) <= len(roles)):
            roles = ("value",) * len(args)  # the handler says how many it takes
        if name == "V" and len(args) == 1 and _name(args[0]) in circuit.ports:
            return  # V(port)
        for arg, role in zip(args, roles[:len(args)], strict=True):
            self.check_role(arg, role, circuit)

    def check_role(self, arg, role: str, circuit: Circuit) -> None:
        """Check one argument against its role in the vocabulary (`vocabulary.ROLES`)."""
        if role == "node":
            self.expect(arg, "node", circuit)
            self.quantity_nodes.add(circuit.resolve_node(arg.name))
        elif role in ("element", "port", "symbol"):
            self.expect(arg, role, circuit)
        elif role == "source":
            self.expect(arg, "independent source", circuit)
        else:  # a measure (a port or a quantity) or a value the handler reads
            self.check_argument(arg, circuit, "port" if role == "measure" else None)

    def check_argument(self, arg, circuit: Circuit, name_is: str | None = None) -> None:
        if name_is is not None and isinstance(arg, syntax.Name):
            self.expect(arg, name_is, circuit)
        elif isinstance(arg, syntax.Quantity):
            self.check_quantity(arg, circuit)
        elif isinstance(arg, syntax.Equation):
            self.check_quantity(arg.left, circuit)

    def expect(self, arg, what: str, circuit: Circuit) -> None:
        name = _name(arg)
        if name is None:
            raise self.error(arg, f"expected {_article(what)} {what} name here")
        if what == "node":
            ok = circuit.resolve_node(name) is not None
            pool = list(circuit.nodes)
        elif what == "port":
            ok, pool = name in circuit.ports, list(circuit.ports)
        elif what == "element":
            ok, pool = name in circuit.elements, list(circuit.elements)
        elif what == "symbol":
            pool = [*circuit.parameters, *circuit.elements]
            ok = name in circuit.parameters or name in circuit.elements
        else:
            element = circuit.elements.get(name)
            ok = element is not None and element.is_source and not element.controls
            pool = [e.name for e in circuit.elements.values()
                    if e.is_source and not e.controls]
        if not ok:
            close = get_close_matches(name, pool, n=1)
            hint = f"; did you mean `{close[0]}`?" if close else ""
            described = "parameter or element" if what == "symbol" else what
            raise self.error(
                arg, f"`{name}` is not {_article(described)} {described} of this circuit{hint}"
            )


# ---------------------------------------------------------------- small helpers


def _renamable(block: syntax.Block, visible, seen: frozenset[int] = frozenset()
               ) -> dict[str, str]:
    """Names an instance of `block` may rename with `with` → 'parameter' or 'element': the
    block's own parameters and elements, and the names that its nested instances give with
    `with` (`inner i (x, y) with R = Rx` inside the block makes `Rx` renamable).
    `visible(name)` is the block of that name seen where `block` is defined, or None."""
    names = {
        s.name.name: "parameter" if isinstance(s, syntax.Param) else "element"
        for s in block.body if isinstance(s, syntax.Param | syntax.ElementStatement)
    }
    seen = seen | {id(block)}
    local = {s.name.name: s for s in block.body if isinstance(s, syntax.Block)}

    def inside(name: str) -> syntax.Block | None:
        return local.get(name) or visible(name)

    for statement in block.body:
        if not isinstance(statement, syntax.Instance) or not statement.renames:
            continue
        nested = inside(statement.block.name)
        if nested is None or id(nested) in seen:
            continue  # an unknown or recursive block is reported when it is expanded
        inner_names = _renamable(nested, inside, seen)
        for rename in statement.renames:
            if rename.inner.name in inner_names:
                names.setdefault(rename.outer.name, inner_names[rename.inner.name])
    return names


_DECLARATIONS = (syntax.Param, syntax.ElementStatement, syntax.PortStatement)


def _expansion_sizes(statements: tuple[syntax.Statement, ...]) -> dict[int, tuple[int, int]]:
    """id(instance) → (elements, parameters and ports it expands to, levels of instances
    it nests), for every instance reachable from `statements`, counted on the syntax tree
    (each block once, whatever its number of instances). Unknown and recursive blocks count
    as empty: they are reported when expanded."""
    # A block's body sees its own blocks, then those around its definition (lexical scope):
    # scopes are (blocks defined here, enclosing scope), looked up along the chain.
    Scope = tuple[dict[str, syntax.Block], object]
    top: Scope = ({s.name.name: s for s in statements if isinstance(s, syntax.Block)}, None)
    scope_of: dict[int, Scope] = {}
    defining = [(statements, top)]
    while defining:  # nesting of definitions is bounded by the parser
        body, outer = defining.pop()
        for s in body:
            if isinstance(s, syntax.Block):
                inner = ({t.name.name: t for t in s.body if isinstance(t, syntax.Block)}, outer)
                scope_of[id(s)] = inner
                defining.append((s.body, inner))

    def resolve(name: str, scope) -> syntax.Block | None:
        while scope is not None:
            blocks, scope = scope
            if name in blocks:
                return blocks[name]
        return None

    def instances(body, scope) -> list:
        return [(s, resolve(s.block.name, scope)) for s in body
                if isinstance(s, syntax.Instance)]

    sizes: dict[int, tuple[int, int]] = {}
    done: dict[int, tuple[int, int]] = {}  # id(block) -> (count, depth) of one instance
    started: set[int] = set()
    # depth first without recursion: (block, its pending instances and their blocks)
    stack: list[tuple[syntax.Block | None, list]] = [(None, instances(statements, top))]
    while stack:
        block, pending = stack[-1]
        while pending and (pending[-1][1] is None or id(pending[-1][1]) in started):
            instance, target = pending.pop()
            sizes[id(instance)] = done.get(id(target), (0, 0))  # (0, 0): unknown or recursive
        if pending:
            target = pending[-1][1]
            started.add(id(target))
            stack.append((target, instances(target.body, scope_of[id(target)])))
            continue
        stack.pop()
        if block is not None:
            count = sum(1 for s in block.body if isinstance(s, _DECLARATIONS))
            depth = 0
            for s in block.body:
                if isinstance(s, syntax.Instance):
                    inner_count, inner_depth = sizes[id(s)]
                    count += inner_count
                    depth = max(depth, inner_depth)
            done[id(block)] = (count, depth + 1)
    return sizes


def _evaluate_all(definitions: dict[str, Formula], known: dict[str, Fraction | None],
                  cycle_error) -> dict[str, Fraction | None]:
    """Nominal value of every defined symbol, in dependency order (no recursion)."""
    try:  # the names each is written with: the symbols it depends on, or a few more
        return _in_order(definitions, known, cycle_error,
                         {name: sorted(expr.names) for name, expr in definitions.items()})
    except SymcircError:  # a cycle, unless through names whose terms cancel (`x - x`)
        return _in_order(definitions, known, cycle_error,
                         {name: sorted(expr.free_names()) for name, expr in definitions.items()})


def _in_order(definitions: dict[str, Formula], known: dict[str, Fraction | None],
              cycle_error, dependencies: dict[str, list[str]]) -> dict[str, Fraction | None]:
    values = dict(known)
    for start in definitions:
        if start in values:
            continue
        path = [start]
        stack = [iter(dependencies[start])]
        while stack:
            for dependency in stack[-1]:
                if dependency in definitions and dependency not in values:
                    if dependency in path:
                        raise cycle_error(path[path.index(dependency):])
                    path.append(dependency)
                    stack.append(iter(dependencies[dependency]))
                    break
            else:
                stack.pop()
                name = path.pop()
                values[name] = _nominal(definitions[name], values)
    return values


def _nominal(expression: Formula, values: dict[str, Fraction | None]) -> Fraction | None:
    """The value of a formula at nominal values; None when a symbol has none (or `s`).
    Exact with fractions; sympy says what an irrational value, a division by zero at the
    nominal values or a formula whose terms may cancel comes to."""
    if not expression.laplace:  # (a plain formula with `s` has no value; others: sympy says)
        known: dict[str, Fraction] = {}
        bits = 0
        for name in expression.names:
            value = values.get(name)
            if value is None:
                return None if expression.plain else _sympy_nominal(expression.to_sympy(),
                                                                    values)
            known[name] = value
            bits += value.numerator.bit_length() + value.denominator.bit_length()
        if bits * expression.largest_exponent() > MAX_POWER_BITS:
            # an exact value this size helps nobody; the symbol stays without one
            return None if expression.plain else _sympy_nominal(expression.to_sympy(), values)
        try:
            return expression.value_at(known)
        except (Inexact, ZeroDivisionError):
            pass
    elif expression.plain:
        return None
    return _sympy_nominal(expression.to_sympy(), values)


def _sympy_nominal(expression, values: dict[str, Fraction | None]) -> Fraction | None:
    import sympy

    substitutions = {}
    bits = 0
    for symbol in expression.free_symbols:
        value = values.get(symbol.name) if symbol.name != "s" else None
        if value is None:
            return None
        substitutions[symbol] = sympy.Rational(value.numerator, value.denominator)
        bits += value.numerator.bit_length() + value.denominator.bit_length()
    powers = [abs(a.exp.p) for a in expression.atoms(sympy.Pow) if a.exp.is_Rational]
    if bits * max(powers, default=1) > MAX_POWER_BITS:
        return None  # an exact value this size helps nobody; the symbol stays without one
    number = expression.xreplace(substitutions)
    if number.is_Rational:
        return Fraction(int(number.p), int(number.q))
    if number.is_number and number.is_extended_real and number.is_finite:
        return Fraction(str(sympy.N(number, 30)))
    return None


def _literal(expression: syntax.Expr) -> syntax.Number | None:
    """The number literal a value consists of (`10 kΩ`, `-5 V`), else None."""
    while isinstance(expression, syntax.Unary):
        expression = expression.operand
    return expression if isinstance(expression, syntax.Number) else None


def _line_of(notice: Notice) -> int:
    return notice.location.line if notice.location else 0


def _name(arg) -> str | None:
    return arg.name if isinstance(arg, syntax.Name) else None


def _article(word: str) -> str:
    return "an" if word[:1] in "aeiou" else "a"
