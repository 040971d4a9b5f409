"""The model's formulas answer what reading asks exactly as sympy's expressions would.

The outside check is sympy itself (an independent computer algebra system): every formula
of a few hundred generated ones is built a second time directly with sympy's operators, and
the formula's answers (its sympy expression, whether it is a rational number and which,
whether it is zero as written and once expanded, its names, its value at a point) are
compared with sympy's."""

from __future__ import annotations

import random
from fractions import Fraction

import sympy

from symcirc.model import formula
from symcirc.model.formula import Formula, Inexact, integer_root

NAMES = ("R1", "R2", "C1", "gm")


def _generate(rng: random.Random, depth: int) -> tuple[Formula, sympy.Expr]:
    """A formula and the same value built with sympy's operators, side by side."""
    if depth == 0 or rng.random() < 0.25:
        pick = rng.random()
        if pick < 0.4:
            value = Fraction(rng.choice((0, 1, 2, 3, 4, -1, 9)), rng.choice((1, 1, 2, 4)))
            return formula.constant(value), sympy.Rational(value.numerator, value.denominator)
        if pick < 0.85:
            name = rng.choice(NAMES)
            return formula.name(name), sympy.Symbol(name)
        if pick < 0.95:
            return formula.laplace(), sympy.Symbol("s")
        return formula.pi(), sympy.pi
    op = rng.choice(("+", "-", "*", "/", "^", "neg", "sqrt", "scale"))
    left, left_sympy = _generate(rng, depth - 1)
    if op == "neg":
        return -left, -left_sympy
    if op == "sqrt":
        return left.sqrt(), sympy.sqrt(left_sympy)
    if op == "scale":
        sign = rng.choice((1, -1))
        return left.scaled(sign), sign * left_sympy
    if op == "^":
        exponent = Fraction(rng.choice((2, -1, 1, 0, 3)), rng.choice((1, 1, 2)))
        power = sympy.Rational(exponent.numerator, exponent.denominator)
        if exponent < 0 and left_sympy == 0:
            return left, left_sympy
        return left ** formula.constant(exponent), left_sympy**power
    right, right_sympy = _generate(rng, depth - 1)
    if op == "/" and right_sympy == 0:
        return left, left_sympy
    return {
        "+": (left + right, left_sympy + right_sympy),
        "-": (left - right, left_sympy - right_sympy),
        "*": (left * right, left_sympy * right_sympy),
        "/": (left / right, left_sympy / right_sympy),
    }[op]


def _pairs(count: int = 300) -> list[tuple[Formula, sympy.Expr]]:
    rng = random.Random(20261205)
    pairs = [_generate(rng, rng.randint(1, 4)) for _ in range(count)]
    # cancellation and folding that sympy does as it builds
    r1, r2 = formula.name("R1"), formula.name("R2")
    two = formula.constant(2)
    pairs += [
        (r1 - r1, sympy.S.Zero), (r1 / r1, sympy.S.One), (two * r1 / two, sympy.Symbol("R1")),
        (formula.constant(0) * r2, sympy.S.Zero), (r2 ** formula.constant(0), sympy.S.One),
        (formula.constant(8) ** formula.constant(Fraction(2, 3)), sympy.Integer(4)),
        (formula.constant(2).sqrt() * formula.constant(2).sqrt(), sympy.Integer(2)),
        (formula.pi() - formula.pi(), sympy.S.Zero),
        (r1 * (formula.constant(1) + r2) - r1 - r1 * r2,
         sympy.Symbol("R1") * (1 + sympy.Symbol("R2")) - sympy.Symbol("R1")
         - sympy.Symbol("R1") * sympy.Symbol("R2")),
    ]
    return pairs


def test_formulas_replay_the_sympy_expression_built_directly():
    for made, direct in _pairs():
        assert made.to_sympy() == direct, (made, direct)


def test_formulas_answer_as_sympy_does():
    for made, direct in _pairs():
        fresh = _rebuilt(made)  # answers found before any sympy expression exists
        wanted = Fraction(int(direct.p), int(direct.q)) if direct.is_Rational else None
        assert fresh.rational() == wanted, (direct, fresh.rational())
        fresh = _rebuilt(made)
        assert fresh.is_zero() == (direct == 0), direct
        fresh = _rebuilt(made)
        assert fresh.is_zero_expanded() == (sympy.expand(direct) == 0), direct
        fresh = _rebuilt(made)
        assert fresh.free_names() == {x.name for x in direct.free_symbols} - {"s"}, direct


def test_plain_formulas_are_evaluated_exactly_like_sympy():
    point = {"R1": Fraction(3, 2), "R2": Fraction(5), "C1": Fraction(1, 7), "gm": Fraction(4)}
    substitution = {sympy.Symbol(k): sympy.Rational(v.numerator, v.denominator)
                    for k, v in point.items()}
    checked = 0
    for made, direct in _pairs():
        value = direct.xreplace(substitution)
        try:
            found = made.value_at(point)
        except (Inexact, ZeroDivisionError):
            assert not value.is_Rational or not made.plain, direct
            continue
        assert value.is_Rational and found == Fraction(int(value.p), int(value.q)), direct
        checked += 1
    assert checked > 100


def test_plain_means_no_two_parts_can_combine():
    r1 = formula.name("R1")
    assert (r1 + formula.name("R2")).plain
    assert not (r1 + r1).plain
    assert not formula.pi().plain and not formula.constant(2).sqrt().plain
    assert formula.constant(4).sqrt().plain and formula.constant(4).sqrt().number == 2


def test_integer_root():
    for number in (0, 1, 2, 15, 16, 17, 10**40, 10**40 + 1, 2**301):
        for degree in (2, 3, 7):
            root = integer_root(number, degree)
            assert root**degree <= number < (root + 1) ** degree


def _rebuilt(made: Formula) -> Formula:
    """The same formula without its cached sympy expression (built anew, bottom-up)."""
    if made.op in ("number", "name", "s", "pi", "sympy"):
        return {"number": lambda: formula.constant(made.args[0]),
                "name": lambda: formula.name(made.args[0]),
                "s": formula.laplace, "pi": formula.pi,
                "sympy": lambda: formula.from_sympy(made.args[0])}[made.op]()
    args = [_rebuilt(a) if isinstance(a, Formula) else a for a in made.args]
    if made.op == "neg":
        return -args[0]
    if made.op == "sqrt":
        return args[0].sqrt()
    if made.op == "scale":
        return args[1].scaled(args[0])
    left, right = args
    return {"+": left.__add__, "-": left.__sub__, "*": left.__mul__,
            "/": left.__truediv__, "^": left.__pow__}[made.op](right)
