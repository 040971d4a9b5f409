"""`symcirc verify NOTE...`: does each design note still match its circuit?

The note's marker names its source (relative to the note's folder), the source's SHA-256,
the format, quantities and template it was written with. The note is written again from
the source as it is now and compared byte for byte. Exit status 0 when every note matches,
1 when one no longer does (what changed is shown: sections, lines, a compact diff), 2 when
a note or its source cannot be read.
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


def run(args: argparse.Namespace) -> int:
    status = 0
    for note in args.notes:
        try:
            matches, report = verify_note(Path(note))
        except SymcircError as err:
            print(err.format(), file=sys.stderr)
            status = 2
            continue
        print(report)
        if not matches and status == 0:
            status = 1
    return status


def verify_note(path: Path) -> tuple[bool, str]:
    """(matches, report) for one note; SymcircError when it or its source cannot be read."""
    from ..check.notes import NoteProblem, changes, read_marker, unified_diff
    from ..report.note import render_note_for

    text = _read_text(path)
    try:
        marker = read_marker(text)
    except NoteProblem as problem:
        raise SymcircError(str(problem), str(path)) from None
    folder = path.parent
    source = folder / marker.source
    if not source.is_file():
        raise SymcircError(f"the note's source '{marker.source}' is missing "
                           f"(looked for {source})", str(path))
    digest = hashlib.sha256(source.read_bytes()).hexdigest()
    template = None if marker.template is None else folder / marker.template
    fresh = render_note_for(source, marker.format, marker.quantities, template,
                            output_path=path)
    if fresh == text:
        return True, f"{path}: matches {marker.source}"
    lines = [f"{path}: does not match {marker.source}"]
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


def _read_text(path: Path) -> str:
    try:
        return path.read_bytes().decode("utf-8")
    except FileNotFoundError:
        raise SymcircError("no such note", str(path)) from None
    except UnicodeDecodeError:
        raise SymcircError("the note is not UTF-8 text", str(path)) from None
    except OSError as err:
        raise SymcircError(f"cannot read the note: {err.strerror or err}", str(path)) from None


def _version() -> str:
    from .. import __version__

    return __version__
