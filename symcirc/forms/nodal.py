"""The nodal equations as an engineer writes them, and their solution by Cramer's rule.

Unknowns are the node voltages not fixed by a grounded source, plus the currents of the
voltage-defining branches that need one (floating sources, transformers, coupled
inductors, currents asked for or used as controls). A grounded opamp output or controlled
voltage source replaces its node's current law by its own equation, as on paper.
Determinants are taken fraction-free over integer polynomials (sympy's DomainMatrix).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import sympy

from ..algebra.matrices import determinant
from ..algebra.polynomials import PolynomialRing
from ..engine.network import mutual_name
from ..model.circuit import LAPLACE, REFERENCE, Circuit, Element
from .printing import latex, text
from .steps import Recorder

Linear = dict[object, sympy.Expr]
"""A linear form: unknown symbol → coefficient; the key 1 holds the constant."""
ONE = 1


class Singular(Exception):
    """The nodal equations have no unique solution."""


@dataclass
class Extra:
    """A test element added to the circuit for one derivation."""

    kind: str  # 'current' (test current source) or 'short' / 'voltage' (test voltage source)
    name: str
    nodes: tuple[str, str]
    value: sympy.Expr = sympy.Integer(0)


@dataclass
class System:
    unknowns: list[sympy.Symbol]
    equations: list[str]
    """What each row says, in words ("current law at node a", "U1: V(p) = V(n)")."""
    matrix: sympy.Matrix
    rhs: sympy.Matrix
    known: dict[str, sympy.Expr]
    node_symbol: dict[str, sympy.Symbol] = field(default_factory=dict)
    current_symbol: dict[str, sympy.Symbol] = field(default_factory=dict)

    def voltage(self, node: str) -> Linear:
        if node in self.known:
            return {ONE: self.known[node]}
        if node == REFERENCE:
            return {}
        return {self.node_symbol[node]: sympy.Integer(1)}


@dataclass
class _VBranch:
    """A voltage-defining branch: constraint `form = 0`, current flowing a → b inside it."""

    name: str
    a: str
    b: str
    constraint: Linear
    label: str
    needs_current: bool = False
    secondary: tuple[str, str, sympy.Expr] | None = None
    """Transformer: the secondary's nodes and the factor of the primary current in it."""


def build_system(
    circuit: Circuit,
    active: set[str],
    extras: tuple[Extra, ...] = (),
    currents: frozenset[str] = frozenset(),
) -> System:
    """The nodal equations with the independent sources in `active` on and the others at
    zero, plus `extras`; `currents` names branches whose current must be an unknown."""
    elements = circuit.elements
    symbols = {n: sympy.Symbol(f"V_{n}") for n in circuit.nodes if n != REFERENCE}
    coupled: dict[str, tuple[str, sympy.Expr]] = {}
    taken = set(elements) | set(circuit.parameters)
    for e in elements.values():
        if e.kind == "coupling":
            l1, l2 = e.coupled
            # the mutual inductance K·√(L1·L2) is a symbol of its own, as in the engine
            mutual = sympy.Symbol(mutual_name(e.name, taken))
            coupled[l1], coupled[l2] = (l2, mutual), (l1, mutual)
    controlled_currents = {
        c.element
        for e in elements.values()
        for c in e.controls
        if c.kind == "current" and c.element
    }

    def v(node: str) -> Linear:
        return {} if node == REFERENCE else {symbols[node]: sympy.Integer(1)}

    def diff(x: str, y: str) -> Linear:
        return _add(v(x), _scale(v(y), -1))

    current_of: dict[str, sympy.Symbol] = {}

    def control_form(e: Element) -> Linear:
        form: Linear = {}
        for c in e.controls:
            if c.kind == "voltage":
                x, y = (tuple(c.nodes) + (REFERENCE,))[:2]
                form = _add(form, _scale(diff(x, y), c.coefficient))
            else:
                form = _add(form, _scale(branch_current(elements[c.element]), c.coefficient))
        if e.independent is not None:
            form = _add(form, {ONE: e.independent})
        return form

    def branch_current(e: Element) -> Linear:
        if e.law is not None and e.name not in coupled:
            return _scale(diff(*e.nodes), 1 / e.impedance)
        if e.kind == "current source":
            return control_form(e) if e.is_controlled else {ONE: source_value(e)}
        return {current_of.setdefault(e.name, sympy.Symbol(f"I_{e.name}")): sympy.Integer(1)}

    def source_value(e: Element) -> sympy.Expr:
        return e.symbol if e.name in active else sympy.Integer(0)

    # -- voltage-defining branches
    vbranches: list[_VBranch] = []
    for e in elements.values():
        if e.kind == "voltage source":
            rhs = control_form(e) if e.is_controlled else {ONE: source_value(e)}
            vbranches.append(
                _VBranch(
                    e.name,
                    *e.nodes,
                    _add(diff(*e.nodes), _scale(rhs, -1)),
                    f"{e.name}: V({e.nodes[0]}, {e.nodes[1]}) = "
                    f"{'its controlled value' if e.is_controlled else e.name}",
                )
            )
        elif e.kind == "opamp":
            p, n, o = e.nodes
            gain = (
                e.definition
                if e.definition is not None
                else (e.symbol if e.nominal is not None else None)
            )
            if gain is None:
                form, label = diff(p, n), f"{e.name}: V({p}) = V({n}) (ideal opamp)"
            else:
                form = _add(v(o), _scale(diff(p, n), -gain))
                label = f"{e.name}: V({o}) = {text(gain)}·V({p}, {n})"
            vbranches.append(_VBranch(e.name, o, REFERENCE, form, label))
        elif e.kind == "transformer":
            p1, n1, p2, n2 = e.nodes
            ratio = e.symbol
            form = _add(diff(p1, n1), _scale(diff(p2, n2), -ratio))
            vbranches.append(
                _VBranch(
                    e.name,
                    p1,
                    n1,
                    form,
                    f"{e.name}: V({p1}, {n1}) = {e.name}·V({p2}, {n2})",
                    True,
                    (p2, n2, -ratio),
                )
            )
        elif e.law is not None and e.name in coupled:
            other, mutual = coupled[e.name]
            own = sympy.Symbol(f"I_{e.name}")
            form = _add(
                diff(*e.nodes),
                {own: -LAPLACE * e.symbol, sympy.Symbol(f"I_{other}"): -LAPLACE * mutual},
            )
            vbranches.append(_VBranch(e.name, *e.nodes, form, f"{e.name}: coupled inductor", True))
    for x in extras:
        if x.kind in ("short", "voltage"):
            vbranches.append(
                _VBranch(
                    x.name,
                    *x.nodes,
                    _add(diff(*x.nodes), {ONE: -x.value}),
                    f"{x.name}: V({x.nodes[0]}, {x.nodes[1]}) = {text(x.value)}",
                    True,
                )
            )
    for vb in vbranches:
        vb.needs_current = vb.needs_current or vb.name in currents or vb.name in controlled_currents

    # -- which node rows each grounded branch takes over, which nodes are known
    known: dict[str, sympy.Expr] = {}
    takes_row: dict[str, _VBranch] = {}
    for vb in vbranches:
        if vb.needs_current or REFERENCE not in (vb.a, vb.b) or vb.a == vb.b:
            vb.needs_current = True
            continue
        node = vb.b if vb.a == REFERENCE else vb.a
        if node in known or node in takes_row:
            vb.needs_current = True
            continue
        if set(vb.constraint) <= {symbols[node], ONE}:  # an independent grounded source
            coefficient = vb.constraint[symbols[node]]
            known[node] = -vb.constraint.get(ONE, sympy.Integer(0)) / coefficient
        else:
            takes_row[node] = vb
    for vb in vbranches:
        if vb.needs_current:
            current_of.setdefault(vb.name, sympy.Symbol(f"I_{vb.name}"))

    # -- current laws: currents leaving each node
    leaving: dict[str, Linear] = {n: {} for n in symbols}

    def out(node: str, form: Linear) -> None:
        if node != REFERENCE:
            leaving[node] = _add(leaving[node], form)

    for e in elements.values():
        if e.law is not None and e.name not in coupled:
            i = branch_current(e)
            out(e.nodes[0], i)
            out(e.nodes[1], _scale(i, -1))
        elif e.kind == "current source":
            i = branch_current(e)
            out(e.nodes[0], _scale(i, -1))
            out(e.nodes[1], i)
    for x in extras:
        if x.kind == "current":
            out(x.nodes[0], {ONE: -x.value})
            out(x.nodes[1], {ONE: x.value})
    for vb in vbranches:
        if vb.needs_current:
            j = {current_of[vb.name]: sympy.Integer(1)}
            out(vb.a, j)
            out(vb.b, _scale(j, -1))
            if vb.secondary is not None:
                p2, n2, factor = vb.secondary
                out(p2, _scale(j, factor))
                out(n2, _scale(j, -factor))

    # -- assemble
    unknowns = [symbols[n] for n in circuit.nodes if n != REFERENCE and n not in known]
    unknowns += [current_of[vb.name] for vb in vbranches if vb.needs_current]
    unknowns += [s for name, s in current_of.items() if s not in unknowns]
    rows: list[Linear] = []
    words: list[str] = []
    for n in circuit.nodes:
        if n == REFERENCE or n in known:
            continue
        if n in takes_row:
            rows.append(takes_row[n].constraint)
            words.append(takes_row[n].label)
        else:
            rows.append(leaving[n])
            words.append(f"current law at node {n}")
    for vb in vbranches:
        if vb.needs_current:
            rows.append(vb.constraint)
            words.append(vb.label)
    substitution = {symbols[n]: value for n, value in known.items()}
    matrix, rhs = [], []
    for row in rows:
        constant = row.get(ONE, sympy.Integer(0))
        coefficients = dict.fromkeys(unknowns, sympy.Integer(0))
        for key, c in row.items():
            if key is ONE:
                continue
            if key in substitution:
                constant += c * substitution[key]
            else:
                coefficients[key] += c
        matrix.append([coefficients[u] for u in unknowns])
        rhs.append(-constant)
    if len(unknowns) != len(rows):
        raise Singular("as many equations as unknowns are needed")
    return System(
        unknowns,
        words,
        sympy.Matrix(matrix),
        sympy.Matrix(rhs),
        known,
        {n: s for n, s in symbols.items()},
        dict(current_of),
    )


def _add(a: Linear, b: Linear) -> Linear:
    out = dict(a)
    for k, c in b.items():
        out[k] = out.get(k, sympy.Integer(0)) + c
    return out


def _scale(a: Linear, c: sympy.Expr) -> Linear:
    return {k: v * c for k, v in a.items()}


# ---------------------------------------------------------------------- solving


def _polynomial_rows(
    matrix: sympy.Matrix, rhs: sympy.Matrix
) -> tuple[list[list[sympy.Expr]], list[sympy.Expr]]:
    """Each row (with its right-hand side) times the lcm of its denominators."""
    rows, values = [], []
    for i in range(matrix.rows):
        entries = [sympy.together(x) for x in list(matrix.row(i)) + [rhs[i]]]
        scale = sympy.lcm([sympy.fraction(x)[1] for x in entries])
        scaled = [sympy.cancel(x * scale) for x in entries]
        rows.append(scaled[:-1])
        values.append(scaled[-1])
    return rows, values


def cramer(system: System, targets: list[sympy.Symbol]) -> dict[sympy.Symbol, sympy.Expr]:
    """Each target as a ratio of determinants, common factors cancelled."""
    rows, values = _polynomial_rows(system.matrix, system.rhs)
    generators = sorted(
        set().union(*[x.free_symbols for r in rows for x in r], *[x.free_symbols for x in values]),
        key=sympy.default_sort_key,
    )
    generators = generators or [sympy.Dummy("x")]
    if not all(x.is_polynomial(*generators) for r in rows + [values] for x in r):
        raise Singular("entries are not polynomial")
    algebra = _Determinants(generators)
    matrix = [[algebra.poly(x) for x in r] for r in rows]
    right = [algebra.poly(x) for x in values]
    delta = algebra.det(matrix)
    if algebra.ring.is_zero(delta):
        raise Singular("the nodal equations are singular")
    out = {}
    for target in targets:
        k = system.unknowns.index(target)
        numerator = algebra.det([r[:k] + [right[i]] + r[k + 1 :] for i, r in enumerate(matrix)])
        num, den = algebra.cancel(numerator, delta)
        out[target] = algebra.expr(num) / algebra.expr(den)
    return out


class _Determinants:
    """The nodal equations as polynomials of the algebra (either backend), one variable per
    generator in sympy's order, and the determinants and ratios Cramer's rule needs."""

    def __init__(self, generators: list[sympy.Symbol]) -> None:
        self.generators = generators
        self.ring = PolynomialRing([f"x{i}" for i in range(len(generators))], keep_order=True)

    def poly(self, x: sympy.Expr):
        return self.ring.from_terms(sympy.Poly(x, *self.generators).terms())

    def det(self, m: list[list]):
        return determinant(self.ring, m)

    def cancel(self, num, den):
        """num/den with their gcd divided out and a positive leading term below."""
        ring = self.ring
        common = ring.gcd(num, den)
        num, den = ring.exquo(num, common), ring.exquo(den, common)
        if ring.leading_coefficient(den) < 0:
            num, den = -num, -den
        return num, den

    def expr(self, p) -> sympy.Expr:
        terms = []
        for monom, coeff in self.ring.terms(p):
            factors = [sympy.Integer(coeff)]
            factors += [g if e == 1 else g**e
                        for g, e in zip(self.generators, monom, strict=False) if e]
            terms.append(sympy.Mul(*factors))
        return sympy.Add(*terms)


def record(
    system: System, targets: list[sympy.Symbol], rec: Recorder, names: dict[sympy.Symbol, str]
) -> dict[sympy.Symbol, sympy.Symbol]:
    """Record the matrix equation and one Cramer step per target; returns target → symbol."""
    solution = cramer(system, targets)
    matrix_latex = _bmatrix(
        [[latex(x) for x in system.matrix.row(i)] for i in range(system.matrix.rows)]
    )
    unknowns_latex = _bmatrix([[latex(u)] for u in system.unknowns])
    rhs_latex = _bmatrix([[latex(x)] for x in system.rhs])
    rows_text = "\n".join(
        f"{word}:  {_row_text(list(system.matrix.row(i)), system.unknowns)} = {text(system.rhs[i])}"
        for i, word in enumerate(system.equations)
    )
    known = "; ".join(f"V({n}) = {text(v)}" for n, v in system.known.items())
    rec.add(
        "nodal",
        "Write the nodal equations ("
        + "; ".join(system.equations)
        + ")"
        + (f", with {known} fixed by grounded sources" if known else "")
        + " as one matrix equation.",
        equation=(rows_text, f"{matrix_latex} {unknowns_latex} = {rhs_latex}"),
        matrix=system.matrix,
        right=system.rhs,
        unknowns=list(system.unknowns),
    )
    out = {}
    for target in targets:
        k = system.unknowns.index(target)
        symbol = rec.fresh([names.get(target, target.name)], "X")
        rec.add(
            "solve",
            f"Solve for {text(target)} by Cramer's rule: the determinant with "
            f"column {k + 1} replaced by the right-hand side, over the system "
            "determinant (common factors cancelled).",
            symbol,
            solution[target],
            matrix=system.matrix,
            right=system.rhs,
            index=k,
            equation=(
                f"{text(symbol)} = Δ{k + 1}/Δ = {text(solution[target])}",
                rf"{latex(symbol)} = \frac{{\Delta_{{{k + 1}}}}}{{\Delta}} = "
                f"{latex(solution[target])}",
            ),
        )
        rec.forms[symbol] = solution[target]
        out[target] = symbol
    return out


def _row_text(coefficients: list[sympy.Expr], unknowns: list[sympy.Symbol]) -> str:
    out = ""
    for c, u in zip(coefficients, unknowns, strict=True):
        if c == 0:
            continue
        negative = c.could_extract_minus_sign()
        magnitude = -c if negative else c
        term = (
            text(u)
            if magnitude == 1
            else (
                f"{text(magnitude)}·{text(u)}"
                if magnitude.is_Atom
                else f"({text(magnitude)})·{text(u)}"
            )
        )
        out += (" − " if negative else " + ") + term if out else ("−" if negative else "") + term
    return out or "0"


def _bmatrix(cells: list[list[str]]) -> str:
    body = r" \\ ".join(" & ".join(row) for row in cells)
    return r"\begin{bmatrix} " + body + r" \end{bmatrix}"
