"""Writing documents safely: the whole file or nothing (temporary file, then rename), never
over an input file, never outside the folder the output was written to; `-o -` is stdout.
"""

from __future__ import annotations

import os
import sys
import tempfile
from collections.abc import Iterable, Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from pathlib import Path

from ..errors import SymcircError

FORMATS = {".md": "markdown", ".markdown": "markdown", ".tex": "latex", ".html": "html",
           ".htm": "html"}
"""Document format of each output extension."""

EXTENSIONS = {"markdown": ".md", "latex": ".tex", "html": ".html"}


@dataclass(frozen=True)
class Output:
    """Where a document goes: a file, or standard output when `path` is None."""

    path: Path | None

    @property
    def folder(self) -> Path:
        """The output folder: figures and other files may only go inside it."""
        return self.path.parent if self.path is not None else Path.cwd()

    @property
    def stem(self) -> str:
        return self.path.stem if self.path is not None else "note"


def output_for(option: str, inputs: Iterable[str | Path]) -> Output:
    """The output named by `-o`; refuses a path that is one of the input files."""
    if option == "-":
        return Output(None)
    path = Path(option)
    for source in inputs:
        if _same_file(path, Path(source)):
            raise SymcircError(f"refusing to write the output over the input file '{source}'",
                               file=str(path))
    if path.is_dir():
        raise SymcircError("the output is a folder; give a file name", file=str(path))
    if not path.parent.is_dir():
        raise SymcircError(f"folder '{path.parent}' does not exist", file=str(path))
    return Output(path)


def format_of(output: Output, requested: str | None, allowed: tuple[str, ...]) -> str:
    """The document format: `--format` when given, else from the output's extension."""
    if requested is not None:
        fmt = {"md": "markdown", "tex": "latex", "htm": "html"}.get(requested, requested)
    elif output.path is None:
        fmt = "markdown"
    else:
        fmt = FORMATS.get(output.path.suffix.lower(), "")
        if not fmt:
            raise SymcircError(
                f"cannot tell the format from '{output.path.suffix or output.path.name}': use "
                + ", ".join(EXTENSIONS[f] for f in allowed) + " or --format",
                file=str(output.path))
    if fmt not in allowed:
        raise SymcircError(f"format '{fmt}' is not available here (choose from "
                           + ", ".join(allowed) + ")")
    return fmt


def write_document(output: Output, text: str) -> None:
    """The document to its file (atomically) or to standard output."""
    if output.path is None:
        sys.stdout.write(text)
        sys.stdout.flush()
    else:
        write_atomic(output.path, text.encode("utf-8"))


def path_inside(folder: Path, relative: str | Path) -> Path:
    """`folder/relative`, its folders created; refuses a path that leaves `folder`."""
    base = folder.resolve()
    target = (base / relative).resolve()
    if not target.is_relative_to(base):
        raise SymcircError(f"refusing to write '{relative}' outside the output folder '{folder}'")
    with reported(target.parent):
        target.parent.mkdir(parents=True, exist_ok=True)
    return target


@contextmanager
def reported(path: Path) -> Iterator[None]:
    """Turn a failure to write `path` (permissions, a file where a folder should be, a full
    disk) into an error for the user instead of a traceback."""
    try:
        yield
    except OSError as err:
        raise SymcircError(f"cannot write: {err.strerror or err}", file=str(path)) from None


def write_inside(folder: Path, relative: str | Path, data: bytes) -> Path:
    """Write `data` at `folder/relative` atomically, refusing paths that leave `folder`."""
    target = path_inside(folder, relative)
    write_atomic(target, data)
    return target


def write_atomic(path: Path, data: bytes) -> None:
    """Write to a temporary file beside `path`, then rename it over `path`: readers see the
    old file or the new one, never half of one."""
    with reported(path):
        _write_atomic(path, data)


def _write_atomic(path: Path, data: bytes) -> None:
    handle, temporary = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(handle, "wb") as stream:
            stream.write(data)
            stream.flush()
            os.fsync(stream.fileno())
        if path.exists():
            os.chmod(temporary, path.stat().st_mode & 0o777)
        else:
            umask = os.umask(0)
            os.umask(umask)
            os.chmod(temporary, 0o666 & ~umask)
        os.replace(temporary, path)
    except BaseException:
        Path(temporary).unlink(missing_ok=True)
        raise


def _same_file(a: Path, b: Path) -> bool:
    try:
        return a.exists() and b.exists() and os.path.samefile(a, b)
    except OSError:
        return a.resolve() == b.resolve()
