"""docs/language.md, the normative reference of the language: every ```circuit example is
a complete file that reads and derives what it lists, every statement keyword of the grammar
is documented, and the command line's help points to the page."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

import symcirc
from symcirc.cli import main
from symcirc.language.parser import element_rules

ROOT = Path(__file__).resolve().parents[2]
PAGE = ROOT / "docs" / "language.md"
EXAMPLES = re.findall(r"^```circuit\n(.*?)^```$", PAGE.read_text(encoding="utf-8"),
                      re.MULTILINE | re.DOTALL)


def test_the_page_has_a_worked_example_per_section():
    text = PAGE.read_text(encoding="utf-8")
    sections = re.split(r"^## ", text, flags=re.MULTILINE)[1:]
    assert len(sections) >= 14
    for section in sections:
        assert "```circuit\n" in section, section.splitlines()[0]


@pytest.mark.parametrize("number", range(len(EXAMPLES)))
def test_every_example_reads_and_derives(number, tmp_path, capsys):
    path = tmp_path / f"example{number + 1}.circuit"
    path.write_text(EXAMPLES[number], encoding="utf-8")
    circuit = symcirc.load(str(path))
    if circuit.derives:  # as `symcirc derive FILE` runs them, `where` clauses included
        assert main(["derive", str(path), "--values"]) == 0
        shown = capsys.readouterr().out
        assert shown.count(" = ") >= sum(len(d.quantities) for d in circuit.derives)


def test_every_statement_keyword_of_the_grammar_is_documented():
    # the grammar as the parser builds it: the file and the element keywords of the vocabulary
    grammar = (ROOT / "grammar" / "circuit.lark").read_text(encoding="utf-8") + element_rules()
    keywords = re.findall(r'^[A-Z_]+: "([a-z]+)"$', grammar, re.MULTILINE)
    assert {"resistor", "coupling", "block", "derive", "claim", "at"} <= set(keywords)
    text = PAGE.read_text(encoding="utf-8")
    for keyword in keywords:
        assert f"`{keyword}" in text, keyword
    # and used in an example (two-word kinds as written)
    examples = "\n".join(EXAMPLES)
    for keyword in keywords:
        assert re.search(rf"(?<![\w]){keyword}(?![\w])", examples), keyword


def test_help_names_the_language_reference(capsys):
    assert main(["--help"]) == 0
    assert "docs/language.md" in capsys.readouterr().out
