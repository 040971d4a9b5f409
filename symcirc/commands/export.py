"""`symcirc export FILE QUANTITY... --lang python|c|numpy [--frequency] [-o OUT]`: the
derived formulas as code, one function per quantity, common subexpressions shared.

With no QUANTITY the file's `derive` statements are exported. `--frequency` replaces `s` by
`j*omega` (the functions take `omega`, complex results). `-o -` or no `-o`: standard output.
"""

from __future__ import annotations

import argparse
from pathlib import Path

from ..errors import SymcircError

LANGUAGES = ("python", "numpy", "c")


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("file", metavar="FILE", help="the .circuit file to read")
    parser.add_argument("quantities", metavar="QUANTITY", nargs="*",
                        help="quantities such as 'thevenin(out)' (default: the file's derive "
                             "statements)")
    parser.add_argument("--lang", choices=LANGUAGES, required=True,
                        help="python (scalars), numpy (arrays) or c (C99)")
    parser.add_argument("--frequency", action="store_true",
                        help="replace s by j*omega: functions of the angular frequency omega")
    parser.add_argument("--substitute", action="store_true",
                        help="replace defined symbols by their definitions")
    parser.add_argument("-o", "--output", metavar="OUT", default="-",
                        help="file to write (default: standard output)")


def run(args: argparse.Namespace) -> int:
    from .. import __version__
    from ..analysis.cautions import assess
    from ..export.functions import functions
    from ..pipeline import Pipeline
    from ..report.files import output_for, write_document

    output = output_for(args.output, [args.file])
    pipeline = Pipeline.load(args.file)
    circuit = pipeline.circuit
    results = _results(pipeline, args)
    units = {e.name: e.unit for e in circuit.elements.values()}
    units.update({p.name: p.unit for p in circuit.parameters.values()})
    units.update(circuit.noise_units())
    units["s"] = "1/s"
    title = circuit.title or Path(args.file).stem
    cautions = assess(circuit, pipeline.memo).lines()
    if args.lang == "c":
        from ..export.c import RESERVED, c_source

        text = c_source(title, Path(args.file).name,
                        functions(results, units, _nominals(circuit), args.frequency, RESERVED),
                        __version__, cautions)
    else:
        from ..export.python import RESERVED, python_module

        text = python_module(title, Path(args.file).name,
                             functions(results, units, _nominals(circuit), args.frequency,
                                       RESERVED), __version__, numpy=args.lang == "numpy",
                             cautions=cautions)
    write_document(output, text)
    return 0


def _nominals(circuit) -> dict:
    return {str(symbol): value for symbol, value in circuit.symbol_nominals().items()}


def _results(pipeline, args) -> list:
    """The results to export, derived as every command derives them (limits and `>>`
    approximations applied; no forms: the code needs the value only)."""
    if not args.quantities and not pipeline.circuit.derives:
        raise SymcircError(f"{args.file} has no derive statements; name the quantities to "
                           f"export, e.g. symcirc export {args.file} 'thevenin(out)' "
                           "--lang c", args.file)
    results = []
    for request in pipeline.requests(args.quantities, substitute=args.substitute, steps=False):
        results += pipeline.derive(request)
    return results
