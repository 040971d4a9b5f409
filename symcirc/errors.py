"""The one exception type users see, and how it is shown: `FILE:LINE:COL: error: MESSAGE`."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Location:
    """Where something was written: file name, 1-based line and column."""

    file: str
    line: int
    column: int

    def __str__(self) -> str:
        return f"{self.file}:{self.line}:{self.column}"


class SymcircError(Exception):
    """A problem with the user's input, carrying where it is and a message written for them.

    `source_line` is the text of the offending line (shown with a caret under `column`);
    `notes` are extra lines (other places involved, suggestions).
    """

    def __init__(
        self,
        message: str,
        file: str = "<input>",
        line: int = 0,
        column: int = 0,
        source_line: str | None = None,
        notes: tuple[str, ...] = (),
    ) -> None:
        super().__init__(message)
        self.message = message
        self.file = file
        self.line = line
        self.column = column
        self.source_line = source_line
        self.notes = tuple(notes)

    @classmethod
    def at(
        cls, location: Location | None, message: str, source: str | None = None,
        notes: tuple[str, ...] = (),
    ) -> SymcircError:
        """An error at `location`, with the line taken from `source` (the whole file text)."""
        if location is None:
            return cls(message, notes=notes)
        line_text = None
        if source is not None and location.line > 0:
            lines = source.splitlines()
            if location.line <= len(lines):
                line_text = lines[location.line - 1]
        return cls(message, location.file, location.line, location.column, line_text, notes)

    def __str__(self) -> str:
        return self.format()

    def format(self, kind: str = "error") -> str:
        """The report as printed: header, source line, caret, notes."""
        if self.line:
            head = f"{self.file}:{self.line}:{self.column}: {kind}: {self.message}"
        else:
            head = f"{self.file}: {kind}: {self.message}"
        out = [head]
        if self.source_line is not None:
            shown = self.source_line.replace("\t", " ")
            if len(shown) > 200:  # keep enormous lines readable: a window around the column
                start = max(0, self.column - 100)
                shown = ("..." if start else "") + shown[start:start + 200] + "..."
                caret_col = self.column - start + (3 if start else 0)
            else:
                caret_col = self.column
            out.append("    " + shown)
            out.append("    " + " " * max(caret_col - 1, 0) + "^")
        out.extend(f"note: {n}" for n in self.notes)
        return "\n".join(out)
