"""Noise densities against published formulas and independent computations.

Closed forms are compared by sympy's `cancel` of the difference; numbers against numpy
(a nodal solve of each source's transfer) and scipy (`quad` of the density).
"""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import pytest
import sympy
from scipy.integrate import quad

import symcirc
from symcirc.errors import SymcircError

K_B = 1.380649e-23  # J/K, exact since the SI redefinition of 2019 (BIPM SI Brochure)
kB, T, f = sympy.symbols("k_B T_amb f")


def sym(names: str):
    return sympy.symbols(names)


def one(text: str, quantity: str):
    (result,) = symcirc.parse(text).derive(quantity)
    return result


def same(a: sympy.Expr, b: sympy.Expr) -> bool:
    return sympy.cancel(sympy.together(a - b)) == 0


DIVIDER = """
voltage source Uin (a, gnd)
resistor R1 (a, o) = 10 kΩ
resistor R2 (o, gnd) = 4k7
port out (o, gnd)
"""


# ---------------------------------------------------------------- thermal noise


def test_resistor_alone_is_4kTR():
    # Johnson 1928 / Nyquist 1928: S = 4·k·T·R (V²/Hz); 10 kΩ at 300 K is 12.87 nV/√Hz
    # (Horowitz & Hill, The Art of Electronics, noise chapter, from memory: ~13 nV/√Hz)
    text = "resistor R1 (a, gnd) = 10 kΩ\nport P (a, gnd)\n"
    psd = one(text, "noise(P).psd")
    assert same(psd.expression, 4 * kB * T * sym("R1"))
    assert psd.nominal == pytest.approx(4 * K_B * 300 * 10e3, rel=1e-12)
    density = one(text, "noise(P).density")
    assert density.unit == "V/√Hz" and psd.unit == "V²/Hz"
    assert density.nominal == pytest.approx(12.87e-9, rel=1e-3)


def test_divider_is_4kT_times_the_parallel_resistance():
    # Johnson–Nyquist: a passive one-port's noise is 4kT·Re(Z); the divider's is R1 ∥ R2
    R1, R2 = sym("R1 R2")
    psd = one(DIVIDER, "noise(out).psd").expression
    assert same(psd, 4 * kB * T * R1 * R2 / (R1 + R2))


def test_wheatstone_bridge_diagonal_is_4kT_times_its_thevenin_resistance():
    # common practice: a bridge's output noise is the thermal noise of R_th = R1∥R2 + R3∥R4
    text = """
voltage source Ub (exc, gnd) = 5 V
resistor R1 (exc, a) = 350
resistor R2 (a, gnd) = 350
resistor R3 (exc, b) = 350
resistor R4 (b, gnd) = 350
port out (a, b)
"""
    circuit = symcirc.parse(text)
    (rth,) = circuit.derive("thevenin(out).impedance")
    (psd,) = circuit.derive("noise(out).psd")
    assert same(psd.expression, 4 * kB * T * rth.expression)
    assert psd.nominal == pytest.approx(4 * K_B * 300 * 350, rel=1e-12)


def test_kT_over_C_the_integrated_noise_of_an_RC_low_pass_is_independent_of_R():
    # kT/C noise (e.g. Horowitz & Hill, noise chapter, from memory): ∫ S df = k·T/C,
    # checked by scipy's quad of the density as symcirc gives it, for two values of R
    for r in ("1 kΩ", "1 MΩ"):
        text = f"resistor R1 (a, o) = {r}\ncapacitor C1 (o, gnd) = 10 nF\n" \
               "voltage source Uin (a, gnd)\nport out (o, gnd)\n"
        result = one(text, "noise(out).psd")
        values = {sympy.Symbol(k): float(v) for k, v in result.nominals.items()}
        density = sympy.lambdify(f, result.expression.subs(values), "math")
        corner = 1 / (2 * np.pi * float(values[sympy.Symbol("R1")]) * 10e-9)
        total = quad(density, 0, 1000 * corner, limit=200)[0] \
            + quad(density, 1000 * corner, np.inf)[0]
        assert total == pytest.approx(K_B * 300 / 10e-9, rel=1e-6)


def test_temperature_statement_in_celsius_and_kelvin_and_its_default():
    base = "resistor R1 (a, gnd) = 1 kΩ\nport P (a, gnd)\n"
    assert symcirc.parse(base).noise.temperature == 300
    assert symcirc.parse("temperature 27 °C\n" + base).noise.temperature \
        == Fraction(30015, 100)
    hot = one("temperature 400 K\n" + base, "noise(P).psd")
    assert hot.nominal == pytest.approx(4 * K_B * 400 * 1e3, rel=1e-12)
    assert any("T = 400 K" in n for n in hot.notes)
    assert any("the default" in n for n in one(base, "noise(P).psd").notes)


def test_noiseless_parts_drop_out():
    R1 = sym("R1")
    psd = one(DIVIDER + "noiseless R2\n", "noise(out).psd").expression
    R2 = sym("R2")
    assert same(psd, 4 * kB * T * R1 * (R2 / (R1 + R2)) ** 2)


def test_input_referred_noise_divides_each_term_by_the_gain():
    # the divider's output noise over its gain squared: 4kT·R1∥R2·((R1 + R2)/R2)²
    R1, R2 = sym("R1 R2")
    psd = one(DIVIDER, "input_noise(Uin, out).psd")
    assert same(psd.expression, 4 * kB * T * R1 * (R1 + R2) / R2)
    assert psd.unit == "V²/Hz"


# ---------------------------------------------------------------- amplifiers

NON_INVERTING = """
voltage source Uin (i, gnd)
opamp U1 (i, n, o)
resistor Rf (n, o) = 9 kΩ
resistor Rg (n, gnd) = 1 kΩ
noise U1 en = 4 nV/√Hz, in = 1 pA/√Hz
port out (o, gnd)
"""

INVERTING = """
voltage source Uin (i, gnd)
resistor Rin (i, n) = 1 kΩ
opamp U1 (gnd, n, o)
resistor Rf (n, o) = 10 kΩ
noise U1 en = 4 nV/√Hz, in = 1 pA/√Hz
port out (o, gnd)
"""


def contributions(text: str, quantity: str) -> dict[str, sympy.Expr]:
    return {r.part: r for r in symcirc.parse(text).derive(quantity)}


def test_noise_gain_of_a_non_inverting_stage():
    # Motchenbacher & Connelly, Low-Noise Electronic System Design (op-amp noise model, from
    # memory): e_n appears at the output times the noise gain 1 + Rf/Rg; the inverting
    # input's current noise times Rf
    Rf, Rg, en, i_n = sym("Rf Rg en_U1 in_U1")
    parts = contributions(NON_INVERTING, "noise_contributions(out)")
    assert same(parts["en_U1"].expression, en * (1 + Rf / Rg))
    assert same(parts["in_U1_n"].expression, i_n * Rf)
    assert parts["en_U1"].nominal == pytest.approx(40e-9, rel=1e-12)
    assert "in_U1_p" not in parts  # the + input is driven by an ideal source


def test_noise_gain_of_an_inverting_stage():
    # same source: the noise gain is 1 + Rf/Rin for e_n, whatever the signal gain −Rf/Rin
    Rf, Rin, en, i_n = sym("Rf Rin en_U1 in_U1")
    parts = contributions(INVERTING, "noise_contributions(out)")
    assert same(parts["en_U1"].expression, en * (1 + Rf / Rin))
    assert same(parts["in_U1_n"].expression, i_n * Rf)
    # Rf's own thermal noise reaches the output unamplified: 4kT·Rf
    assert same(parts["Rf"].expression ** 2, 4 * kB * T * Rf)
    ranked = [r.part for r in symcirc.parse(INVERTING).derive("noise_contributions(out)")]
    assert ranked[0] == "en_U1"  # 44 nV/√Hz ahead of Rin's 40.7 nV/√Hz


def test_contributions_add_up_to_the_total_and_come_largest_first():
    circuit = symcirc.parse(INVERTING)
    rows = circuit.derive("noise_contributions(out)")
    (total,) = circuit.derive("noise(out).density")
    values = [r.nominal for r in rows]
    assert values == sorted(values, reverse=True)
    assert sum(v * v for v in values) == pytest.approx(total.nominal ** 2, rel=1e-12)
    shares = [r.details["noise_contribution"]["share"] for r in rows]
    assert sum(shares) == pytest.approx(1)


def test_a_corner_makes_the_density_grow_as_one_over_f():
    text = NON_INVERTING.replace("en = 4 nV/√Hz", "en = 4 nV/√Hz corner 100 Hz")
    low = contributions(text, "noise_contributions(out, 10 Hz)")["en_U1"].nominal
    high = contributions(text, "noise_contributions(out, 100 kHz)")["en_U1"].nominal
    assert low == pytest.approx(40e-9 * (1 + 100 / 10) ** 0.5, rel=1e-9)
    assert high == pytest.approx(40e-9 * (1 + 100 / 1e5) ** 0.5, rel=1e-9)


def test_explicit_noise_sources_leave_the_signal_alone():
    plain = "voltage source Uin (i, gnd)\nresistor R1 (i, o) = 1k\nresistor R2 (o, gnd) = 1k\n" \
            "port out (o, gnd)\n"
    with_noise = plain.replace("resistor R1 (i, o)", "noise voltage Un (i, x) = 10 nV/√Hz\n"
                               "resistor R1 (x, o)") + "noise current In (o, gnd) = 1 pA/√Hz\n"
    assert same(one(plain, "V(out)").expression, one(with_noise, "V(out)").expression)
    parts = contributions(with_noise, "noise_contributions(out)")
    assert parts["Un"].nominal == pytest.approx(5e-9, rel=1e-12)  # the divider halves it
    assert parts["In"].nominal == pytest.approx(1e-12 * 500, rel=1e-12)  # through R1 ∥ R2


# ---------------------------------------------------------------- numpy nodal solve

LADDER = """
voltage source Uin (a, gnd)
resistor R1 (a, b) = 2k2
capacitor C1 (b, gnd) = 10n
resistor R2 (b, c) = 4k7
capacitor C2 (c, gnd) = 4n7
resistor R3 (c, gnd) = 100k
port out (c, gnd)
"""


def test_density_against_a_numpy_nodal_solve_of_each_sources_transfer():
    # nodes b, c; Uin shorted (a = gnd for noise); a unit current across each resistor
    resistors = {"R1": ("gnd", "b", 2.2e3), "R2": ("b", "c", 4.7e3), "R3": ("c", "gnd", 100e3)}
    index = {"b": 0, "c": 1}
    circuit = symcirc.parse(LADDER)
    for hertz in (100.0, 3e3, 50e3):
        w = 2j * np.pi * hertz
        y = np.zeros((2, 2), complex)
        for a, b, r in resistors.values():
            for x, z in ((a, b), (b, a)):
                if x in index:
                    y[index[x], index[x]] += 1 / r
                    if z in index:
                        y[index[x], index[z]] -= 1 / r
        y[0, 0] += w * 10e-9
        y[1, 1] += w * 4.7e-9
        total = 0.0
        for a, b, r in resistors.values():
            injection = np.zeros(2, complex)
            if a in index:
                injection[index[a]] += 1
            if b in index:
                injection[index[b]] -= 1
            v = np.linalg.solve(y, injection)
            total += abs(v[1]) ** 2 * 4 * K_B * 300 / r
        (psd,) = circuit.derive(f"noise(out, {hertz:g}).psd")
        assert float(psd.nominal) == pytest.approx(total, rel=1e-9)


# ---------------------------------------------------------------- everywhere a quantity goes


def test_sensitivities_of_a_noise_density_say_which_part_to_change():
    rows = symcirc.parse(DIVIDER).derive("sensitivities(noise(out).density)")
    by_symbol = {r.part: r.nominal for r in rows}
    # e = √(4kT·R1R2/(R1+R2)): ∂ln e/∂ln R1 = R2/(2(R1 + R2))
    assert by_symbol["R1"] == pytest.approx(4.7 / (2 * 14.7), rel=1e-9)
    assert by_symbol["T_amb"] == pytest.approx(0.5, rel=1e-12)


def test_noise_results_carry_their_terms_for_tables_and_json():
    (result,) = symcirc.parse(INVERTING).derive("noise(out, 1 kHz).density")
    terms = result.details["noise"]["terms"]
    assert {t["source"] for t in terms} == {"Rin", "Rf", "en_U1", "in_U1_n"}
    assert terms[0]["source"] == "en_U1" and terms[0]["psd"] > terms[1]["psd"]
    assert result.details["noise"]["temperature"] == 300.0


# ---------------------------------------------------------------- invalid input

BAD = [  # (text, line, where on that line the caret points, part of the message)
    ("noise voltage Un (a, gnd) = 5 nA/√Hz\nresistor R (a, gnd) = 1k\n", 1, "5 nA",
     "given in A/√Hz"),
    ("noise current In (a, gnd) = -1 pA/√Hz\nresistor R (a, gnd) = 1k\n", 1, "-1",
     "is negative"),
    ("resistor R (a, gnd) = 1k corner 10 Hz\n", 1, "10 Hz", "takes none"),
    ("noise voltage Un (a, gnd) = 1 nV/√Hz corner 10 V\nresistor R (a, gnd) = 1k\n", 1,
     "10 V", "is in Hz, not V"),
    ("noise voltage Un (a, gnd) = 1 nV/√Hz corner 0 Hz\nresistor R (a, gnd) = 1k\n", 1,
     "0 Hz", "above 0 Hz"),
    ("noise voltage Un (a, gnd)\nresistor R (a, gnd) = 1k\n", 1, "noise", "needs its density"),
    ("temperature 300 V\nresistor R (a, gnd) = 1k\n", 1, "300", "in K or °C"),
    ("temperature 0 K\nresistor R (a, gnd) = 1k\n", 1, "0 K", "not above absolute zero"),
    ("temperature 300 K\ntemperature 290 K\nresistor R (a, gnd) = 1k\n", 2, "temperature",
     "given twice"),
    ("resistor R (a, gnd) = 1k\ncapacitor C (a, gnd) = 1n\nnoiseless C\n", 3, "C",
     "makes no thermal noise"),
    ("resistor R (a, gnd) = 1k\nnoiseless Rx\n", 2, "Rx", "did you mean `R`"),
    ("resistor R (a, gnd) = 1k\nnoise R en = 1 nV/√Hz\n", 2, "R", "is not an opamp"),
    ("resistor R (a, o) = 1k\nopamp U1 (gnd, a, o)\nnoise U1 xn = 1 nV/√Hz\n", 3, "xn",
     "is not an opamp noise density"),
    ("resistor R (a, o) = 1k\nopamp U1 (gnd, a, o)\nnoise U1 en = 1 pA/√Hz\n", 3, "1 pA",
     "it is in V/√Hz"),
    ("resistor R (a, o) = 1k\nopamp U1 (gnd, a, o)\nnoise U1 en = 1 nV/√Hz, en = 2 nV/√Hz\n",
     3, "en = 2", "given twice"),
    ("block b (x)\nresistor R (x, gnd) = 1k\nnoiseless R\nend\nb one (a)\n", 3, "noiseless",
     "belongs at the top level"),
    ("param k_B = 1\nresistor R (a, gnd) = 1k\n", 1, "k_B", "is reserved"),
    ("param T = 25 °C\nresistor R (a, gnd) = 1k\n", 1, "25", "read only by the `temperature`"),
]


@pytest.mark.parametrize("text, line, snippet, message", BAD,
                         ids=[f"bad{i}" for i in range(len(BAD))])
def test_invalid_noise_input_is_reported_where_it_is(text, line, snippet, message):
    with pytest.raises(SymcircError) as caught:
        symcirc.parse(text)
    error = caught.value
    column = text.splitlines()[line - 1].index(snippet) + 1
    assert (error.line, error.column) == (line, column), error.format()
    assert message in error.message


def test_a_noise_quantity_that_cannot_be_answered_says_why():
    circuit = symcirc.parse(NON_INVERTING.replace(", in = 1 pA/√Hz", "")
                            + "capacitor Cf (n, o) = 1n\n")
    with pytest.raises(SymcircError, match="give noise_contributions"):
        circuit.derive("noise_contributions(out)")
    with pytest.raises(SymcircError, match="a frequency is in Hz"):
        circuit.derive("noise(out, 1 V)")
    with pytest.raises(SymcircError, match="does not depend on"):
        symcirc.parse(DIVIDER + "voltage source Ux (z, gnd)\nresistor Rz (z, gnd)\n") \
            .derive("input_noise(Ux, out)")


def test_the_python_api_gives_what_derive_gives():
    circuit = symcirc.parse(DIVIDER)
    (derived,) = circuit.derive("noise(out, 1 kHz).density")
    assert circuit.noise_density("out", "1 kHz").nominal == derived.nominal
    (band,) = circuit.derive("noise_rms(out, 0, 1 kHz).rms")
    assert circuit.noise_rms("out", "0", "1 kHz").nominal == band.nominal


def test_a_hand_derived_noise_formula_is_checked_as_a_claim():
    # the divider's 4kT·(R1 ∥ R2) written by hand, in the symbols noise results use
    circuit = symcirc.parse(DIVIDER + "claim noise(out).psd = 4*k_B*T_amb*R1*R2/(R1 + R2)\n"
                            "claim noise(out).psd = 4*k_B*T_amb*R1\n")
    assert [o.status for o in circuit.check()] == ["holds", "does not hold"]


def test_a_real_impedance_is_thermal_noise_and_one_without_a_value_is_left_out_with_a_note():
    # Nyquist 1928: a passive two-terminal element's noise is 4kT·Re(Z); a real impedance
    # element is a resistance
    text = "impedance Z1 (a, gnd) = 2 kΩ\nimpedance Z2 (a, gnd)\nport P (a, gnd)\n"
    (psd,) = symcirc.parse(text.replace("impedance Z2 (a, gnd)\n", "")).derive("noise(P).psd")
    assert same(psd.expression, 4 * kB * T * sym("Z1"))
    (psd,) = symcirc.parse(text).derive("noise(P).psd")
    assert any("Z2: an impedance or admittance with no value" in n for n in psd.notes)


# ---------------------------------------------------------------- impedances that depend on s
# Nyquist's theorem (Nyquist 1928; common practice): a passive one-port at temperature T is
# a noise current of density 4kT·Re{Y(j2πf)} across it, the same as the noise of the
# resistors and reactances it is built from.

SERIES_RL = """
voltage source Uin (a, gnd)
resistor R1 (a, o) = 1k
{part}
port out (o, gnd)
param R = 220
param L = 10 mH
"""
AS_IMPEDANCE = "impedance Z1 (o, gnd) = R + s*L"
AS_PARTS = "resistor R (o, m)\ninductor L (m, gnd)"
PARALLEL_GC = SERIES_RL.replace("param R = 220\nparam L = 10 mH", "param G = 2 mS\nparam C = 47 nF")
AS_ADMITTANCE = "admittance Y1 (o, gnd) = G + s*C"
AS_BESIDE = "conductance G (o, gnd)\ncapacitor C (o, gnd)"
FREQUENCIES = (10, 1000, 3183.1, 50000, 2e6)


def _without_params(text: str, names: str) -> str:
    """The circuit with the parts' values on the parts rather than as parameters."""
    lines = text.splitlines()
    params = {ln.split()[1]: ln.split("=", 1)[1].strip() for ln in lines
              if ln.startswith("param ")}
    out = []
    for ln in lines:
        if ln.startswith("param "):
            continue
        for name in names.split():
            if ln.split()[1:2] == [name]:
                ln = f"{ln} = {params[name]}"
        out.append(ln)
    return "\n".join(out) + "\n"


@pytest.mark.parametrize("circuit, shaped, parts, names", [
    (SERIES_RL, AS_IMPEDANCE, AS_PARTS, "R L"),
    (PARALLEL_GC, AS_ADMITTANCE, AS_BESIDE, "G C"),
], ids=["R+sL", "G+sC"])
def test_an_impedance_in_s_is_as_noisy_as_the_parts_it_stands_for(circuit, shaped, parts,
                                                                  names):
    one_port = symcirc.parse(circuit.format(part=shaped))
    built = symcirc.parse(_without_params(circuit.format(part=parts), names))
    (a,) = one_port.derive("noise(out).psd")
    (b,) = built.derive("noise(out).psd")
    assert f in a.expression.free_symbols
    assert same(a.expression, b.expression)
    for hertz in FREQUENCIES:
        (a,) = one_port.derive(f"noise(out, {hertz:g}).psd")
        (b,) = built.derive(f"noise(out, {hertz:g}).psd")
        assert float(a.nominal) == pytest.approx(float(b.nominal), rel=1e-12)
    terms = {r.part: float(r.nominal) for r in one_port.derive("noise_contributions(out, 1 kHz)")}
    assert set(terms) == {"R1", shaped.split()[1]}



def _nodal_density(hertz: float) -> float:
    """V(o)²/Hz by a numpy solve: node o, R1 to the (shorted) source, Z = R + jωL to gnd;
    each element's noise current 4kT·Re{Y} across it, the powers added."""
    w = 2 * np.pi * hertz
    y_z = 1 / (220 + 1j * w * 10e-3)
    y = np.array([[1 / 1e3 + y_z]])
    total = 0.0
    for admittance in (1 / 1e3, y_z):
        v = np.linalg.solve(y, np.array([1.0 + 0j]))
        total += abs(v[0]) ** 2 * 4 * K_B * 300 * admittance.real
    return total


def test_an_impedance_in_s_against_a_numpy_nodal_solve():
    circuit = symcirc.parse(SERIES_RL.format(part=AS_IMPEDANCE))
    for hertz in FREQUENCIES:
        (psd,) = circuit.derive(f"noise(out, {hertz:g}).psd")
        assert float(psd.nominal) == pytest.approx(_nodal_density(hertz), rel=1e-12)
        (referred,) = circuit.derive(f"input_noise(Uin, out, {hertz:g}).psd")
        gain = abs((1 / 1e3) / (1 / 1e3 + 1 / (220 + 2j * np.pi * hertz * 10e-3)))
        assert float(referred.nominal) == pytest.approx(_nodal_density(hertz) / gain**2,
                                                        rel=1e-12)


def test_the_band_noise_of_an_impedance_in_s_against_scipy_quad():
    circuit = symcirc.parse(SERIES_RL.format(part=AS_IMPEDANCE))
    (rms, mean_square) = circuit.derive("noise_rms(out, 10 Hz, 1 MHz)")
    assert any("numerical" in n and "function of f" in n for n in rms.notes)
    expected = quad(lambda u: _nodal_density(np.exp(u)) * np.exp(u), np.log(10), np.log(1e6),
                    points=[np.log(220 / (2 * np.pi * 10e-3))], epsrel=1e-12, limit=200)[0]
    assert float(mean_square.nominal) == pytest.approx(expected, rel=1e-8)
    assert float(rms.nominal) ** 2 == pytest.approx(expected, rel=1e-8)


def test_an_impedance_with_a_negative_real_part_is_refused_where_it_is():
    text = "resistor R1 (o, gnd) = 1k\nadmittance Y1 (o, gnd) = s*C - G\nparam G = 1 mS\n" \
           "param C = 1 nF\nport out (o, gnd)\n"
    with pytest.raises(SymcircError, match="Y1: the real part of its admittance is negative") \
            as caught:
        symcirc.parse(text).derive("noise(out).psd")
    assert (caught.value.line, caught.value.column) == (2, 1)
