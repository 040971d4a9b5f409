"""Plots: files are written, non-empty, deterministic, with the expected axis labels read back
from the SVG text."""

import math
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
    # one prefix for the axis, in its label; the ticks are plain numbers (1.24, 1.25 …)
    ticks = [t for t in texts if t[:1].isdigit()]
    assert "1.25" in ticks and not any(t.endswith("V") for t in ticks)


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


def _tick_texts(texts: list[str]) -> list[str]:
    return [t for t in texts if t[:1].isdigit() or t[:1] == "−"]


def test_near_zero_spread_axis_reads_in_millivolts(tmp_path):
    # a bridge near balance: V(out) a few mV either side of zero, unit and prefix on the
    # axis label, never a bare "−3 m" tick
    bridge = U * (R2 / (R1 + R2) - C / (C + R1))
    nominals = {R1: Fraction(1000), R2: Fraction(1000), C: Fraction(1001), U: Fraction(5)}
    a = analyse(bridge, nominals, {R1: ONE_PERCENT, R2: ONE_PERCENT, C: ONE_PERCENT},
                samples=2000)
    path = tmp_path / "spread.svg"
    plots.save(plots.histogram_figure(a, "V(out)", "V"), path)
    texts = svg_texts(path)
    assert "V(out) (mV)" in texts
    ticks = _tick_texts(texts)
    assert ticks and not any(t.endswith(("m", "µ", "V")) for t in ticks)
    assert any(t.startswith("−") for t in ticks)  # U+2212, not a hyphen
    # a pure number of a few thousandths: a power of ten in the label (0.25 would stay 0.25)
    ratio = analyse(bridge / U / 10, nominals, {R1: ONE_PERCENT, R2: ONE_PERCENT}, samples=2000)
    unitless = tmp_path / "gain.svg"
    plots.save(plots.histogram_figure(ratio, "gain", ""), unitless)
    assert "gain (×10⁻⁶)" in svg_texts(unitless)  # about ±250×10⁻⁶


def test_legend_is_outside_the_axes():
    figure = _histogram()
    [axes] = figure.axes
    assert axes.get_legend() is None and figure.legends  # a figure legend, not over the data
    figure.canvas.draw()  # lay it out (constrained layout places the legend)
    legend = figure.legends[0].get_window_extent()
    plot_area = axes.get_window_extent()
    assert legend.y1 <= plot_area.y0  # below the axes, clear of every bar and line


def test_frequency_response_marks_f0_and_the_corner(tmp_path):
    # second-order low-pass 1/(1 + s/(Q·w0) + s²/w0²), w0 = 2π·2 kHz, Q = 1/√2 (Butterworth):
    # f0 and the −3 dB frequency are both 2 kHz (common practice)
    w0 = 4000 * sympy.Rational(355, 113)  # 2π·2 kHz with π ≈ 355/113
    f0 = 2000 * 355 / 113 / math.pi
    h = sympy.cancel(1 / (1 + sympy.sqrt(2) * s / w0 + s**2 / w0**2))
    markers = plots.response_markers(h, {})
    assert sorted(name for _, name in markers) == ["f0", "−3 dB"]
    for frequency, _ in markers:
        assert frequency == pytest.approx(f0, rel=1e-6)
    frequencies, response = plots.frequency_response(h, {})
    # two decades either side of the poles (to whole decades), not a fixed sweep
    assert f0 / 1000 < frequencies[0] <= f0 / 100 and 100 * f0 <= frequencies[-1] < 1000 * f0
    path = tmp_path / "bode.svg"
    plots.save(plots.frequency_response_figure(frequencies, response, "gain(U, out)",
                                               markers=markers), path)
    texts = svg_texts(path)
    assert any(t.startswith("f0 = 2 kHz") for t in texts)
    assert any(t.startswith("−3 dB: 2 kHz") for t in texts)


def test_impedance_is_drawn_in_ohms_on_log_axes(tmp_path):
    z = R1 + 1 / (s * C)  # series RC: 3 kΩ above 5.3 kHz, capacitive below
    frequencies, response = plots.frequency_response(z, NOMINALS)
    figure = plots.frequency_response_figure(frequencies, response, "Z(in)", "Ω")
    top = figure.axes[0]
    assert top.get_yscale() == "log" and top.get_xscale() == "log"
    path = tmp_path / "z.svg"
    plots.save(figure, path)
    texts = svg_texts(path)
    assert "|Z(in)| (Ω)" in texts and not any("dB" in t for t in texts)
    assert any(t.endswith("kΩ") for t in texts)


def test_a_dominating_sensitivity_bar_is_cut_and_labelled(tmp_path):
    assert plots.dominance_limit([243.0, -2.0, 1.0]) == pytest.approx(3.0)
    assert plots.dominance_limit([3.0, -2.0, 1.0]) is None
    # relative sensitivities 40, 1 and 1: the power of a symbol is its relative sensitivity
    table = sensitivities(U * R2 * R1**40, NOMINALS)
    path = tmp_path / "bars.svg"
    figure = plots.sensitivity_figure(table, "V(out)")
    plots.save(figure, path)
    texts = svg_texts(path)
    assert sum("(bar cut)" in t for t in texts) >= 1
    # the axis spans the small bars, not the dominating one
    low, high = figure.axes[0].get_xlim()
    assert max(abs(low), abs(high)) < 10
