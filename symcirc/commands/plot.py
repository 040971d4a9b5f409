"""`symcirc plot FILE QUANTITY -o OUT.{png,svg}`: a figure of one quantity.

A transfer function gives magnitude and phase against frequency; `tolerance(Q)` a Monte
Carlo histogram with the worst-case bounds; `sensitivities(Q)` bars; `loading(port, Z)` and
`minimum_load(port, error)` the loading error against the load resistance.
"""

from __future__ import annotations

import argparse
from pathlib import Path

from ..errors import SymcircError


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("file", metavar="FILE", help="the .circuit file to read")
    parser.add_argument("quantity", metavar="QUANTITY",
                        help="e.g. 'gain(Uin, out)', 'tolerance(V(out))', 'loading(out, 10 kΩ)'")
    parser.add_argument("-o", "--output", required=True, metavar="OUT",
                        help="the figure to write: .png or .svg")
    parser.add_argument("--seed", type=int, default=None,
                        help="Monte Carlo seed for tolerance(..) (default: the fixed default)")


def run(args: argparse.Namespace) -> int:
    from ..analysis.plots import FORMATS, plot
    from ..output import check_target
    from ..pipeline import COMMAND_LINE, Pipeline

    output = Path(args.output)
    if output.suffix.lower() not in FORMATS:
        raise SymcircError(f"the figure is written as .png or .svg, not "
                           f"`{output.suffix or output.name}`", str(output))
    check_target(output, [args.file])  # before the work: a link, device or the input itself
    pipeline = Pipeline.load(args.file)
    request = pipeline.request(args.quantity, origin=COMMAND_LINE, seed=args.seed,
                               steps=False)
    plot(pipeline.circuit, request.quantity, request.options, output)
    return 0
