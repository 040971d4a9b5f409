"""`symcirc sheet FILE... -o OUT.{md,tex,html,pdf,docx}`: write a formula sheet of one or more
circuits."""

from __future__ import annotations

import argparse


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("files", nargs="+", metavar="FILE", help="circuit files")
    parser.add_argument("-o", "--output", required=True, metavar="OUT",
                        help="the sheet: OUT.md, OUT.tex, OUT.html, OUT.pdf (with pdflatex) or "
                             "OUT.docx (with pandoc); '-' for standard output")
    parser.add_argument("--format",
                        choices=("markdown", "md", "latex", "tex", "html", "pdf", "docx"),
                        help="the format when the extension does not tell it")
    parser.add_argument("--template", metavar="DIR",
                        help="a folder of templates that override the built-in ones")


def run(args: argparse.Namespace) -> int:
    from ..report.files import format_of, output_for, write_document
    from ..report.sheet import render_sheet_for

    output = output_for(args.output, args.files, args.template)
    fmt = format_of(output, args.format, ("markdown", "latex", "html", "pdf", "docx"))
    write_document(output, render_sheet_for(args.files, fmt, args.template, progress=True), fmt)
    return 0
