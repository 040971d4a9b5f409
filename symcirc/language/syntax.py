"""The syntax tree: typed dataclasses built by the transformer, each carrying line and column.

Nothing here is evaluated; elaboration (`symcirc.model.elaborate`) gives it meaning.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction


@dataclass(frozen=True)
class Node:
    """Base of every syntax-tree node: 1-based line and column where it starts."""

    line: int
    column: int


# ---------------------------------------------------------------- expressions


@dataclass(frozen=True)
class Span:
    """Where a piece of an expression is written, parentheses around it included: offsets
    into the source (`source[start:end]`), the line and column it starts at, and how many
    levels of operators, calls and parentheses it nests (to refuse runaway nesting)."""

    start: int
    end: int
    line: int
    column: int
    depth: int = 0


@dataclass(frozen=True)
class Spanned(Node):
    """A node that knows where it is written (set by the transformer from lark's tokens;
    None for nodes made up elsewhere). Not part of equality: `(x)` equals `x`."""

    span: Span | None = field(default=None, kw_only=True, compare=False, repr=False)


@dataclass(frozen=True)
class Number(Spanned):
    """A number literal, prefixes and RKM code decoded: `10k`, `4k7`, `2.5E6`, `10 kΩ`."""

    value: Fraction
    unit: str | None
    """Normalised SI unit written after it (`Ω`, `F`, `H`, `S`, `V`, `A`, `Hz`, `W`, `s`)."""
    text: str
    """The literal as written, e.g. `4k7` or `10 kΩ`."""


@dataclass(frozen=True)
class Name(Spanned):
    """A name in an expression: a parameter, an element, `s`, `pi`, or (in quantities) a node
    or port. Integer node names (`V(3)`) are Names too, with the digits as `name`."""

    name: str


@dataclass(frozen=True)
class Voltage(Spanned):
    """`V(x)` or `V(x, y)` inside an expression (x may be a port)."""

    nodes: tuple[Name, ...]


@dataclass(frozen=True)
class Current(Spanned):
    """`I(E)` inside an expression: the current through element E."""

    element: Name


@dataclass(frozen=True)
class Function(Spanned):
    """`sqrt(x)` (the only function of the language)."""

    name: str
    argument: Expr


@dataclass(frozen=True)
class Unary(Spanned):
    """`-x` or `+x`."""

    op: str
    operand: Expr


@dataclass(frozen=True)
class Binary(Spanned):
    """`a + b`, `a - b`, `a * b`, `a / b`, `a ^ b` (`**` is read as `^`)."""

    op: str
    left: Expr
    right: Expr


Expr = Number | Name | Voltage | Current | Function | Unary | Binary


@dataclass(frozen=True)
class Tolerance(Spanned):
    """`± 1 %`, `+- 5 Ω`, `+80 % -20 %`. Numbers are the magnitudes as written."""

    plus: Number
    minus: Number
    percent: bool
    """True when written in %; then the numbers are percentages (1 for 1 %)."""


@dataclass(frozen=True)
class Value(Node):
    """`= EXPRESSION [TOLERANCE] [at FREQUENCY]`."""

    expression: Expr
    tolerance: Tolerance | None
    text: str
    """The value as written (without the `=` and the frequency), for tables."""
    frequency: Number | Name | None = None
    """`at 50 Hz` or `at f`: the frequency of a source given as a sinusoid's peak amplitude."""
    corner: Number | Name | None = None
    """`corner 10 Hz` or `corner fc`: the 1/f corner of a noise density."""


# ---------------------------------------------------------------- quantities


@dataclass(frozen=True)
class Equation(Spanned):
    """`QUANTITY = EXPRESSION` inside a quantity's arguments (`solve(gain(U, out) = -10, Rf)`)."""

    left: Quantity
    right: Expr


@dataclass(frozen=True)
class Quantity(Spanned):
    """A quantity: `V(x)`, `V(x, y)`, `I(E)`, `thevenin(out)`, `thevenin(out).impedance`,
    `gain(Ub, out)`, `twoport(p1, p2).z21`, `sensitivity(Q, x)`, ...

    Arguments are quantities, names (nodes, ports, elements, symbols), other expressions
    (`loading(out, 10 kΩ)`), or equations.
    """

    name: str
    args: tuple[Quantity | Expr | Equation, ...]
    attribute: str | None
    text: str
    """The quantity normalised: single spaces after commas, no other spaces (`gain(Ub, out)`)."""


# ---------------------------------------------------------------- statements


@dataclass(frozen=True)
class Title(Node):
    text: str


@dataclass(frozen=True)
class Typeset(Node):
    """`typeset NAME "LaTeX"`: the form in which a name is set in formulas."""

    name: Name
    form: str
    form_column: int
    """Column of the quoted form (errors point at it)."""


@dataclass(frozen=True)
class Param(Node):
    name: Name
    value: Value | None
    description: str | None


@dataclass(frozen=True)
class ElementStatement(Node):
    """Every element kind, sources, opamp, transformer and coupling.

    `kind` is one of: resistor capacitor inductor conductance impedance admittance
    `voltage source` `current source` opamp transformer coupling.
    `terminals` are node names (for `coupling`, the two inductor names). A transformer's
    `(p1, n1; p2, n2)` is given as four terminals.
    """

    kind: str
    name: Name
    terminals: tuple[Name, ...]
    value: Value | None
    description: str | None


@dataclass(frozen=True)
class PortStatement(Node):
    name: Name
    terminals: tuple[Name, ...]
    description: str | None


@dataclass(frozen=True)
class Rename(Node):
    """`Ra = R1` in an instance's `with` list."""

    inner: Name
    outer: Name


@dataclass(frozen=True)
class Instance(Node):
    """`BLOCK NAME (nodes) [with A = X, B = Y]`."""

    block: Name
    name: Name
    terminals: tuple[Name, ...]
    renames: tuple[Rename, ...]


@dataclass(frozen=True)
class Block(Node):
    """`block NAME (terminals) ... end`."""

    name: Name
    terminals: tuple[Name, ...]
    body: tuple[Statement, ...]
    depth: int = field(default=1, kw_only=True, repr=False)
    """Levels of blocks, itself included (the transformer refuses runaway nesting)."""


@dataclass(frozen=True)
class Assumption(Node):
    """`X -> oo`, `X -> 0`, `A >> B`, `B << A` (stored with the big one first)."""

    kind: str
    """'limit' or 'much_greater'."""
    symbol: Name
    """limit: the symbol; much_greater: the big one."""
    target: Name | Number | None
    """limit: `oo` (Name) or `0` (Number); much_greater: the small one (Name)."""


@dataclass(frozen=True)
class DeriveStatement(Node):
    quantities: tuple[Quantity, ...]
    assumptions: tuple[Assumption, ...]


@dataclass(frozen=True)
class ClaimStatement(Node):
    quantity: Quantity
    expression: Expr
    text: str
    """The claimed expression as written."""


@dataclass(frozen=True)
class Temperature(Node):
    """`temperature 27 °C` or `temperature 300 K`: the temperature of thermal noise."""

    value: Number


@dataclass(frozen=True)
class Noiseless(Node):
    """`noiseless R1, R2`: parts left out of the noise analyses."""

    names: tuple[Name, ...]


@dataclass(frozen=True)
class OpampDensity(Node):
    """`en = 4 nV/√Hz corner 10 Hz` inside an opamp's noise statement."""

    which: Name
    """`en` (input voltage noise) or `in` (current noise of each input)."""
    value: Value


@dataclass(frozen=True)
class OpampNoise(Node):
    """`noise U1 en = 4 nV/√Hz corner 10 Hz, in = 1 pA/√Hz`."""

    opamp: Name
    densities: tuple[OpampDensity, ...]


Statement = (
    Title | Param | ElementStatement | PortStatement | Instance | Block | DeriveStatement
    | ClaimStatement | Typeset | Temperature | Noiseless | OpampNoise
)


@dataclass(frozen=True)
class Document:
    """A whole file: its statements in order."""

    file: str
    source: str
    statements: tuple[Statement, ...]


_PRECEDENCE = {"+": 1, "-": 1, "*": 2, "/": 2, "^": 4}


def expression_text(expr: Expr, parent: int = 0) -> str:
    """An expression of the syntax tree written back as text (for messages)."""
    if isinstance(expr, Number):
        return expr.text
    if isinstance(expr, Name):
        return expr.name
    if isinstance(expr, Voltage):
        return "V(" + ", ".join(n.name for n in expr.nodes) + ")"
    if isinstance(expr, Current):
        return f"I({expr.element.name})"
    if isinstance(expr, Function):
        return f"{expr.name}({expression_text(expr.argument)})"
    if isinstance(expr, Unary):
        text = expr.op + expression_text(expr.operand, 3)
        return f"({text})" if parent >= 2 else text
    if isinstance(expr, Binary):
        own = _PRECEDENCE[expr.op]
        right_level = own + 1 if expr.op in "-/" else own
        if expr.op == "^":
            left, right = expression_text(expr.left, own + 1), expression_text(expr.right, own)
        else:
            left, right = expression_text(expr.left, own), expression_text(expr.right, right_level)
        joint = f"{left}^{right}" if expr.op == "^" else f"{left} {expr.op} {right}"
        if expr.op in "*/":
            joint = f"{left}{expr.op}{right}"
        return f"({joint})" if own < parent else joint
    return str(expr)
