"""How symbol names are typeset in LaTeX, in one place for results, forms and notes.

A name made of one letter and a lowercase word, possibly with digits (`Rin`, `Uref`, `Rs1`,
`gm`, `R_th`, `R4t`), is a quantity with a descriptive subscript and is set the way
ISO 80000-2 writes such subscripts: the letter italic, the word upright (`R_{\\mathrm{in}}`).
Every other name (`R1`, `omega_0`, `alpha`, `A0`) is set as sympy sets it (`R_{1}`,
`\\omega_{0}`).
"""

from __future__ import annotations

import re
from functools import lru_cache

import sympy
from sympy.printing.latex import greek_letters_set

_DESCRIPTIVE = re.compile(r"([A-Za-z])_?([0-9a-z]*[a-z][0-9a-z]*)")


@lru_cache(maxsize=4096)
def symbol_latex(name: str) -> str:
    """LaTeX of a symbol name: `Rin` → `R_{\\mathrm{in}}`, `R_th` → `R_{\\mathrm{th}}`,
    `R4t` → `R_{4\\mathrm{t}}`, `R1` → `R_{1}`."""
    match = _DESCRIPTIVE.fullmatch(name)
    if match and not _left_to_sympy(name, *match.groups()):
        letter, word = match.groups()
        subscript = re.sub(r"[a-z]+", lambda m: rf"\mathrm{{{m.group(0)}}}", word)
        return rf"{letter}_{{{subscript}}}"
    return sympy.latex(sympy.Symbol(name))


def _left_to_sympy(name: str, letter: str, word: str) -> bool:
    """Greek names (`alpha`, `omega0`), the constants, and one-letter subscripts written
    with `_` (`V_a`: a node's voltage, set like the node names) keep sympy's setting."""
    head = (letter + word).rstrip("0123456789").lower()
    return (head in greek_letters_set or head in ("pi", "oo")
            or ("_" in name and len(word) == 1))


def latex_of(expr: sympy.Basic) -> str:
    """sympy's LaTeX of an expression, with its symbols typeset by `symbol_latex`."""
    names = {s: symbol_latex(s.name) for s in getattr(expr, "free_symbols", ())
             if isinstance(s, sympy.Symbol)}
    return sympy.latex(expr, symbol_names=names)
