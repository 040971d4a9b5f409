"""Derived filter transfer functions against scipy's independent analog filter designs.

Each circuit realises a textbook prototype with exact part values; scipy.signal designs the
same prototype from its specification alone (butter) and scipy.signal.freqs evaluates both
responses on a frequency grid.
"""

from __future__ import annotations

from fractions import Fraction

import numpy
import pytest
import scipy.signal

import symcirc


def coefficients(circuit: symcirc.Circuit, quantity: str) -> tuple[list[float], list[float]]:
    """Numerator and denominator coefficients in s (highest power first) at nominal values."""
    (result,) = circuit.derive(quantity)
    function = result.exact
    ring = function.ring
    values = {str(k): v for k, v in circuit.symbol_nominals().items()}

    def in_s(poly) -> list[float]:
        parts = ring.coefficients(poly, "s")
        top = max(parts)
        return [float(ring.evaluate(parts[k], values)) if k in parts else 0.0
                for k in range(top, -1, -1)]

    return in_s(function.numerator), in_s(function.denominator)


def test_sallen_key_butterworth_low_pass_matches_scipy_butter():
    # equal resistors R, C2 = C to ground and C1 = 2*C in feedback: Q = 1/sqrt(2) and
    # w0 = 1/(sqrt(2)*R*C), a second-order Butterworth (Sallen & Key 1955 design equations)
    circuit = symcirc.parse(
        "voltage source Uin (in, gnd)\nresistor R1 (in, x) = 10k\nresistor R2 (x, p) = 10k\n"
        "capacitor C1 (x, o) = 20n\ncapacitor C2 (p, gnd) = 10n\nopamp U1 (p, o, o)\n"
        "port out (o, gnd)\n")
    b, a = coefficients(circuit, "gain(Uin, out)")
    w0 = 1 / (2**0.5 * 10e3 * 10e-9)
    b_ref, a_ref = scipy.signal.butter(2, w0, analog=True)
    w = numpy.logspace(2, 6, 200)
    _, h = scipy.signal.freqs(b, a, w)
    _, h_ref = scipy.signal.freqs(b_ref, a_ref, w)
    assert numpy.allclose(h, h_ref, rtol=1e-9, atol=1e-12)


def test_series_rlc_band_pass_matches_scipy_butter_band_pass():
    # series L, C with the output across R: (R/L)*s/(s**2 + (R/L)*s + 1/(L*C)), the
    # first-order Butterworth band-pass with bandwidth w2 - w1 = R/L and centre w1*w2 = 1/(L*C)
    w1, w2 = Fraction(2000), Fraction(8000)
    inductance = Fraction(1, 1000)
    resistance = inductance * (w2 - w1)
    capacitance = 1 / (inductance * w1 * w2)
    circuit = symcirc.parse(
        f"voltage source U (i, gnd)\ninductor L (i, a) = {inductance}\n"
        f"capacitor C (a, o) = {capacitance}\nresistor R (o, gnd) = {resistance}\n"
        "port out (o, gnd)\n")
    b, a = coefficients(circuit, "gain(U, out)")
    b_ref, a_ref = scipy.signal.butter(1, [float(w1), float(w2)], btype="bandpass", analog=True)
    w = numpy.logspace(2, 6, 200)
    _, h = scipy.signal.freqs(b, a, w)
    _, h_ref = scipy.signal.freqs(b_ref, a_ref, w)
    assert numpy.allclose(h, h_ref, rtol=1e-9, atol=1e-12)


def test_rc_ladder_low_pass_pole_positions_match_scipy_roots():
    # a two-section RC ladder has two real poles; scipy.signal.tf2zpk on the derived
    # denominator finds them, and they solve s**2*R**2*C**2 + 3*s*R*C + 1 = 0 (hand algebra
    # of the ladder: poles at (-3 ± sqrt(5))/(2*R*C))
    circuit = symcirc.parse(
        "voltage source U (i, gnd)\nresistor R1 (i, a) = 1k\ncapacitor C1 (a, gnd) = 1u\n"
        "resistor R2 (a, o) = 1k\ncapacitor C2 (o, gnd) = 1u\nport out (o, gnd)\n")
    b, a = coefficients(circuit, "gain(U, out)")
    _, poles, _ = scipy.signal.tf2zpk(b, a)
    rc = 1e3 * 1e-6
    expected = sorted([(-3 + 5**0.5) / (2 * rc), (-3 - 5**0.5) / (2 * rc)])
    assert sorted(poles.real) == pytest.approx(expected, rel=1e-9)
