"""Design notes of every bundled example, in every format: they render, the LaTeX compiles,
the HTML parses with MathML for every formula, a second run is byte-identical, figures sit
beside the note, and the command refuses unsafe outputs."""

from __future__ import annotations

import hashlib
import html
import json
import re
import shutil
from pathlib import Path

import html5lib
import pytest
from notes_support import HOSTILE, fits_the_page, last_page, pdf_pages, pdf_text, pdflatex

from symcirc.cli import main
from symcirc.report.filters import escape_md, escape_tex, escape_tex_code

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = sorted((ROOT / "examples").glob("*.circuit"))
FORMATS = {"markdown": ".md", "latex": ".tex", "html": ".html"}
MATHML = "{http://www.w3.org/1998/Math/MathML}math"


@pytest.fixture(scope="module")
def notes(tmp_path_factory) -> dict[tuple[str, str], Path]:
    """Every example's note in every format, written once for the whole module."""
    folder = tmp_path_factory.mktemp("notes")
    out = {}
    for example in EXAMPLES:
        shutil.copy(example, folder / example.name)
        for fmt, extension in FORMATS.items():
            target = folder / (example.stem + extension)
            assert main(["note", str(folder / example.name), "-o", str(target)]) == 0
            out[(example.stem, fmt)] = target
    return out


def _marker(text: str) -> dict:
    return json.loads(re.search(r"symcirc-note (\{.*\})", text).group(1))


def test_there_are_examples():
    assert len(EXAMPLES) >= 3


@pytest.mark.parametrize("example", [e.stem for e in EXAMPLES])
def test_note_renders_in_every_format(notes, example):
    import symcirc

    circuit = symcirc.load(str(ROOT / "examples" / f"{example}.circuit"))
    digest = hashlib.sha256((ROOT / "examples" / f"{example}.circuit").read_bytes()).hexdigest()
    for fmt in FORMATS:
        text = notes[(example, fmt)].read_text(encoding="utf-8")
        escape = {"markdown": escape_md, "latex": escape_tex, "html": html.escape}[fmt]
        escape_code = {"markdown": escape_md, "latex": escape_tex_code,
                       "html": html.escape}[fmt]
        marker = _marker(text)
        assert marker == {"source": f"{example}.circuit", "sha256": digest,
                          "version": symcirc.__version__, "format": fmt, "quantities": None,
                          "template": None}
        assert digest in text
        for element in circuit.elements:
            assert escape(element) in text
        for statement in circuit.derives:
            for quantity in statement.texts:
                assert escape_code(quantity) in text


@pytest.mark.parametrize("example", [e.stem for e in EXAMPLES])
def test_latex_note_compiles(notes, example):
    pdf = pdflatex(notes[(example, "latex")])
    # the PDF has as many pages as LaTeX counted up to the note's last line, and some
    assert pdf_pages(pdf) == last_page(pdf) > 0
    words = " ".join(pdf_text(pdf).split())
    assert "Sign conventions" in words and "SHA-256" in words
    fits_the_page(pdf)


def test_full_bridge_note_fits_the_page(tmp_path):
    """The strain-gauge full bridge with lead resistances: its design form is the bridge's
    (no star–delta transform), the summary gives it, and the LaTeX note fits the page."""
    circuit = tmp_path / "strain_bridge.circuit"
    shutil.copy(ROOT / "tests" / "forms" / "strain_bridge.circuit", circuit)
    note = tmp_path / "strain_bridge.tex"
    assert main(["note", str(circuit), "-o", str(note)]) == 0
    text = note.read_text(encoding="utf-8")
    summary = text.split("section*{Summary}", 1)[1].split("section*{Circuit}", 1)[0]
    assert r"\parallel" in summary and "see below" not in summary
    assert "Kennelly" not in text
    fits_the_page(pdflatex(note))


@pytest.mark.parametrize("example", [e.stem for e in EXAMPLES])
def test_html_note_parses_with_mathml_for_each_formula(notes, example):
    text = notes[(example, "html")].read_text(encoding="utf-8")
    parser = html5lib.HTMLParser(strict=False, namespaceHTMLElements=False)
    tree = parser.parse(text)
    assert not parser.errors, parser.errors[:3]
    equations = [e for e in tree.iter("div") if e.get("class") == "equation"]
    assert equations
    for equation in equations:
        lines = [d for d in equation if d.tag == "div"]
        assert lines and all(d.find(MATHML) is not None for d in lines)
    articles = list(tree.iter("article"))
    assert articles and all(a.find(".//" + MATHML) is not None for a in articles)
    # stands alone: no script, no stylesheet or image from elsewhere
    assert not list(tree.iter("script")) and not list(tree.iter("link"))
    for image in tree.iter("img"):
        assert not re.match(r"[a-z]+://", image.get("src"))


@pytest.mark.parametrize("example", [e.stem for e in EXAMPLES])
def test_markdown_maths_survives_a_commonmark_renderer(notes, example):
    """A renderer that reads Markdown before maths (CommonMark, markdown-it) must leave every
    `$…$` formula whole: no emphasis started by a `_`, no table cell split by a `|`."""
    from markdown_it import MarkdownIt

    text = notes[(example, "markdown")].read_text(encoding="utf-8")
    assert text.count("$$") % 2 == 0
    rendered = MarkdownIt("commonmark").enable("table").render(text)
    assert "<em>" not in rendered
    shown = html.unescape(re.sub(r"<[^>]+>", "", rendered))
    inline = re.findall(r"(?<![$\\])\$([^$\n]+)\$", text)
    assert inline and all(formula in shown for formula in inline)
    displayed = re.findall(r"^\$\$\n(.*?)\n\$\$$", text, re.S | re.M)
    assert displayed and all("\\\\" not in block for block in displayed)


@pytest.mark.parametrize("example", [e.stem for e in EXAMPLES])
def test_figures_are_beside_the_note(notes, example):
    for fmt in FORMATS:
        note = notes[(example, fmt)]
        text = note.read_text(encoding="utf-8")
        for reference in re.findall(r"(" + re.escape(note.stem) + r"_figures/[^)\"}\s]+)", text):
            assert (note.parent / reference).stat().st_size > 0


def test_second_run_is_byte_identical(cli, notes, tmp_path):
    for (example, fmt), note in notes.items():
        before = note.read_bytes()
        figures = {p: p.read_bytes() for p in note.parent.glob(f"{note.stem}_figures/*")}
        assert cli("note", str(note.parent / f"{example}.circuit"), "-o", str(note)).status == 0
        assert note.read_bytes() == before, (example, fmt)
        for path, data in figures.items():
            assert path.read_bytes() == data, path


def test_analyses_on_the_command_line_make_a_note_that_compiles(cli, tmp_path):
    """Loading, sensitivities and tolerance sections: their tables and figures reach the PDF."""
    note = tmp_path / "analyses.tex"
    assert cli("note", str(ROOT / "examples" / "bridge_adc.circuit"), "loading(out, Rin)",
               "sensitivities(thevenin(out).voltage)", "tolerance(gain(Uref, out))",
               "-o", str(note)).status == 0
    text = note.read_text(encoding="utf-8")
    figures = re.findall(r"\\includegraphics\[[^]]*\]\{(analyses_figures/[^}]+)\}", text)
    assert any("loading" in f for f in figures) and any("histogram" in f for f in figures)
    pdf = pdflatex(note)
    assert pdf_pages(pdf) == last_page(pdf) > 0
    words = " ".join(pdf_text(pdf).split())
    for heading in ("Loading", "Sensitivities of", "Monte Carlo", "Tolerance"):
        assert heading in words, heading


def test_standard_output_and_quantities(cli, tmp_path):
    example = ROOT / "examples" / "bridge_adc.circuit"
    status, out, _ = cli("note", str(example), "thevenin(out)", "-o", "-", "--format", "md")
    assert status == 0
    assert _marker(out)["quantities"] == ["thevenin(out)"]
    assert "thevenin(out).voltage" in out and "_figures/" not in out


def test_refuses_to_write_over_the_input(tmp_path, cli):
    source = tmp_path / "bridge.circuit"
    shutil.copy(ROOT / "examples" / "bridge_adc.circuit", source)
    before = source.read_bytes()
    run = cli("note", str(source), "-o", str(source), "--format", "md")
    assert run.status == 2
    assert "refusing to write the output over the input" in run.err
    assert source.read_bytes() == before


def test_unwritable_figures_folder_is_an_error_not_a_traceback(tmp_path, cli):
    source = tmp_path / "rc.circuit"
    source.write_text('title "RC low-pass"\nvoltage source U (in, gnd)\n'
                      'resistor R (in, o) = 1 kΩ\ncapacitor C (o, gnd) = 1 µF\nport out (o, gnd)\n'
                      'derive gain(U, out)\n', encoding="utf-8")
    (tmp_path / "rc_figures").write_text("a file where the figures folder goes")
    status, _, err = cli("note", str(source), "-o", str(tmp_path / "rc.md"))
    assert status == 2
    assert "rc_figures: error: cannot write" in err and "Traceback" not in err
    assert not (tmp_path / "rc.md").exists()


def test_bad_input_is_reported_without_traceback(tmp_path, cli):
    source = tmp_path / "bad.circuit"
    source.write_text('title "x"\nresistor R1 (a, gnd) = 10 nF\n', encoding="utf-8")
    status, _, err = cli("note", str(source), "-o", str(tmp_path / "bad.md"))
    assert status == 2
    assert re.search(r"bad\.circuit:2:\d+: error: ", err) and "Traceback" not in err
    assert not (tmp_path / "bad.md").exists()


def _hostile_circuit(folder: Path) -> Path:
    escaped = HOSTILE.replace("\\", "\\\\").replace('"', '\\"')
    source = folder / "hostile.circuit"
    source.write_text(
        f'title "{escaped}"\n'
        'voltage source U (in, gnd) = 5 V\n'
        f'resistor R1 (in, out) = 1 kΩ ± 1 % "{escaped}"\n'
        'resistor R2 (out, gnd) = 2 kΩ\n'
        'derive V(out)\n', encoding="utf-8")
    return source


def test_hostile_title_from_a_file_renders_literally(cli, tmp_path):
    source = _hostile_circuit(tmp_path)
    for extension in FORMATS.values():
        assert cli("note", str(source), "-o", str(tmp_path / f"h{extension}")).status == 0
    page = (tmp_path / "h.html").read_text(encoding="utf-8")
    tree = html5lib.parse(page, namespaceHTMLElements=False)
    assert "".join(tree.find(".//h1").itertext()) == HOSTILE
    assert not list(tree.iter("script"))
    from markdown_it import MarkdownIt

    md = MarkdownIt("commonmark").enable("table").render(
        (tmp_path / "h.md").read_text(encoding="utf-8"))
    assert "".join(html5lib.parse(md, namespaceHTMLElements=False).find(".//h1")
                   .itertext()) == HOSTILE
    assert HOSTILE in " ".join(pdf_text(pdflatex(tmp_path / "h.tex")).split())


def test_user_templates_override_through_the_command(cli, tmp_path):
    source = _hostile_circuit(tmp_path)
    templates = tmp_path / "mine"
    templates.mkdir()
    (templates / "note.md.j2").write_text(
        "{% for r in note.results %}{{ r.quantity }} = {{ r.nominal | eng(r.unit) }}\n"
        "{% endfor %}", encoding="utf-8")
    assert cli("note", str(source), "-o", str(tmp_path / "n.md"), "--template",
               str(templates)).status == 0
    # V(out) of a 1 k / 2 k divider from 5 V: 5·2/3 = 3.333 V (voltage divider rule)
    assert (tmp_path / "n.md").read_text(encoding="utf-8") == "V(out) = 3.333 V\n"


def test_cautions_for_high_voltage_and_dissipation(cli, tmp_path):
    source = tmp_path / "mains.circuit"
    source.write_text(
        'title "Mains sensing divider"\n'
        'voltage source Umains (line, gnd) = 325 V   "mains crest"\n'
        'resistor Rtop (line, sense) = 100 kΩ\n'
        'resistor Rbot (sense, gnd) = 1 kΩ\n'
        'derive V(sense)\n', encoding="utf-8")
    assert cli("note", str(source), "-o", str(tmp_path / "m.md")).status == 0
    text = (tmp_path / "m.md").read_text(encoding="utf-8")
    # independent figures: I = 325/101k; P(Rtop) = I²·100k ≈ 1.035 W; node line at 325 V
    current = 325 / 101e3
    assert current**2 * 100e3 > 0.25 and current**2 * 1e3 < 0.25
    assert "325 V DC between line and gnd" in text
    assert "Rtop dissipates 1.035 W" in text and "Rbot dissipates" not in text
    assert "local codes" in text and "licensed" in text
    # the cautions come right under the title, before the results
    assert text.index("## Cautions") < text.index("## Summary")


def test_no_caution_for_the_low_voltage_examples(notes):
    for example in ("bridge_adc",):
        assert "Caution" not in notes[(example, "markdown")].read_text(encoding="utf-8")


@pytest.mark.parametrize("example", [e.stem for e in EXAMPLES])
def test_summary_gives_a_formula_for_every_result(notes, example):
    """The summary's formula column is never empty or a reference: every row has maths."""
    heads = {"markdown": ("## Summary", "## Circuit"), "latex": ("{Summary}", "{Circuit}"),
             "html": ("<h2>Summary</h2>", "<h2>Circuit</h2>")}
    for fmt in FORMATS:
        text = notes[(example, fmt)].read_text(encoding="utf-8")
        start, end = heads[fmt]
        summary = text.split(start, 1)[1].split(end, 1)[0]
        assert "see below" not in summary
        if fmt == "markdown":
            rows = [line for line in summary.splitlines() if line.startswith("| [")]
            assert rows and all(line.split(" | ")[1].startswith("$") for line in rows)
        elif fmt == "html":
            rows = re.findall(r"<tr><td><a .*?</tr>", summary)
            assert rows and all(row.split("</td><td>")[1].count("<math") >= 1 for row in rows)
        else:
            rows = [line for line in summary.splitlines() if line.startswith("\\hyperref")]
            assert rows and all("\\fitmath" in line.split(" & ")[1] for line in rows)
