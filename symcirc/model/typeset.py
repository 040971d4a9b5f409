"""How symbol names are typeset in LaTeX, in one place for results, forms and notes.

A name made of one letter and a lowercase word, with optional digits after it (`Rin`,
`Uref`, `Rs1`, `gm`), is a quantity with a descriptive subscript and is set the way
ISO 80000-2 writes such subscripts: the letter italic, the word upright (`R_{\\mathrm{in}}`).
Every other name (`R1`, `omega_0`, `alpha`, `A0`) is set as sympy sets it (`R_{1}`,
`\\omega_{0}`).
"""

from __future__ import annotations

import re
from functools import lru_cache

import sympy
from sympy.printing.latex import greek_letters_set

_DESCRIPTIVE = re.compile(r"([A-Za-z])([a-z]+)(\d*)")


@lru_cache(maxsize=4096)
def symbol_latex(name: str) -> str:
    """LaTeX of a symbol name: `Rin` → `R_{\\mathrm{in}}`, `R1` → `R_{1}`."""
    match = _DESCRIPTIVE.fullmatch(name)
    if match:
        letter, word, digits = match.groups()
        if (letter + word).lower() not in greek_letters_set and name.lower() not in (
            "pi", "oo"
        ):
            return rf"{letter}_{{\mathrm{{{word}}}{digits}}}"
    return sympy.latex(sympy.Symbol(name))


def latex_of(expr: sympy.Basic) -> str:
    """sympy's LaTeX of an expression, with its symbols typeset by `symbol_latex`."""
    names = {s: symbol_latex(s.name) for s in getattr(expr, "free_symbols", ())
             if isinstance(s, sympy.Symbol)}
    return sympy.latex(expr, symbol_names=names)
