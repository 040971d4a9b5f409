"""PDF and Word documents, made by programs of the system from a note or sheet symcirc has
rendered: pdflatex compiles the LaTeX text; pandoc turns the Markdown text (its maths written
as TeX) into a Word document whose formulas are native Word equations (OMML).

Each program runs in a private folder (`output.private_folder`) that holds only the text and
its figures, and is confined to it: pdflatex reads and writes nothing outside it
(`openin_any`/`openout_any` paranoid, no shell escape), and pandoc embeds only the document's
own figures (a filter turns every other image into its description, so nothing else is read
or fetched). Only the finished bytes come back, for the one writer. Both documents are
byte-identical on a second run (`SOURCE_DATE_EPOCH` stands in for the time).
"""

from __future__ import annotations

import os
import re
import shutil
import subprocess
from collections.abc import Sequence
from pathlib import Path

from ..errors import SymcircError
from ..output import Transaction, private_folder

SOURCE_FORMAT = {"pdf": "latex", "docx": "markdown"}
"""The text each document is made from."""
PROGRAMS = {"pdf": ("pdflatex", "texlive-latex-base"), "docx": ("pandoc", "pandoc")}
"""The program that makes each document, and the Debian package that ships it."""
LATEX_RUNS = 3
"""Most pdflatex runs: again only while the log asks for it (references, table widths)."""
TIMEOUT = 600
"""Seconds a program may take on one run."""
SOURCE_DATE = "315532800"
"""The time written into the documents (1980-01-01, the earliest a ZIP entry can carry)."""
ERROR_LINES = 12
"""Lines of a program's messages quoted when it fails."""


def require(fmt: str, output: Path | None) -> str:
    """The program that makes a `fmt` document, checked before any work is done: a located
    error when it is not installed, or when the document would go to standard output."""
    program, package = PROGRAMS[fmt]
    where = str(output) if output is not None else "<command line>"
    if output is None:
        raise SymcircError(f"a {fmt.upper()} document is written to a file: give `-o NAME.{fmt}`",
                           file=where)
    found = shutil.which(program)
    if found is None:
        raise SymcircError(
            f"writing a .{fmt} file needs `{program}`, which is not installed (not found on "
            f"PATH); install Debian's package `{package}` (`apt-get install {package}`), or "
            f"write the {SOURCE_FORMAT[fmt]} text instead (`-o {output.stem}."
            f"{'tex' if fmt == 'pdf' else 'md'}`)", file=where)
    return found


def document(fmt: str, text: str, images: Sequence[tuple[str, bytes]], output: Path) -> bytes:
    """The `fmt` document ('pdf' or 'docx') made from the rendered `text` and its figures
    (`images`: path relative to the text, bytes)."""
    program = require(fmt, output)
    source = "document.tex" if fmt == "pdf" else "document.md"
    with private_folder() as folder:
        with Transaction() as files:
            for name in sorted({Path(name).parent for name, _ in images} - {Path(".")}):
                files.folder(folder / name)
            for name, data in images:
                files.add(folder / name, data)
            files.add(folder / source, text.encode("utf-8"))
            if fmt == "docx":  # the filter, and an empty data folder: no user defaults apply
                files.add(folder / FILTER, _word_filter([name for name, _ in images]))
                files.folder(folder / "data")
            files.commit()
        if fmt == "pdf":
            return _pdf(program, folder, output)
        return _docx(program, folder, output)


def _environment(folder: Path) -> dict[str, str]:
    return {**os.environ, "SOURCE_DATE_EPOCH": SOURCE_DATE, "FORCE_SOURCE_DATE": "1",
            "openin_any": "p", "openout_any": "p", "shell_escape": "f",
            "TEXMFVAR": str(folder / "texmf-var"), "TEXMFOUTPUT": str(folder)}


def _run(program: str, arguments: list[str], folder: Path,
         output: Path) -> subprocess.CompletedProcess:
    name = Path(program).name
    try:
        return subprocess.run([program, *arguments], cwd=folder, env=_environment(folder),
                              stdin=subprocess.DEVNULL, capture_output=True, timeout=TIMEOUT)
    except subprocess.TimeoutExpired:
        raise SymcircError(f"{name} did not finish within {TIMEOUT} s", file=str(output)) \
            from None
    except OSError as err:
        raise SymcircError(f"cannot run {name}: {err.strerror or err}", file=str(output)) \
            from None


def _pdf(program: str, folder: Path, output: Path) -> bytes:
    log = folder / "document.log"
    for _ in range(LATEX_RUNS):
        run = _run(program, ["-no-shell-escape", "-interaction=nonstopmode", "-halt-on-error",
                             "document.tex"], folder, output)
        text = log.read_text(encoding="utf-8", errors="replace") if log.exists() else ""
        if run.returncode != 0 or not (folder / "document.pdf").exists():
            raise SymcircError("pdflatex could not compile the note; its log says:",
                               file=str(output),
                               notes=latex_errors(text or run.stdout.decode(errors="replace")))
        if "Rerun" not in text:
            break
    return (folder / "document.pdf").read_bytes()


def latex_errors(log: str) -> tuple[str, ...]:
    """The lines of a pdflatex log that say what went wrong: each error (`! ...`) with the
    lines after it up to the line of the input it stopped at (`l.42 ...`)."""
    lines = log.splitlines()
    found: list[str] = []
    for index, line in enumerate(lines):
        if line.startswith("!") and "==> Fatal error" not in line:
            for following in lines[index:index + 8]:
                if following.strip():
                    found.append(following.rstrip())
                if re.match(r"l\.\d+ ", following):
                    break
    if not found:
        found = [line.rstrip() for line in lines[-ERROR_LINES:] if line.strip()]
    return tuple(found[:ERROR_LINES])


FILTER = "word-filter.lua"
"""pandoc's Lua filter (figures and anchors), written beside the text."""


def _word_filter(names: list[str]) -> bytes:
    """A pandoc Lua filter that keeps the images of `names` and turns every other image
    into its description: pandoc then reads no file and fetches no address but the figures.
    It also turns the note's anchors (`<a id="..."></a>`, raw HTML, which Word drops) into
    bookmarks, so the summary's links lead to their sections."""
    for name in names:
        if not re.fullmatch(r"[A-Za-z0-9_./-]+", name) or ".." in name:
            raise ValueError(f"not a figure's name: {name!r}")
    allowed = ", ".join(f'["{name}"] = true' for name in names)
    return (f"local figures = {{{allowed}}}\n"
            "function Image(image)\n"
            "  if figures[image.src] then return image end\n"
            "  return pandoc.Str(pandoc.utils.stringify(image.caption))\n"
            "end\n"
            "function RawInline(raw)\n"
            "  if raw.format ~= 'html' then return nil end\n"
            "  local id = raw.text:match('^<a id=\"([%w_%-]+)\">$')\n"
            "  if id then return pandoc.Span({}, {id = id}) end\n"
            "  if raw.text == '</a>' then return {} end\n"
            "end\n").encode()


def _docx(program: str, folder: Path, output: Path) -> bytes:
    run = _run(program, ["--from", "markdown", "--to", "docx", "--data-dir", "data",
                         "--resource-path", ".", "--lua-filter", FILTER,
                         "--output", "document.docx", "document.md"], folder, output)
    if run.returncode != 0 or not (folder / "document.docx").exists():
        lines = run.stderr.decode(errors="replace").splitlines()
        raise SymcircError("pandoc could not make the Word document; it says:",
                           file=str(output), notes=tuple(lines[:ERROR_LINES]))
    return (folder / "document.docx").read_bytes()
