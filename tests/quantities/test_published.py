"""Derived closed forms against published formulas, each with its source beside it.

Every check compares symcirc's exact result with the formula as published, by sympy's
`cancel` of the difference (exact rational-function arithmetic): the two must be the
same function, whatever their layout.
"""

from __future__ import annotations

from fractions import Fraction

import sympy
from circuits import SCALE_BRIDGE

import symcirc

s = sympy.Symbol("s")


def sym(names: str):
    return sympy.symbols(names)


def derived(text: str, quantity: str, **options) -> sympy.Expr:
    (result,) = symcirc.parse(text).derive(quantity, **options)
    return result.expression


def same(a: sympy.Expr, b: sympy.Expr) -> bool:
    return sympy.cancel(sympy.together(a - b)) == 0


# ---------------------------------------------------------------- resistive networks


def test_wheatstone_bridge_thevenin_voltage_four_arbitrary_arms():
    # Wheatstone bridge output: Ub*(R2/(R1 + R2) - R4/(R3 + R4)), e.g. Hayt, Kemmerly &
    # Durbin, Engineering Circuit Analysis (bridge and Thevenin chapters) (from memory)
    Ub, R1, R2, R3, R4 = sym("Ub R1 R2 R3 R4")
    assert same(derived(SCALE_BRIDGE, "thevenin(out).voltage"),
                Ub * (R2 / (R1 + R2) - R4 / (R3 + R4)))


def test_wheatstone_bridge_thevenin_resistance_four_arbitrary_arms():
    # same source: R1 || R2 + R3 || R4 with the excitation shorted (from memory)
    R1, R2, R3, R4 = sym("R1 R2 R3 R4")
    assert same(derived(SCALE_BRIDGE, "thevenin(out).impedance"),
                R1 * R2 / (R1 + R2) + R3 * R4 / (R3 + R4))


def test_equal_arm_bridge_thevenin_resistance_is_the_arm_resistance():
    # common practice: an equal-arm bridge of arm R has source resistance R at its diagonal
    circuit = symcirc.parse(SCALE_BRIDGE)
    (impedance,) = circuit.derive("thevenin(out).impedance")
    r = Fraction(350)
    assert impedance.exact.evaluate({"R1": r, "R2": r, "R3": r, "R4": r}) == r
    (voltage,) = circuit.derive("thevenin(out).voltage")
    assert voltage.exact.evaluate({"R1": r, "R2": r, "R3": r, "R4": r, "Ub": Fraction(5)}) == 0


def test_loaded_voltage_divider():
    # U*(R2 || RL)/(R1 + R2 || RL): Horowitz & Hill, The Art of Electronics, 3rd ed.,
    # ch. 1, voltage dividers (from memory)
    U, R1, R2, RL = sym("U R1 R2 RL")
    text = ("voltage source U (i, gnd)\nresistor R1 (i, o)\nresistor R2 (o, gnd)\n"
            "resistor RL (o, gnd)\n")
    parallel = R2 * RL / (R2 + RL)
    assert same(derived(text, "V(o)"), U * parallel / (R1 + parallel))


def test_current_divider():
    # I2 = I*R1/(R1 + R2): Hayt, Kemmerly & Durbin, Engineering Circuit Analysis,
    # current division (from memory)
    J, R1, R2 = sym("J R1 R2")
    text = "current source J (a, gnd)\nresistor R1 (a, gnd)\nresistor R2 (a, gnd)\n"
    assert same(derived(text, "I(R2)"), J * R1 / (R1 + R2))


def test_kennelly_star_delta_equivalence():
    # A. E. Kennelly, "The equivalence of triangles and three-pointed stars in conducting
    # networks", Electrical World and Engineer 34 (1899) 413-414: a delta Rab, Rbc, Rca
    # equals the star Ra = Rab*Rca/S, Rb = Rab*Rbc/S, Rc = Rbc*Rca/S, S = Rab + Rbc + Rca
    Rab, Rbc, Rca = sym("Rab Rbc Rca")
    total = Rab + Rbc + Rca
    star = {"a": Rab * Rca / total, "b": Rab * Rbc / total, "c": Rbc * Rca / total}
    delta = ("resistor Rab (a, b)\nresistor Rbc (b, c)\nresistor Rca (c, a)\n"
             "port ab (a, b)\nport bc (b, c)\nport ca (c, a)\n")
    for port, (x, y) in {"ab": "ab", "bc": "bc", "ca": "ca"}.items():
        assert same(derived(delta, f"Z({port})"), star[x] + star[y])


def test_star_to_delta_conversion():
    # Kennelly (1899), the inverse: Rab = (Ra*Rb + Rb*Rc + Rc*Ra)/Rc, and cyclically
    Ra, Rb, Rc = sym("Ra Rb Rc")
    p = Ra * Rb + Rb * Rc + Rc * Ra
    Rab, Rbc, Rca = p / Rc, p / Ra, p / Rb
    star = ("resistor Ra (a, m)\nresistor Rb (b, m)\nresistor Rc (c, m)\n"
            "port ab (a, b)\nport bc (b, c)\n")
    assert same(derived(star, "Z(ab)"), Rab * (Rbc + Rca) / (Rab + Rbc + Rca))
    assert same(derived(star, "Z(bc)"), Rbc * (Rab + Rca) / (Rab + Rbc + Rca))


def _attenuator(text: str, values: dict) -> tuple[Fraction, Fraction]:
    circuit = symcirc.parse(text)
    (z,) = circuit.derive("Z(in)")
    (g,) = circuit.derive("gain(U, out)")
    point = {**values, "RL": values["R0"], "Rg": values["R0"]}
    return (z.exact.evaluate({n: point[n] for n in z.symbols}),
            g.exact.evaluate({n: point[n] for n in g.symbols}))


def test_matched_t_attenuator():
    # T pad of loss K (voltage ratio) in R0: series arms R0*(K - 1)/(K + 1), shunt arm
    # 2*R0*K/(K**2 - 1); matched input R0, output R0/(2K) of the source EMF behind R0.
    # Reference Data for Radio Engineers (ITT), attenuator design formulas (from memory)
    text = ("voltage source U (g, gnd)\nresistor Rg (g, i)\nresistor Ra (i, m)\n"
            "resistor Rb (m, o)\nresistor Rc (m, gnd)\nresistor RL (o, gnd)\n"
            "port in (i, gnd)\nport out (o, gnd)\n")
    for r0, k in ((Fraction(50), Fraction(2)), (Fraction(600), Fraction(10))):
        series, shunt = r0 * (k - 1) / (k + 1), 2 * r0 * k / (k * k - 1)
        z, g = _attenuator(text, {"R0": r0, "Ra": series, "Rb": series, "Rc": shunt})
        assert z == r0 / 2  # the matched pad (R0) in parallel with the source resistance
        assert g == 1 / (2 * k)


def test_matched_pi_attenuator():
    # Pi pad of loss K in R0: shunt arms R0*(K + 1)/(K - 1), series arm R0*(K**2 - 1)/(2K);
    # Reference Data for Radio Engineers (ITT), attenuator design formulas (from memory)
    text = ("voltage source U (g, gnd)\nresistor Rg (g, i)\nresistor Ra (i, gnd)\n"
            "resistor Rb (i, o)\nresistor Rc (o, gnd)\nresistor RL (o, gnd)\n"
            "port in (i, gnd)\nport out (o, gnd)\n")
    for r0, k in ((Fraction(50), Fraction(2)), (Fraction(75), Fraction(4))):
        shunt, series = r0 * (k + 1) / (k - 1), r0 * (k * k - 1) / (2 * k)
        z, g = _attenuator(text, {"R0": r0, "Ra": shunt, "Rb": series, "Rc": shunt})
        assert z == r0 / 2  # the matched pad in parallel with the source resistance
        assert g == 1 / (2 * k)


def test_matched_pad_input_resistance_is_r0():
    # the defining property of a matched pad (same source): loaded by R0 it presents R0
    text = ("resistor Ra (i, m)\nresistor Rb (m, o)\nresistor Rc (m, gnd)\n"
            "resistor RL (o, gnd)\nport in (i, gnd)\n")
    r0, k = Fraction(50), Fraction(2)
    series, shunt = r0 * (k - 1) / (k + 1), 2 * r0 * k / (k * k - 1)
    (z,) = symcirc.parse(text).derive("Z(in)")
    assert z.exact.evaluate({"Ra": series, "Rb": series, "Rc": shunt, "RL": r0}) == r0


def test_resistor_cube():
    # twelve equal resistors R on the edges of a cube: 7R/12 across an edge, 3R/4 across a
    # face diagonal, 5R/6 across the body diagonal; e.g. F. J. van Steenwijk, "Equivalent
    # resistors of polyhedral resistive structures", Am. J. Phys. 66 (1998) 90 (from memory)
    corners = [(x, y, z) for x in (0, 1) for y in (0, 1) for z in (0, 1)]

    def name(c):
        return "c" + "".join(map(str, c))

    lines = []
    for i, a in enumerate(corners):
        for b in corners[i + 1:]:
            if sum(abs(p - q) for p, q in zip(a, b, strict=True)) == 1:
                lines.append(f"resistor R{len(lines) + 1} ({name(a)}, {name(b)})")
    assert len(lines) == 12
    lines += ["port edge (c000, c001)", "port face (c000, c011)", "port body (c000, c111)"]
    circuit = symcirc.parse("\n".join(lines) + "\n")
    r = Fraction(1)
    values = {f"R{k}": r for k in range(1, 13)}
    for port, expected in (("edge", Fraction(7, 12)), ("face", Fraction(3, 4)),
                           ("body", Fraction(5, 6))):
        (z,) = circuit.derive(f"Z({port})")
        assert z.exact.evaluate(values) == expected * r


# ---------------------------------------------------------------- first and second order


def test_rc_low_pass_section():
    # H = 1/(1 + s*R*C): Sedra & Smith, Microelectronic Circuits, single-time-constant
    # networks (from memory)
    R, C = sym("R C")
    text = "voltage source U (i, gnd)\nresistor R (i, o)\ncapacitor C (o, gnd)\nport out (o, gnd)\n"
    assert same(derived(text, "gain(U, out)"), 1 / (1 + s * R * C))


def test_rl_high_pass_section():
    # H = s*L/(R + s*L): Sedra & Smith, single-time-constant networks (from memory)
    R, L = sym("R L")
    text = "voltage source U (i, gnd)\nresistor R (i, o)\ninductor L (o, gnd)\nport out (o, gnd)\n"
    assert same(derived(text, "gain(U, out)"), s * L / (R + s * L))


def test_series_rlc_impedance_and_band_pass():
    # Z = R + s*L + 1/(s*C); the resistor's voltage is s*R*C/(s**2*L*C + s*R*C + 1) of the
    # input: Hayt, Kemmerly & Durbin, series resonance (from memory)
    R, L, C = sym("R L C")
    text = ("voltage source U (i, gnd)\ninductor L (i, a)\ncapacitor C (a, o)\n"
            "resistor R (o, gnd)\nport in (i, gnd)\nport out (o, gnd)\n")
    circuit_text = text.replace("voltage source U (i, gnd)\n", "")
    assert same(derived(circuit_text, "Z(in)"), R + s * L + 1 / (s * C))
    assert same(derived(text, "gain(U, out)"), s * R * C / (s**2 * L * C + s * R * C + 1))


def test_parallel_rlc_admittance():
    # Y = 1/R + s*C + 1/(s*L): Hayt, Kemmerly & Durbin, parallel resonance (from memory)
    R, L, C = sym("R L C")
    text = "resistor R (a, gnd)\ninductor L (a, gnd)\ncapacitor C (a, gnd)\nport p (a, gnd)\n"
    assert same(derived(text, "Y(p)"), 1 / R + s * C + 1 / (s * L))


# ---------------------------------------------------------------- active filters


def test_sallen_key_unity_gain_low_pass():
    # R. P. Sallen and E. L. Key, "A practical method of designing RC active filters",
    # IRE Trans. Circuit Theory CT-2 (1955) 74-85: unity-gain low-pass
    # H = 1/(s**2*R1*R2*C1*C2 + s*C2*(R1 + R2) + 1), C1 the feedback capacitor
    R1, R2, C1, C2 = sym("R1 R2 C1 C2")
    text = ("voltage source Uin (in, gnd)\nresistor R1 (in, x)\nresistor R2 (x, p)\n"
            "capacitor C1 (x, o)\ncapacitor C2 (p, gnd)\nopamp U1 (p, o, o)\nport out (o, gnd)\n")
    assert same(derived(text, "gain(Uin, out)"),
                1 / (s**2 * R1 * R2 * C1 * C2 + s * C2 * (R1 + R2) + 1))


def test_multiple_feedback_low_pass():
    # Multiple-feedback low-pass, R. Mancini (ed.), Op Amps for Everyone (Texas Instruments,
    # 2002), ch. 16: A(s) = -(R2/R1)/(1 + s*C1*(R2 + R3 + R2*R3/R1) + s**2*C1*C2*R2*R3),
    # C1 across the opamp, C2 from the junction to ground (from memory)
    R1, R2, R3, C1, C2 = sym("R1 R2 R3 C1 C2")
    text = ("voltage source Uin (in, gnd)\nresistor R1 (in, x)\nresistor R2 (x, o)\n"
            "resistor R3 (x, n)\ncapacitor C2 (x, gnd)\ncapacitor C1 (n, o)\n"
            "opamp U1 (gnd, n, o)\nport out (o, gnd)\n")
    assert same(derived(text, "gain(Uin, out)"),
                -(R2 / R1) / (1 + s * C1 * (R2 + R3 + R2 * R3 / R1) + s**2 * C1 * C2 * R2 * R3))


def test_wien_bridge_network_is_one_third_at_its_centre_frequency():
    # Wien network (series RC then parallel RC): V_out/V_in = 1/3 at w = 1/(R*C) with equal
    # parts; Horowitz & Hill, The Art of Electronics, Wien-bridge oscillator (from memory)
    R, C = sympy.symbols("R C", positive=True)
    text = ("voltage source U (i, gnd)\nresistor R1 (i, a)\ncapacitor C1 (a, o)\n"
            "resistor R2 (o, gnd)\ncapacitor C2 (o, gnd)\nport out (o, gnd)\n")
    h = derived(text, "gain(U, out)")
    equal = h.subs({sympy.Symbol("R1"): R, sympy.Symbol("R2"): R, sympy.Symbol("C1"): C,
                    sympy.Symbol("C2"): C})
    assert sympy.simplify(equal.subs(s, sympy.I / (R * C))) == sympy.Rational(1, 3)
    assert same(equal, s * R * C / (s**2 * R**2 * C**2 + 3 * s * R * C + 1))


def test_twin_t_notch_has_its_zero_at_one_over_rc():
    # twin-T (R, R, C/... arms R, R, 2C and C, C, R/2): transmission zero at w = 1/(R*C),
    # i.e. f = 1/(2*pi*R*C); H = (s**2*R**2*C**2 + 1)/(s**2*R**2*C**2 + 4*s*R*C + 1) unloaded
    # (Horowitz & Hill, The Art of Electronics, twin-T notch, from memory)
    R, C = sympy.symbols("R C", positive=True)
    text = ("voltage source U (i, gnd)\nresistor Ra (i, a)\nresistor Rb (a, o)\n"
            "capacitor Ca (a, gnd)\ncapacitor Cb (i, b)\ncapacitor Cc (b, o)\n"
            "resistor Rc (b, gnd)\nport out (o, gnd)\n")
    h = derived(text, "gain(U, out)")
    values = {"Ra": R, "Rb": R, "Ca": 2 * C, "Cb": C, "Cc": C, "Rc": R / 2}
    equal = h.subs({sympy.Symbol(k): v for k, v in values.items()})
    assert same(equal, (s**2 * R**2 * C**2 + 1) / (s**2 * R**2 * C**2 + 4 * s * R * C + 1))
    assert sympy.simplify(equal.subs(s, sympy.I / (R * C))) == 0


# ---------------------------------------------------------------- amplifiers

INVERTING = ("voltage source Uin (i, gnd)\nresistor R1 (i, n)\nresistor R2 (n, o)\n"
             "opamp U1 (gnd, n, o)\nport out (o, gnd)\n")


def test_ideal_inverting_amplifier():
    # -R2/R1: Franco, Design with Operational Amplifiers and Analog Integrated Circuits,
    # ch. 1 (from memory)
    R1, R2 = sym("R1 R2")
    assert same(derived(INVERTING, "gain(Uin, out)"), -R2 / R1)


def test_ideal_non_inverting_amplifier():
    # 1 + R2/R1: Franco, ch. 1 (from memory)
    R1, R2 = sym("R1 R2")
    text = ("voltage source Uin (p, gnd)\nresistor R1 (n, gnd)\nresistor R2 (n, o)\n"
            "opamp U1 (p, n, o)\nport out (o, gnd)\n")
    assert same(derived(text, "gain(Uin, out)"), 1 + R2 / R1)


def test_inverting_amplifier_with_finite_open_loop_gain():
    # A_cl = A_ideal/(1 + 1/(a*beta)), beta = R1/(R1 + R2): Franco, ch. 1, the effect of
    # finite open-loop gain (from memory)
    R1, R2, a = sym("R1 R2 a")
    text = "param a\n" + INVERTING.replace("opamp U1 (gnd, n, o)", "opamp U1 (gnd, n, o) = a")
    beta = R1 / (R1 + R2)
    assert same(derived(text, "gain(Uin, out)"), (-R2 / R1) / (1 + 1 / (a * beta)))
    # and the limit recovers the ideal gain
    assert same(derived(text, "gain(Uin, out)", limits={"a": "oo"}), -R2 / R1)


def test_difference_amplifier():
    # V_out = V2*R4/(R3 + R4)*(1 + R2/R1) - V1*R2/R1; with R3 = R1, R4 = R2 it is
    # (R2/R1)*(V2 - V1): Franco, ch. 2, difference amplifier (from memory)
    V1, V2, R1, R2, R3, R4 = sym("V1 V2 R1 R2 R3 R4")
    text = ("voltage source V1 (a, gnd)\nvoltage source V2 (b, gnd)\nresistor R1 (a, n)\n"
            "resistor R2 (n, o)\nresistor R3 (b, p)\nresistor R4 (p, gnd)\n"
            "opamp U1 (p, n, o)\nport out (o, gnd)\n")
    general = V2 * R4 / (R3 + R4) * (1 + R2 / R1) - V1 * R2 / R1
    out = derived(text, "V(out)")
    assert same(out, general)
    assert same(out.subs({R3: R1, R4: R2}), R2 / R1 * (V2 - V1))


def test_transimpedance_stage():
    # V_out = -Rf*I_in: Franco, ch. 2, current-to-voltage converter (from memory)
    Rf, Cs = sym("Rf Cs")
    text = ("current source Iin (n, gnd)\ncapacitor Cs (n, gnd)\nresistor Rf (n, o)\n"
            "opamp U1 (gnd, n, o)\nport out (o, gnd)\n")
    assert same(derived(text, "gain(Iin, out)"), -Rf)
    (result,) = symcirc.parse(text).derive("gain(Iin, out)")
    assert result.unit == "Ω"


def test_common_source_gain_with_and_without_degeneration():
    # -gm*RD, and -gm*RD/(1 + gm*RS) with source degeneration: Sedra & Smith,
    # Microelectronic Circuits, common-source amplifier (from memory). The drain current
    # gm*v_gs flows from drain to source through the device: a source driving into `src`.
    gm, RD, RS = sym("gm RD RS")
    plain = ("param gm\nvoltage source Uin (g, gnd)\nresistor RD (d, gnd)\n"
             "current source Igm (gnd, d) = gm*V(g, gnd)\nport out (d, gnd)\n")
    assert same(derived(plain, "gain(Uin, out)"), -gm * RD)
    degenerated = ("param gm\nvoltage source Uin (g, gnd)\nresistor RD (d, gnd)\n"
                   "resistor RS (src, gnd)\ncurrent source Igm (src, d) = gm*V(g, src)\n"
                   "port out (d, gnd)\n")
    assert same(derived(degenerated, "gain(Uin, out)"), -gm * RD / (1 + gm * RS))


def test_common_emitter_gain_hybrid_pi_with_and_without_degeneration():
    # hybrid-pi model (r_pi, gm): -gm*RC; with emitter resistor RE,
    # -beta*RC/(r_pi + (beta + 1)*RE), beta = gm*r_pi: Sedra & Smith, common-emitter
    # amplifier with emitter resistance (from memory)
    gm, RC, RE, rpi = sym("gm RC RE rpi")
    plain = ("param gm\nvoltage source Uin (b, gnd)\nresistor rpi (b, gnd)\nresistor RC (c, gnd)\n"
             "current source Igm (gnd, c) = gm*V(b, gnd)\nport out (c, gnd)\n")
    assert same(derived(plain, "gain(Uin, out)"), -gm * RC)
    degenerated = ("param gm\nvoltage source Uin (b, gnd)\nresistor rpi (b, e)\n"
                   "resistor RC (c, gnd)\nresistor RE (e, gnd)\n"
                   "current source Igm (e, c) = gm*V(b, e)\nport out (c, gnd)\n")
    beta = gm * rpi
    assert same(derived(degenerated, "gain(Uin, out)"), -beta * RC / (rpi + (beta + 1) * RE))


def test_miller_input_capacitance():
    # J. M. Miller, "Dependence of the input impedance of a three-electrode vacuum tube upon
    # the load in the plate circuit", Sci. Papers Bur. Standards 15 (1920): a capacitance C
    # across an inverting gain -A appears at the input as C*(1 + A)
    A, C = sym("A C")
    text = ("param A\nvoltage source Uamp (o, gnd) = -A*V(i)\ncapacitor C (i, o)\n"
            "port in (i, gnd)\n")
    assert same(derived(text, "Y(in)"), s * C * (1 + A))


# ---------------------------------------------------------------- two-ports and transformers


def test_z_parameters_of_a_t_network_and_y_parameters_of_a_pi_network():
    # T: z11 = Za + Zc, z12 = z21 = Zc, z22 = Zb + Zc; pi: y11 = Ya + Yc, y12 = y21 = -Yc,
    # y22 = Yb + Yc. D. M. Pozar, Microwave Engineering, 4th ed., ch. 4 (from memory)
    Za, Zb, Zc, Ya, Yb, Yc = sym("Za Zb Zc Ya Yb Yc")
    tee = ("impedance Za (a, m)\nimpedance Zb (m, b)\nimpedance Zc (m, gnd)\n"
           "port p1 (a, gnd)\nport p2 (b, gnd)\n")
    z = {r.quantity.split(".")[1]: r.expression
         for r in symcirc.parse(tee).derive("twoport(p1, p2)") if ".z" in r.quantity}
    assert same(z["z11"], Za + Zc) and same(z["z22"], Zb + Zc)
    assert same(z["z12"], Zc) and same(z["z21"], Zc)
    pi = ("admittance Ya (a, gnd)\nadmittance Yb (b, gnd)\nadmittance Yc (a, b)\n"
          "port p1 (a, gnd)\nport p2 (b, gnd)\n")
    circuit = symcirc.parse(pi)
    y = {k: circuit.twoport("p1", "p2").__getattr__(k).expression
         for k in ("y11", "y12", "y21", "y22")}
    assert same(y["y11"], Ya + Yc) and same(y["y22"], Yb + Yc)
    assert same(y["y12"], -Yc) and same(y["y21"], -Yc)


def test_abcd_of_a_series_impedance_and_of_a_shunt_admittance():
    # series Z: [[1, Z], [0, 1]]; shunt Y: [[1, 0], [Y, 1]]: Pozar, Microwave Engineering,
    # 4th ed., ch. 4, ABCD parameters of useful two-port circuits (from memory)
    Z, Y = sym("Z Y")
    shunt = symcirc.parse("admittance Y (a, gnd)\nport p1 (a, gnd)\nport p2 (a, gnd)\n")
    chain = shunt.twoport("p1", "p2")
    assert [chain.A.expression, chain.B.expression, chain.C.expression, chain.D.expression] \
        == [1, 0, Y, 1]
    # a series Z needs a return node that an element touches, so it is measured in cascade
    # with the shunt Y: [[1, Z], [0, 1]] times [[1, 0], [Y, 1]] = [[1 + Z*Y, Z], [Y, 1]]
    # (Pozar, ch. 4: cascaded ABCD matrices multiply)
    cascade = symcirc.parse("impedance Z (a, b)\nadmittance Y (b, gnd)\n"
                            "port p1 (a, gnd)\nport p2 (b, gnd)\n").twoport("p1", "p2")
    got = [cascade.A.expression, cascade.B.expression, cascade.C.expression,
           cascade.D.expression]
    assert same(got[0], 1 + Z * Y) and got[1:] == [Z, Y, 1]


def test_ideal_transformer_reflects_a_load_as_n_squared():
    # Z_in = N**2*Z_L for turns ratio N = N1/N2: Hayt, Kemmerly & Durbin, ideal transformer
    # (from memory)
    ZL, T1 = sym("ZL T1")
    text = "transformer T1 (p, gnd; q, gnd) = 4\nimpedance ZL (q, gnd)\nport pri (p, gnd)\n"
    assert same(derived(text, "Z(pri)"), T1**2 * ZL)
    (z,) = symcirc.parse(text).derive("Z(pri)")
    assert z.exact.evaluate({"T1": Fraction(4), "ZL": Fraction(50)}) == 800


def test_norton_equivalent_of_a_source_with_series_resistance():
    # I_N = U/R, Y_N = 1/R: Norton's theorem, e.g. Hayt, Kemmerly & Durbin (from memory)
    U, R, RL = sym("U R RL")
    text = ("voltage source U (a, gnd)\nresistor R (a, b)\nport out (b, gnd)\n")
    circuit = symcirc.parse(text)
    norton = circuit.norton("out")
    assert same(norton.current.expression, U / R)
    assert same(norton.admittance.expression, 1 / R)
    # Thevenin and Norton agree: V_th = I_N / Y_N (common practice)
    thevenin = circuit.thevenin("out")
    assert same(thevenin.voltage.expression,
                norton.current.expression / norton.admittance.expression)


def test_abcd_of_a_series_impedance_alone_as_its_shunt_vanishes():
    # series Z: A = 1, B = Z, C = 0, D = 1 (Pozar, Microwave Engineering, 4th ed., ch. 4,
    # from memory), read directly: the shunt Y0 that gives the ports a return is taken to 0
    Z = sympy.Symbol("Z")
    circuit = symcirc.parse("impedance Z (a, b)\nadmittance Y0 (b, gnd)\n"
                            "port p1 (a, gnd)\nport p2 (b, gnd)\n")
    got = [derived_from(circuit, f"twoport(p1, p2).{name}", limits={"Y0": "0"})
           for name in "ABCD"]
    assert got == [1, Z, 0, 1]
    # and y parameters of the series element: y11 = -y12 = 1/Z (same source)
    assert same(derived_from(circuit, "twoport(p1, p2).y11", limits={"Y0": "0"}), 1 / Z)
    assert same(derived_from(circuit, "twoport(p1, p2).y12", limits={"Y0": "0"}), -1 / Z)


def derived_from(circuit, quantity: str, **options) -> sympy.Expr:
    (result,) = circuit.derive(quantity, **options)
    return result.expression


def test_h_g_and_chain_parameters_of_a_t_network_follow_the_conversion_table():
    # the T network's z parameters (Pozar, ch. 4) converted by the standard table (e.g.
    # Hayt, Kemmerly & Durbin, Engineering Circuit Analysis, two-port networks, from memory):
    # h11 = dz/z22, h12 = z12/z22, h21 = -z21/z22, h22 = 1/z22; g11 = 1/z11,
    # g12 = -z12/z11, g21 = z21/z11, g22 = dz/z11; A = z11/z21, B = dz/z21, C = 1/z21,
    # D = z22/z21, with dz = z11*z22 - z12*z21
    Za, Zb, Zc = sym("Za Zb Zc")
    z11, z12, z21, z22 = Za + Zc, Zc, Zc, Zb + Zc
    dz = z11 * z22 - z12 * z21
    expected = {"h11": dz / z22, "h12": z12 / z22, "h21": -z21 / z22, "h22": 1 / z22,
                "g11": 1 / z11, "g12": -z12 / z11, "g21": z21 / z11, "g22": dz / z11,
                "A": z11 / z21, "B": dz / z21, "C": 1 / z21, "D": z22 / z21}
    tee = symcirc.parse("impedance Za (a, m)\nimpedance Zb (m, b)\nimpedance Zc (m, gnd)\n"
                        "port p1 (a, gnd)\nport p2 (b, gnd)\n")
    got = {r.quantity.rsplit(".", 1)[1]: r for r in tee.derive("twoport(p1, p2)")}
    for name, formula in expected.items():
        assert same(got[name].expression, formula), name
    assert got["h21"].unit == "" and got["h11"].unit == "Ω" and got["g11"].unit == "S"


def test_sensitivities_of_a_voltage_divider():
    # relative (Bode) sensitivity of the divider ratio R2/(R1 + R2): S_R2 = R1/(R1 + R2),
    # S_R1 = -R1/(R1 + R2); absolute dV/dR2 = U*R1/(R1 + R2)**2. Bode, Network Analysis and
    # Feedback Amplifier Design (1945), sensitivity defined as d ln H / d ln x (from memory)
    U, R1, R2 = sym("U R1 R2")
    text = ("voltage source U (i, gnd)\nresistor R1 (i, o)\nresistor R2 (o, gnd)\n"
            "port out (o, gnd)\n")
    assert same(derived(text, "relative_sensitivity(gain(U, out), R2)"), R1 / (R1 + R2))
    assert same(derived(text, "relative_sensitivity(gain(U, out), R1)"), -R1 / (R1 + R2))
    assert same(derived(text, "sensitivity(V(out), R2)"), U * R1 / (R1 + R2) ** 2)
    # the relative sensitivities of a dimensionless ratio of resistances sum to zero
    # (scaling every resistor leaves it unchanged: common practice)
    total = derived(text, "relative_sensitivity(gain(U, out), R1)") + \
        derived(text, "relative_sensitivity(gain(U, out), R2)")
    assert same(total, 0)
