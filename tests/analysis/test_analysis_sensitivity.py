"""Sensitivity tables: bridge near balance against the published bridge formula, a divider
against hand-checked closed forms, definitions through the chain rule."""

from fractions import Fraction

import sympy

from symcirc.analysis.sensitivity import sensitivities

R1, R2, R3, R4, Ub = sympy.symbols("R1 R2 R3 R4 Ub")
# Four-arm bridge, arms numbered as in K. Hoffmann, "An Introduction to Measurements using
# Strain Gages" (HBM, 1989), ch. 7: U_A/U_E = R1/(R1 + R2) - R4/(R3 + R4) (from memory).
BRIDGE = Ub * (R1 / (R1 + R2) - R4 / (R3 + R4))
# Hoffmann's bridge equation for small changes of equal arms (from memory):
# ΔU_A/U_E = 1/4·(ΔR1/R1 - ΔR2/R2 + ΔR3/R3 - ΔR4/R4).
HOFFMANN = {R1: Fraction(1, 4), R2: Fraction(-1, 4), R3: Fraction(1, 4), R4: Fraction(-1, 4)}


def _bridge_nominals(r1=Fraction(350)) -> dict:
    return {R1: r1, R2: Fraction(350), R3: Fraction(350), R4: Fraction(350), Ub: Fraction(5)}


def test_balanced_bridge_referred_to_excitation_matches_published_bridge_equation():
    table = sensitivities(BRIDGE, _bridge_nominals(), reference=Ub)
    assert table.nominal == 0
    by_symbol = {row.symbol: row for row in table.rows}
    for arm, published in HOFFMANN.items():
        assert by_symbol[arm].relative_value == published
    # the excitation itself moves a balanced bridge's output not at all
    assert by_symbol[Ub].relative_value == 0
    assert [row.symbol for row in table.rows][-1] == Ub  # sorted by magnitude


def test_bridge_near_balance_stays_within_the_small_change_approximation():
    """0.1 % off balance, the exact sensitivities differ from 1/4 by about 0.05 %."""
    table = sensitivities(BRIDGE, _bridge_nominals(Fraction(35035, 100)), reference=Ub)
    assert table.nominal != 0
    for row in table.rows:
        if row.symbol in HOFFMANN:
            published = HOFFMANN[row.symbol]
            assert abs(row.relative_value / published - 1) < Fraction(1, 1000)


def test_divider_closed_forms_checked_by_hand():
    divider = Ub * R2 / (R1 + R2)
    table = sensitivities(divider, {R1: Fraction(3000), R2: Fraction(1000), Ub: Fraction(2)})
    rows = {row.symbol: row for row in table.rows}
    # by hand: ∂/∂R1 = -Ub·R2/(R1 + R2)², relative -R1/(R1 + R2)
    assert sympy.simplify(rows[R1].derivative + Ub * R2 / (R1 + R2) ** 2) == 0
    assert sympy.simplify(rows[R1].relative + R1 / (R1 + R2)) == 0
    # ∂/∂R2 = Ub·R1/(R1 + R2)², relative R1/(R1 + R2)
    assert sympy.simplify(rows[R2].derivative - Ub * R1 / (R1 + R2) ** 2) == 0
    assert sympy.simplify(rows[R2].relative - R1 / (R1 + R2)) == 0
    # ∂/∂Ub = R2/(R1 + R2), relative exactly 1
    assert rows[Ub].relative == 1
    # at 3 kΩ / 1 kΩ: ±3/4, the derivative -2·1000/4000² = -1/8000 V/Ω
    assert rows[R1].relative_value == Fraction(-3, 4)
    assert rows[R1].derivative_value == Fraction(-1, 8000)
    assert [row.symbol for row in table.rows] == [Ub, R1, R2]


def test_definitions_through_the_chain_rule():
    R0, alpha, T, Rt = sympy.symbols("R0 alpha T Rt")
    definition = R0 * (1 + alpha * T)
    q = Ub * R2 / (Rt + R2)
    nominals = {R0: Fraction(100), alpha: Fraction(385, 100000), T: Fraction(25),
                R2: Fraction(100), Ub: Fraction(5)}
    nominals[Rt] = nominals[R0] * (1 + nominals[alpha] * nominals[T])
    table = sensitivities(q, nominals, {Rt: definition})
    rows = {row.symbol: row for row in table.rows}
    expanded = q.subs(Rt, definition)
    for p in (R0, alpha, T):
        assert rows[p].via == (Rt,)
        direct = sympy.diff(expanded, p)
        assert sympy.simplify(rows[p].derivative.subs(Rt, definition) - direct) == 0
    # relative sensitivity to R0 equals that to Rt (Rt is proportional to R0)
    assert rows[R0].relative_value == rows[Rt].relative_value


def test_symbols_without_value_get_no_row():
    table = sensitivities(Ub * R2 / (R1 + R2), {R1: Fraction(1), Ub: Fraction(1)})
    assert {row.symbol for row in table.rows} == {R1, Ub}


def test_large_results_keep_their_structure_with_the_same_values(monkeypatch):
    """Above the simplification size, closed forms are N'/N − D'/D forms: same values, and
    algebraically equal to the simplified ones (checked by sympy)."""
    from symcirc.analysis import sensitivity as module

    nominals = _bridge_nominals(Fraction(35035, 100))
    small = sensitivities(BRIDGE, nominals)
    monkeypatch.setattr(module, "SIMPLIFY_TERMS", 0)
    large = sensitivities(BRIDGE, nominals)
    for a, b in zip(small.rows, large.rows, strict=True):
        assert (a.symbol, a.derivative_value, a.relative_value) == \
            (b.symbol, b.derivative_value, b.relative_value)
        assert sympy.simplify(a.relative - b.relative.to_sympy()) == 0
        assert sympy.simplify(a.derivative - b.derivative.to_sympy()) == 0
        # the text is the same expression, written from the polynomials without sympy
        assert sympy.simplify(sympy.sympify(b.relative.to_text()) - a.relative) == 0
        assert sympy.simplify(sympy.sympify(b.derivative.to_text()) - a.derivative) == 0


def test_large_forms_against_sympy_diff_on_an_engine_result(monkeypatch):
    """The unexpanded quotient rule from the engine's polynomials against sympy.diff of the
    same result (an independent library computation), values and closed forms, with and
    without a reference."""
    import symcirc
    from symcirc.analysis import sensitivity as module

    circuit = symcirc.parse(
        "voltage source U (n0, gnd) = 2 V\n"
        "resistor Rs1 (n0, n1) = 1k\nresistor Rp1 (n1, gnd) = 3k\n"
        "resistor Rs2 (n1, n2) = 2k\nresistor Rp2 (n2, gnd) = 5k\n"
        "capacitor C (n2, gnd)\nport out (n2, gnd)\n")
    (result,) = circuit.derive("V(out) where C -> 0")
    monkeypatch.setattr(module, "SIMPLIFY_TERMS", 0)
    nominals = {sympy.Symbol(k): v for k, v in result.nominals.items()}
    q = result.expression
    for reference in (None, sympy.Symbol("U"), sympy.Integer(1)):
        table = sensitivities(result.exact, nominals, reference=reference)
        assert {row.symbol.name for row in table.rows} == {"U", "Rs1", "Rp1", "Rs2", "Rp2"}
        for row in table.rows:
            expected = sympy.diff(q, row.symbol)
            assert sympy.cancel(row.derivative.to_sympy() - expected) == 0
            assert sympy.cancel(sympy.sympify(row.derivative.to_text()) - expected) == 0
            scale = q if reference is None else reference
            relative = row.symbol * expected / scale
            assert sympy.cancel(sympy.sympify(row.relative.to_text()) - relative) == 0
            at = {x: sympy.Rational(v.numerator, v.denominator) for x, v in nominals.items()}
            assert row.derivative_value == expected.subs(at)
            assert row.derivative.evaluate(result.nominals) == row.derivative_value
            latex = row.relative.to_latex()
            assert "**" not in latex
            assert (latex == "1") if (row.symbol.name, reference) == ("U", None) \
                else "\\frac{" in latex


def test_tidy_cancels_and_factors_like_sympy():
    """The fast tidy (engine polynomial rings) against sympy's factor(cancel(..)), computed
    independently: equal rational functions, in lowest terms."""
    from symcirc.analysis.tidy import tidy

    s, C = sympy.symbols("s C")
    cases = [
        sympy.diff(BRIDGE, R1) * R1 / Ub,
        (R1**2 - R2**2) / (R1 + R2) / 3,
        sympy.Rational(2, 7) * (R1 * s * C + 1) ** 2 / (R1**2 * s * C + R1),
        -Ub * R2 / (R1 + R2) ** 2 + Ub / (R1 + R2),
    ]
    for case in cases:
        mine, reference = tidy(case), sympy.factor(sympy.cancel(case))
        assert sympy.cancel(mine - reference) == 0, case
        numerator, denominator = sympy.fraction(sympy.together(mine))
        assert sympy.gcd(sympy.expand(numerator), sympy.expand(denominator)).is_number
    assert tidy(sympy.sqrt(R1) * R1 / R1**2) == sympy.factor(sympy.cancel(sympy.sqrt(R1) / R1))
    assert tidy(R1 - R1) == 0


def test_large_forms_through_definitions_against_sympy_diff(monkeypatch):
    """A large result whose symbols are defined by others: the row of R0 differentiates Q
    with Rt = R0*(1 + alpha*T) substituted in its polynomials; sympy.diff of the expanded
    expression checks it (an independent library computation)."""
    from symcirc.analysis import sensitivity as module

    R0, alpha, T, Rt = sympy.symbols("R0 alpha T Rt")
    definition = R0 * (1 + alpha * T)
    q = Ub * R2 / (Rt + R2) - Ub * R4 / (R3 + R4)
    nominals = {R0: Fraction(100), alpha: Fraction(385, 100000), T: Fraction(25),
                R2: Fraction(100), R3: Fraction(100), R4: Fraction(100), Ub: Fraction(5)}
    nominals[Rt] = nominals[R0] * (1 + nominals[alpha] * nominals[T])
    small = {row.symbol: row for row in sensitivities(q, nominals, {Rt: definition}).rows}
    monkeypatch.setattr(module, "SIMPLIFY_TERMS", 0)
    table = sensitivities(q, nominals, {Rt: definition})
    expanded = q.subs(Rt, definition)
    for row in table.rows:
        assert (row.derivative_value, row.relative_value) == \
            (small[row.symbol].derivative_value, small[row.symbol].relative_value)
        if row.symbol in (R0, alpha, T):
            assert row.via == (Rt,)
            expected = sympy.diff(expanded, row.symbol)
            assert sympy.cancel(sympy.sympify(row.derivative.to_text()) - expected) == 0
            relative = row.symbol * expected / expanded
            assert sympy.cancel(sympy.sympify(row.relative.to_text()) - relative) == 0


def test_text_output_of_a_large_table_builds_no_latex(cli, circuit_file, monkeypatch):
    """A five-section ladder's table (89-term results: the unexpanded forms): `derive`
    prints it without writing any LaTeX; JSON carries the LaTeX of every derivative."""
    import json

    from symcirc.algebra.unexpanded import Unexpanded

    lines = ["voltage source U (n0, gnd) = 1 V"]
    for i in range(1, 6):
        lines += [f"resistor Rs{i} (n{i - 1}, n{i}) = 1k", f"resistor Rp{i} (n{i}, gnd) = 2k"]
    path = circuit_file("\n".join([*lines, "port out (n5, gnd)"]) + "\n")
    built = []
    latex = Unexpanded.to_latex
    monkeypatch.setattr(Unexpanded, "to_latex", lambda self: built.append(1) or latex(self))
    status, out, _ = cli("derive", path, "sensitivities(V(out))")
    assert status == 0 and out.count("sensitivities(V(out)).") == 11 and not built
    status, out, _ = cli("derive", path, "sensitivities(V(out))", "--format", "json")
    rows = json.loads(out)["results"]
    assert status == 0 and built
    assert all(r["sensitivity"]["derivative_latex"].startswith(("\\frac{", "- \\frac{"))
               for r in rows if r["sensitivity"]["symbol"] != "U")
