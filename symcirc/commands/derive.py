"""`symcirc derive FILE [QUANTITY ...]`: quantities of a circuit as exact closed forms.

With no QUANTITY, the file's `derive` statements (with their `where` clauses) are derived;
`where big >> small` approximations and, with `--steps`, design forms and derivation steps
come from symcirc.forms.
Formats: `text` (`quantity = expression` lines), `latex`, `markdown`, `json` (one object:
file, title, results). `--values` adds each result's nominal value, or why it has none;
`--seed N` seeds the Monte Carlo part of `tolerance(..)`.
"""

from __future__ import annotations

import argparse
import json
import sys
from typing import TYPE_CHECKING

from ..errors import SymcircError

if TYPE_CHECKING:  # results import sympy: `derive --help` starts fast without them
    from ..results import Result

FORMATS = ("text", "latex", "markdown", "json")
COMMAND_LINE = "<command line>"
"""File name shown in errors about a QUANTITY argument."""


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("file", metavar="FILE", help="the .circuit file to read")
    parser.add_argument("quantities", metavar="QUANTITY", nargs="*",
                        help="quantities such as 'thevenin(out)' or 'gain(Uin, out)' (default: "
                             "the file's derive statements)")
    parser.add_argument("--format", choices=FORMATS, default="text",
                        help="output format (default: text)")
    parser.add_argument("--substitute", action="store_true",
                        help="replace defined symbols by their definitions")
    parser.add_argument("--values", action="store_true",
                        help="show each result's value at the nominal part values")
    parser.add_argument("--steps", dest="steps", action="store_true", default=False,
                        help="add design forms and derivation steps where available")
    parser.add_argument("--no-steps", dest="steps", action="store_false",
                        help="only the canonical closed forms (default)")
    parser.add_argument("--seed", type=int, default=None, metavar="N",
                        help="Monte Carlo seed for tolerance(..) (default: the analysis' fixed "
                             "seed, so that runs repeat)")


def run(args: argparse.Namespace) -> int:
    from ..pipeline import Pipeline

    pipeline = Pipeline.load(args.file)
    circuit = pipeline.circuit
    for notice in circuit.notices:
        print(_notice(notice, circuit), file=sys.stderr)
    if not args.quantities and not circuit.derives:
        raise SymcircError(f"{args.file} has no derive statements; name the quantities on "
                           f"the command line, e.g. symcirc derive {args.file} "
                           "'thevenin(out)'", args.file)
    requests = pipeline.requests(args.quantities, origin=COMMAND_LINE,
                                 substitute=args.substitute, steps=args.steps, seed=args.seed)
    results: list[Result] = []
    for request in requests:
        results += pipeline.derive(request)
    if args.values:
        results = [_with_stability(circuit, result) for result in results]
    write = {"text": as_text, "latex": as_latex, "markdown": as_markdown, "json": as_json}
    if args.values:
        _print_cautions(circuit, results, pipeline.memo)
    print(write[args.format](circuit, results, args.values))
    return 0


def _print_cautions(circuit, results: list[Result], memo) -> None:
    """The circuit's safety cautions and those beside hazardous values, on standard error."""
    from ..analysis.cautions import assess, value_caution

    assessment = assess(circuit, memo)
    for line in assessment.lines():
        print(f"{circuit.file}: {line}", file=sys.stderr)
    for result in results:
        caution = value_caution(result.nominal, result.unit, assessment.ac)
        if caution is not None:
            print(f"{circuit.file}: Caution: {result.quantity} {value_text(result)}: {caution}.",
                  file=sys.stderr)


STABILITY_TERMS = 2000
"""Largest response (numerator plus denominator terms) whose poles `--values` checks."""


def _with_stability(circuit, result: Result) -> Result:
    """With --values, a response in s whose other symbols all have values says so when a pole
    lies in the right half-plane (the design forms say it too, with --steps)."""
    if result.missing != ("s",) or any(n.startswith("Unstable") for n in result.notes):
        return result
    size = getattr(result.exact, "size", None)
    if size is not None and sum(size()) > STABILITY_TERMS:
        return result
    from ..analysis.response import Response, ResponseError

    try:
        words = Response.of(result.expression).stability(circuit.symbol_nominals())
    except ResponseError:
        return result
    if not words:
        return result
    return result.with_notes(words)


def _notice(notice, circuit) -> str:
    report = SymcircError.at(notice.location, notice.message, circuit.source)
    if notice.location is None:
        report.file = circuit.file
    return report.format(kind=notice.kind)


# ---------------------------------------------------------------- values


def value_text(result: Result) -> str:
    """`≈ 1.234 kΩ`, or why there is no value."""
    from ..model.units import engineering

    exact = result.nominal_exact
    if exact is not None:
        return "≈ " + engineering(exact, result.unit)
    if not result.missing:
        return "no single real value at the nominal values (complex: see the notes)"
    missing = [n for n in result.missing if n != "s"]
    if "s" in result.missing and not missing:
        return "no nominal value: it depends on s (a function of frequency)"
    if "s" in result.missing:
        return f"no nominal value: it depends on s, and {_names(missing)} " \
               f"{'has' if len(missing) == 1 else 'have'} no value"
    return f"no nominal value: {_names(missing)} {'has' if len(missing) == 1 else 'have'} " \
           "no value"


def _names(names: list[str]) -> str:
    return ", ".join(names)


# ---------------------------------------------------------------- formats


def as_text(circuit, results: list[Result], values: bool) -> str:
    lines = []
    for result in results:
        line = f"{result.quantity} = {result.text()}"
        if values:
            line += f"    {value_text(result)}"
        lines.append(line)
        if _design_form(result):
            lines.append(f"  design form: {result.form.text}")
            for name, described in (getattr(result.form, "parameters", None) or {}).items():
                value = _parameter_value(described)
                lines.append(f"    {name} = {described.get('text', '')}{value}")
        if result.steps:
            from ..forms import steps_text

            lines.extend("  " + step for step in steps_text(result).splitlines())
        lines.extend(f"  note: {n}" for n in result.notes)
    return "\n".join(lines)


def as_latex(circuit, results: list[Result], values: bool) -> str:
    blocks = []
    for result in results:
        body = f"{result.quantity_latex()} = {result.latex()}"
        if _design_form(result):
            body += f" = {result.form.latex}"
        if values:
            body += r" \quad \text{(" + _latex_text(value_text(result)) + ")}"
        blocks.append("\\begin{equation*}\n" + body + "\n\\end{equation*}")
        definitions = _definitions(result)
        if definitions:
            rows = " \\\\\n".join(f"{name} &= {latex}" for name, latex, _ in definitions)
            blocks.append("\\begin{align*}\n" + rows + "\n\\end{align*}")
        for k, step in enumerate(result.steps, 1):
            blocks.append(f"% step {k}: {step.sentence}")
            if step.latex:
                blocks.append("\\begin{equation*}\n" + step.latex + "\n\\end{equation*}")
        blocks.extend(f"% note: {n}" for n in result.notes)
    return "\n".join(blocks)


def _design_form(result: Result) -> bool:
    """True when the result has a design form other than its canonical result (which is
    attached as the form when it is the shortest, and is shown once)."""
    return result.form is not None and getattr(result.form, "kind", "") != "canonical"


_PARAMETER_LATEX = {"ω": r"\omega", "ζ": r"\zeta"}


def _parameter_value(described: dict) -> str:
    """`    ≈ 1.592 kHz` for a design-form parameter with a nominal value, else ''."""
    from ..model.units import eng

    nominal = described.get("nominal")
    return "" if nominal is None else f"    ≈ {eng(nominal, described.get('unit', ''))}"


def _definitions(result: Result) -> list[tuple[str, str, str]]:
    """(LaTeX name, LaTeX closed form, nominal text) of each design-form parameter."""
    from ..model.units import eng

    parameters = getattr(result.form, "parameters", None) or {}
    out = []
    for name, described in parameters.items():
        head, tail = name[:1], name[1:]
        symbol = _PARAMETER_LATEX.get(head, head) + (f"_{{{tail}}}" if tail else "")
        nominal = described.get("nominal")
        value = "" if nominal is None else eng(nominal, described.get("unit", ""))
        out.append((symbol, described["latex"], value))
    return out


def _latex_text(text: str) -> str:
    for char, escaped in (("\\", r"\textbackslash{}"), ("_", r"\_"), ("%", r"\%"),
                          ("&", r"\&"), ("#", r"\#"), ("$", r"\$"), ("{", r"\{"), ("}", r"\}"),
                          ("≈", r"$\approx$"), ("Ω", r"$\Omega$"), ("µ", r"$\mu$")):
        text = text.replace(char, escaped)
    return text


def as_markdown(circuit, results: list[Result], values: bool) -> str:
    from ..report.filters import escape_md

    parts = [f"# {escape_md(circuit.title or circuit.file)}"]
    for result in results:
        parts.append(f"**`{result.quantity}`**")
        parts.append(f"$$\n{result.latex()}\n$$")
        if _design_form(result):
            parts.append(f"Design form: ${result.form.latex}$")
            definitions = _definitions(result)
            if definitions:
                parts.append("where\n\n" + "\n".join(
                    f"- ${name} = {latex}$" + (f" ≈ {value}" if value else "")
                    for name, latex, value in definitions))
        if values:
            parts.append(value_text(result))
        if result.steps:
            parts.append("\n".join(
                f"{k}. {escape_md(step.sentence)}" + (f" ${step.latex}$" if step.latex else "")
                for k, step in enumerate(result.steps, 1)))
        parts.extend(f"> {escape_md(n)}" for n in result.notes)
    return "\n\n".join(parts)


def as_json(circuit, results: list[Result], values: bool) -> str:
    from ..analysis.cautions import assess, value_caution

    assessment = assess(circuit)
    shown = []
    for result in results:
        item = result.to_json()
        caution = value_caution(result.nominal, result.unit, assessment.ac)
        if caution is not None:
            item["caution"] = caution
        shown.append(item)
    return json.dumps({"file": circuit.file, "title": circuit.title, "results": shown,
                       **assessment.to_json()}, ensure_ascii=False, indent=2)
