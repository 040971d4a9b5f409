"""Quantities near zero at nominal (shown as offsets and absolute sensitivities) and
rejection ratios in dB (CMRR, PSRR) with their worst case over the tolerances."""

from __future__ import annotations

import json
import math
from fractions import Fraction
from pathlib import Path

import numpy as np
import pytest

import symcirc
from symcirc.quantities import nearzero

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"
DIFF_AMP = EXAMPLES / "diff_amp.circuit"
CMRR = "cmrr(gain(Iload, sense)/Rs, gain(Usup, sense))"

# A Wheatstone bridge one part in a thousand off balance, 0.1 % resistors (invented).
NEAR_BALANCE = """
title "Load-cell bridge, one arm 0.1 % off"
voltage source Ub (exc, gnd) = 5 V
resistor R1 (exc, a) = 350 Ω ± 0.1 %
resistor R2 (a, gnd) = 350 Ω ± 0.1 %
resistor R3 (exc, b) = 350 Ω ± 0.1 %
resistor R4 (b, gnd) = 350.35 Ω ± 0.1 %
port out (a, b)
"""

# A buffered reference from the supply (signal Uin, supply Usup), invented.
SUPPLY_DIVIDER = """
voltage source Uin (in, gnd) = 100 mV
voltage source Usup (vcc, gnd) = 5 V
resistor Ru (vcc, p) = 1 MΩ ± 1 %
resistor Rg (p, in) = 1 kΩ ± 1 %
opamp U1 (p, o, o)
port out (o, gnd)
"""


def _values(x: dict[str, float]) -> dict[str, float]:
    return {k: float(v) for k, v in x.items()}


def _common_mode(v: dict[str, float]) -> float:
    """Difference amplifier, common practice (any analog textbook, e.g. Horowitz & Hill,
    The Art of Electronics, difference amplifier): with both inputs at U the output is
    U·(Rb/(Ra + Rb)·(1 + Rf/Rin) − Rf/Rin), Rin = R1 + Rs on the inverting side."""
    rin = v["R1"] + v["Rs"]
    return v["Rb_ref"] / (v["Ra_ref"] + v["Rb_ref"]) * (1 + v["Rf"] / rin) - v["Rf"] / rin


NOMINAL = {"R1": 4990.0, "Rf": 100e3, "Ra_ref": 4990.0, "Rb_ref": 100e3, "Rs": 0.01}


def test_the_rule() -> None:
    assert nearzero.band_reaches_zero(0, 0, 0)
    assert nearzero.band_reaches_zero(Fraction(1, 10**6), Fraction(-3, 1000), Fraction(3, 1000))
    assert not nearzero.band_reaches_zero(Fraction(1), Fraction(99, 100), Fraction(101, 100))
    assert nearzero.near_zero(Fraction(1, 1000), [Fraction(1, 2000), Fraction(1, 2000)])
    assert not nearzero.near_zero(Fraction(1), [Fraction(1, 100)])
    assert not nearzero.near_zero(None, [Fraction(1)])


def test_common_mode_gain_spread_is_an_offset_not_a_percentage() -> None:
    circuit = symcirc.load(DIFF_AMP)
    [result] = circuit.derive("tolerance(gain(Usup, sense))")
    t = result.details["tolerance"]
    assert t["near_zero"] is True and "reaches zero" in t["near_zero_rule"]
    assert t["nominal"] == pytest.approx(_common_mode(NOMINAL), rel=1e-9)
    # offsets are the band less the nominal, in Q's unit
    assert t["offsets"]["extremes"]["low"] == pytest.approx(
        t["extremes"]["low"] - t["nominal"])
    # four 0.1 % resistors: about ±4·t·Rb/(Ra + Rb)·(1 + G)/... ≈ ±3.8 mV/V (by hand)
    assert -4e-3 < t["offsets"]["linearised"]["low"] < -3.6e-3
    # absolute sensitivity x·∂Q/∂x of each arm, checked by a numpy central difference
    for c in t["contributions"]:
        if c["symbol"] == "Rs":
            continue
        step = dict(NOMINAL)
        h = NOMINAL[c["symbol"]] * 1e-6
        step[c["symbol"]] += h
        up = _common_mode(step)
        step[c["symbol"]] -= 2 * h
        slope = (up - _common_mode(step)) / (2 * h)
        assert c["absolute"] == pytest.approx(NOMINAL[c["symbol"]] * slope, rel=1e-5)
    text = " ".join(result.notes)
    assert "×10" not in text and "offsets" in text and "Near zero" in text


def test_a_gain_far_from_zero_keeps_relative_spreads() -> None:
    [result] = symcirc.load(DIFF_AMP).derive("tolerance(gain(Iload, sense))")
    assert result.details["tolerance"]["near_zero"] is False
    assert "%" in result.notes[1]


def test_sensitivity_table_of_a_near_zero_gain_is_absolute(cli) -> None:
    status, out, _ = cli("derive", DIFF_AMP, "sensitivities(gain(Usup, sense))", "--format",
                         "json")
    assert status == 0
    rows = [r["sensitivity"] for r in json.loads(out)["results"]]
    assert all(r["near_zero"] and r["relative_to"] == "1" for r in rows)
    largest = max(abs(r["relative_nominal"]) for r in rows)
    assert largest < 1  # x·∂Q/∂x ≈ 0.95, where (x/Q)·∂Q/∂x was about 5×10⁵
    for r in rows:
        assert r["absolute_nominal"] == pytest.approx(r["relative_nominal"])


def test_bridge_near_balance_refers_sensitivities_to_the_excitation() -> None:
    circuit = symcirc.parse(NEAR_BALANCE)
    results = circuit.derive("sensitivities(V(out))")
    assert all(r.details["sensitivity"]["near_zero"] for r in results)
    assert {r.details["sensitivity"]["relative_to"] for r in results} == {"Ub"}
    arms = {r.part: r.nominal for r in results if r.part in ("R1", "R2", "R3", "R4")}
    # a quarter bridge: ΔV/U = ΔR/(4R) per arm (common practice)
    for value in arms.values():
        assert abs(value) == pytest.approx(0.25, rel=2e-3)
    [spread] = circuit.derive("tolerance(V(out))")
    assert spread.details["tolerance"]["near_zero"] is True


def test_worst_case_cmrr_matches_the_resistor_tolerance_rule() -> None:
    circuit = symcirc.load(DIFF_AMP)
    [level] = circuit.derive(CMRR)
    # the nominal CMRR from the formula above, in numpy
    differential = NOMINAL["Rf"] / (NOMINAL["R1"] + NOMINAL["Rs"])
    assert level.nominal == pytest.approx(
        20 * np.log10(abs(differential / _common_mode(NOMINAL))), abs=1e-6)
    assert level.unit == "dB"
    [spread] = circuit.derive(f"tolerance({CMRR})")
    t = spread.details["rejection_tolerance"]
    # Worst-case CMRR of a one-opamp difference amplifier with resistors of tolerance t:
    # about (1 + G)/(4t) (Kitchin & Counts, A Designer's Guide to Instrumentation Amplifiers,
    # Analog Devices, 3rd ed. 2006; from memory). G = Rf/R1, t = 0.1 %.
    gain = NOMINAL["Rf"] / NOMINAL["R1"]
    assert t["worst_dB"] == pytest.approx(20 * math.log10((1 + gain) / (4 * 0.001)), abs=0.1)
    assert t["best_unbounded"] is True and t["best_dB"] is None
    assert t["worst_dB"] < t["monte_carlo"]["quantile_0.1%_dB"] < t["monte_carlo"]["median_dB"]


def test_psrr_and_its_errors(cli, circuit_file) -> None:
    circuit = symcirc.parse(SUPPLY_DIVIDER)
    [level] = circuit.derive("psrr(gain(Uin, out), gain(Usup, out))")
    # V(out) = (Uin·Ru + Usup·Rg)/(Ru + Rg): the divider rule (common practice)
    assert level.nominal == pytest.approx(20 * math.log10(1e6 / 1e3), abs=1e-9)
    path = circuit_file(SUPPLY_DIVIDER)
    status, _, err = cli("derive", path, "psrr(gain(Uin, out), I(Ru))")
    assert status == 2 and "one unit" in err
    status, _, err = cli("derive", path, "cmrr(gain(Uin, out), gain(Usup, out)*Ru)")
    assert status == 2 and "pure number" in err


def test_a_level_has_no_sensitivity_table(cli) -> None:
    status, _, err = cli("derive", DIFF_AMP, f"sensitivities({CMRR})")
    assert status == 2 and "no sensitivity table" in err and "Traceback" not in err


def test_sheet_shows_a_near_zero_spread_as_its_band(cli, tmp_path) -> None:
    sheet = tmp_path / "sheet.md"
    assert cli("sheet", DIFF_AMP, "-o", sheet).status == 0
    row = next(line for line in sheet.read_text(encoding="utf-8").splitlines()
               if line.startswith("| `gain(Usup, sense)`"))
    assert "%" not in row and "m … " in row  # −3.815 m … 3.805 m, not ±2×10⁵ %


def test_relative_sensitivity_of_a_near_zero_gain_says_so() -> None:
    circuit = symcirc.load(DIFF_AMP)
    [result] = circuit.derive("relative_sensitivity(gain(Usup, sense), Rf)")
    assert abs(result.nominal) > 1e5  # (x/Q)·∂Q/∂x, divided by a near-zero Q
    assert any("near zero" in n and "sensitivity(gain(Usup, sense), Rf)" in n
               for n in result.notes)
    [far] = circuit.derive("relative_sensitivity(gain(Iload, sense), Rf)")
    assert not any("near zero" in n for n in far.notes)


# A difference amplifier of gain 10 whose pairs match exactly at nominal (invented).
MATCHED = """
voltage source Ucm (c, gnd) = 1 V
voltage source Udm (p_in, c) = 10 mV
resistor R1 (c, n) = 10 kΩ ± 0.1 %
resistor Rf (n, o) = 100 kΩ ± 0.1 %
resistor R3 (p_in, p) = 10 kΩ ± 0.1 %
resistor R4 (p, gnd) = 100 kΩ ± 0.1 %
opamp U1 (p, n, o)
port out (o, gnd)
"""


def test_a_perfect_match_at_nominal_has_a_worst_case_but_no_nominal_level() -> None:
    circuit = symcirc.parse(MATCHED)
    with pytest.raises(symcirc.SymcircError, match="unbounded there"):
        circuit.derive("cmrr(gain(Udm, out), gain(Ucm, out))")
    [spread] = circuit.derive("tolerance(cmrr(gain(Udm, out), gain(Ucm, out)))")
    t = spread.details["rejection_tolerance"]
    assert t["nominal_dB"] is None and spread.nominal is None
    # the resistor-tolerance rule 20·log10((1 + G)/(4t)) with G = 10, t = 0.1 % (see above)
    assert t["worst_dB"] == pytest.approx(20 * math.log10(11 / 0.004), abs=0.05)
