"""The valid corpus (tests/valid/*.circuit) read into the model: nodes, values, nominal
numbers, tolerances, controls and block expansion names, as docs/language.md defines them.
"""

from fractions import Fraction
from pathlib import Path

import pytest
import sympy

import symcirc
from symcirc.model.circuit import LAPLACE, REFERENCE

VALID = Path(__file__).parents[1] / "valid"
S = sympy.Symbol


def load(name: str) -> symcirc.Circuit:
    return symcirc.load(str(VALID / f"{name}.circuit"))


@pytest.mark.parametrize("path", sorted(VALID.glob("*.circuit")), ids=lambda p: p.stem)
def test_every_valid_file_reads(path):
    circuit = symcirc.load(str(path))
    assert circuit.elements
    assert circuit.nodes[0] == REFERENCE


# ---------------------------------------------------------------- values and units


def test_numbers_prefixes_and_codes():
    e = load("values_units").elements
    # SI prefixes (SI brochure, common practice) and IEC 60062 RKM codes: 4k7 = 4.7 kΩ,
    # 2R2 = 2.2 Ω, 1M5 = 1.5 MΩ, 4n7 = 4.7 nF.
    assert e["R2"].nominal == 1000
    assert e["R3"].nominal == 4700
    assert e["R4"].nominal == Fraction(22, 10)
    assert e["R5"].nominal == 1_500_000
    assert e["R6"].nominal == 10_000
    assert e["C1"].nominal == Fraction(47, 10**10)
    assert e["C2"].nominal == Fraction(22, 10**7)
    assert e["C3"].nominal == Fraction(1, 10**9)
    assert e["L1"].nominal == Fraction(1, 10**5)
    assert e["Gp"].nominal == Fraction(2, 1000)
    assert e["R8"].nominal == 2_500_000
    assert all(e[n].definition is None for n in ("R2", "R3", "R4", "C1", "Gp"))
    assert e["R2"].symbol == S("R2")
    assert e["C1"].unit == "F" and e["Gp"].unit == "S" and e["L1"].unit == "H"
    assert e["R3"].written == "4k7 +- 5 Ω"


def test_tolerances_kept_per_value():
    circuit = load("values_units")
    e = circuit.elements
    assert (e["R2"].tolerance.plus, e["R2"].tolerance.minus) == (Fraction(1, 1000),) * 2
    assert e["R2"].tolerance.relative
    assert not e["R3"].tolerance.relative and e["R3"].tolerance.plus == 5
    assert e["R3"].tolerance.bounds(e["R3"].nominal) == (4695, 4705)
    r5 = e["R5"].tolerance
    assert (r5.plus, r5.minus, r5.relative) == (Fraction(4, 5), Fraction(1, 5), True)
    assert r5.bounds(e["R5"].nominal) == (1_200_000, 2_700_000)
    assert e["C2"].tolerance.plus == Fraction(1, 10)
    assert e["R1"].tolerance is None
    assert circuit.parameters["R0"].tolerance.plus == Fraction(1, 1000)


def test_value_semantics():
    circuit = load("values_units")
    p, e = circuit.parameters, circuit.elements
    # no value: a free symbol
    assert e["R1"].nominal is None and e["R1"].definition is None
    assert p["alpha"].value is None and p["alpha"].nominal is None
    # an expression of parameters defines the element; no nominal while alpha has none
    assert e["Rt"].definition == S("R0") * (1 + S("alpha") * S("T"))
    assert e["Rt"].nominal is None
    # ... and with every name valued, the nominal is computed exactly
    assert p["Rsum"].value == S("R0") + 500 and p["Rsum"].nominal == 1500
    assert e["R7"].definition == 2 * S("R2") and e["R7"].nominal == 2000
    assert e["Ub_src"].definition == S("Ub") and e["Ub_src"].nominal == Fraction(5, 2)
    # s and pi in definitions
    assert e["Z1"].definition == S("R0") + 1 / (LAPLACE * S("C1"))
    assert e["Z1"].nominal is None
    assert p["fc"].value == 1 / (2 * sympy.pi * S("tau"))
    assert abs(float(p["fc"].nominal) - 1000 / (2 * 3.141592653589793)) < 1e-9
    assert p["wc"].unit == "Hz"  # inferred from 1/(1 ms)
    assert p["fc"].unit == ""  # a plain factor (2) might carry a unit: left unknown
    assert p["Ub"].unit == "V" and p["tau"].unit == "s" and p["T"].unit == ""
    assert p["k"].nominal == Fraction(385, 100000)
    assert circuit.title == 'Values "and" units'
    assert p["R0"].description == "sensor at 0 °C"
    assert p["k"].description == "a back\\slash"
    assert circuit.definitions()[S("Rt")] == e["Rt"].definition


def test_symbol_nominals_cover_parameters_and_elements():
    values = load("values_units").symbol_nominals()
    assert values[S("R0")] == 1000 and values[S("R3")] == 4700
    assert S("R1") not in values and S("alpha") not in values


# ---------------------------------------------------------------- sources and controls


def test_controlled_sources_are_linear_terms():
    e = load("sources_controls").elements
    gm = e["Igm"]
    assert gm.is_controlled and gm.nominal is None and gm.independent is None
    (term,) = gm.controls
    assert (term.kind, term.nodes, term.coefficient) == ("voltage", ("b", "e"), S("gm"))
    # V(port) expands to the port's nodes; terms keep their own coefficients
    e1 = {c.nodes: c.coefficient for c in e["Uamp"].controls}
    assert e1 == {("b", "e"): S("A"), ("c", REFERENCE): -2}
    (h,) = e["Urm"].controls
    assert (h.kind, h.element, h.coefficient) == ("current", "Rs", S("rm"))
    assert e["Urm"].independent == 1
    (f,) = e["Ibeta"].controls
    assert (f.element, f.coefficient) == ("Rb", S("beta") / 2)


def test_opamps_transformer_and_coupling():
    circuit = load("sources_controls")
    e = circuit.elements
    assert e["U1"].is_ideal_opamp and e["U1"].nodes == ("c", "n1", "o4")
    assert e["U2"].definition == S("A0") / (1 + LAPLACE / S("wa"))
    assert not e["U2"].is_ideal_opamp
    assert e["U3"].nominal == 200_000 and not e["U3"].is_ideal_opamp
    assert e["T1"].nodes == ("o5", REFERENCE, "s1", "s2") and e["T1"].nominal == 10
    assert e["k12"].coupled == ("L1", "L2") and e["k12"].nodes == ()
    assert e["k12"].nominal == Fraction(9, 10)
    assert circuit.ports["vin"].positive == "b" and circuit.ports["vin"].negative == "e"


# ---------------------------------------------------------------- blocks


def test_block_expansion_names():
    circuit = load("blocks")
    names = list(circuit.elements)
    # `with` keeps the given names; others are <element>_<instance>, nested instances
    # append their own instance names in turn.
    assert names == ["U1", "R1", "R2", "Ra_right", "Rb_right", "Rfirst_lad", "C_first_lad",
                     "R_second_lad", "C_second_lad", "Rload_lad"]
    e = circuit.elements
    assert e["R1"].nodes == ("exc", "a") and e["R2"].nodes == ("a", REFERENCE)
    assert e["Ra_right"].nodes == ("exc", "b")
    assert e["R2"].tolerance.plus == Fraction(1, 100)
    # internal nodes are private to their instance
    assert e["Rfirst_lad"].nodes == ("a", "x_first_lad")
    assert e["C_first_lad"].nodes == ("x_first_lad", "mid_lad")
    assert e["C_second_lad"].nodes == ("x_second_lad", "o")
    assert e["Rload_lad"].nodes == ("o", REFERENCE)  # gnd inside a block is the reference
    # block-local parameters are renamed like elements and resolved per instance
    assert set(circuit.parameters) == {"tau_first_lad", "tau_second_lad"}
    assert e["C_first_lad"].definition == S("tau_first_lad") / S("Rfirst_lad")
    assert e["C_first_lad"].nominal == Fraction(1, 10**6)
    assert circuit.nodes == (REFERENCE, "exc", "a", "b", "x_first_lad", "mid_lad",
                             "x_second_lad", "o")


# ---------------------------------------------------------------- nodes and directives


def test_integer_nodes_and_directives():
    circuit = load("directives")
    assert circuit.nodes == (REFERENCE, "1", "2", "3")
    assert circuit.elements["R2"].nominal == 1000  # continued line
    assert circuit.resolve_node("0") == REFERENCE and circuit.resolve_node("02") == "2"
    texts = [d.texts for d in circuit.derives]
    assert texts[0] == ("thevenin(out)", "gain(Ub, out)")
    limit = circuit.derives[1].assumptions[0]
    assert (limit.kind, limit.symbol, limit.target) == ("limit", "Rm", "oo")
    kinds = [(a.kind, a.symbol, a.target) for a in circuit.derives[2].assumptions]
    assert kinds == [("limit", "Rm", "0"), ("much_greater", "Rm", "R1"),
                     ("much_greater", "Rm", "R3")]
    (claim,) = circuit.claims
    assert claim.quantity_text == "thevenin(out).impedance"
    assert claim.expression == 1 / (1 / S("R1") + 1 / S("R2") + 1 / (S("Rm1") + S("R3")))
    assert claim.quantity.attribute == "impedance"


def test_reference_chosen_from_first_port():
    circuit = load("no_reference")
    assert circuit.reference_chosen and circuit.aliases == {"q": REFERENCE}
    assert circuit.elements["U1"].nodes == ("p", REFERENCE)
    assert circuit.ports["out"].negative == REFERENCE
    assert circuit.resolve_node("q") == REFERENCE
    (notice,) = circuit.notices
    assert notice.kind == "notice" and "node q" in notice.message
    assert notice.location.line == 5


def test_reference_chosen_as_first_node_without_ports():
    circuit = load("no_reference_no_port")
    assert circuit.aliases == {"n1": REFERENCE}
    assert circuit.elements["I1"].nodes == (REFERENCE, "n2")
    assert circuit.nodes == (REFERENCE, "n2", "n3")


def test_dangling_node_and_shorted_element_are_warnings():
    circuit = load("dangling")
    warnings = [(n.location.line, n.message) for n in circuit.notices if n.kind == "warning"]
    assert len(warnings) == 2
    assert warnings[0][0] == 5 and "node bb is touched only by R3" in warnings[0][1]
    assert warnings[1][0] == 6 and "both terminals of R4" in warnings[1][1]
    # node `probe` is touched by R5 only, but `derive V(probe)` uses it: no typo
    assert not any("probe" in message for _, message in warnings)
    assert not load("blocks").notices


def test_examples_read_and_use_every_common_construct():
    examples = Path(__file__).parents[2] / "examples"
    texts = {p.name: p.read_text(encoding="utf-8") for p in examples.glob("*.circuit")}
    assert {"bridge_adc.circuit", "diff_amp.circuit", "antialias_filter.circuit"} <= set(texts)
    joined = "\n".join(texts.values())
    for construct in ("title", "param", "block", " with ", "port", "derive", "claim",
                      " where ", "±", "kΩ", "4k99", "->", ">>"):
        assert construct in joined, construct
    for name in texts:
        circuit = symcirc.load(str(examples / name))
        assert circuit.title and circuit.derives and circuit.claims
        assert not [n for n in circuit.notices if n.kind == "warning"], name
    bridge = symcirc.load(str(examples / "bridge_adc.circuit"))
    assert bridge.elements["R1"].nominal == 1000 and bridge.elements["Rt"].definition is not None
    # Rt = R0(1 + alpha T) at 25 °C: 1 kΩ × 1.09625 (linear platinum model, common practice)
    assert bridge.elements["Rt"].nominal == Fraction(109625, 100)


def test_with_names_given_inside_blocks_can_be_renamed_again():
    circuit = load("nested_renames")
    e = circuit.elements
    # R of pole1 is `Rf` inside filter, `Rfilt` inside channel, and R1 for instance ch1;
    # without a `with` at the top it is `Rfilt_ch2` (<element>_<instance>, language page).
    assert e["R1"].nodes == ("t_ch1", "x_pole1_flt_ch1")
    assert e["Rfilt_ch2"].nodes == ("t_ch2", "x_pole1_flt_ch2")
    assert "Rf_flt_ch1" not in e and "Rfilt_ch1" not in e
    assert e["Cf_flt_ch1"].nodes == ("x_pole1_flt_ch1", "m_flt_ch1")
    assert e["C_pole2_flt_ch2"].nodes == ("x_pole2_flt_ch2", "out2")
    assert e["Rtop"].nodes == ("in", "t_ch1") and e["Rdiv_ch2"].nodes == ("in", "t_ch2")
    assert len(e) == 15  # 1 source, 2 x 6 per channel, 2 loads
    # a block-local parameter follows the renamed symbols of its own instance
    fc = circuit.parameters["fc_pole1_flt_ch1"]
    assert fc.value == 1 / (2 * sympy.pi * S("R1") * S("Cf_flt_ch1"))
    # RC corner frequency 1/(2 pi R C) at 10 kΩ, 10 nF: 1591.55 Hz (common practice)
    assert abs(float(fc.nominal) - 1591.5494309189535) < 1e-9


def test_renaming_a_name_no_nested_instance_gives_is_an_error():
    text = (VALID / "nested_renames.circuit").read_text(encoding="utf-8")
    with pytest.raises(symcirc.SymcircError) as caught:
        symcirc.parse(text.replace("with Rfilt = R1", "with Rf = R1"), "t.circuit")
    # `Rf` is filter's name for it; inside channel it is called `Rfilt`
    assert "block channel has no element or parameter `Rf` to rename" in caught.value.message
    with pytest.raises(symcirc.SymcircError) as caught:
        symcirc.parse(text.replace("with Rfilt = R1", "with Rflt = R1"), "t.circuit")
    assert "`Rflt` to rename; did you mean `Rfilt`?" in caught.value.message


def test_iec_60062_codes_with_letters_l_and_f_in_a_file():
    e = load("values_units").elements
    # IEC 60062:2016 letters: L = 10^-3 (resistance), F = 1 (capacitance); 47K3 = 47.3 kΩ
    assert e["R9"].nominal == Fraction(68, 10_000) and e["R9"].unit == "Ω"
    assert e["R10"].nominal == 47_300
    assert e["C4"].nominal == Fraction(47, 10) and e["C4"].unit == "F"
    assert e["R11"].nominal == Fraction(47, 100)
