"""The parallel operator `R1∥R2` as a sympy object that keeps its shape until asked to expand.

Design forms are sympy trees; `Parallel` is the one node of our own. It never evaluates by
itself (so `R1∥R2 + R3∥R4` stays readable); `expand_parallel` turns it into the ratio.
"""

from __future__ import annotations

import sympy
from sympy.printing.precedence import PRECEDENCE


class Parallel(sympy.Function):
    """`Parallel(Z1, Z2, ...)`: impedances in parallel, 1/(1/Z1 + 1/Z2 + ...)."""

    precedence = (PRECEDENCE["Add"] + PRECEDENCE["Mul"]) // 2
    """Binds tighter than +, looser than ·: `R1∥R2 + R3`, `U·(R1∥R2)`."""

    @classmethod
    def eval(cls, *args: sympy.Expr):
        if any(isinstance(a, Parallel) for a in args):  # R1∥(R2∥R3) is R1∥R2∥R3
            flat: list[sympy.Expr] = []
            for a in args:
                flat.extend(a.args if isinstance(a, Parallel) else (a,))
            return cls(*flat)
        if len(args) == 1:
            return args[0]
        return None

    def doit(self, **hints) -> sympy.Expr:
        operands = [a.doit(**hints) if hints.get("deep", True) else a for a in self.args]
        return combine(operands)

    def _latex(self, printer, exp: str | None = None) -> str:
        text = r" \parallel ".join(_operand_latex(printer, a) for a in self.args)
        if exp is not None:  # sympy's printer hands a power of a function its exponent
            return r"\left(" + text + r"\right)^{" + exp + "}"
        return text

    def _sympystr(self, printer) -> str:
        return "∥".join(printer.parenthesize(a, PRECEDENCE["Mul"] + 1) for a in self.args)


def combine(operands: list[sympy.Expr]) -> sympy.Expr:
    """The value of operands in parallel: `Z1·Z2/(Z1 + Z2)` for two, `1/Σ(1/Zk)` for more."""
    if len(operands) == 2:
        a, b = operands
        return a * b / (a + b)
    return 1 / sympy.Add(*[1 / a for a in operands])


def expand_parallel(expr: sympy.Expr) -> sympy.Expr:
    """`expr` with every `∥` replaced by its value (a plain sympy expression)."""
    if not expr.has(Parallel):
        return expr
    return expr.replace(lambda e: isinstance(e, Parallel), lambda e: combine(list(e.args)))


def _operand_latex(printer, operand: sympy.Expr) -> str:
    text = printer._print(operand)
    if operand.is_Add or (operand.is_Mul and not _is_fraction(operand)):
        return r"\left(" + text + r"\right)"
    return text


def _is_fraction(expr: sympy.Expr) -> bool:
    """True when LaTeX shows `expr` as one \\frac (which needs no brackets)."""
    numer, denom = sympy.fraction(expr)
    return denom != 1 and not expr.could_extract_minus_sign()
