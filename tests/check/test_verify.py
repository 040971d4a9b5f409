"""`symcirc verify`: reading a note's marker and sections, and end to end in each format: a
fresh note matches; after a part value or a topology change in the source it does not."""

import json
import shutil
from pathlib import Path

import pytest

from symcirc.check.notes import NoteProblem, changes, heading_text, read_marker, unified_diff
from symcirc.cli import main

ROOT = Path(__file__).resolve().parents[2]

MARKER = {"source": "bridge.circuit", "sha256": "ab" * 32, "version": "0.1.0",
          "format": "markdown", "quantities": None, "template": None}


def test_marker_in_markdown_and_html():
    text = f"# Note\n\nbody\n\n<!-- symcirc-note {json.dumps(MARKER)} -->\n"
    marker = read_marker(text)
    assert marker.source == "bridge.circuit" and marker.quantities is None
    assert marker.format == "markdown"


def test_marker_in_latex_with_quantities():
    data = dict(MARKER, format="latex", quantities=["thevenin(out)", "gain(Uref, out)"])
    text = f"\\section{{Note}}\n% symcirc-note {json.dumps(data)}\n\\end{{document}}\n"
    assert read_marker(text).quantities == ("thevenin(out)", "gain(Uref, out)")


def test_marker_with_escaped_dashes():
    # The note writer escapes `--` (not allowed inside an HTML comment) as `-\u002d`.
    data = json.dumps(dict(MARKER, source="a--b.circuit")).replace("--", "-\\u002d")
    assert read_marker(f"<!-- symcirc-note {data} -->").source == "a--b.circuit"


@pytest.mark.parametrize("text, words", [
    ("# just a document\n", "no `symcirc-note` marker"),
    ("<!-- symcirc-note {not json} -->", "not valid JSON"),
    ('<!-- symcirc-note {"source": "x"} -->', "lacks sha256"),
    ("<!-- symcirc-note " + json.dumps(dict(MARKER, format="pdf")) + " -->", "unknown format"),
    (("<!-- symcirc-note " + json.dumps(MARKER) + " -->\n") * 2, "2 `symcirc-note` markers"),
])
def test_broken_markers_are_reported(text, words):
    with pytest.raises(NoteProblem, match=words):
        read_marker(text)


@pytest.mark.parametrize("line, fmt, heading", [
    ("## thevenin(out)", "markdown", "thevenin(out)"),
    ('### <a id="q1"></a>thevenin(out).impedance', "markdown", "thevenin(out).impedance"),
    (r"\subsection*{thevenin(out).impedance}", "latex", "thevenin(out).impedance"),
    (r"\section{Circuit}", "latex", "Circuit"),
    (r"\section{\texttt{gain(\allowbreak{}Uref,\allowbreak{} out)}}\label{s:gain-uref-out}",
     "latex", "gain(Uref, out)"),
    (r"\section*{Spread of \{R1, R2\}}", "latex", "Spread of {R1, R2}"),
    ('<h2 id="c">Circuit &amp; parts</h2>', "html", "Circuit & parts"),
    ("| R2 | resistor |", "markdown", None),
])
def test_headings(line, fmt, heading):
    assert heading_text(line, fmt) == heading


def test_changes_name_the_sections_and_lines():
    old = "# T\n\n## Circuit\n\n| R2 | 1 kΩ |\n\n## thevenin(out)\n\nR1*R2/(R1 + R2)\n"
    new = "# T\n\n## Circuit\n\n| R2 | 1.2 kΩ |\n\n## thevenin(out)\n\nR1*R2/(R1 + R2)\n" \
          "\n## gain(U, out)\n\n-1\n"
    report = changes(old, new, "markdown")
    assert report[0] == 'section "Circuit" changed:'
    assert report[1].strip() == "- | R2 | 1 kΩ |"
    assert report[2].strip() == "+ | R2 | 1.2 kΩ |"
    assert 'section "gain(U, out)" is new' in report
    assert not any("thevenin" in line for line in report)


def test_unified_diff_is_compact():
    old = "\n".join(f"line {i}" for i in range(200))
    new = old.replace("line 100", "line one hundred")
    diff = unified_diff(old, new, "a", "b").splitlines()
    assert "-line 100" in diff and "+line one hundred" in diff
    assert len(diff) < 10


# ---------------------------------------------------------------- end to end

FORMATS = [("md", "markdown"), ("tex", "latex"), ("html", "html")]


@pytest.fixture()
def bridge(tmp_path):
    source = tmp_path / "bridge.circuit"
    shutil.copy(ROOT / "examples" / "bridge_adc.circuit", source)
    return source


def _note(source: Path, extension: str) -> Path:
    note = source.parent / f"note.{extension}"
    assert main(["note", str(source), "-o", str(note)]) == 0
    return note


@pytest.mark.parametrize("extension, fmt", FORMATS)
def test_fresh_note_matches(bridge, extension, fmt, capsys):
    note = _note(bridge, extension)
    assert read_marker(note.read_text(encoding="utf-8")).format == fmt
    capsys.readouterr()
    assert main(["verify", str(note)]) == 0
    assert "matches bridge.circuit" in capsys.readouterr().out


@pytest.mark.parametrize("extension, fmt", FORMATS)
def test_part_value_change_is_found(bridge, extension, fmt, capsys):
    note = _note(bridge, extension)
    text = bridge.read_text(encoding="utf-8")
    bridge.write_text(text.replace("resistor R4  (b, gnd) = 1k0", "resistor R4  (b, gnd) = 1k2"),
                      encoding="utf-8")
    capsys.readouterr()
    assert main(["verify", str(note)]) == 1
    out = capsys.readouterr().out
    assert "does not match" in out and "the source changed" in out
    assert "changed:" in out and "1.2" in out
    assert "-" in out and "+" in out


@pytest.mark.parametrize("extension, fmt", FORMATS)
def test_topology_change_is_found(bridge, extension, fmt, capsys):
    note = _note(bridge, extension)
    text = bridge.read_text(encoding="utf-8")
    # The ADC input resistance moves from across the diagonal to node a to ground.
    bridge.write_text(text.replace("resistor Rin (a, b)", "resistor Rin (a, gnd)"),
                      encoding="utf-8")
    capsys.readouterr()
    assert main(["verify", str(note)]) == 1
    out = capsys.readouterr().out
    assert "does not match" in out and "a, gnd" in out


def test_hand_edited_note_is_found(bridge, capsys):
    note = _note(bridge, "md")
    note.write_text(note.read_text(encoding="utf-8") + "\nAn added remark.\n", encoding="utf-8")
    capsys.readouterr()
    assert main(["verify", str(note)]) == 1
    out = capsys.readouterr().out
    assert "source is unchanged" in out and "An added remark." in out


def test_missing_source_is_bad_input(bridge, capsys):
    note = _note(bridge, "md")
    bridge.unlink()
    assert main(["verify", str(note)]) == 2
    assert "source 'bridge.circuit' is missing" in capsys.readouterr().err


def test_not_a_note_is_bad_input(tmp_path, capsys):
    other = tmp_path / "readme.md"
    other.write_text("# Hello\n", encoding="utf-8")
    assert main(["verify", str(other)]) == 2
    err = capsys.readouterr().err
    assert err.startswith(f"{other}: error: no `symcirc-note` marker")


# ---------------------------------------------------------------- notes kept in a folder (CI)

DIVIDER = """\
title "Reference divider of a data logger (invented)"
voltage source Uref (top, gnd) = 2.5 V
resistor R1 (top, mid) = 10 kΩ
resistor R2 (mid, gnd) = 10 kΩ
port out (mid, gnd)
derive thevenin(out)
"""


@pytest.fixture()
def notes_folder(tmp_path, monkeypatch):
    """A circuit, and notes about it in a sibling folder: one of the file's derive
    statements, one of a quantity named on the command line (recorded in the marker)."""
    source = tmp_path / "divider.circuit"
    source.write_text(DIVIDER, encoding="utf-8")
    folder = tmp_path / "notes"
    folder.mkdir()
    assert main(["note", str(source), "-o", str(folder / "divider.md")]) == 0
    assert main(["note", str(source), "gain(Uref, out)", "-o", str(folder / "gain.tex")]) == 0
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    monkeypatch.chdir(elsewhere)  # the source is found through the note, not the cwd
    return source, folder


def test_a_folder_of_fresh_notes_passes(notes_folder, capsys):
    source, folder = notes_folder
    marker = read_marker((folder / "gain.tex").read_text(encoding="utf-8"))
    assert marker.source == "../divider.circuit" and marker.quantities == ("gain(Uref, out)",)
    capsys.readouterr()
    # The sources lie outside the notes' folder: verify reads them only when allowed to.
    assert main(["verify", str(folder / "divider.md")]) == 2
    assert "outside the note's folder" in capsys.readouterr().err
    assert main(["verify", str(folder / "divider.md"), str(folder / "gain.tex"),
                 "--source-folder", str(source.parent)]) == 0
    out = capsys.readouterr().out.splitlines()
    assert out == [f"{folder / 'divider.md'}: matches ../divider.circuit",
                   f"{folder / 'gain.tex'}: matches ../divider.circuit"]


def test_a_changed_formula_is_named_by_its_section(notes_folder, capsys):
    # A meter loads the divider: the gain formula itself changes, from R2/(R1 + R2) to
    # (R2∥RL)/(R1 + R2∥RL), and the note of that quantity must say so in its own section.
    source, folder = notes_folder
    source.write_text(DIVIDER.replace("port out", "resistor RL (mid, gnd) = 1 MΩ\nport out"),
                      encoding="utf-8")
    capsys.readouterr()
    assert main(["verify", str(folder / "gain.tex"), "--source", str(source)]) == 1
    out = capsys.readouterr().out
    assert "the source changed since the note was written" in out
    section = out[out.index('section "gain(Uref, out)" changed:'):]
    assert "- " in section and "\\frac{R_{2}}{R_{1} + R_{2}}" in section  # as written
    assert "+ " in section and "R_{2} \\parallel R_{\\mathrm{L}}" in section  # as it is now


def test_one_stale_note_fails_the_folder_and_every_note_is_reported(notes_folder, capsys):
    source, folder = notes_folder
    source.write_text(DIVIDER.replace("= 10 kΩ\nport", "= 12 kΩ\nport"), encoding="utf-8")
    capsys.readouterr()
    assert main(["verify", str(folder / "divider.md"), str(folder / "gain.tex"),
                 "--source-folder", str(source.parent)]) == 1
    out = capsys.readouterr().out
    assert f"{folder / 'divider.md'}: does not match" in out
    assert f"{folder / 'gain.tex'}: does not match" in out
    assert "12 kΩ" in out


def test_an_unreadable_note_among_good_ones_exits_2(notes_folder, capsys):
    source, folder = notes_folder
    capsys.readouterr()
    assert main(["verify", str(folder / "divider.md"), str(folder / "missing.md"),
                 "--source-folder", str(source.parent)]) == 2
    captured = capsys.readouterr()
    assert "divider.md: matches" in captured.out
    assert f"{folder / 'missing.md'}: error: no such note" in captured.err
