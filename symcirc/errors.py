"""The one exception type users see, and how it is shown: `FILE:LINE:COL: error: MESSAGE`."""

from __future__ import annotations

import re
from dataclasses import dataclass

_UNSAFE = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u200e\u200f\u202a-\u202e\u2066-\u2069]")
"""Characters a terminal would act on (C0 and C1 controls but tab and newline, DEL) or that
reorder the text shown (bidirectional overrides): shown as escapes, never raw."""


def printable(text: str) -> str:
    """`text` with every control character shown as an escape (`\\x1b`, `\\u009b`): user text
    (titles, descriptions, source lines) reaches a terminal as text, never as commands."""
    return _UNSAFE.sub(_escape, text)


def _escape(match: re.Match[str]) -> str:
    # C0 as \x1b; the rest as \u009b: also a valid escape inside a JSON string, so JSON
    # printed with ensure_ascii=False (which leaves DEL and C1 raw) stays valid
    code = ord(match.group())
    return f"\\x{code:02x}" if code < 0x20 else f"\\u{code:04x}"


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
        out = [printable(head)]
        if self.source_line is not None:
            shown = self.source_line.replace("\t", " ")
            if len(shown) > 200:  # keep enormous lines readable: a window around the column
                start = max(0, self.column - 100)
                shown = ("..." if start else "") + shown[start:start + 200] + "..."
                caret_col = self.column - start + (3 if start else 0)
            else:
                caret_col = self.column
            # escapes widen the line: the caret moves with the text before it
            caret_col = len(printable(shown[:max(caret_col - 1, 0)])) + 1
            out.append("    " + printable(shown))
            out.append("    " + " " * max(caret_col - 1, 0) + "^")
        out.extend(printable(f"note: {n}") for n in self.notes)
        return "\n".join(out)
