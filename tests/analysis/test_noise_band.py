"""Noise over a band: closed forms and the numerical path against outside sources.

Every integral is also computed here independently: the response evaluated as a complex
number (numpy) at s = j·2π·f and integrated with scipy.integrate.quad, piecewise over
decades in ln f, with no code of the module under test.
"""

import math
from fractions import Fraction

import numpy as np
import pytest
import scipy.integrate
import scipy.stats
import sympy

from symcirc.analysis import noise_band as nb
from symcirc.analysis.response import ResponseError

s = sympy.Symbol("s")
R, C, L, R2, T, k_B, f0, fc, Q = sympy.symbols("R C L R2 T k_B f0 fc Q", positive=True)

BOLTZMANN = Fraction(1380649, 10**29)
"""k_B in J/K, exact since the SI redefinition of 2019 (BIPM, SI Brochure, 9th edition)."""

VALUES = {R: Fraction(1000), R2: Fraction(330), C: Fraction(1, 10**9), L: Fraction(1, 1000),
          T: Fraction(300), k_B: BOLTZMANN}


def reference(h, values, f1, f2, weight=nb.WHITE):
    """∫ |H(j·2π·f)|²·w df by scipy.integrate.quad, one decade of f at a time."""
    numeric = sympy.lambdify(s, h.xreplace({x: sympy.Rational(v) for x, v in values.items()}),
                             modules="numpy")

    def integrand(u):
        f = math.exp(u)
        value = abs(complex(numeric(2j * math.pi * f))) ** 2
        return value * f if weight == nb.WHITE else value

    low = math.log(f1) if f1 > 0 else math.log(1e-12)
    high = math.log(f2) if math.isfinite(f2) else math.log(1e18)
    edges = np.append(np.arange(low, high, math.log(10)), high)
    total = sum(scipy.integrate.quad(integrand, a, b, epsabs=0, epsrel=1e-12, limit=200)[0]
                for a, b in zip(edges[:-1], edges[1:], strict=True))
    if f1 == 0 and weight == nb.WHITE:  # the piece below 1 pHz: |H(0)|²·f
        total += abs(complex(numeric(0))) ** 2 * 1e-12
    return total


# ---------------------------------------------------------------- thermal noise, kT/C


def test_kt_over_c_is_independent_of_r():
    # the rms noise of an RC low-pass over 0 … ∞ is √(kT/C) whatever R is (Razavi, "Design
    # of Analog CMOS Integrated Circuits", ch. 7, kT/C noise; Horowitz & Hill, "The Art of
    # Electronics", 3rd ed., ch. 8)
    noise = nb.band_noise(1 / (1 + s * R * C), nb.Density(4 * k_B * T * R), 0, sympy.oo,
                          VALUES)
    assert sympy.simplify(noise.mean_square - k_B * T / C) == 0
    assert noise.method.startswith("closed form")
    assert noise.rms_value == pytest.approx(math.sqrt(float(BOLTZMANN) * 300 / 1e-9), rel=1e-12)
    # 1 pF at 300 K: about 64 µV rms (a figure of the trade, from memory)
    one_pf = {**VALUES, C: Fraction(1, 10**12)}
    for r in (Fraction(10), Fraction(10**6)):
        values = {**one_pf, R: r}
        rms = nb.band_noise(1 / (1 + s * R * C), nb.Density(4 * k_B * T * R), 0, sympy.oo,
                            values).rms_value
        assert rms == pytest.approx(64.4e-6, rel=1e-3)


def test_kt_over_c_over_a_band_against_quad():
    h = 1 / (1 + s * R * C)
    for r in (Fraction(100), Fraction(10**5)):
        values = {**VALUES, R: r}
        noise = nb.band_noise(h, nb.Density(4 * k_B * T * R), 10, 20000, values)
        expected = 4 * float(BOLTZMANN) * 300 * float(r) * reference(h, values, 10, 20000)
        assert noise.mean_square_value == pytest.approx(expected, rel=1e-10)
        assert noise.method == "closed form (first-order response)"


def test_first_order_white_closed_form_reads_as_written():
    # ∫ |H|² df over f1 … f2 of 1/(1 + s·RC) is fp·(atan(f2/fp) − atan(f1/fp)),
    # fp = 1/(2π·RC) (the integral of a Lorentzian, any table of integrals)
    fp = 1 / (2 * sympy.pi * R * C)
    found = nb.gain_integral(1 / (1 + s * R * C), 10, 1000).expression
    expected = fp * (sympy.atan(1000 / fp) - sympy.atan(10 / fp))
    assert sympy.simplify(found - expected) == 0


# ---------------------------------------------------------------- noise bandwidth


def test_noise_bandwidth_of_a_first_order_low_pass_is_pi_over_two_fc():
    # ENBW = (π/2)·f_c (Motchenbacher & Connelly, "Low-Noise Electronic System Design",
    # ch. 1, noise bandwidth)
    h = 1 / (1 + s / (2 * sympy.pi * fc))
    found = nb.noise_bandwidth(h)
    assert sympy.simplify(found.expression - sympy.pi / 2 * fc) == 0
    assert found.reference == "the DC gain |H(0)|"


def test_noise_bandwidth_of_a_second_order_low_pass_is_pi_over_two_q_f0():
    # second-order low-pass K/(1 + s/(Q·ω0) + s²/ω0²): ENBW = (π/2)·Q·f0 (the integral
    # I2 of James, Nichols & Phillips, "Theory of Servomechanisms", table of integrals)
    w0 = 2 * sympy.pi * f0
    found = nb.noise_bandwidth(3 / (1 + s / (Q * w0) + s**2 / w0**2))
    assert sympy.simplify(found.expression - sympy.pi / 2 * Q * f0) == 0


def _butterworth(order: int) -> sympy.Expr:
    """A Butterworth low-pass with its −3 dB point at 1 Hz: poles on the circle of radius
    2π rad/s (numpy), coefficients as the nearest fractions."""
    angles = np.pi * (2 * np.arange(order) + order + 1) / (2 * order)
    coefficients = np.real(np.poly(np.exp(1j * angles)))[::-1]  # in s/ω, lowest power first
    w = 2 * sympy.pi
    return 1 / sympy.Add(*[sympy.Rational(Fraction(float(c))) * (s / w) ** k
                           for k, c in enumerate(coefficients)])


@pytest.mark.parametrize(("order", "table"), [(1, 1.571), (2, 1.111), (3, 1.047), (4, 1.026)])
def test_noise_bandwidth_of_butterworth_low_passes(order, table):
    # ENBW/f_3dB of Butterworth low-passes: 1.571, 1.111, 1.047, 1.026 for 1 … 4 poles
    # (Motchenbacher & Connelly, "Low-Noise Electronic System Design", table of noise
    # bandwidths; from memory), exactly (π/2n)/sin(π/2n)
    found = nb.noise_bandwidth(_butterworth(order), {})
    exact = (math.pi / (2 * order)) / math.sin(math.pi / (2 * order))
    assert found.value == pytest.approx(exact, rel=1e-9)
    assert found.value == pytest.approx(table, abs=5e-4)
    assert found.value == pytest.approx(reference(_butterworth(order), {}, 0, math.inf),
                                        rel=1e-8)


@pytest.mark.parametrize(("poles", "table"), [(2, 1.22), (3, 1.155)])
def test_noise_bandwidth_of_buffered_rc_stages(poles, table):
    # n equal RC sections, buffered: ENBW/f_3dB = 1.22 (two), 1.155 (three) (the same
    # table of Motchenbacher & Connelly; from memory)
    h = 1 / (1 + s * R * C) ** poles
    found = nb.noise_bandwidth(h, VALUES)
    f3db = math.sqrt(2 ** (1 / poles) - 1) / (2 * math.pi * float(VALUES[R] * VALUES[C]))
    assert found.value / f3db == pytest.approx(table, abs=2e-3)
    assert found.value == pytest.approx(reference(h, VALUES, 0, math.inf), rel=1e-8)


def test_noise_bandwidth_of_a_band_pass_is_referred_to_its_centre_gain():
    # second-order band-pass: ENBW = (π/2)·B with B = f0/Q its −3 dB bandwidth (common
    # practice)
    w0 = 2 * sympy.pi * f0
    found = nb.noise_bandwidth(5 * s / (Q * w0) / (1 + s / (Q * w0) + s**2 / w0**2))
    assert sympy.simplify(found.expression - sympy.pi / 2 * f0 / Q) == 0
    assert "centre gain" in found.reference
    # the centre gain is the peak of a second-order band-pass
    values = {**VALUES, f0: Fraction(1000), Q: Fraction(3)}
    at_peak = nb.noise_bandwidth(5 * s / (Q * w0) / (1 + s / (Q * w0) + s**2 / w0**2),
                                 values).value
    assert at_peak == pytest.approx(math.pi / 2 * 1000 / 3, rel=1e-12)


def test_noise_bandwidth_of_a_peaking_response_without_dc_gain_uses_the_peak():
    h = s * R2 * C / ((1 + s * R * C) * (1 + s * R2 * C / 100) * (1 + s * R2 * C / 1000))
    found = nb.noise_bandwidth(h, VALUES)
    assert "peak gain" in found.reference
    grid = np.logspace(0, 9, 200001)
    numeric = sympy.lambdify(s, h.xreplace({x: sympy.Rational(v) for x, v in VALUES.items()}))
    peak = np.max(np.abs(numeric(2j * np.pi * grid)) ** 2)
    assert found.value == pytest.approx(reference(h, VALUES, 0, math.inf) / peak, rel=1e-6)


def test_a_high_pass_has_no_noise_bandwidth():
    with pytest.raises(ResponseError, match="no finite noise bandwidth"):
        nb.noise_bandwidth(s * R * C / (1 + s * R * C), VALUES)


# ---------------------------------------------------------------- closed forms against quad

FIRST_ORDER = {
    "low-pass": 1 / (1 + s * R * C),
    "high-pass": s * R * C / (1 + s * R * C),
    "shelf": (1 + s * R2 * C) / (1 + s * R * C),
    "inverting shelf": -(R2 + s * R * R2 * C) / (R + 2 * s * R * R2 * C),
}
SECOND_ORDER = {
    "low-pass": 1 / (1 + s * R * C + s**2 * L * C),
    "band-pass": s * R * C / (1 + s * R * C + s**2 * L * C),
    "high-pass": s**2 * L * C / (1 + s * R * C + s**2 * L * C),
    "notch": (1 + s**2 * L * C) / (1 + s * R * C + s**2 * L * C),
    "general": (3 + s * R2 * C + 2 * s**2 * L * C) / (1 + s * R * C + s**2 * L * C),
}
DAMPING = {"Q > 1/2": Fraction(100), "Q = 1/2": Fraction(2000), "Q < 1/2": Fraction(10**4)}
"""R of the series RLC for Q = √(L/C)/R: 10, 1/2 and 0.1 (L = 1 mH, C = 1 nF)."""


def _bands(h, weight):
    """Every band the integral converges over: finite, from 0, to ∞, 0 … ∞."""
    bands = [(Fraction(10), Fraction(10**6))]
    numerator, denominator = sympy.fraction(sympy.cancel(h))
    passes_dc = numerator.subs(s, 0) != 0
    proper = sympy.degree(numerator, s) < sympy.degree(denominator, s)
    if weight == nb.WHITE or not passes_dc:
        bands.append((Fraction(0), Fraction(10**5)))
    if proper:
        bands.append((Fraction(300), math.inf))
        if weight == nb.WHITE or not passes_dc:
            bands.append((Fraction(0), math.inf))
    return bands


CASES = [(f"first order {name}", h, {}) for name, h in FIRST_ORDER.items()] + [
    (f"second order {name}, {damping}", h, {R: r})
    for name, h in SECOND_ORDER.items() for damping, r in DAMPING.items()]


@pytest.mark.parametrize("weight", [nb.WHITE, nb.FLICKER])
@pytest.mark.parametrize(("name", "h", "changed"), CASES, ids=[c[0] for c in CASES])
def test_closed_forms_against_quad(name, h, changed, weight):
    values = {**VALUES, **changed}
    for f1, f2 in _bands(h, weight):
        found = nb.gain_integral(h, f1, f2, weight, values)
        assert found.method.startswith("closed form"), (name, f1, f2)
        assert found.expression is not None and found.error == 0
        expected = reference(h, values, float(f1), float(f2), weight)
        assert found.value == pytest.approx(expected, rel=1e-9), (name, f1, f2)


def test_second_order_case_is_decided_exactly_at_the_nominal_values():
    h = SECOND_ORDER["low-pass"]
    for damping, r in DAMPING.items():
        method = nb.gain_integral(h, 10, 1000, nb.WHITE, {**VALUES, R: r}).method
        assert damping in method


def test_white_and_one_over_f_density_against_quad():
    # e_n²·(1 + f_c/f) through a band-pass: S0·(∫|H|² df + f_c·∫|H|²/f df)
    h = SECOND_ORDER["band-pass"]
    en2, corner = Fraction(16, 10**18), Fraction(250)  # 4 nV/√Hz, 250 Hz corner
    noise = nb.band_noise(h, nb.Density(sympy.Rational(16, 10**18), sympy.Integer(250)),
                          Fraction(1, 10), 10**6, VALUES)
    numeric = sympy.lambdify(s, h.xreplace({x: sympy.Rational(v) for x, v in VALUES.items()}))

    def density(u):
        f = math.exp(u)
        return abs(numeric(2j * math.pi * f)) ** 2 * float(en2) * (1 + float(corner) / f) * f

    edges = np.linspace(math.log(0.1), math.log(1e6), 40)
    expected = sum(scipy.integrate.quad(density, a, b, epsrel=1e-12)[0]
                   for a, b in zip(edges[:-1], edges[1:], strict=True))
    assert noise.mean_square_value == pytest.approx(expected, rel=1e-9)
    assert noise.method.startswith("closed form (second-order response")
    assert noise.rms == sympy.sqrt(noise.mean_square)


def test_second_order_over_zero_to_infinity_is_a_rational_function_of_the_parts():
    # 0 … ∞ needs no case split: ∫|H|² df of 1/(1 + sRC + s²LC) is 1/(4RC)
    # (I2 = (c1²·d0 + c0²·d2)/(2·d0·d1·d2), James, Nichols & Phillips, halved for 0 … ∞)
    found = nb.gain_integral(SECOND_ORDER["low-pass"], 0, sympy.oo)
    assert found.expression == 1 / (4 * R * C)


# ---------------------------------------------------------------- the numerical path


def test_third_order_band_is_integrated_numerically_against_quad():
    h = 1 / ((1 + s * R * C) * (1 + s * R2 * C) * (1 + s * L / R + s**2 * L * C))
    for weight in (nb.WHITE, nb.FLICKER):
        found = nb.gain_integral(h, 10, 10**5, weight, VALUES)
        assert found.expression is None
        assert found.method.startswith("numerical: adaptive Gauss–Kronrod")
        assert "estimated error" in found.method
        expected = reference(h, VALUES, 10, 1e5, weight)
        assert found.value == pytest.approx(expected, rel=1e-9)
        assert found.error <= 1e-8 * found.value


def test_third_order_to_infinity_is_a_closed_form_against_quad():
    h = (1 + s * R2 * C) / ((1 + s * R * C) * (1 + s * R2 * C / 7) * (1 + s * L / R))
    found = nb.gain_integral(h, 0, sympy.oo, nb.WHITE, VALUES)
    assert found.method.startswith("closed form")
    assert found.value == pytest.approx(reference(h, VALUES, 0, math.inf), rel=1e-9)


def test_numerical_path_needs_values():
    h = 1 / ((1 + s * R * C) * (1 + s * R2 * C) * (1 + s * L / R))
    with pytest.raises(ResponseError, match="needs a value for C, L, R, R2"):
        nb.gain_integral(h, 10, 1000, nb.WHITE, {})


# ---------------------------------------------------------------- refused bands


def test_unbounded_bands_are_refused_with_the_reason():
    with pytest.raises(ResponseError, match="1/f noise integrated down to 0 Hz"):
        nb.gain_integral(FIRST_ORDER["low-pass"], 0, 1000, nb.FLICKER, VALUES)
    with pytest.raises(ResponseError, match="does not fall at high frequencies"):
        nb.gain_integral(FIRST_ORDER["high-pass"], 10, sympy.oo, nb.WHITE, VALUES)
    with pytest.raises(ResponseError, match="pole at s = 0"):
        nb.gain_integral(1 / (s * R * C), 0, 1000, nb.WHITE, VALUES)
    with pytest.raises(ResponseError, match="f2 > f1"):
        nb.gain_integral(FIRST_ORDER["low-pass"], 1000, 10, nb.WHITE, VALUES)


def test_an_unstable_response_has_no_noise():
    with pytest.raises(ResponseError, match="Unstable"):
        nb.gain_integral(1 / (1 - s * R * C), 10, 1000, nb.WHITE, VALUES)


def test_an_integrator_over_a_band_above_zero_is_integrated():
    # |1/(jωRC)|² = 1/(2π·f·RC)²: ∫ over f1 … f2 is (1/f1 − 1/f2)/(2π·RC)²
    found = nb.gain_integral(1 / (s * R * C), 10, 1000, nb.WHITE, VALUES)
    expected = (1 / 10 - 1 / 1000) / (2 * math.pi * 1e-6) ** 2
    assert found.value == pytest.approx(expected, rel=1e-9)


# ---------------------------------------------------------------- SNR and resolution


def test_signal_to_noise_ratio():
    # 1 V rms against 1 mV rms is 60 dB (20·log10 of the amplitude ratio, common practice)
    snr = nb.signal_to_noise(sympy.Integer(1), sympy.Rational(1, 10**6))
    assert float(snr) == pytest.approx(60.0, abs=1e-12)


def test_noise_free_resolution_uses_six_point_six_sigma():
    # Gaussian noise leaves ±3.3 σ only 0.1 % of the time (scipy.stats.norm), hence the
    # 6.6·σ peak-to-peak of the noise-free resolution (common practice)
    assert 2 * scipy.stats.norm.sf(float(nb.CREST_FACTOR)) == pytest.approx(0.001, rel=0.05)
    full_scale, rms = sympy.Integer(5), sympy.Rational(1, 10**6)
    assert float(nb.noise_free_bits(full_scale, rms)) == pytest.approx(
        math.log2(5 / 6.6e-6), rel=1e-12)
    assert float(nb.effective_bits(full_scale, rms)) == pytest.approx(math.log2(5e6), rel=1e-12)
    assert float(nb.effective_bits(full_scale, rms) - nb.noise_free_bits(full_scale, rms)) \
        == pytest.approx(math.log2(6.6), rel=1e-12)


def test_density_values_and_plot_range():
    h = FIRST_ORDER["low-pass"]
    density = nb.Density(sympy.Rational(16, 10**18), sympy.Integer(100))
    f = np.array([1.0, 100.0, 159154.94309189535])
    values = nb.density_values(h, density, f, VALUES)
    assert values == pytest.approx([16e-18 * 101, 16e-18 * 2, 16e-18 * (1 + 100 / f[2]) / 2],
                                   rel=1e-9)
    low, high = nb.plot_range([h], VALUES, [100.0])
    assert low == 1.0 and high == 1e8


# ---------------------------------------------------------------- the density figure


def _density_figure():
    from symcirc.analysis import plots

    four_kt = 4 * BOLTZMANN * 300
    sources = [("R1", FIRST_ORDER["low-pass"], nb.Density(sympy.Rational(four_kt * 1000))),
               ("R2", FIRST_ORDER["low-pass"], nb.Density(sympy.Rational(four_kt * 330))),
               ("U1.en", FIRST_ORDER["shelf"],
                nb.Density(sympy.Rational(9, 10**18), sympy.Integer(100)))]
    low, high = nb.plot_range([h for _, h, _ in sources], VALUES, [100.0])
    f = np.logspace(math.log10(low), math.log10(high), 300)
    contributions = [(name, nb.density_values(h, d, f, VALUES)) for name, h, d in sources]
    return plots.noise_density_figure(f, contributions, "V(out)", "V", band=(10.0, 1e4)), \
        contributions


def test_density_figure_has_units_total_and_a_legend_clear_of_the_data(tmp_path):
    import xml.etree.ElementTree as ET

    from symcirc.analysis import plots

    figure, contributions = _density_figure()
    first, second = tmp_path / "a.svg", tmp_path / "b.svg"
    plots.save(figure, first)
    plots.save(_density_figure()[0], second)
    assert first.read_bytes() == second.read_bytes()
    root = ET.parse(first).getroot()
    texts = ["".join(e.itertext()).strip() for e in root.iter("{http://www.w3.org/2000/svg}text")]
    # 4kT·1 kΩ at 300 K is 4.07 nV/√Hz (Johnson–Nyquist): the axis reads in nV/√Hz
    assert "Noise density (nV/√Hz)" in texts and "Frequency (Hz)" in texts
    assert {"total", "R1", "R2", "U1.en", "band 10 Hz … 10 kHz"} <= set(texts)
    axes = figure.axes[0]
    legend = axes.get_legend()
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    canvas = FigureCanvasAgg(figure)
    canvas.draw()
    renderer = canvas.get_renderer()
    box, frame = legend.get_window_extent(renderer), axes.get_window_extent(renderer)
    assert box.x0 >= frame.x1  # beside the axes, never over a curve
    total = np.sqrt(np.sum([p for _, p in contributions], axis=0)) / 1e-9
    drawn = axes.get_lines()[0].get_ydata()
    assert drawn == pytest.approx(total, rel=1e-12)
    r1 = next(line for line in axes.get_lines() if line.get_label() == "R1")
    assert r1.get_ydata()[0] == pytest.approx(4.07, abs=0.01)
    assert axes.get_xscale() == "log" and axes.get_yscale() == "log"


def test_density_figure_sums_minor_contributions():
    from symcirc.analysis import plots

    f = np.logspace(0, 5, 50)
    contributions = [(f"R{k}", np.full(50, 1e-18 * k)) for k in range(1, 10)]
    figure = plots.noise_density_figure(f, contributions, "V(out)")
    labels = [t.get_text() for t in figure.axes[0].get_legend().get_texts()]
    assert labels[:4] == ["total", "R9", "R8", "R7"]
    assert labels[-1] == "3 others"
    assert plots.density_scale(4e-9) == (1e-9, "n") and plots.density_scale(2e-12) == (1e-12, "p")


# ---------------------------------------------------------------- figures of a circuit

PHOTODIODE = """
title "Leak detector photodiode stage (invented)"
temperature 27 °C
current source Iph (gnd, n) = 1 uA
resistor Rf (n, o) = 1 MΩ ± 1 %
capacitor Cf (n, o) = 2p2
opamp U1 (gnd, n, o)
noise U1 en = 8 nV/√Hz corner 100 Hz, in = 1 fA/√Hz
noise current Idark (n, gnd) = 2 fA/√Hz
port out (o, gnd)
"""


def _texts(path):
    import xml.etree.ElementTree as ET

    root = ET.parse(path).getroot()
    return ["".join(e.itertext()).strip() for e in root.iter("{http://www.w3.org/2000/svg}text")]


def test_plot_command_draws_the_density_of_a_noise_quantity(cli, circuit_file, tmp_path):
    path = circuit_file(PHOTODIODE)
    out = tmp_path / "noise.svg"
    status, _, err = cli("plot", path, "noise_rms(out, 1 Hz, 10 kHz)", "-o", out)
    assert status == 0, err
    texts = _texts(out)
    assert {"total", "Rf", "en_U1", "Idark", "in_U1_n", "band 1 Hz … 10 kHz"} <= set(texts)
    # 4kT·1 MΩ at 300.15 K is 128.7 nV/√Hz (Johnson–Nyquist): the axis is in nV/√Hz
    assert "Noise density (nV/√Hz)" in texts and "Noise density of V(out)" in texts
    referred = tmp_path / "referred.svg"
    status, _, err = cli("plot", path, "input_noise(Iph, out)", "-o", referred)
    assert status == 0, err
    # referred to the photocurrent, en_U1 rises as en·2π·f·Cf: about 1 pA/√Hz at 10 MHz
    assert "Noise density (pA/√Hz)" in _texts(referred)
    assert "Noise density of V(out) referred to Iph" in _texts(referred)


def test_a_note_shows_one_density_figure_per_measure_and_band(cli, circuit_file, tmp_path):
    path = circuit_file(PHOTODIODE + "derive noise(out, 1 kHz), noise_contributions(out, "
                                     "1 kHz), noise_rms(out, 1 Hz, 10 kHz)\n")
    note = tmp_path / "stage.md"
    status, _, err = cli("note", path, "-o", note)
    assert status == 0, err
    figures = sorted(p.name for p in (tmp_path / "stage_figures").iterdir())
    assert [name for name in figures if "-noise-" in name] == [
        next(n for n in figures if n.startswith("noise-out-1khz-noise-")),
        next(n for n in figures if n.startswith("noise-rms-out-1hz-10khz-noise-"))]
    text = note.read_text(encoding="utf-8")
    assert "Noise density of V(out) at the nominal values: the total and each major source, " \
           "the band shaded." in text


def test_no_density_figure_without_values(cli, circuit_file, tmp_path):
    path = circuit_file(PHOTODIODE.replace("= 2p2", "") + "derive noise(out, 1 kHz)\n")
    status, _, err = cli("note", path, "-o", tmp_path / "stage.md")
    assert status == 0, err
    assert not any("-noise-" in p.name for p in (tmp_path / "stage_figures").iterdir())
    status, _, err = cli("plot", path, "noise(out)", "-o", tmp_path / "noise.svg")
    assert status == 2 and "needs a value for every symbol" in err


def test_a_response_without_poles_and_the_zero_response():
    # |H|² = 9 is flat: 9·(f2 − f1) of white noise, 9·ln(f2/f1) of 1/f noise
    white = nb.gain_integral(3 * R / R2, 10, 1000, nb.WHITE, VALUES)
    assert white.expression == 990 * 9 * R**2 / R2**2
    flicker = nb.gain_integral(sympy.Integer(3), 10, 1000, nb.FLICKER, VALUES)
    assert flicker.expression == 9 * sympy.log(100)
    assert flicker.value == pytest.approx(9 * math.log(100), rel=1e-15)
    zero = nb.gain_integral(sympy.Integer(0), 0, sympy.oo, nb.WHITE, VALUES)
    assert zero.value == 0 and zero.method == "exact: the response is zero"


def test_a_numerical_band_with_a_one_over_f_corner_says_how_each_part_was_found():
    h = 1 / ((1 + s * R * C) * (1 + s * R2 * C) * (1 + s * L / R))
    density = nb.Density(4 * k_B * T * R2, sympy.Integer(50))
    noise = nb.band_noise(h, density, 1, 10**5, VALUES)
    assert noise.mean_square is None and noise.rms is None
    assert noise.method.startswith("white part: numerical") and "; 1/f part: numerical" in \
        noise.method
    s0 = 4 * float(BOLTZMANN) * 300 * 330
    expected = s0 * (reference(h, VALUES, 1, 1e5) + 50 * reference(h, VALUES, 1, 1e5, nb.FLICKER))
    assert noise.mean_square_value == pytest.approx(expected, rel=1e-9)
    assert 0 < noise.error < 1e-8 * noise.mean_square_value


def test_sensitivities_of_a_band_noise_against_differences_of_quad():
    # which part to change: (x/U)·∂U/∂x of the rms thermal noise of R2 through a
    # second-order response over 10 Hz … 100 kHz, against central differences of the rms
    # computed by scipy quad at x·(1 ± 10⁻⁴)
    from symcirc.analysis.sensitivity import sensitivities

    h = SECOND_ORDER["general"]
    rms = nb.band_noise(h, nb.Density(4 * k_B * T * R2), 10, 10**5, VALUES).rms
    rows = {r.symbol: r for r in sensitivities(rms, VALUES).rows}
    assert float(rows[T].relative_value) == pytest.approx(0.5, rel=1e-12)  # U ∝ √T
    step = Fraction(1, 10**4)

    def log_rms(values):
        return 0.5 * math.log(float(values[R2]) * reference(h, values, 10, 1e5))

    for x in (R, C, L, R2):
        up = log_rms({**VALUES, x: VALUES[x] * (1 + step)})
        down = log_rms({**VALUES, x: VALUES[x] * (1 - step)})
        assert float(rows[x].relative_value) == pytest.approx((up - down) / (2 * float(step)),
                                                              rel=1e-5, abs=1e-7)
