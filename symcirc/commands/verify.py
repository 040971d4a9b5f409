"""`symcirc verify NOTE...`: does each design note still match its circuit?

The note's marker names its source (relative to the note's folder), the source's SHA-256,
the format, quantities and template it was written with. The note is written again from
the source as it is now and compared byte for byte. Exit status 0 when every note matches,
1 when one no longer does (what changed is shown: sections, lines, a compact diff), 2 when
a note or its source cannot be read.

A note may come from someone else, so its marker is not trusted: the source it names is
read only inside the note's folder (or `--source-folder DIR`), never through `..`, an
absolute path or a link leading out; `--source FILE` names the circuit instead. A problem in
a source the marker named is reported by place only, never with the file's text. Templates
come only from `--template DIR`: a note whose marker names a template folder is refused
until the folder is given on the command line.
"""

from __future__ import annotations

import argparse
import hashlib
import sys
from pathlib import Path

from ..errors import SymcircError


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("notes", metavar="NOTE", nargs="+",
                        help="design notes written by `symcirc note` (.md, .tex, .html)")
    parser.add_argument("--source", metavar="FILE",
                        help="the circuit file to check the notes against, instead of the one "
                             "their marker names")
    parser.add_argument("--source-folder", metavar="DIR",
                        help="read the sources the markers name from anywhere inside DIR "
                             "(default: only inside each note's own folder)")
    parser.add_argument("--template", metavar="DIR",
                        help="the template folder the notes were written with (a folder named "
                             "in a note's marker is never used on its own)")


def run(args: argparse.Namespace) -> int:
    status = 0
    for note in args.notes:
        try:
            matches, report = verify_note(Path(note), source=args.source,
                                          source_folder=args.source_folder,
                                          template=args.template)
        except SymcircError as err:
            print(err.format(), file=sys.stderr)
            status = 2
            continue
        print(report)
        if not matches and status == 0:
            status = 1
    return status


def verify_note(path: Path, source: str | None = None, source_folder: str | None = None,
                template: str | None = None) -> tuple[bool, str]:
    """(matches, report) for one note; SymcircError when it or its source cannot be read.
    `source`, `source_folder` and `template` are the command line's options."""
    from ..check.notes import NoteProblem, changes, read_marker, unified_diff
    from ..report.note import render_note_for

    text = _read_text(path)
    try:
        marker = read_marker(text)
    except NoteProblem as problem:
        raise SymcircError(str(problem), str(path)) from None
    from_marker = source is None
    circuit = Path(source) if source is not None else _marked_source(path, marker, source_folder)
    if not circuit.is_file():
        if from_marker:
            raise _at_marker(path, marker, f"the note's source '{marker.source}' is missing "
                                           f"(looked for {circuit})")
        raise SymcircError("no such circuit file", source)
    if marker.template is not None and template is None:
        raise _at_marker(path, marker, f"the note was written with the templates of "
                                       f"'{marker.template}' (its marker says so); verify uses "
                                       "only a template folder named on the command line: "
                                       "look at that folder, then pass --template DIR")
    try:
        digest = hashlib.sha256(circuit.read_bytes()).hexdigest()
    except OSError as err:
        raise SymcircError(f"cannot read the circuit: {err.strerror or err}",
                           str(circuit)) from None
    try:
        fresh = render_note_for(circuit, marker.format, marker.quantities, template,
                                output_path=path)
    except SymcircError as err:
        if from_marker and _is_about(err, circuit):  # never show the text of a file a note named
            where = f" (line {err.line}, column {err.column})" if err.line else ""
            raise _at_marker(path, marker, f"the note's source '{marker.source}' cannot be read "
                                           f"as a circuit{where}; see why with: symcirc inspect "
                                           f"{circuit}") from None
        raise
    if fresh == text:
        return True, f"{path}: matches {circuit if source else marker.source}"
    lines = [f"{path}: does not match {circuit if source else marker.source}"]
    if digest != marker.sha256:
        lines.append(f"  the source changed since the note was written "
                     f"(sha256 {marker.sha256[:12]}... now {digest[:12]}...)")
    else:
        lines.append("  the source is unchanged (same sha256): the note was edited, or "
                     f"written by symcirc {marker.version} (this is "
                     f"{_version()})")
    found = changes(text, fresh, marker.format)
    lines += [f"  {line}" for line in found]
    lines.append("  difference (note as written -> as written now):")
    diff = unified_diff(text, fresh, f"{path} (as written)", f"{path} (now)")
    lines += [f"    {line}" for line in diff.splitlines()]
    return False, "\n".join(lines)


def _marked_source(note: Path, marker, source_folder: str | None) -> Path:
    """The source the marker names, relative to the note's folder; refused when it is
    absolute or leads (by `..` or a link) out of the note's folder or `--source-folder`."""
    allowed = Path(source_folder) if source_folder is not None else note.parent
    where = f"'{source_folder}'" if source_folder is not None else "the note's folder"
    refusal = (f"the note's marker names the source '{marker.source}', outside {where}; "
               "verify reads only files inside it: name the circuit with --source FILE, or "
               "allow a folder with --source-folder DIR")
    name = Path(marker.source)
    if not marker.source or name.is_absolute() or "\0" in marker.source:
        raise _at_marker(note, marker, refusal)
    candidate = note.parent / name
    try:
        inside = candidate.resolve().is_relative_to(allowed.resolve())
    except (OSError, RuntimeError, ValueError):
        inside = False
    if not inside:
        raise _at_marker(note, marker, refusal)
    return candidate


def _at_marker(note: Path, marker, message: str) -> SymcircError:
    """An error at the note's marker line (the note is the file the user named)."""
    column = marker.text.find('"source"') + 1 if '"source"' in marker.text else 1
    return SymcircError(message, str(note), marker.line, column, marker.text)


def _is_about(err: SymcircError, circuit: Path) -> bool:
    try:
        return Path(err.file).resolve() == circuit.resolve()
    except (OSError, RuntimeError, ValueError):
        return False


def _read_text(path: Path) -> str:
    if path.exists() and not path.is_file():
        raise SymcircError("not a regular file (a folder, device or FIFO)", str(path))
    try:
        return path.read_bytes().decode("utf-8")
    except FileNotFoundError:
        raise SymcircError("no such note", str(path)) from None
    except UnicodeDecodeError:
        if path.suffix.lower() in (".pdf", ".docx"):
            raise SymcircError(
                f"a {path.suffix[1:].upper()} note cannot be verified: verify the note it was "
                f"made from (`-o {path.stem}.{'tex' if path.suffix.lower() == '.pdf' else 'md'}`"
                " writes it)", str(path)) from None
        raise SymcircError("the note is not UTF-8 text", str(path)) from None
    except OSError as err:
        raise SymcircError(f"cannot read the note: {err.strerror or err}", str(path)) from None


def _version() -> str:
    from .. import __version__

    return __version__
