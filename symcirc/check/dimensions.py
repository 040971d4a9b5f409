"""Units of formulas: each symbol's dimension over the SI base units, and a check that every
sum adds like to like, naming the term that does not.

Dimensions are exponent vectors over (kg, m, s, A). A symbol's dimension comes from its
element kind (Ω, F, H, S, V, A; opamp gain, turns ratio and coupling are pure numbers) or
from the unit written on its parameter. A parameter written without a unit is *free*: its
dimension is unknown, unless its defining expression or the controlled source it scales
fixes it (`param tau = R1*C1` is a time; `gm` in `= gm*V(b, e)` is a conductance). A free
symbol is never reported: any term containing it is taken to fit, so a warning always means
a real mismatch.

Numbers: in an expression read as text (a claim), a number without a unit is a pure number
and one with a unit has that unit, so `1 + s*R1` is reported (`1 + s*R1*C1` is not); a value
made of plain numbers alone (`= 4k7`) takes the unit its place implies. In a sympy
expression (where units written on numbers are gone) a number standing alone as a term fits
anything.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass
from fractions import Fraction
from typing import TYPE_CHECKING

from ..errors import Location, SymcircError
from ..language import syntax
from ..language.syntax import expression_text
from ..model.circuit import Assumption, Circuit, Claim
from ..model.formula import Formula
from ..model.units import UNIT_DIMENSIONS

if TYPE_CHECKING:  # pragma: no cover
    import sympy

BASE_UNITS = ("kg", "m", "s", "A")


@dataclass(frozen=True)
class Dimension:
    """Exponents of kg, m, s and A."""

    exponents: tuple[Fraction, Fraction, Fraction, Fraction]

    def __mul__(self, other: Dimension) -> Dimension:
        return Dimension(tuple(x + y for x, y in zip(self.exponents, other.exponents, strict=True)))

    def __truediv__(self, other: Dimension) -> Dimension:
        return Dimension(tuple(x - y for x, y in zip(self.exponents, other.exponents, strict=True)))

    def __pow__(self, power: Fraction | int) -> Dimension:
        return Dimension(tuple(x * Fraction(power) for x in self.exponents))

    @property
    def dimensionless(self) -> bool:
        return not any(self.exponents)

    def __str__(self) -> str:
        return describe(self)


UNITS: dict[str, Dimension] = {name: Dimension(dim) for name, dim in UNIT_DIMENSIONS.items()}
"""Units symcirc reads and writes, by symbol (the model's table, plus spellings of results)."""
UNITS.update({"1": UNITS[""], "ohm": UNITS["Ω"], "C": UNITS["A"] * UNITS["s"],
              "rad": UNITS[""], "%": UNITS[""]})
DIMENSIONLESS = UNITS[""]
VOLT, AMPERE, OHM, SECOND = UNITS["V"], UNITS["A"], UNITS["Ω"], UNITS["s"]

LAPLACE_DIMENSION = SECOND**-1

# Names shown for dimensions, most familiar first (1/s is shown as such, not as Hz).
_SHOWN = ("Ω", "S", "F", "H", "V", "A", "W", "s")


def describe(dim: Dimension) -> str:
    """A dimension as an engineer writes it: `Ω`, `1/s`, `V/s`, `Ω²`, else SI base units."""
    if dim.dimensionless:
        return "dimensionless"
    for power in (1, -1, 2, -2, 3, -3, Fraction(1, 2), Fraction(-1, 2)):
        for name in _SHOWN:
            if UNITS[name] ** power == dim:
                return _power_text(name, power, alone=True)
    for first in _SHOWN:
        for second in _SHOWN:
            if first == second:
                continue
            for power in (1, 2, -1, -2):
                if UNITS[first] * UNITS[second] ** power == dim:
                    return f"{first}{'·' if power > 0 else '/'}{_power_text(second, abs(power))}"
    parts = [_power_text(u, e) for u, e in zip(BASE_UNITS, dim.exponents, strict=True) if e]
    return "·".join(parts)


def _power_text(unit: str, power: Fraction | int, alone: bool = False) -> str:
    if power == 1:
        return unit
    if alone and power == -1:
        return f"1/{unit}"
    return f"{unit}^{power}"


def parse_unit(text: str | None) -> Dimension | None:
    """A unit string as results carry it (`Ω`, `V/V`, `A/V`, `1/s`, `Ω·s`, `s^-1`); None when
    it cannot be read."""
    if text is None:
        return None
    text = text.strip().replace("**", "^").replace("⁻¹", "^-1").replace("²", "^2")
    text = text.replace("³", "^3").replace("*", "·").replace(" ", "·")
    if text in ("", "1", "-"):
        return DIMENSIONLESS
    result = DIMENSIONLESS
    parts = re.split(r"([·/])", text)
    for separator, token in zip(["·"] + parts[1::2], parts[0::2], strict=True):
        if token in ("", "1"):
            continue
        dim = _unit_power(token)
        if dim is None:
            return None
        result = result / dim if separator == "/" else result * dim
    return result


def _unit_power(token: str) -> Dimension | None:
    name, _, power = token.partition("^")
    if name not in UNITS:
        return None
    try:
        return UNITS[name] ** Fraction(power or 1)
    except (ValueError, ZeroDivisionError):
        return None


# ---------------------------------------------------------------- symbols


Dimensions = Mapping[str, Dimension | None]
"""Each name's dimension, None for a free symbol."""


def symbol_dimensions(circuit: Circuit) -> dict[str, Dimension | None]:
    """Every element, parameter and `s` of the circuit with its dimension (None: free)."""
    dims: dict[str, Dimension | None] = {"s": LAPLACE_DIMENSION}
    for element in circuit.elements.values():
        dims[element.name] = UNITS.get(element.unit)
    for param in circuit.parameters.values():
        dims[param.name] = parse_unit(param.unit) if param.unit else None
    # Free parameters whose dimension their use fixes; repeat while something new is learnt.
    changed = True
    while changed:
        changed = False
        for param in circuit.parameters.values():
            value = param.value_formula
            if dims[param.name] is None and value is not None and _has_symbols(value):
                found = _quiet_dimension(value, dims)
                if found is not None:
                    dims[param.name] = found
                    changed = True
        for element in circuit.elements.values():
            for control in element.controls:
                name = _symbol_name(control.coefficient_formula)
                if name is not None and dims.get(name, DIMENSIONLESS) is None:
                    wanted = UNITS[element.unit]
                    dims[name] = wanted / (VOLT if control.kind == "voltage" else AMPERE)
                    changed = True
    return dims


def _has_symbols(value: Formula) -> bool:
    if value.plain:
        return bool(value.names) or value.laplace
    return bool(value.to_sympy().free_symbols)


def _symbol_name(value: Formula) -> str | None:
    """The name when the formula is one symbol as sympy folds it (`gm`, `1*gm`, `s`)."""
    if value.plain:
        term = _term(value)
        return term[1] if term is not None and term[0] == 1 and term[1] else None
    expression = value.to_sympy()
    return expression.name if expression.is_Symbol else None


def _term(value: Formula) -> tuple[Fraction, str] | None:
    """(c, name) for a plain formula that is c·name once numbers are folded, (c, '') for a
    number; None for anything else."""
    if value.number is not None:
        return value.number, ""
    op, args = value.op, value.args
    if op in ("name", "s"):
        return Fraction(1), args[0] if op == "name" else "s"
    if op == "neg" or op == "scale":
        inner = _term(args[-1])
        sign = -1 if op == "neg" else args[0]
        return None if inner is None else (sign * inner[0], inner[1])
    if op == "^":
        return _term(args[0]) if args[1].number == 1 else None
    if op not in "+-*/":
        return None
    left, right = _term(args[0]), _term(args[1])
    if left is None or right is None or (left[1] and right[1]):
        return None
    name = left[1] or right[1]
    if op == "*":
        return left[0] * right[0], name
    if op == "/":
        return (left[0] / right[0], name) if not right[1] else None
    constant = right if left[1] else left  # a name plus a number: a name only plus 0
    return (left[0] if left[1] else (right[0] if op == "+" else -right[0]), name) \
        if constant[0] == 0 else None


def _quiet_dimension(value: Formula, dims: Dimensions) -> Dimension | None:
    try:
        return formula_dimension(value, dims)
    except DimensionMismatch:
        return None


def formula_dimension(value: Formula, dims: Dimensions) -> Dimension | None:
    """`sympy_dimension` of the formula's sympy expression, found on the formula itself
    when it is plain and its sums fit (sympy is asked for anything else, and for the
    message of a mismatch)."""
    if value.plain:
        try:
            return _plain_dimension(value, dims)
        except DimensionMismatch:
            pass
    return sympy_dimension(value.to_sympy(), dims)


def _plain_dimension(value: Formula, dims: Dimensions) -> Dimension | None:
    if value.number is not None:
        return DIMENSIONLESS
    op, args = value.op, value.args
    if op == "name":
        return dims.get(args[0])
    if op == "s":
        return dims.get("s")
    if op == "neg":
        return _plain_dimension(args[0], dims)
    if op == "scale":
        return _plain_dimension(args[1], dims)
    if op == "sqrt":
        inner = _plain_dimension(args[0], dims)
        return None if inner is None else inner ** Fraction(1, 2)
    if op in "+-":
        terms = [_Term(None if a.number is not None else _plain_dimension(a, dims), "")
                 for a in args]
        return _check_sum(terms)
    left = _plain_dimension(args[0], dims)
    if op == "^":
        return None if left is None else left ** args[1].number
    right = _plain_dimension(args[1], dims)
    if left is None or right is None:
        return None
    return left * right if op == "*" else left / right


# ---------------------------------------------------------------- expressions


class DimensionMismatch(Exception):
    """A sum of unlike terms, or an exponent that is not a pure number."""

    def __init__(self, message: str, node: syntax.Node | None = None) -> None:
        super().__init__(message)
        self.message = message
        self.node = node


@dataclass(frozen=True)
class _Term:
    """One term of a sum with its dimension, text and syntax node (when read from text)."""

    dimension: Dimension | None
    text: str
    node: syntax.Node | None = None
    plain_number: bool = False
    """A number without a unit (other than 1): it counts last when choosing the reference."""


def _check_sum(terms: list[_Term], expected: Dimension | None = None) -> Dimension | None:
    """The dimension of a sum, or DimensionMismatch naming the term that does not fit."""
    known = [t for t in terms if t.dimension is not None]
    if not known:
        return None
    reference = expected
    if reference is None:
        counts: dict[Dimension, int] = {}
        for t in known:
            counts[t.dimension] = counts.get(t.dimension, 0) + 1
        # The dimension most terms share; on a tie the first term's; plain numbers count last.
        dims_first = [t.dimension for t in known if not t.plain_number] or [known[0].dimension]
        reference = max(dims_first, key=lambda d: (counts[d], -dims_first.index(d)))
    for t in known:
        if t.dimension != reference:
            anchor = next((k for k in known if k.dimension == reference), None)
            raise DimensionMismatch(_mismatch_text(t, reference, anchor), t.node)
    return reference


def _mismatch_text(term: _Term, reference: Dimension, anchor: _Term | None) -> str:
    what = "a plain number" if term.plain_number else _in(term.dimension)
    if anchor is None:
        text = f"dimension mismatch: `{term.text}` is {what}, but {_in(reference)} is expected"
    else:
        text = (
            f"dimension mismatch: `{term.text}` is {what}, but `{anchor.text}` is "
            f"{_in(reference)}: the terms of a sum must have one dimension"
        )
    if term.plain_number and describe(reference) in UNITS:
        text += f" (write the number with its unit, e.g. `{term.text} {describe(reference)}`)"
    return text


def _in(dim: Dimension | None) -> str:
    if dim is None:
        return "of unknown dimension"
    return "dimensionless" if dim.dimensionless else f"in {describe(dim)}"


def sympy_dimension(expr: sympy.Expr, dims: Dimensions) -> Dimension | None:
    """Dimension of a sympy expression (None when it involves a free symbol)."""
    import sympy

    if expr.is_Number or expr is sympy.pi:
        return DIMENSIONLESS
    if expr.is_Symbol:
        return dims.get(expr.name)
    if expr.is_Add:
        terms = [
            _Term(None if a.is_Number else sympy_dimension(a, dims), sympy.sstr(a))
            for a in expr.args
        ]
        return _check_sum(terms)
    if expr.is_Mul:
        total = DIMENSIONLESS
        for arg in expr.args:
            dim = sympy_dimension(arg, dims)
            if dim is None:
                return None
            total = total * dim
        return total
    if expr.is_Pow:
        base = sympy_dimension(expr.base, dims)
        if expr.exp.is_Rational:
            return None if base is None else base ** Fraction(int(expr.exp.p), int(expr.exp.q))
        exponent = sympy_dimension(expr.exp, dims)
        for part, dim in ((expr.exp, exponent), (expr.base, base)):
            if dim is not None and not dim.dimensionless:
                raise DimensionMismatch(
                    f"dimension mismatch: `{sympy.sstr(part)}` is {_in(dim)}, but a power with "
                    f"exponent `{sympy.sstr(expr.exp)}` needs pure numbers"
                )
        return DIMENSIONLESS if base is not None and exponent is not None else None
    return None


def syntax_dimension(
    expr: syntax.Expr, dims: Dimensions, expected: Dimension | None = None
) -> Dimension | None:
    """Dimension of an expression as written, numbers with their units (None: free)."""
    if isinstance(expr, syntax.Binary) and expr.op in "+-":
        terms = [
            _Term(
                syntax_dimension(t, dims),
                expression_text(t),
                t,
                _plain_number(t),
            )
            for t in _sum_terms(expr)
        ]
        return _check_sum(terms, expected)
    if isinstance(expr, syntax.Number):
        return UNITS.get(expr.unit or "", DIMENSIONLESS) if expr.unit else DIMENSIONLESS
    if isinstance(expr, syntax.Name):
        if expr.name == "pi":
            return DIMENSIONLESS
        return dims.get(expr.name)
    if isinstance(expr, syntax.Voltage):
        return VOLT
    if isinstance(expr, syntax.Current):
        return AMPERE
    if isinstance(expr, syntax.Unary):
        return syntax_dimension(expr.operand, dims, expected)
    if isinstance(expr, syntax.Function):  # sqrt
        inner = syntax_dimension(expr.argument, dims)
        return None if inner is None else inner ** Fraction(1, 2)
    if isinstance(expr, syntax.Binary):
        left = syntax_dimension(expr.left, dims)
        if expr.op == "^":
            return _syntax_power(expr, left, dims)
        right = syntax_dimension(expr.right, dims)
        if left is None or right is None:
            return None
        return left * right if expr.op == "*" else left / right
    return None


def _syntax_power(expr: syntax.Binary, base: Dimension | None, dims: Dimensions):
    exponent = _number_value(expr.right)
    if exponent is not None:
        return None if base is None else base**exponent
    exp_dim = syntax_dimension(expr.right, dims)
    for part, dim in ((expr.right, exp_dim), (expr.left, base)):
        if dim is not None and not dim.dimensionless:
            raise DimensionMismatch(
                f"dimension mismatch: `{expression_text(part)}` is {_in(dim)}, but a power "
                f"with exponent `{expression_text(expr.right)}` needs pure numbers",
                part,
            )
    return DIMENSIONLESS if base is not None and exp_dim is not None else None


def _number_value(expr: syntax.Expr) -> Fraction | None:
    """The value of an exponent made of plain numbers (`2`, `-1`, `1/2`), else None."""
    if isinstance(expr, syntax.Number) and expr.unit is None:
        return expr.value
    if isinstance(expr, syntax.Unary):
        inner = _number_value(expr.operand)
        return None if inner is None else (-inner if expr.op == "-" else inner)
    if isinstance(expr, syntax.Binary) and expr.op in "+-*/":
        left, right = _number_value(expr.left), _number_value(expr.right)
        if left is None or right is None or (expr.op == "/" and right == 0):
            return None
        return {"+": left + right, "-": left - right, "*": left * right}.get(
            expr.op, left / right if right else None
        )
    return None


def _plain_number(expr: syntax.Expr) -> bool:
    """A number written without a unit, other than 1 (`1 + s*R*C` means a pure 1; `R + 100`
    most likely means 100 of R's unit)."""
    expr = _strip_sign(expr)
    return isinstance(expr, syntax.Number) and expr.unit is None and expr.value != 1


def _strip_sign(expr: syntax.Expr) -> syntax.Expr:
    while isinstance(expr, syntax.Unary):
        expr = expr.operand
    return expr


def _sum_terms(expr: syntax.Expr) -> list[syntax.Expr]:
    if isinstance(expr, syntax.Binary) and expr.op in "+-":
        right = expr.right
        if expr.op == "-":
            right = syntax.Unary(right.line, right.column, "-", right)
        return _sum_terms(expr.left) + [right]
    return [expr]


def _has_names_or_units(expr: syntax.Expr) -> bool:
    if isinstance(expr, syntax.Number):
        return expr.unit is not None
    if isinstance(expr, (syntax.Name, syntax.Voltage, syntax.Current)):
        return not (isinstance(expr, syntax.Name) and expr.name == "pi")
    if isinstance(expr, syntax.Unary):
        return _has_names_or_units(expr.operand)
    if isinstance(expr, syntax.Function):
        return _has_names_or_units(expr.argument)
    if isinstance(expr, syntax.Binary):
        return _has_names_or_units(expr.left) or _has_names_or_units(expr.right)
    return False


# ---------------------------------------------------------------- checks for callers


def check_expression(
    circuit: Circuit,
    expr: syntax.Expr | Formula | sympy.Expr,
    expected_unit: str | Dimension | None,
    location: Location | None,
    source: str | None = None,
    what: str = "the value",
) -> Dimension | None:
    """Check a user expression: its sums add like to like and it has the expected unit.

    `expr` is a syntax-tree expression (numbers keep their units, the error points at the
    offending term), or a formula of the model or a sympy expression (the error points at
    `location`; a formula is read as its sympy expression would be). `source` is the
    text `location` refers to (the circuit's source by default). Returns the dimension found
    (None when it involves a free symbol); raises SymcircError on a mismatch.
    """
    dims = symbol_dimensions(circuit)
    expected = parse_unit(expected_unit) if isinstance(expected_unit, str) else expected_unit
    text = circuit.source if source is None else source
    if isinstance(expr, Formula):
        if expr.plain and expr.number is not None and expected is not None:
            return expected
        if expr.plain:
            try:
                found = _plain_dimension(expr, dims)
                if expected is None or found is None or found == expected:
                    return found
            except DimensionMismatch:
                pass
        expr = expr.to_sympy()  # sympy's reading says what does not fit, and how
    try:
        if not isinstance(expr, syntax.Node):
            import sympy

            if expr.is_Number and expected is not None:
                return expected  # a plain number takes the unit its place implies
            found = sympy_dimension(expr, dims)
            shown = sympy.sstr(expr)
        else:
            if expected is not None and not _has_names_or_units(expr):
                return expected  # plain numbers take the unit their place implies
            found = syntax_dimension(expr, dims, expected)
            shown = expression_text(expr)
    except DimensionMismatch as err:
        raise SymcircError.at(_at(location, err.node), err.message, text) from None
    if expected is not None and found is not None and found != expected:
        message = f"dimension mismatch: `{shown}` is {_in(found)}, but {what} is {_in(expected)}"
        raise SymcircError.at(location, message, text)
    return found


def _at(location: Location | None, node: syntax.Node | None) -> Location | None:
    if node is None or location is None:
        return location
    return Location(location.file, node.line, node.column)


def check_assumption(circuit: Circuit, assumption: Assumption) -> None:
    """`big >> small` compares like with like; raise SymcircError when it does not."""
    if assumption.kind != "much_greater" or assumption.target is None:
        return
    dims = symbol_dimensions(circuit)
    big, small = dims.get(assumption.symbol), dims.get(assumption.target)
    if big is not None and small is not None and big != small:
        raise SymcircError.at(
            assumption.location,
            f"dimension mismatch: `{assumption.symbol} >> {assumption.target}` compares "
            f"{_in(big).removeprefix('in ')} with {_in(small).removeprefix('in ')}",
            circuit.source,
        )


def check_circuit(circuit: Circuit) -> None:
    """Check what elaboration leaves to this stage: the coefficients of controlled sources
    (`gm` in `= gm*V(b, e)` must make a current) and `where` clauses (`Rm >> R1` compares
    like with like). Written values of elements and parameters are checked on reading."""
    for element in circuit.elements.values():
        for control in element.controls:
            per = VOLT if control.kind == "voltage" else AMPERE
            wanted = UNITS[element.unit] / per
            what = (f"the coefficient of {'V' if per == VOLT else 'I'}(..) in "
                    f"{element.kind} {element.name}")
            try:
                check_expression(circuit, control.coefficient_formula, wanted,
                                 element.location, what=what)
            except SymcircError:
                at = _value_location(circuit, element)
                if at is None:
                    raise
                check_expression(circuit, control.coefficient_formula, wanted, at, what=what)
    for derive in circuit.derives:
        for assumption in derive.assumptions:
            check_assumption(circuit, assumption)


def _value_location(circuit: Circuit, element) -> Location | None:
    """Where the element's written value starts (for the caret), when it is written at the
    top level of the file; None otherwise (e.g. inside a block)."""
    from ..language.parser import parse_document

    if element.location is None or circuit.source is None:
        return None
    for statement in parse_document(circuit.source, element.location.file).statements:
        if (isinstance(statement, syntax.ElementStatement) and statement.value is not None
                and statement.line == element.location.line
                and statement.name.name == element.name):
            where = statement.value.expression
            return Location(element.location.file, where.line, where.column)
    return None


def claim_problem(claim: Claim, derived: sympy.Expr, unit: str,
                  dims: Dimensions) -> str | None:
    """A dimension mismatch inside a claim or against its quantity (`derived`, in `unit`),
    as a sentence; None when the dimensions agree or cannot be told."""
    try:
        if claim.written is not None:
            found = syntax_dimension(claim.written, dims)
        else:
            found = sympy_dimension(claim.expression, dims)
    except DimensionMismatch as mismatch:
        where = ""
        if mismatch.node is not None:
            where = f" (at {claim.location.file}:{mismatch.node.line}:{mismatch.node.column})"
        return mismatch.message + where
    try:
        expected = sympy_dimension(derived, dims)
    except DimensionMismatch:
        expected = None
    if expected is None:
        expected = parse_unit(unit) if unit else None
    if found is None or expected is None or found == expected:
        return None
    claimed = "dimensionless" if found.dimensionless else f"in {describe(found)}"
    wanted = "dimensionless" if expected.dimensionless else f"in {describe(expected)}"
    return f"wrong dimension: the claim is {claimed}, but {claim.quantity_text} is {wanted}"
