"""sympy expressions ↔ exact rational functions.

The conversion walks the expression tree (Add, Mul, integer powers, symbols, rationals);
nothing is ever parsed or evaluated as text. Irrational pieces become *atoms*: opaque
variables of the polynomial ring, named as they print. `pi` is `pi`; a rational power
`b^(p/q)` is the atom `b^(1/q)` (`sqrt(L1*L2)`) to the power p, so `√x` and `1/√x` share
one atom; any other function or power is an atom as a whole. `AtomicValue` and `restored`
put the atoms back. Callers with nodes of their own (a parallel operator) pass `operators`:
how to combine the rational functions of the node's arguments.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Mapping
from fractions import Fraction
from functools import cached_property
from typing import TYPE_CHECKING

from ..model.typeset import latex_of
from .polynomials import PolynomialRing
from .rational import RationalFunction

if TYPE_CHECKING:  # pragma: no cover
    import sympy

ATOM_DIGITS = 40
"""Decimal digits kept when an atom (π, a square root) is evaluated at rational values."""

Operators = Mapping[type, Callable[[list[RationalFunction]], RationalFunction]]
"""Rational functions of a caller's own sympy nodes, from those of their arguments."""


def atom_name(expr: sympy.Expr) -> str:
    """The ring variable standing for an irrational piece: `pi`, `sqrt(L1*L2)`, `(x**(1/3))`."""
    import sympy

    if expr is sympy.pi:
        return "pi"
    text = sympy.sstr(expr)
    return text if text.startswith("sqrt(") and _balanced(text[4:]) else f"({text})"


def product_root_name(first: str, second: str) -> str:
    """`atom_name` of sqrt(first*second) for two symbols, without sympy (which orders the
    two factors by name)."""
    return f"sqrt({'*'.join(sorted((first, second)))})"


def _balanced(text: str) -> bool:
    """True when `text` is one parenthesised group: `(L1*L2)` but not `(a)*(b)`."""
    depth = 0
    for i, ch in enumerate(text):
        depth += ch == "("
        depth -= ch == ")"
        if depth == 0 and i != len(text) - 1:
            return False
    return depth == 0


def _root(power: sympy.Pow) -> sympy.Expr | None:
    """`b^(1/q)` for a rational power `b^(p/q)` (not an integer one); None otherwise."""
    import sympy

    exponent = power.exp
    if exponent.is_Rational and not exponent.is_Integer:
        return sympy.Pow(power.base, sympy.Rational(1, int(exponent.q)))
    return None


def atoms_of(expr: sympy.Expr, operators: Operators | None = None) -> dict[str, sympy.Expr]:
    """The atoms an expression needs, by ring name."""

    found: dict[str, sympy.Expr] = {}
    _collect(expr, found, operators or {})
    return found


def _collect(expr: sympy.Expr, found: dict[str, sympy.Expr], operators: Operators) -> None:
    import sympy

    if expr is sympy.pi:
        found["pi"] = expr
    elif isinstance(expr, sympy.Pow) and not expr.exp.is_Integer:
        root = _root(expr)
        if root is None:
            found[atom_name(expr)] = expr
        else:
            found[atom_name(root)] = root
    elif isinstance(expr, sympy.Function) and type(expr) not in operators:
        found[atom_name(expr)] = expr
    else:
        for arg in expr.args:
            _collect(arg, found, operators)


def names_of(expr: sympy.Expr, operators: Operators | None = None) -> set[str]:
    """Ring variables an expression needs: its symbols outside atoms, and its atoms."""
    import sympy

    atoms = atoms_of(expr, operators)
    if not atoms:
        return {str(x) for x in expr.free_symbols}
    plain = expr.xreplace({e: sympy.Integer(1) for e in atoms.values()})
    return {str(x) for x in plain.free_symbols} | set(atoms)


def to_function(expr: sympy.Expr, ring: PolynomialRing,
                operators: Operators | None = None) -> RationalFunction:
    """`expr` as a rational function over `ring` (extended by any variable it lacks).

    Raises ValueError for what no rational function holds (a float, an infinity), and
    `rational.UndefinedValue` for a division by zero."""
    import sympy

    if isinstance(expr, int):
        expr = sympy.Integer(expr)
    missing = names_of(expr, operators) - set(ring.names)
    if missing:
        ring = ring.extend(sorted(missing))
    return _Converter(ring, operators or {}).convert(expr)


class _Converter:
    """One walk over an expression tree, sharing the work of repeated subexpressions."""

    def __init__(self, ring: PolynomialRing, operators: Operators) -> None:

        self.ring = ring
        self.operators = operators
        self.memo: dict[sympy.Expr, RationalFunction] = {}

    def convert(self, expr: sympy.Expr) -> RationalFunction:
        done = self.memo.get(expr)
        if done is None:
            done = self._convert(expr)
            self.memo[expr] = done
        return done

    def _convert(self, expr: sympy.Expr) -> RationalFunction:
        import sympy

        ring = self.ring
        if expr.is_Rational:
            return RationalFunction.constant(Fraction(int(expr.p), int(expr.q)), ring)
        if expr.is_Symbol:
            return RationalFunction.symbol(str(expr), ring)
        if expr is sympy.pi:
            return RationalFunction.symbol("pi", ring)
        if isinstance(expr, sympy.Add):
            polynomial, total = ring.zero, RationalFunction(0, 1, ring, canonical=True)
            for arg in expr.args:  # polynomial terms first summed without any gcd
                term = self.convert(arg)
                if term.is_polynomial() and term.denominator == ring.one:
                    polynomial = polynomial + term.numerator
                else:
                    total = total + term
            return total + RationalFunction(polynomial, 1, ring)
        if isinstance(expr, sympy.Mul):
            return self._product([self.convert(arg) for arg in expr.args])
        if isinstance(expr, sympy.Pow):
            if expr.exp.is_Integer:
                return self.convert(expr.base) ** int(expr.exp)
            root = _root(expr)
            if root is not None:
                atom = RationalFunction.symbol(atom_name(root), ring)
                return atom ** int(expr.exp.p)
            return RationalFunction.symbol(atom_name(expr), ring)
        operator = self.operators.get(type(expr))
        if operator is not None:
            return operator([self.convert(arg) for arg in expr.args])
        if isinstance(expr, sympy.Function):
            return RationalFunction.symbol(atom_name(expr), ring)
        raise ValueError(f"cannot hold {sympy.sstr(expr)} as a rational function")

    def _product(self, factors: list[RationalFunction]) -> RationalFunction:
        """Π factors, each numerator cancelled against every other denominator before
        anything is multiplied out: a product whose value is small (a divider chain, a
        determinant over its cofactor) never grows beyond that value on the way."""
        ring = self.ring
        if any(f.is_zero() for f in factors):
            return RationalFunction(0, 1, ring, canonical=True)
        tops = [f.numerator for f in factors]
        bottoms = [f.denominator for f in factors]
        below = [j for j, q in enumerate(bottoms) if not ring.is_constant(q)]
        above = [i for i, p in enumerate(tops) if not ring.is_constant(p)] if below else []
        for i in above:
            for j in below:
                if i == j or ring.is_constant(bottoms[j]):
                    continue
                g = ring.gcd(tops[i], bottoms[j])
                if not ring.is_constant(g):
                    tops[i], bottoms[j] = ring.exquo(tops[i], g), ring.exquo(bottoms[j], g)
                    if ring.is_constant(tops[i]):
                        break
        num, den = ring.one, ring.one
        for p in tops:
            num = num * p
        for q in bottoms:
            den = den * q
        # every numerator is now prime to every denominator, so the products are too
        return RationalFunction.coprime(num, den, ring)


def restored(function: RationalFunction, atoms: Mapping[str, sympy.Expr]) -> sympy.Expr:
    """`function` as a sympy expression with its atoms put back."""
    import sympy

    expr = function.to_sympy()
    used = set(function.symbol_names())
    back = {sympy.Symbol(n): e for n, e in atoms.items() if n in used}
    return expr.xreplace(back) if back else expr


def sympy_ring(function: RationalFunction, atoms: Mapping[str, sympy.Expr],
               extra: Iterable[sympy.Symbol] = ()):
    """(numerator, denominator) of `function` as polynomials of a sympy ring over QQ whose
    generators are its symbols and atoms (and `extra`), in sympy's default order."""
    import sympy
    from sympy.polys.rings import ring as sympy_poly_ring

    names = function.symbol_names()
    generators = {n: atoms.get(n, sympy.Symbol(n)) for n in names}
    ordered = sorted(set(generators.values()) | set(extra), key=sympy.default_sort_key)
    target, *_ = sympy_poly_ring(ordered or [sympy.Dummy("x")], sympy.QQ)
    place = {g: i for i, g in enumerate(ordered)}
    source = function.ring
    positions = [place.get(generators.get(n)) for n in source.names]
    width = len(target.gens)

    def convert(p):
        terms = {}
        for monom, coeff in source.terms(p):
            exps = [0] * width
            for pos, e in zip(positions, monom, strict=False):
                if e:
                    exps[pos] = e
            terms[tuple(exps)] = sympy.QQ(coeff)
        return target.from_dict(terms) if terms else target.zero

    return convert(function.numerator), convert(function.denominator)


def atom_value(expr: sympy.Expr, values: Mapping[str, Fraction]) -> Fraction:
    """An atom at rational values of its symbols, to ATOM_DIGITS digits."""
    import sympy

    point = {x: sympy.Rational(values[str(x)].numerator, values[str(x)].denominator)
             for x in expr.free_symbols}
    number = sympy.N(expr.xreplace(point), ATOM_DIGITS)
    if not number.is_real:
        raise ValueError(f"{sympy.sstr(expr)} is not real at the nominal values")
    return Fraction(str(number))


class AtomicValue:
    """A rational function some of whose variables are atoms (π, square roots).

    Implements `symcirc.results.ExactValue`: the sympy form has the atoms restored, the
    symbols listed are the atoms' own symbols, and evaluation uses ATOM_DIGITS-digit values
    of the atoms (so a nominal value is exact up to that precision).
    """

    def __init__(self, function: RationalFunction, atoms: Mapping[str, sympy.Expr]) -> None:
        self.function = function
        used = set(function.symbol_names())
        self.atoms = {name: expr for name, expr in atoms.items() if name in used}

    def to_sympy(self) -> sympy.Expr:
        return self._sympy

    @cached_property
    def _sympy(self) -> sympy.Expr:
        import sympy

        return self.function.to_sympy().xreplace(
            {sympy.Symbol(n): e for n, e in self.atoms.items()})

    def to_text(self) -> str:
        return self.function.to_text()

    def to_latex(self) -> str:
        return latex_of(self.to_sympy())

    def symbol_names(self) -> tuple[str, ...]:
        names = {n for n in self.function.symbol_names() if n not in self.atoms}
        for expr in self.atoms.values():
            names |= {str(x) for x in expr.free_symbols}
        return tuple(sorted(names))

    def evaluate(self, values: Mapping[str, Fraction]) -> Fraction:
        point = dict(values)
        for name, expr in self.atoms.items():
            point[name] = atom_value(expr, values)
        return self.function.evaluate(point)

    def size(self) -> tuple[int, int]:
        return self.function.size()


def exact_value(function: RationalFunction, atoms: Mapping[str, sympy.Expr]):
    """The function itself when it uses no atom, else an AtomicValue around it."""
    if atoms and set(atoms) & set(function.symbol_names()):
        return AtomicValue(function, atoms)
    return function


def substitute_root(function: RationalFunction, name: str, factor: RationalFunction,
                    radicand: RationalFunction, root: str) -> RationalFunction:
    """`function` with `name` = factor*sqrt(radicand), the square root held as atom `root`.

    Even powers of `name` become powers of factor**2*radicand, so the root appears at most
    to the first power (M**2 = k**2*L1*L2 rather than k**2*sqrt(L1*L2)**2). `factor` and
    `radicand` must be polynomials.
    """
    ring = function.ring
    if name not in function.symbol_names():
        return function
    if root not in ring.names:
        ring = ring.extend([root])
    f = factor.in_ring(ring) if set(factor.ring.names) <= set(ring.names) else factor
    r = radicand.in_ring(ring) if set(radicand.ring.names) <= set(ring.names) else radicand
    missing = (set(f.ring.names) | set(r.ring.names)) - set(ring.names)
    if missing:
        ring = ring.extend(sorted(missing))
        f, r = f.in_ring(ring), r.in_ring(ring)
    if not (f.is_polynomial() and r.is_polynomial()):
        raise ValueError("factor and radicand must be polynomials")
    square = f.numerator * f.numerator * r.numerator
    atom = ring.gen(root)

    def reduce(p):
        coefficients = ring.coefficients(ring.convert(p, function.ring), name)
        out = ring.zero
        for power, c in coefficients.items():
            term = c * square ** (power // 2) * f.numerator ** (power % 2)
            out = out + (term * atom if power % 2 else term)
        return out

    return RationalFunction(reduce(function.numerator), reduce(function.denominator), ring)
