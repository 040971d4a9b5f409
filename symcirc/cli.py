"""Command line entry point: `symcirc COMMAND ...`.

Each command lives in `symcirc.commands.<name>` with `add_arguments(parser)` and
`run(args) -> int`; modules are imported only when their command runs (fast start).
Exit status: 0 success, 1 a claim or check that does not hold, 2 bad input or usage.
"""

from __future__ import annotations

import argparse
import importlib
import sys
import textwrap

from .errors import SymcircError, printable

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


def build_parser() -> argparse.ArgumentParser:
    """The top level: `symcirc [--version] COMMAND ...`; the command reads the rest."""
    from . import __version__

    listing = "\n".join(f"  {name:<9} {text}" for name, text in COMMANDS.items())
    parser = _Parser(prog="symcirc", description="Closed-form design equations of linear "
                     "circuits.", epilog=f"commands:\n{listing}\n\n{textwrap.fill(EPILOG, 79)}",
                     formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--version", action="version", version=f"symcirc {__version__}")
    parser.add_argument("command", metavar="COMMAND", choices=list(COMMANDS),
                        help="one of the commands below")
    parser.add_argument("arguments", nargs=argparse.REMAINDER, help=argparse.SUPPRESS)
    return parser


def command_parser(name: str) -> argparse.ArgumentParser:
    """The parser of one command (only its module is imported)."""
    parser = _Parser(prog=f"symcirc {name}", description=COMMANDS[name])
    _module(name).add_arguments(parser)
    return parser


class _Terminal:
    """A text stream that shows control characters as escapes (see errors.printable): what
    a command prints (titles, descriptions, messages) cannot drive the terminal. Binary
    output (`.buffer`) passes unchanged."""

    def __init__(self, stream) -> None:
        self._stream = stream

    def write(self, text: str) -> int:
        return self._stream.write(printable(text))

    def __getattr__(self, name: str):
        return getattr(self._stream, name)


def main(argv: list[str] | None = None) -> int:
    """Run one command; with `argv` None (the command line itself) the process is guarded
    too: a memory ceiling, and Ctrl-C honoured within a second (`symcirc.limits`)."""
    guarded = argv is None
    argv = list(sys.argv[1:] if argv is None else argv)
    streams = sys.stdout, sys.stderr
    sys.stdout, sys.stderr = _Terminal(sys.stdout), _Terminal(sys.stderr)
    try:
        return _main(argv, guarded)
    finally:
        sys.stdout, sys.stderr = streams


def _main(argv: list[str], guarded: bool) -> int:
    try:
        if guarded:
            from .limits import guard_process

            guard_process()
        top = build_parser()
        if not argv:
            top.print_help(sys.stderr)
            return 2
        chosen = top.parse_args(argv)
        # options may stand between positional arguments (`derive FILE --values Q1 Q2`)
        args = command_parser(chosen.command).parse_intermixed_args(chosen.arguments)
        return int(_module(chosen.command).run(args) or 0)
    except SymcircError as err:
        print(err.format(), file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("symcirc: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return 0
    except MemoryError:
        print("symcirc: error: out of memory: the job needs more memory than this process "
              "may use (its ceiling is set by SYMCIRC_MEMORY_LIMIT, e.g. 8G)", file=sys.stderr)
        return 2
    except SystemExit as exit_:
        return int(exit_.code or 0) if isinstance(exit_.code, int) else 2


if __name__ == "__main__":  # pragma: no cover
    raise SystemExit(main())
