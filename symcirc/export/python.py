"""Derived formulas as a Python module (scalars, `math`/`cmath`) or a numpy module (arrays).

Arguments are keyword-only: a formula with ten resistors is called with names, never by
position, so no two can be exchanged by mistake.
"""

from __future__ import annotations

import keyword
import textwrap
from collections.abc import Sequence

import sympy
from sympy.printing.numpy import NumPyPrinter
from sympy.printing.pycode import PythonCodePrinter

from .functions import Function, argument_lines, caution_lines, complex_steps
from .functions import is_complex as _is_complex

RESERVED = set(keyword.kwlist) | {"math", "cmath", "numpy"}
"""Names the generated code cannot give to an argument or a function."""


class _ScalarPrinter(PythonCodePrinter):
    """`math` for real values, `cmath.sqrt` where the radicand may be complex."""

    def __init__(self, complex_symbols: set[sympy.Symbol]) -> None:
        super().__init__({"standard": "python3", "fully_qualified_modules": True})
        self.complex_symbols = complex_symbols

    def _print_Pow(self, expr, rational=False):
        if expr.exp in (sympy.S.Half, -sympy.S.Half) and _is_complex(expr.base,
                                                                       self.complex_symbols):
            root = f"{self._module_format('cmath.sqrt')}({self._print(expr.base)})"
            return root if expr.exp > 0 else f"1/{root}"
        return super()._print_Pow(expr, rational)




def python_module(title: str, file: str, functions: list[Function], version: str,
                  numpy: bool = False, cautions: Sequence[str] = ()) -> str:
    """The text of a Python module with one function per formula, the circuit's safety
    cautions (if any) in comment lines at the top (the docstring stays the docstring)."""
    bodies, imports = [], set()
    for function in functions:
        complex_symbols = complex_steps(function)
        printer = NumPyPrinter() if numpy else _ScalarPrinter(complex_symbols)
        bodies.append(_function_text(title, function, printer))
        imports.update(printer.module_imports)
    kind = "numpy arrays or scalars" if numpy else "Python numbers"
    header = ["# SAFETY CAUTIONS", *(f"# {line}" for line in caution_lines(cautions)), ""] \
        if cautions else []
    header += [
        f'"""Formulas of {_quoted(title)}, derived by symcirc {version} from {_quoted(file)}.',
        "",
        f"One function per quantity. Arguments are keyword-only, in SI units, as {kind};",
        "a frequency response takes the angular frequency omega in rad/s (s = j*omega).",
        '"""',
        "",
    ]
    header += [f"import {module}" for module in sorted(imports)]
    return "\n".join(header) + "\n\n\n" + "\n\n\n".join(bodies) + "\n"


def _function_text(title: str, function: Function, printer) -> str:
    names = ", ".join(a.name for a in function.arguments)
    signature = f"def {function.name}(*, {names}):" if names else f"def {function.name}():"
    unit = f", in {function.unit}" if function.unit else ""
    doc = [f'    """{_quoted(function.quantity)} of {_quoted(title)}{unit}.']
    lines = argument_lines(function, _engineering)
    if function.remark:
        lines += textwrap.wrap(function.remark, 84)
    if lines:
        doc.append("")
        doc += [f"    {_quoted(line)}" for line in lines]
    doc.append('    """')
    body = [f"    {t} = {printer.doprint(v)}" for t, v in function.steps]
    body.append(f"    return {printer.doprint(function.value)}")
    return "\n".join([signature, *doc, *body])


def _quoted(text: str) -> str:
    """Text safe inside a triple-quoted docstring."""
    return text.replace("\\", "\\\\").replace('"', '\\"')


def _engineering(value, unit: str) -> str:
    from ..model.units import engineering

    return engineering(value, unit)
