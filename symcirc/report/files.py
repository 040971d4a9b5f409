"""Where a document goes: `-o FILE` (written through `symcirc.output`, the one writer) or
`-o -` (standard output), and its format from the option or the file's extension.
"""

from __future__ import annotations

import os
import sys
from collections.abc import Iterable
from dataclasses import dataclass, field
from pathlib import Path

from ..errors import SymcircError
from ..output import check_target, write_file

FORMATS = {".md": "markdown", ".markdown": "markdown", ".tex": "latex", ".html": "html",
           ".htm": "html", ".pdf": "pdf", ".docx": "docx"}
"""Document format of each output extension."""

EXTENSIONS = {"markdown": ".md", "latex": ".tex", "html": ".html", "pdf": ".pdf",
              "docx": ".docx"}


@dataclass(frozen=True)
class Output:
    """Where a document goes: a file, or standard output when `path` is None; `inputs` are
    the files the command reads, which the output may never replace."""

    path: Path | None
    inputs: tuple[str, ...] = field(default=())

    @property
    def folder(self) -> Path:
        """The output folder: figures go into a folder inside it."""
        return self.path.parent if self.path is not None else Path.cwd()

    @property
    def stem(self) -> str:
        return self.path.stem if self.path is not None else "note"


def output_for(option: str, inputs: Iterable[str | os.PathLike],
               templates: str | os.PathLike | None = None) -> Output:
    """The output named by `-o`, checked before any work is done: refuses one of the input
    files, a link, a folder, a device or FIFO, a missing folder, and a place inside the
    template folder (whose files are inputs too)."""
    names = tuple(os.fspath(source) for source in inputs)
    if option == "-":
        return Output(None, names)
    path = check_target(option, names)
    if templates is not None and Path(templates).is_dir() and \
            path.parent.resolve().is_relative_to(Path(templates).resolve()):
        raise SymcircError(f"refusing to write the output into the template folder "
                           f"'{templates}'", file=str(path))
    return Output(path, names)


def format_of(output: Output, requested: str | None, allowed: tuple[str, ...]) -> str:
    """The document format: `--format` when given, else from the output's extension. A PDF
    or Word document's program is looked for here, before the work starts."""
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
    if fmt in ("pdf", "docx"):
        from .documents import require

        require(fmt, output.path)
    return fmt


def write_document(output: Output, text: str, fmt: str | None = None) -> None:
    """The document to its file (through the one writer) or to standard output; a PDF or
    Word document (`fmt`) is made from `text` first."""
    if fmt in ("pdf", "docx") and output.path is not None:
        from .documents import document

        write_file(output.path, document(fmt, text, (), output.path), output.inputs)
    elif output.path is None:
        sys.stdout.write(text)
        sys.stdout.flush()
    else:
        write_file(output.path, text.encode("utf-8"), output.inputs)
