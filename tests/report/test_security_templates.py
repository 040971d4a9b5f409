"""Notes from other people: a hostile marker or template runs nothing and reads nothing
outside the note's folder; every template runs in the sandbox and a refused operation is a
located error (exit 2), never a traceback."""

import json
import shutil
from pathlib import Path

import pytest

from symcirc.cli import main
from symcirc.errors import SymcircError
from symcirc.report.environment import environment, render

ROOT = Path(__file__).resolve().parents[2]

DIVIDER = """\
title "Reference divider of a test fixture (invented)"
voltage source Uref (top, gnd) = 2.5 V
resistor R1 (top, mid) = 10 kΩ
resistor R2 (mid, gnd) = 10 kΩ
port out (mid, gnd)
derive thevenin(out)
"""

ESCAPE = "{{ cycler.__init__.__globals__.os.system('touch PWNED') }}"
"""The classic jinja2 escape: reach `os` through a global's function globals."""

SECRET = "the-secret-line-4d1c"


@pytest.fixture()
def divider(tmp_path, monkeypatch):
    source = tmp_path / "divider.circuit"
    source.write_text(DIVIDER, encoding="utf-8")
    monkeypatch.chdir(tmp_path)  # where `touch PWNED` would land
    return source


def _hostile_templates(folder: Path) -> Path:
    folder.mkdir()
    (folder / "note.md.j2").write_text(ESCAPE + "\n{{ note.marker }}\n", encoding="utf-8")
    return folder


def _note_with_marker(folder: Path, **changes) -> Path:
    """A note whose marker is edited the way a hostile sender would."""
    note = folder / "note.md"
    assert main(["note", str(folder / "divider.circuit"), "-o", str(note)]) == 0
    text = note.read_text(encoding="utf-8")
    start = text.index("<!-- symcirc-note ") + len("<!-- symcirc-note ")
    end = text.index(" -->", start)
    marker = json.loads(text[start:end])
    marker.update(changes)
    note.write_text(text[:start] + json.dumps(marker) + text[end:], encoding="utf-8")
    return note


def _nothing_ran(tmp_path: Path) -> bool:
    return not (tmp_path / "PWNED").exists() and not list(tmp_path.rglob("PWNED"))


@pytest.mark.parametrize("absolute", [False, True])
def test_marker_template_folder_is_never_rendered(divider, tmp_path, capsys, absolute):
    templates = _hostile_templates(tmp_path / "evil")
    note = _note_with_marker(tmp_path, template=str(templates) if absolute else "evil")
    capsys.readouterr()
    assert main(["verify", str(note)]) == 2
    err = capsys.readouterr().err
    assert f"{note}:" in err and "--template DIR" in err and "its marker says so" in err
    assert "Traceback" not in err
    assert _nothing_ran(tmp_path)


def test_a_template_given_to_verify_is_sandboxed(divider, tmp_path, capsys):
    templates = _hostile_templates(tmp_path / "evil")
    note = _note_with_marker(tmp_path, template="evil")
    capsys.readouterr()
    assert main(["verify", str(note), "--template", str(templates)]) == 2
    err = capsys.readouterr().err
    assert f"{templates / 'note.md.j2'}:1:1: error: the template tried something" in err
    assert "sandbox" in err and "Traceback" not in err
    assert _nothing_ran(tmp_path)


def test_note_with_a_sandbox_escaping_template_is_a_located_error(divider, tmp_path, capsys):
    templates = _hostile_templates(tmp_path / "mine")
    out = tmp_path / "n.md"
    assert main(["note", str(divider), "-o", str(out), "--template", str(templates)]) == 2
    err = capsys.readouterr().err
    assert err.startswith(f"{templates / 'note.md.j2'}:1:1: error: the template tried")
    assert "cycler.__init__" in err  # the offending line, with a caret
    assert _nothing_ran(tmp_path) and not out.exists()


@pytest.mark.parametrize("body", [
    "{{ note.circuit.file }}",  # the model: its methods could parse and derive anything
    "{{ note.results[0].result.expression.subs('x', 1) }}",  # sympy would parse the string
    "{{ ''.__class__.__mro__ }}",
    "{{ (9 ** 99999) }}",
    "{{ 'a' * 100000000 }}",
    "{% set x = [] %}{{ x.append(1) }}",  # templates cannot change what they are given
])
def test_the_sandbox_refuses(divider, tmp_path, capsys, body):
    templates = tmp_path / "mine"
    templates.mkdir()
    (templates / "note.md.j2").write_text("line one\n" + body + "\n", encoding="utf-8")
    assert main(["note", str(divider), "-o", "-", "--template", str(templates)]) == 2
    err = capsys.readouterr().err
    assert f"{templates / 'note.md.j2'}:2:1: error: " in err and "Traceback" not in err


def test_built_in_templates_render_in_the_sandbox(divider, tmp_path):
    env = environment()
    assert type(env).__name__ == "TemplateSandbox"
    assert main(["note", str(divider), "-o", str(tmp_path / "n.html")]) == 0
    assert main(["sheet", str(divider), "-o", str(tmp_path / "s.tex")]) == 0


def test_template_links_leading_out_of_the_folder_are_refused(tmp_path):
    secret = tmp_path / "secret.txt"
    secret.write_text(SECRET, encoding="utf-8")
    templates = tmp_path / "mine"
    templates.mkdir()
    (templates / "leak.j2").symlink_to(secret)
    (templates / "page.j2").write_text("{% include 'leak.j2' %}", encoding="utf-8")
    with pytest.raises(SymcircError, match="leads out of the template folder") as caught:
        render(environment(templates), "page.j2")
    assert SECRET not in caught.value.format()
    with pytest.raises(SymcircError, match="no template"):
        render(environment(templates), "../secret.txt")


def test_marker_source_outside_the_folder_is_refused_and_never_shown(divider, tmp_path,
                                                                    capsys):
    secret = tmp_path / "outside" / "passwd"
    secret.parent.mkdir()
    secret.write_text(f"{SECRET}:x:0:0::/root:/bin/sh\nsecond {SECRET}\n", encoding="utf-8")
    folder = tmp_path / "received"
    folder.mkdir()
    shutil.copy(divider, folder / "divider.circuit")
    for named in (str(secret), "../outside/passwd"):
        note = _note_with_marker(folder, source=named)
        capsys.readouterr()
        assert main(["verify", str(note)]) == 2
        captured = capsys.readouterr()
        assert SECRET not in captured.out + captured.err
        assert f"{note}:" in captured.err and "outside the note's folder" in captured.err
        assert "--source FILE" in captured.err


def test_a_link_in_the_folder_leading_out_is_refused(divider, tmp_path, capsys):
    secret = tmp_path / "passwd"
    secret.write_text(f"{SECRET}:x:0:0\n", encoding="utf-8")
    folder = tmp_path / "received"
    folder.mkdir()
    shutil.copy(divider, folder / "divider.circuit")
    (folder / "c.circuit").symlink_to(secret)
    note = _note_with_marker(folder, source="c.circuit")
    capsys.readouterr()
    assert main(["verify", str(note)]) == 2
    captured = capsys.readouterr()
    assert "outside the note's folder" in captured.err and SECRET not in captured.err


def test_a_non_circuit_source_inside_the_folder_is_not_echoed(divider, tmp_path, capsys):
    folder = tmp_path / "received"
    folder.mkdir()
    shutil.copy(divider, folder / "divider.circuit")
    (folder / "notes.txt").write_text(f"{SECRET} is a password\n", encoding="utf-8")
    note = _note_with_marker(folder, source="notes.txt")
    capsys.readouterr()
    assert main(["verify", str(note)]) == 2
    captured = capsys.readouterr()
    assert SECRET not in captured.out + captured.err
    assert "cannot be read as a circuit (line 1, column 1)" in captured.err
    assert "symcirc inspect" in captured.err


def test_an_explicit_source_is_used_and_its_errors_shown(divider, tmp_path, capsys):
    folder = tmp_path / "notes"
    folder.mkdir()
    note = folder / "n.md"
    assert main(["note", str(divider), "-o", str(note)]) == 0  # marker: ../divider.circuit
    capsys.readouterr()
    assert main(["verify", str(note), "--source", str(divider)]) == 0
    assert "matches" in capsys.readouterr().out
    broken = tmp_path / "broken.circuit"
    broken.write_text("resistr R1 (a, gnd) = 1k\n", encoding="utf-8")
    assert main(["verify", str(note), "--source", str(broken)]) == 2
    assert "resistr R1" in capsys.readouterr().err  # the user named it: shown in full


def test_a_note_written_with_own_templates_verifies_when_they_are_given(divider, tmp_path,
                                                                         capsys):
    templates = tmp_path / "mine"
    templates.mkdir()
    (templates / "note.md.j2").write_text(
        "# {{ note.title | escape_md }}\n{% for r in note.results %}{{ r.quantity }}\n"
        "{% endfor %}<!-- symcirc-note {{ note.marker }} -->\n", encoding="utf-8")
    note = tmp_path / "n.md"
    assert main(["note", str(divider), "-o", str(note), "--template", str(templates)]) == 0
    capsys.readouterr()
    assert main(["verify", str(note)]) == 2  # the marker's folder is not used on its own
    assert main(["verify", str(note), "--template", str(templates)]) == 0
    assert "matches divider.circuit" in capsys.readouterr().out
