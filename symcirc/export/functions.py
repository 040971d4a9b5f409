"""What every code writer needs: one function per derived quantity, its safe name, its
arguments (the symbols it uses, named), and its body with common subexpressions shared.
"""

from __future__ import annotations

import re
import textwrap
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from fractions import Fraction

import sympy

LAPLACE = sympy.Symbol("s")
COMMENT_WIDTH = 88
"""Width of the caution lines in a generated file's header comment."""


def caution_lines(cautions: Sequence[str]) -> list[str]:
    """The safety cautions of the circuit, wrapped for a header comment (none: empty)."""
    lines: list[str] = []
    for sentence in cautions:
        lines += textwrap.wrap(sentence, COMMENT_WIDTH, subsequent_indent="  ")
    return lines

OMEGA = "omega"
"""Name of the angular-frequency argument when `s` is replaced by `j*omega`."""


@dataclass(frozen=True)
class Argument:
    """One argument: the name in the code and the circuit symbol it stands for."""

    name: str
    symbol: str
    unit: str
    nominal: Fraction | None
    frequency: bool = False
    """True for the angular frequency that replaces `s` (s = j*omega)."""


@dataclass(frozen=True)
class Function:
    """One function to write: `name(arguments) -> value`, computed in `steps`."""

    name: str
    quantity: str
    unit: str
    arguments: tuple[Argument, ...]
    steps: tuple[tuple[sympy.Symbol, sympy.Expr], ...]
    """Common subexpressions, in order: (temporary, its value)."""
    value: sympy.Expr
    is_complex: bool
    """True when the value is complex (a frequency response)."""
    remark: str = ""
    """Said in the function's comment: why a value is a bare number, when it is."""


def natural_key(name: str) -> tuple:
    return tuple(int(p) if p.isdigit() else p for p in re.split(r"(\d+)", name))


def identifier(text: str, reserved: Iterable[str] = ()) -> str:
    """A safe identifier from a quantity's text: `thevenin(out).impedance` becomes
    `thevenin_out_impedance`, `gain(Uin, out)` becomes `gain_Uin_out`."""
    name = re.sub(r"[^0-9A-Za-z_]+", "_", text).strip("_")
    name = re.sub(r"_+", "_", name) or "quantity"
    if name[0].isdigit():
        name = "q_" + name
    while name in set(reserved):
        name += "_"
    return name


def functions(
    results: Sequence, units: dict[str, str], nominals: dict[str, Fraction],
    frequency: bool, reserved: Iterable[str],
) -> list[Function]:
    """Each result as a Function: names unique and safe for the language (`reserved` are its
    keywords and the names the code itself uses); with `frequency`, `s` becomes `j*omega`."""
    reserved = set(reserved)
    taken: set[str] = set()
    out = []
    for result in results:
        name = identifier(result.quantity.replace(" -> ", " to "), reserved)
        base, count = name, 2
        while name in taken:
            name, count = f"{base}_{count}", count + 1
        taken.add(name)
        out.append(_function(result, name, units, nominals, frequency, reserved))
    return out


def _function(result, name: str, units: dict[str, str], nominals: dict[str, Fraction],
              frequency: bool, reserved: set[str]) -> Function:
    expression = result.expression
    remark = ""
    if not result.details.get("noise_band", {}).get("exact", True):
        remark = ("A constant: the noise band has no closed form and was integrated "
                  "numerically at the nominal values, so it does not follow the parts' "
                  "values; derive it again after a change.")
        expression = sympy.Float(float(result.nominal), 17)
    is_complex = False
    omega = OMEGA
    while sympy.Symbol(omega) in expression.free_symbols:
        omega += "_"
    if frequency and LAPLACE in expression.free_symbols:
        expression = expression.xreplace({LAPLACE: sympy.I * sympy.Symbol(omega)})
        is_complex = True
    symbols = sorted((str(x) for x in expression.free_symbols), key=natural_key)
    if is_complex:  # the frequency goes last
        symbols.remove(omega)
        symbols.append(omega)
    renames, arguments = {}, []
    for symbol in symbols:
        code_name = symbol
        while code_name in reserved or code_name == name:
            code_name += "_"
        if code_name != symbol:
            renames[sympy.Symbol(symbol)] = sympy.Symbol(code_name)
        frequency_argument = is_complex and symbol == omega
        unit = "rad/s" if frequency_argument else units.get(symbol, "")
        arguments.append(Argument(code_name, symbol, unit, nominals.get(symbol),
                                  frequency_argument))
    if renames:
        expression = expression.xreplace(renames)
    used = {a.name for a in arguments} | reserved | {name}
    temporaries = (sympy.Symbol(f"t{i}") for i in range(10**6) if f"t{i}" not in used)
    steps, (value,) = sympy.cse([expression], symbols=temporaries, order="none")
    return Function(name, result.quantity, result.unit, tuple(arguments), tuple(steps), value,
                    is_complex, remark)


def argument_lines(function: Function, engineering) -> list[str]:
    """One line per argument for the documentation: `R1: Ω (nominal 1 kΩ)`."""
    lines = []
    for arg in function.arguments:
        text = f"{arg.name}: {arg.unit or 'pure number'}"
        if arg.name != arg.symbol:
            text += f" (the circuit's {arg.symbol})"
        if arg.frequency:
            text = f"{arg.name}: angular frequency in rad/s (s = j*{arg.name})"
        elif arg.nominal is not None:
            text += f", nominal {engineering(arg.nominal, arg.unit)}"
        lines.append(text)
    return lines


def is_complex(expr: sympy.Expr, complex_symbols: set[sympy.Symbol]) -> bool:
    """True when the expression may be complex: it has j, or uses a complex temporary."""
    return expr.has(sympy.I) or bool(expr.free_symbols & complex_symbols)


def complex_steps(function: Function) -> set[sympy.Symbol]:
    """The temporaries of a function that hold complex values."""
    found: set[sympy.Symbol] = set()
    for temporary, value in function.steps:
        if is_complex(value, found):
            found.add(temporary)
    return found
