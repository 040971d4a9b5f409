"""The exact claim decision and its diagnoses, on closed forms written by hand.

The reference formulas are published ones (sources beside each); each wrong claim is a
mistake a person makes when deriving them, and must be refused with the right diagnosis.
The end-to-end command (formulas derived from circuit files) is tested in
test_check_command.py.
"""

from fractions import Fraction

import pytest
import sympy

from symcirc.check.claims import decide
from symcirc.check.dimensions import DIMENSIONLESS, LAPLACE_DIMENSION, UNITS

R1, R2, R3, R4, Rf, Rg, RL, Ri, A = sympy.symbols("R1 R2 R3 R4 Rf Rg RL Ri A")
C1, C2, L1, L2, k, s, Ub, R, C = sympy.symbols("C1 C2 L1 L2 k s Ub R C")

DIMS = {n: UNITS["Ω"] for n in ("R1", "R2", "R3", "R4", "Rf", "Rg", "RL", "Ri", "R")}
DIMS.update({"C1": UNITS["F"], "C2": UNITS["F"], "C": UNITS["F"], "L1": UNITS["H"],
             "L2": UNITS["H"], "A": DIMENSIONLESS, "k": DIMENSIONLESS, "Ub": UNITS["V"],
             "s": LAPLACE_DIMENSION})


def par(a, b):
    return a * b / (a + b)


# Published reference forms.
# Thevenin resistance of a Wheatstone bridge seen across its diagonal: R1∥R2 + R3∥R4
# (Alexander & Sadiku, Fundamentals of Electric Circuits, Thevenin chapter; from memory).
BRIDGE = par(R1, R2) + par(R3, R4)
# Inverting amplifier with finite open-loop gain A: -(Rf/Rg) / (1 + (1 + Rf/Rg)/A)
# (Sedra & Smith, Microelectronic Circuits, ch. 2; from memory).
INVERTING = -(Rf / Rg) / (1 + (1 + Rf / Rg) / A)
# Loaded voltage divider: Ub * (R2∥RL) / (R1 + R2∥RL) (Horowitz & Hill, The Art of
# Electronics, 3rd ed., §1.2; from memory).
LOADED_DIVIDER = Ub * par(R2, RL) / (R1 + par(R2, RL))
# Source with internal resistance Ri driving a load RL: Ub * RL / (Ri + RL) (common practice).
LOADED_SOURCE = Ub * RL / (Ri + RL)
# Unity-gain Sallen-Key low-pass, C1 in the feedback path and C2 to ground:
# 1 / (1 + s*C2*(R1 + R2) + s^2*R1*R2*C1*C2) (Sallen & Key, IRE Trans. Circuit Theory 1955;
# TI application report SLOA024; from memory).
SALLEN_KEY = 1 / (1 + s * C2 * (R1 + R2) + s**2 * R1 * R2 * C1 * C2)
# Mutual inductance of coupled coils: M = k*sqrt(L1*L2) (common practice).
MUTUAL = k * sympy.sqrt(L1 * L2)


def check(derived, claimed):
    return decide("q", derived, claimed, DIMS)


# ---------------------------------------------------------------- correct claims hold

CORRECT = [
    (BRIDGE, sympy.expand(sympy.cancel(BRIDGE))),  # the expanded ratio of polynomials
    (BRIDGE, 1 / (1 / R1 + 1 / R2) + 1 / (1 / R3 + 1 / R4)),  # conductance form
    (INVERTING, -Rf * A / (Rg * (1 + A) + Rf)),  # the same, cleared of fractions
    (LOADED_DIVIDER, Ub * R2 * RL / (R1 * R2 + R1 * RL + R2 * RL)),
    (SALLEN_KEY, 1 / (s**2 * R1 * R2 * C1 * C2 + s * (R1 * C2 + R2 * C2) + 1)),
    (MUTUAL, sympy.sqrt(k**2 * L1 * L2)),  # k, L1, L2 positive
    (MUTUAL, k * sympy.sqrt(L1) * sympy.sqrt(L2)),
    (1 / sympy.sqrt(L1 * C1), sympy.sqrt(1 / (L1 * C1))),  # LC resonance (common practice)
    (2 * sympy.pi * R * C, sympy.pi * (R * C + C * R)),
]


@pytest.mark.parametrize("derived, claimed", CORRECT)
def test_correct_claims_hold(derived, claimed):
    verdict = check(derived, claimed)
    assert verdict.holds and verdict.decided
    assert verdict.counterexample is None and verdict.diagnosis == []


# ---------------------------------------------------------------- wrong claims, diagnosed

WRONG = [
    # (derived, claimed, words the diagnosis must contain)
    (BRIDGE, -BRIDGE, "overall sign"),
    (INVERTING.subs(A, sympy.oo), Rf / Rg, "overall sign"),  # the ideal gain without its minus
    (BRIDGE, 2 * BRIDGE, "constant factor: the claim is 2 times"),
    (SALLEN_KEY, SALLEN_KEY / 2, "constant factor: the claim is 1/2 times"),
    (BRIDGE, par(R1, R3) + par(R2, R4), "swapped parts"),
    (LOADED_SOURCE, Ub * Ri / (Ri + RL), "swapped parts: the claim holds with RL and Ri"),
    (SALLEN_KEY, 1 / (1 + s * C1 * (R1 + R2) + s**2 * R1 * R2 * C1 * C2),
     "swapped parts: the claim holds with C1 and C2"),
    (BRIDGE, par(R1, R2), "missing term: the claim lacks the term `+ R3*R4/(R3 + R4)`"),
    (BRIDGE, BRIDGE + R3, "extra term: `R3`"),
    (SALLEN_KEY, 1 / (1 + s * C2 * R1 + s**2 * R1 * R2 * C1 * C2), "lacks the term `+ C2*R2*s`"),
    (SALLEN_KEY, 1 / (1 + s * C2 * (R1 + R2) + s**2 * R1 * R2 * C1 * C2 + s * C1 * R1),
     "extra term: `C1*R1*s`"),
    (SALLEN_KEY, 1 / (1 + s * C2 * (R1 + R3) + s**2 * R1 * R2 * C1 * C2),
     "wrong term: `R3` in `R1 + R3` should be `R2`"),
    (INVERTING, -Rf / Rg, "holds only in the limit A -> oo"),
    (LOADED_DIVIDER, Ub * R2 / (R1 + R2), "holds only in the limit RL -> oo (RL >> R1, R2)"),
    (LOADED_SOURCE, Ub, "Ri -> 0 (Ri << RL)"),
    (1 / (1 + s * R * C), sympy.Integer(1), "at low frequencies only"),
    (BRIDGE, R1 / 2 + par(R3, R4), "holds only when R1 = R2"),
    (BRIDGE, (R1 + R3) / 2, "holds only when"),
    (BRIDGE, BRIDGE * R1 / R2, "factor: the claim is `R1/R2` times"),
    (LOADED_DIVIDER, Ub * R1 / (R1 + R2),
     "in the limit RL -> oo (RL >> R1, R2): swapped parts: the claim holds with R1 and R2"),
    (BRIDGE, par(R1, R2) + R3 / R4 * par(R3, R4), "wrong factor"),
]


@pytest.mark.parametrize("derived, claimed, words", WRONG)
def test_wrong_claims_are_refused_with_the_right_diagnosis(derived, claimed, words):
    verdict = check(derived, claimed)
    assert not verdict.holds and verdict.decided
    assert verdict.diagnosis, "no diagnosis"
    assert words in verdict.diagnosis[0]
    example = verdict.counterexample
    assert example is not None and example.claimed != example.derived
    # The counterexample is real: both sides evaluated independently by sympy at the point.
    point = {sympy.Symbol(n): v for n, v in example.values.items()}
    assert all(isinstance(v, int) and v > 0 for v in example.values.values())
    assert sympy.Rational(example.derived.numerator, example.derived.denominator) == \
        sympy.nsimplify(derived.subs(point))
    assert sympy.Rational(example.claimed.numerator, example.claimed.denominator) == \
        sympy.nsimplify(claimed.subs(point))


def test_at_least_twenty_wrong_claims():
    assert len(WRONG) >= 20


def test_wrong_dimension_is_reported_first():
    # An impedance claimed as a ratio of resistances: the caller found the dimension problem.
    verdict = decide("Z(out)", BRIDGE, R1 / R2, DIMS, "wrong dimension: the claim is "
                     "dimensionless, but Z(out) is in Ω")
    assert not verdict.holds
    assert verdict.diagnosis[0].startswith("wrong dimension")


def test_ratio_and_difference_are_simplified():
    verdict = check(BRIDGE, par(R1, R2))
    assert sympy.parse_expr(verdict.difference) == -R3 * R4 / (R3 + R4)
    ratio = sympy.parse_expr(verdict.ratio)
    assert sympy.simplify(ratio - par(R1, R2) / BRIDGE) == 0


# ---------------------------------------------------------------- exact decision only


def test_a_term_equal_only_under_an_assumption_never_holds():
    # R1/2 equals R1∥R2 only when R1 = R2: with the parts equal, every numeric test at
    # R1 = R2 would pass; the exact decision must refuse it.
    verdict = check(par(R1, R2), R1 / 2)
    assert not verdict.holds
    assert verdict.diagnosis == ["holds only when R1 = R2"]


def test_a_difference_below_floating_point_resolution_never_holds():
    # A term 1e-30 times the result: double precision cannot see it, exact arithmetic can.
    tiny = sympy.Rational(1, 10**30)
    verdict = check(BRIDGE, BRIDGE * (1 + tiny))
    assert not verdict.holds
    assert float(verdict.counterexample.claimed) == float(verdict.counterexample.derived)
    assert verdict.counterexample.claimed != verdict.counterexample.derived
    assert "constant factor" in verdict.diagnosis[0]


def test_a_claim_true_only_for_real_s_is_refused():
    # |s|^2 = s^2 only on the real axis; s is complex, so the claim must not hold.
    verdict = check(s**2 * R, sympy.sqrt(s**2) ** 2 * R + sympy.sqrt(s**2) * 0)
    assert verdict.holds  # sqrt(s^2)^2 is s^2 on every branch: an identity
    verdict = check(s * R, sympy.sqrt(s**2) * R)
    assert not verdict.holds and verdict.decided
    # Equal for every positive s: the counterexample takes s off the positive axis.
    example = verdict.counterexample
    assert example.values == {"R": 2, "s": -1}
    assert (example.claimed, example.derived) == (2, -2)


def test_radicals_that_differ_are_refused_with_a_counterexample():
    verdict = check(MUTUAL, k * sympy.sqrt(L1 + L2))
    assert not verdict.holds and verdict.decided
    assert verdict.counterexample is not None


def test_radical_constant_factor():
    verdict = check(MUTUAL, 2 * k * sympy.sqrt(L1 * L2))
    assert "constant factor: the claim is 2 times" in verdict.diagnosis[0]


def test_undecidable_expressions_are_never_reported_as_holding():
    verdict = check(R1, R1 ** (A / A + R2 - R2 + sympy.Symbol("x") - sympy.Symbol("x")))
    assert verdict.holds  # sympy reduces the exponent to 1 before we see it
    verdict = check(R1, R1 ** sympy.Symbol("x"))
    assert not verdict.holds and not verdict.decided
    assert "cannot be decided exactly" in verdict.reason


def test_counterexample_uses_small_positive_integers():
    verdict = check(BRIDGE, par(R1, R2))
    assert verdict.counterexample.values == {"R1": 2, "R2": 3, "R3": 4, "R4": 5}
    assert verdict.counterexample.claimed == Fraction(6, 5)
    assert verdict.counterexample.derived == Fraction(6, 5) + Fraction(20, 9)


def test_large_expressions_are_decided_and_described(ladder):
    derived, claimed = ladder
    verdict = check(derived, claimed)
    assert not verdict.holds
    assert verdict.diagnosis and "C2*R2*R4*s" in verdict.diagnosis[0]
    assert "too long to show" in verdict.ratio or len(verdict.ratio) < 4000


@pytest.fixture(scope="module")
def ladder():
    """The input impedance of a 7-section RC ladder (hundreds of terms), and a claim with
    one term of the numerator counted twice."""
    n = 7
    rs = sympy.symbols(f"R1:{n + 1}")
    cs = sympy.symbols(f"C1:{n + 1}")
    z = rs[-1]
    for i in range(n - 2, -1, -1):
        z = rs[i] + 1 / (s * cs[i] + 1 / z)
    num, den = sympy.fraction(sympy.cancel(sympy.together(z)))
    num, den = sympy.expand(num), sympy.expand(den)
    assert len(num.args) > 200
    for i in range(n):
        DIMS.setdefault(f"C{i + 1}", UNITS["F"])
        DIMS.setdefault(f"R{i + 1}", UNITS["Ω"])
    return num / den, (num + s * cs[1] * rs[1] * rs[3]) / den
