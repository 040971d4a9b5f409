"""Why a claim does not hold, in the terms a reviewer would use.

Each test proposes an explanation and proves it exactly (a random evaluation only filters
candidates before the exact test): an overall sign, a constant factor, two like parts
swapped, a missing, extra or wrong term, a wrong factor (`R` for `s*L`), a limit in which
the claim holds (`A -> oo`, `RL >> Ri`), an equality between parts under which it holds
(`R1 = R2`), a factor. The first that explains the difference is reported.
"""

from __future__ import annotations

import random
from collections.abc import Callable, Iterator
from fractions import Fraction
from itertools import combinations

import sympy

from ..algebra.identity import LAPLACE_NAME, RatFunc, Space
from ..algebra.polynomials import Poly, PolynomialRing
from .dimensions import Dimensions

UNKNOWN = sympy.Symbol("#u")
MAX_EQUALITY_PAIRS = 45
"""Two equalities at once are tried when there are at most this many like pairs."""
WRONG_FACTOR_TERMS = 40
"""Claims with more terms than this (numerator and denominator) are not searched for a
wrong factor: a hand-written claim is short, and the search solves once per factor."""
NICE_DENOMINATOR_TERMS = 3
"""A term a person would have written: one term over at most this many."""


class _Case:
    """A claim that does not hold, with what the tests share."""

    def __init__(self, space: Space, d: RatFunc, c: RatFunc, claimed: sympy.Expr,
                 dims: Dimensions) -> None:
        self.space, self.d, self.c, self.dims = space, d, c, dims
        self.original = claimed
        self.claimed = space.prepare(claimed)
        self.names = [n for n in space.symbols if not n.startswith("#")]
        rng = random.Random(7919)
        self.point = [rng.randint(2, 10**6) for _ in space.gens]
        self.d_vars = _used_variables(d)
        self.used = self.d_vars | _used_variables(c)
        self.ring = space.ring

    def at(self, value: RatFunc, point: list[int]) -> Fraction | None:
        return self.space.evaluate(value, point)

    def index(self, name: str) -> int:
        return self.space.symbols.index(name)

    def like_pairs(self) -> Iterator[tuple[str, str]]:
        """Pairs of parts of one dimension (free symbols pair with free ones)."""
        parts = [n for n in self.names if n != LAPLACE_NAME and self.index(n) in self.used]
        for a, b in combinations(parts, 2):
            if self.dims.get(a) == self.dims.get(b):
                yield a, b

    def compose(self, value: RatFunc, mapping: dict[int, int]) -> RatFunc:
        ring = self.ring
        return RatFunc(ring.permute(value.num, mapping), ring.permute(value.den, mapping), ring)

    def show(self, value: RatFunc) -> str:
        return sympy.sstr(self.space.ratfunc_to_sympy(value))


def diagnose(space: Space, d: RatFunc, c: RatFunc, claimed: sympy.Expr,
             dims: Dimensions) -> list[str]:
    """Explanations of why `c` (the claim) differs from `d` (the derived result)."""
    case = _Case(space, d, c, claimed, dims)
    tests: list[Callable[[_Case], str | None]] = [_constant_factor]
    if not space.relations:  # pi is one more variable here
        tests += [_swapped, _whole_claim_term, _limit, _added_term, _wrong_factor,
                  _inner_term, _factor, _equality, _in_a_limit]
    for test in tests:
        found = test(case)
        if found:
            return [found]
    return []


# ---------------------------------------------------------------- the tests


def _constant_factor(case: _Case) -> str | None:
    space = case.space
    k = _ratio_guess(case)
    if k is None or k == 0 or not space.equal(case.c, space.constant(k) * case.d):
        return None
    if k == -1:
        return "overall sign: the claim is the negative of the derived result"
    return f"constant factor: the claim is {_fraction_text(k)} times the derived result"


def _ratio_guess(case: _Case) -> Fraction | None:
    """claimed/derived at one point: exact in rational spaces, else a rational guess."""
    space = case.space
    if not space.relations:
        dv, cv = case.at(case.d, case.point), case.at(case.c, case.point)
        return None if not dv or cv is None else cv / dv
    subs = {sympy.Symbol(n): sympy.Integer(v)
            for n, v in zip(case.names, case.point, strict=False)}
    exprs = [space.to_sympy(p).xreplace(subs) for p in (case.c.num, case.c.den, case.d.num,
                                                          case.d.den)]
    try:
        cn, cd, dn, dd = (complex(e.evalf(40)) for e in exprs)
        ratio = (cn * dd) / (cd * dn)
    except (ZeroDivisionError, TypeError):
        return None
    if abs(ratio.imag) > 1e-9 * abs(ratio):
        return None
    return Fraction(ratio.real).limit_denominator(1000)


def _swapped(case: _Case) -> str | None:
    target = case.at(case.d, case.point)
    found = []
    for a, b in case.like_pairs():
        i, j = case.index(a), case.index(b)
        point = list(case.point)
        point[i], point[j] = point[j], point[i]
        if case.at(case.c, point) != target:
            continue
        if case.space.equal(case.compose(case.c, {i: j, j: i}), case.d):
            found.append(f"{a} and {b}")
    if not found:
        return None
    also = f" (or, equally, {' or '.join(found[1:])})" if len(found) > 1 else ""
    return f"swapped parts: the claim holds with {found[0]} exchanged{also}"


def _equality(case: _Case) -> str | None:
    """The claim holds when one pair of like parts are equal, or else two pairs; every such
    condition is named (a difference amplifier's `R2/R1*(V2 - V1)` holds when R1 = R3 and
    R2 = R4, and also when R1 = R2 and R3 = R4)."""
    pairs = list(case.like_pairs())
    found = [f"{a} = {b}" for a, b in pairs if _holds_with_equal(case, [(a, b)])]
    if not found and len(pairs) <= MAX_EQUALITY_PAIRS:
        found = [f"{first[0]} = {first[1]} and {second[0]} = {second[1]}"
                 for first, second in combinations(pairs, 2)
                 if len({*first, *second}) == 4 and _holds_with_equal(case, [first, second])]
    if not found:
        return None
    also = f" (or, equally, when {' or when '.join(found[1:])})" if len(found) > 1 else ""
    return f"holds only when {found[0]}{also}"


def _holds_with_equal(case: _Case, pairs: list[tuple[str, str]]) -> bool:
    point = list(case.point)
    mapping = {}
    for a, b in pairs:
        i, j = case.index(a), case.index(b)
        point[j] = point[i]
        mapping[j] = i
    if case.at(case.c, point) != case.at(case.d, point):
        return False
    return case.space.equal(case.compose(case.c, mapping), case.compose(case.d, mapping))


def _limit(case: _Case) -> str | None:
    """The claim, written without some symbol x, is the derived result's limit in x."""
    found = [_limit_text(case, name, toward) for name, toward, limit in _limits(case)
             if case.space.equal(case.c, limit)]
    if not found:
        return None
    return "holds only in the limit " + "; or ".join(found)


def _limits(case: _Case) -> Iterator[tuple[str, str, RatFunc]]:
    """(symbol, 'oo' or '0', the derived result's limit) for every symbol the derived result
    uses and the claim does not, where that limit is finite and not zero."""
    c_vars = _used_variables(case.c)
    # Frequency limits first: "at low frequencies only" is the reading a reviewer expects.
    for name in sorted(case.names, key=lambda n: n != LAPLACE_NAME):
        i = case.index(name)
        if i not in case.d_vars or i in c_vars:
            continue
        for toward, pick in (("oo", max), ("0", min)):
            pn, an = _coefficient(case.ring, case.d.num, i, pick)
            pd, ad = _coefficient(case.ring, case.d.den, i, pick)
            if pn == pd:
                yield name, toward, RatFunc(an, ad, case.ring)


def _in_a_limit(case: _Case) -> str | None:
    """In a limit the claim stands for, one of the simple explanations holds."""
    for name, toward, limit in _limits(case):
        inner = _Case(case.space, limit, case.c, case.original, case.dims)
        for test in (_constant_factor, _swapped, _whole_claim_term, _inner_term):
            found = test(inner)
            if found:
                return f"in the limit {_limit_text(case, name, toward)}: {found}"
    return None


def _limit_text(case: _Case, name: str, toward: str) -> str:
    if name == LAPLACE_NAME:
        band = "high frequencies" if toward == "oo" else "low frequencies"
        return f"s -> {toward} (at {band} only)"
    dim = case.dims.get(name)
    like = [n for n in case.names if n not in (name, LAPLACE_NAME) and dim is not None
            and case.dims.get(n) == dim and case.index(n) in case.used]
    if not like:
        return f"{name} -> {toward}"
    relation = ">>" if toward == "oo" else "<<"
    return f"{name} -> {toward} ({name} {relation} {', '.join(like)})"


def _whole_claim_term(case: _Case) -> str | None:
    """Before the limits: an extra or wrong term, or a missing term made of parts the claim
    does not use (`R3∥R4` forgotten) or a plain monomial (`+ 1`, `+ C*s`). A missing term
    over the parts of the claim itself (`-gm*RD` for `-gm*RD/(1 + gm*RS)`) is better read as
    a limit (RS -> 0), so it waits until the limits have been tried."""
    return _term_test(case, case.claimed, top=True, negative=False, early=True)


def _added_term(case: _Case) -> str | None:
    """A term to subtract: reported after the limits, which usually explain it better
    (`Ub` for `Ub*RL/(Ri + RL)` is the limit Ri -> 0 rather than a missing term)."""
    return _term_test(case, case.claimed, top=True)


def _inner_term(case: _Case) -> str | None:
    for node in _sums(case.claimed):
        if node is case.claimed:
            continue
        found = _term_test(case, node, top=False)
        if found:
            return found
    return None


def _term_test(case: _Case, node: sympy.Expr, top: bool, negative: bool = True,
               early: bool = False) -> str | None:
    """What must be added to `node` (a sum of the claim, or the whole claim) to make the
    claim hold; reported when it is a missing, extra or wrong term."""
    missing = _solve_for_term(case, node)
    if missing is None:
        return None
    space = case.space
    where = "the claim" if top else f"`{_short(node)}`"
    terms = node.args if node.is_Add else ()
    corrected = [(term, (space.convert(term) + missing).cancelled()) for term in terms]
    for term, fixed in corrected:
        if fixed.is_zero():
            return f"extra term: `{_short(term)}` in {where} should not be there"
    for term, fixed in corrected:
        if _monomial(fixed):
            return f"wrong term: `{_short(term)}` in {where} should be `{case.show(fixed)}`"
    forgotten = not early or _monomial(missing) or not (
        _used_variables(missing) & _used_variables(case.c))
    if _nice(missing) and forgotten and (
            negative or case.ring.leading_coefficient(missing.num) > 0):
        shown = case.show(missing)
        signed = f"- {shown[1:]}" if shown.startswith("-") else f"+ {shown}"
        return f"missing term: {where} lacks the term `{signed}`"
    for term, fixed in corrected:
        off = (space.convert(term) / fixed).cancelled()
        if _monomial(off):
            return (f"wrong factor: `{_short(term)}` in {where} should be "
                    f"`{case.show(fixed)}` (it is `{case.show(off)}` times that)")
    return None


def _solve_for_term(case: _Case, node: sympy.Expr) -> RatFunc | None:
    """u such that the claim with `node` replaced by `node + u` equals the derived result
    (when the claim is a ratio of first-degree expressions in u)."""
    return _solve_for_replacement(case, node, node + UNKNOWN)


def _wrong_factor(case: _Case) -> str | None:
    """One factor of a product in the claim should be another product of parts of its own
    dimension (`R/(R + s*L)` for `s*L/(R + s*L)`: `R` should be `L*s`)."""
    space = case.space
    if len(case.c.num) + len(case.c.den) > WRONG_FACTOR_TERMS:
        return None  # each candidate is an exact solve over the whole claim
    for node in _products(case.claimed):
        for factor in node.args:
            if factor.is_Number or factor.has(UNKNOWN):
                continue
            others = [a for a in node.args if a is not factor]
            fixed = _solve_for_replacement(case, node, sympy.Mul(UNKNOWN, *others))
            if fixed is None or not (_monomial(fixed) and fixed.den == case.ring.one):
                continue
            if (case.ring.leading_coefficient(fixed.num) < 0
                    or space.equal(fixed, space.convert(factor))):
                continue
            if not _same_dimension(case, factor, fixed) or _cancels(case, fixed, others):
                continue
            return (f"wrong factor: `{_short(factor)}` in the claim should be "
                    f"`{case.show(fixed)}`")
    return None


def _cancels(case: _Case, fixed: RatFunc, others: list[sympy.Expr]) -> bool:
    """True when the replacement is a part that stands alone elsewhere in the product
    (`R1*Z/R2`: `R1` should be `R2` is better said as a factor `R1/R2`)."""
    alone = {f.base if f.is_Pow else f for f in others}
    names = {case.ring.names[i] for i in _used_variables(fixed)}
    return any(sympy.Symbol(n, positive=True) in alone or sympy.Symbol(n) in alone
               for n in names)


def _same_dimension(case: _Case, factor: sympy.Expr, fixed: RatFunc) -> bool:
    from .dimensions import DimensionMismatch, sympy_dimension

    try:
        old = sympy_dimension(factor, case.dims)
        new = sympy_dimension(case.space.ratfunc_to_sympy(fixed, factor=False), case.dims)
    except DimensionMismatch:
        return False
    return old is not None and old == new


def _solve_for_replacement(case: _Case, node: sympy.Expr, replaced: sympy.Expr
                           ) -> RatFunc | None:
    """u such that the claim with `node` written as `replaced` (which contains u) equals
    the derived result (when the claim is a ratio of first-degree expressions in u)."""
    space = case.space
    u = space.symbols.index(UNKNOWN.name)
    try:
        with_u = space.convert(case.claimed.xreplace({node: replaced}))
    except ZeroDivisionError:
        return None
    n1, n0 = _split_linear(with_u.num, u, space.ring)
    m1, m0 = _split_linear(with_u.den, u, space.ring)
    if n1 is None or m1 is None:
        return None
    top = m0 * case.d.num - n0 * case.d.den
    bottom = n1 * case.d.den - m1 * case.d.num
    if space.ring.is_zero(bottom) or space.ring.is_zero(top):
        return None
    return RatFunc(top, bottom, space.ring).cancelled()


def _products(expr: sympy.Expr) -> list[sympy.Expr]:
    """Every product in the expression, outermost first, each once."""
    return _parts(expr, lambda node: node.is_Mul)


def _factor(case: _Case) -> str | None:
    ratio = (case.c / case.d).cancelled()
    if len(ratio.num) == 1 and len(ratio.den) == 1:
        return f"factor: the claim is `{case.show(ratio)}` times the derived result"
    return None


# ---------------------------------------------------------------- polynomial helpers


def _used_variables(value: RatFunc) -> set[int]:
    used = set()
    for poly in (value.num, value.den):
        used.update(i for i, e in enumerate(value.ring.degrees(poly)) if e)
    return used


def _coefficient(ring: PolynomialRing, poly: Poly, var: int, pick) -> tuple[int, Poly]:
    """Highest (pick=max) or lowest (pick=min) power of variable `var`, with its coefficient."""
    terms = ring.terms(poly)
    power = pick(m[var] for m, _ in terms)
    chosen = [(m[:var] + (0,) + m[var + 1:], c) for m, c in terms if m[var] == power]
    return power, ring.from_terms(chosen)


def _split_linear(poly: Poly, var: int, ring: PolynomialRing):
    """(a, b) with poly = a*x + b in variable `var`, or (None, None) when of higher degree."""
    if ring.degrees(poly)[var] > 1:
        return None, None
    parts: dict[int, list] = {0: [], 1: []}
    for m, c in ring.terms(poly):
        parts[m[var]].append((m[:var] + (0,) + m[var + 1:], c))
    return ring.from_terms(parts[1]), ring.from_terms(parts[0])


def _sums(expr: sympy.Expr) -> list[sympy.Expr]:
    """Every sum in the expression, outermost first, each once."""
    return _parts(expr, lambda node: node.is_Add)


def _parts(expr: sympy.Expr, wanted: Callable[[sympy.Expr], bool]) -> list[sympy.Expr]:
    """Every subexpression that is `wanted`, breadth first (outermost first), each once."""
    out: list[sympy.Expr] = []
    queue = [expr]
    while queue:
        node = queue.pop(0)
        if wanted(node) and node not in out:
            out.append(node)
        queue.extend(node.args)
    return out


def _nice(value: RatFunc) -> bool:
    """A single term, possibly over a short sum: what a person writes as one term."""
    return len(value.num) == 1 and len(value.den) <= NICE_DENOMINATOR_TERMS


def _short(expr: sympy.Expr, width: int = 100) -> str:
    """A subexpression of the claim as text; a long sum shortened to its ends."""
    text = sympy.sstr(expr)
    if len(text) <= width or not expr.is_Add:
        return text
    terms = sympy.Add.make_args(expr)
    return f"{sympy.sstr(terms[0])} + ... + {sympy.sstr(terms[-1])} ({len(terms)} terms)"


def _monomial(value: RatFunc) -> bool:
    return len(value.num) == 1 and len(value.den) == 1


def _fraction_text(k: Fraction) -> str:
    return str(k.numerator) if k.denominator == 1 else f"{k.numerator}/{k.denominator}"
