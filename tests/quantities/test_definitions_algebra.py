"""Definitions substituted in the algebra: a sensitivity or a limit through a defined part
(`Rh = R0*(1 + beta*Th)`) builds the definition from the model's formulas, without sympy,
and gives the function the sympy expansion gives; definitions that are not plain still go
through sympy."""

from __future__ import annotations

import sympy

from symcirc.algebra.convert import names_of, to_function
from symcirc.algebra.polynomials import PolynomialRing
from symcirc.api import parse
from symcirc.pipeline import Pipeline
from symcirc.quantities.common import (
    _expanded_terms,
    expanded_definitions,
    plain_definitions,
)

# A heated sensor in a divider read by a trim input (invented example).
HEATED_DIVIDER = """
title "Heated sensor divider on a trim input"
param R0 = 10 kΩ
param beta = 2m
param Th = 40
param k = 3/2
param Rs = 470
param Rp = 1 kΩ
param Cz = 10 nF
param Rtrim = k*Rs
param Rtwice = Rs*(1 + beta) + Rs
voltage source Ub (top, gnd) = 5 V
resistor Rh (top, mid) = R0*(1 + beta*Th)   "sensor"
resistor Rk (mid, gnd) = Rtrim + Rp         "trim leg"
resistor Rq (mid, out) = Rtwice             "a name used twice"
resistor Rz (out, gnd) = Rp + 1/(s*Cz)      "a value in s"
port load (out, gnd)
"""


def test_plain_definitions_are_the_sympy_expansions():
    """Each plain definition, built from the formulas, is the canonical function of the
    sympy expansion, with the same names and the same bound on its terms."""
    circuit = Pipeline.parse(HEATED_DIVIDER).circuit
    plain = plain_definitions(circuit)
    expanded = expanded_definitions(circuit)
    assert list(plain) == list(expanded)
    assert {name for name, found in plain.items() if found is None} == {"Rq", "Rtwice"}
    ring = PolynomialRing(["Ub", "R0", "Rh", "Rk", "Rq", "Rz"])
    for name, found in plain.items():
        if found is None:
            continue
        assert found.names == names_of(expanded[name]), name
        assert found.terms == _expanded_terms(expanded[name]), name
        assert found.function(ring) == to_function(expanded[name], ring), name


def test_sensitivity_through_a_definition_is_the_chain_rule():
    """dV/dTh of the divider V = Ub·Rk/(Rh + Rk) with Rh = R0·(1 + β·Th) (the unloaded
    divider, common practice), checked against sympy's own derivative of the substituted
    formula; Rk, whose definition does not mention Th, stays a symbol."""
    circuit = parse(HEATED_DIVIDER.replace('resistor Rq (mid, out) = Rtwice             '
                                           '"a name used twice"\n', ""))
    (result,) = circuit.derive("sensitivity(V(mid), Th)", steps=False)
    ub, r0, beta, th, rk = sympy.symbols("Ub R0 beta Th Rk")
    rh = r0 * (1 + beta * th)
    expected = sympy.diff(ub * rk / (rh + rk), th)
    assert sympy.cancel(result.expression - expected) == 0
    assert "through the definition of Rh" in " ".join(result.notes)


def test_limits_through_definitions_match_the_hand_limits():
    """V(mid) of the divider Rh over Rk ∥ (Rq + Rz) (common practice): as the sensor's
    temperature grows without bound Rh → ∞ and V → 0; with β → 0, Rh = R0 and the
    definition that is not plain (Rq = Rs·(1 + β) + Rs, through sympy) gives Rq = 2·Rs."""
    circuit = parse(HEATED_DIVIDER)
    (hot,) = circuit.derive("V(mid) where Th -> oo", steps=False)
    assert hot.expression == 0
    (cold,) = circuit.derive("V(mid) where beta -> 0", steps=False)
    ub, r0, rs, rk, rz = sympy.symbols("Ub R0 Rs Rk Rz")
    load = 2 * rs + rz
    below = rk * load / (rk + load)
    assert sympy.cancel(cold.expression - ub * below / (r0 + below)) == 0


def test_a_definition_too_large_to_expand_is_refused_before_it_is_built(cli, circuit_file):
    """The bound on a plain definition's terms (here C(32, 7) = 3,365,856 for an
    8-term sum to the 25th power) answers before anything is multiplied out."""
    text = ("param a = 1\nparam b = 1\nparam c = 1\nparam d = 1\nparam e = 1\nparam f = 1\n"
            "param g = 1\nparam h = 1\nparam x = 1\n"
            "voltage source U (p, gnd) = 1 V\n"
            "resistor Rbig (p, q) = x*(a + b + c + d + e + f + g + h)^25\n"
            "resistor Rlow (q, gnd) = 1 kΩ\n")
    status, out, err = cli("derive", circuit_file(text), "sensitivity(V(q), x)")
    assert status == 2 and out == ""
    assert "substituting the definition of Rbig would expand the result to up to" in err
    assert "3,365,857" in err  # numerator and denominator (1)
