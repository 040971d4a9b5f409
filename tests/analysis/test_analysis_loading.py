"""Loading of a port: the 1000× meter rule, maximum power transfer, the smallest load
resistance and the largest load capacitance for an error bound, cautions."""

import cmath
import math
from fractions import Fraction

import numpy as np
import pytest
import sympy

from symcirc.analysis.loading import cautions, loading, minimum_load
from symcirc.analysis.values import exact_value

U, Ri, RL, C, s = sympy.symbols("U Ri RL C s")


def test_loading_error_closed_form_for_a_resistive_source():
    result = loading(U, Ri, RL)
    assert sympy.simplify(result.error + Ri / (Ri + RL)) == 0
    assert sympy.simplify(result.voltage - U * RL / (Ri + RL)) == 0


def test_meter_with_1000_times_the_source_resistance_reads_about_0_1_percent_low():
    """Common practice: a meter whose input resistance is 1000× the source's internal
    resistance reads about 0.1 % low."""
    result = loading(U, Ri, 1000 * Ri)
    error = exact_value(result.error, {Ri: Fraction(4700)})
    assert error == Fraction(-1, 1001)
    assert error < 0 and abs(abs(error) - Fraction(1, 1000)) < Fraction(1, 10**5)


def test_maximum_power_transfer_at_matched_resistance():
    """Maximum power transfer: P is greatest at RL = Ri and then P = U²/(4·Ri)
    (Hayt, Kemmerly & Durbin, Engineering Circuit Analysis, maximum power transfer
    theorem; from memory)."""
    result = loading(U, Ri, RL)
    assert sympy.simplify(result.maximum_power - U**2 / (4 * Ri)) == 0
    assert sympy.simplify(result.power.subs(RL, Ri) - U**2 / (4 * Ri)) == 0
    # the power curve is flat at RL = Ri and lower on either side (numpy, independently)
    u, ri = 10.0, 600.0
    loads = np.linspace(300.0, 1200.0, 9001)
    curve = u**2 * loads / (ri + loads) ** 2
    assert loads[np.argmax(curve)] == pytest.approx(ri, abs=0.1)
    assert curve.max() == pytest.approx(u**2 / (4 * ri), rel=1e-9)
    assert sympy.diff(result.power, RL).subs(RL, Ri) == 0


def test_minimum_load_resistance_meets_the_bound_exactly():
    bound = minimum_load(Ri, Fraction(1, 1000), {Ri: Fraction(2000)})
    assert sympy.simplify(bound.resistance - 999 * Ri) == 0
    assert bound.resistance_value == 1_998_000
    error = exact_value(loading(U, Ri, bound.resistance).error, {Ri: Fraction(2000)})
    assert error == Fraction(-1, 1000)


def test_largest_load_capacitance_at_a_frequency():
    f, e, ri = 1000.0, 0.001, 10_000.0
    bound = minimum_load(Ri, Fraction(1, 1000), {Ri: Fraction(10_000)}, frequency=f)
    c = bound.capacitance_value
    zc = 1 / (2j * math.pi * f * c)
    assert abs(ri / (ri + zc)) == pytest.approx(e, rel=1e-12)
    # by hand: |jωRC/(1 + jωRC)| = e  ⇔  C = e/(ωR·√(1 - e²))
    e_exact = sympy.Rational(1, 1000)
    by_hand = e_exact / (2 * sympy.pi * 1000 * Ri * sympy.sqrt(1 - e_exact**2))
    assert sympy.simplify(bound.capacitance - by_hand) == 0
    assert c == pytest.approx(float(by_hand.subs(Ri, 10_000)), rel=1e-12)


def test_reactive_source_bounds_checked_with_complex_arithmetic():
    """Source 10 kΩ ∥ 10 nF at 2 kHz: R_min and C_max found from the quadratic must put the
    loading error exactly on the bound."""
    z_th = Ri / (1 + s * Ri * C)
    nominals = {Ri: Fraction(10_000), C: Fraction(1, 10**8)}
    f, e = 2000.0, 0.005
    bound = minimum_load(z_th, Fraction(e), nominals, frequency=f)
    w = 2 * math.pi * f
    z = 10_000 / (1 + 1j * w * 10_000 * 1e-8)
    assert abs(z / (z + bound.resistance_value)) == pytest.approx(e, rel=1e-9)
    zc = 1 / (1j * w * bound.capacitance_value)
    assert abs(z / (z + zc)) == pytest.approx(e, rel=1e-9)
    with pytest.raises(ValueError, match="frequency"):
        minimum_load(z_th, Fraction(e), nominals)


def test_conjugate_match_at_a_frequency():
    z_th = Ri / (1 + s * Ri * C)
    nominals = {Ri: Fraction(1000), C: Fraction(1, 10**7), U: Fraction(1), RL: Fraction(500)}
    result = loading(U, z_th, RL, nominals, frequency=1000.0)
    at = result.at_frequency
    z = 1000 / (1 + 1j * 2 * math.pi * 1000 * 1000 * 1e-7)
    assert at.matched_load == pytest.approx(z.conjugate(), rel=1e-12)

    def power(load: complex) -> float:
        current = 1 / (z + load)
        return abs(current) ** 2 * load.real

    assert at.maximum_power == pytest.approx(power(z.conjugate()), rel=1e-12)
    for k in range(16):
        other = z.conjugate() * cmath.rect(1.1, 0.2 * k)
        assert power(other) < at.maximum_power
    assert at.power == pytest.approx(power(500), rel=1e-12)


def test_cautions_for_voltage_and_dissipation():
    assert cautions(12.0, 0.1, "the load") == []
    voltage, = cautions(230.0, None, "port mains")
    assert "local electrical codes" in voltage and "licensed practice" in voltage
    power, = cautions(None, 0.5, "the load")
    assert "power rating" in power and "licensed practice" in power


def test_numbers_at_a_frequency_without_values_are_an_error_not_a_traceback(cli, tmp_path):
    """The phasors at f need every value: a part without one is named (exit 2)."""
    path = tmp_path / "free.circuit"
    path.write_text("param Rs\nvoltage source Uin (a, gnd)\nresistor R1 (a, x) = Rs\n"
                    "capacitor C1 (x, gnd) = 1n\nport out (x, gnd)\n", encoding="utf-8")
    for asked in ("loading(out, 10k, 1 kHz)", "minimum_load(out, 1 %, 1 kHz)"):
        status, _, err = cli("derive", path, asked)
        assert status == 2, err
        assert "need a value for" in err and "Traceback" not in err
