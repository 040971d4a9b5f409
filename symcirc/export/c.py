"""Derived formulas as C99: `double` arguments, `double` or `double complex` results, only
<math.h> and <complex.h>; the text compiles with `gcc -std=c99 -Wall -Werror`."""

from __future__ import annotations

import textwrap
from collections.abc import Sequence

import sympy
from sympy.printing.c import C99CodePrinter

from .functions import Function, argument_lines, caution_lines, complex_steps, is_complex

RESERVED = {
    "auto", "break", "case", "char", "const", "continue", "default", "do", "double", "else",
    "enum", "extern", "float", "for", "goto", "if", "inline", "int", "long", "register",
    "restrict", "return", "short", "signed", "sizeof", "static", "struct", "switch",
    "typedef", "union", "unsigned", "void", "volatile", "while", "_Bool", "_Complex",
    "_Imaginary", "bool", "complex", "imaginary", "I", "sqrt", "csqrt", "pow", "cpow",
    "main", "NAN", "INFINITY",
}
"""C keywords and the names the generated code itself uses."""

PI = "3.14159265358979323846"
"""π as a literal: M_PI is not part of C99."""

_UNROLLED_POWER = 8
"""Integer powers up to this are written as products (exact, and valid for complex)."""


class _Printer(C99CodePrinter):
    """Powers as products or as pow/cpow and sqrt/csqrt by the base's type; π as a literal."""

    def __init__(self, complex_symbols: set[sympy.Symbol]) -> None:
        super().__init__()
        self.complex_symbols = complex_symbols

    def _print_Pi(self, expr):
        return PI

    def _print_Pow(self, expr):
        base, exp = expr.base, expr.exp
        complex_base = is_complex(base, self.complex_symbols)
        shown = self._print(base) if base.is_Atom else f"({self._print(base)})"
        if exp.is_Integer and 0 < abs(int(exp)) <= _UNROLLED_POWER:
            n = abs(int(exp))
            product = shown if n == 1 else "(" + "*".join([shown] * n) + ")"
            return product if exp > 0 else f"1.0/{product}"
        if exp in (sympy.S.Half, -sympy.S.Half):
            root = f"{'csqrt' if complex_base else 'sqrt'}({self._print(base)})"
            return root if exp > 0 else f"1.0/{root}"
        power = "cpow" if complex_base else "pow"
        return f"{power}({self._print(base)}, {self._print(sympy.Float(exp, 17))})"


def c_source(title: str, file: str, functions: list[Function], version: str,
             cautions: Sequence[str] = ()) -> str:
    """The text of a C99 source file with one function per formula, the circuit's safety
    cautions (if any) in a comment at the top."""
    uses_complex = any(f.is_complex for f in functions)
    lines = []
    if cautions:
        lines += ["/* SAFETY CAUTIONS"]
        lines += [f" * {_comment(line)}" for line in caution_lines(cautions)]
        lines += [" */", ""]
    lines += [
        f"/* Formulas of {_comment(title)}, derived by symcirc {version}",
        f" * from {_comment(file)}. One function per quantity; arguments in SI units;",
        " * a frequency response takes the angular frequency omega in rad/s (s = j*omega). */",
        "",
        "#include <math.h>",
    ]
    if uses_complex:
        lines.append("#include <complex.h>")
    for function in functions:
        lines += ["", _function_text(title, function)]
    return "\n".join(lines) + "\n"


def _function_text(title: str, function: Function) -> str:
    complex_symbols = complex_steps(function)
    printer = _Printer(complex_symbols)
    result_type = "double complex" if function.is_complex else "double"
    unit = f", in {function.unit}" if function.unit else ""
    doc = [f"/* {_comment(function.quantity)} of {_comment(title)}{unit}."]
    doc += [f" *   {_comment(line)}" for line in argument_lines(function, _engineering)]
    doc += [f" *   {_comment(line)}" for line in textwrap.wrap(function.remark, 80)]
    doc[-1] += " */"
    arguments = ", ".join(f"double {a.name}" for a in function.arguments) or "void"
    body = []
    for temporary, value in function.steps:
        kind = "double complex" if temporary in complex_symbols else "double"
        body.append(f"    const {kind} {temporary} = {printer.doprint(value)};")
    body.append(f"    return {printer.doprint(function.value)};")
    return "\n".join([*doc, f"{result_type} {function.name}({arguments})", "{", *body, "}"])


def _comment(text: str) -> str:
    """Text safe inside a C comment."""
    return text.replace("*/", "* /").replace("/*", "/ *")


def _engineering(value, unit: str) -> str:
    from ..model.units import engineering

    return engineering(value, unit)
