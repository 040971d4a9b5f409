"""`symcirc inspect FILE [--format text|json]`: show what was read from a circuit file.

The first command a user runs: title, parameters, elements, ports, nodes, directives and
notices, as aligned tables or as one JSON object. Notices also go to stderr as
`FILE:LINE:COL: warning: ...`.
"""

from __future__ import annotations

import argparse
import json
import sys
from difflib import get_close_matches
from typing import TYPE_CHECKING, Any

from ..errors import Location, SymcircError
from ..language import syntax
from ..model.formula import Formula
from ..model.units import as_float, engineering, tolerance_text

if TYPE_CHECKING:
    from ..model.circuit import Circuit, Element, Notice, Parameter, Tolerance
# The model is imported only once a file is read: `inspect --help` starts fast. Reading and
# checking a circuit needs no sympy; it is imported only to show a value written as an
# expression in sympy's text (a parameter's, and the JSON's definitions and claims).


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("file", metavar="FILE", help="the .circuit file to read")
    parser.add_argument("--format", choices=("text", "json"), default="text",
                        help="aligned text tables (default) or one JSON object")


def run(args: argparse.Namespace) -> int:
    from ..pipeline import Pipeline

    circuit = Pipeline.load(args.file).circuit
    circuit.notices = (*circuit.notices, *unknown_quantities(circuit))
    for notice in circuit.notices:
        print(notice_text(notice, circuit), file=sys.stderr)
    if args.format == "json":
        print(json.dumps(as_json(circuit), ensure_ascii=False, indent=2))
    else:
        print(as_text(circuit))
    return 0


def unknown_quantities(circuit: Circuit) -> list[Notice]:
    """Warnings for quantity names no handler derives (`thevnin(out)`): `derive` and
    `check` would stop there, so the first look at the file says so already."""
    from ..model.circuit import Notice
    from ..vocabulary import QUANTITIES

    notices = []
    pending = [q for d in circuit.derives for q in d.quantities]
    pending += [c.quantity for c in circuit.claims]
    while pending:
        quantity = pending.pop()
        pending.extend(a for a in quantity.args if isinstance(a, syntax.Quantity))
        pending.extend(a.left for a in quantity.args if isinstance(a, syntax.Equation))
        if quantity.name not in QUANTITIES:
            close = get_close_matches(quantity.name, list(QUANTITIES), n=1)
            hint = f"; did you mean `{close[0]}`?" if close else ""
            where = Location(circuit.file, quantity.line, quantity.column)
            notices.append(Notice("warning", f"unknown quantity `{quantity.name}`{hint}", where))
    return sorted(notices, key=lambda n: (n.location.line, n.location.column))


def notice_text(notice: Notice, circuit: Circuit) -> str:
    """`FILE:LINE:COL: warning: MESSAGE`, the line and a caret."""
    report = SymcircError.at(notice.location, notice.message, circuit.source)
    if notice.location is None:
        report.file = circuit.file
    return report.format(kind=notice.kind)


# ---------------------------------------------------------------- text


def as_text(circuit: Circuit) -> str:
    """The circuit as an engineer reads it: one titled table per kind of statement."""
    from ..model.circuit import REFERENCE

    parts = [f"{circuit.file}: {circuit.title}" if circuit.title else circuit.file]
    if circuit.parameters:
        parts.append(_section("Parameters", ["name", "value", "nominal", "tolerance",
                                             "description"],
                              [_parameter_row(p) for p in circuit.parameters.values()]))
    if circuit.elements:
        parts.append(_section("Elements", ["name", "kind", "nodes", "value", "nominal",
                                           "tolerance", "description"],
                              [_element_row(e) for e in circuit.elements.values()]))
    if circuit.ports:
        parts.append(_section("Ports", ["name", "nodes", "meaning"], [
            [p.name, f"{p.positive}, {p.negative}",
             f"V({p.name}) = V({p.positive}) - V({p.negative})"]
            for p in circuit.ports.values()
        ]))
    if circuit.nodes:
        reference = f"{REFERENCE} (reference"
        chosen = [alias for alias, node in circuit.aliases.items() if node == REFERENCE]
        reference += f", was {chosen[0]})" if chosen else ")"
        others = [n for n in circuit.nodes if n != REFERENCE]
        parts.append("Nodes\n  " + ", ".join([reference, *others]))
    noise = circuit.noise
    if noise.temperature_written or noise.noiseless or noise.opamps:
        parts.append("Noise\n" + "\n".join(f"  {line}" for line in _noise_lines(circuit)))
    if circuit.typeset:
        parts.append("Typeset\n" + "\n".join(
            f"  {name}  {form}" for name, form in circuit.typeset.items()))
    if circuit.derives:
        lines = []
        for derive in circuit.derives:
            line = ", ".join(derive.texts)
            if derive.assumptions:
                line += " where " + ", ".join(_assumption(a) for a in derive.assumptions)
            lines.append("  " + line)
        parts.append("Derive\n" + "\n".join(lines))
    if circuit.claims:
        parts.append("Claims\n" + "\n".join(
            f"  {c.quantity_text} = {c.expression_text}" for c in circuit.claims
        ))
    if circuit.notices:
        parts.append("Notices\n" + "\n".join(
            f"  {_line(n)}{n.kind}: {n.message}" for n in circuit.notices
        ))
    return "\n\n".join(parts)


def _parameter_row(p: Parameter) -> list[str]:
    value = p.value_formula
    value = "" if value is None or value.rational() is not None else _sstr(value)
    return [p.name, value, _nominal(p.nominal, p.unit), _tolerance(p.tolerance, p.unit),
            p.description or ""]


def _element_row(e: Element) -> list[str]:
    if e.coupled:
        nodes = " ~ ".join(e.coupled)
    else:  # grouped as the kind's terminals are: `p1, n1; p2, n2` for a transformer
        sizes = [len(group) for group in e.entry.terminals]
        starts = [sum(sizes[:i]) for i in range(len(sizes))]
        nodes = "; ".join(", ".join(e.nodes[start:start + size])
                          for start, size in zip(starts, sizes, strict=True))
    if e.controls:
        nominal = "controlled"
    elif e.kind == "opamp" and e.is_ideal_opamp:
        nominal = "ideal"
    else:
        nominal = _nominal(e.nominal, e.unit)
    written = (e.written or "") + (f" at {e.frequency_text}" if e.frequency_text else "")
    return [e.name, e.kind, nodes, written, nominal, _tolerance(e.tolerance, e.unit),
            e.description or ""]


def _nominal(value, unit: str) -> str:
    return "" if value is None else engineering(value, unit)


def _tolerance(tolerance: Tolerance | None, unit: str) -> str:
    if tolerance is None:
        return ""
    return tolerance_text(tolerance.plus, tolerance.minus, tolerance.relative, unit)


def _assumption(a) -> str:
    return f"{a.symbol} -> {a.target}" if a.kind == "limit" else f"{a.symbol} >> {a.target}"


def _line(notice: Notice) -> str:
    return f"line {notice.location.line}: " if notice.location else ""


def _section(title: str, header: list[str], rows: list[list[str]]) -> str:
    used = [i for i in range(len(header)) if any(row[i] for row in rows)]
    table = [[header[i] for i in used], *([row[i] for i in used] for row in rows)]
    widths = [max(len(row[c]) for row in table) for c in range(len(used))]
    lines = ["  " + "  ".join(cell.ljust(w) for cell, w in zip(row, widths, strict=True)).rstrip()
             for row in table]
    return "\n".join([title, *lines])


# ---------------------------------------------------------------- JSON


def _noise_lines(circuit: Circuit) -> list[str]:
    """The noise analyses' temperature, the parts left out and each opamp's densities."""
    from ..model.units import engineering

    noise = circuit.noise
    written = noise.temperature_written
    lines = [f"temperature {engineering(noise.temperature, 'K')}"
             + (f" ({written})" if written else " (the default)")]
    if noise.noiseless:
        lines.append("noiseless " + ", ".join(sorted(noise.noiseless)))
    for opamp in noise.opamps.values():
        densities = [f"{d.symbol} = {d.written}" + (f" corner {d.corner} Hz" if d.corner else "")
                     for d in (opamp.voltage, opamp.current) if d is not None]
        lines.append(f"opamp {opamp.opamp}: " + ", ".join(densities))
    return lines


def _noise_json(circuit: Circuit) -> dict[str, Any]:
    noise = circuit.noise
    return {
        "temperature": float(noise.temperature),
        "temperature_written": noise.temperature_written,
        "noiseless": sorted(noise.noiseless),
        "opamps": [{"opamp": o.opamp, **{which: {"symbol": str(d.symbol), "written": d.written,
                                                   "corner": _sstr(d.corner) if d.corner
                                                   is not None else None}
                                          for which, d in (("en", o.voltage), ("in", o.current))
                                          if d is not None}}
                   for o in noise.opamps.values()],
    }


def as_json(circuit: Circuit) -> dict[str, Any]:
    """The same content as the text, as one JSON-ready object."""
    from ..model.circuit import REFERENCE

    return {
        "file": circuit.file,
        "title": circuit.title,
        "parameters": [_parameter_json(p) for p in circuit.parameters.values()],
        "elements": [_element_json(e) for e in circuit.elements.values()],
        "ports": [
            {"name": p.name, "positive": p.positive, "negative": p.negative,
             "line": p.location.line}
            for p in circuit.ports.values()
        ],
        "nodes": list(circuit.nodes),
        "reference": REFERENCE,
        "reference_chosen": circuit.reference_chosen,
        "typeset": dict(circuit.typeset),
        "aliases": dict(circuit.aliases),
        "noise": _noise_json(circuit),
        "derives": [
            {"quantities": list(d.texts),
             "where": [{"kind": a.kind, "symbol": a.symbol, "target": a.target}
                       for a in d.assumptions],
             "line": d.location.line}
            for d in circuit.derives
        ],
        "claims": [
            {"quantity": c.quantity_text, "expression": _sstr(c.expression_formula),
             "written": c.expression_text, "line": c.location.line}
            for c in circuit.claims
        ],
        "notices": [
            {"kind": n.kind, "message": n.message,
             "line": n.location.line if n.location else None,
             "column": n.location.column if n.location else None}
            for n in circuit.notices
        ],
    }


def _parameter_json(p: Parameter) -> dict[str, Any]:
    return {
        "name": p.name,
        "value": None if p.value_formula is None else _sstr(p.value_formula),
        "nominal": None if p.nominal is None else as_float(p.nominal),
        "nominal_text": _nominal(p.nominal, p.unit) or None,
        "unit": p.unit,
        "tolerance": _tolerance_json(p.tolerance, p.unit),
        "description": p.description,
        "line": p.location.line,
    }


def _element_json(e: Element) -> dict[str, Any]:
    out: dict[str, Any] = {
        "name": e.name,
        "kind": e.kind,
        "nodes": list(e.nodes),
        "value": e.written,
        "definition": None if e.definition_formula is None else _sstr(e.definition_formula),
        "nominal": None if e.nominal is None else as_float(e.nominal),
        "nominal_text": _nominal(e.nominal, e.unit) or None,
        "unit": e.unit,
        "tolerance": _tolerance_json(e.tolerance, e.unit),
        "description": e.description,
        "line": e.location.line,
    }
    if e.controls:
        out["controls"] = [
            {"kind": c.kind, "coefficient": _sstr(c.coefficient_formula),
             **({"nodes": list(c.nodes)} if c.kind == "voltage" else {"element": c.element})}
            for c in e.controls
        ]
        out["independent"] = (None if e.independent_formula is None
                              else _sstr(e.independent_formula))
    frequency = e.frequency_formula
    if frequency is not None:
        number = frequency.rational()
        out["frequency"] = as_float(number) if number is not None else _sstr(frequency)
    if e.coupled:
        out["coupled"] = list(e.coupled)
    if e.kind == "opamp":
        out["ideal"] = e.is_ideal_opamp
    return out


def _tolerance_json(tolerance: Tolerance | None, unit: str) -> dict[str, Any] | None:
    if tolerance is None:
        return None
    return {"plus": as_float(tolerance.plus), "minus": as_float(tolerance.minus),
            "relative": tolerance.relative, "text": _tolerance(tolerance, unit)}


def _sstr(value: Formula | Any) -> str:
    """sympy's plain text of a value (a formula of the model, or a sympy expression such
    as a noise density's): a number or a name as it is, anything else through sympy."""
    if not isinstance(value, Formula):
        import sympy

        return sympy.sstr(value)
    number = value.rational() if value.plain else None
    if number is not None:
        return str(number)
    if value.plain and value.op == "name":
        return value.args[0]
    return str(value)
