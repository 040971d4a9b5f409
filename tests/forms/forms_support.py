"""Shared by the forms tests: results to annotate, and an independent replay of derivation
steps with numbers (the circuits are in tests/circuits.py)."""

from __future__ import annotations

import random
from fractions import Fraction

import sympy

import symcirc
from symcirc.forms import annotate
from symcirc.language.parser import parse_quantity
from symcirc.model.circuit import Assumption
from symcirc.quantities.registry import DeriveOptions
from symcirc.results import Result

S = sympy.Symbol("s")


def symbols(names: str) -> tuple[sympy.Symbol, ...]:
    return sympy.symbols(names)


def annotated(
    source: str,
    quantity: str,
    values: dict[str, sympy.Expr],
    assumptions: tuple[Assumption, ...] = (),
    units: dict[str, str] | None = None,
):
    """Parse `source`, build one Result per attribute in `values` (canonical expressions
    computed by the test itself), annotate them and return (circuit, results)."""
    circuit = symcirc.parse(source)
    q = parse_quantity(quantity)
    results = []
    for attribute, expression in values.items():
        name = quantity + (f".{attribute}" if attribute else "")
        results.append(
            Result(
                name,
                sympy.cancel(expression),
                (units or {}).get(attribute, ""),
                {s.name: v for s, v in circuit.symbol_nominals().items()},
                part=attribute or None,
            )
        )
    return circuit, annotate(circuit, q, results, DeriveOptions(assumptions=assumptions))


def solve_nodal(equations: list[sympy.Expr], unknowns: list[sympy.Symbol]) -> dict:
    """sympy.solve on hand-written current laws: the independent reference."""
    return sympy.solve(equations, unknowns, dict=True)[0]


# ---------------------------------------------------------------- replay


def _num(expr, env):
    return sympy.sympify(expr).xreplace(env)


def _cramer(matrix, right, index, env):
    a = sympy.Matrix(matrix).xreplace(env)
    b = sympy.Matrix(right).xreplace(env)
    replaced = a.copy()
    replaced[:, index] = b
    return sympy.cancel(replaced.det() / a.det())


def replay(steps, env: dict) -> tuple[dict, sympy.Symbol | None]:
    """Evaluate each step from its data with this file's own reading of the operation
    (Kennelly's formulas, the divider rule, Cramer's rule ...), not from its equation.
    Returns the environment and the symbol the derivation ends with."""
    env = dict(env)
    final = None
    for step in steps:
        d = step.data
        op = d["op"]
        defined = [sympy.Symbol(n) for n in d["defines"]]
        if op == "parallel":
            value = 1 / sum(1 / _num(x, env) for x in d["operands"])
        elif op in ("series", "superposition"):
            value = sum(_num(x, env) for x in d["operands"])
        elif op == "star-delta":
            zu, zv, zw = (_num(d["star"][k], env) for k in "uvw")
            total = zu * zv + zv * zw + zw * zu
            for key, opposite in (("uv", zw), ("vw", zu), ("wu", zv)):
                env[d["delta"][key]] = total / opposite
            continue
        elif op == "delta-star":
            zuv, zvw, zwu = (_num(d["delta"][k], env) for k in ("uv", "vw", "wu"))
            total = zuv + zvw + zwu
            for key, (one, two) in (("u", (zuv, zwu)), ("v", (zuv, zvw)), ("w", (zvw, zwu))):
                env[d["star"][key]] = one * two / total
            continue
        elif op == "divider":
            top, bottom = _num(d["top"], env), _num(d["bottom"], env)
            value = _num(d["source"], env) * bottom / (top + bottom)
        elif op == "bridge":  # the output is the difference of the taps' divider ratios
            ratios = []
            for tap in d["output"]:
                upper, lower = (_num(z, env) for z in d["taps"][tap])
                ratios.append(lower / (upper + lower))
            value = _num(d["source"], env) * (ratios[0] - ratios[1])
        elif op == "current-divider":
            own, other = _num(d["own"], env), _num(d["other"], env)
            value = _num(d["source"], env) * other / (own + other)
        elif op == "ohm":
            if "current" in d:
                value = _num(d["current"], env) * _num(d["impedance"], env)
            else:
                value = _num(d["voltage"], env) / _num(d["impedance"], env)
        elif op == "loop":
            value = sum(sign * _num(v, env) for sign, v in d["terms"])
        elif op == "reciprocal":
            value = 1 / _num(d["operand"], env)
        elif op == "ratio":
            value = _num(d["numerator"], env) / _num(d["denominator"], env)
        elif op == "solve":
            value = _cramer(d["matrix"], d["right"], d["index"], env)
        elif op == "limit":
            operand = sympy.cancel(_num(d["operand"], env))
            value = sympy.limit(operand, d["variable"], sympy.oo if d["infinite"] else 0)
        elif op == "approximate":
            eps = sympy.Dummy("eps")
            exact = _num(d["exact"], {k: v for k, v in env.items() if k not in (d["big"],)})
            exact = exact.xreplace({d["big"]: _num(d["small"], env) / eps})
            value = sympy.series(exact, eps, 0, d["order"] + 1).removeO()
            value = (
                value.xreplace({eps: _num(d["small"], env) / _num(d["big"], env)})
                if d["big"] in env
                else value
            )
        elif op in (
            "deactivate",
            "test-source",
            "short",
            "nodal",
            "open",
            "standard-form",
            "error",
            "substitute",
        ):
            continue
        else:
            raise AssertionError(f"unknown step kind {op}")
        env[defined[0]] = sympy.cancel(value)
        final = defined[0]
    return env, final


def numbers(expr: sympy.Expr, seed: int, keep: tuple[sympy.Symbol, ...] = ()) -> dict:
    """Random positive rationals for every symbol of `expr` but `keep`."""
    rng = random.Random(seed)
    return {
        x: sympy.Rational(rng.randint(1, 97), rng.randint(1, 13))
        for x in sorted(expr.free_symbols, key=str)
        if x not in keep
    }


def nominal_fraction(value: float) -> Fraction:
    return Fraction(value).limit_denominator(10**9)


# ---------------------------------------------------------------- an independent solve


def reference_solution(
    circuit, active: set[str] | None = None, test_current: tuple[str, str] | None = None
) -> tuple[dict, sympy.Symbol]:
    """Node voltages by sympy.solve on current laws written from the element list here,
    independently of symcirc's own equations. Sources not in `active` are set to zero; a
    test current I_test may be driven into `test_current[0]` out of `test_current[1]`."""
    v = {n: (0 if n == "gnd" else sympy.Symbol(f"v_{n}")) for n in circuit.nodes}
    currents: dict[str, sympy.Symbol] = {}
    leaving = {n: sympy.Integer(0) for n in circuit.nodes}
    constraints = []
    test = sympy.Symbol("I_test")
    for e in circuit.elements.values():
        on = active is None or e.name in active
        if e.kind in ("resistor", "capacitor", "inductor"):
            z = {"resistor": e.symbol, "capacitor": 1 / (S * e.symbol), "inductor": S * e.symbol}[
                e.kind
            ]
            i = (v[e.nodes[0]] - v[e.nodes[1]]) / z
            leaving[e.nodes[0]] += i
            leaving[e.nodes[1]] -= i
        elif e.kind == "current source":
            value = e.symbol if on else 0
            leaving[e.nodes[0]] -= value
            leaving[e.nodes[1]] += value
        elif e.kind in ("voltage source", "opamp"):
            j = currents.setdefault(e.name, sympy.Symbol(f"j_{e.name}"))
            if e.kind == "voltage source":
                a, b = e.nodes
                if e.controls:
                    c = e.controls[0]
                    value = c.coefficient * (
                        v[c.nodes[0]] - v[c.nodes[1] if len(c.nodes) > 1 else "gnd"]
                    )
                else:
                    value = e.symbol if on else 0
                constraints.append(v[a] - v[b] - value)
            else:
                p, n, a = e.nodes
                b = "gnd"
                constraints.append(
                    v[p] - v[n] if e.definition is None else v[a] - e.definition * (v[p] - v[n])
                )
            leaving[a] += j
            leaving[b] -= j
        elif e.kind == "transformer":  # ideal: V1 = N·V2, N·I1 + I2 = 0 (currents into p1, p2)
            p1, n1, p2, n2 = e.nodes
            j = currents.setdefault(e.name, sympy.Symbol(f"j_{e.name}"))
            constraints.append(v[p1] - v[n1] - e.symbol * (v[p2] - v[n2]))
            leaving[p1] += j
            leaving[n1] -= j
            leaving[p2] -= e.symbol * j
            leaving[n2] += e.symbol * j
    if test_current is not None:
        leaving[test_current[0]] -= test
        leaving[test_current[1]] += test
    equations = [leaving[n] for n in circuit.nodes if n != "gnd"] + constraints
    unknowns = [x for x in v.values() if x != 0] + list(currents.values())
    solution = solve_nodal(equations, unknowns)
    return {n: (0 if x == 0 else sympy.cancel(solution[x])) for n, x in v.items()}, test


def reference_voltage(circuit, pos: str, neg: str, active: set[str] | None = None) -> sympy.Expr:
    volts, _ = reference_solution(circuit, active)
    return sympy.cancel(volts[pos] - volts[neg])


def reference_impedance(circuit, pos: str, neg: str) -> sympy.Expr:
    volts, test = reference_solution(circuit, set(), (pos, neg))
    return sympy.cancel((volts[pos] - volts[neg]) / test)
