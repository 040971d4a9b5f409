"""`symcirc inspect`: what was read, as text tables or one JSON object; notices on stderr."""

import json
from fractions import Fraction
from pathlib import Path

import sympy

import symcirc
from symcirc.model.units import engineering, tolerance_text

ROOT = Path(__file__).resolve().parents[2]
BRIDGE = str(ROOT / "examples" / "bridge_adc.circuit")
DANGLING = str(ROOT / "tests" / "valid" / "dangling.circuit")


def test_text_shows_everything_that_was_read(cli):
    status, out, err = cli("inspect", BRIDGE)
    assert status == 0 and err == ""
    assert out.startswith(f"{BRIDGE}: Platinum sensor bridge on a data-logger ADC input")
    for section in ("Parameters", "Elements", "Ports", "Nodes", "Derive", "Claims"):
        assert f"\n{section}\n" in out
    rows = {line.split()[0]: line for line in out.splitlines() if line.startswith("  ")}
    assert "1 kΩ" in rows["R0"] and "± 0.1 %" in rows["R0"] and "sensor resistance" in rows["R0"]
    assert "resistor" in rows["R1"] and "exc, a" in rows["R1"]  # from the block, via `with`
    # Rt = 1 kΩ × (1 + 0.00385 × 25) = 1096.25 Ω (linear platinum model, common practice)
    assert "R0*(1 + alpha*T)" in rows["Rt"] and "1.096 kΩ" in rows["Rt"]
    assert "2M2 ± 20 %" in rows["Rin"] and "2.2 MΩ" in rows["Rin"]
    assert "V(out) = V(a) - V(b)" in rows["out"]
    assert "gnd (reference), exc, a, b" in out
    assert "V(out) where Rin -> oo" in out and "sensitivity(V(out), T) where Rin >> R1" in out
    assert "thevenin(out).impedance = 1/(1/(R1*R2/(R1 + R2)" in out


def test_json_is_one_object_with_the_same_content(cli):
    status, out, _ = cli("inspect", BRIDGE, "--format", "json")
    assert status == 0
    data = json.loads(out)
    assert data["title"] == "Platinum sensor bridge on a data-logger ADC input"
    parameters = {p["name"]: p for p in data["parameters"]}
    assert parameters["R0"]["nominal"] == 1000.0 and parameters["R0"]["unit"] == "Ω"
    assert parameters["R0"]["tolerance"] == {"plus": 0.001, "minus": 0.001, "relative": True,
                                             "text": "± 0.1 %"}
    assert parameters["alpha"]["nominal"] == 0.00385
    elements = {e["name"]: e for e in data["elements"]}
    assert list(elements) == ["Uref", "R1", "R2", "Rt", "R4", "Rin"]
    assert elements["Rt"]["definition"] == "R0*(T*alpha + 1)"
    assert elements["Rt"]["nominal"] == 1096.25
    assert elements["R4"]["value"] == "1k0 ± 0.1 %" and elements["R4"]["nominal"] == 1000.0
    assert elements["Uref"]["nodes"] == ["exc", "gnd"]
    assert data["ports"] == [{"name": "out", "positive": "a", "negative": "b", "line": 21}]
    assert data["nodes"] == ["gnd", "exc", "a", "b"] and not data["reference_chosen"]
    assert data["derives"][1] == {"quantities": ["V(out)"], "line": 24,
                                  "where": [{"kind": "limit", "symbol": "Rin", "target": "oo"}]}
    # the claim's expression reads back to the model's expression
    (claim,) = data["claims"]
    names = {n: sympy.Symbol(n) for n in ("R1", "R2", "Rt", "R4", "Rin")}
    circuit = symcirc.load(BRIDGE)
    assert sympy.parse_expr(claim["expression"], local_dict=names) == circuit.claims[0].expression


def test_controls_and_opamps_in_json(cli):
    path = str(ROOT / "tests" / "valid" / "sources_controls.circuit")
    _, out, _ = cli("inspect", path, "--format", "json")
    elements = {e["name"]: e for e in json.loads(out)["elements"]}
    assert elements["Uamp"]["controls"] == [
        {"kind": "voltage", "coefficient": "A", "nodes": ["b", "e"]},
        {"kind": "voltage", "coefficient": "-2", "nodes": ["c", "gnd"]},
    ]
    assert elements["Urm"]["independent"] == "1"
    assert elements["U1"]["ideal"] and not elements["U2"]["ideal"]
    assert elements["k12"]["coupled"] == ["L1", "L2"]


def test_notices_go_to_stderr_as_warnings(cli):
    status, out, err = cli("inspect", DANGLING)
    assert status == 0
    assert f"{DANGLING}:5:1: warning: node bb is touched only by R3" in err
    assert f"{DANGLING}:6:1: warning: both terminals of R4" in err
    assert "Notices\n  line 5: warning: node bb" in out


def test_chosen_reference_is_shown(cli):
    path = str(ROOT / "tests" / "valid" / "no_reference.circuit")
    _, out, err = cli("inspect", path)
    assert f"{path}:5:1: notice: no node is named gnd or 0: node q" in err
    assert "gnd (reference, was q), p, x" in out


def test_missing_file_and_bad_format_exit_2(cli):
    status, _, err = cli("inspect", str(ROOT / "no_such.circuit"))
    assert status == 2 and "error:" in err and "Traceback" not in err
    status, _, err = cli("inspect", BRIDGE, "--format", "yaml")
    assert status == 2 and "invalid choice" in err


def test_engineering_notation():
    # Engineering notation with SI prefixes (common practice): exponent a multiple of 3.
    assert engineering(Fraction(4700), "Ω") == "4.7 kΩ"
    assert engineering(Fraction(47, 10**10), "F") == "4.7 nF"
    assert engineering(Fraction(1, 100), "Ω") == "10 mΩ"
    assert engineering(Fraction(999_999), "Ω") == "1 MΩ"  # rounding carries to the next prefix
    assert engineering(Fraction(-22, 10**6), "A") == "−22 µA"  # U+2212, as every display
    assert engineering(Fraction(100_000)) == "100 k" and engineering(Fraction(10**7)) == "10 M"
    assert tolerance_text(Fraction(4, 5), Fraction(1, 5), True) == "+80 % −20 %"
    assert tolerance_text(Fraction(5), Fraction(5), False, "Ω") == "± 5 Ω"


def test_values_beyond_floats_are_shown_not_crashed(tmp_path, cli):
    path = tmp_path / "huge.circuit"
    path.write_text("voltage source U (a, gnd)\n"
                    "resistor R (a, gnd) = 1e60*1e60*1e60*1e60*1e60*1e60*1e60\n", encoding="utf-8")
    status, out, _ = cli("inspect", str(path), "--format", "json")
    (_, resistor) = json.loads(out)["elements"]
    # 10^420 is beyond IEEE 754 double range (max about 1.8e308): no float, exact text
    assert status == 0 and resistor["nominal"] is None
    assert resistor["nominal_text"] == "1×10⁴²⁰ Ω"


def test_unknown_quantity_is_a_warning(tmp_path, cli):
    path = tmp_path / "typo.circuit"
    path.write_text("voltage source U (a, gnd) = 1 V\nresistor R (a, gnd) = 1k\n"
                    "port out (a, gnd)\nderive thevnin(out), sensitivity(gian(U, out), R)\n",
                    encoding="utf-8")
    status, out, err = cli("inspect", str(path))
    assert status == 0
    assert f"{path}:4:8: warning: unknown quantity `thevnin`; did you mean `thevenin`?" in err
    assert f"{path}:4:34: warning: unknown quantity `gian`; did you mean `gain`?" in err


def test_empty_and_comment_only_files_read_with_a_warning(tmp_path, cli):
    for content in ("", "# nothing yet\n\n"):
        path = tmp_path / "empty.circuit"
        path.write_text(content, encoding="utf-8")
        status, out, err = cli("inspect", str(path))
        assert status == 0 and out.startswith(str(path))
        assert err == f"{path}: warning: the file describes no elements: there is no circuit " \
                      "to analyse\n"
