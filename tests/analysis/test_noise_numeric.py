"""A noise band with no closed form (a three-pole RC ladder): its value shown as the number it
is, and its sensitivities and tolerance found numerically, against an independent numpy
nodal solve integrated by scipy.integrate.quad in the test itself."""

from __future__ import annotations

import itertools
import json
import math
import re

import numpy as np
import pytest
from scipy.integrate import quad

import symcirc
from symcirc.errors import SymcircError

K_B = 1.380649e-23  # J/K, exact (SI 2019)

LADDER = """
title "Three-pole logger filter noise"
voltage source Uin (in, gnd) = 0 V
resistor R1 (in, a) = 1k ± 1 %
capacitor C1 (a, gnd) = 10n ± 5 %
resistor R2 (a, b) = 10k ± 1 %
capacitor C2 (b, gnd) = 1n ± 5 %
resistor R3 (b, c) = 100k ± 1 %
capacitor C3 (c, gnd) = 100p ± 5 %
port out (c, gnd)
"""
NOMINAL = {"R1": 1e3, "C1": 10e-9, "R2": 10e3, "C2": 1e-9, "R3": 100e3, "C3": 100e-12,
           "T_amb": 300.0}
TOLERANCE = {"R1": 0.01, "R2": 0.01, "R3": 0.01, "C1": 0.05, "C2": 0.05, "C3": 0.05}
RMS = "noise_rms(out, 10 Hz, 10 kHz).rms"


def mean_square(v: dict[str, float]) -> float:
    """Johnson–Nyquist (common practice): each resistor a current 4kT/R A²/Hz across it; the
    output density Σ 4kT/R·|Z_out,p − Z_out,n|² from a nodal solve of nodes a, b, c (the
    input source a short), integrated over 10 Hz … 10 kHz in ln f."""
    resistors = [("R1", None, 0), ("R2", 0, 1), ("R3", 1, 2)]
    capacitors = [("C1", 0), ("C2", 1), ("C3", 2)]

    def density(u: float) -> float:
        f = math.exp(u)
        s = 2j * math.pi * f
        y = np.zeros((3, 3), complex)
        for name, p, n in resistors:
            g = 1 / v[name]
            for i in (p, n):
                if i is not None:
                    y[i, i] += g
            if p is not None:
                y[p, n] -= g
                y[n, p] -= g
        for name, node in capacitors:
            y[node, node] += s * v[name]
        z = np.linalg.inv(y)
        total = 0.0
        for name, p, n in resistors:
            gain = (z[2, p] if p is not None else 0) - z[2, n]
            total += 4 * K_B * v["T_amb"] / v[name] * abs(gain) ** 2
        return total * f

    return quad(density, math.log(10), math.log(1e4), epsabs=0, epsrel=1e-11, limit=200)[0]


def rms(v: dict[str, float]) -> float:
    return math.sqrt(mean_square(v))


@pytest.fixture(scope="module")
def circuit():
    return symcirc.parse(LADDER)


def test_a_numeric_band_is_shown_as_a_decimal_with_its_error_not_a_radical(circuit, cli,
                                                                         circuit_file):
    (result,) = circuit.derive(RMS)
    assert result.nominal == pytest.approx(rms(NOMINAL), rel=1e-8)
    assert result.details["noise_band"]["exact"] is False
    assert result.details["noise_band"]["error"] < 1e-9 * result.details["noise_band"]["value"]
    status, out, _ = cli("derive", circuit_file(LADDER), RMS, "--values")
    assert status == 0
    assert not re.search(r"sqrt\(\d{6,}", out)
    assert "= 3.9526053" in out and "≈ 3.953 µV" in out and "numerical value" in out
    status, out, _ = cli("derive", circuit_file(LADDER), RMS, "--format", "json")
    (shown,) = json.loads(out)["results"]
    assert shown["noise_band"]["exact"] is False
    assert shown["noise_band"]["value"] == pytest.approx(rms(NOMINAL) ** 2, rel=1e-8)


def test_sensitivities_of_a_numeric_band_match_central_differences_of_quad(circuit):
    rows = {r.part: r for r in circuit.derive(f"sensitivities({RMS})")}
    assert set(rows) >= {"R1", "R2", "R3", "C1", "C2", "C3", "T_amb"}
    assert any("central difference" in n and "h = 0.001" in n for n in rows["R3"].notes +
               next(iter(rows.values())).notes)
    nominal = rms(NOMINAL)
    for name in ("R1", "R2", "R3", "C1", "C2", "C3"):
        h = 1e-4
        up = rms({**NOMINAL, name: NOMINAL[name] * (1 + h)})
        down = rms({**NOMINAL, name: NOMINAL[name] * (1 - h)})
        expected = (up - down) / (2 * h) / nominal
        assert rows[name].nominal != 0
        assert rows[name].nominal == pytest.approx(expected, rel=1e-4, abs=1e-6), name


def test_rms_noise_goes_with_the_square_root_of_temperature(circuit):
    # Johnson–Nyquist: the noise power is proportional to T (common practice), so the rms
    # noise has relative sensitivity 1/2 to T.
    rows = {r.part: r for r in circuit.derive(f"sensitivities({RMS})")}
    assert rows["T_amb"].nominal == pytest.approx(0.5, rel=1e-6)
    rows = {r.part: r for r in
            circuit.derive("sensitivities(noise_rms(out, 10 Hz, 10 kHz).mean_square)")}
    assert rows["T_amb"].nominal == pytest.approx(1.0, rel=1e-6)


def test_tolerance_corners_of_a_numeric_band_against_brute_force_quad(circuit):
    (result,) = circuit.derive(f"tolerance({RMS})")
    spread = result.details["tolerance"]
    names = sorted(TOLERANCE)
    corners = [rms({**NOMINAL, **{n: NOMINAL[n] * (1 + sign * TOLERANCE[n])
                                  for n, sign in zip(names, signs, strict=True)}})
               for signs in itertools.product((-1, 1), repeat=len(names))]
    assert spread["extremes"]["low"] == pytest.approx(min(corners), rel=1e-8)
    assert spread["extremes"]["high"] == pytest.approx(max(corners), rel=1e-8)
    assert "64 corners" in spread["extremes"]["method"]
    assert spread["rss"] > 0
    assert spread["linearised"]["high"] > spread["linearised"]["low"]
    assert spread["monte_carlo"]["samples"] == 200
    assert spread["monte_carlo"]["std"] > 0
    assert any("200 samples only" in n for n in result.notes)


def test_snr_of_a_numeric_band_is_a_decimal_and_its_sensitivities_are_refused(circuit):
    (snr,) = circuit.derive("snr(1 mV, out, 10 Hz, 10 kHz)")
    assert snr.symbols == ()
    assert snr.nominal == pytest.approx(20 * math.log10(1e-3 / rms(NOMINAL)), rel=1e-9)
    with pytest.raises(SymcircError, match="integrated numerically"):
        circuit.derive("sensitivities(snr(1 mV, out, 10 Hz, 10 kHz))")
    with pytest.raises(SymcircError, match="sensitivities"):
        circuit.derive(f"sensitivity({RMS}, R3)")


def test_export_of_a_numeric_band_is_a_constant_that_says_so(cli, circuit_file):
    status, out, _ = cli("export", circuit_file(LADDER), RMS, "--lang", "python")
    assert status == 0
    assert "does not follow the parts'" in out
    value = float(re.search(r"return (\S+)", out).group(1))
    assert value == pytest.approx(rms(NOMINAL), rel=1e-12)


def test_a_closed_form_band_keeps_its_closed_form_and_exact_sensitivities():
    # kT/C noise of an RC low-pass over 0 … ∞ (e.g. Horowitz & Hill, from memory): √(kT/C),
    # so its relative sensitivity is −1/2 to C, +1/2 to T and 0 to R.
    circuit = symcirc.parse("voltage source Uin (a, gnd)\nresistor R1 (a, o) = 10 kΩ ± 1 %\n"
                            "capacitor C1 (o, gnd) = 1 nF ± 5 %\nport out (o, gnd)\n")
    (result,) = circuit.derive("noise_rms(out, 0, oo).rms")
    assert result.details["noise_band"]["exact"] is True
    assert {"C1", "k_B", "T_amb"} <= set(result.symbols)
    rows = {r.part: r for r in circuit.derive("sensitivities(noise_rms(out, 0, oo).rms)")}
    assert str(rows["C1"].expression) == "-1/2"
    assert str(rows["T_amb"].expression) == "1/2"
    assert "R1" not in rows
    (spread,) = circuit.derive("tolerance(noise_rms(out, 0, oo).rms)")
    low, high = (spread.details["tolerance"]["extremes"][k] for k in ("low", "high"))
    assert low == pytest.approx(math.sqrt(K_B * 300 / 1.05e-9), rel=1e-9)
    assert high == pytest.approx(math.sqrt(K_B * 300 / 0.95e-9), rel=1e-9)


def test_a_tolerance_on_what_defines_a_part_reaches_a_numeric_band():
    # R1 = R0·(1 + α·Tc) with the tolerance on R0: the band moves with R0 through R1, as the
    # closed forms' tolerance reads definitions; R0's tolerance is the only one on R1.
    text = LADDER.replace("resistor R1 (in, a) = 1k ± 1 %",
                          "param R0 = 1k ± 1 %\nparam alpha = 0.004\nparam Tc = 25\n"
                          "resistor R1 (in, a) = R0*(1 + alpha*Tc)")
    circuit = symcirc.parse(text)
    rows = {r.part: r for r in circuit.derive(f"sensitivities({RMS})")}
    r1 = 1e3 * 1.1
    nominal = {**NOMINAL, "R1": r1}
    h = 1e-4
    expected = (rms({**nominal, "R1": r1 * (1 + h)}) - rms({**nominal, "R1": r1 * (1 - h)}))
    expected /= 2 * h * rms(nominal)
    assert rows["R0"].nominal == pytest.approx(expected, rel=1e-4)
    assert rows["R1"].nominal == pytest.approx(expected, rel=1e-4)
    # α·Tc/(1 + α·Tc) of R1's share goes through each of α and Tc
    assert rows["Tc"].nominal == pytest.approx(expected * 0.1 / 1.1, rel=1e-4)
    (result,) = circuit.derive(f"tolerance({RMS})")
    spread = result.details["tolerance"]
    tolerance = {**TOLERANCE, "R1": 0.01}
    names = sorted(tolerance)
    corners = [rms({**nominal, **{n: nominal[n] * (1 + sign * tolerance[n])
                                  for n, sign in zip(names, signs, strict=True)}})
               for signs in itertools.product((-1, 1), repeat=len(names))]
    assert spread["extremes"]["low"] == pytest.approx(min(corners), rel=1e-8)
    assert spread["extremes"]["high"] == pytest.approx(max(corners), rel=1e-8)


def test_derivatives_by_temperature_and_boltzmann_carry_their_units(circuit):
    notes = [n for r in circuit.derive(f"sensitivities({RMS})") for n in r.notes]
    assert any("∂T_amb" in n and "V/K" in n for n in notes)
    assert any("∂k_B" in n and "V/(J/K)" in n for n in notes)
