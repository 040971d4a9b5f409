"""Warnings a derived response needs: a right-half-plane pole, an ideal opamp in positive
feedback. Both are decided at the nominal values, exactly: the denominator's coefficients
in s are Fractions and the Routh–Hurwitz array counts the roots in the right half plane
(its sign changes), with no root finding (numpy's roots only where every form of the array
meets a zero first entry, and the warning then says so).

An ideal opamp hides positive feedback: V+ = V− has a finite solution whichever input the
feedback reaches. Each ideal opamp is therefore given, one at a time, the finite gain of a
general-purpose part, A(s) = 10⁵/(1 + s/(100 rad/s)) (common practice: 100 dB, a dominant
pole near 16 Hz), and the circuit's characteristic polynomial (the determinant of its
equations, independent sources zero) is checked for right-half-plane roots: with negative
feedback the loop settles, with positive feedback a real root lies at about ωa·(A0·β − 1).
"""

from __future__ import annotations

import dataclasses
from fractions import Fraction
from math import gcd, lcm

from ..algebra.polynomials import LAPLACE_NAME, AlgebraError, PolynomialRing
from ..engine import eliminate
from ..engine.memo import Memo
from ..engine.mna import Equations
from ..engine.network import build_network
from ..model import formula
from ..model.circuit import Circuit
from ..model.formula import Formula
from ..results import Result

POLE = formula.constant(1) + formula.laplace() / formula.constant(100)
"""1 + s/(100 rad/s): the one pole given to every opamp in the check."""
OPAMP_GAIN = formula.constant(100_000) / POLE
"""The finite-gain model of an ideal opamp for the positive-feedback check."""
MAX_EQUATIONS = 400
"""Largest system the opamp check takes (its determinant is of polynomials in s alone)."""
MAX_NAMED = 8
"""Up to this many opamps, each is checked on its own, so that a warning names it."""
MAX_TERMS = 200_000
"""Largest denominator (terms) the right-half-plane check evaluates."""


def right_half_plane_roots(coefficients: list[Fraction]) -> int:
    """Roots with positive real part of the polynomial Σ c_k s^k (`coefficients` lowest
    power first): the Routh–Hurwitz array in exact arithmetic (see `rhp_count`)."""
    return rhp_count(coefficients)[0]


def rhp_count(coefficients: list[Fraction]) -> tuple[int, str]:
    """(right-half-plane roots, how they were counted). The Routh–Hurwitz array, exact; a
    row of zeros is replaced by the derivative of its auxiliary polynomial; a zero first
    entry in a non-zero row is avoided by multiplying by (s + k), which adds a root in the
    left half plane only. Should every try meet a zero, numpy's roots decide (said so)."""
    c = list(coefficients)
    while c and c[-1] == 0:
        c.pop()
    while c and c[0] == 0:  # roots at the origin: not in the right half plane
        c.pop(0)
    if len(c) <= 1:
        return 0, ROUTH
    for k in (0, 1, 2, 3, 5, 7, 11):
        tried = c if k == 0 else [k * a + b for a, b in
                                  zip([*c, Fraction(0)], [Fraction(0), *c], strict=True)]
        count = _routh(list(reversed(tried)))
        if count is not None:
            return count, ROUTH
    import numpy as np

    roots = np.roots([float(x) for x in reversed(c)])
    scale = max(1.0, float(np.max(np.abs(roots))))
    return int(np.sum(roots.real > 1e-9 * scale)), "numpy's polynomial roots"


ROUTH = "Routh–Hurwitz on its exact coefficients in s"


def _routh(highest_first: list[Fraction]) -> int | None:
    """Sign changes in the first column of the Routh array of the polynomial; a row of
    zeros is replaced by the derivative of the auxiliary polynomial above it. Kept in
    integers: each new row is multiplied by |pivot| and divided by its content, positive
    factors that leave every sign alone (fraction-free, so it stays fast at degree 60)."""
    scale = lcm(*(c.denominator for c in highest_first))
    whole = [int(c * scale) for c in highest_first]
    degree = len(whole) - 1
    width = (len(whole) + 1) // 2
    rows = [whole[0::2], whole[1::2]]
    rows = [r + [0] * (width - len(r)) for r in rows]
    for k in range(2, degree + 1):
        above, top = rows[-1], rows[-2]
        if not any(above):
            order = degree - (k - 2)  # degree of the auxiliary polynomial in row k - 2
            above = rows[-1] = _primitive([a * (order - 2 * i) for i, a in enumerate(top)])
        if above[0] == 0:
            return None
        sign = 1 if above[0] > 0 else -1
        new = [sign * (above[0] * top[i + 1] - top[0] * above[i + 1]) for i in range(width - 1)]
        rows.append(_primitive(new + [0]))
    first = [r[0] for r in rows[:degree + 1]]
    if any(x == 0 for x in first):
        return None
    return sum(1 for a, b in zip(first, first[1:], strict=False) if (a > 0) != (b > 0))


def _primitive(row: list[int]) -> list[int]:
    """The row divided by the gcd of its entries (a positive number)."""
    g = gcd(*row)
    return [x // g for x in row] if g > 1 else row


def _coefficients_in_s(ring, poly, nominals: dict[str, Fraction]) -> list[Fraction] | None:
    """The polynomial's coefficients of s^0, s^1, ... at the nominal values (None when a
    symbol has no value)."""
    if ring.nterms(poly) > MAX_TERMS:
        return None
    by_power = ring.coefficients(poly, LAPLACE_NAME)
    names = {n for p in by_power.values() for n in ring.variables(p)}
    if not names <= set(nominals):
        return None
    values = {n: nominals[n] for n in names}
    top = max(by_power, default=0)
    return [ring.evaluate(by_power[k], values) if k in by_power else Fraction(0)
            for k in range(top + 1)]


def response_notes(result: Result, nominals: dict[str, Fraction]) -> list[str]:
    """A warning when the result is a function of s with a right-half-plane pole at the
    nominal values."""
    value = result.exact
    ring = getattr(value, "ring", None)
    if ring is None or LAPLACE_NAME not in value.symbol_names():
        return []
    if ring.degree(value.denominator, LAPLACE_NAME) < 1:
        return []
    coefficients = _coefficients_in_s(ring, value.denominator, nominals)
    if coefficients is None:
        return []
    count, method = rhp_count(coefficients)
    if not count:
        return []
    return [f"Warning: unstable. At the nominal values the denominator of {result.quantity} "
            f"has {_roots(count)} in the right half plane ({method}): the circuit oscillates "
            "or latches, and this response describes no steady state it reaches."]


def _roots(count: int) -> str:
    return "one root" if count == 1 else f"{count} roots"


def opamp_notes(circuit: Circuit, memo: Memo | None = None) -> tuple[str, ...]:
    """Warnings for ideal opamps in positive feedback (kept in the pipeline's memo)."""
    store = (memo or Memo()).of(circuit)
    cached = store.get("opamp loop notes")
    if cached is None:
        cached = store["opamp loop notes"] = _opamp_notes(circuit)
    return cached


def _model_gain(element) -> Formula | None:
    """The gain the check gives an opamp: OPAMP_GAIN for an ideal one, a flat gain A given
    the same pole (A/(1 + s/100 rad/s)); None when the gain already has dynamics (its
    results carry the right-half-plane check themselves)."""
    if element.is_ideal_opamp:
        return OPAMP_GAIN
    if element.definition is None:
        return formula.constant(element.nominal) / POLE
    if not element.definition_formula.has_laplace():
        return element.definition_formula / POLE
    return None


def _opamp_notes(circuit: Circuit) -> tuple[str, ...]:
    opamps = [e for e in circuit.elements.values() if e.kind == "opamp"]
    modelled = [(e, g) for e in opamps if (g := _model_gain(e)) is not None]
    if not modelled:
        return ()
    nominals = circuit.name_nominals()
    if len(modelled) > 1:  # every opamp at once first: the usual answer, in one determinant
        count, method = _with_finite_gain(circuit, dict(modelled), nominals)
        if not count:
            return ()
        if len(modelled) > MAX_NAMED:
            names = ", ".join(e.name for e, _ in modelled)
            return (f"Warning: positive feedback. With each opamp given a finite gain (10⁵, "
                    "one pole at 100 rad/s: a general-purpose part, common practice) the "
                    f"circuit has {_roots(count)} in the right half plane at the nominal "
                    f"values ({method}): an opamp among {names} runs to a supply rail (the "
                    "circuit latches) instead of settling on this result.",)
    notes = []
    for opamp, gain in modelled:
        count, method = _with_finite_gain(circuit, {opamp: gain}, nominals)
        if not count:
            continue
        if opamp.is_ideal_opamp:
            model = ("The ideal-opamp result assumes its inputs are held equal, but with a "
                     "finite gain (10⁵, one pole at 100 rad/s: a general-purpose part, common "
                     "practice)")
        else:
            model = ("Its flat gain hides the dynamics: with that gain rolling off from one "
                     "pole at 100 rad/s (common practice for a general-purpose part)")
        notes.append(
            f"Warning: opamp {opamp.name} is in positive feedback. {model} the circuit has "
            f"{_roots(count)} in the right half plane at the nominal values ({method}): the "
            "output runs to a supply rail (the circuit latches) instead. Check which input "
            f"of {opamp.name} the feedback reaches.")
    return tuple(notes)


def _with_finite_gain(circuit: Circuit, gains: dict, nominals: dict[str, Fraction]
                      ) -> tuple[int, str]:
    """Right-half-plane roots of the characteristic polynomial with each opamp of `gains`
    given its gain, and how they were counted ((0, '') when undecided: too large,
    singular, or a symbol without a value). The equations are taken at the nominal values
    first, so the determinant is one of polynomials in s alone."""
    elements = dict(circuit.elements)
    for opamp, gain in gains.items():
        elements[opamp.name] = dataclasses.replace(
            opamp, definition_formula=gain, nominal=None)
    model = dataclasses.replace(circuit, elements=elements, derives=(), claims=())
    try:
        network = build_network(model)
        equations = Equations(network)
        if not equations.rows or len(equations.rows) > MAX_EQUATIONS:
            return 0, ""
        in_s = PolynomialRing([LAPLACE_NAME])
        rows = [_row_at_nominal(network.ring, row, in_s, nominals) for row in equations.rows]
        if any(row is None for row in rows):
            return 0, ""
        determinant = eliminate.determinant(rows, in_s)
    except AlgebraError:
        return 0, ""
    if in_s.is_zero(determinant):
        return 0, ""
    by_power = in_s.coefficients(determinant, LAPLACE_NAME)
    top = max(by_power, default=0)
    return rhp_count([Fraction(in_s.constant_value(by_power[k])) if k in by_power
                      else Fraction(0) for k in range(top + 1)])


def _row_at_nominal(ring: PolynomialRing, row: dict, in_s: PolynomialRing,
                    nominals: dict[str, Fraction]) -> dict | None:
    """One equation with every symbol but s at its nominal value, scaled by a positive
    integer to integer coefficients (which leaves the determinant's roots alone); None when
    a symbol has no value."""
    values = [nominals.get(n) for n in ring.names]
    power_of_s = ring.names.index(LAPLACE_NAME) if LAPLACE_NAME in ring.names else None
    entries: dict[int, dict[int, Fraction]] = {}
    for column, poly in row.items():
        powers: dict[int, Fraction] = {}
        for monomial, coefficient in ring.terms(poly):
            term = Fraction(int(coefficient))
            for i, e in enumerate(monomial):
                if e and i != power_of_s:
                    if values[i] is None:
                        return None
                    term *= values[i] ** int(e)
            k = int(monomial[power_of_s]) if power_of_s is not None else 0
            powers[k] = powers.get(k, Fraction(0)) + term
        entries[column] = powers
    scale = lcm(*(v.denominator for e in entries.values() for v in e.values()), 1)
    out = {}
    for column, powers in entries.items():
        poly = in_s.from_terms(((k,), int(v * scale)) for k, v in powers.items())
        if not in_s.is_zero(poly):
            out[column] = poly
    return out


def add_warnings(circuit: Circuit, results: list[Result],
                 memo: Memo | None = None) -> list[Result]:
    """The results with the stability warnings in their notes (derive, notes and JSON show
    them)."""
    loop = opamp_notes(circuit, memo)
    nominals = None
    out = []
    for result in results:
        extra = list(loop)
        if result.exact is not None:
            if nominals is None:
                nominals = circuit.name_nominals()
            extra += response_notes(result, nominals)
        out.append(result.with_new_notes(*extra))
    return out
