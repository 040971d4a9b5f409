"""Stability warnings: a derived response with a right-half-plane pole, and an ideal opamp in
positive feedback, are said in the result's notes (derive, JSON, notes). The Routh–Hurwitz
count is checked against numpy's polynomial roots (an independent computation)."""

import contextlib
import io
import json
import random
from fractions import Fraction

import numpy as np
import pytest

import symcirc
from symcirc.cli import main
from symcirc.quantities.stability import ROUTH, rhp_count, right_half_plane_roots

WRONG_WAY = """\
title "Gain-of-ten stage with its inputs swapped"
voltage source Uin (in, gnd) = 1 V
resistor R1 (n, gnd) = 1 kΩ
resistor R2 (out, n) = 9 kΩ
opamp U1 ({first}, {second}, out)
derive gain(Uin, V(out))
"""

# Comparator with hysteresis: the divider R1/R2 feeds the output back to the + input
SCHMITT = """\
title "Comparator with hysteresis on a level sensor"
voltage source Usense (in, gnd) = 1 V
voltage source Uref (ref, gnd) = 2.5 V
resistor R1 (ref, p) = 10 kΩ
resistor R2 (out, p) = 100 kΩ
opamp U1 (p, in, out)
derive V(out)
"""

SALLEN_KEY = """\
title "Anti-alias low-pass of a vibration logger"
voltage source Uin (in, gnd) = 1 V
resistor R1 (in, a) = 10 kΩ
resistor R2 (a, b) = 10 kΩ
capacitor C1 (a, out) = 22 nF
capacitor C2 (b, gnd) = 10 nF
opamp U1 (b, out, out)
derive gain(Uin, V(out))
"""

INTEGRATOR = """\
title "Charge integrator"
voltage source Uin (in, gnd) = 1 V
resistor R1 (in, n) = 100 kΩ
capacitor C1 (n, out) = 1 nF
opamp U1 (gnd, n, out)
derive gain(Uin, V(out))
"""

NEGATIVE_TANK = """\
title "Tank with a negative-conductance cell"
current source Iin (gnd, a) = 1 mA
capacitor C1 (a, gnd) = 1 nF
inductor L1 (a, gnd) = 1 mH
current source Ineg (a, gnd) = {sign}g*V(a)
param g = 1 mS
derive V(a)
"""

LOSSLESS_TANK = """\
title "Lossless tank"
current source Iin (gnd, a) = 1 mA
capacitor C1 (a, gnd) = 1 nF
inductor L1 (a, gnd) = 1 mH
derive V(a)
"""


def warnings_of(text: str) -> list[str]:
    circuit = symcirc.parse(text, "stage.circuit")
    quantity = circuit.derives[0].texts[0]
    return [n for r in circuit.derive(quantity) for n in r.notes if n.startswith("Warning")]


def test_swapped_opamp_inputs_warn_of_positive_feedback():
    notes = warnings_of(WRONG_WAY.format(first="n", second="in"))
    assert len(notes) == 1
    assert "opamp U1 is in positive feedback" in notes[0] and "latches" in notes[0]


def test_the_same_stage_wired_right_has_no_warning():
    assert warnings_of(WRONG_WAY.format(first="in", second="n")) == []


@pytest.mark.parametrize("gain", [" = 100k", " = A0", " = A0/(1 + s/wa)", ""])
def test_finite_gain_opamps_in_positive_feedback_warn_too(gain):
    """A flat gain has no dynamics, so the finite-gain result is finite: the check gives
    it the same pole. A gain with a pole shows the right-half-plane root itself."""
    text = WRONG_WAY.format(first="n", second="in").replace("(n, in, out)",
                                                            "(n, in, out)" + gain)
    text = text.replace("voltage source", "param A0 = 100k\nparam wa = 100\nvoltage source")
    assert len(warnings_of(text)) == 1
    right = WRONG_WAY.format(first="in", second="n").replace("(in, n, out)",
                                                             "(in, n, out)" + gain)
    right = right.replace("voltage source", "param A0 = 100k\nparam wa = 100\nvoltage source")
    assert warnings_of(right) == []


def test_comparator_with_hysteresis_latches():
    notes = warnings_of(SCHMITT)
    assert any("opamp U1 is in positive feedback" in n for n in notes)


@pytest.mark.parametrize("text", [SALLEN_KEY, INTEGRATOR, LOSSLESS_TANK,
                                  NEGATIVE_TANK.format(sign="-")])
def test_stable_and_marginal_circuits_have_no_warning(text):
    """Sallen-Key feeds back to the + input through C1 yet is stable (the loop gain stays
    below one, common practice); an integrator's pole at the origin and a lossless tank's
    poles on the jω axis are not in the right half plane."""
    assert warnings_of(text) == []


def test_negative_conductance_tank_has_right_half_plane_poles():
    """1 − g·L·s + L·C·s²: both roots have real part g/(2C) > 0."""
    notes = warnings_of(NEGATIVE_TANK.format(sign=""))
    assert len(notes) == 1
    assert "2 roots in the right half plane" in notes[0]


def test_the_warning_reaches_json_and_the_note(tmp_path):
    path = tmp_path / "stage.circuit"
    path.write_text(WRONG_WAY.format(first="n", second="in"), encoding="utf-8")
    out = io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(io.StringIO()):
        assert main(["derive", str(path), "--format", "json"]) == 0
    (result,) = json.loads(out.getvalue())["results"]
    assert any("positive feedback" in n for n in result["notes"])
    note = tmp_path / "stage.md"
    with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
        assert main(["note", str(path), "-o", str(note)]) == 0
    assert "positive feedback" in note.read_text(encoding="utf-8")


def _numpy_count(coefficients: list[int]) -> int:
    roots = np.roots([float(c) for c in reversed(coefficients)])
    return int(np.sum(roots.real > 1e-7))


def test_routh_hurwitz_count_agrees_with_numpy_roots():
    """Random integer polynomials of degree 1 to 7 (roots kept off the imaginary axis by
    construction from random real and complex-pair factors)."""
    rng = random.Random(7)
    by_numpy = 0
    for _ in range(300):
        poly = [Fraction(1)]
        for _ in range(rng.randint(1, 4)):
            a = rng.choice([-3, -2, -1, 1, 2, 3])
            if rng.random() < 0.5:
                factor = [Fraction(-a), Fraction(1)]  # s − a
            else:
                b = rng.randint(1, 4)
                factor = [Fraction(a * a + b * b), Fraction(-2 * a), Fraction(1)]  # pair a ± jb
            poly = [sum(poly[i] * factor[k - i] for i in range(len(poly))
                        if 0 <= k - i < len(factor)) for k in range(len(poly) + len(factor) - 1)]
        assert right_half_plane_roots(poly) == _numpy_count([int(c) for c in poly]), poly
        by_numpy += rhp_count(poly)[1] != ROUTH
    assert by_numpy <= 3  # the exact array decides nearly every case


@pytest.mark.parametrize(("coefficients", "count"), [
    ([1, 0, 1], 0),             # s² + 1: ±j, on the axis (a row of zeros)
    ([0, 0, 1], 0),             # s²: a double root at the origin
    ([-1, 0, 1], 1),            # s² − 1: ±1 (a row of zeros, one root on each side)
    ([1, 1, 0, 1], 2),          # s³ + s + 1: a zero first entry, two roots right
    ([2, 1, 2, 1], 0),          # (s² + 1)(s + 2): the pair on the axis
    ([4, 0, 0, 0, 1], 2),       # s⁴ + 4: roots ±1 ± j
])
def test_routh_hurwitz_special_cases(coefficients, count):
    exact = [Fraction(c) for c in coefficients]
    assert right_half_plane_roots(exact) == count
    assert _numpy_count(coefficients) == count
