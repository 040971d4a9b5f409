"""The jinja2 filters templates use: escaping per format, numbers in engineering notation,
units, LaTeX of results and MathML for HTML.

Every user string reaches a document through one of the escape filters (HTML templates
escape automatically), so a title such as `a_b & <c>` shows literally in every format.
"""

from __future__ import annotations

from typing import Any

from markupsafe import Markup

from ..model.units import eng as units_eng
from ..model.units import eng_parts, engineering_parts, number_latex, percent_text
from ..model.units import unit_latex as units_latex

_SIUNITX_PREFIX = {
    "f": r"\femto", "p": r"\pico", "n": r"\nano", "µ": r"\micro", "m": r"\milli", "": "",
    "k": r"\kilo", "M": r"\mega", "G": r"\giga", "T": r"\tera",
}
_SIUNITX_UNIT = {
    "Ω": r"\ohm", "V": r"\volt", "A": r"\ampere", "F": r"\farad", "H": r"\henry",
    "S": r"\siemens", "Hz": r"\hertz", "W": r"\watt", "s": r"\second", "%": r"\percent",
}

# Characters that need more than a backslash in LaTeX text, and common non-ASCII symbols
# that the default pdflatex set-up does not know (Greek letters, maths signs).
_TEX_TEXT = {
    "\\": r"\textbackslash{}", "{": r"\{", "}": r"\}", "$": r"\$", "&": r"\&", "%": r"\%",
    "#": r"\#", "_": r"\_", "^": r"\textasciicircum{}", "~": r"\textasciitilde{}",
    "<": r"\textless{}", ">": r"\textgreater{}", "|": r"\textbar{}",
    "Ω": r"\ensuremath{\Omega}", "µ": r"\ensuremath{\mu}", "μ": r"\ensuremath{\mu}",
    "°": r"\textdegree{}", "±": r"\ensuremath{\pm}", "∥": r"\ensuremath{\parallel}",
    "−": r"\ensuremath{-}", "≈": r"\ensuremath{\approx}", "≤": r"\ensuremath{\le}",
    "≥": r"\ensuremath{\ge}", "×": r"\ensuremath{\times}", "·": r"\ensuremath{\cdot}\allowbreak{}",
    "→": r"\ensuremath{\to}", "∞": r"\ensuremath{\infty}", "≫": r"\ensuremath{\gg}",
    "≪": r"\ensuremath{\ll}", "∂": r"\ensuremath{\partial}", "√": r"\ensuremath{\surd}",
    "ω": r"\ensuremath{\omega}", "ζ": r"\ensuremath{\zeta}", "α": r"\ensuremath{\alpha}",
    "β": r"\ensuremath{\beta}", "σ": r"\ensuremath{\sigma}", "Δ": r"\ensuremath{\Delta}",
    "π": r"\ensuremath{\pi}", "τ": r"\ensuremath{\tau}", "²": r"\textsuperscript{2}",
    "³": r"\textsuperscript{3}", "–": "--", "—": "---", "…": r"\dots{}", "\u00a0": "~",
    "\t": " ", "\n": " ", "\r": " ",
}
_GREEK = ("alpha beta gamma delta epsilon zeta eta theta iota kappa lambda mu nu xi o pi rho "
          "varsigma sigma tau upsilon phi chi psi omega").split()
_TEX_TEXT.update({chr(0x3B1 + i): "\\ensuremath{\\" + name + "}"
                  for i, name in enumerate(_GREEK) if name != "o"})
_TEX_TEXT.update({c: "\\ensuremath{\\" + name + "}" for c, name in zip(
    "ΓΔΘΛΞΠΣΥΦΨΩ", "Gamma Delta Theta Lambda Xi Pi Sigma Upsilon Phi Psi Omega".split(),
    strict=True)})
_TEX_TEXT.update({"≠": r"\ensuremath{\neq}", "⋅": r"\ensuremath{\cdot}", "′": "'",
                  "∝": r"\ensuremath{\propto}", "∑": r"\ensuremath{\sum}",
                  "∫": r"\ensuremath{\int}",
                  "⇒": r"\ensuremath{\Rightarrow}", "←": r"\ensuremath{\leftarrow}",
                  "“": "``", "”": "''", "‘": "`", "’": "'"})
_TEX_TEXT.update({c: r"\textsuperscript{" + d + "}"  # powers of ten in the number style
                  for c, d in zip("⁰¹⁴⁵⁶⁷⁸⁹", "01456789", strict=True)})
_TEX_TEXT["⁻"] = r"\textsuperscript{\ensuremath{-}}"
_MD_SPECIAL = set("\\`*_{}[]<>#|$&~!")


def escape_tex(text: Any) -> str:
    """`text` as LaTeX text that prints literally (special characters and symbols mapped).

    Characters that pdflatex cannot typeset (beyond Latin-1 and the symbols above) are
    written as their code point, `[U+2603]`, rather than breaking the document.
    """
    return "".join(_TEX_TEXT.get(c, c if ord(c) < 0x180 else f"[U+{ord(c):04X}]")
                   for c in str(text))


def escape_tex_code(text: Any) -> str:
    """Like escape_tex, for code-like text (quantities): lines may break after `(` `,` `.`."""
    return "".join(escape_tex(c) + (r"\allowbreak{}" if c in "(,._" else "")
                   for c in str(text))


def escape_md(text: Any) -> str:
    """`text` as Markdown inline text that renders literally, safe inside a table cell.

    Markdown punctuation, `$` (maths) and `<`, `&` (raw HTML) are backslash-escaped;
    line breaks become spaces so a cell stays on one line.
    """
    out = []
    for c in str(text):
        if c in "\r\n\t":
            out.append(" ")
        elif c in _MD_SPECIAL:
            out.append("\\" + c)
        else:
            out.append(c)
    return "".join(out)


def math_md(latex: Any, line_break: str = "\\cr ") -> str:
    """LaTeX maths for between `$` signs in Markdown, written so that renderers which parse
    Markdown before the maths still leave it whole: no `_` that could open emphasis (a space
    follows each one after punctuation), `\\cr` for line breaks (`\\\\` would lose a
    backslash), `\\vert` for `|` (which would split a table cell)."""
    import re

    text = str(latex).replace("\\\\", line_break)
    text = re.sub(r"\|(?=[A-Za-z])", r"\\vert ", text).replace("|", "\\vert")
    return re.sub(r"(?<=[^A-Za-z0-9\\])_(?=\S)", "_ ", text)


def math_pandoc(latex: Any) -> str:
    """LaTeX maths between `$` signs in the Markdown pandoc turns into a Word document: as
    `math_md`, but with `\\\\` for line breaks (pandoc reads the maths as TeX, which has
    no `\\cr` in its `aligned`)."""
    return math_md(latex, "\\\\ ")


def code_md(text: Any) -> str:
    """`text` as a Markdown code span (for quantities and file names), safe in tables."""
    body = " ".join(str(text).split()).replace("|", "\\|")
    fence = "``" if "`" in body else "`"
    pad = " " if body.startswith("`") or body.endswith("`") else ""
    return f"{fence}{pad}{body}{pad}{fence}"


def engineering(value: float, digits: int = 4) -> tuple[str, str]:
    """(mantissa, prefix) of `value` in engineering notation: 4700 → ('4.7', 'k')."""
    return engineering_parts(value, digits)


def eng(value: Any, unit: str = "", digits: int = 4) -> str:
    """A number in the one display style (model.units.eng): eng(4700, 'Ω') == '4.7 kΩ',
    eng(-4.762e-6) == '−4.762 µ'. None shows as an em dash."""
    return "—" if value is None else units_eng(value, unit, digits)


def percent(value: Any, digits: int = 3) -> str:
    """A ratio as a percentage: percent(0.00125) == '0.125 %'."""
    return "—" if value is None else percent_text(value, digits)


def unit_tex(unit: str, prefix: str = "") -> str:
    """A unit (with optional prefix) in siunitx notation: unit_tex('Ω', 'k') == r'\\kilo\\ohm'."""
    tex_prefix = _SIUNITX_PREFIX.get(prefix, "")
    if unit in _SIUNITX_UNIT:
        return tex_prefix + _SIUNITX_UNIT[unit]
    return tex_prefix + (r"\text{" + escape_tex(unit) + "}" if unit else "")


def qty(value: Any, unit: str = "", digits: int = 4) -> str:
    """A number with its unit for LaTeX: qty(4700, 'Ω') == r'\\qty{4.7}{\\kilo\\ohm}'."""
    if value is None:
        return "---"
    number, prefix = eng_parts(value, unit, digits)
    if not unit or unit not in _SIUNITX_UNIT:  # a prefix alone is no siunitx unit
        rest = prefix + unit
        return r"\num{" + number + "}" + (r"\," + escape_tex(rest) if rest else "")
    return r"\qty{" + number + "}{" + unit_tex(unit, prefix) + "}"


def qty_percent(value: Any, digits: int = 3) -> str:
    """A ratio as a LaTeX percentage: qty_percent(0.001) == r'\\qty{0.1}{\\percent}'."""
    if value is None:
        return "---"
    return r"\qty{" + f"{float(value) * 100:.{digits}g}" + r"}{\percent}"


def unit_latex(unit: str) -> str:
    """A unit inside maths (`\\mathrm{k\\Omega}`-style), for MathML and Markdown maths."""
    return units_latex(unit)


def eng_latex(value: Any, unit: str = "", digits: int = 4) -> str:
    """A number with its unit as maths: eng_latex(4700, 'Ω') == r'4.7\\,\\mathrm{k\\Omega}'."""
    return r"\text{---}" if value is None else number_latex(value, unit, digits)


def mathml(latex: Any, display: bool = False) -> Markup:
    """LaTeX maths as a MathML element (HTML notes): no script, no network, stands alone."""
    from latex2mathml.converter import convert

    return Markup(convert(str(latex), display="block" if display else "inline"))


def latex(item: Any) -> str:
    """LaTeX of a result, a sympy expression, or a string that already is LaTeX."""
    if hasattr(item, "latex") and callable(item.latex):
        return item.latex()
    if isinstance(item, str):
        return item

    from ..model.typeset import latex_of

    return latex_of(item)


def width(latex: Any) -> float:
    """Estimated printed width of LaTeX maths in characters (templates decide on scaling)."""
    from .formulas import visible_width

    return visible_width(str(latex))


def layout(latex: Any, lhs: str = "", width: float | None = None) -> list:
    """Equations of `lhs = latex` laid out for a page, or for `width` characters of maths (a
    list of `formulas.Equation`); with no `lhs`, the formula alone."""
    from .formulas import WIDTH, Equation, equations

    width = WIDTH if width is None else width
    if lhs:
        return equations(lhs, str(latex), width=width)
    laid = equations("\\square", str(latex), width=width)
    first = laid[0].lines[0].replace("\\square = ", "", 1)
    return [Equation((first, *laid[0].lines[1:])), *laid[1:]]


def cell_lines(latex: Any) -> list[tuple[str, bool]]:
    """A formula for a table cell as lines that fit one (a long fraction as 𝒩/𝒟 with its
    numerator and denominator on the lines below, each broken at its signs): (LaTeX, whether
    the line continues the one before)."""
    from .content import LONG_CELL

    return [(line, i > 0) for equation in layout(latex, width=LONG_CELL)
            for i, line in enumerate(equation.lines)]


def column_lines(rhs: Any, lhs: str, width: float | None = None) -> tuple[str, ...]:
    """`lhs = rhs` as lines for the formula column of a summary or sheet (`width` characters
    of maths, by default the summary's)."""
    from .content import summary_lines
    from .formulas import SUMMARY_WIDTH

    return summary_lines(lhs, str(rhs), SUMMARY_WIDTH if width is None else width)


FILTERS = {
    "cell_lines": cell_lines,
    "column_lines": column_lines,
    "width": width,
    "layout": layout,
    "escape_tex": escape_tex,
    "escape_tex_code": escape_tex_code,
    "escape_md": escape_md,
    "code_md": code_md,
    "math_md": math_md,
    "eng": eng,
    "percent": percent,
    "qty": qty,
    "qty_percent": qty_percent,
    "unit": unit_tex,
    "unit_latex": unit_latex,
    "eng_latex": eng_latex,
    "mathml": mathml,
    "latex": latex,
}
"""Name → filter, as registered in the template environment."""

FORMAT_FILTERS = {"docx": {"math_md": math_pandoc}}
"""Filters that differ for a format made from another's templates (name → filter)."""
