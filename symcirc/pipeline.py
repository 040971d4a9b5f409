"""One way from a circuit to every answer: read → check → derive → approximate → forms →
decide claims.

Every command and the Python API go through a `Pipeline`, so a quantity or a claim gives
the same answer wherever it is asked::

    pipeline = Pipeline.load("bridge.circuit")    # read, elaborate, every input check
    for request in pipeline.requests():           # the file's derive statements
        pipeline.derive(request)                  # limits, `>>` approximations, forms
    pipeline.claims()                             # the file's claims, each decided once

The pipeline owns the work done per circuit (`Memo`: its network, solved systems, forms,
responses, cautions), shared by every quantity it derives; the model holds none. Results
leave it sealed: what one command shows, no later stage can change.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace
from pathlib import Path
from typing import TYPE_CHECKING, Any, Literal

from .check.dimensions import check_assumption, check_circuit, claim_problem, symbol_dimensions
from .engine.memo import Memo
from .errors import Location, SymcircError
from .language import syntax
from .model import typeset
from .model.circuit import Assumption, Circuit, Claim

if TYPE_CHECKING:  # pragma: no cover
    import sympy

    from .check.claims import Verdict
    from .quantities.registry import DeriveOptions
    from .results import Result
# Deriving and deciding (and sympy with them) are imported on first use: reading and
# checking a circuit (`symcirc inspect`) needs neither.

COMMAND_LINE = "<command line>"
"""File name shown in errors about a quantity given on the command line (Python's are
`<quantity>`)."""

Status = Literal["holds", "does not hold", "undecided"]


@dataclass(frozen=True)
class Request:
    """One quantity to derive: as parsed, as written (a heading), and how."""

    quantity: syntax.Quantity
    text: str
    options: DeriveOptions


@dataclass(frozen=True)
class ClaimOutcome:
    """A claim decided: its status, the verdict behind it and the derived value it was
    compared with (both in the same symbols)."""

    claim: Claim
    status: Status
    verdict: Verdict
    derived: sympy.Expr
    claimed: sympy.Expr
    problem: str | None
    """A dimension mismatch found in the claim (a note even when it holds)."""

    @property
    def holds(self) -> bool:
        return self.status == "holds"


class Pipeline:
    """A circuit read and checked, and everything derived from it."""

    def __init__(self, circuit: Circuit) -> None:
        check_circuit(circuit)  # what elaboration leaves: `where` clauses, control coefficients
        self.circuit = circuit
        self.memo = Memo()
        self._outcomes: dict[int, ClaimOutcome] = {}

    @classmethod
    def load(cls, path: str | Path) -> Pipeline:
        """Read a `.circuit` file; SymcircError on any problem with it."""
        from .language.parser import read_source

        return cls.parse(read_source(path), str(path))

    @classmethod
    def parse(cls, text: str, filename: str = "<input>") -> Pipeline:
        """Read circuit text; SymcircError on any problem with it."""
        from .language.parser import parse_document
        from .model.elaborate import elaborate

        return cls(elaborate(parse_document(text, filename)))

    # ------------------------------------------------------------ what to derive

    def options(self, clauses: Sequence[Assumption] = (), **fields: Any) -> DeriveOptions:
        """DeriveOptions sharing this pipeline's memo, with `clauses` (`where` clauses read
        with a quantity); `fields` as `quantities.options_from` takes them (DeriveOptions
        fields, `limits={"A": "oo"}`, `where="Rid -> oo"`). Every clause is checked: it names
        a part of the circuit and `big >> small` compares like with like."""
        from .quantities import check_assumptions, options_from

        options = options_from(None, memo=self.memo, **fields)
        if clauses:
            options = replace(options, assumptions=(*options.assumptions, *clauses))
        check_assumptions(self.circuit, options, fields.get("where"))
        for assumption in options.assumptions:
            check_assumption(self.circuit, assumption)
        return options

    def quantity(self, text: str, origin: str = COMMAND_LINE
                 ) -> tuple[syntax.Quantity, list[Assumption]]:
        """A quantity written as text with optional `where` clauses (`V(out) where A -> oo`),
        read by the grammar (errors name `origin`)."""
        from .quantities import read_quantity

        return read_quantity(text, origin)

    def request(self, text: str, *, origin: str = COMMAND_LINE, **fields: Any) -> Request:
        """One quantity written as text (its `where` clauses included); `fields` as for
        `options`."""
        quantity, clauses = self.quantity(text, origin)
        return Request(quantity, text, self.options(clauses, origin=(origin, text), **fields))

    def requests(self, texts: Sequence[str] | None = None, *, origin: str = COMMAND_LINE,
                 **fields: Any) -> list[Request]:
        """The quantities to derive: `texts` (the command line's, each with its `where`
        clauses), else the file's derive statements with theirs; `fields` as for
        `options` (steps, seed, limits, where ...)."""
        if texts:
            return [self.request(text, origin=origin, **fields) for text in texts]
        out = []
        for statement in self.circuit.derives:
            options = self.options(**fields, assumptions=statement.assumptions)
            for quantity, text in zip(statement.quantities, statement.texts, strict=True):
                out.append(Request(quantity, text, options))
        return out

    def derive(self, request: Request) -> list[Result]:
        """The results of one request as every command shows them: canonical (with the
        limits), then the `>>` approximations, then design forms and steps when
        `options.steps`; each proved equal to the canonical result first. Names are set
        with the file's `typeset` forms, in the forms and steps and in `Result.latex()`."""
        with typeset.names(self.circuit.typeset):
            results = self._derive(request)
        return [result.replace(typeset=self.circuit.typeset) for result in results]

    def _derive(self, request: Request) -> list[Result]:
        from .quantities import derive_quantity

        results = derive_quantity(self.circuit, request.quantity, request.options)
        approximations = [a for a in request.options.assumptions if a.kind == "much_greater"]
        if not approximations and not request.options.steps:
            return results
        from .forms import finish
        from .forms.dividers import Unsupported

        try:
            results = finish(self.circuit, request.quantity, results, request.options)
        except Unsupported as problem:
            first = approximations[0] if approximations else None
            where = (first.location if first is not None else None) \
                or Location(self.circuit.file, 0, 0)
            what = f"where {first.symbol} >> {first.target}: " if first is not None else ""
            raise SymcircError.at(where, f"{what}{problem}", self.circuit.source) from None
        return results

    def derive_text(self, text: str, **fields: Any) -> list[Result]:
        """Derive one quantity written as text (the Python API and the documents'
        analyses); `limits` and DeriveOptions fields as for `requests`."""
        (request,) = self.requests([text], **fields)
        return self.derive(request)

    # ------------------------------------------------------------ claims

    def claims(self) -> list[ClaimOutcome]:
        """The file's claims, each decided once (the note, check and verify share them)."""
        return [self.decide(claim) for claim in self.circuit.claims]

    def claim(self, text: str, name: str) -> Claim:
        """A claim `QUANTITY = EXPRESSION` given outside the file (errors name `name`)."""
        from .language.parser import parse_claim
        from .model.expressions import formula_in

        quantity, written, expression_text = parse_claim(text, name)
        expression = formula_in(self.circuit, written, name, text)
        return Claim(quantity, quantity.text, expression, expression_text,
                     Location(name, 1, 1), written, (name, text))

    def decide(self, claim: Claim) -> ClaimOutcome:
        """Decide one claim exactly against its derived quantity, in common symbols."""
        from .check.claims import decide
        from .quantities import derive_quantity

        found = self._outcomes.get(id(claim))
        if found is not None and found.claim is claim:
            return found
        options = self.options(steps=False, origin=claim.origin)
        results = derive_quantity(self.circuit, claim.quantity, options)
        if len(results) != 1:
            names = ", ".join(r.quantity for r in results)
            source = claim.origin[1] if claim.origin else self.circuit.source
            raise SymcircError.at(
                claim.location,
                f"{claim.quantity_text} has {len(results)} parts; claim one of them ({names})",
                source)
        result = results[0]
        derived, claimed = self._common_terms(result.expression, claim.expression)
        dims = symbol_dimensions(self.circuit)
        problem = claim_problem(claim, result.expression, result.unit, dims)
        verdict = decide(claim.quantity_text, derived, claimed, dims, problem,
                         where=(claim.location,
                                claim.origin[1] if claim.origin else self.circuit.source))
        status: Status = "holds" if verdict.holds else (
            "does not hold" if verdict.decided else "undecided")
        outcome = ClaimOutcome(claim, status, verdict, derived, claimed, problem)
        self._outcomes[id(claim)] = outcome
        return outcome

    def _common_terms(self, derived: sympy.Expr, claimed: sympy.Expr
                      ) -> tuple[sympy.Expr, sympy.Expr]:
        """Derived and claimed in the same symbols: where they use different ones (a claim
        in `R0`, `alpha` for `Rt = R0*(1 + alpha*T)`, or in a transformer's name for its
        ratio), both get every definition, which holds by the circuit's own statements."""
        import sympy

        from .quantities.common import expanded_definitions

        if claimed.free_symbols == derived.free_symbols:
            return derived, claimed
        memo = self.memo.of(self.circuit)
        definitions = memo.get("definition symbols")
        if definitions is None:
            definitions = memo["definition symbols"] = {
                sympy.Symbol(name): value
                for name, value in expanded_definitions(self.circuit).items()}
        if not definitions:
            return derived, claimed
        return derived.xreplace(definitions), claimed.xreplace(definitions)
