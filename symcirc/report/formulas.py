"""Equations laid out for a page: long formulas broken before `+`/`−` terms (at the top level
or inside `\\left(…\\right)` groups, closed with `\\right.` and reopened with `\\left.` across
the break), before `\\quad` remarks, and a fraction too wide for a line written as 𝒩/𝒟 with
numerator and denominator given below (or, inside a line, as 1/B·(A) so A can break).

An `Equation` is a list of LaTeX lines, each continuing the one before; templates turn it
into `multline*` (LaTeX), stacked MathML blocks (HTML) or an `aligned` block (Markdown).
"""

from __future__ import annotations

from dataclasses import dataclass

import sympy

from ..model.typeset import latex_of

WIDTH = 52.0
"""Characters of maths that fit on one line of an A4 page at 10 pt (estimated)."""

SUMMARY_WIDTH = 30.0
"""Characters of maths that fit a line of the summary's formula column (0.45 of the line, in
text style)."""

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
    parts = fraction_parts(rhs)
    if parts is not None:
        # the fraction as `rhs` writes it: its numerator and denominator in the same order
        # of terms, and no second printing of a large result
        sign, numerator_tex, denominator_tex = parts
        if max(visible_width(numerator_tex), visible_width(denominator_tex)) > width * 0.8:
            return [
                Equation((f"{lhs} = {sign}\\frac{{{NUMERATOR}}}{{{DENOMINATOR}}}",)),
                *equations(NUMERATOR, numerator_tex, None, width),
                *equations(DENOMINATOR, denominator_tex, None, width),
            ]
    elif expression is not None and expression.is_Mul:
        numerator, denominator = sympy.fraction(expression)
        if denominator != 1:
            numerator_tex, denominator_tex = latex_of(numerator), latex_of(denominator)
            if max(visible_width(numerator_tex), visible_width(denominator_tex)) > width * 0.8:
                return [
                    Equation((f"{lhs} = \\frac{{{NUMERATOR}}}{{{DENOMINATOR}}}",)),
                    *equations(NUMERATOR, numerator_tex, None, width),
                    *equations(DENOMINATOR, denominator_tex, None, width),
                ]
    return [Equation(tuple(break_lines(f"{lhs} = ", rhs, width)))]


def fraction_parts(tex: str) -> tuple[str, str, str] | None:
    """(sign, numerator, denominator) when `tex` is one `\\frac{A}{B}`, perhaps after a sign;
    else None."""
    body = tex.strip()
    sign = ""
    if body[:1] in "+-":
        sign, body = body[0] + " ", body[1:].lstrip()
    if not body.startswith("\\frac{"):
        return None
    numerator_end = _group_end(body, len("\\frac"))
    if numerator_end is None or body[numerator_end + 1:numerator_end + 2] != "{":
        return None
    denominator_end = _group_end(body, numerator_end + 1)
    if denominator_end is None or body[denominator_end + 1:].strip():
        return None
    return (sign, body[len("\\frac") + 1:numerator_end],
            body[numerator_end + 2:denominator_end])


def _group_end(tex: str, start: int) -> int | None:
    """Index of the `}` closing the brace group that opens at `tex[start]`."""
    depth = 0
    i = start
    while i < len(tex):
        c = tex[i]
        if c == "\\":
            i += 2
            continue
        if c == "{":
            depth += 1
        elif c == "}":
            depth -= 1
            if depth == 0:
                return i
        i += 1
    return None


def break_lines(head: str, rhs: str, width: float = WIDTH) -> list[str]:
    """`head + rhs` packed greedily into lines no wider than `width`, breaking only before a
    `+` or `−` outside braces (at the top level or inside `\\left…\\right` groups, which are
    closed with `\\right.` at the end of the line and reopened with `\\left.` on the next),
    before a top-level `\\quad`, or between a top-level factor and a fraction that multiplies
    it (the new line then starts with `·`); a single piece wider than a line stays whole.
    Every line is balanced, so each can be typeset (or converted to MathML) on its own."""
    lines: list[str] = []
    current = head
    current_width = visible_width(head)
    for piece, depth, product in _pieces(_open_wide_fractions(_open_wide_roots(rhs, width),
                                                              width)):
        piece_width = visible_width(piece)
        if current_width + piece_width > width and current.strip() and current != head:
            lines.append(current.rstrip() + " \\right." * depth)
            current = "\\left. " * depth + ("\\cdot " if product else "")
            current_width = 1.8 if product else 0.0
        current += piece
        current_width += piece_width
    lines.append(current.rstrip())
    return lines


def _pieces(tex: str) -> list[tuple[str, int, bool]]:
    """`tex` cut before each breakable sign, `\\quad` or top-level fraction following a
    factor: (piece, open `\\left` groups at its start, whether it is cut from the factor
    before it). Nothing is cut inside braces (fractions, sub- and superscripts) or
    environments."""
    pieces: list[tuple[str, int, bool]] = []
    product = False
    braces = 0  # braces and environments: never broken inside
    groups = 0  # open \\left…\\right groups: broken inside, closed and reopened
    start, start_groups = 0, 0
    previous = ""
    i = 0
    while i < len(tex):
        c = tex[i]
        if c == "\\":
            end = i + 1
            while end < len(tex) and tex[end].isalpha():
                end += 1
            name = tex[i + 1:end] or tex[i + 1:i + 2]
            if name in ("left", "right"):
                groups += 1 if name == "left" else -1
                end += 1  # the delimiter
                if tex[end - 1:end] == "\\":  # a delimiter given as a command (\\{, \\langle)
                    while end < len(tex) and tex[end].isalpha():
                        end += 1
                    end = max(end, i + len(name) + 3)
            elif name in ("begin", "end"):
                braces += 1 if name == "begin" else -1
            elif name == "quad" and braces == 0 and groups == 0 and i > start:
                pieces.append((tex[start:i], start_groups, product))
                start, start_groups, product = i, groups, False
            elif (name == "frac" and braces == 0 and groups == 0 and i > start
                  and (previous in ")}" or previous.isalnum())):
                pieces.append((tex[start:i], start_groups, product))
                start, start_groups, product = i, groups, True
            elif end == i + 1:
                end = i + 2  # an escaped character such as \\{ or \\,
            previous = {"left": "(", "right": ")"}.get(name, "\\")
            i = end
            continue
        if c == "{":
            braces += 1
        elif c == "}":
            braces -= 1
        elif c in "([":
            pass
        elif c in "+-" and braces == 0 and previous not in ("", "=", "+", "-", "{", "(", "^",
                                                           "_", ","):
            pieces.append((tex[start:i], start_groups, product))
            start, start_groups, product = i, groups, False
        if not c.isspace():
            previous = c
        i += 1
    pieces.append((tex[start:], start_groups, product))
    return [(p, g, m) for p, g, m in pieces if p.strip()]


def _open_wide_roots(tex: str, width: float) -> str:
    """Each `\\sqrt{A}` outside braces whose radicand is too wide for a line but could be
    broken (a noise density's sum of terms), written `\\left(A\\right)^{\\frac{1}{2}}` (the
    same value) so that A breaks."""

    def opened(i: int) -> tuple[str, int] | None:
        if not tex.startswith("\\sqrt{", i):
            return None
        end = _group_end(tex, i + len("\\sqrt"))
        if end is None:
            return None
        radicand = tex[i + len("\\sqrt") + 1:end]
        if visible_width(radicand) > width * 0.8 and len(_pieces(radicand)) > 1:
            return f"\\left({radicand}\\right)^{{\\frac{{1}}{{2}}}}", end + 1
        return None

    return _rewrite_top_level(tex, opened)


def _open_wide_fractions(tex: str, width: float) -> str:
    """Each `\\frac{A}{B}` outside braces whose numerator is too wide for a line but could be
    broken, written `\\frac{1}{B} \\left(A\\right)` (the same value) so that A breaks."""

    def opened(i: int) -> tuple[str, int] | None:
        if not tex.startswith("\\frac{", i):
            return None
        numerator_end = _group_end(tex, i + len("\\frac"))
        if numerator_end is None or tex[numerator_end + 1:numerator_end + 2] != "{":
            return None
        denominator_end = _group_end(tex, numerator_end + 1)
        if denominator_end is None:
            return None
        numerator = tex[i + len("\\frac") + 1:numerator_end]
        denominator = tex[numerator_end + 2:denominator_end]
        if (visible_width(numerator) > width * 0.8 and visible_width(denominator) <= width * 0.8
                and len(_pieces(numerator)) > 1):
            return f"\\frac{{1}}{{{denominator}}} \\left({numerator}\\right)", denominator_end + 1
        return None

    return _rewrite_top_level(tex, opened)


def _rewrite_top_level(tex: str, rewrite) -> str:
    """`tex` with each place outside braces where `rewrite(i)` gives (replacement, end)
    replaced; escaped characters are stepped over whole."""
    out = []
    i = 0
    braces = 0
    while i < len(tex):
        if braces == 0 and (found := rewrite(i)) is not None:
            replacement, i = found
            out.append(replacement)
            continue
        c = tex[i]
        if c == "\\":
            out.append(tex[i:i + 2])
            i += 2
            continue
        braces += 1 if c == "{" else -1 if c == "}" else 0
        out.append(c)
        i += 1
    return "".join(out)


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
    sub- and superscripts count three quarters, commands that print nothing count nothing."""
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
            total += 0.75 * inner
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
