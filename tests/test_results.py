"""A derived result cannot change: a stage that adds something makes a new one."""

from __future__ import annotations

import dataclasses
from fractions import Fraction

import pytest
import sympy

import symcirc
from symcirc.results import Result

DIVIDER = ('title "Bias divider"\n'
           'voltage source Ub (in, gnd) = 10 V\n'
           'resistor R1 (in, out) = 1 kΩ\n'
           'resistor R2 (out, gnd) = 2 kΩ\n')


def _divider() -> Result:
    r1, r2, u = sympy.symbols("R1 R2 U")
    return Result("V(out)", u * r2 / (r1 + r2), "V",
                  {"R1": Fraction(1000), "R2": Fraction(2000), "U": Fraction(10)},
                  ("A divider.",), details={"kind": "divider"})


def test_a_result_cannot_be_modified() -> None:
    result = _divider()
    with pytest.raises(dataclasses.FrozenInstanceError):
        result.unit = "A"  # type: ignore[misc]
    with pytest.raises(dataclasses.FrozenInstanceError):
        result.form = "anything"  # type: ignore[misc]
    with pytest.raises(AttributeError):
        result.notes.append("one more")  # type: ignore[attr-defined]
    with pytest.raises(TypeError):
        result.details["kind"] = "bridge"  # type: ignore[index]
    with pytest.raises(TypeError):
        result.nominals["R1"] = Fraction(1)  # type: ignore[index]
    assert result.unit == "V" and result.notes == ("A divider.",)
    assert dict(result.details) == {"kind": "divider"}


def test_what_a_caller_keeps_does_not_reach_the_result() -> None:
    notes, details = ["A divider."], {"kind": "divider"}
    result = Result("V(out)", sympy.Symbol("U"), "V", {}, notes, details=details)
    notes.append("later")
    details["kind"] = "bridge"
    assert result.notes == ("A divider.",) and result.details["kind"] == "divider"


def test_adding_makes_a_new_result_and_keeps_the_old() -> None:
    result = _divider()
    assert result.nominal == pytest.approx(10 * 2000 / 3000)
    more = result.with_notes("Loaded by nothing.").with_details(load=None)
    assert result.notes == ("A divider.",) and "load" not in result.details
    assert more.notes == ("A divider.", "Loaded by nothing.")
    assert dict(more.details) == {"kind": "divider", "load": None}
    assert more.with_new_notes("A divider.", "New.", "New.").notes[-1:] == ("New.",)
    assert more.nominal == result.nominal and more.expression == result.expression


def test_derived_results_are_immutable() -> None:
    (result,) = symcirc.parse(DIVIDER).derive("V(out)")
    with pytest.raises(dataclasses.FrozenInstanceError):
        result.quantity = "V(in)"  # type: ignore[misc]
    with pytest.raises(AttributeError):
        result.notes.append("one more")  # type: ignore[attr-defined]
    assert result.nominal == pytest.approx(20 / 3)
