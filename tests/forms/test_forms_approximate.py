"""Limits and `>>` approximations: the leading term, the neglected first-order term and
the relative error, against a published expression and an independent sympy.series."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
import sympy
from circuits import LOADED_DIVIDER
from forms_support import annotated, reference_voltage

import symcirc
from symcirc.cli import main
from symcirc.forms import approximate, steps_text
from symcirc.model.circuit import Assumption

A, Rf, Rg, U, R1, R2, RL = sympy.symbols("A Rf Rg U R1 R2 RL")

# Input stage of a data-logger channel: inverting amplifier, opamp of finite gain A
INVERTING = """
param A "open-loop gain"
voltage source Uin (in, gnd)
resistor Rg (in, n)
resistor Rf (n, o)
opamp U1 (gnd, n, o) = A
port out (o, gnd)
"""


def read(detail: dict) -> sympy.Expr:
    names = {"A": A, "Rf": Rf, "Rg": Rg, "U": U, "R1": R1, "R2": R2, "RL": RL}
    return sympy.parse_expr(detail["expression"], local_dict=names)


def test_inverting_amplifier_with_finite_gain():
    circuit = symcirc.parse(INVERTING)
    finite = sympy.cancel(reference_voltage(circuit, "o", "gnd") / sympy.Symbol("Uin"))
    limit = sympy.limit(finite, A, sympy.oo)
    assert limit == -Rf / Rg
    _, (h,) = annotated(
        INVERTING, "gain(Uin, out)", {None: limit}, (Assumption("limit", "A", "oo"),)
    )
    kinds = [s.kind for s in h.steps]
    assert kinds == ["nodal", "solve", "ratio", "limit", "error"]
    assert h.form.expression == -Rf / Rg
    # Sedra & Smith, "Microelectronic Circuits", inverting configuration with finite
    # open-loop gain, from memory: G = −(R2/R1)/(1 + (1 + R2/R1)/A)
    # ≈ −(R2/R1)·(1 − (1 + R2/R1)/A); here R2 = Rf, R1 = Rg
    published = -(Rf / Rg) / (1 + (1 + Rf / Rg) / A)
    assert sympy.cancel(published - finite) == 0
    first_order = (Rf / Rg) * (1 + Rf / Rg) / A
    assert sympy.cancel(read(h.details["neglected"]) - first_order) == 0
    # the relative gain error, (1 + Rf/Rg)/A to first order, is exact here
    assert sympy.cancel(read(h.details["relative_error"]) - (1 + Rf / Rg) / A) == 0
    # the finite-gain form is shown as written in the text
    assert "−(Rf/Rg)·1/(1 + (1 + Rf/Rg)/A)" in h.steps[3].data["text"]


# Divider feeding a logger input of resistance RL (invented scenario)
def test_loaded_divider_where_load_is_much_greater():
    circuit = symcirc.parse(LOADED_DIVIDER)
    exact = reference_voltage(circuit, "o", "gnd")
    _, (v,) = annotated(LOADED_DIVIDER, "V(out)", {None: exact})
    approximated = approximate(circuit, v, Assumption("much_greater", "RL", "R2"))
    # independent: sympy.series in ε = R2/RL
    eps = sympy.Symbol("eps", positive=True)
    series = sympy.series(exact.subs(RL, R2 / eps), eps, 0, 2).removeO()
    leading = series.subs(eps, 0)
    first = sympy.expand(series - leading).subs(eps, R2 / RL)
    assert sympy.cancel(approximated.expression - leading) == 0
    assert sympy.cancel(read(approximated.details["neglected"]) - first) == 0
    relative = read(approximated.details["relative_error"])
    assert sympy.cancel(relative - (leading - exact) / exact) == 0
    # the error is R1∥R2 over RL: the loading rule of thumb (common practice)
    assert sympy.cancel(relative - (R1 * R2 / (R1 + R2)) / RL) == 0
    kinds = [s.kind for s in approximated.steps]
    assert kinds == ["parallel", "divider", "approximate", "error"]
    assert approximated.form.expression == U * R2 / (R1 + R2)
    assert "neglected" in steps_text(approximated)


def test_much_less_is_the_same_assumption_read_the_other_way():
    circuit = symcirc.parse(LOADED_DIVIDER)
    exact = reference_voltage(circuit, "o", "gnd")
    _, (v,) = annotated(LOADED_DIVIDER, "V(out)", {None: exact})
    # `R1 << R2` is stored with the big one first
    approximated = approximate(circuit, v, Assumption("much_greater", "R2", "R1"))
    eps = sympy.Symbol("eps", positive=True)
    series = sympy.series(exact.subs(R2, R1 / eps), eps, 0, 2).removeO()
    assert sympy.cancel(approximated.expression - series.subs(eps, 0)) == 0


def test_an_approximation_too_large_to_read_is_not_made(monkeypatch):
    import importlib

    annotate_module = importlib.import_module("symcirc.forms.annotate")
    circuit = symcirc.parse(LOADED_DIVIDER)
    (v,) = circuit.derive("V(out)")
    # U·R2·RL/(R1·R2 + R1·RL + R2·RL): 1 + 3 terms
    assert sum(v.exact.size()) == 4
    monkeypatch.setattr(annotate_module, "MAX_APPROXIMATED_TERMS", 3)
    kept = approximate(circuit, v, Assumption("much_greater", "RL", "R2"))
    assert kept.expression == v.expression and "neglected" not in kept.details
    assert any("4 terms, more than the 3" in note for note in kept.notes)
    assert not any("terms, more than" in note for note in v.notes)  # the derived one is kept
    monkeypatch.setattr(annotate_module, "MAX_APPROXIMATED_TERMS", 4)
    (v,) = circuit.derive("V(out)")
    made = approximate(circuit, v, Assumption("much_greater", "RL", "R2"))
    # a divider unloaded: U·R2/(R1 + R2) (common practice)
    assert sympy.cancel(made.expression - U * R2 / (R1 + R2)) == 0


# ---------------------------------------------------------------- a limit on a full bridge

STRAIN_BRIDGE = Path(__file__).parent / "strain_bridge.circuit"


def _derive_json(capsys, *argv: str) -> dict:
    assert main(["derive", str(STRAIN_BRIDGE), *argv, "--format", "json"]) == 0
    (result,) = json.loads(capsys.readouterr().out)["results"]
    return result


@pytest.mark.parametrize("backend", ["flint", "sympy"])
def test_full_bridge_limit_with_steps(backend, monkeypatch, capsys):
    """The bridge of four gauges behind excitation leads, with the amplifier's input
    resistance Rid -> oo: with steps (the path that multiplied unreduced ratios for minutes)
    the result is the exact limit of the full result, on either polynomial backend."""
    monkeypatch.setenv("SYMCIRC_POLYNOMIALS", backend)
    full = sympy.parse_expr(_derive_json(capsys, "V(out)")["expression"])
    rid, t = sympy.symbols("Rid t")
    # the limit by substitution Rid = 1/t, t = 0, done by sympy alone
    expected = sympy.cancel(sympy.cancel(full.subs(rid, 1 / t)).subs(t, 0))
    circuit = symcirc.load(str(STRAIN_BRIDGE))
    independent = reference_voltage(circuit, "a", "b")  # sympy.solve on the current laws
    assert sympy.cancel(independent - full) == 0
    limited = _derive_json(capsys, "--steps")
    assert sympy.cancel(sympy.parse_expr(limited["expression"]) - expected) == 0
    kinds = [step["kind"] for step in limited["steps"]]
    assert "open" in kinds or "limit" in kinds
    # the first neglected term: Rid·(V − V∞) tends to a finite, nonzero value
    neglected = sympy.parse_expr(limited["neglected"]["expression"])
    difference = sympy.cancel(sympy.cancel((full - expected) * rid).subs(rid, 1 / t))
    assert sympy.cancel(neglected * rid - difference.subs(t, 0)) == 0
    # four active gauges: V = −Uex·k·eps·R0/(R0 + RLa + RLb), the lead resistances in
    # series with the bridge's R0 (common practice); 5 V·2.1·500e-6·350/353 = 5.2054 mV
    assert limited["nominal"] == pytest.approx(-5 * 2.1 * 500e-6 * 350 / 353, rel=1e-9)
    substituted = _derive_json(capsys, "--steps", "--substitute")
    R0, Uex, k, eps, RLa, RLb = sympy.symbols("R0 Uex k eps RLa RLb")
    assert sympy.cancel(sympy.parse_expr(substituted["expression"])
                        + R0 * Uex * k * eps / (R0 + RLa + RLb)) == 0
