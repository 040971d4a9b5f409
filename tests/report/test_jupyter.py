"""What Jupyter shows (`_repr_html_`): a result as the note shows it (formula as MathML,
nominal value in the one number style, derivation steps, spread over the tolerances,
cautions), and a circuit with its parts table and its schematic inline."""

from __future__ import annotations

import base64
import itertools
import xml.etree.ElementTree as ElementTree

import html5lib

import symcirc

MATHML = "{http://www.w3.org/1998/Math/MathML}math"

DIVIDER = ('title "Reference divider <b>&</b>"\n'
           'voltage source U (in, gnd) = 5 V\n'
           'resistor R1 (in, out) = 1 kΩ ± 1 %\n'
           'resistor R2 (out, gnd) = 2 kΩ ± 1 %\n'
           'port tap (out, gnd)\n')


def _tree(html: str):
    """The fragment parsed as HTML5 (strict: a parse error fails the test)."""
    html5lib.HTMLParser(strict=True).parseFragment(html)
    return html5lib.parseFragment(html, treebuilder="etree", namespaceHTMLElements=False)


def _text(element) -> str:
    return " ".join("".join(element.itertext()).split())


def test_a_result_shows_formula_nominal_spread_and_steps():
    circuit = symcirc.parse(DIVIDER)
    (result,) = circuit.derive("V(out)")
    html = result._repr_html_()
    tree = _tree(html)
    assert len(list(tree.iter(MATHML))) >= 1
    text = _text(tree)
    assert "V(out)" in text and "Nominal value: 3.333 V" in text
    # the spread is the worst case over the tolerance box: the four corners, computed here
    # independently of symcirc (V = U·R2/(R1 + R2))
    corners = [5 * r2 / (r1 + r2) for r1, r2 in itertools.product((990, 1010), (1980, 2020))]
    assert f"{min(corners):.4g} V … {max(corners):.4g} V" in text
    (with_steps,) = circuit.derive("V(out)", steps=True)
    summary = next(tree.iter("summary"))
    assert _text(summary) == f"Derivation ({len(with_steps.steps)} steps)"
    assert len(list(next(tree.iter("details")).iter("li"))) == len(with_steps.steps)
    assert "<b>" not in html  # the title's markup never reaches the page as markup


def test_parts_of_a_named_result_show_too():
    impedance = symcirc.parse(DIVIDER).thevenin("tap").impedance
    text = _text(_tree(impedance._repr_html_()))
    # R1 ∥ R2 = 666.7 Ω (common practice)
    assert "Nominal value: 666.7 Ω" in text


def test_a_function_of_s_says_why_it_has_no_nominal_value():
    circuit = symcirc.parse('voltage source Uin (in, gnd)\nresistor R (in, out) = 1 kΩ\n'
                            'capacitor C (out, gnd) = 100 nF\n')
    (gain,) = circuit.derive("gain(Uin, V(out))")
    assert "No nominal value: s has none (a function of s)." in _text(_tree(gain._repr_html_()))


def test_a_result_shows_its_cautions():
    circuit = symcirc.parse('title "High-voltage sense divider"\n'
                            'voltage source Uhv (in, gnd) = 400 V\n'
                            'resistor R1 (in, out) = 100 kΩ\nresistor R2 (out, gnd) = 100 kΩ\n')
    (hazardous,) = circuit.derive("V(out)")
    text = _text(_tree(hazardous._repr_html_()))
    assert "Caution. V(out) is 200 V: above 120 V DC" in text
    assert "Caution." in _text(_tree(circuit._repr_html_()))


def test_a_circuit_shows_its_parts_and_its_schematic():
    circuit = symcirc.parse(DIVIDER)
    html = circuit._repr_html_()
    tree = _tree(html)
    assert _text(tree.find(".//p")).startswith("Reference divider <b>&</b>: 3 parts, 3 nodes")
    rows = [[_text(cell) for cell in row.findall("td")] for row in tree.iter("tr")]
    parts = [row for row in rows if row]
    assert [row[0] for row in parts] == ["U", "R1", "R2"]
    assert parts[1][3:6] == ["1 kΩ", "1 kΩ", "± 1 %"]
    (image,) = tree.iter("img")
    kind, data = image.get("src").split(",", 1)
    assert kind == "data:image/svg+xml;base64"
    svg = ElementTree.fromstring(base64.b64decode(data))
    assert svg.tag == "{http://www.w3.org/2000/svg}svg"
    texts = {"".join(t.itertext()) for t in svg.iter("{http://www.w3.org/2000/svg}text")}
    assert {"R1", "R2", "U"} <= texts
    assert _text(tree.find(".//figcaption")).startswith("Schematic of the circuit")


def test_a_circuit_too_big_to_draw_says_so():
    ladder = "voltage source U (n0, gnd) = 1 V\n" + "".join(
        f"resistor Ra{i} (n{i}, n{i + 1}) = 1 kΩ\nresistor Rb{i} (n{i + 1}, gnd) = 1 kΩ\n"
        for i in range(13))
    tree = _tree(symcirc.parse(ladder)._repr_html_())
    assert not list(tree.iter("img"))
    assert "The schematic is not drawn: the circuit has 27 parts" in _text(tree)


def test_a_thevenin_equivalent_shows_both_parts():
    equivalent = symcirc.parse(DIVIDER).thevenin("tap")
    text = _text(_tree(equivalent._repr_html_()))
    # U·R2/(R1 + R2) = 3.333 V and R1 ∥ R2 = 666.7 Ω (common practice)
    assert "thevenin(tap).voltage" in text and "Nominal value: 3.333 V" in text
    assert "thevenin(tap).impedance" in text and "Nominal value: 666.7 Ω" in text
