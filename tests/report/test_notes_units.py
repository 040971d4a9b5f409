"""Building blocks of notes: filters, equation layout, safe files, progress, templates."""

from __future__ import annotations

import io
import os

import pytest
import sympy
from notes_support import hand_note

from symcirc.errors import SymcircError
from symcirc.output import write_file
from symcirc.report import filters
from symcirc.report.environment import environment, render
from symcirc.report.files import format_of, output_for
from symcirc.report.formulas import break_lines, equations, top_level_terms, visible_width
from symcirc.report.note import render_note
from symcirc.report.progress import Progress


# ---------------------------------------------------------------- engineering notation
@pytest.mark.parametrize("value, unit, text", [
    # SI prefixes (SI Brochure, 9th edition, table 7): k = 1e3, M = 1e6, m = 1e-3, µ = 1e-6,
    # n = 1e-9, p = 1e-12
    (4700, "Ω", "4.7 kΩ"), (2.2e6, "Ω", "2.2 MΩ"), (4.7e-9, "F", "4.7 nF"),
    (1e-12, "F", "1 pF"), (0.0025, "V", "2.5 mV"), (2.5, "V", "2.5 V"),
    (-0.00123, "A", "−1.23 mA"), (999.96, "Ω", "1 kΩ"), (1.5e-5, "H", "15 µH"),
    (0, "V", "0 V"),
])
def test_eng_uses_si_prefixes(value, unit, text):
    assert filters.eng(value, unit) == text


def test_eng_of_pure_numbers_is_plain_only_from_0_1_to_1000():
    # a gain of 0.5 reads plainly; smaller and larger pure numbers take a prefix like any
    # other value, so one value reads the same everywhere (500 µ, never 0.0005)
    assert filters.eng(0.5) == "0.5"
    assert filters.eng(0.0123) == "12.3 m"
    assert filters.eng(-4.762e-6) == "−4.762 µ"
    assert filters.eng(None, "V") == "—"


def test_qty_writes_siunitx_units():
    assert filters.qty(4700, "Ω") == r"\qty{4.7}{\kilo\ohm}"
    assert filters.qty(1e-8, "F") == r"\qty{10}{\nano\farad}"
    assert filters.qty(0.5) == r"\num{0.5}"
    assert filters.qty(0.0005) == r"\num{500}\,\ensuremath{\mu}"  # siunitx takes no bare prefix


def test_escape_tex_keeps_every_special_character_literal():
    # the ten special characters of LaTeX (Lamport, LaTeX, 2nd ed., §2.2.1, from memory)
    # and the three that the T1 text fonts print wrongly in text mode
    text = filters.escape_tex("\\ $ & % # _ { } ~ ^ < > |")
    assert text == (r"\textbackslash{} \$ \& \% \# \_ \{ \} \textasciitilde{} "
                    r"\textasciicircum{} \textless{} \textgreater{} \textbar{}")


def test_escape_md_renders_literally_in_a_commonmark_renderer():
    from markdown_it import MarkdownIt

    text = "a_b *c* `d` [e](f) <script>x</script> & $y$ | #"
    html = MarkdownIt("commonmark").render(filters.escape_md(text))
    assert "<script>" not in html and "<em>" not in html and "<code>" not in html
    assert "&lt;script&gt;" in html and "a_b" in html and "$y$" in html


def test_mathml_is_standalone_markup():
    out = str(filters.mathml(r"\frac{R_{1}}{R_{2}}", display=True))
    assert out.startswith("<math") and 'display="block"' in out and "<mfrac>" in out


# ---------------------------------------------------------------- equation layout
def test_long_sums_break_before_top_level_signs():
    x = sympy.symbols("x0:40")
    expr = sympy.Add(*[sympy.Integer(i + 1) * x[i] * x[(i + 1) % 40] for i in range(40)])
    rhs = sympy.latex(expr)
    lines = break_lines("Q = ", rhs, width=50)
    assert len(lines) > 2
    assert "".join(lines).replace(" ", "") == ("Q = " + rhs).replace(" ", "")
    assert all(line.lstrip()[0] in "+-" for line in lines[1:])
    assert all(visible_width(line) <= 50 + 12 for line in lines)


def test_signs_inside_groups_do_not_break():
    terms = top_level_terms(r"- a + \frac{b - c}{d} - \left(e + f\right) + x^{-1}")
    assert terms == ["- a ", r"+ \frac{b - c}{d} ", r"- \left(e + f\right) ", "+ x^{-1}"]


def test_wide_fraction_is_written_with_numerator_and_denominator_apart():
    r = sympy.symbols("R1:9")
    expr = sympy.expand(sum(r) ** 3) / sympy.expand((1 + r[0] * r[1]) ** 3)
    laid = equations("Z", sympy.latex(expr), expr)
    assert laid[0].lines == (r"Z = \frac{\mathcal{N}}{\mathcal{D}}",)
    # the two parts put back together are the expression itself (checked by sympy)
    numerator, denominator = sympy.fraction(expr)
    assert laid[1].latex.startswith(r"\mathcal{N} = ") and len(laid[1].lines) > 1
    assert laid[2].latex.startswith(r"\mathcal{D} = ")
    assert sympy.simplify(numerator / denominator - expr) == 0


def _unbroken(lines: list[str]) -> str:
    """The lines put back together without the delimiters a break adds."""
    joined = " ".join(lines).replace(r"\right.", "").replace(r"\left.", "")
    return "".join(joined.split())


def test_breaks_inside_parentheses_close_and_reopen_them():
    x = sympy.symbols("x0:30")
    a, b = sympy.symbols("a b")
    expr = a * b * sympy.Add(*[sympy.Integer(i + 2) * x[i] for i in range(30)], evaluate=False)
    rhs = sympy.latex(expr)
    assert len(top_level_terms(rhs)) == 1  # nothing to break at the top level
    lines = break_lines("Q = ", rhs, width=40)
    assert len(lines) > 2
    for line in lines:  # each line typesets on its own
        assert line.count(r"\left") == line.count(r"\right")
    assert lines[0].endswith(r"\right.") and lines[1].startswith(r"\left.")
    assert _unbroken(lines) == "".join(("Q = " + rhs).split())


def test_wide_numerator_inside_a_line_is_written_as_one_over_the_denominator():
    x = sympy.symbols("x0:30")
    numerator = sympy.Add(*[sympy.Integer(i + 2) * x[i] for i in range(30)])
    rhs = r"y \quad \left(\text{remark } " + rf"\frac{{{sympy.latex(numerator)}}}{{R + 1}}" \
        + r"\right)"
    lines = break_lines("Q = ", rhs, width=40)
    assert all(line.count(r"\left") == line.count(r"\right") for line in lines)
    assert len(lines) > 2 and r"\frac{1}{R + 1}" in lines[0]
    # A/B is written (1/B)·(A): the same value
    assert _unbroken(lines) == "".join(
        ("Q = " + rhs.replace(rf"\frac{{{sympy.latex(numerator)}}}{{R + 1}}",
                              rf"\frac{{1}}{{R + 1}} \left({sympy.latex(numerator)}\right)"))
        .split())


def test_wide_fraction_given_as_latex_is_split_like_sympy_splits_it():
    r = sympy.symbols("R1:9")
    expr = sympy.expand(sum(r) ** 3) / (r[0] + r[1])
    laid = equations(r"\delta", sympy.latex(expr))  # LaTeX only, no expression
    numerator, denominator = sympy.fraction(expr)
    assert laid[0].lines == (r"\delta = \frac{\mathcal{N}}{\mathcal{D}}",)
    assert _unbroken(list(laid[1].lines)) == "".join(
        (r"\mathcal{N} = " + sympy.latex(numerator)).split())
    assert laid[2].latex == r"\mathcal{D} = " + sympy.latex(denominator)


def test_markdown_maths_is_left_whole_by_a_commonmark_renderer():
    from markdown_it import MarkdownIt

    latex = r"S^{\frac{V}{U}}_{C_{1}} = \left|H\right| \begin{matrix}a \\ b\end{matrix} x_{2}"
    text = f"| a | b |\n|---|---|\n| ${filters.math_md(latex)}$ | c |\n"
    html = MarkdownIt("commonmark").enable("table").render(text)
    assert "<em>" not in html and html.count("<td>") == 2
    assert r"\\" not in filters.math_md(latex) and r"\cr" in filters.math_md(latex)


def test_fractions_count_their_wider_part():
    assert visible_width(r"\frac{abcdef}{ab}") < visible_width("abcdef + ab")


# ---------------------------------------------------------------- files
def test_refuses_to_overwrite_the_input(tmp_path):
    source = tmp_path / "c.circuit"
    source.write_text("title \"x\"\n")
    with pytest.raises(SymcircError, match="over the input"):
        output_for(str(source), [source])
    link = tmp_path / "link.md"
    link.symlink_to(source)
    with pytest.raises(SymcircError, match="over the input"):
        output_for(str(link), [source])


def test_atomic_write_leaves_no_temporary_file(tmp_path):
    target = tmp_path / "note.md"
    target.write_text("old")
    write_file(target, b"new")
    assert target.read_bytes() == b"new"
    assert sorted(os.listdir(tmp_path)) == ["note.md"]


def test_format_from_extension_or_option(tmp_path):
    out = output_for(str(tmp_path / "n.tex"), [])
    assert format_of(out, None, ("markdown", "latex", "html")) == "latex"
    assert format_of(out, "md", ("markdown", "latex", "html")) == "markdown"
    with pytest.raises(SymcircError, match="cannot tell the format"):
        format_of(output_for(str(tmp_path / "n.txt"), []), None, ("markdown",))
    with pytest.raises(SymcircError, match="not available"):
        format_of(out, None, ("markdown",))
    assert output_for("-", []).path is None


# ---------------------------------------------------------------- progress
class _Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def test_progress_is_silent_when_not_a_terminal():
    stream = io.StringIO()
    with Progress(3, stream=stream, delay=0) as bar:
        bar.step("thevenin(out)")
        bar.tick()
    assert stream.getvalue() == ""


def test_progress_shows_after_the_delay_and_clears_its_line():
    stream = _Terminal()
    with Progress(3, stream=stream, delay=0, interval=3600) as bar:
        bar.step("thevenin(out)")
    out = stream.getvalue()
    assert "deriving 1/3 thevenin(out)" in out and out.endswith("\r\033[K")
    quiet = _Terminal()
    with Progress(3, stream=quiet, delay=3600, interval=3600) as bar:
        bar.step("gain(U, out)")
    assert quiet.getvalue() == ""


# ---------------------------------------------------------------- templates
def test_user_template_folder_overrides_the_built_in_one(tmp_path):
    (tmp_path / "note.md.j2").write_text("OWN {{ note.title | escape_md }}\n")
    text = render_note(hand_note("markdown", "A_B"), tmp_path)
    assert text == "OWN A\\_B\n"
    # templates the folder does not have still come from the package
    built_in = render_note(hand_note("latex", "A_B"), tmp_path)
    assert built_in.startswith("\\documentclass")


def test_template_errors_name_the_template(tmp_path):
    (tmp_path / "note.md.j2").write_text("line\n{% if %}\n")
    with pytest.raises(SymcircError) as err:
        render_note(hand_note("markdown"), tmp_path)
    assert err.value.line == 2 and "note.md.j2" in err.value.file
    (tmp_path / "note.md.j2").write_text("{{ note.no_such_field }}\n")
    with pytest.raises(SymcircError, match="no_such_field"):
        render_note(hand_note("markdown"), tmp_path)


def test_built_in_templates_come_from_package_data():
    env = environment()
    for name in ("note.md.j2", "note.tex.j2", "note.html.j2", "sheet.md.j2", "sheet.tex.j2"):
        assert env.get_template(name).filename.startswith("<built-in>")
    with pytest.raises(SymcircError, match="no template"):
        render(env, "../pyproject.toml")


def test_hand_note_renders_in_every_format():
    for fmt in ("markdown", "latex", "html"):
        text = render_note(hand_note(fmt))
        assert "SHA-256" in text and "symcirc-note" in text


def test_a_product_breaks_before_the_fraction_it_multiplies():
    """`U·(a/b − c/d)·Z/(Z + Rs)` with a long factor: the line breaks between the factors and
    the new one starts with `·` (a product carried over, as written by hand)."""
    x = sympy.symbols("x0:8")
    difference = sympy.latex(x[0] / (x[0] + x[1]) - x[2] / (x[2] + x[3]))
    rhs = rf"U \left({difference}\right) \frac{{x_{{4}} + x_{{5}}}}{{x_{{4}} + x_{{5}} + x_{{6}}}}"
    lines = break_lines("V = ", rhs, width=visible_width("V = " + rhs) - 5)
    assert len(lines) == 2 and lines[1].startswith(r"\cdot \frac{")
    assert _unbroken(lines).replace(r"\cdot", "") == "".join(("V = " + rhs).split())
    # no break after an operator: `a \parallel \frac{…}` stays whole
    parallel = r"a \parallel \frac{b + c}{d + e}"
    assert break_lines("Z = ", parallel, width=8) == ["Z = " + parallel]


def test_a_view_shows_the_shorter_formula_and_a_canonical_form_once():
    from symcirc.forms import Form, Parallel
    from symcirc.forms.printing import latex
    from symcirc.report.content import result_view
    from symcirc.results import Result

    r1, r2, u = sympy.symbols("R1 R2 U")
    canonical = r1 * r2 / (r1 + r2)
    parallel = Form(Parallel(r1, r2), "R1∥R2", latex(Parallel(r1, r2)), kind="structure")
    view = result_view(Result("Z(x)", canonical, "Ω", {}, form=parallel), "Z")
    assert view.design and view.formula == r"Z = R_{1} \parallel R_{2}"
    assert view.summary == (view.formula,)
    # a form that is the canonical result (printed its own way) is not shown a second time
    again = Form(canonical, "R1·R2/(R1 + R2)", r"\frac{R_{2} R_{1}}{R_{1} + R_{2}}",
                 kind="canonical")
    view = result_view(Result("Z(x)", canonical, "Ω", {}, form=again), "Z")
    assert not view.design and view.formula == f"Z = {view.canonical_latex}"
    # a long formula is given in lines that each fit the summary's column
    long = sympy.Add(*[sympy.Symbol(f"R{i}") * u for i in range(1, 16)])
    view = result_view(Result("V(x)", long, "V", {}), "V")
    assert len(view.summary) > 1 and all(visible_width(line) <= 30 for line in view.summary)
