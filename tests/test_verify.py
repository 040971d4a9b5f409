"""`symcirc verify`: reading a note's marker and sections, and end to end in each format: a
fresh note matches; after a part value or a topology change in the source it does not."""

import json
import shutil
from pathlib import Path

import pytest

from symcirc.check.notes import NoteProblem, changes, heading_text, read_marker, unified_diff
from symcirc.cli import main

ROOT = Path(__file__).resolve().parents[1]

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
