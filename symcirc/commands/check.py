"""`symcirc check FILE ["QUANTITY = EXPRESSION" ...]`: are hand-derived formulas right?

Each claim (the file's `claim` statements when none is given) is decided exactly against
the derived quantity. A claim that holds prints `QUANTITY holds`; one that does not prints
a counterexample, the simplified ratio and difference, and a diagnosis. Exit status 0 when
every claim holds, 1 when one does not (or cannot be decided), 2 on bad input.
"""

from __future__ import annotations

import argparse
from fractions import Fraction
from typing import TYPE_CHECKING

from ..errors import SymcircError

if TYPE_CHECKING:  # pragma: no cover  (sympy is imported on use: `check --help` starts fast)
    import sympy

    from ..model.circuit import Claim
    from ..pipeline import ClaimOutcome

SHOWN_CHARACTERS = 400
"""Longer expressions are shown in part."""


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("file", metavar="FILE", help="the .circuit file to read")
    parser.add_argument("claims", metavar="CLAIM", nargs="*",
                        help="'QUANTITY = EXPRESSION', e.g. 'gain(Uin, out) = -Rf/Rg' "
                             "(default: the file's claim statements)")


def run(args: argparse.Namespace) -> int:
    from ..pipeline import Pipeline

    pipeline = Pipeline.load(args.file)
    if args.claims:
        claims = [pipeline.claim(text, f"<claim {number}>")
                  for number, text in enumerate(args.claims, 1)]
    else:
        claims = list(pipeline.circuit.claims)
    if not claims:
        raise SymcircError(f"{args.file} has no claim statements; give claims on the command "
                           f"line, e.g. symcirc check {args.file} 'Z(out) = R1 + R2'", args.file)
    status = 0
    for claim in claims:
        outcome = pipeline.decide(claim)
        print(report(outcome))
        if not outcome.holds:
            status = 1
    return status


def report(outcome: ClaimOutcome) -> str:
    """What `check` prints for one decided claim."""
    if outcome.holds:
        text = f"{outcome.claim.quantity_text} holds"
        if outcome.problem:
            text += f"\n    note: {outcome.problem}"
        return text
    return _failure_report(outcome.claim, outcome.derived, outcome.verdict)


def _failure_report(claim: Claim, derived: sympy.Expr, verdict) -> str:
    import sympy

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
    import sympy

    from ..model.units import eng

    if isinstance(value, sympy.Rational):
        value = Fraction(int(value.p), int(value.q))
    if isinstance(value, Fraction):
        if value.denominator == 1:
            return str(value.numerator)
        return f"{value} (≈ {eng(value)})"
    approx = complex(value.evalf(15))
    shown = eng(approx.real) if approx.imag == 0 else \
        f"{eng(approx.real)} {'−' if approx.imag < 0 else '+'} j·{eng(abs(approx.imag))}"
    return f"{sympy.sstr(value)} (≈ {shown})" if not value.is_Float else shown


def _shorten(text: str) -> str:
    if len(text) <= SHOWN_CHARACTERS:
        return text
    return text[:SHOWN_CHARACTERS] + f"... ({len(text)} characters)"


