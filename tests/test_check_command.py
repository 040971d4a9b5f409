"""`symcirc check` end to end: claims from files and from the command line, decided against
formulas the engine derives from circuits. Correct claims are published results (sources
beside each); wrong ones must be refused with the right diagnosis and exit status 1; bad
input exits 2 with `FILE:LINE:COL: error:`."""

from pathlib import Path

import pytest

from symcirc.cli import main

ROOT = Path(__file__).resolve().parents[1]

BRIDGE = """\
title "Strain-gauge bridge, scale front end (invented)"
voltage source Ub (exc, gnd)
resistor R1 (exc, a)
resistor R2 (a, gnd)
resistor R3 (exc, b)
resistor R4 (b, gnd)
port out (a, b)
"""

INVERTING = """\
title "Inverting stage of a sensor preamplifier (invented)"
param A   "open-loop gain"
voltage source Uin (in, gnd)
resistor Rg (in, n)
resistor Rf (n, out)
opamp U1 (gnd, n, out){gain}
port o (out, gnd)
"""

DIVIDER = """\
title "Reference divider loaded by a meter (invented)"
voltage source Ub (top, gnd)
resistor R1 (top, mid)
resistor R2 (mid, gnd)
resistor RL (mid, gnd)   "meter input"
port out (mid, gnd)
"""

RC = """\
title "Input filter of a data logger (invented)"
voltage source Uin (in, gnd)
resistor R (in, o)
capacitor C (o, gnd)
port out (o, gnd)
"""

SENSOR = """\
title "Sensor divider with a defined sensor resistance (invented)"
param R0 = 1 kΩ
param alpha
param T
voltage source Ub (exc, gnd)
resistor Rt (exc, out) = R0*(1 + alpha*T)
resistor R2 (out, gnd)
port o (out, gnd)
"""


def run(tmp_path, text: str, *claims: str, capsys) -> tuple[int, str, str]:
    path = tmp_path / "c.circuit"
    path.write_text(text, encoding="utf-8")
    status = main(["check", str(path), *claims])
    out, err = capsys.readouterr()
    return status, out, err


# ---------------------------------------------------------------- claims that hold


@pytest.mark.parametrize("example", ["bridge_adc", "diff_amp", "antialias_filter"])
def test_claims_of_the_examples_hold(example, capsys):
    assert main(["check", str(ROOT / "examples" / f"{example}.circuit")]) == 0
    out = capsys.readouterr().out
    assert out.strip() and all(line.endswith(" holds") for line in out.splitlines())


@pytest.mark.parametrize("text, claim", [
    # Thevenin resistance of a bridge across its diagonal: R1∥R2 + R3∥R4
    # (Alexander & Sadiku, Fundamentals of Electric Circuits; from memory).
    (BRIDGE, "thevenin(out).impedance = R1*R2/(R1 + R2) + R3*R4/(R3 + R4)"),
    # Bridge output: Ub*(R2/(R1 + R2) - R4/(R3 + R4)) (Horowitz & Hill, ch. 1; from memory).
    (BRIDGE, "thevenin(out).voltage = Ub*(R2/(R1 + R2) - R4/(R3 + R4))"),
    # Ideal inverting amplifier: -Rf/Rg (Sedra & Smith, Microelectronic Circuits; from memory).
    (INVERTING.format(gain=""), "gain(Uin, o) = -Rf/Rg"),
    # With open-loop gain A: -(Rf/Rg)/(1 + (1 + Rf/Rg)/A) (Sedra & Smith; from memory).
    (INVERTING.format(gain=" = A"), "gain(Uin, o) = -(Rf/Rg)/(1 + (1 + Rf/Rg)/A)"),
    # Loaded divider: R2∥RL/(R1 + R2∥RL) (Horowitz & Hill, §1.2; from memory).
    (DIVIDER, "gain(Ub, out) = 1/(1 + R1*(1/R2 + 1/RL))"),
    # First-order RC low-pass: 1/(1 + sRC) (common practice).
    (RC, "gain(Uin, out) = 1/(1 + s*R*C)"),
    # The claim may use the parameters of a defined element.
    (SENSOR, "gain(Ub, o) = R2/(R2 + R0*(1 + alpha*T))"),
])
def test_published_claims_hold(tmp_path, capsys, text, claim):
    status, out, err = run(tmp_path, text, claim, capsys=capsys)
    assert status == 0, out + err
    assert out.strip() == f"{claim.split(' = ')[0]} holds"


# ---------------------------------------------------------------- claims that do not


@pytest.mark.parametrize("text, claim, words", [
    (BRIDGE, "thevenin(out).impedance = R1*R3/(R1 + R3) + R2*R4/(R2 + R4)", "swapped parts"),
    (BRIDGE, "thevenin(out).impedance = R1*R2/(R1 + R2)",
     "missing term: the claim lacks the term `+ R3*R4/(R3 + R4)`"),
    (BRIDGE, "thevenin(out).voltage = Ub*(R4/(R3 + R4) - R2/(R1 + R2))", "overall sign"),
    (BRIDGE, "thevenin(out).impedance = R1/2 + R3/2", "holds only when R1 = R2 and R3 = R4"),
    (INVERTING.format(gain=" = A"), "gain(Uin, o) = -Rf/Rg", "holds only in the limit A -> oo"),
    (INVERTING.format(gain=""), "gain(Uin, o) = -Rg/Rf", "swapped parts"),
    (INVERTING.format(gain=""), "gain(Uin, o) = -Rf/Rg - 1", "extra term: `-1`"),
    (DIVIDER, "gain(Ub, out) = R2/(R1 + R2)", "holds only in the limit RL -> oo (RL >> R1, R2)"),
    (RC, "gain(Uin, out) = 1/(1 + 2*pi*s*R*C)", "wrong term"),
    (RC, "Z(out) = R/(1 + s*R*C) + R", "extra term: `R`"),
])
def test_wrong_claims_are_refused(tmp_path, capsys, text, claim, words):
    status, out, err = run(tmp_path, text, claim, capsys=capsys)
    assert status == 1, out + err
    assert "does not hold" in out
    assert "counterexample: at " in out
    assert "claimed / derived = " in out and "claimed - derived = " in out
    assert words in out


def test_wrong_dimension_is_reported_first(tmp_path, capsys):
    status, out, _ = run(tmp_path, BRIDGE, "thevenin(out).impedance = R1/R2", capsys=capsys)
    assert status == 1
    diagnosis = [line for line in out.splitlines() if "diagnosis:" in line]
    assert diagnosis[0].strip() == ("diagnosis: wrong dimension: the claim is dimensionless, "
                                    "but thevenin(out).impedance is in Ω")


def test_mismatch_inside_a_claim_names_the_term(tmp_path, capsys):
    status, out, _ = run(tmp_path, RC, "gain(Uin, out) = 1/(1 + s*R)", capsys=capsys)
    assert status == 1
    assert "`s*R` is in 1/F, but `1` is dimensionless" in out
    assert "(at <claim 1>:1:25)" in out


def test_file_claims_report_their_line(tmp_path, capsys):
    text = BRIDGE + "claim thevenin(out).impedance = R1*R2/(R1 + R2)\n"
    status, out, _ = run(tmp_path, text, capsys=capsys)
    assert status == 1
    assert out.startswith(f"{tmp_path / 'c.circuit'}:8:1: thevenin(out).impedance does not hold")


def test_every_claim_is_reported(tmp_path, capsys):
    text = BRIDGE + ("claim thevenin(out).impedance = R1*R2/(R1 + R2) + R3*R4/(R3 + R4)\n"
                     "claim thevenin(out).voltage = 0\n")
    status, out, _ = run(tmp_path, text, capsys=capsys)
    assert status == 1
    assert out.startswith("thevenin(out).impedance holds\n")
    assert ":9:1: thevenin(out).voltage does not hold" in out


# ---------------------------------------------------------------- bad input


@pytest.mark.parametrize("claim, message", [
    ("thevenin(out).impedance = R1 +* R2", "<claim 1>:1:"),
    ("thevenin(out).impedance = R1 + R9", "unknown name `R9`"),
    ("thevenin(out) = R1", "has 2 parts; claim one of them"),
    ("Z(nowhere) = R1", "nowhere"),
])
def test_bad_claims_exit_2(tmp_path, capsys, claim, message):
    status, out, err = run(tmp_path, BRIDGE, claim, capsys=capsys)
    assert status == 2
    assert message in err and "Traceback" not in err
    assert ": error: " in err


def test_no_claims_is_bad_input(tmp_path, capsys):
    status, _, err = run(tmp_path, BRIDGE, capsys=capsys)
    assert status == 2 and "has no claim statements" in err
