"""Equations laid out for a page: long formulas broken before top-level `+`/`−` terms, and a
fraction too wide for a line written as 𝒩/𝒟 with numerator and denominator given below.

An `Equation` is a list of LaTeX lines, each continuing the one before; templates turn it
into `multline*` (LaTeX), stacked MathML blocks (HTML) or an `aligned` block (Markdown).
"""

from __future__ import annotations

from dataclasses import dataclass

import sympy

WIDTH = 58.0
"""Characters of maths that fit on one line of an A4 page at 10 pt (estimated)."""

NUMERATOR = r"\mathcal{N}"
DENOMINATOR = r"\mathcal{D}"


@dataclass(frozen=True)
class Equation:
    """One displayed equation: `lines[0]` holds the left side; later lines continue it."""

    lines: tuple[str, ...]

    @property
    def latex(self) -> str:
        """The equation on one line (Markdown, MathML and tests)."""
        return " ".join(self.lines)


def equations(lhs: str, rhs: str, expression: sympy.Expr | None = None,
              width: float = WIDTH) -> list[Equation]:
    """`lhs = rhs` laid out within `width`; with `expression` (the sympy value of `rhs`), a
    fraction too wide for a line becomes `lhs = 𝒩/𝒟` followed by `𝒩 = …` and `𝒟 = …`."""
    if visible_width(rhs) + visible_width(lhs) + 2 <= width:
        return [Equation((f"{lhs} = {rhs}",))]
    if expression is not None and expression.is_Mul:
        numerator, denominator = sympy.fraction(expression)
        if denominator != 1 and max(_too_wide(numerator, width), _too_wide(denominator, width)):
            return [
                Equation((f"{lhs} = \\frac{{{NUMERATOR}}}{{{DENOMINATOR}}}",)),
                *equations(NUMERATOR, sympy.latex(numerator), None, width),
                *equations(DENOMINATOR, sympy.latex(denominator), None, width),
            ]
    return [Equation(tuple(break_lines(f"{lhs} = ", rhs, width)))]


def _too_wide(expression: sympy.Expr, width: float) -> bool:
    return visible_width(sympy.latex(expression)) > width * 0.8


def break_lines(head: str, rhs: str, width: float = WIDTH) -> list[str]:
    """`head + rhs` packed greedily into lines no wider than `width`, breaking only before a
    top-level `+` or `−`; a single term wider than a line stays whole."""
    lines: list[str] = []
    current = head
    current_width = visible_width(head)
    for term in top_level_terms(rhs):
        term_width = visible_width(term)
        if current_width + term_width > width and current.strip() and current != head:
            lines.append(current.rstrip())
            current, current_width = "", 0.0
        current += term
        current_width += term_width
    lines.append(current.rstrip())
    return lines


def top_level_terms(tex: str) -> list[str]:
    """Split LaTeX at `+` and `-` outside braces, brackets, `\\left…\\right` pairs and
    environments (`\\begin…\\end`, such as matrices);
    each term after the first starts with its sign."""
    terms: list[str] = []
    depth = 0
    start = 0
    i = 0
    previous = ""  # last significant character, to tell a binary sign from a unary one
    while i < len(tex):
        c = tex[i]
        if c == "\\":
            name_end = i + 1
            while name_end < len(tex) and tex[name_end].isalpha():
                name_end += 1
            name = tex[i + 1:name_end] or tex[i + 1:i + 2]
            if name in ("left", "right", "begin", "end"):
                depth += 1 if name in ("left", "begin") else -1
                if name in ("left", "right"):
                    name_end += 1  # the delimiter after \left / \right
            elif name_end == i + 1:
                name_end = i + 2  # an escaped character such as \{ or \,
            previous = "\\"
            i = name_end
            continue
        if c in "{([":
            depth += 1
        elif c in "})]":
            depth -= 1
        elif c in "+-" and depth == 0 and previous not in ("", "=", "+", "-", "{", "(", "^", "_"):
            terms.append(tex[start:i])
            start = i
        if not c.isspace():
            previous = c
        i += 1
    terms.append(tex[start:])
    return [t for t in terms if t.strip()]


_NO_WIDTH = {"left", "right", "mathrm", "operatorname", "mathit", "mathbf", "mathcal",
             "text", "displaystyle", "limits", "big", "Big", "bigg", "Bigg"}
_SPACES = {",": 0.3, ";": 0.5, ":": 0.4, "quad": 1.0, "qquad": 2.0, " ": 0.3, "!": -0.2}


def visible_width(tex: str) -> float:
    """Rough printed width of LaTeX maths in characters: fractions count their wider part,
    sub- and superscripts count less, commands that print nothing count nothing."""
    width, _ = _width(tex, 0)
    return width


def _width(tex: str, i: int) -> tuple[float, int]:
    """Width of the sequence starting at `i` up to the closing brace (exclusive) or the end."""
    total = 0.0
    while i < len(tex):
        c = tex[i]
        if c == "}":
            return total, i
        if c == "{":
            inner, i = _width(tex, i + 1)
            total += inner
            i += 1
        elif c in "^_":
            inner, i = _argument(tex, i + 1)
            total += 0.6 * inner
        elif c == "\\":
            j = i + 1
            while j < len(tex) and tex[j].isalpha():
                j += 1
            name = tex[i + 1:j] or tex[i + 1:i + 2]
            i = j if j > i + 1 else i + 2
            if name == "frac":
                top, i = _argument(tex, i)
                bottom, i = _argument(tex, i)
                total += max(top, bottom) + 0.5
            elif name in ("left", "right"):
                i += 1
                total += 0.5
            elif name in _SPACES:
                total += _SPACES[name]
            elif name not in _NO_WIDTH:
                total += 1.0
        elif c in "+-=<>":
            total += 1.8  # an operator with its spacing
            i += 1
        elif c.isspace():
            i += 1
        else:
            total += 1.0
            i += 1
    return total, i


def _argument(tex: str, i: int) -> tuple[float, int]:
    """Width of one argument at `i` (a brace group or a single character) and where it ends."""
    while i < len(tex) and tex[i].isspace():
        i += 1
    if i < len(tex) and tex[i] == "{":
        width, end = _width(tex, i + 1)
        return width, end + 1
    if i < len(tex) and tex[i] == "\\":
        j = i + 1
        while j < len(tex) and tex[j].isalpha():
            j += 1
        return 1.0, max(j, i + 2)
    return (1.0, i + 1) if i < len(tex) else (0.0, i)
