"""One number style in every display: engineering notation with SI prefixes (SI Brochure,
9th edition, table 7: the prefixes f … T), the unit after a space, four significant
digits, U+2212 for minus (common practice in typesetting, and the SI Brochure's own), a
power of ten rather than `1e-05` beyond the prefixes, and units on every derivative."""

from __future__ import annotations

import re
from fractions import Fraction
from pathlib import Path

import pytest

from symcirc.model.units import (
    MINUS,
    decibels,
    degrees,
    eng,
    engineering,
    per,
    percent_text,
    tolerance_text,
)
from symcirc.report.filters import eng_latex, qty

ROOT = Path(__file__).resolve().parents[2]


@pytest.mark.parametrize(("value", "unit", "shown"), [
    # negative numbers take U+2212
    (-4.762e-6, "", "−4.762 µ"),
    (-0.003822, "", "−3.822 m"),
    (-2.5, "V", "−2.5 V"),
    # large and small values take a prefix, never an exponent
    (3.495e5, "", "349.5 k"),
    (1e5, "", "100 k"),
    (0.0005, "", "500 µ"),
    (4700, "Ω", "4.7 kΩ"),
    (4.7e-9, "F", "4.7 nF"),
    (0.057391, "V", "57.39 mV"),
    (2.2e12, "Hz", "2.2 THz"),
    (1.5e-15, "F", "1.5 fF"),
    # four significant digits, rounding carried into the next prefix
    (999.96, "Ω", "1 kΩ"),
    (123456, "Ω", "123.5 kΩ"),
    # pure numbers from 0.1 to 1000 are plain (a gain reads 0.5, not 500 m)
    (0.25, "", "0.25"),
    (-10.89, "", "−10.89"),
    (349.46, "", "349.5"),
    # zero, and beyond the prefixes a power of ten
    (0, "V", "0 V"),
    (0, "", "0"),
    (1.2e-18, "V", "1.2×10⁻¹⁸ V"),
    (-3e16, "", "−3×10¹⁶"),
    # reciprocal units take a power of ten, not a prefix before `1/`
    (2100, "1/F", "2.1×10³ 1/F"),
    # derived units of derivatives take the prefix too
    (-6.247e-4, "V/Ω", "−624.7 µV/Ω"),
    # levels, angles and percentages never take a prefix; the degree sign follows the number
    (-0.0512, "dB", "−0.0512 dB"),
    (-118.83, "dB", "−118.8 dB"),
    (-179.93, "°", "−179.9°"),
    (0.25, "%", "0.25 %"),
])
def test_display_numbers(value, unit, shown):
    assert eng(value, unit) == shown


def test_exact_values_show_the_same_way():
    assert engineering(Fraction(1, 2000)) == eng(0.0005) == "500 µ"
    assert engineering(Fraction(4700), "Ω") == "4.7 kΩ"
    assert engineering(Fraction(-1, 3), "V") == "−333.3 mV"
    assert engineering(Fraction(1, 10**400)) == "1×10⁻⁴⁰⁰"  # beyond the float range


@pytest.mark.parametrize(("function", "value", "shown"), [
    (percent_text, -0.000999, "−0.0999 %"),
    (percent_text, 0.0441, "4.41 %"),
    (lambda v: percent_text(v, signed=True), 0.0441, "+4.41 %"),
    (percent_text, 800, "8×10⁴ %"),
    (percent_text, -800, "−8×10⁴ %"),
    (decibels, -3.0103, "−3.01 dB"),
    (degrees, -45.04, "−45.0°"),
])
def test_percentages_levels_and_angles(function, value, shown):
    assert function(value) == shown


def test_tolerances_use_the_minus_sign():
    assert tolerance_text(Fraction(4, 5), Fraction(1, 5), True) == "+80 % −20 %"
    assert tolerance_text(Fraction(1, 100), Fraction(1, 100), True) == "± 1 %"
    assert tolerance_text(Fraction(5), Fraction(5), False, "Ω") == "± 5 Ω"


@pytest.mark.parametrize(("quantity", "symbol", "unit"), [
    ("V", "Ω", "V/Ω"),
    ("", "Ω", "S"),       # a gain per ohm
    ("Ω", "Ω", ""),       # relative: dimensionless
    ("V", "", "V"),
    ("", "F", "1/F"),
    ("V", "J/K", "V/(J/K)"),  # a compound unit below the bar keeps its own bar apart
    ("V", "K", "V/K"),
])
def test_units_of_derivatives(quantity, symbol, unit):
    assert per(quantity, symbol) == unit


@pytest.mark.parametrize(("value", "unit", "latex", "maths"), [
    (4700, "Ω", r"\qty{4.7}{\kilo\ohm}", r"4.7\,\mathrm{k\Omega}"),
    (0.0005, "", r"\num{500}\,\ensuremath{\mu}", r"500\,\mathrm{\mu}"),
    (-4.762e-6, "", r"\num{-4.762}\,\ensuremath{\mu}", r"-4.762\,\mathrm{\mu}"),
    (1.2e-18, "V", r"\qty{1.2e-18}{\volt}", r"1.2 \times 10^{-18}\,\mathrm{V}"),
    (0.25, "", r"\num{0.25}", "0.25"),
])
def test_latex_shows_the_same_numbers(value, unit, latex, maths):
    assert qty(value, unit) == latex
    assert eng_latex(value, unit) == maths


def _display_text(note: str) -> str:
    """A Markdown note without its maths, code and machine-readable marker."""
    text = re.sub(r"\$\$.*?\$\$", "", note, flags=re.DOTALL)
    text = re.sub(r"\$[^$\n]*\$", "", text)
    text = re.sub(r"<!--.*?-->", "", text, flags=re.DOTALL)
    return re.sub(r"`[^`\n]*`", "", text)


def _assert_one_style(text: str, where: str) -> None:
    exponents = re.findall(r".{0,30}\d[eE][+\-−]?\d", text)
    assert not exponents, (where, exponents)
    hyphens = re.findall(r".{0,30}(?<![\w.\-/|*(])-\d", text)
    assert not hyphens, (where, hyphens)


EXAMPLES = ("bridge_adc", "diff_amp", "leak_tone_filter", "antialias_filter")


@pytest.mark.parametrize("example", EXAMPLES)
def test_example_notes_hold_no_exponents_and_no_hyphen_minus(example):
    from symcirc.report.note import render_note_for

    text = _display_text(render_note_for(ROOT / "examples" / f"{example}.circuit",
                                         "markdown"))
    assert MINUS in text, example
    _assert_one_style(text, example)


@pytest.mark.parametrize(("example", "quantities"), [
    *((example, []) for example in EXAMPLES[:3]),
    ("antialias_filter", ["gain(Uin, out).f0", "gain(Uin, out).Q",
                          "at(gain(Uin, out), 100 kHz).dB", "at(gain(Uin, out), 100 kHz).phase",
                          "sensitivity(gain(Uin, out).f0, C1)"]),
])
def test_derive_values_in_the_same_style(example, quantities, capsys):
    from symcirc.cli import main

    path = str(ROOT / "examples" / f"{example}.circuit")
    assert main(["derive", path, *quantities, "--values"]) == 0
    shown = [line.rsplit("    ≈ ", 1)[1] for line in capsys.readouterr().out.splitlines()
             if "    ≈ " in line]  # the values, not the formulas (which are code)
    assert shown, example
    _assert_one_style("\n".join(shown), example)


def test_tolerance_contributions_carry_units(tmp_path):
    from symcirc.report.note import render_note_for

    text = render_note_for(ROOT / "examples" / "bridge_adc.circuit", "markdown")
    rows = [line for line in text.splitlines() if line.startswith("| $R_{1}$ | 999 Ω")]
    assert rows and all("V/Ω" in row or "µS" in row or "Ω" in row for row in rows)
    assert any("µV/Ω" in row for row in rows)


def test_values_found_numerically_are_shown_in_the_style_with_their_unit():
    import symcirc

    circuit = symcirc.load(str(ROOT / "examples" / "antialias_filter.circuit"))
    (corner,) = circuit.derive("gain(Uin, out).f3db")
    assert corner.latex().endswith(r"\,\mathrm{Hz}")
    assert "." in corner.latex() and len(corner.latex().split(r"\,")[0]) <= 5  # 4 digits
