"""Formula sheets: one table per circuit, several files in one sheet, LaTeX that compiles,
spreads from the tolerance analysis."""

from __future__ import annotations

import itertools
import math
import re
from pathlib import Path

from notes_support import fits_the_page, pdf_pages, pdf_text, pdflatex

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = sorted((ROOT / "examples").glob("*.circuit"))


def _divider(folder: Path) -> Path:
    source = folder / "divider.circuit"
    source.write_text(
        'title "Reference divider"\n'
        'voltage source U (in, gnd) = 5 V\n'
        'resistor R1 (in, out) = 1 kΩ ± 1 %\n'
        'resistor R2 (out, gnd) = 2 kΩ ± 1 %\n'
        'derive V(out)\n', encoding="utf-8")
    return source


def test_sheet_of_all_examples_in_markdown_and_latex(cli, tmp_path):
    import symcirc

    files = [str(e) for e in EXAMPLES]
    assert cli("sheet", *files, "-o", str(tmp_path / "sheet.md")).status == 0
    assert cli("sheet", *files, "-o", str(tmp_path / "sheet.tex")).status == 0
    md = (tmp_path / "sheet.md").read_text(encoding="utf-8")
    words = " ".join(pdf_text(pdflatex(tmp_path / "sheet.tex")).split())
    assert pdf_pages(tmp_path / "sheet.pdf") >= 1
    fits_the_page(tmp_path / "sheet.pdf")
    for example in EXAMPLES:
        circuit = symcirc.load(str(example))
        assert circuit.title in md and md.count(f"## {circuit.title}") == 1
        assert " ".join(circuit.title.split()) in words
    # one table per circuit: a header row for each
    assert md.count("| Quantity | Formula | Nominal | Unit | Spread |") == len(EXAMPLES)
    # the parameters of a design form come with it: the anti-alias filter's corner, against
    # f0 = 1/(2π·√(R1·R2·C1·C2)) of a unity-gain Sallen-Key low-pass (from memory)
    f0 = 1 / (2 * math.pi * math.sqrt(10e3 * 10e3 * 220e-9 * 100e-9))
    row = next(line for line in md.splitlines() if line.startswith("| ↳ f0 |"))
    assert re.search(r"\| ([\d.]+) Hz \| Hz \|", row).group(1) == f"{f0:.4g}"
    assert "\\quad $f_{0}$" in (tmp_path / "sheet.tex").read_text(encoding="utf-8")


def test_spread_is_the_worst_case_over_the_tolerances(cli, tmp_path):
    source = _divider(tmp_path)
    assert cli("sheet", str(source), "-o", str(tmp_path / "s.md")).status == 0
    row = next(line for line in (tmp_path / "s.md").read_text(encoding="utf-8").splitlines()
               if line.startswith("| `V(out)`"))
    # brute force over the four corners, independently of symcirc: V = U·R2/(R1 + R2)
    values = [5 * r2 / (r1 + r2) for r1, r2 in itertools.product((990, 1010), (1980, 2020))]
    nominal = 5 * 2000 / 3000
    low, high = min(values) / nominal - 1, max(values) / nominal - 1
    spread = re.search(r"\| ([−\-\d.]+) % / \+([\d.]+) % \|$", row)
    assert spread, row
    assert abs(float(spread.group(1).replace("−", "-")) / 100 - low) < 1e-4
    assert abs(float(spread.group(2)) / 100 - high) < 1e-4
    assert "3.333" in row and "| V |" in row


def test_html_sheet_holds_the_markdown_sheets_rows_as_mathml(cli, tmp_path):
    """The HTML sheet parses as HTML5 and has one row per row of the Markdown sheet, the
    same nominal values and spreads, each followed by its formula as MathML."""
    import html5lib

    files = [str(e) for e in EXAMPLES] + [str(_divider(tmp_path))]
    assert cli("sheet", *files, "-o", str(tmp_path / "s.html")).status == 0
    assert cli("sheet", *files, "-o", str(tmp_path / "s.md")).status == 0
    text = (tmp_path / "s.html").read_text(encoding="utf-8")
    tree = html5lib.parse(text, namespaceHTMLElements=False, treebuilder="etree")
    assert html5lib.HTMLParser(strict=True).parse(text) is not None
    rows = [row for row in tree.iter("tr") if row.find("td") is not None]
    values, formulas = rows[0::2], rows[1::2]
    md_rows = [line for line in (tmp_path / "s.md").read_text(encoding="utf-8").splitlines()
               if line.startswith("| ") and not line.startswith("| Quantity")]
    assert len(values) == len(formulas) == len(md_rows)
    assert len(tree.findall(".//table")) == len(files)
    for row, formula, line in zip(values, formulas, md_rows, strict=True):
        cells = ["".join(c.itertext()).strip() for c in row.findall("td")]
        md_cells = [c.strip() for c in line.strip("|").split(" | ")]
        assert cells[1] == md_cells[2].replace("**Caution:**", "Caution:")
        assert cells[3] == md_cells[4], (cells, md_cells)
        assert formula.get("class") == "formula"
        assert list(formula.iter("{http://www.w3.org/1998/Math/MathML}math"))
    divider = next(row for row in values if "".join(row.find("td").itertext()) == "V(out)"
                   and "3.333" in "".join(row.itertext()))
    # the four corners, independently of symcirc: V = U·R2/(R1 + R2)
    values = [5 * r2 / (r1 + r2) for r1, r2 in itertools.product((990, 1010), (1980, 2020))]
    low, high = (100 * (v / (5 * 2000 / 3000) - 1) for v in (min(values), max(values)))
    assert f"−{-low:.3g} % / +{high:.3g} %" in "".join(divider.itertext())


def test_html_sheet_escapes_a_hostile_title(cli, tmp_path):
    source = _divider(tmp_path)
    source.write_text(source.read_text(encoding="utf-8").replace(
        "Reference divider", "Divider <script>alert(1)</script> & co"), encoding="utf-8")
    assert cli("sheet", str(source), "-o", str(tmp_path / "s.html")).status == 0
    text = (tmp_path / "s.html").read_text(encoding="utf-8")
    assert "<script>" not in text
    assert "<h2>Divider &lt;script&gt;alert(1)&lt;/script&gt; &amp; co</h2>" in text


