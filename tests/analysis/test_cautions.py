"""Safety cautions: the same cautions in every place a hazardous value is shown (notes under
the title and beside the value, sheets, `derive --values` on standard error, JSON, exported
code, Jupyter), judged on every pair of nodes and at each source's stated frequency, and
still judged when another source has no value. A 5 V circuit shows none.

Outside checks: node voltages and dissipation by Ohm's law and P = U²/R (common practice),
the capacitive dropper's current from numpy's complex arithmetic; the limits are those of
IEC 61140 / IEC 60449 (50 V AC rms, 120 V ripple-free DC) and ES1 of IEC 62368-1 (30 V rms,
60 V DC), quoted from memory.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy
import pytest

import symcirc
from symcirc.analysis.cautions import assess
from symcirc.cli import main

DIVIDER = ('title "High-voltage sense divider"\n'
           'voltage source Uhv (in, gnd) = 400 V\n'
           'resistor R1 (in, out) = 100 kΩ\n'
           'resistor R2 (out, gnd) = 100 kΩ\n'
           'derive V(out)\n')
LOW = ('title "Logic pull-up"\n'
       'voltage source Ucc (vcc, gnd) = 5 V\n'
       'resistor R1 (vcc, out) = 10 kΩ\n'
       'resistor R2 (out, gnd) = 10 kΩ\n'
       'derive V(out)\n')
RAILS = ('title "Class-AB output stage supply"\n'
         'voltage source Upos (pos, gnd) = 40 V\n'
         'voltage source Uneg (gnd, neg) = 40 V\n'
         'resistor Rbleed (pos, neg) = 47 kΩ\n'
         'port rails (pos, neg)\n'
         'derive V(rails)\n')
DROPPER = ('title "Capacitive dropper for a heater element"\n'
           'voltage source Umains (line, gnd) = 325 V at 50 Hz   "230 V rms mains"\n'
           'capacitor Cx (line, a) = 470 nF\n'
           'resistor RL (a, gnd) = 2.2 kΩ\n'
           'derive V(a)\n')


def _file(tmp_path: Path, name: str, text: str) -> Path:
    path = tmp_path / f"{name}.circuit"
    path.write_text(text, encoding="utf-8")
    return path


def _run(capsys, *args: str) -> tuple[int, str, str]:
    code = main(list(args))
    captured = capsys.readouterr()
    return code, captured.out, captured.err


def test_divider_at_400_v_cautions_in_note_sheet_values_json_and_export(tmp_path, capsys):
    path = _file(tmp_path, "divider", DIVIDER)
    # Ohm's law (common practice): 400 V across 200 kΩ, 200 V at the tap, 0.4 W in each part
    current = 400 / 200e3
    assert current**2 * 100e3 == pytest.approx(0.4)

    note_path = tmp_path / "divider.md"
    assert main(["note", str(path), "-o", str(note_path)]) == 0
    note = note_path.read_text(encoding="utf-8")
    under_title = note[:note.index("## Summary")]
    assert "400 V DC between in and gnd" in under_title
    assert "200 V DC between in and out" in under_title  # a pair without the reference
    assert "R1 dissipates 400 mW" in under_title and "R2 dissipates 400 mW" in under_title
    assert "IEC 61140" in under_title and "from memory" in under_title
    assert "common practice" in under_title and "local codes" in under_title
    assert note.count("**Caution:** above 120 V DC") == 2  # summary row and result: beside it

    sheet_path = tmp_path / "sheet.md"
    assert main(["sheet", str(path), "-o", str(sheet_path)]) == 0
    sheet = sheet_path.read_text(encoding="utf-8")
    assert "400 V DC between in and gnd" in sheet and "licensed" in sheet
    assert "**Caution:** above 120 V DC" in sheet

    code, out, err = _run(capsys, "derive", str(path), "--values")
    assert code == 0 and "≈ 200 V" in out and "Caution" not in out
    assert "400 V DC between in and gnd" in err
    assert "Caution: V(out) ≈ 200 V: above 120 V DC" in err

    code, out, _ = _run(capsys, "derive", str(path), "--format", "json")
    data = json.loads(out)
    assert any("400 V DC between in and gnd" in c for c in data["cautions"])
    assert data["results"][0]["caution"].startswith("above 120 V DC")

    for lang, mark in (("python", "# SAFETY CAUTIONS"), ("c", "/* SAFETY CAUTIONS")):
        code, out, _ = _run(capsys, "export", str(path), "--lang", lang)
        assert code == 0 and out.startswith(mark)
        assert "400 V DC between in and gnd" in out.replace("\n#  ", "").replace("\n *  ", "")


def test_a_source_without_value_leaves_the_others_judged_and_is_named(tmp_path, capsys):
    text = DIVIDER + "voltage source Uaux (aux, gnd)\nresistor Raux (aux, gnd) = 1 kΩ\n"
    path = _file(tmp_path, "with_aux", text)
    assessment = assess(symcirc.load(str(path)))
    assert any("400 V DC between in and gnd" in c for c in assessment.cautions)
    assert assessment.not_assessed == ("Source Uaux has no value: it was left out, the other "
                                       "sources were judged.",)
    note_path = tmp_path / "with_aux.md"
    assert main(["note", str(path), "-o", str(note_path)]) == 0
    note = note_path.read_text(encoding="utf-8")
    assert "**Not assessed.** Source Uaux has no value" in note
    _, _, err = _run(capsys, "derive", str(path), "--values")
    assert "Not assessed: Source Uaux has no value" in err


def test_rails_of_plus_minus_40_v_give_80_v_across_the_port(tmp_path):
    assessment = assess(symcirc.parse(RAILS))
    # 40 V to gnd from each rail is below every limit; 80 V between the rails is above 60 V DC
    (caution,) = [c for c in assessment.cautions if " V DC " in c]
    assert caution.startswith("80 V DC between pos and neg")
    assert "above 60 V" in caution and "IEC 62368-1" in caution
    assert not any("between pos and gnd" in c or "between neg and gnd" in c
                   for c in assessment.cautions)
    note = main_note(tmp_path, RAILS)
    assert note.index("80 V DC between pos and neg") < note.index("## Summary")
    assert "**Caution:** above 60 V DC" in note  # beside V(rails) ≈ 80 V


def main_note(tmp_path: Path, text: str) -> str:
    path = _file(tmp_path, "circuit", text)
    out = tmp_path / "note.md"
    assert main(["note", str(path), "-o", str(out)]) == 0
    return out.read_text(encoding="utf-8")


def test_capacitive_dropper_at_50_hz_dissipates_about_2_3_w(tmp_path):
    # numpy: the series current of 325 V peak through 470 nF and 2.2 kΩ at 50 Hz
    omega = 2 * numpy.pi * 50
    current = 325 / (2200 + 1 / (1j * omega * 470e-9))
    power = abs(current) ** 2 * 2200 / 2
    assert power == pytest.approx(2.3, abs=0.01)
    assessment = assess(symcirc.parse(DROPPER))
    assert assessment.ac
    (dissipation,) = [c for c in assessment.cautions if "dissipates" in c]
    assert dissipation.startswith(f"RL dissipates {power:.4g} W (50 Hz)")
    mains = [c for c in assessment.cautions if "between line and gnd" in c]
    assert mains and mains[0].startswith("229.8 V rms (325 V peak, 50 Hz)")  # 325/√2
    assert "above 50 V rms" in mains[0]
    note = main_note(tmp_path, DROPPER)
    assert "RL dissipates 2.291 W (50 Hz)" in note[:note.index("## Circuit")]
    assert "325 V at 50 Hz" in note  # the parts table shows the frequency


def test_a_5_v_circuit_shows_no_caution_anywhere(tmp_path, capsys):
    path = _file(tmp_path, "low", LOW)
    assert not assess(symcirc.load(str(path))).shown
    assert "Caution" not in main_note(tmp_path, LOW)
    sheet = tmp_path / "sheet.md"
    assert main(["sheet", str(path), "-o", str(sheet)]) == 0
    assert "Caution" not in sheet.read_text(encoding="utf-8")
    code, out, err = _run(capsys, "derive", str(path), "--values")
    assert code == 0 and "≈ 2.5 V" in out and err == ""
    _, out, _ = _run(capsys, "derive", str(path), "--format", "json")
    assert json.loads(out)["cautions"] == []
    _, out, _ = _run(capsys, "export", str(path), "--lang", "python")
    assert "SAFETY" not in out


def test_jupyter_display_carries_the_cautions():
    (hazardous,) = symcirc.parse(DIVIDER).derive("V(out)")
    shown = hazardous._repr_markdown_()
    assert "V(out) is 200 V: above 120 V DC" in shown and "400 V DC between in and gnd" in shown
    assert "Caution" in symcirc.parse(DIVIDER)._repr_markdown_()
    (safe,) = symcirc.parse(LOW).derive("V(out)")
    assert safe._repr_markdown_() is None and safe._repr_latex_().startswith("$")


def test_frequency_given_by_a_parameter_and_refused_elsewhere():
    circuit = symcirc.parse("param fm = 60 Hz\nvoltage source Umains (l, gnd) = 170 V at fm\n"
                            "resistor R (l, gnd) = 10 kΩ\n")
    (caution,) = [c for c in assess(circuit).cautions if "between l and gnd" in c]
    assert "60 Hz" in caution and caution.startswith("120.2 V rms")
    for text, message in (
            ("resistor R (a, gnd) = 1k at 50 Hz\n", "resistor R takes none"),
            ("voltage source U (a, gnd) = 1 V at 5 V\nresistor R (a, gnd) = 1\n", "in Hz"),
            ("param U = 5 at 50\n", "parameter U takes none")):
        with pytest.raises(symcirc.SymcircError) as caught:
            symcirc.parse(text)
        assert message in caught.value.message


def test_parts_defined_with_s_are_judged_at_the_source_frequency():
    circuit = symcirc.parse("param Rs = 1 kΩ\nvoltage source Ugen (a, gnd) = 100 V at 1 kHz\n"
                            "impedance Zs (a, b) = Rs + 1/(s*1 µF)\n"
                            "resistor Rload (b, gnd) = 100 Ω\n")
    # numpy: 100 V peak through 1 kΩ + 1/(jω·1 µF) and 100 Ω at 1 kHz; mean power |I|²R/2
    omega = 2 * numpy.pi * 1e3
    current = 100 / (1000 + 1 / (1j * omega * 1e-6) + 100)
    power = abs(current) ** 2 * 100 / 2
    (dissipation,) = [c for c in assess(circuit).cautions if "dissipates" in c]
    assert dissipation.startswith(f"Rload dissipates {power * 1e3:.4g} mW (1 kHz)")


def test_a_large_ladder_is_judged_numerically():
    # 40 sections: the symbolic node voltages would have ~1e16 terms; the cautions solve the
    # same equations numerically. numpy's own nodal analysis gives the reference values.
    sections = 40
    lines = ["voltage source Uhv (n0, gnd) = 400 V"]
    for i in range(sections):
        lines += [f"resistor Rs{i} (n{i}, n{i + 1}) = 1 kΩ",
                  f"resistor Rp{i} (n{i + 1}, gnd) = 2 kΩ"]
    conductance = numpy.zeros((sections + 1, sections + 1))
    for i in range(sections):  # series 1 kΩ from node i to i + 1, shunt 2 kΩ at i + 1
        conductance[i, i] += 1e-3
        conductance[i + 1, i + 1] += 1e-3 + 1 / 2000
        conductance[i, i + 1] -= 1e-3
        conductance[i + 1, i] -= 1e-3
    volts = numpy.linalg.solve(conductance[1:, 1:], -conductance[1:, 0] * 400)
    assert volts[0] == pytest.approx(200)  # the ladder's input resistance is 2 kΩ
    assessment = assess(symcirc.parse("\n".join(lines) + "\n"))
    rs0 = f"Rs0 dissipates {(400 - volts[0]) ** 2 / 1000:.4g} W (DC)"
    assert any(c.startswith(rs0) for c in assessment.cautions)
    assert assessment.cautions[0].startswith("400 V DC between n0 and gnd")
    assert assessment.not_assessed == ()


def test_parts_without_value_leave_the_sources_own_voltages_judged():
    hazardous = assess(symcirc.parse("voltage source Uhv (a, gnd) = 400 V\nresistor R1 (a, b)\n"
                                     "resistor R2 (b, gnd) = 1 kΩ\n"))
    assert hazardous.cautions[0].startswith("400 V DC between a and gnd")
    assert hazardous.not_assessed == ("Part R1 has no value: only the voltage sources' own "
                                      "voltages were judged.",)
    quiet = assess(symcirc.parse("voltage source Uref (a, gnd) = 1 V\nresistor R1 (a, b)\n"
                                 "resistor R2 (b, gnd) = 1 kΩ\n"))
    assert not quiet.shown and quiet.lines() == []


def test_without_an_operating_point_the_sources_are_still_judged():
    # a current source charging a capacitor has no DC operating point
    assessment = assess(symcirc.parse("current source Ich (gnd, a) = 1 mA\n"
                                      "capacitor C1 (a, gnd) = 1 µF\n"
                                      "voltage source Uhv (b, gnd) = 400 V\n"
                                      "resistor R1 (b, gnd) = 1 MΩ\n"))
    assert assessment.cautions[0].startswith("400 V DC between b and gnd")
    assert "no unique operating point at DC" in assessment.not_assessed[0]
