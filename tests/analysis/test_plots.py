"""Plots: files are written, non-empty, deterministic, with the expected axis labels read back
from the SVG text."""

import xml.etree.ElementTree as ET
from fractions import Fraction

import pytest
import sympy

from symcirc.analysis import plots
from symcirc.analysis.sensitivity import sensitivities
from symcirc.analysis.tolerance import analyse
from symcirc.errors import SymcircError
from symcirc.model.circuit import Tolerance

R1, R2, U, C, s = sympy.symbols("R1 R2 U C s")
DIVIDER = U * R2 / (R1 + R2)
NOMINALS = {R1: Fraction(3000), R2: Fraction(1000), U: Fraction(5), C: Fraction(1, 10**8)}
ONE_PERCENT = Tolerance(Fraction(1, 100), Fraction(1, 100), True)


def svg_texts(path) -> list[str]:
    root = ET.parse(path).getroot()
    return ["".join(e.itertext()).strip() for e in root.iter("{http://www.w3.org/2000/svg}text")]


def _histogram():
    a = analyse(DIVIDER, NOMINALS, {R1: ONE_PERCENT, R2: ONE_PERCENT}, samples=5000)
    return plots.histogram_figure(a, "V(out)", "V")


def test_histogram_svg_has_labels_and_is_byte_identical(tmp_path):
    first, second = tmp_path / "a.svg", tmp_path / "b.svg"
    plots.save(_histogram(), first)
    plots.save(_histogram(), second)
    assert first.stat().st_size > 1000
    assert first.read_bytes() == second.read_bytes()
    texts = svg_texts(first)
    assert "V(out) (V)" in texts and "Samples" in texts
    assert "linearised worst case" in texts and "extremes over the box" in texts
    assert any(t.endswith(" V") and t[0].isdigit() for t in texts)  # engineering tick labels


def test_frequency_response_axes(tmp_path):
    h = R2 / (R1 + R2 + s * C * R1 * R2)
    frequencies, response = plots.frequency_response(h, NOMINALS)
    # corner at 1/(2π·C·R1∥R2) ≈ 21.2 kHz: the range spans two decades either side
    assert frequencies[0] <= 212 and frequencies[-1] >= 2.12e6
    assert abs(response[0]) == pytest.approx(0.25, rel=1e-4)
    path = tmp_path / "bode.svg"
    plots.save(plots.frequency_response_figure(frequencies, response, "gain(U, out)"), path)
    texts = svg_texts(path)
    assert {"Frequency (Hz)", "Magnitude (dB)", "Phase (°)"} <= set(texts)
    assert "1 kHz" in texts or "10 kHz" in texts


def test_frequency_response_needs_s_and_values():
    with pytest.raises(SymcircError, match="does not depend on s"):
        plots.frequency_response(DIVIDER, NOMINALS)
    with pytest.raises(SymcircError, match="no value for L1"):
        plots.frequency_response(1 / (1 + s * sympy.Symbol("L1")), NOMINALS)


def test_sensitivity_bars(tmp_path):
    path = tmp_path / "sens.svg"
    plots.save(plots.sensitivity_figure(sensitivities(DIVIDER, NOMINALS), "V(out)"), path)
    texts = svg_texts(path)
    assert "Relative sensitivity (x/Q)·∂Q/∂x" in texts and "Symbol x" in texts
    assert {"R1", "R2", "U"} <= set(texts)


def test_loading_curve_png_and_svg(tmp_path):
    figure = plots.loading_figure(750 + 0j, "out", load=75e3, bound=0.001)
    png = tmp_path / "loading.png"
    plots.save(figure, png)
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and png.stat().st_size > 1000
    svg = tmp_path / "loading.svg"
    plots.save(plots.loading_figure(750 + 0j, "out", load=75e3, bound=0.001), svg)
    texts = svg_texts(svg)
    assert "Load resistance R_L (Ω)" in texts and "Loading error |ΔU/U| (%)" in texts
    assert "load: 0.99 %" in texts  # 750/(750 + 75 k) = 0.99 %
    assert {"1 kΩ", "100 kΩ", "0.1 %", "1 %"} <= set(texts)  # engineering tick labels


def test_other_extensions_are_refused(tmp_path):
    with pytest.raises(SymcircError, match=r"\.png or \.svg"):
        plots.save(_histogram(), tmp_path / "figure.pdf")
