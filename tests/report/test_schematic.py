"""The schematic of a note: its layout checked on coordinates (no two symbols or labels
overlap, no wire runs through a symbol or a label, every wire ends on a terminal or on a
wire of its node, wires straight and orthogonal), its drawing (the SVG parses, the same bytes
on a second run), and the plain statement for a circuit too big to draw."""

from __future__ import annotations

import random
import subprocess
import xml.etree.ElementTree as ElementTree
from pathlib import Path

import pytest
from notes_support import pdf_text, pdflatex

import symcirc
from symcirc.report.figures import folder_name
from symcirc.report.note import render_note_for, write_note
from symcirc.report.schematic import MAXIMUM_PARTS, Layout, layout
from symcirc.report.schematic_drawing import image

EXAMPLES = sorted((Path(__file__).resolve().parents[2] / "examples").glob("*.circuit"))


def _generated(seed: int, parts: int | None = None) -> str:
    """A random connected circuit: a source from `in` to gnd, a resistor chain that keeps
    every node connected, then random R, C, L, a current source, sometimes an opamp or a
    transformer between random nodes."""
    rng = random.Random(seed)
    count = parts if parts is not None else rng.randint(4, 14)
    nodes = ["in"] + [f"n{i}" for i in range(1, rng.randint(2, 6))]
    lines = ["voltage source Uin (in, gnd) = 1 V"]
    for i, node in enumerate(nodes[1:], start=1):
        lines.append(f"resistor Rc{i} ({nodes[i - 1]}, {node}) = 1k")
    everywhere = nodes + ["gnd"]
    kinds = [("resistor", "R", "4k7"), ("capacitor", "C", "10n"), ("inductor", "L", "1m")]
    if rng.random() < 0.5:
        output = rng.choice(nodes[1:])  # not across the source
        a, b = rng.sample([n for n in everywhere if n != output], 2)
        lines.append(f"opamp Uop ({a}, {b}, {output})")
    elif len(nodes) >= 3 and rng.random() < 0.5:
        a, b, c, d = rng.sample(everywhere, 4)
        lines.append(f"transformer Tx ({a}, {b}; {c}, {d}) = 2")
    if rng.random() < 0.5:
        a, b = rng.sample(everywhere, 2)
        lines.append(f"current source Iq ({a}, {b}) = 1m")
    i = 0
    while len(lines) < count:
        i += 1
        kind, letter, value = rng.choice(kinds)
        a, b = rng.sample(everywhere, 2)
        lines.append(f"{kind} {letter}{i} ({a}, {b}) = {value}")
    lines.append(f"port out ({nodes[-1]}, gnd)")
    return "\n".join(lines) + "\n"


GENERATED = [_generated(seed) for seed in range(20)]


def _check(drawn: Layout) -> None:
    assert drawn.overlaps() == []
    assert drawn.loose_ends() == []
    for wire in drawn.wires:
        assert wire.start[0] == wire.end[0] or wire.start[1] == wire.end[1], wire
    everything = [s.box for s in drawn.symbols] + [label.box for label in drawn.labels]
    assert all(0 <= b.x0 and b.x1 <= drawn.width and 0 <= b.y0 and b.y1 <= drawn.height
               for b in everything)


SVG = "{http://www.w3.org/2000/svg}"


def _parses(svg: bytes, drawn: Layout | None = None) -> None:
    root = ElementTree.fromstring(svg)
    assert root.tag == f"{SVG}svg"
    assert len(root.findall(f".//{SVG}polyline")) > 3
    if drawn is not None:  # every label, as text
        assert sorted(t.text for t in root.iter(f"{SVG}text") if t.text not in "+−") == \
            sorted(label.text for label in drawn.labels)


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.stem)
def test_every_example_is_laid_out_without_overlaps_and_draws(path):
    circuit = symcirc.load(str(path))
    drawn = layout(circuit)
    _check(drawn)
    parts = {s.name for s in drawn.symbols if s.kind not in ("port", "ground")}
    assert parts == {e.name for e in circuit.elements.values() if e.kind != "coupling"}
    assert {label.text for label in drawn.labels} >= parts
    _parses(image(drawn, "svg"), drawn)


@pytest.mark.parametrize("seed", range(20))
def test_generated_circuits_are_laid_out_without_overlaps(seed):
    circuit = symcirc.parse(GENERATED[seed])
    drawn = layout(circuit)
    _check(drawn)
    wired = {t.node for s in drawn.symbols for t in s.terminals}
    assert wired == set(circuit.nodes)
    assert sum(s.kind == "ground" for s in drawn.symbols) == 1
    _parses(image(drawn, "svg"), drawn)


def test_the_generator_covers_every_kind_the_schematic_draws():
    kinds = {e.kind for text in GENERATED for e in symcirc.parse(text).elements.values()}
    assert kinds >= {"resistor", "capacitor", "inductor", "voltage source",
                     "current source", "opamp", "transformer"}


def test_a_circuit_of_the_largest_drawn_size_is_laid_out_without_overlaps():
    circuit = symcirc.parse(_generated(7, parts=MAXIMUM_PARTS))
    assert len(circuit.elements) == MAXIMUM_PARTS
    _check(layout(circuit))


def test_a_circuit_over_the_limit_gets_a_plain_statement(tmp_path):
    source = tmp_path / "big.circuit"
    source.write_text(_generated(3, parts=MAXIMUM_PARTS + 1), encoding="utf-8")
    text = render_note_for(source, "markdown", ["V(out)"], output_path=tmp_path / "big.md")
    assert f"the circuit has {MAXIMUM_PARTS + 1} parts, more than the {MAXIMUM_PARTS}" in text
    assert "schematic-" not in text


def test_a_note_shows_its_schematic_and_writes_it_the_same_twice(tmp_path):
    source = tmp_path / "divider.circuit"
    source.write_text("voltage source Uin (in, gnd) = 5 V\nresistor R1 (in, out) = 10k\n"
                      "resistor R2 (out, gnd) = 4k7\nport po (out, gnd)\n", encoding="utf-8")
    names = {}
    for fmt, suffix in (("markdown", ".md"), ("html", ".html"), ("latex", ".tex")):
        note = tmp_path / f"divider{suffix}"
        written = write_note(source, fmt, _output(note, source), ["V(po)"], progress=False)
        figure = written.schematic
        assert figure is not None and figure.path in note.read_text(encoding="utf-8")
        first = (tmp_path / figure.path).read_bytes()
        write_note(source, fmt, _output(note, source), ["V(po)"], progress=False)
        assert (tmp_path / figure.path).read_bytes() == first
        names[fmt] = figure.path
    assert names["latex"].endswith(".pdf") and names["markdown"].endswith(".svg")
    pdf = pdflatex(tmp_path / "divider.tex")
    assert "Schematic of the circuit: ports as open circles" in pdf_text(pdf)
    figure = subprocess.run(["pdftotext", str(tmp_path / names["latex"]), "-"],
                            capture_output=True, text=True, check=True).stdout
    figure = figure.replace("\u2126", "\u03a9")  # the Symbol font's Ω reads as the ohm sign
    assert all(text in figure for text in ("R1", "10 kΩ", "R2", "4.7 kΩ", "Uin", "po +"))
    assert all(name.startswith(folder_name("divider") + "/schematic-") for name in names.values())
    _parses((tmp_path / names["html"]).read_bytes())


def test_a_note_on_standard_output_has_no_schematic_and_no_statement():
    text = render_note_for(EXAMPLES[0], "markdown", ["V(o)"])
    assert "schematic" not in text.lower()


def _output(path: Path, source: Path):
    from symcirc.report.files import output_for

    return output_for(str(path), [str(source)])


EDGE_CASES = {
    "a part with both ends on one node":
        "voltage source Uin (in, gnd) = 1 V\nresistor R1 (in, in) = 1k\n"
        "resistor R2 (in, gnd) = 1k\n",
    "a controlled source":
        "param gm = 10 mS\nvoltage source Uin (in, gnd) = 1 V\nresistor R1 (in, b) = 1k\n"
        "resistor R2 (b, gnd) = 1k\ncurrent source Igm (c, gnd) = gm*V(b, gnd)\n"
        "resistor Rc (c, gnd) = 10k\nport o (c, gnd)\n",
    "a coupling":
        "voltage source Uin (in, gnd) = 1 V\ninductor L1 (in, gnd) = 1m\n"
        "inductor L2 (o, gnd) = 1m\ncoupling k12 (L1, L2) = 0.9\nresistor RL (o, gnd) = 50\n",
    "no reference node named":
        "voltage source Uin (a, b) = 1 V\nresistor R1 (a, b) = 1k\n",
}


@pytest.mark.parametrize("text", EDGE_CASES.values(), ids=EDGE_CASES.keys())
def test_edge_cases_are_laid_out_without_overlaps(text):
    drawn = layout(symcirc.parse(text))
    _check(drawn)
    _parses(image(drawn, "svg"), drawn)


def test_a_coupling_is_named_in_the_caption_and_a_controlled_source_shows_its_value():
    from symcirc.report.figures import schematic

    circuit = symcirc.parse(EDGE_CASES["a coupling"])
    drawing, statement = schematic(circuit, "coupled", "html", "origin")
    assert statement is None and "k12 couples L1 and L2" in drawing.figure.caption
    drawn = layout(symcirc.parse(EDGE_CASES["a controlled source"]))
    assert "gm*V(b, gnd)" in {label.text for label in drawn.labels}


def test_reserved_label_widths_hold_the_text_as_dejavu_sans_sets_it():
    """The layout estimates text widths; matplotlib measures them with the font's own
    metrics (DejaVu Sans, the widest of the SVG's font list), independently."""
    from matplotlib.font_manager import FontProperties
    from matplotlib.textpath import TextPath

    from symcirc.report.schematic import FONT_POINTS, TEXT_HEIGHT, UNIT_INCHES, text_width

    font = FontProperties(family="DejaVu Sans", size=FONT_POINTS)
    texts = {label.text for text in GENERATED + list(EDGE_CASES.values())
             for label in layout(symcirc.parse(text)).labels}
    texts |= {label.text for path in EXAMPLES for label in layout(symcirc.load(str(path))).labels}
    for text in sorted(texts):
        extent = TextPath((0, 0), text, prop=font).get_extents()
        width = extent.x1 / 72 / UNIT_INCHES  # points → drawing units
        reserved = text_width(text)
        assert width <= reserved, (text, width, reserved)
        assert extent.height / 72 / UNIT_INCHES <= TEXT_HEIGHT

