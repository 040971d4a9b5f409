"""The analysis quantities through the language: `symcirc.parse`, `circuit.derive`, and the
`derive` and `plot` commands (invented circuits)."""

import itertools
import json
from fractions import Fraction

import pytest
import sympy
from test_plots import svg_texts

import symcirc

BRIDGE = """\
title "Strain-gauge bridge of a hopper scale (invented)"
param Ub = 5 V ± 1 %                "excitation"
voltage source Uexc (exc, gnd) = Ub
resistor R1 (exc, a) = 350 Ω ± 0.1 %
resistor R2 (a, gnd) = 350 Ω ± 0.1 %
resistor R3 (exc, b) = 350 Ω ± 0.1 %
resistor R4 (b, gnd) = 350 Ω ± 0.1 %
port out (a, b)
"""

SENSOR = """\
title "Thermistor divider feeding a panel meter (invented)"
voltage source Us (top, gnd) = 3.3 V
resistor Ra (top, mid) = 2 kΩ ± 1 %
resistor Rb (mid, gnd) = 2 kΩ ± 1 %
resistor Rm (mid, gnd) = 1 MΩ      "panel meter input"
param RL = 1 kΩ
port out (mid, gnd)
"""

INVERTING = """\
title "Inverting gain stage of a hydrophone preamplifier (invented)"
voltage source Uin (i, gnd) = 10 mV
resistor Rin (i, n) = 10 kΩ
resistor Rf (n, o) = 47 kΩ
opamp U1 (gnd, n, o)
port out (o, gnd)
"""


@pytest.fixture(scope="module")
def bridge():
    return symcirc.parse(BRIDGE, "bridge.circuit")


def test_balanced_bridge_sensitivities_referred_to_excitation(bridge):
    """K. Hoffmann, An Introduction to Measurements using Strain Gages (HBM, 1989), ch. 7
    (from memory): ΔU_A/U_E = 1/4·(ΔR1/R1 − ΔR2/R2 + ΔR3/R3 − ΔR4/R4) with R1, R2 one half
    bridge and R3, R4 the other, output R1/(R1 + R2) − R4/(R3 + R4). Here the output is
    V(a) − V(b) = R2/(R1 + R2) − R4/(R3 + R4) of the excitation: R2 and R3 rise it."""
    results = bridge.derive("sensitivities(V(out))")
    by_symbol = {r.details["sensitivity"]["symbol"]: r for r in results}
    expected = {"R1": Fraction(-1, 4), "R2": Fraction(1, 4), "R3": Fraction(1, 4),
                "R4": Fraction(-1, 4)}
    for arm, published in expected.items():
        assert by_symbol[arm].nominal_exact == published
        assert by_symbol[arm].details["sensitivity"]["relative_to"] == "Uexc"
    assert "balanced bridge" in results[0].notes[0]
    assert results[0].quantity.startswith("sensitivities(V(out)).")
    # ∂V(out)/∂R1 at balance: -Ub·R2/(R1 + R2)² = -5/1400 V/Ω
    assert by_symbol["R1"].details["sensitivity"]["derivative_nominal"] == \
        pytest.approx(-5 / 1400)


def test_bridge_tolerance_against_brute_force_and_json(tmp_path, cli):
    path = tmp_path / "bridge.circuit"
    path.write_text(BRIDGE, encoding="utf-8")
    run = cli("derive", str(path), "tolerance(V(out))", "--format", "json")
    assert run.status == 0
    (entry,) = json.loads(run.out)["results"]
    table = entry["tolerance"]
    # brute force over the 32 corners of the (R1..R4, Ub) box, in the test
    R1, R2, R3, R4, Ub = sympy.symbols("R1 R2 R3 R4 Ub")
    v_out = Ub * (R2 / (R1 + R2) - R4 / (R3 + R4))
    bands = [(Fraction(34965, 100), Fraction(35035, 100))] * 4 + [(Fraction(495, 100),
                                                                     Fraction(505, 100))]
    corners = [v_out.subs(dict(zip((R1, R2, R3, R4, Ub), c, strict=True)))
               for c in itertools.product(*bands)]
    assert table["extremes"]["low"] == pytest.approx(float(min(corners)), rel=1e-12)
    assert table["extremes"]["high"] == pytest.approx(float(max(corners)), rel=1e-12)
    assert table["nominal"] == 0 and table["monte_carlo"]["samples"] == 100_000
    assert table["monte_carlo"]["seed"] == 1
    assert "uniformly distributed" in table["monte_carlo"]["convention"]
    assert any("Monte Carlo" in n for n in entry["notes"])
    read_back = sympy.parse_expr(entry["expression"],
                                 local_dict={n: sympy.Symbol(n) for n in entry["symbols"]})
    Uexc = sympy.Symbol("Uexc")
    assert sympy.simplify(read_back - v_out.subs(Ub, Uexc)) == 0


def test_tolerance_through_a_defined_element():
    circuit = symcirc.parse(
        "param R0 = 1 kΩ ± 1 %\nvoltage source U (t, gnd) = 1 V\n"
        "resistor Rt (t, m) = 2*R0\nresistor Rs (m, gnd) = R0\nport out (m, gnd)\n")
    (result,) = circuit.derive("tolerance(V(out))")
    table = result.details["tolerance"]
    # Rt and Rs both follow R0: the ratio is fixed, R0's tolerance cancels
    assert table["extremes"]["low"] == table["extremes"]["high"] == pytest.approx(1 / 3)
    assert table["contributions"] == [] and table["monte_carlo"]["std"] == 0
    assert "No tolerance reaches V(out)" in result.notes[0]


def test_meter_loading_follows_the_1000_times_rule():
    """Common practice: a meter of 1000× the source resistance reads about 0.1 % low.
    Source: 2 kΩ ∥ 2 kΩ = 1 kΩ; meter Rm = 1 MΩ (taken out of the circuit as the load)."""
    circuit = symcirc.parse(SENSOR)
    results = {r.quantity: r for r in circuit.derive("loading(out, Rm)")}
    error = results["loading(out, Rm).error"]
    assert error.nominal_exact == Fraction(-1, 1001)
    assert "0.0999 % low" in " ".join(error.notes)
    assert results["loading(out, Rm).voltage"].nominal_exact == \
        Fraction(33, 20) * Fraction(1000, 1001)


def test_maximum_power_transfer_at_matched_load():
    """Hayt, Kemmerly & Durbin, Engineering Circuit Analysis, maximum power transfer
    (from memory): RL = R_th takes U_th²/(4·R_th)."""
    without_meter = "\n".join(line for line in SENSOR.splitlines() if "Rm" not in line)
    circuit = symcirc.parse(without_meter + "\n")
    results = {r.quantity: r for r in circuit.derive("loading(out, RL)")}
    maximum = results["loading(out, RL).maximum_power"]
    Us, Ra, Rb, RL = sympy.symbols("Us Ra Rb RL")
    # U_th = Us·Rb/(Ra + Rb), R_th = Ra·Rb/(Ra + Rb): U_th²/(4·R_th) = Us²·Rb/(4·Ra·(Ra + Rb))
    assert sympy.simplify(maximum.expression - Us**2 * Rb / (4 * Ra * (Ra + Rb))) == 0
    assert maximum.nominal == pytest.approx(1.65**2 / 4000)
    power = results["loading(out, RL).power"].expression
    r_th = Ra * Rb / (Ra + Rb)
    assert sympy.simplify(sympy.diff(power, RL).subs(RL, r_th)) == 0
    assert sympy.simplify(power.subs(RL, r_th) - maximum.expression) == 0


def test_minimum_load_for_0_1_percent():
    circuit = symcirc.parse(SENSOR)
    (resistance,) = circuit.derive("minimum_load(out, 0.1 %)")
    # source 1 kΩ ∥ 1 MΩ meter = 999.000999 Ω: R_L ≥ 999·R_th
    assert resistance.nominal == pytest.approx(999 * 1e6 * 1000 / 1001000, rel=1e-12)
    capacitance = circuit.derive("minimum_load(out, 0.1 %, 1 kHz)")[1]
    assert capacitance.unit == "F" and capacitance.nominal > 0


def test_solve_inverting_amplifier_feedback_resistor_picks_100k():
    """Ideal inverting amplifier, gain −Rf/Rin (Horowitz & Hill, The Art of Electronics,
    ch. 4; from memory): −10 from 10 kΩ needs 100 kΩ."""
    circuit = symcirc.parse(INVERTING)
    (result,) = circuit.derive("solve(gain(Uin, out) = -10, Rf)")
    assert sympy.simplify(result.expression - 10 * sympy.Symbol("Rin")) == 0
    assert result.nominal == 100_000
    for choice in result.details["solve"]["series"].values():
        assert choice["best"] == 100_000
    assert result.unit == "Ω"


def test_caution_on_hazardous_voltage():
    circuit = symcirc.parse("voltage source Um (l, gnd) = 230 V\nresistor Rs (l, o) = 10 Ω\n"
                            "port out (o, gnd)\n")
    results = circuit.derive("loading(out, 50 Ω)")
    text = " ".join(n for r in results for n in r.notes)
    assert "Caution" in text and "local electrical codes" in text and "licensed practice" in text
    assert "W dissipated in the load" in text  # 230²·50/60² ≈ 735 W


@pytest.mark.parametrize("quantity, message", [
    ("tolerance(V(out), lognormal)", "uniform` or `normal"),
    ("loading(nowhere, 10 kΩ)", "expected a port name"),
    ("minimum_load(out, 150 %)", "between 0 and 100 %"),
    ("minimum_load(out, 1 V)", "given in %"),
    ("solve(V(out), R1)", "expected an equation"),
    ("solve(V(out) = 1, nothing)", "parameter or element"),
])
def test_bad_arguments_are_located_errors(bridge, quantity, message):
    with pytest.raises(symcirc.SymcircError, match=message) as caught:
        bridge.derive(quantity)
    assert caught.value.line == 1 and caught.value.column > 0


def test_plot_command_writes_figures(cli, tmp_path):
    path = tmp_path / "bridge.circuit"
    path.write_text(BRIDGE, encoding="utf-8")
    spread = tmp_path / "spread.svg"
    assert cli("plot", str(path), "tolerance(V(out))", "-o", str(spread), "--seed", "5").status == 0
    # a balanced bridge spreads a few mV about zero: the axis reads in mV
    assert "V(out) (mV)" in svg_texts(spread) and "Samples" in svg_texts(spread)
    filt = tmp_path / "filter.circuit"
    filt.write_text("voltage source Uin (i, gnd) = 1 V\nresistor R (i, o) = 1.6 kΩ\n"
                    "capacitor C (o, gnd) = 100 nF\nport out (o, gnd)\n", encoding="utf-8")
    bode = tmp_path / "bode.png"
    assert cli("plot", str(filt), "gain(Uin, out)", "-o", str(bode)).status == 0
    assert bode.stat().st_size > 1000
    api = tmp_path / "api.svg"
    symcirc.load(str(filt)).plot("gain(Uin, out)", api)
    assert {"Frequency (Hz)", "Phase (°)"} <= set(svg_texts(api))


def test_plots_of_sensitivities_and_minimum_load(tmp_path, bridge):
    bars = tmp_path / "bars.svg"
    bridge.plot("sensitivities(V(out))", bars)
    assert "Relative sensitivity (x/Uexc)·∂Q/∂x" in svg_texts(bars)
    curve = tmp_path / "curve.svg"
    bridge.plot("minimum_load(out, 0.1 %)", curve)
    texts = svg_texts(curve)
    # R_th = 350 Ω: the smallest load for 0.1 % is 999·350 Ω = 349.65 kΩ
    assert "smallest load 349.6 kΩ" in texts and "bound 0.1 %" in texts


def test_plot_command_errors_exit_2(tmp_path, cli):
    path = tmp_path / "bridge.circuit"
    path.write_text(BRIDGE, encoding="utf-8")
    run = cli("plot", str(path), "V(out)", "-o", str(tmp_path / "x.svg"))
    assert run.status == 2
    assert "does not depend on s" in run.err
    run = cli("plot", str(path), "V(out)", "-o", str(tmp_path / "x.pdf"))
    assert run.status == 2
    assert ".png or .svg" in run.err


ANALYSES = ("sensitivities(V(out))", "tolerance(V(out))", "loading(out, Rm)",
            "minimum_load(out, 0.1 %)", "solve(V(out) = 1.2, Ra)")


@pytest.fixture()
def sensor_file(tmp_path):
    path = tmp_path / "sensor.circuit"
    path.write_text(SENSOR, encoding="utf-8")
    return path


@pytest.mark.parametrize("fmt", ["text", "latex", "markdown", "json"])
def test_every_analysis_through_derive_in_every_format(sensor_file, cli, fmt):
    """`symcirc derive` writes every analysis in every format with the same numbers; the
    expected figures come from the hand formulas in the comments."""
    status, out, _ = cli("derive", str(sensor_file), *ANALYSES, "--format", fmt, "--seed", "11")
    assert status == 0
    if fmt == "json":
        results = json.loads(out)["results"]
        kinds = {key for r in results for key in r
                 if key in ("sensitivity", "tolerance", "loading", "minimum_load", "solve")}
        assert kinds == {"sensitivity", "tolerance", "loading", "minimum_load", "solve"}
        (spread,) = [r["tolerance"] for r in results if "tolerance" in r]
        assert spread["monte_carlo"]["seed"] == 11
        assert "uniformly distributed" in spread["monte_carlo"]["convention"]
        notes = " ".join(n for r in results for n in r["notes"])
    else:
        notes = out
        heading = {"text": "tolerance(V(out)) = ", "latex": r"\begin{equation*}",
                   "markdown": "**`tolerance(V(out))`**"}[fmt]
        assert heading in out
    # source Ra ∥ Rb ∥ Rm = 999.0 Ω loaded by Rm = 1 MΩ: 1/1001 low (the 1000× rule)
    assert "0.0999 % low" in notes
    # minimum load for 0.1 %: 999·R_th with R_th = 1 kΩ ∥ 1 MΩ = 999.0 Ω: 998 kΩ
    assert "998 kΩ" in notes
    # Ra for 1.2 V from 3.3 V over Rb ∥ Rm = 1998 Ω: Ra = 1998·(3.3 − 1.2)/1.2 = 3.4965 kΩ
    assert "E24: 3.3 kΩ gives" in notes and "3.493 kΩ" in notes
    assert "seed 11" in notes and "uniformly distributed over its tolerance band" in notes
    assert "Relative sensitivities (x/Q)·∂Q/∂x of Q = V(out)" in notes


def test_analyses_from_derive_statements_and_the_python_api(tmp_path, cli):
    """The same analyses written as `derive` statements in the file, and through the API
    with a seed: the file's statements and the API agree."""
    path = tmp_path / "bridge.circuit"
    path.write_text(BRIDGE + "derive tolerance(V(out), normal), sensitivities(V(out))\n",
                    encoding="utf-8")
    run = cli("derive", str(path), "--format", "json", "--seed", "4")
    assert run.status == 0
    results = json.loads(run.out)["results"]
    (spread,) = [r["tolerance"] for r in results if "tolerance" in r]
    assert "3σ" in spread["monte_carlo"]["convention"] and spread["monte_carlo"]["seed"] == 4
    (api,) = symcirc.load(str(path)).derive("tolerance(V(out), normal)", seed=4)
    assert api.details["tolerance"]["monte_carlo"]["mean"] == spread["monte_carlo"]["mean"]
    for end in ("low", "high"):
        assert api.details["tolerance"]["extremes"][end] == spread["extremes"][end]


def test_zero_output_with_two_sources_is_shown_in_its_own_unit(tmp_path):
    """A difference of two equal dividers fed by two sources is zero at nominal with no single
    excitation: the rows are x·∂Q/∂x in volts. By hand, Q = U1·R2/(R1 + R2) − U2·R4/(R3 + R4),
    so x·∂Q/∂x for R1 is −U1·R1·R2/(R1 + R2)² = −2.5 V·1/4 = −0.625 V (and ±0.625 V for the
    other arms, ±1.25 V for the sources)."""
    circuit = symcirc.parse(
        'title "Differential pressure sensor with two supplies (invented)"\n'
        "voltage source U1 (p, gnd) = 2.5 V\nvoltage source U2 (q, gnd) = 2.5 V\n"
        "resistor R1 (p, a) = 10 kΩ\nresistor R2 (a, gnd) = 10 kΩ\n"
        "resistor R3 (q, b) = 10 kΩ\nresistor R4 (b, gnd) = 10 kΩ\nport out (a, b)\n")
    results = {r.details["sensitivity"]["symbol"]: r for r in circuit.derive(
        "sensitivities(V(out))")}
    assert results["R1"].nominal_exact == Fraction(-5, 8) and results["R1"].unit == "V"
    assert abs(results["U1"].nominal_exact) == Fraction(5, 4)
    assert "no single excitation" in " ".join(n for r in results.values() for n in r.notes)
    bars = tmp_path / "bars.svg"
    circuit.plot("sensitivities(V(out))", bars)
    texts = svg_texts(bars)
    assert "Sensitivity x·∂Q/∂x (V)" in texts
    assert any(t.endswith(" V") and t.lstrip("−-")[0].isdigit() for t in texts)


HEATER = """\
title "Heater element on a bench supply (invented)"
voltage source Us (p, gnd) = 12 V
resistor Rs (p, o) = 4 Ω    "supply and lead resistance"
resistor RL (o, gnd) = 10 Ω  "heater"
port out (o, gnd)
"""


def test_solve_lists_every_real_positive_solution_and_says_so():
    """5 W into RL from 12 V behind 4 Ω: 5·(Rs + RL)² = Us²·RL, by hand RL = 0.8 Ω or 20 Ω;
    `loading(out, RL).power` names one part of the loading analysis."""
    circuit = symcirc.parse(HEATER)
    first, second = circuit.derive("solve(loading(out, RL).power = 5, RL)")
    assert (first.nominal_exact, second.nominal_exact) == (Fraction(4, 5), 20)
    assert "2 real positive solutions" in first.notes[0]
    assert first.quantity.endswith(".solution1") and second.quantity.endswith(".solution2")
    us, rs = sympy.symbols("Us Rs")
    for result in (first, second):
        rl = result.expression  # substituted back, the power is 5 W
        assert sympy.simplify(us**2 * rl / (rs + rl) ** 2 - 5) == 0
    assert "E24: 20 Ω is in the series and gives 5 W." in second.notes


def test_parts_of_analyses_are_quantities_too():
    circuit = symcirc.parse(HEATER)
    (error,) = circuit.derive("loading(out, RL).error")
    assert error.quantity == "loading(out, RL).error" and error.nominal_exact == Fraction(-2, 7)
    (bound,) = circuit.derive("minimum_load(out, 1 %).resistance")
    assert bound.nominal_exact == 99 * Fraction(40, 14)  # 99·(4 Ω ∥ 10 Ω)
    (row,) = circuit.derive("sensitivities(V(out)).Rs")
    assert row.nominal_exact == Fraction(-4, 14)  # −Rs/(Rs + RL)
    assert row.notes[0].startswith("Relative sensitivities")
    with pytest.raises(symcirc.SymcircError, match=r"has no part `.nothing`; it has .error"):
        circuit.derive("loading(out, RL).nothing")
