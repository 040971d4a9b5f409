"""The vocabulary tables: every stage reads them, the docs list them, and a new element kind
is one entry plus its law."""

from __future__ import annotations

import importlib
import re
from pathlib import Path

import pytest
import sympy

import symcirc
from symcirc.language import parser
from symcirc.quantities.registry import HANDLERS
from symcirc.vocabulary import (
    ELEMENT_KINDS,
    QUANTITIES,
    STATEMENT_KEYWORDS,
    ElementKind,
    ImpedanceLaw,
)

ROOT = Path(__file__).resolve().parents[1]
s = sympy.Symbol("s")

# Impedance of each passive kind in its own value x (common practice: Z_R = R, Z_C = 1/(sC),
# Z_L = sL, a conductance G is 1/G ohms).
TEXTBOOK_IMPEDANCE = {
    "resistor": lambda x: x, "capacitor": lambda x: 1 / (s * x), "inductor": lambda x: s * x,
    "conductance": lambda x: 1 / x, "impedance": lambda x: x, "admittance": lambda x: 1 / x,
}


@pytest.mark.parametrize("keyword", list(TEXTBOOK_IMPEDANCE))
def test_every_passive_kind_is_stamped_by_its_law(keyword):
    kind = ELEMENT_KINDS[keyword]
    circuit = symcirc.parse(f"{keyword} X (a, gnd)\nport P (a, gnd)\n")
    x = sympy.Symbol("X")
    assert kind.passive and kind.carries_current
    assert circuit.elements["X"].impedance == TEXTBOOK_IMPEDANCE[keyword](x)
    derived = circuit.impedance("P").expression
    assert sympy.simplify(derived - TEXTBOOK_IMPEDANCE[keyword](x)) == 0


def test_the_passive_kinds_are_those_with_an_impedance_law():
    assert {k for k, kind in ELEMENT_KINDS.items() if kind.passive} == set(TEXTBOOK_IMPEDANCE)


def test_an_element_opens_where_its_impedance_grows_without_bound():
    """A resistor opens as R → oo, a capacitor as C → 0 (common practice)."""
    opens = {k: ELEMENT_KINDS[k].law.opens_at for k in TEXTBOOK_IMPEDANCE}
    x = sympy.Symbol("x", positive=True)
    for keyword, limit in opens.items():
        z = TEXTBOOK_IMPEDANCE[keyword](x).subs(s, 1)
        assert sympy.limit(z, x, sympy.oo if limit == "oo" else 0) == sympy.oo


def test_the_grammar_has_one_keyword_per_element_kind():
    rules = parser.element_rules()
    alternatives = rules.splitlines()[1].removeprefix("kind: ").split(" | ")
    assert alternatives == [" ".join(w.upper() for w in kind.words)
                            for kind in ELEMENT_KINDS.values()]


def test_the_registry_binds_every_quantity_of_the_table_to_a_callable():
    assert set(HANDLERS) == set(QUANTITIES)
    for name, target in HANDLERS.items():
        module, function = target.split(":")
        assert callable(getattr(importlib.import_module(module), function)), name


def test_twoport_part_units_follow_their_definitions():
    """z in Ω, y in S, h11 in Ω, h21 a current ratio, B in Ω, C in S (Pozar, Microwave
    Engineering, ch. 4: the z, y, ABCD definitions; h and g from their port equations)."""
    parts = {p.name: p.unit for p in QUANTITIES["twoport"].parts}
    assert parts["z21"] == "Ω" and parts["y12"] == "S" and parts["h11"] == "Ω"
    assert parts["h21"] == "" and parts["g22"] == "Ω" and parts["B"] == "Ω"
    assert parts["C"] == "S" and parts["A"] == parts["D"] == ""


@pytest.mark.parametrize("name", ["thevenin", "norton"])
def test_results_carry_the_units_the_table_gives_their_parts(name):
    circuit = symcirc.parse("voltage source U (a, gnd) = 1 V\nresistor R1 (a, b) = 1k\n"
                            "resistor R2 (b, gnd) = 1k\nport P (b, gnd)\n")
    results = circuit.derive(f"{name}(P)")
    assert [r.unit for r in results] == [p.unit for p in QUANTITIES[name].parts]


def test_a_part_not_in_the_table_is_refused_with_a_suggestion():
    with pytest.raises(symcirc.SymcircError, match=r"no part `\.impedence`.*`\.impedance`"):
        symcirc.parse("resistor R (a, gnd)\nport P (a, gnd)\nderive thevenin(P).impedence\n")


def test_a_misspelt_element_keyword_gets_a_suggestion_from_the_table():
    with pytest.raises(symcirc.SymcircError, match="did you mean `capacitor`"):
        symcirc.parse("capacitr C1 (a, gnd) = 1n\n")
    assert "voltage source" in STATEMENT_KEYWORDS


def test_readme_lists_every_element_kind_and_quantity():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    reference = readme[readme.index("## The circuit language"):]
    for keyword in ELEMENT_KINDS:
        assert re.search(rf"^{keyword} ", reference, re.M), keyword
    quantities = reference[reference.index("### Quantities"):reference.index(
        "### Design analyses")]
    analyses = reference[reference.index("### Design analyses"):]
    for name, quantity in QUANTITIES.items():
        table = analyses if quantity.analysis else quantities
        assert f"`{name}(" in table, name


def test_the_language_reference_covers_every_element_kind_and_quantity():
    reference = (ROOT / "docs" / "language.md").read_text(encoding="utf-8")
    assert all(f"`{keyword}" in reference for keyword in ELEMENT_KINDS)
    assert all(f"`{name}(" in reference for name in QUANTITIES)


def test_the_analyses_guide_covers_every_design_analysis():
    guide = (ROOT / "docs" / "analyses.md").read_text(encoding="utf-8")
    analyses = [name for name, quantity in QUANTITIES.items() if quantity.analysis]
    assert analyses and all(f"`{name}(" in guide for name in analyses)


def test_a_new_element_kind_is_one_table_entry(monkeypatch):
    """A `choke` (an inductor by another keyword) added to the table alone is parsed,
    checked for its unit, stamped by its law, and reduced by the forms."""
    choke = ElementKind("choke", (("first", "second"),), "H", "impedance", ImpedanceLaw(1, 1))
    monkeypatch.setitem(ELEMENT_KINDS, "choke", choke)
    parser._parser.cache_clear()
    try:
        circuit = symcirc.parse("voltage source U (a, gnd)\nchoke Lf (a, b) = 10 mH\n"
                                "resistor R (b, gnd)\n")
        with pytest.raises(symcirc.SymcircError, match="choke's value is in H"):
            symcirc.parse("choke Lf (a, gnd) = 10 Ω\n")
        (result,) = circuit.derive("V(b)", steps=True)
    finally:
        monkeypatch.undo()
        parser._parser.cache_clear()
    u, r, lf = sympy.symbols("U R Lf")
    assert sympy.simplify(result.expression - u * r / (r + s * lf)) == 0
    assert result.unit == "V"
