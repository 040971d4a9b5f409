"""User text renders literally in every format: a title full of LaTeX, Markdown and HTML
specials comes out character for character (checked with a CommonMark renderer, pdflatex +
pdftotext, and an HTML5 parser), and never as markup."""

from __future__ import annotations

import html5lib
import pytest
from markdown_it import MarkdownIt
from notes_support import HOSTILE, hand_note, pdf_text, pdflatex

from symcirc.report.note import render_note

MATHML = "{http://www.w3.org/1998/Math/MathML}"


def _html_texts(text: str, tag: str) -> list[str]:
    tree = html5lib.parse(text, namespaceHTMLElements=False)
    return ["".join(e.itertext()) for e in tree.iter(tag)]


def test_markdown_title_is_literal():
    text = render_note(hand_note("markdown"))
    html = MarkdownIt("commonmark").enable("table").render(text)
    assert _html_texts(html, "h1") == [HOSTILE]
    assert not any(e.tag == "script" for e in html5lib.parse(
        html, namespaceHTMLElements=False).iter())
    # the description and the notes are user text too
    assert _html_texts(html, "li").count(HOSTILE) >= 2


def test_html_title_is_literal():
    text = render_note(hand_note("html"))
    assert _html_texts(text, "h1") == [HOSTILE]
    assert _html_texts(text, "title") == [HOSTILE]
    tree = html5lib.parse(text, namespaceHTMLElements=False)
    assert not any(e.tag == "script" for e in tree.iter())


def test_word_title_is_literal(tmp_path):
    import docx

    from symcirc.report.documents import document

    out = tmp_path / "hostile.docx"
    out.write_bytes(document("docx", render_note(hand_note("docx")), (), out))
    paragraphs = [p.text for p in docx.Document(str(out)).paragraphs]
    assert paragraphs[0] == HOSTILE
    assert sum(HOSTILE in p for p in paragraphs) >= 3  # the description and notes too


def test_latex_title_is_literal(tmp_path):
    tex = tmp_path / "hostile.tex"
    tex.write_text(render_note(hand_note("latex")), encoding="utf-8")
    words = " ".join(pdf_text(pdflatex(tex)).split())
    assert HOSTILE in words


@pytest.mark.parametrize("fmt", ["markdown", "latex", "html"])
def test_marker_is_one_line_json(fmt):
    import json
    import re

    text = render_note(hand_note(fmt))
    found = re.findall(r"(?:<!--|%) symcirc-note (\{.*\})(?: -->)?$", text, re.M)
    assert len(found) == 1 and json.loads(found[0])["format"] == fmt
