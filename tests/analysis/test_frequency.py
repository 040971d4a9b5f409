"""Frequency-domain design quantities: ω0, Q, ζ, poles, −3 dB points, the response at a
frequency and its Monte Carlo band, sensitivities of the design parameters and `solve` for
a part that sets f0. Circuits are invented; every number is checked against a published
formula (named beside it), scipy.signal / numpy computing it independently, or both."""

from __future__ import annotations

import json
import math
from fractions import Fraction

import numpy
import pytest
import scipy.signal
import sympy

import symcirc
from symcirc.analysis import frequency
from symcirc.cli import main
from symcirc.errors import SymcircError
from symcirc.quantities.registry import RESPONSE_PARTS

R1, R2, R3, C1, C2, Ra, Rb, Rq = sympy.symbols("R1 R2 R3 C1 C2 Ra Rb Rq")

# Anti-alias filter of a data logger: Sallen-Key low-pass with gain K = 1 + Rb/Ra
SALLEN_KEY_LOW_PASS = """
title "Logger anti-alias filter, gain stage"
voltage source Uin (in, gnd) = 1 V
resistor R1 (in, x) = {r}
resistor R2 (x, p) = {r}
capacitor C1 (x, o) = {c}
capacitor C2 (p, gnd) = {c}
opamp U1 (p, n, o)
resistor Ra (n, gnd) = 10k
resistor Rb (o, n) = {rb}
port out (o, gnd)
"""

# Rumble filter of a vibration logger: Sallen-Key high-pass, same gain network
SALLEN_KEY_HIGH_PASS = """
title "Vibration logger rumble filter"
voltage source Uin (in, gnd) = 1 V
capacitor C1 (in, x) = {c}
capacitor C2 (x, p) = {c}
resistor R1 (x, o) = {r}
resistor R2 (p, gnd) = {r}
opamp U1 (p, n, o)
resistor Ra (n, gnd) = 10k
resistor Rb (o, n) = {rb}
port out (o, gnd)
"""

# Tone detector of a pipeline-leak logger: multiple-feedback band-pass
MFB_BAND_PASS = """
title "Leak-tone detector"
voltage source Uin (in, gnd) = 1 V
resistor R1 (in, x) = 4k7 ± 1 %
resistor R2 (x, gnd) = 220 ± 1 %
capacitor C1 (x, n) = 47n ± 5 %
capacitor C2 (x, o) = 47n ± 5 %
resistor R3 (n, o) = 100k ± 1 %
opamp U1 (gnd, n, o)
port out (o, gnd)
"""

# Tide-gauge logger smoothing: two-integrator-loop (state-variable, Tow-Thomas) section
STATE_VARIABLE = """
title "Tide-gauge smoothing section"
voltage source Uin (in, gnd) = 1 V
resistor Rin (in, n1) = 10k
capacitor C1 (n1, o1) = 10n
resistor Rq (n1, o1) = 47k
opamp A1 (gnd, n1, o1)
resistor R2 (o1, n2) = 10k
capacitor C2 (n2, o2) = 10n
opamp A2 (gnd, n2, o2)
resistor Ra (o2, n3) = 10k
resistor Rb (n3, o3) = 10k
opamp A3 (gnd, n3, o3)
resistor R3 (o3, n1) = 10k
port out (o2, gnd)
"""

# Unity-gain Sallen-Key low-pass in front of a soil-moisture logger's ADC
UNITY_GAIN = """
title "Soil-moisture logger anti-alias filter"
voltage source Uin (in, gnd) = 1 V
resistor R1 (in, x) = 12k ± 1 %
resistor R2 (x, p) = 33k ± 1 %
capacitor C1 (x, o) = 22n ± 5 %
capacitor C2 (p, gnd) = 4n7 ± 5 %
opamp U1 (p, o, o)
port out (o, gnd)
"""


def same(a: sympy.Expr, b: sympy.Expr) -> bool:
    """a = b exactly, for positive part values (roots of products then combine)."""
    positive = {x: sympy.Symbol(x.name, positive=True) for x in (a - b).free_symbols}
    return sympy.simplify((a - b).xreplace(positive)) == 0


def load(text: str) -> symcirc.Circuit:
    return symcirc.parse(text)


def one(circuit: symcirc.Circuit, quantity: str, **options) -> symcirc.Result:
    (result,) = circuit.derive(quantity, **options)
    return result


def nominal_coefficients(circuit: symcirc.Circuit, quantity: str):
    """(b, a) of the nominal response, highest power first, for scipy.signal."""
    result = one(circuit, quantity)
    values = {sympy.Symbol(k): sympy.Rational(v.numerator, v.denominator)
              for k, v in ((str(s), n) for s, n in circuit.symbol_nominals().items())}
    h = sympy.cancel(result.expression.xreplace(values))
    s = sympy.Symbol("s")
    num, den = sympy.fraction(h)
    return ([float(c) for c in sympy.Poly(num, s).all_coeffs()],
            [float(c) for c in sympy.Poly(den, s).all_coeffs()])


def q_from_poles(b, a) -> float:
    """Q of a second-order section from its poles (scipy): |p|/(−2·Re p), signed."""
    _, poles, _ = scipy.signal.tf2zpk(b, a)
    p = poles[0]
    return abs(p) / (-2 * p.real)


# ---------------------------------------------------------------- the sign of Q


@pytest.mark.parametrize("template", [SALLEN_KEY_LOW_PASS, SALLEN_KEY_HIGH_PASS])
@pytest.mark.parametrize("rb", ["5.86k", "10k", "15k"])
def test_sallen_key_equal_parts_q_is_one_over_three_minus_k(template, rb):
    # Van Valkenburg, "Analog Filter Design" (1982), equal-component Sallen-Key sections,
    # from memory: Q = 1/(3 − K), K = 1 + Rb/Ra, for the low-pass and the high-pass alike
    circuit = load(template.format(r="10k", c="10n", rb=rb))
    k = 1 + float(Fraction(rb.replace("k", "")) * 1000) / 10e3
    q = one(circuit, "gain(Uin, out).Q")
    assert q.nominal == pytest.approx(1 / (3 - k), rel=1e-12)
    assert one(circuit, "gain(Uin, out).zeta").nominal == pytest.approx((3 - k) / 2, rel=1e-12)
    assert one(circuit, "gain(Uin, out).K").nominal == pytest.approx(k, rel=1e-12)
    assert q.nominal == pytest.approx(q_from_poles(*nominal_coefficients(circuit,
                                                                         "gain(Uin, out)")))
    assert not any("Unstable" in n for n in q.notes)


def test_butterworth_sallen_key_is_reported_with_positive_q_in_the_design_form():
    circuit = load(SALLEN_KEY_LOW_PASS.format(r="10k", c="10n", rb="5.86k"))
    result = one(circuit, "gain(Uin, out)", steps=True)
    assert result.form.parameters["Q"]["nominal"] == pytest.approx(1 / (3 - 1.586))
    assert result.form.parameters["ζ"]["nominal"] > 0


def test_a_gain_above_three_gives_negative_q_and_is_said_unstable():
    # K = 3.2 > 3: the equal-component section oscillates (Q = 1/(3 − K) = −5)
    circuit = load(SALLEN_KEY_LOW_PASS.format(r="10k", c="10n", rb="22k"))
    q = one(circuit, "gain(Uin, out).Q")
    assert q.nominal == pytest.approx(-5, rel=1e-12)
    assert any(n.startswith("Unstable") for n in q.notes)
    b, a = nominal_coefficients(circuit, "gain(Uin, out)")
    assert q_from_poles(b, a) == pytest.approx(-5)
    assert all(p.real > 0 for p in numpy.roots(a))  # numpy: both poles right of the axis
    shown = one(circuit, "gain(Uin, out)", steps=True)
    assert any(n.startswith("Unstable") for n in shown.notes)
    table = one(circuit, "response(gain(Uin, out), 1 kHz)")
    assert any(n.startswith("Unstable") for n in table.notes)


def test_multiple_feedback_band_pass_parameters():
    circuit = load(MFB_BAND_PASS)
    # Mancini (ed.), "Op Amps for Everyone", TI, multiple-feedback band-pass, from memory:
    # ω0 = √((R1 + R2)/(R1·R2·R3·C1·C2)), Q = ω0·R3·C1·C2/(C1 + C2), K = −R3·C1/(R1·(C1 + C2))
    w0 = sympy.sqrt((R1 + R2) / (R1 * R2 * R3 * C1 * C2))
    q = one(circuit, "gain(Uin, out).Q")
    assert same(q.expression, w0 * R3 * C1 * C2 / (C1 + C2))
    assert same(one(circuit, "gain(Uin, out).w0").expression, w0)
    assert sympy.simplify(one(circuit, "gain(Uin, out).K").expression
                          + R3 * C1 / (R1 * (C1 + C2))) == 0
    b, a = nominal_coefficients(circuit, "gain(Uin, out)")
    assert q.nominal > 0
    assert q.nominal == pytest.approx(q_from_poles(b, a))
    # −3 dB bandwidth of a second-order band-pass is exactly f0/Q: check both edges
    edges = circuit.derive("gain(Uin, out).f3db")
    assert [r.quantity for r in edges] == ["gain(Uin, out).f3db_low", "gain(Uin, out).f3db_high"]
    bandwidth = one(circuit, "gain(Uin, out).bandwidth").nominal
    assert edges[1].nominal - edges[0].nominal == pytest.approx(bandwidth, rel=1e-9)
    f0 = one(circuit, "gain(Uin, out).centre").nominal
    assert math.sqrt(edges[0].nominal * edges[1].nominal) == pytest.approx(f0, rel=1e-9)
    _, peak = scipy.signal.freqs(b, a, worN=[2 * math.pi * f0])
    for edge in edges:
        _, h = scipy.signal.freqs(b, a, worN=[2 * math.pi * edge.nominal])
        assert abs(h[0]) == pytest.approx(abs(peak[0]) / math.sqrt(2), rel=1e-9)


def test_state_variable_section():
    circuit = load(STATE_VARIABLE)
    # Tow-Thomas two-integrator loop, from memory (Tow 1968, Thomas 1971): with an inverter
    # of gain k = Rb/Ra in the loop, ω0 = √(k/(R2·R3·C1·C2)) and Q = Rq·√(k·C1/(R2·R3·C2))
    k = Rb / Ra
    q = one(circuit, "gain(Uin, out).Q")
    assert same(q.expression, Rq * sympy.sqrt(k * C1 / (R2 * R3 * C2)))
    w0 = one(circuit, "gain(Uin, out).w0")
    assert same(w0.expression, sympy.sqrt(k / (R2 * R3 * C1 * C2)))
    assert q.nominal == pytest.approx(4.7)
    b, a = nominal_coefficients(circuit, "gain(Uin, out)")
    assert q.nominal == pytest.approx(q_from_poles(b, a))
    assert one(circuit, "gain(Uin, out).dc").nominal == pytest.approx(b[-1] / a[-1])


# ---------------------------------------------------------------- sensitivities


def test_unity_gain_sallen_key_sensitivities_match_the_handbook():
    # Huelsman & Allen, "Introduction to the Theory and Design of Active Filters" (1980),
    # unity-gain Sallen-Key low-pass, from memory: S^ω0 = −1/2 for each R and C;
    # S^Q_C1 = −S^Q_C2 = 1/2; S^Q_R1 = −S^Q_R2 = (R2 − R1)/(2·(R1 + R2))
    circuit = load(UNITY_GAIN)
    for x in ("R1", "R2", "C1", "C2"):
        assert one(circuit, f"relative_sensitivity(gain(Uin, out).w0, {x})").expression \
            == sympy.Rational(-1, 2)
        assert one(circuit, f"relative_sensitivity(gain(Uin, out).f0, {x})").expression \
            == sympy.Rational(-1, 2)
    assert one(circuit, "relative_sensitivity(gain(Uin, out).Q, C1)").expression \
        == sympy.Rational(1, 2)
    assert one(circuit, "relative_sensitivity(gain(Uin, out).Q, C2)").expression \
        == sympy.Rational(-1, 2)
    s_r1 = one(circuit, "relative_sensitivity(gain(Uin, out).Q, R1)").expression
    s_r2 = one(circuit, "relative_sensitivity(gain(Uin, out).Q, R2)").expression
    assert same(s_r1, (R2 - R1) / (2 * (R1 + R2)))
    assert sympy.simplify(s_r1 + s_r2) == 0
    # the sensitivities table gives the same numbers, largest first
    rows = circuit.derive("sensitivities(gain(Uin, out).w0)")
    assert {r.quantity.rsplit(".", 1)[1]: r.nominal for r in rows} == \
        {"R1": -0.5, "R2": -0.5, "C1": -0.5, "C2": -0.5}


def test_equal_component_sallen_key_sensitivity_of_q_to_gain():
    # Van Valkenburg, "Analog Filter Design" (1982), equal-component Sallen-Key, from
    # memory: S^Q_K = 3Q − 1 (= Q·K); K = 1 + Rb/Ra, so S^Q_Rb = S^Q_K·S^K_Rb = Q·(K − 1)
    circuit = load(SALLEN_KEY_LOW_PASS.format(r="10k", c="10n", rb="12k"))
    k = 2.2
    q = 1 / (3 - k)
    assert one(circuit, "relative_sensitivity(gain(Uin, out).Q, Rb)").nominal == \
        pytest.approx(q * (k - 1), rel=1e-12)
    assert one(circuit, "relative_sensitivity(gain(Uin, out).Q, Ra)").nominal == \
        pytest.approx(-q * (k - 1), rel=1e-12)
    assert (3 * q - 1) == pytest.approx(q * k)
    assert one(circuit, "relative_sensitivity(gain(Uin, out).w0, Rb)").expression == 0


def test_mfb_band_pass_sensitivities_match_the_handbook_and_finite_differences():
    # Huelsman & Allen (1980), multiple-feedback (Delyiannis-Friend) band-pass, from memory:
    # S^ω0_R3 = −1/2, S^Q_R3 = 1/2, S^ω0_R1 = −R2/(2(R1 + R2)), S^Q_C1 = (C2 − C1)/(2(C1 + C2))
    circuit = load(MFB_BAND_PASS)
    assert one(circuit, "relative_sensitivity(gain(Uin, out).w0, R3)").expression \
        == sympy.Rational(-1, 2)
    assert one(circuit, "relative_sensitivity(gain(Uin, out).Q, R3)").expression \
        == sympy.Rational(1, 2)
    s = one(circuit, "relative_sensitivity(gain(Uin, out).w0, R1)").expression
    assert sympy.simplify(s + R2 / (2 * (R1 + R2))) == 0
    s = one(circuit, "relative_sensitivity(gain(Uin, out).Q, C1)").expression
    assert same(s, (C2 - C1) / (2 * (C1 + C2)))
    # independent: Q from scipy's poles at ±0.1 ppm of R1, central difference
    nominal = circuit.symbol_nominals()
    r1 = float(nominal[sympy.Symbol("R1")])

    def q_at(value: float) -> float:
        b, a = nominal_coefficients(load(MFB_BAND_PASS.replace("4k7 ± 1 %", f"{value!r}")),
                                    "gain(Uin, out)")
        return q_from_poles(b, a)

    h = r1 * 1e-7
    numeric = (q_at(r1 + h) - q_at(r1 - h)) / (2 * h) * r1 / q_at(r1)
    exact = one(circuit, "relative_sensitivity(gain(Uin, out).Q, R1)").nominal
    assert exact == pytest.approx(numeric, rel=1e-5, abs=1e-7)


# ---------------------------------------------------------------- solve for f0


def test_solve_puts_f0_at_a_target_with_e_series_neighbours_checked_by_scipy():
    circuit = load(UNITY_GAIN)
    (result,) = circuit.derive("solve(gain(Uin, out).f0 = 1 kHz, C1)")
    solved = result.details["solve"]
    # closed form: f0 = 1/(2π√(R1·R2·C1·C2)) ⇒ C1 = 1/((2π·1 kHz)²·R1·R2·C2)
    expected = 1 / ((2 * math.pi * 1000) ** 2 * 12e3 * 33e3 * 4.7e-9)
    assert solved["value"] == pytest.approx(expected, rel=1e-12)
    for series in ("E12", "E24", "E96"):
        choice = solved["series"][series]
        assert choice["below"] <= expected <= choice["above"]
        for side in ("below", "above"):
            text = UNITY_GAIN.replace("22n ± 5 %", repr(choice[side]))
            b, a = nominal_coefficients(load(text), "gain(Uin, out)")
            _, poles, _ = scipy.signal.tf2zpk(b, a)
            f0 = math.sqrt(abs(numpy.prod(poles))) / (2 * math.pi)
            assert choice[f"q_{side}"] == pytest.approx(f0, rel=1e-9)
        best = choice["best"]
        other = choice["above"] if best == choice["below"] else choice["below"]
        q_best = choice["q_below"] if best == choice["below"] else choice["q_above"]
        q_other = choice["q_above"] if best == choice["below"] else choice["q_below"]
        assert abs(q_best - 1000) <= abs(q_other - 1000) and other != best


def test_solve_for_a_magnitude_at_a_frequency():
    circuit = load(UNITY_GAIN)
    results = circuit.derive("solve(at(gain(Uin, out), 1 kHz).magnitude = 0.5, C2)")
    values = [r.details["solve"]["value"] for r in results if r.details["solve"]["value"]]
    assert values
    for value in values:
        text = UNITY_GAIN.replace("4n7 ± 5 %", repr(value))
        b, a = nominal_coefficients(load(text), "gain(Uin, out)")
        _, h = scipy.signal.freqs(b, a, worN=[2 * math.pi * 1000])
        assert abs(h[0]) == pytest.approx(0.5, rel=1e-9)


# ---------------------------------------------------------------- at a frequency, tables


def test_at_frequency_and_response_table_match_scipy_freqs():
    circuit = load(UNITY_GAIN)
    b, a = nominal_coefficients(circuit, "gain(Uin, out)")
    for f in (100.0, 1000.0, 3300.0):
        parts = {r.quantity.split(".")[-1]: r.nominal
                 for r in circuit.derive(f"at(gain(Uin, out), {f:g} Hz)")}
        _, h = scipy.signal.freqs(b, a, worN=[2 * math.pi * f])
        assert parts["magnitude"] == pytest.approx(abs(h[0]), rel=1e-12)
        assert parts["dB"] == pytest.approx(20 * math.log10(abs(h[0])), rel=1e-12)
        assert parts["phase"] == pytest.approx(math.degrees(numpy.angle(h[0])), rel=1e-12)
    (table,) = circuit.derive("response(gain(Uin, out))")
    rows = table.details["response"]["rows"]
    frequencies = [r["frequency"] for r in rows]
    _, h = scipy.signal.freqs(b, a, worN=2 * math.pi * numpy.array(frequencies))
    assert [r["magnitude"] for r in rows] == pytest.approx(list(abs(h)), rel=1e-12)
    assert [r["phase"] for r in rows] == \
        pytest.approx(list(numpy.degrees(numpy.unwrap(numpy.angle(h)))), rel=1e-9)
    # decade points and the −3 dB point by default
    corner = one(circuit, "gain(Uin, out).f3db").nominal
    assert corner in frequencies
    assert {10.0**k for k in range(1, 5)} <= set(frequencies)
    _, at_corner = scipy.signal.freqs(b, a, worN=[2 * math.pi * corner])
    assert abs(at_corner[0]) == pytest.approx(1 / math.sqrt(2), rel=1e-12)
    _, below = scipy.signal.freqs(b, a, worN=2 * math.pi * numpy.linspace(1, corner, 2000)[:-1])
    assert (abs(below) > 1 / math.sqrt(2)).all()  # the first crossing, not a later one
    assert any("(−3 dB)" in n for n in table.notes)


def test_dc_and_high_frequency_limits():
    circuit = load(SALLEN_KEY_HIGH_PASS.format(r="10k", c="10n", rb="10k"))
    assert one(circuit, "gain(Uin, out).dc").expression == 0
    assert one(circuit, "gain(Uin, out).hf").nominal == pytest.approx(2.0)
    assert one(circuit, "gain(Uin, out) where s -> oo").nominal == pytest.approx(2.0)
    assert one(circuit, "gain(Uin, out)", where="s -> 0").expression == 0
    parts = {r.quantity.split(".")[-1]: r.nominal for r in circuit.derive("at(gain(Uin, out), oo)")}
    assert parts["magnitude"] == pytest.approx(2.0)
    assert parts["phase"] == pytest.approx(0.0)


def test_tolerance_and_sensitivities_of_the_magnitude_at_a_frequency():
    circuit = load(UNITY_GAIN)
    (spread,) = circuit.derive("tolerance(at(gain(Uin, out), 1 kHz).magnitude)")
    table = spread.details["tolerance"]
    extremes = table["extremes"]
    # numpy, independently: |H(j2π·1 kHz)| at every corner of the tolerance box
    w = 2 * math.pi * 1000
    corners = []
    for r1 in (12e3 * 0.99, 12e3 * 1.01):
        for r2 in (33e3 * 0.99, 33e3 * 1.01):
            for c1 in (22e-9 * 0.95, 22e-9 * 1.05):
                for c2 in (4.7e-9 * 0.95, 4.7e-9 * 1.05):
                    corners.append(abs(1 / (1 + 1j * w * c2 * (r1 + r2)
                                            - w**2 * r1 * r2 * c1 * c2)))
    assert extremes["low"] == pytest.approx(min(corners), rel=1e-6)
    assert extremes["high"] == pytest.approx(max(corners), rel=1e-6)
    rows = circuit.derive("sensitivities(at(gain(Uin, out), 1 kHz).dB)")
    assert len(rows) == 4


def test_monte_carlo_band_matches_an_independent_numpy_monte_carlo():
    circuit = load(UNITY_GAIN)
    result = one(circuit, "gain(Uin, out)")
    f = numpy.array([300.0, 1000.0, 3000.0])
    band = frequency.response_band(circuit, result, f, samples=20000, seed=5)
    rng = numpy.random.default_rng(12345)
    n = 400000
    r1, r2 = rng.uniform(12e3 * 0.99, 12e3 * 1.01, n), rng.uniform(33e3 * 0.99, 33e3 * 1.01, n)
    c1, c2 = rng.uniform(22e-9 * 0.95, 22e-9 * 1.05, n), rng.uniform(4.7e-9 * 0.95,
                                                                    4.7e-9 * 1.05, n)
    jw = 2j * math.pi * f[None, :]
    h = 1 / (1 + jw * (c2 * (r1 + r2))[:, None] + jw**2 * (r1 * r2 * c1 * c2)[:, None])
    db = 20 * numpy.log10(abs(h))
    phase = numpy.degrees(numpy.angle(h))
    for ours, theirs in ((band.low_db, numpy.quantile(db, 0.001, axis=0)),
                         (band.high_db, numpy.quantile(db, 0.999, axis=0)),
                         (band.low_phase, numpy.quantile(phase, 0.001, axis=0)),
                         (band.high_phase, numpy.quantile(phase, 0.999, axis=0))):
        width = numpy.quantile(db if ours is band.low_db or ours is band.high_db else phase,
                               0.999, axis=0) - numpy.quantile(
            db if ours is band.low_db or ours is band.high_db else phase, 0.001, axis=0)
        assert numpy.all(abs(ours - theirs) < 0.05 * width)
    assert band.nominal_db == pytest.approx(20 * numpy.log10(abs(
        1 / (1 + 2j * math.pi * f * 4.7e-9 * 45e3 - (2 * math.pi * f) ** 2
             * 12e3 * 33e3 * 22e-9 * 4.7e-9))), rel=1e-9)


# ---------------------------------------------------------------- poles of higher order

BUFFERED_RC = """
title "Three buffered RC sections smoothing a logger reference"
voltage source Uin (b0, gnd) = 1 V
resistor R1 (b0, x1) = 10k
capacitor C1 (x1, gnd) = 100n
opamp U1 (x1, b1, b1)
resistor R2 (b1, x2) = 22k
capacitor C2 (x2, gnd) = 100n
opamp U2 (x2, b2, b2)
resistor R3 (b2, x3) = 47k
capacitor C3 (x3, gnd) = 100n
port out (x3, gnd)
"""


def test_poles_above_degree_two_by_root_isolation_match_numpy():
    circuit = load(BUFFERED_RC)
    poles = circuit.derive("gain(Uin, out).poles")
    assert [p.quantity for p in poles] == [f"gain(Uin, out).p{k}" for k in (1, 2, 3)]
    values = sorted(p.details["response"]["value"][0] for p in poles)
    _, a = nominal_coefficients(circuit, "gain(Uin, out)")
    assert values == pytest.approx(sorted(numpy.roots(a).real), rel=1e-12)
    with pytest.raises(SymcircError, match="order 3"):
        circuit.derive("gain(Uin, out).Q")


def test_second_order_poles_in_closed_form():
    circuit = load(SALLEN_KEY_LOW_PASS.format(r="10k", c="10n", rb="5.86k"))
    poles = circuit.derive("gain(Uin, out).poles")
    assert len(poles) == 2 and all("s" not in p.symbols for p in poles)
    _, a = nominal_coefficients(circuit, "gain(Uin, out)")
    found = sorted((complex(*p.details["response"]["value"]) for p in poles),
                   key=lambda z: (z.real, z.imag))
    assert found == pytest.approx(sorted(numpy.roots(a), key=lambda z: (z.real, z.imag)))


def test_first_order_parts():
    circuit = load("""
voltage source Uin (in, gnd) = 1 V
resistor R (in, o) = 10k
capacitor C (o, gnd) = 100n
port out (o, gnd)
""")
    assert str(one(circuit, "gain(Uin, out).tau").expression) == "C*R"
    assert one(circuit, "gain(Uin, out).fp").nominal == pytest.approx(1 / (2 * math.pi * 1e-3))
    # first-order low-pass: −3 dB at the pole frequency (common practice)
    assert one(circuit, "gain(Uin, out).f3db").nominal == \
        pytest.approx(one(circuit, "gain(Uin, out).fp").nominal, rel=1e-12)
    with pytest.raises(SymcircError, match="band-pass or notch"):
        circuit.derive("gain(Uin, out).bandwidth")


def test_response_parts_listed_once():
    assert tuple(frequency.PARTS) == RESPONSE_PARTS


# ---------------------------------------------------------------- command line and JSON


def test_where_on_the_command_line_and_as_a_python_argument(tmp_path, capsys):
    path = tmp_path / "loaded.circuit"
    path.write_text(MFB_BAND_PASS + "resistor Rload (o, gnd) = 2k\n"
                    "derive V(out) where Rload -> oo\n", encoding="utf-8")
    assert main(["derive", str(path), "--format", "json"]) == 0
    from_file = json.loads(capsys.readouterr().out)["results"][0]
    assert main(["derive", str(path), "V(out) where Rload -> oo", "--format", "json"]) == 0
    from_line = json.loads(capsys.readouterr().out)["results"][0]
    assert from_line["expression"] == from_file["expression"]
    assert from_line["quantity"] == "V(out) where Rload -> oo"
    circuit = symcirc.load(path)
    (python,) = circuit.derive("V(out)", where="Rload -> oo")
    assert python.text() == from_file["expression"]
    assert main(["derive", str(path), "V(out) where Rlod -> oo"]) == 2
    assert "<command line>:1:14: error" in capsys.readouterr().err


def test_derive_latex_and_markdown_define_the_design_parameters(tmp_path, capsys):
    path = tmp_path / "sk.circuit"
    path.write_text(UNITY_GAIN, encoding="utf-8")
    assert main(["derive", str(path), "gain(Uin, out)", "--format", "latex", "--steps"]) == 0
    latex = capsys.readouterr().out
    assert r"\omega_{0} &= " in latex and r"Q &= " in latex and r"\zeta &= " in latex
    assert "% step 1:" in latex
    assert main(["derive", str(path), "gain(Uin, out)", "--format", "markdown", "--steps"]) == 0
    markdown = capsys.readouterr().out
    assert r"- $\omega_{0} = " in markdown and "- $K = " in markdown
    assert "\n1. " in markdown


def test_json_carries_the_numbers_at_a_frequency(tmp_path, capsys):
    path = tmp_path / "rc.circuit"
    path.write_text("voltage source Uin (in, gnd) = 1 V\nresistor R1 (in, o) = 10k\n"
                    "capacitor C1 (o, gnd) = 10n\nport out (o, gnd)\n", encoding="utf-8")
    assert main(["derive", str(path), "loading(out, 10k, 1 kHz).error",
                 "at(gain(Uin, out), 1 kHz)", "--format", "json"]) == 0
    results = json.loads(capsys.readouterr().out)["results"]
    error = results[0]["loading"]["at_frequency"]["error"]
    # independent: Z_th = R1 ∥ 1/(jωC1), error −Z_th/(Z_th + Z_L)
    z = 1 / (1 / 10e3 + 2j * math.pi * 1000 * 10e-9)
    assert complex(*error) == pytest.approx(-z / (z + 10e3), rel=1e-12)
    at = results[1]["at_frequency"]
    h = 1 / (1 + 2j * math.pi * 1000 * 10e3 * 10e-9)
    assert at["magnitude"] == pytest.approx(abs(h), rel=1e-12)
    assert at["phase"] == pytest.approx(math.degrees(numpy.angle(h)), rel=1e-12)


# ---------------------------------------------------------------- notes


def test_note_shows_the_response_table_band_figure_and_symbols(tmp_path):
    from markdown_it import MarkdownIt

    path = tmp_path / "soil.circuit"
    path.write_text(UNITY_GAIN + "derive response(gain(Uin, out)), gain(Uin, out).Q\n"
                    "derive at(gain(Uin, out), 1 kHz).dB\n", encoding="utf-8")
    out = tmp_path / "soil.md"
    assert main(["note", str(path), "-o", str(out)]) == 0
    text = out.read_text(encoding="utf-8")
    assert "Response at chosen frequencies" in text and "| 1 kHz |" in text
    assert "(−3 dB) |" in text and "Monte Carlo samples" in text
    assert "with the Monte Carlo band" in text
    assert list((tmp_path / "soil_figures").glob("response-gain-uin-out-response*.svg"))
    assert r"Q\left(\frac{V_{\mathrm{out}}}{U_{\mathrm{in}}}\right)" in text
    assert r"20 \log_{10} \left\lvert" in text
    # every inline formula survives a CommonMark renderer (no `|` splitting a table cell)
    rendered = MarkdownIt("commonmark").enable("table").render(text)
    import html
    import re

    shown = html.unescape(re.sub(r"<[^>]+>", "", rendered))
    assert all(f in shown for f in re.findall(r"(?<![$\\])\$([^$\n]+)\$", text))
    first = out.read_bytes()
    assert main(["note", str(path), "-o", str(out)]) == 0
    assert out.read_bytes() == first  # the Monte Carlo band is seeded: the note repeats


def test_parts_of_an_approximated_response_are_those_of_the_approximation():
    circuit = load(UNITY_GAIN)
    approximated = one(circuit, "gain(Uin, out) where R2 >> R1")
    poles = circuit.derive("gain(Uin, out).poles where R2 >> R1")
    s = sympy.Symbol("s")
    denominator = sympy.Poly(sympy.fraction(sympy.together(approximated.expression))[1], s)
    expected = sympy.roots(denominator, multiple=True)
    assert sorted(map(str, (p.expression for p in poles))) == \
        sorted(map(str, (sympy.together(r) for r in expected)))
    assert all("neglected" in p.details for p in poles)


# Hum filter on a power-line monitor input: series LC to ground behind a resistor (notch)
NOTCH = """
title "Mains-hum notch of a line monitor (signal side only)"
voltage source Uin (in, gnd) = 1 V
resistor R (in, o) = 1k
inductor L (o, m) = 100m
capacitor C (m, gnd) = 10u
port out (o, gnd)
"""


def test_notch_centre_and_bandwidth_match_its_minus_3_db_edges():
    circuit = load(NOTCH)
    # H = (1 + s²LC)/(1 + sRC + s²LC): centre 1/(2π√(LC)), bandwidth R/(2πL) (common practice)
    assert one(circuit, "gain(Uin, out).centre").nominal == \
        pytest.approx(1 / (2 * math.pi * math.sqrt(0.1 * 10e-6)))
    bandwidth = one(circuit, "gain(Uin, out).bandwidth")
    assert same(bandwidth.expression, sympy.Symbol("R") / (2 * sympy.pi * sympy.Symbol("L")))
    low, high = (r.nominal for r in circuit.derive("gain(Uin, out).f3db"))
    assert high - low == pytest.approx(bandwidth.nominal, rel=1e-9)
    b, a = nominal_coefficients(circuit, "gain(Uin, out)")
    _, h = scipy.signal.freqs(b, a, worN=[2 * math.pi * low, 2 * math.pi * high])
    assert abs(h) == pytest.approx([1 / math.sqrt(2)] * 2, rel=1e-9)


def test_claims_on_q_are_decided_with_their_sign(tmp_path, capsys):
    path = tmp_path / "sk.circuit"
    path.write_text(UNITY_GAIN, encoding="utf-8")
    right = "gain(Uin, out).Q = sqrt(R1*R2*C1*C2)/(C2*(R1 + R2))"
    assert main(["check", str(path), right]) == 0
    assert main(["check", str(path), "gain(Uin, out).Q = -sqrt(R1*R2*C1*C2)/(C2*(R1 + R2))"]) \
        == 1
    assert "sign" in capsys.readouterr().out


def test_exported_design_parameter_computes_the_closed_form(tmp_path):
    import importlib.util

    path = tmp_path / "sk.circuit"
    path.write_text(UNITY_GAIN, encoding="utf-8")
    code = tmp_path / "formulas.py"
    assert main(["export", str(path), "gain(Uin, out).f0", "gain(Uin, out).Q", "--lang",
                 "python", "-o", str(code)]) == 0
    spec = importlib.util.spec_from_file_location("formulas", code)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    values = {"R1": 12e3, "R2": 33e3, "C1": 22e-9, "C2": 4.7e-9}
    f0 = module.gain_Uin_out_f0(**values)
    assert f0 == pytest.approx(1 / (2 * math.pi * math.sqrt(12e3 * 33e3 * 22e-9 * 4.7e-9)))
    b, a = nominal_coefficients(load(UNITY_GAIN), "gain(Uin, out)")
    assert module.gain_Uin_out_Q(**values) == pytest.approx(q_from_poles(b, a))


def test_derive_with_values_says_an_unstable_response_is_unstable(tmp_path, capsys):
    path = tmp_path / "oscillating.circuit"
    path.write_text(SALLEN_KEY_LOW_PASS.format(r="10k", c="10n", rb="22k"), encoding="utf-8")
    assert main(["derive", str(path), "gain(Uin, out)", "--values"]) == 0
    assert "note: Unstable: 2 poles in the right half-plane" in capsys.readouterr().out
    path.write_text(SALLEN_KEY_LOW_PASS.format(r="10k", c="10n", rb="5.86k"), encoding="utf-8")
    assert main(["derive", str(path), "gain(Uin, out)", "--values"]) == 0
    assert "Unstable" not in capsys.readouterr().out


def test_parts_keep_the_where_clause_of_their_response():
    circuit = load(SALLEN_KEY_LOW_PASS.format(r="10k", c="10n", rb="10k"))
    (db,) = circuit.derive("at(gain(Uin, out), 1 kHz).dB where Rb -> 0")
    assert db.quantity == "at(gain(Uin, out), 1kHz).dB where Rb -> 0"
    # Rb -> 0 leaves the unity-gain section: |H(j2π·1 kHz)| with K = 1, independently
    w = 2 * math.pi * 1000
    h = 1 / (1 + 1j * w * 10e-9 * 20e3 - w**2 * (10e3 * 10e-9) ** 2)
    assert db.nominal == pytest.approx(20 * math.log10(abs(h)), rel=1e-12)
    (q,) = circuit.derive("gain(Uin, out).Q where Rb -> 0")
    assert q.quantity == "gain(Uin, out).Q where Rb -> 0" and q.nominal == pytest.approx(0.5)


def test_sensitivity_of_phase_and_db_at_a_frequency_match_finite_differences():
    circuit = load(UNITY_GAIN)
    w = 2 * math.pi * 1000

    def h(c1: float):  # the unity-gain section, independently (numpy)
        return 1 / (1 + 1j * w * 4.7e-9 * 45e3 - w**2 * 12e3 * 33e3 * c1 * 4.7e-9)

    step = 22e-9 * 1e-6
    phase = (numpy.degrees(numpy.angle(h(22e-9 + step)))
             - numpy.degrees(numpy.angle(h(22e-9 - step)))) / (2 * step)
    db = (20 * math.log10(abs(h(22e-9 + step))) - 20 * math.log10(abs(h(22e-9 - step)))) \
        / (2 * step)
    assert one(circuit, "sensitivity(at(gain(Uin, out), 1 kHz).phase, C1)").nominal == \
        pytest.approx(phase, rel=1e-6)
    assert one(circuit, "sensitivity(at(gain(Uin, out), 1 kHz).dB, C1)").nominal == \
        pytest.approx(db, rel=1e-6)
    relative = one(circuit, "relative_sensitivity(at(gain(Uin, out), 1 kHz).magnitude, C1)")
    assert relative.nominal == pytest.approx(db * 22e-9 * math.log(10) / 20, rel=1e-6)


def test_a_response_without_s_has_itself_as_dc_and_hf_gain(cli, tmp_path):
    """A resistive divider's gain is flat: its DC and high-frequency gains are the divider
    ratio R1/(R1 + R2) (common practice); ω0 of a flat response is refused with a reason."""
    path = tmp_path / "flat.circuit"
    path.write_text("resistor R1 (a, gnd) = 1k\nvoltage source Ub (a, b) = 5 V\n"
                    "resistor R2 (b, gnd) = 3k\nport p (a, gnd)\n", encoding="utf-8")
    status, out, _ = cli("derive", path, "gain(Ub, p).dc", "gain(Ub, p).hf", "--format", "json")
    assert status == 0
    results = json.loads(out)["results"]
    assert [r["nominal"] for r in results] == [0.25, 0.25]
    status, _, err = cli("derive", path, "gain(Ub, p).w0")
    assert status == 2 and "does not depend on s" in err
