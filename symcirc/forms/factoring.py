"""Design forms factored for display: a form (possibly with `∥`) as a factored ratio."""

from __future__ import annotations

import sympy

from ..algebra.factor import factor_ratio
from .printing import as_expr
from .verify import NotRational, to_ratio


def factor(expr: sympy.Expr) -> sympy.Expr:
    """`expr` (a rational function, possibly with `∥`) as a factored ratio."""
    expr = as_expr(expr)
    try:
        num, den = to_ratio(expr)
    except NotRational:
        return sympy.factor(expr)
    if any(not s.is_Symbol for s in num.ring.symbols):
        return sympy.factor(expr)
    return factor_ratio(num, den)
