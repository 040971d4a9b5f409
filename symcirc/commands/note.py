"""`symcirc note FILE -o OUT.{md,tex,html,pdf,docx} [QUANTITY ...]`: write a design note."""

from __future__ import annotations

import argparse
import sys


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("file", metavar="FILE", help="the circuit file")
    parser.add_argument("quantities", nargs="*", metavar="QUANTITY",
                        help="quantities to show (default: the file's derive statements)")
    parser.add_argument("-o", "--output", required=True, metavar="OUT",
                        help="the note: OUT.md, OUT.tex, OUT.html, OUT.pdf (with pdflatex) or "
                             "OUT.docx (with pandoc); '-' for standard output")
    parser.add_argument("--format",
                        choices=("markdown", "md", "latex", "tex", "html", "pdf", "docx"),
                        help="the format when the extension does not tell it")
    parser.add_argument("--template", metavar="DIR",
                        help="a folder of templates that override the built-in ones")


def run(args: argparse.Namespace) -> int:
    from ..report.files import format_of, output_for
    from ..report.note import write_note

    output = output_for(args.output, [args.file], args.template)
    fmt = format_of(output, args.format, ("markdown", "latex", "html", "pdf", "docx"))
    note = write_note(args.file, fmt, output, args.quantities or None, args.template)
    failing = [c for c in note.claims if c.status != "holds"]
    for claim in failing:
        print(f"{args.file}:{claim.line}: warning: claim {claim.quantity} {claim.status}",
              file=sys.stderr)
    return 0
