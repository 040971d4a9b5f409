"""`symcirc check FILE ["QUANTITY = EXPRESSION" ...]`: are hand-derived formulas right?

Each claim (the file's `claim` statements when none is given) is decided exactly against
the derived quantity. A claim that holds prints `QUANTITY holds`; one that does not prints
a counterexample, the simplified ratio and difference, and a diagnosis. Exit status 0 when
every claim holds, 1 when one does not (or cannot be decided), 2 on bad input.
"""

from __future__ import annotations

import argparse
from dataclasses import dataclass
from fractions import Fraction

import sympy

from ..errors import Location, SymcircError

SHOWN_CHARACTERS = 400
"""Longer expressions are shown in part."""


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("file", metavar="FILE", help="the .circuit file to read")
    parser.add_argument("claims", metavar="CLAIM", nargs="*",
                        help="'QUANTITY = EXPRESSION', e.g. 'gain(Uin, out) = -Rf/Rg' "
                             "(default: the file's claim statements)")


@dataclass(frozen=True)
class Claim:
    """A claim to check, from the file or the command line."""

    quantity: object  # syntax.Quantity
    written: object  # syntax.Expr: numbers keep their units
    expression: sympy.Expr
    expression_text: str
    location: Location
    source: str
    """Text `location` refers to (the file, or the claim itself)."""
    origin: tuple[str, str] | None
    """(file name, text) for errors in the quantity; None: the circuit's file."""


def run(args: argparse.Namespace) -> int:
    from .. import load
    from ..check.dimensions import check_circuit

    circuit = load(args.file)
    check_circuit(circuit)
    claims = _command_line_claims(circuit, args.claims) if args.claims else _file_claims(circuit)
    if not claims:
        raise SymcircError(f"{args.file} has no claim statements; give claims on the command "
                           f"line, e.g. symcirc check {args.file} 'Z(out) = R1 + R2'", args.file)
    status = 0
    for claim in claims:
        holds, report = check_claim(circuit, claim)
        print(report)
        if not holds:
            status = 1
    return status


def _file_claims(circuit) -> list[Claim]:
    from ..language import syntax
    from ..language.parser import parse_document

    written = {
        st.line: st.expression
        for st in parse_document(circuit.source, circuit.file).statements
        if isinstance(st, syntax.ClaimStatement)
    }
    return [
        Claim(c.quantity, written.get(c.location.line), c.expression, c.expression_text,
              c.location, circuit.source, None)
        for c in circuit.claims
    ]


def _command_line_claims(circuit, texts: list[str]) -> list[Claim]:
    from ..language.parser import parse_claim
    from ..model.expressions import expression_in

    claims = []
    for number, text in enumerate(texts, 1):
        name = f"<claim {number}>"
        quantity, written, expression_text = parse_claim(text, name)
        expression = expression_in(circuit, written, name, text)
        claims.append(Claim(quantity, written, expression, expression_text,
                            Location(name, 1, 1), text, (name, text)))
    return claims


def check_claim(circuit, claim: Claim) -> tuple[bool, str]:
    """(holds, the report to print) for one claim."""
    from ..check.claims import decide
    from ..check.dimensions import symbol_dimensions
    from ..quantities import derive_quantity
    from ..quantities.registry import DeriveOptions

    results = derive_quantity(circuit, claim.quantity,
                              DeriveOptions(steps=False, origin=claim.origin))
    if len(results) != 1:
        names = ", ".join(r.quantity for r in results)
        raise SymcircError.at(
            claim.location,
            f"{claim.quantity.text} has {len(results)} parts; claim one of them ({names})",
            claim.source)
    result = results[0]
    derived, claimed = _common_terms(circuit, result.expression, claim.expression)
    dims = symbol_dimensions(circuit)
    problem = _dimension_problem(circuit, claim, result, dims)
    verdict = decide(claim.quantity.text, derived, claimed, dims, problem)
    if verdict.holds:
        report = f"{claim.quantity.text} holds"
        if problem:
            report += f"\n    note: {problem}"
        return True, report
    return False, _failure_report(claim, derived, verdict)


def _common_terms(circuit, derived: sympy.Expr, claimed: sympy.Expr):
    """Derived and claimed in the same symbols: when the claim uses the parameters of a
    defined element (`R0`, `alpha` for `Rt = R0*(1 + alpha*T)`), both get the definitions."""
    definitions = circuit.definitions()
    if not definitions:
        return derived, claimed
    defined_in = set().union(*(d.free_symbols for d in definitions.values()))
    if not (claimed.free_symbols - derived.free_symbols) & defined_in:
        return derived, claimed
    for _ in range(len(definitions) + 1):  # definitions may name other defined elements
        derived, claimed = derived.xreplace(definitions), claimed.xreplace(definitions)
    return derived, claimed


def _dimension_problem(circuit, claim: Claim, result, dims) -> str | None:
    """A dimension mismatch inside the claim or against the quantity, as a sentence."""
    from ..check.dimensions import (
        DimensionMismatch,
        describe,
        parse_unit,
        sympy_dimension,
        syntax_dimension,
    )

    try:
        if claim.written is not None:
            found = syntax_dimension(claim.written, dims)
        else:
            found = sympy_dimension(claim.expression, dims)
    except DimensionMismatch as mismatch:
        where = ""
        if mismatch.node is not None:
            where = f" (at {claim.location.file}:{mismatch.node.line}:{mismatch.node.column})"
        return mismatch.message + where
    try:
        expected = sympy_dimension(result.expression, dims)
    except DimensionMismatch:
        expected = None
    if expected is None:
        expected = parse_unit(result.unit) if result.unit else None
    if found is None or expected is None or found == expected:
        return None
    claimed = "dimensionless" if found.dimensionless else f"in {describe(found)}"
    wanted = "dimensionless" if expected.dimensionless else f"in {describe(expected)}"
    return f"wrong dimension: the claim is {claimed}, but {claim.quantity.text} is {wanted}"


def _failure_report(claim: Claim, derived: sympy.Expr, verdict) -> str:
    where = claim.location
    head = f"{where.file}:{where.line}:{where.column}: " if where.line else ""
    status = "does not hold" if verdict.decided else "could not be decided"
    lines = [f"{head}{claim.quantity.text} {status}",
             f"    claimed: {_shorten(claim.expression_text)}",
             f"    derived: {_shorten(sympy.sstr(derived))}"]
    if verdict.reason:
        lines.append(f"    {verdict.reason}")
    if verdict.counterexample is not None:
        example = verdict.counterexample
        at = ", ".join(f"{n} = {v}" for n, v in example.values.items())
        lines.append(f"    counterexample: at {at}: claimed {_number(example.claimed)}, "
                     f"derived {_number(example.derived)}")
    if verdict.ratio is not None:
        lines.append(f"    claimed / derived = {_shorten(verdict.ratio)}")
    if verdict.difference is not None:
        lines.append(f"    claimed - derived = {_shorten(verdict.difference)}")
    if verdict.diagnosis:
        lines.extend(f"    diagnosis: {d}" for d in verdict.diagnosis)
    elif verdict.decided:
        lines.append("    diagnosis: none of sign, constant factor, swapped parts, missing or "
                     "extra term, limit or equality of parts explains the difference")
    return "\n".join(lines)


def _number(value) -> str:
    if isinstance(value, sympy.Rational):
        value = Fraction(int(value.p), int(value.q))
    if isinstance(value, Fraction):
        if value.denominator == 1:
            return str(value.numerator)
        return f"{value} (≈ {float(value):.6g})"
    approx = complex(value.evalf(15))
    shown = f"{approx.real:.6g}" if approx.imag == 0 else f"{approx:.6g}"
    return f"{sympy.sstr(value)} (≈ {shown})" if not value.is_Float else shown


def _shorten(text: str) -> str:
    if len(text) <= SHOWN_CHARACTERS:
        return text
    return text[:SHOWN_CHARACTERS] + f"... ({len(text)} characters)"


