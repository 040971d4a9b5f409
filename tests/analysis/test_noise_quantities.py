"""Noise over a band, through the quantities a user asks for, against published results and
scipy's quadrature of the density symcirc gives."""

from __future__ import annotations

import math

import numpy as np
import pytest
import sympy
from scipy.integrate import quad

import symcirc
from symcirc.errors import SymcircError

K_B = 1.380649e-23  # J/K, exact (SI 2019)
f = sympy.Symbol("f")

RC = """
voltage source Uin (a, gnd)
resistor R1 (a, o) = 10 kΩ
capacitor C1 (o, gnd) = 1 nF
port out (o, gnd)
"""

SALLEN_KEY = """
voltage source Uin (i, gnd)
resistor R1 (i, x) = 10 kΩ
resistor R2 (x, p) = 10 kΩ
capacitor C1 (x, o) = 22.5 nF
capacitor C2 (p, gnd) = 11.25 nF
opamp U1 (p, o, o)
port out (o, gnd)
"""


def one(text: str, quantity: str):
    (result,) = symcirc.parse(text).derive(quantity)
    return result


def test_kT_over_C_in_closed_form_whatever_R():
    # kT/C noise of an RC low-pass (e.g. Horowitz & Hill, noise chapter, from memory)
    kB, T, C1 = sympy.symbols("k_B T_amb C1")
    for r in ("10 kΩ", "1 MΩ"):
        result = one(RC.replace("10 kΩ", r), "noise_rms(out, 0, oo).mean_square")
        assert sympy.cancel(sympy.together(result.expression - kB * T / C1)) == 0
        assert result.nominal == pytest.approx(K_B * 300 / 1e-9, rel=1e-12)
        assert any("closed form" in n for n in result.notes)


def test_band_rms_against_scipy_quad_of_the_density():
    circuit = symcirc.parse(SALLEN_KEY + "noise U1 en = 10 nV/√Hz corner 20 Hz\n")
    (psd,) = circuit.derive("noise(out).psd")
    values = {sympy.Symbol(k): float(v) for k, v in psd.nominals.items()}
    density = sympy.lambdify(f, psd.expression.subs(values), "math")
    expected = quad(density, 1, 100, limit=200)[0] + quad(density, 100, 5e3, limit=200)[0]
    (rms,) = circuit.derive("noise_rms(out, 1 Hz, 5 kHz).mean_square")
    assert float(rms.nominal) == pytest.approx(expected, rel=1e-7)


def test_equivalent_noise_bandwidth_of_a_first_order_low_pass_is_pi_over_2_fc():
    # Motchenbacher & Connelly, Low-Noise Electronic System Design (noise bandwidth of a
    # single RC section, π/2 times the −3 dB frequency), from memory
    fc = 1 / (2 * math.pi * 10e3 * 1e-9)
    result = one(RC, "noise_bandwidth(gain(Uin, out))")
    assert result.nominal == pytest.approx(math.pi / 2 * fc, rel=1e-12)


def test_equivalent_noise_bandwidth_of_a_second_order_butterworth_section():
    # handbook tables of noise bandwidth over −3 dB bandwidth: 1.11 for a two-pole
    # Butterworth (e.g. Motchenbacher & Connelly's table; exactly (π/4)/sin(π/4)), from
    # memory. This unity-gain Sallen-Key has Q = 1/√2 (C1 = 2·C2, equal R).
    circuit = symcirc.parse(SALLEN_KEY)
    (f3db,) = circuit.derive("gain(Uin, out).f3db")
    (enbw,) = circuit.derive("noise_bandwidth(gain(Uin, out))")
    assert float(enbw.nominal) / float(f3db.nominal) == pytest.approx(
        (math.pi / 4) / math.sin(math.pi / 4), rel=1e-6)


def test_snr_and_resolution_follow_from_the_rms():
    circuit = symcirc.parse(RC)
    (rms,) = circuit.derive("noise_rms(out, 0, 10 kHz).rms")
    (snr,) = circuit.derive("snr(1 V, out, 0, 10 kHz)")
    assert float(snr.nominal) == pytest.approx(20 * math.log10(1 / float(rms.nominal)))
    bits = {r.part: float(r.nominal) for r in circuit.derive("noise_bits(out, 5 V, 0, 10 kHz)")}
    # noise-free counts: FSR over the 6.6 σ peak-to-peak noise (common practice)
    assert bits["noise_free"] == pytest.approx(math.log2(5 / (6.6 * float(rms.nominal))))
    assert bits["effective"] - bits["noise_free"] == pytest.approx(math.log2(6.6))


def test_band_contributions_rank_the_sources_and_state_the_method():
    text = SALLEN_KEY + "noise U1 en = 10 nV/√Hz corner 20 Hz\n"
    (rms,) = symcirc.parse(text).derive("noise_rms(out, 0.1 Hz, 10 Hz).rms")
    rows = rms.details["noise_band"]["contributions"]
    assert rows[0]["source"] == "en_U1"  # the 1/f corner dominates a low band
    assert [r["rms"] for r in rows] == sorted((r["rms"] for r in rows), reverse=True)
    assert sum(r["share"] for r in rows) == pytest.approx(1)
    assert rms.details["noise_band"]["method"]
    assert np.isfinite(float(rms.nominal))


def test_a_band_must_run_upwards():
    with pytest.raises(SymcircError, match="f2 > f1"):
        symcirc.parse(RC).derive("noise_rms(out, 10 kHz, 1 kHz)")
    with pytest.raises(SymcircError, match="must not be negative"):
        symcirc.parse(RC).derive("noise_rms(out, -1 Hz, 1 kHz)")
