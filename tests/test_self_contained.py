"""No text file of the project names a file or a page outside it: the language reference is
docs/language.md, and nothing points at planning pages, issue numbers or absolute paths of
the machine it was written on."""

from __future__ import annotations

import re
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SKIPPED = {".git", ".venv", "build", "dist", "__pycache__", ".pytest_cache", ".ruff_cache",
           ".hypothesis"}
# written in pieces so that this file does not match itself
OUTSIDE = re.compile("|".join([
    r"\.\./" + "shared",
    "shared" + r"/[\w.-]+\.md",
    r"\b" + "issue" + r"s? ?#?\d+",
    r"\(" + "issue" + r"\b",
    "/" + "work" + "/",
]), re.IGNORECASE)


def _text_files() -> list[Path]:
    out = []
    for path in sorted(ROOT.rglob("*")):
        parts = path.relative_to(ROOT).parts
        if not path.is_file() or any(p in SKIPPED or p.endswith(".egg-info") for p in parts):
            continue
        try:
            path.read_text(encoding="utf-8")
        except UnicodeDecodeError:
            continue  # images and other binary files
        out.append(path)
    return out


def test_pattern_catches_what_it_must():
    for text in ("see ../" + "shared/x", "shared" + "/language.md", "(" + "issue" + " 7)",
                 "issue" + " 12", "(" + "issue: derive)"):
        assert OUTSIDE.search(text), text
    assert not OUTSIDE.search("docs/language.md; an issue of the journal")


def test_no_text_file_names_anything_outside_the_project():
    files = _text_files()
    assert any(p.name == "language.md" for p in files) and len(files) > 100
    found = [f"{p.relative_to(ROOT)}:{n}: {line.strip()}"
             for p in files
             for n, line in enumerate(p.read_text(encoding="utf-8").splitlines(), 1)
             if OUTSIDE.search(line)]
    assert found == []
