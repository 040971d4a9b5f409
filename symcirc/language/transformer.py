"""Builds the syntax tree (`symcirc.language.syntax`) while lark parses the text.

One callback per grammar rule, run inline by the LALR parser (no intermediate parse tree).
Every node carries the line and column where it starts. Constructs that parse but cannot
mean anything (a resistor with three terminals, `4k7k`, `I(3)`) are reported here.
"""

from __future__ import annotations

import re
from dataclasses import replace
from fractions import Fraction

from lark import Token, Transformer, v_args

from ..errors import SymcircError
from ..limits import MAX_STATEMENTS
from ..vocabulary import ELEMENT_KINDS, STATEMENT_WORDS
from . import syntax as st
from .numbers import PERCENT, NumberError, decode_number

MAX_DEPTH = 200
"""Deepest nesting of an expression or quantity (keeps later stages clear of recursion limits)."""

MAX_BLOCK_DEPTH = 50
"""Deepest nesting of block definitions."""

PORT_SHAPE = (2, "(positive, negative)")
"""Number of terminals of a port and their shape."""

_NUMBER_WORDS = {1: "one", 2: "two", 3: "three", 4: "four"}
_CONTINUATION = re.compile(r"\\[ \t\f\r]*\n")
_JOINED = re.compile(r"\s*\\[ \t\f\r]*\n\s*")
_DIGITS = re.compile(r"[0-9]+")
_BLANKS = re.compile(r"\s+")
_ESCAPE = re.compile(r'\\(["\\])')
_ASYMMETRIC = re.compile(
    r"\+[ \t]*(?P<plus>[^ \t%]+)[ \t]*%[ \t]*-[ \t]*(?P<minus>[^ \t%]+)[ \t]*%"
)


class _Terminals:
    """A parenthesised list of terminals, split into groups at `;`."""

    __slots__ = ("open", "groups", "close", "semicolons")

    def __init__(self, open_: Token, groups: list[list[st.Name]], close: Token,
                 semicolons: list[Token]) -> None:
        self.open = open_
        self.groups = groups
        self.close = close
        self.semicolons = semicolons

    @property
    def names(self) -> tuple[st.Name, ...]:
        return tuple(name for group in self.groups for name in group)


@v_args(inline=True)
class TreeBuilder(Transformer):
    """The inline transformer; `begin(source, filename)` before each parse."""

    def __init__(self) -> None:
        super().__init__()
        self.begin("", "<input>")

    def begin(self, source: str, filename: str) -> None:
        """Start a new parse of `source` (read from `filename`)."""
        self.source = source
        self.filename = filename
        self._statements = 0  # parameters, elements, ports and instances read so far

    # ------------------------------------------------------------ reporting

    def error(self, message: str, line: int, column: int, notes: tuple[str, ...] = ()
              ) -> SymcircError:
        """A SymcircError at `line`:`column` of the text being parsed."""
        lines = self.source.split("\n")
        source_line = lines[line - 1].rstrip("\r") if 0 < line <= len(lines) else None
        return SymcircError(message, self.filename, line, column, source_line, notes)

    def _error_at(self, node: st.Node | Token, message: str) -> SymcircError:
        return self.error(message, node.line, node.column)

    # ------------------------------------------------------------ expressions

    def number(self, token: Token) -> st.Number:
        value, unit = self._decode(token)
        return st.Number(token.line, token.column, value, unit, token.value, span=_span(token))

    def name(self, token: Token) -> st.Name:
        return st.Name(token.line, token.column, token.value, span=_span(token))

    def group(self, open_: Token, inner: st.Expr, close: Token) -> st.Expr:
        depth = self._deeper(inner.span.depth, open_)
        return replace(inner, span=st.Span(open_.start_pos, close.end_pos, open_.line,
                                           open_.column, depth))

    def binary(self, left: st.Expr, op: Token, right: st.Expr) -> st.Binary:
        first, last = left.span, right.span
        depth = self._deeper(max(first.depth, last.depth), op)
        return st.Binary(first.line, first.column, "^" if op.value == "**" else op.value,
                         left, right, span=replace(first, end=last.end, depth=depth))

    def unary(self, op: Token, operand: st.Expr) -> st.Unary:
        depth = self._deeper(operand.span.depth, op)
        return st.Unary(op.line, op.column, op.value, operand,
                        span=_span(op, operand.span.end, depth))

    def call(self, name: Token, open_: Token, *rest) -> st.Expr | st.Quantity:
        *arguments, close, _dot, attribute = rest
        arguments = [a for a in arguments if a is not None]
        end = (attribute or close).end_pos
        depth = self._deeper(max((a.span.depth for a in arguments), default=0), name)
        span = _span(name, end, depth)
        if attribute is None and name.value in ("V", "I", "sqrt"):
            return self._builtin(name, arguments, close, span)
        return st.Quantity(
            name.line, name.column, name.value,
            tuple(self._quantity_argument(a) for a in arguments),
            attribute.value if attribute is not None else None,
            _quantity_text(self.source[name.start_pos:end]), span=span,
        )

    def equation(self, left: st.Expr, _equal: Token, right: st.Expr) -> st.Equation:
        first, last = left.span, right.span
        quantity = self._as_quantity(
            left, "the left side of `=` in a quantity must be a quantity, as in "
                  "`solve(gain(Uin, out) = -10, Rf)`")
        return st.Equation(first.line, first.column, quantity, right,
                           span=replace(first, end=last.end,
                                        depth=max(first.depth, last.depth)))

    def _builtin(self, name: Token, arguments: list, close: Token, span: st.Span) -> st.Expr:
        """`V(x)`, `V(x, y)`, `I(E)` or `sqrt(x)` inside an expression."""
        if name.value == "V":
            if not 1 <= len(arguments) <= 2:
                raise self._error_at(name, "V(..) takes one or two nodes: V(x) or V(x, y)")
            nodes = tuple(self._voltage_node(a) for a in arguments)
            return st.Voltage(name.line, name.column, nodes, span=span)
        if len(arguments) != 1:
            usage = "I(..) takes one element name: I(R1)" if name.value == "I" else \
                "sqrt(..) takes one argument: sqrt(x)"
            raise self._error_at(arguments[1] if len(arguments) > 1 else close, usage)
        (argument,) = arguments
        if isinstance(argument, st.Equation):
            raise self._error_at(argument, f"`=` is not allowed inside {name.value}(..)")
        if name.value == "I":
            if not isinstance(argument, st.Name) or argument.name[0].isdigit():
                raise self._error_at(argument, "I(..) takes one element name: I(R1)")
            return st.Current(name.line, name.column, argument, span=span)
        return st.Function(name.line, name.column, "sqrt", argument, span=span)

    def _voltage_node(self, argument) -> st.Name:
        """A node inside V(..): a name, or a non-negative integer."""
        if isinstance(argument, st.Name):
            return argument
        if isinstance(argument, st.Number) and _DIGITS.fullmatch(argument.text):
            return st.Name(argument.line, argument.column, _integer(argument.text))
        raise self._error_at(argument, "V(..) takes node names: V(x) or V(x, y)")

    def _quantity_argument(self, argument):
        """A quantity's argument: V(..) and I(..) there are quantities themselves."""
        if isinstance(argument, (st.Voltage, st.Current)):
            return self._as_quantity(argument, "")
        return argument

    def _as_quantity(self, node, message: str) -> st.Quantity:
        if isinstance(node, st.Quantity):
            return node
        text = _quantity_text(self._source_of(node))
        if isinstance(node, st.Voltage):
            return st.Quantity(node.line, node.column, "V", node.nodes, None, text,
                               span=node.span)
        if isinstance(node, st.Current):
            return st.Quantity(node.line, node.column, "I", (node.element,), None, text,
                               span=node.span)
        raise self._error_at(node, message or f"`{text}` is not a quantity")

    def _check_expression(self, node: st.Expr) -> None:
        """A value's expression: no quantities and no percentages inside."""
        if isinstance(node, st.Binary):
            self._check_expression(node.left)
            self._check_expression(node.right)
        elif isinstance(node, st.Unary):
            self._check_expression(node.operand)
        elif isinstance(node, st.Function):
            self._check_expression(node.argument)
        elif isinstance(node, st.Quantity):
            what = f"`{node.name}(..)` is not a function" if node.attribute is None else \
                f"the quantity `{node.text}` cannot be used"
            raise self._error_at(node, f"{what} in an expression: expressions are made of "
                                       f"numbers, names, + - * / ^, sqrt(..), V(..) and I(..)")
        elif isinstance(node, st.Number) and node.unit == PERCENT:
            raise self._error_at(node, "a percentage belongs in a tolerance (`± 1 %`) or a "
                                       "quantity's argument, not in a value")
        elif isinstance(node, st.Number) and node.unit == "°C":
            raise self._error_at(node, "a temperature in °C is read only by the `temperature` "
                                       "statement (`temperature 27 °C`); a value takes K")

    def _deeper(self, depth: int, where: Token) -> int:
        if depth >= MAX_DEPTH:
            raise self._error_at(where, f"expression nested too deeply (more than "
                                        f"{MAX_DEPTH} levels)")
        return depth + 1

    def _decode(self, token: Token) -> tuple[Fraction, str | None]:
        try:
            return decode_number(token.value)
        except NumberError as problem:
            raise self.error(problem.message, token.line, token.column + problem.offset) from None

    def _source_of(self, node: st.Spanned) -> str:
        """The text of `node` as written, parentheses around it included."""
        return self.source[node.span.start:node.span.end]

    # ------------------------------------------------------------ values

    def value(self, _equal: Token, expression: st.Expr, tolerance: st.Tolerance | None,
              frequency: st.Number | st.Name | None = None,
              corner: st.Number | st.Name | None = None) -> st.Value:
        self._check_expression(expression)
        span = expression.span
        end = tolerance.span.end if tolerance is not None else span.end
        return st.Value(span.line, span.column, expression, tolerance,
                        _as_written(self.source[span.start:end]), frequency, corner)

    def frequency(self, _at: Token, target: Token) -> st.Number | st.Name:
        """`at 50 Hz` or `at f`."""
        if target.type == "NAME":
            return st.Name(target.line, target.column, target.value)
        value, unit = self._decode(target)
        return st.Number(target.line, target.column, value, unit, target.value)

    def corner(self, _corner: Token, target: Token) -> st.Number | st.Name:
        """`corner 10 Hz` or `corner fc`."""
        return self.frequency(_corner, target)

    # ------------------------------------------------------------ noise statements

    def temperature(self, keyword: Token, number: Token) -> st.Temperature:
        value, unit = self._decode(number)
        return st.Temperature(keyword.line, keyword.column,
                              st.Number(number.line, number.column, value, unit, number.value))

    def noiseless(self, keyword: Token, *names: Token) -> st.Noiseless:
        return st.Noiseless(keyword.line, keyword.column, tuple(_name(n) for n in names))

    def opamp_density(self, which: Token, equal: Token, expression: st.Expr,
                      corner: st.Number | st.Name | None) -> st.OpampDensity:
        return st.OpampDensity(which.line, which.column, _name(which),
                               self.value(equal, expression, None, None, corner))

    def opamp_noise(self, keyword: Token, opamp: Token,
                    *densities: st.OpampDensity) -> st.OpampNoise:
        return st.OpampNoise(keyword.line, keyword.column, _name(opamp), densities)

    def tolerance(self, sign: Token, magnitude: Token | None = None) -> st.Tolerance:
        if magnitude is None:
            return self._asymmetric(sign)
        value, unit = self._decode(magnitude)
        percent = unit == PERCENT
        text = magnitude.value.rstrip("% \t") if percent else magnitude.value
        number = st.Number(magnitude.line, magnitude.column,
                           value * 100 if percent else value, None if percent else unit, text)
        return st.Tolerance(sign.line, sign.column, number, number, percent,
                            span=_span(sign, magnitude.end_pos))

    def _asymmetric(self, token: Token) -> st.Tolerance:
        """`+80 % -20 %` (one token)."""
        match = _ASYMMETRIC.fullmatch(token.value)
        numbers = []
        for part in ("plus", "minus"):
            column = token.column + match.start(part)
            try:
                value, _ = decode_number(match[part])
            except NumberError as problem:
                raise self.error(problem.message, token.line, column + problem.offset) from None
            numbers.append(st.Number(token.line, column, value, None, match[part]))
        return st.Tolerance(token.line, token.column, numbers[0], numbers[1], True,
                            span=_span(token))

    # ------------------------------------------------------------ statements

    def start(self, *statements) -> st.Document:
        return st.Document(self.filename, self.source,
                           tuple(s for s in statements if s is not None))

    def title(self, keyword: Token, text: Token) -> st.Title:
        return st.Title(keyword.line, keyword.column, _unquote(text))

    def _count(self, keyword: Token) -> None:
        """Stop reading at the statement past MAX_STATEMENTS (before memory grows)."""
        self._statements += 1
        if self._statements > MAX_STATEMENTS:
            raise self._error_at(keyword, f"the file holds more than {MAX_STATEMENTS:,} "
                                          "parameters, elements, ports and instances: the most "
                                          "a circuit may hold; split it into parts")

    def typeset(self, keyword: Token, name: Token, form: Token) -> st.Typeset:
        return st.Typeset(keyword.line, keyword.column, _name(name), _unquote(form),
                          form.column)

    def param(self, keyword: Token, name: Token, value: st.Value | None,
              description: Token | None) -> st.Param:
        self._count(keyword)
        return st.Param(keyword.line, keyword.column, _name(name), value, _description(description))

    def kind(self, *words: Token) -> tuple[str, Token]:
        return " ".join(w.value for w in words), words[0]

    def terminals(self, open_: Token, *items) -> _Terminals:
        *items, close = items
        groups: list[list[st.Name]] = [[]]
        semicolons = []
        for item in items:
            if item is None:
                continue
            if item.type == "SEMICOLON":
                semicolons.append(item)
                groups.append([])
            elif item.type == "NAME":
                groups[-1].append(_name(item))
            elif _DIGITS.fullmatch(item.value):
                groups[-1].append(st.Name(item.line, item.column, _integer(item.value)))
            else:
                raise self._error_at(item, f"`{item.value}` is not a node name: a node is a "
                                           f"name or a non-negative integer")
        return _Terminals(open_, groups, close, semicolons)

    def element(self, kind: tuple[str, Token], name: Token, terminals: _Terminals,
                value: st.Value | None, description: Token | None) -> st.ElementStatement:
        what, keyword = kind
        self._count(keyword)
        entry = ELEMENT_KINDS[what]
        if len(entry.terminals) > 1:
            self._check_windings(what, name, terminals)
        else:
            self._check_terminals(f"{what} {name.value}",
                                  (entry.terminal_count, entry.layout), terminals)
        if entry.couples:
            for element in terminals.names:
                if element.name[0].isdigit():
                    raise self._error_at(element, f"{what} {name.value} couples two "
                                                  f"{entry.couples}s: give their names, not "
                                                  f"nodes")
        return st.ElementStatement(keyword.line, keyword.column, what, _name(name),
                                   terminals.names, value, _description(description))

    def port(self, keyword: Token, name: Token, terminals: _Terminals,
             description: Token | None) -> st.PortStatement:
        self._count(keyword)
        self._check_terminals(f"port {name.value}", PORT_SHAPE, terminals)
        return st.PortStatement(keyword.line, keyword.column, _name(name), terminals.names,
                                _description(description))

    def _check_terminals(self, what: str, shape: tuple[int, str], terminals: _Terminals) -> None:
        count, layout = shape
        if terminals.semicolons:
            raise self._error_at(terminals.semicolons[0], f"`;` separates the windings of a "
                                                          f"transformer only; {what} uses `,`")
        names = terminals.names
        if len(names) != count:
            where = names[count] if len(names) > count else terminals.close
            raise self._error_at(where, f"{what} needs {count} terminals {layout}, "
                                        f"got {len(names)}")

    def _check_windings(self, what: str, name: Token, terminals: _Terminals) -> None:
        """Terminals in groups separated by `;` (a transformer's windings)."""
        groups = ELEMENT_KINDS[what].terminals
        if [len(g) for g in terminals.groups] != [len(g) for g in groups]:
            where = terminals.semicolons[1] if len(terminals.semicolons) > 1 else terminals.open
            sizes = {len(g) for g in groups}
            each = f" of {_NUMBER_WORDS[sizes.pop()]} terminals each" if len(sizes) == 1 else ""
            raise self._error_at(where, f"{what} {name.value} needs {_NUMBER_WORDS[len(groups)]} "
                                        f"windings{each}: {what} {name.value} "
                                        f"{ELEMENT_KINDS[what].layout}")

    def block(self, keyword: Token, name: Token, terminals: _Terminals, *rest) -> st.Block:
        *body, _end = rest
        if name.value in STATEMENT_WORDS:
            raise self._error_at(name, f"`{name.value}` is a statement keyword and cannot name "
                                       f"a block")
        depth = 1 + max((s.depth for s in body if isinstance(s, st.Block)), default=0)
        if depth > MAX_BLOCK_DEPTH:
            raise self._error_at(keyword, f"blocks nested too deeply (more than "
                                          f"{MAX_BLOCK_DEPTH} levels)")
        return st.Block(keyword.line, keyword.column, _name(name),
                        self._node_list(f"block {name.value}", terminals), tuple(body),
                        depth=depth)

    def instance(self, block: Token, name: Token, terminals: _Terminals,
                 renames: tuple[st.Rename, ...] | None) -> st.Instance:
        self._count(block)
        return st.Instance(block.line, block.column, _name(block), _name(name),
                           self._node_list(f"{block.value} {name.value}", terminals),
                           renames or ())

    def _node_list(self, what: str, terminals: _Terminals) -> tuple[st.Name, ...]:
        if terminals.semicolons:
            raise self._error_at(terminals.semicolons[0], f"`;` separates the windings of a "
                                                          f"transformer only; {what} uses `,`")
        return terminals.names

    def renames(self, _with: Token, *renames: st.Rename) -> tuple[st.Rename, ...]:
        return renames

    def rename(self, inner: Token, _equal: Token, outer: Token) -> st.Rename:
        return st.Rename(inner.line, inner.column, _name(inner), _name(outer))

    def derive(self, keyword: Token, *rest) -> st.DeriveStatement:
        *calls, assumptions = rest
        quantities = tuple(self._as_quantity(c, "") for c in calls)
        return st.DeriveStatement(keyword.line, keyword.column, quantities, assumptions or ())

    def where(self, _keyword: Token, *assumptions: st.Assumption) -> tuple[st.Assumption, ...]:
        return assumptions

    def assumption(self, symbol: Token, relation: Token, other: Token) -> st.Assumption:
        if relation.type == "ARROW":
            if other.type == "NAME" and other.value == "oo":
                target: st.Name | st.Number = _name(other)
            elif other.type == "NUMBER" and self._decode(other) == (0, None):
                target = st.Number(other.line, other.column, Fraction(0), None, other.value)
            else:
                raise self._error_at(other, "a limit goes to `oo` or `0`: "
                                            f"`{symbol.value} -> oo` or `{symbol.value} -> 0`")
            return st.Assumption(symbol.line, symbol.column, "limit", _name(symbol), target)
        big, small = (symbol, other) if relation.type == "MUCH_GREATER" else (other, symbol)
        return st.Assumption(symbol.line, symbol.column, "much_greater", _name(big), _name(small))

    def claim(self, keyword: Token, call, _equal: Token, expression: st.Expr
              ) -> st.ClaimStatement:
        quantity = self._as_quantity(call, "")
        self._check_expression(expression)
        text = _as_written(self._source_of(expression))
        return st.ClaimStatement(keyword.line, keyword.column, quantity, expression, text)

    # ------------------------------------------------------------ command-line pieces

    def quantity_line(self, call) -> st.Quantity:
        return self._as_quantity(call, "")

    def quantity_where_line(self, call, assumptions) -> tuple[st.Quantity,
                                                             tuple[st.Assumption, ...]]:
        return self._as_quantity(call, ""), tuple(assumptions or ())

    def where_line(self, _keyword, *assumptions: st.Assumption) -> tuple[st.Assumption, ...]:
        return assumptions

    def expression_line(self, expression: st.Expr) -> st.Expr:
        self._check_expression(expression)
        return expression

    def claim_line(self, call, _equal: Token, expression: st.Expr
                   ) -> tuple[st.Quantity, st.Expr, str]:
        quantity = self._as_quantity(call, "")
        self._check_expression(expression)
        return quantity, expression, _as_written(self._source_of(expression))


def _span(token: Token, end: int | None = None, depth: int = 0) -> st.Span:
    """The span starting at `token` (lark's offsets, line and column), to `end` if given."""
    return st.Span(token.start_pos, token.end_pos if end is None else end, token.line,
                   token.column, depth)


def _name(token: Token) -> st.Name:
    return st.Name(token.line, token.column, token.value)


def _integer(digits: str) -> str:
    """An integer node name without leading zeros (`00` is the reference node `0`)."""
    return digits.lstrip("0") or "0"


def _unquote(token: Token) -> str:
    """A string literal's text: quotes removed, `\\"` and `\\\\` unescaped."""
    return _ESCAPE.sub(r"\1", token.value[1:-1])


def _description(token: Token | None) -> str | None:
    return None if token is None else _unquote(token)


def _as_written(text: str) -> str:
    """Source text of a value with line continuations joined."""
    return _JOINED.sub(" ", text).strip()


def _quantity_text(text: str) -> str:
    """A quantity normalised: no spaces except after commas and around `=`."""
    compact = _BLANKS.sub("", _CONTINUATION.sub("", text))
    return compact.replace(",", ", ").replace("=", " = ")
