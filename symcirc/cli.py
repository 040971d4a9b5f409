"""Command line entry point: `symcirc COMMAND ...`.

Each command lives in `symcirc.commands.<name>` with `add_arguments(parser)` and
`run(args) -> int`; modules are imported only when their command runs (fast start).
Exit status: 0 success, 1 a claim or check that does not hold, 2 bad input or usage.
"""

from __future__ import annotations

import argparse
import importlib
import sys

from .errors import SymcircError

COMMANDS: dict[str, str] = {
    "inspect": "show what was read from a circuit file",
    "derive": "derive quantities as closed forms",
    "note": "write a design note (Markdown, LaTeX or HTML)",
    "sheet": "write a formula sheet for one or more circuits",
    "check": "check hand-derived claims against the circuit",
    "verify": "check that a design note still matches its circuit",
    "export": "write derived formulas as Python, numpy or C code",
    "plot": "plot a quantity (frequency response, spreads, loading)",
}


class _Parser(argparse.ArgumentParser):
    def error(self, message: str) -> None:  # usage errors exit 2, like bad input
        self.print_usage(sys.stderr)
        print(f"{self.prog}: error: {message}", file=sys.stderr)
        raise SystemExit(2)


def _module(name: str):
    return importlib.import_module(f"symcirc.commands.{name}")


EPILOG = ("The circuit language is specified in docs/language.md of the project (statements, "
          "values, units, tolerances, sign conventions, blocks, quantities, directives, "
          "errors); `symcirc COMMAND --help` describes each command.")


def build_parser(argv: list[str]) -> argparse.ArgumentParser:
    parser = _Parser(prog="symcirc", description="Closed-form design equations of linear circuits.",
                     epilog=EPILOG)
    from . import __version__

    parser.add_argument("--version", action="version", version=f"symcirc {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    # Only the chosen command's module is imported; the others are listed by name.
    chosen = next((a for a in argv if a in COMMANDS), None)
    for name, help_text in COMMANDS.items():
        p = sub.add_parser(name, help=help_text, description=help_text)
        if name == chosen:
            _module(name).add_arguments(p)
    return parser


def main(argv: list[str] | None = None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    try:
        parser = build_parser(argv)
        args = parser.parse_args(argv)
        if not args.command:
            parser.print_help(sys.stderr)
            return 2
        return int(_module(args.command).run(args) or 0)
    except SymcircError as err:
        print(err.format(), file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("symcirc: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return 0
    except SystemExit as exit_:
        return int(exit_.code or 0) if isinstance(exit_.code, int) else 2


if __name__ == "__main__":  # pragma: no cover
    raise SystemExit(main())
