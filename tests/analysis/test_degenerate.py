"""Degenerate values: tolerance bands that reach zero, zero impedances in loading and power.
Each either has the exact answer where one exists, or exit status 2 with a message at the
place to blame; never a traceback, never exit 1 (which means a claim does not hold)."""

import contextlib
import io
import json
from fractions import Fraction

import pytest

import symcirc
from symcirc.cli import main
from symcirc.errors import SymcircError

DIVIDER = """\
title "Reference divider with a trimmer-wide band"
voltage source Ub (in, gnd) = 5 V
resistor R1 (in, mid) = 1 kΩ {band}
resistor R2 (mid, gnd) = 1 kΩ ± 1 %
port P (mid, gnd)
"""

SENSE = """\
title "Sense resistor straight across the supply"
voltage source Ub (in, gnd) = 5 V
resistor Rs (in, gnd) = 1 kΩ {band}
"""

STIFF = """\
title "Bench supply terminals"
voltage source Ub (sense, gnd) = 5 V
resistor Rbleed (sense, gnd) = 10 kΩ
port P (sense, gnd)
"""


def run(tmp_path, text: str, *arguments: str) -> tuple[int, str, str]:
    path = tmp_path / "degenerate.circuit"
    path.write_text(text, encoding="utf-8")
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        status = main(["derive", str(path), *arguments])
    return status, out.getvalue(), err.getvalue()


@pytest.mark.parametrize("band", ["± 100 %", "+0 % -100 %", "± 1k"])
def test_a_band_reaching_zero_where_the_answer_exists_is_analysed_exactly(band):
    """V(mid) = Ub·R2/(R1 + R2) is finite at R1 = 0: there it is Ub (the divider's top
    shorted), the extremes are exact and a note says the band reaches zero."""
    circuit = symcirc.parse(DIVIDER.format(band=band), "divider.circuit")
    (result,) = circuit.derive("tolerance(V(mid))")
    details = result.details["tolerance"]
    assert details["extremes"]["high"] == pytest.approx(5.0)
    r1_high = 2000 if band != "+0 % -100 %" else 1000
    assert details["extremes"]["low"] == pytest.approx(5 * 990 / (r1_high + 990))
    assert any("reaches zero" in note for note in result.notes)


@pytest.mark.parametrize("band", ["± 100 %", "+0 % -100 %", "± 1k", "± 150 %"])
def test_a_band_reaching_a_pole_is_an_error_at_the_tolerance(tmp_path, band):
    """I(Rs) = Ub/Rs has no value at Rs = 0: exit 2, the message at the line of the
    tolerance, the quantity in a note."""
    status, out, err = run(tmp_path, SENSE.format(band=band), "tolerance(I(Rs))")
    assert status == 2
    assert "Traceback" not in err
    first = err.splitlines()[0]
    assert first.startswith(f"{tmp_path / 'degenerate.circuit'}:3:1: error: tolerance of I(Rs)")
    assert "band of Rs" in first and "reaches zero" in first
    assert "resistor Rs (in, gnd)" in err
    assert "note: tolerance(I(Rs)) is asked for at <command line>:1:1" in err


def test_the_same_band_through_the_python_api_raises_symcirc_error():
    circuit = symcirc.parse(SENSE.format(band="± 100 %"), "sense.circuit")
    with pytest.raises(SymcircError) as caught:
        circuit.derive("tolerance(I(Rs))")
    assert caught.value.file == "sense.circuit" and caught.value.line == 3


def test_a_band_that_stays_positive_has_no_note():
    circuit = symcirc.parse(SENSE.format(band="± 5 %"), "sense.circuit")
    (result,) = circuit.derive("tolerance(I(Rs))")
    assert not any("reaches zero" in note for note in result.notes)
    assert result.details["tolerance"]["extremes"]["high"] == pytest.approx(5 / 950)


@pytest.mark.parametrize("extra", [[], ["--format", "json"], ["--values"]])
def test_maximum_power_of_an_ideal_source_is_exit_2_with_the_reason(tmp_path, extra):
    """R_th = 0: the power U²/R_L grows without bound as R_L → 0, so no maximum power
    transfer exists (common practice: the theorem needs R_th > 0)."""
    status, out, err = run(tmp_path, STIFF, "loading(P, 1k).maximum_power", *extra)
    assert status == 2 and out == ""
    assert err.startswith("<command line>:1:1: error: loading(P, 1k).maximum_power: there is "
                          "no maximum power transfer: the source resistance R_th is 0")
    assert "zoo" not in err and "Traceback" not in err


def test_the_whole_loading_of_an_ideal_source_leaves_maximum_power_out_and_says_why(tmp_path):
    status, out, err = run(tmp_path, STIFF, "loading(P, 1k)", "--format", "json")
    assert status == 0, err
    results = {r["quantity"]: r for r in json.loads(out)["results"]}
    assert set(results) == {"loading(P, 1k).voltage", "loading(P, 1k).error",
                            "loading(P, 1k).power"}
    assert results["loading(P, 1k).power"]["nominal"] == pytest.approx(0.025)  # 5²/1000
    assert results["loading(P, 1k).error"]["nominal"] == 0
    assert any("no maximum power transfer" in n for n in results["loading(P, 1k).error"]["notes"])


def test_a_short_across_a_source_with_resistance_takes_no_power(tmp_path):
    """Z_L = 0: the loaded voltage is 0 and so is the power (I²·R_L with R_L = 0), the
    error −100 %; never nan."""
    text = DIVIDER.format(band="± 1 %")
    status, out, err = run(tmp_path, text, "loading(P, 0)", "--format", "json")
    assert status == 0, err
    values = {r["quantity"]: r["nominal"] for r in json.loads(out)["results"]}
    assert values["loading(P, 0).voltage"] == 0
    assert values["loading(P, 0).power"] == 0
    assert values["loading(P, 0).error"] == -1
    # U_th²/(4·R_th)
    assert values["loading(P, 0).maximum_power"] == pytest.approx(2.5**2 / (4 * 500))
    assert "nan" not in out


@pytest.mark.parametrize("quantity", ["loading(P, 0).power", "loading(P, 0)",
                                      "loading(P, 0, 1 kHz)"])
def test_a_short_across_an_ideal_source_has_no_answer(tmp_path, quantity):
    status, out, err = run(tmp_path, STIFF, quantity, "--format", "json")
    assert status == 2 and out == ""
    assert err.startswith("<command line>:1:12: error: ")
    assert "Z_th + Z_L = 0" in err and "nan" not in err


def test_negative_source_resistance_has_no_maximum_power(tmp_path):
    """A negative-resistance port (a current-controlled source feeding back) has no
    maximum: the power grows without bound as R_L → −R_th."""
    text = """\
title "Negative resistance port"
voltage source Ub (in, gnd) = 1 V
resistor R1 (in, a) = 1 kΩ
voltage source Urm (a, b) = -2*rm*I(R1)
param rm = 1 kΩ
port P (b, gnd)
"""
    circuit = symcirc.parse(text, "neg.circuit")
    (z,) = circuit.derive("thevenin(P).impedance")
    assert z.nominal_exact == -1000  # R1 − 2·rm
    with pytest.raises(SymcircError, match="R_th is negative"):
        circuit.derive("loading(P, 2k).maximum_power")
    # a 1 kΩ load cancels the source resistance: no current, voltage or power exists
    with pytest.raises(SymcircError, match=r"Z_th \+ Z_L = 0"):
        circuit.derive("loading(P, 1k)")


def test_json_nominal_of_a_division_by_zero_is_a_located_error(tmp_path):
    """An expression with no finite value at nominal never crashes the JSON writer."""
    text = STIFF + "derive loading(P, 1k).power\n"
    status, out, err = run(tmp_path, text, "--format", "json")
    assert status == 0, err
    assert json.loads(out)["results"][0]["nominal"] == pytest.approx(Fraction(25, 1000))


def test_coupled_inductors_of_opposite_sign_are_refused_at_the_coupling():
    """M = k·√(L1·L2) has no real value when L1·L2 < 0 (found by the fuzz benchmark: it
    was a ValueError traceback)."""
    text = """\
title "Coupled pair"
voltage source Ub (a, gnd) = 1 V
inductor L1 (a, gnd) = -4.7 mH
inductor L2 (b, gnd) = 10 mH
resistor R1 (b, gnd) = 1k
coupling k12 (L1, L2) = 0.9
"""
    with pytest.raises(SymcircError) as caught:
        symcirc.parse(text, "pair.circuit")
    assert (caught.value.line, caught.value.column) == (6, 1)
    assert "opposite signs" in caught.value.message


def test_plotting_the_loading_of_an_ideal_source_says_there_is_nothing_to_plot(tmp_path):
    path = tmp_path / "stiff.circuit"
    path.write_text(STIFF, encoding="utf-8")
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        status = main(["plot", str(path), "loading(P, 1k)", "-o", str(tmp_path / "p.png")])
    assert status == 2
    assert "nothing to plot: the source impedance at P is 0" in err.getvalue()
    assert not (tmp_path / "p.png").exists()


def test_cautions_leave_out_a_source_without_a_value():
    """A source defined by a parameter without a value (`= A`) is left out of the
    operating point, and said so (found by the fuzz benchmark: it was a TypeError)."""
    text = """\
title "Bias network with an unset drive"
param A
voltage source Uin (in, gnd) = 1 V
resistor Rs (in, b) = 50
resistor Rb (b, gnd) = 1k
voltage source Uamp (o1, gnd) = A
resistor Rl (o1, gnd) = 1k
port P (b, gnd)
"""
    circuit = symcirc.parse(text, "bias.circuit")
    (result,) = circuit.derive("Z(P)")
    assert any("Source Uamp has no value" in c for c in result.cautions)
