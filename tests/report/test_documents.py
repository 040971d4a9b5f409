"""Notes and sheets as PDF (pdflatex) and Word documents (pandoc): what they hold, that the
programs run in a private folder that is gone afterwards, and the messages when a program is
missing or fails."""

from __future__ import annotations

import os
import re
import shutil
import stat
import subprocess
import tempfile
import zipfile
from pathlib import Path

import pytest
from notes_support import pdf_pages, pdf_text

from symcirc.output import private_folder
from symcirc.report.documents import latex_errors

ROOT = Path(__file__).resolve().parents[2]
FILTER_EXAMPLE = ROOT / "examples" / "antialias_filter.circuit"
BRIDGE_EXAMPLE = ROOT / "examples" / "bridge_adc.circuit"
TITLE = "Anti-alias filter for a 1 kS/s data-logger channel"
OMML = "http://schemas.openxmlformats.org/officeDocument/2006/math"


@pytest.fixture
def scratch(tmp_path, monkeypatch):
    """The system's temporary folder for this test: empty, so a leftover shows."""
    folder = tmp_path / "system-temporary"
    folder.mkdir()
    monkeypatch.setattr(tempfile, "tempdir", str(folder))
    return folder


def _without(tmp_path: Path, program: str) -> str:
    """A PATH on which every command of this one's folder is found but `program`."""
    found = shutil.which(program)
    assert found is not None, f"{program} is installed by .ci/system-packages"
    shadow = tmp_path / "bin"
    shadow.mkdir()
    for entry in Path(found).parent.iterdir():
        if entry.name != program and not (shadow / entry.name).exists():
            (shadow / entry.name).symlink_to(entry)
    return str(shadow)


def test_pdf_note_is_the_compiled_latex_note_and_leaves_nothing_behind(cli, tmp_path,
                                                                        scratch):
    out = tmp_path / "filter.pdf"
    run = cli("note", str(FILTER_EXAMPLE), "-o", str(out))
    assert run.status == 0, run.err
    assert out.read_bytes().startswith(b"%PDF-")
    words = " ".join(pdf_text(out).split())
    assert TITLE in words and "Summary" in words and "SHA-256" in words
    assert pdf_pages(out) >= 2
    # the schematic and the frequency response are inside, both as vector drawings
    assert "Figure 1: Schematic of the circuit" in words
    assert "Figure 2: Magnitude and phase of gain(Uin, out)" in words
    images = subprocess.run(["pdfimages", "-list", str(out)], capture_output=True, text=True,
                            check=True).stdout.splitlines()
    assert len(images) == 2  # the list's two header lines: no raster image
    # the figures went inside the document: nothing beside it, nothing left in the temp folder
    assert sorted(p.name for p in tmp_path.iterdir()) == ["filter.pdf", "system-temporary"]
    assert list(scratch.iterdir()) == []
    first = out.read_bytes()
    assert cli("note", str(FILTER_EXAMPLE), "-o", str(out)).status == 0
    assert out.read_bytes() == first  # byte-identical on a second run


def test_pdf_sheet(cli, tmp_path, scratch):
    out = tmp_path / "sheet.pdf"
    run = cli("sheet", str(FILTER_EXAMPLE), "-o", str(out))
    assert run.status == 0, run.err
    words = " ".join(pdf_text(out).split())
    assert "Formula sheet" in words and TITLE in words
    assert list(scratch.iterdir()) == []


def test_missing_pdflatex_is_a_located_message_before_any_work(cli, tmp_path, monkeypatch):
    monkeypatch.setenv("PATH", _without(tmp_path, "pdflatex"))
    out = tmp_path / "note.pdf"
    run = cli("note", str(BRIDGE_EXAMPLE), "-o", str(out))
    assert run.status == 2
    assert run.err.startswith(f"{out}: error: writing a .pdf file needs `pdflatex`")
    assert "texlive-latex-base" in run.err and "Traceback" not in run.err
    assert not out.exists()


def test_missing_pandoc_is_a_located_message(cli, tmp_path, monkeypatch):
    monkeypatch.setenv("PATH", _without(tmp_path, "pandoc"))
    out = tmp_path / "sheet.docx"
    run = cli("sheet", str(BRIDGE_EXAMPLE), "-o", str(out))
    assert run.status == 2
    assert run.err.startswith(f"{out}: error: writing a .docx file needs `pandoc`")
    assert "apt-get install pandoc" in run.err and not out.exists()


def test_a_document_goes_to_a_file_not_standard_output(cli):
    run = cli("note", str(BRIDGE_EXAMPLE), "-o", "-", "--format", "pdf")
    assert run.status == 2 and "give `-o NAME.pdf`" in run.err


def test_latex_failure_shows_the_log_lines_and_writes_nothing(cli, tmp_path, scratch):
    templates = tmp_path / "templates"
    templates.mkdir()
    (templates / "note.tex.j2").write_text(
        "\\documentclass{article}\n\\begin{document}\n{{ note.title | escape_tex }}\n"
        "\\symcircnosuchmacro\n\\end{document}\n", encoding="utf-8")
    out = tmp_path / "note.pdf"
    run = cli("note", str(BRIDGE_EXAMPLE), "-o", str(out), "--template", str(templates))
    assert run.status == 2
    assert run.err.startswith(f"{out}: error: pdflatex could not compile the note")
    assert "note: ! Undefined control sequence." in run.err
    assert re.search(r"note: l\.4 \\symcircnosuchmacro", run.err)
    assert "Traceback" not in run.err and not out.exists()
    assert list(scratch.iterdir()) == []


def test_latex_cannot_read_outside_its_folder(cli, tmp_path, scratch):
    secret = tmp_path / "secret.tex"
    secret.write_text("TOPSECRETWORD\n", encoding="utf-8")
    templates = tmp_path / "templates"
    templates.mkdir()
    (templates / "note.tex.j2").write_text(
        "\\documentclass{article}\n\\begin{document}\nx\\input{" + str(secret) +
        "}\n\\end{document}\n", encoding="utf-8")
    run = cli("note", str(BRIDGE_EXAMPLE), "-o", str(tmp_path / "n.pdf"),
              "--template", str(templates))
    assert run.status == 2 and "TOPSECRETWORD" not in run.err
    assert not (tmp_path / "n.pdf").exists()


def test_latex_errors_quotes_each_error_to_its_input_line():
    log = ("This is pdfTeX\n(./document.tex\n! Undefined control sequence.\n"
           "l.12 \\foo\n\n? \n! Emergency stop.\nl.12 \\foo\n\n"
           "!  ==> Fatal error occurred, no output PDF file produced!\n")
    assert latex_errors(log) == ("! Undefined control sequence.", "l.12 \\foo",
                                 "! Emergency stop.", "l.12 \\foo")
    assert latex_errors("only\nnoise\n") == ("only", "noise")


def test_private_folder_is_private_and_removed_even_on_error(scratch):
    with pytest.raises(RuntimeError), private_folder() as folder:
        assert stat.S_IMODE(os.stat(folder).st_mode) == 0o700
        assert folder.parent == scratch
        (folder / "inner").mkdir()
        raise RuntimeError("stop")
    assert not folder.exists() and list(scratch.iterdir()) == []


def _display_formulas(markdown: str) -> int:
    return sum(1 for line in markdown.splitlines() if line.strip() == "$$") // 2


def test_word_note_holds_one_native_equation_per_displayed_formula(cli, tmp_path, scratch):
    import docx

    out = tmp_path / "filter.docx"
    run = cli("note", str(FILTER_EXAMPLE), "-o", str(out))
    assert run.status == 0, run.err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["filter.docx", "system-temporary"]
    assert list(scratch.iterdir()) == []
    assert cli("note", str(FILTER_EXAMPLE), "-o", str(tmp_path / "filter.md")).status == 0
    markdown = (tmp_path / "filter.md").read_text(encoding="utf-8")
    document = docx.Document(str(out))
    body = document.element.body
    displayed = body.findall(f".//{{{OMML}}}oMathPara")
    assert len(displayed) == _display_formulas(markdown) > 5
    assert all(p.find(f"{{{OMML}}}oMath") is not None for p in displayed)
    # inline formulas (tables, sentences) are equations too, and no TeX was left as text
    assert len(body.findall(f".//{{{OMML}}}oMath")) > len(displayed)
    text = "\n".join(p.text for p in document.paragraphs)
    assert "\\frac" not in text and "\\mathrm" not in text and "$" not in text
    assert document.paragraphs[0].text == TITLE
    assert document.paragraphs[0].style.name == "Heading 1"
    with zipfile.ZipFile(out) as package:
        media = sorted(Path(n).suffix for n in package.namelist() if n.startswith("word/media/"))
        xml = package.read("word/document.xml").decode("utf-8")
    assert media == [".png", ".svg"]  # the frequency response and the schematic
    # the summary's links lead to bookmarks of the same names
    links = set(re.findall(r'w:anchor="([^"]+)"', xml))
    assert links and links <= set(re.findall(r'w:bookmarkStart [^>]*w:name="([^"]+)"', xml))
    assert len(document.inline_shapes) == 2
    first = out.read_bytes()
    assert cli("note", str(FILTER_EXAMPLE), "-o", str(out)).status == 0
    assert out.read_bytes() == first  # byte-identical on a second run


def test_a_document_name_with_spaces_and_markup_is_fine(cli, tmp_path):
    run = cli("note", str(FILTER_EXAMPLE), "-o", str(tmp_path / "my note [v2] (draft).docx"))
    assert run.status == 0, run.err
    with zipfile.ZipFile(tmp_path / "my note [v2] (draft).docx") as package:
        media = sorted(Path(n).suffix for n in package.namelist() if n.startswith("word/media/"))
    assert media == [".png", ".svg"]


def test_word_sheet_has_its_formulas_as_equations(cli, tmp_path):
    import docx

    out = tmp_path / "sheet.docx"
    assert cli("sheet", str(BRIDGE_EXAMPLE), "-o", str(out)).status == 0
    body = docx.Document(str(out)).element.body
    assert len(body.findall(f".//{{{OMML}}}oMath")) >= 3


def test_word_document_embeds_only_its_own_figures(cli, tmp_path):
    import docx

    secret = tmp_path / "secret.png"
    secret.write_bytes((ROOT / "tests" / "report" / "test_documents.py").read_bytes())
    templates = tmp_path / "templates"
    templates.mkdir()
    (templates / "note.md.j2").write_text(
        "# {{ note.title | escape_md }}\n\n![the secret](" + str(secret) + ")\n\n"
        "![remote](http://127.0.0.1:9/x.png)\n\n$$\nx^{2}\n$$\n", encoding="utf-8")
    out = tmp_path / "n.docx"
    run = cli("note", str(BRIDGE_EXAMPLE), "-o", str(out), "--template", str(templates))
    assert run.status == 0, run.err
    with zipfile.ZipFile(out) as package:
        assert not [n for n in package.namelist() if n.startswith("word/media/")]
    text = "\n".join(p.text for p in docx.Document(str(out)).paragraphs)
    assert "the secret" in text and "remote" in text


def test_verify_of_a_pdf_note_names_the_note_to_verify_instead(cli, tmp_path):
    out = tmp_path / "bridge.pdf"
    out.write_bytes(b"%PDF-1.5\n\xe2\x28\xa1 binary")
    run = cli("verify", str(out))
    assert run.status == 2
    assert run.err.startswith(f"{out}: error: a PDF note cannot be verified: verify the note "
                              "it was made from (`-o bridge.tex` writes it)")
