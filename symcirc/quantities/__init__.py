"""Quantities of a circuit, as in the language's table: the Python entry points.

    derive(circuit, "thevenin(out)")          # list of Result, one per scalar quantity
    thevenin(circuit, "out").impedance        # named API: objects whose attributes are Results

Every quantity name is dispatched through `registry.HANDLERS`.
"""

from __future__ import annotations

import importlib
from dataclasses import dataclass, fields, replace
from difflib import get_close_matches
from typing import Any

from ..errors import Location, SymcircError
from ..language import syntax
from ..model.circuit import Assumption, Circuit
from ..results import Result
from .registry import HANDLERS, DeriveOptions, handler_for

QUANTITY_ORIGIN = "<quantity>"
"""File name shown in errors about a quantity given as text (not from a file)."""

__all__ = [
    "DeriveOptions", "derive", "derive_quantity", "thevenin", "norton", "impedance",
    "admittance", "gain", "twoport",
]


def options_from(options: DeriveOptions | None = None, **kw: Any) -> DeriveOptions:
    """DeriveOptions from keywords: its fields, `limits={"A": "oo", "Rs": "0"}`, and
    `where="Rid -> oo, s -> 0"` (clauses as a file's `where` writes them)."""
    limits = kw.pop("limits", None) or {}
    where = kw.pop("where", None)
    known = {f.name for f in fields(DeriveOptions)}
    unknown = set(kw) - known
    if unknown:
        raise TypeError(f"unknown option(s) {', '.join(sorted(unknown))}; "
                        f"known: {', '.join(sorted(known | {'limits'}))}")
    values = {f.name: getattr(options, f.name) for f in fields(DeriveOptions)} if options else {}
    values.update(kw)
    extra = []
    for symbol, target in limits.items():
        target = str(target)
        if target not in ("oo", "0"):
            raise SymcircError(f"a limit goes to oo or 0, not {target} ({symbol} -> {target})",
                               "<limits>")
        extra.append(Assumption("limit", symbol, target))
    if where:
        from ..language.parser import parse_where

        extra += assumptions_of(parse_where(where, WHERE_ORIGIN), (WHERE_ORIGIN, where))
    values["assumptions"] = (*values.get("assumptions", ()), *extra)
    return DeriveOptions(**values)


WHERE_ORIGIN = "<where>"
"""File name shown in errors about `where` clauses given as a Python argument."""


def assumptions_of(written: tuple[syntax.Assumption, ...], origin: tuple[str, str]
                   ) -> list[Assumption]:
    """`where` clauses read from text, as the model keeps them (`s -> 0` is DC)."""
    from ..errors import Location

    out = []
    for a in written:
        where = Location(origin[0], a.line, a.column)
        if a.kind == "limit":
            target = "oo" if isinstance(a.target, syntax.Name) else "0"
            out.append(Assumption("limit", a.symbol.name, target, where))
        else:
            out.append(Assumption("much_greater", a.symbol.name, a.target.name, where))
    return out


def read_quantity(text: str, origin: str = QUANTITY_ORIGIN
                  ) -> tuple[syntax.Quantity, list[Assumption]]:
    """A quantity written as text with optional `where` clauses (`V(out) where A -> oo`)."""
    from ..language.parser import parse_quantity_where

    quantity, written = parse_quantity_where(text, origin)
    return quantity, assumptions_of(written, (origin, text))


def parse(text: str, origin: str = QUANTITY_ORIGIN) -> syntax.Quantity:
    """A quantity written as text, read by the grammar (errors name `origin` as the file)."""
    from ..language.parser import parse_quantity

    return parse_quantity(text, origin)


def derive(circuit: Circuit, quantity: str | syntax.Quantity,
           options: DeriveOptions | None = None, **kw: Any) -> list[Result]:
    """Derive a quantity (`"thevenin(out)"`, or a parsed one) as a list of Results."""
    clauses: list[Assumption] = []
    if isinstance(quantity, str):
        text = quantity
        quantity, clauses = read_quantity(text)
        kw.setdefault("origin", (QUANTITY_ORIGIN, text))
    options = options_from(options, **kw)
    if clauses:
        options = replace(options, assumptions=(*options.assumptions, *clauses))
    check_assumptions(circuit, options, kw.get("where"))
    return derive_quantity(circuit, quantity, options)


def check_assumptions(circuit: Circuit, options: DeriveOptions, where: str | None = None
                      ) -> None:
    """Every `where` clause names a parameter or element of the circuit (or `s -> ...`)."""
    for assumption in options.assumptions:
        known = assumption.symbol in circuit.parameters or assumption.symbol in circuit.elements \
            or (assumption.symbol == "s" and assumption.kind == "limit")
        if assumption.kind == "much_greater":
            known = known and (assumption.target in circuit.parameters
                               or assumption.target in circuit.elements)
        if not known:
            message = (f"`{assumption.symbol}` in a `where` clause is not a parameter or "
                       "element of this circuit")
            if assumption.location is not None and assumption.location.file != circuit.file:
                source = where if assumption.location.file == WHERE_ORIGIN else \
                    options.origin[1] if options.origin else None
                raise SymcircError.at(assumption.location, message, source)
            raise SymcircError(message, circuit.file)


def derive_quantity(circuit: Circuit, quantity: syntax.Quantity,
                    options: DeriveOptions) -> list[Result]:
    """Dispatch a parsed quantity to its handler (registry.HANDLERS)."""
    target = handler_for(quantity)
    if target is None:
        close = get_close_matches(quantity.name, list(HANDLERS), n=1)
        hint = f"; did you mean `{close[0]}`?" if close else ""
        origin = options.origin or (circuit.file, circuit.source)
        raise SymcircError.at(Location(origin[0], quantity.line, quantity.column),
                              f"unknown quantity `{quantity.name}(..)`{hint}", origin[1])
    module, function = target.split(":")
    handler = getattr(importlib.import_module(module), function)
    results = handler(circuit, quantity, options)
    from .stability import add_warnings

    results = add_warnings(circuit, results, options.memo)
    origin = options.origin or (circuit.file, circuit.source)
    where = (Location(origin[0], quantity.line, quantity.column), origin[1])
    return [result if result.origin is not None else result.replace(origin=where)
            for result in results]


# ---------------------------------------------------------------- the named API


def _single(results: list[Result]) -> Result:
    (result,) = results
    return result


@dataclass(frozen=True)
class Thevenin:
    """The Thevenin equivalent at a port: `.voltage` (open circuit) and `.impedance`."""

    voltage: Result
    impedance: Result

    def _repr_latex_(self) -> str:
        return _latex_lines(self.voltage, self.impedance)

    def _repr_html_(self) -> str | None:
        return _html_parts(self.voltage, self.impedance)


@dataclass(frozen=True)
class Norton:
    """The Norton equivalent at a port: `.current` (short circuit) and `.admittance`."""

    current: Result
    admittance: Result

    def _repr_latex_(self) -> str:
        return _latex_lines(self.current, self.admittance)

    def _repr_html_(self) -> str | None:
        return _html_parts(self.current, self.admittance)


class TwoPort:
    """Two-port parameters as attributes (`.z11`, `.y21`, `.h12`, `.A` ...); a set that does
    not exist raises SymcircError saying why."""

    def __init__(self, results: list[Result], missing: str | None) -> None:
        self._results = {r.part: r for r in results}
        self._missing = missing

    @classmethod
    def of(cls, results: list[Result]) -> TwoPort:
        """The parameters of `twoport(p1, p2)`'s results (a set that does not exist says
        why in the first result's notes)."""
        missing = next((n for n in results[0].notes if n.startswith("twoport(")), None) \
            if results else None
        return cls(results, missing)

    @property
    def results(self) -> list[Result]:
        return list(self._results.values())

    def __getattr__(self, name: str) -> Result:
        if name.startswith("_"):
            raise AttributeError(name)
        try:
            return self._results[name]
        except KeyError:
            from .twoports import UNITS

            if name in UNITS:
                message = self._missing or f"no parameter {name}"
                first = next(iter(self._results.values()), None)
                if first is None or first.origin is None:
                    raise SymcircError(message, QUANTITY_ORIGIN) from None
                location, source = first.origin
                raise SymcircError.at(location, message, source) from None
            raise AttributeError(name) from None

    def _repr_latex_(self) -> str:
        return _latex_lines(*self._results.values())

    def _repr_html_(self) -> str | None:
        return _html_parts(*self._results.values())


def _html_parts(*results: Result) -> str | None:
    """The HTML of each part one after the other, when the results have one (a circuit's
    methods give such results); None otherwise, and Jupyter shows the LaTeX."""
    shown = [getattr(result, "_repr_html_", None) for result in results]
    if not shown or not all(shown):
        return None
    return "\n".join(show() for show in shown)


def _latex_lines(*results: Result) -> str:
    body = r" \\ ".join(f"{r.quantity_latex()} &= {r.latex()}" for r in results)
    return r"$\displaystyle \begin{aligned}" + body + r"\end{aligned}$"


def thevenin(circuit: Circuit, port: str, **options: Any) -> Thevenin:
    voltage, impedance = derive(circuit, f"thevenin({port})", **options)
    return Thevenin(voltage, impedance)


def norton(circuit: Circuit, port: str, **options: Any) -> Norton:
    current, admittance = derive(circuit, f"norton({port})", **options)
    return Norton(current, admittance)


def impedance(circuit: Circuit, port: str, **options: Any) -> Result:
    return _single(derive(circuit, f"Z({port})", **options))


def admittance(circuit: Circuit, port: str, **options: Any) -> Result:
    return _single(derive(circuit, f"Y({port})", **options))


def gain(circuit: Circuit, source: str, quantity: str, **options: Any) -> Result:
    return _single(derive(circuit, f"gain({source}, {quantity})", **options))


def twoport(circuit: Circuit, port1: str, port2: str, **options: Any) -> TwoPort:
    return TwoPort.of(derive(circuit, f"twoport({port1}, {port2})", **options))
