"""Reading a design note back: its machine-readable marker, its sections, and a readable
account of what differs between the note as written and as it would be written today.

The note engineer's marker is one comment line: `<!-- symcirc-note {JSON} -->` in Markdown
and HTML, `% symcirc-note {JSON}` in LaTeX; the JSON has `source` (relative to the note's
folder), `sha256`, `version`, `format`, `quantities` and `template`.
"""

from __future__ import annotations

import difflib
import html
import json
import re
from dataclasses import dataclass

MARKER = "symcirc-note"
_MARKER_LINE = re.compile(
    r"^\s*(?:<!--\s*" + MARKER + r"\s+(?P<html>\{.*\})\s*-->|%\s*" + MARKER
    + r"\s+(?P<tex>\{.*\}))\s*$"
)
FIELDS = ("source", "sha256", "version", "format", "quantities", "template")
FORMATS = ("markdown", "latex", "html")

SHOWN_LINES = 8
"""Changed lines shown per section in the summary."""
DIFF_LINES = 60
"""Lines of the unified diff shown at most."""


class NoteProblem(Exception):
    """The text is not a note written by `symcirc note` (no marker, or a broken one)."""


@dataclass(frozen=True)
class Marker:
    """What the note records about how it was written."""

    source: str
    sha256: str
    version: str
    format: str
    quantities: tuple[str, ...] | None
    template: str | None
    line: int = 0
    """Line of the note the marker is on (1-based)."""
    text: str = ""
    """The marker's line as written."""


def read_marker(text: str) -> Marker:
    """The marker of a note; NoteProblem when there is none or it cannot be read."""
    lines = text.splitlines()
    found = [m for m in map(_MARKER_LINE.match, lines) if m]
    if not found:
        raise NoteProblem(f"no `{MARKER}` marker: not a note written by `symcirc note`")
    if len(found) > 1:
        raise NoteProblem(f"{len(found)} `{MARKER}` markers: a note has exactly one")
    payload = found[0].group("html") or found[0].group("tex")
    try:
        data = json.loads(payload)
    except json.JSONDecodeError as err:
        raise NoteProblem(f"the `{MARKER}` marker is not valid JSON ({err.msg})") from None
    missing = [f for f in FIELDS if not isinstance(data, dict) or f not in data]
    if missing:
        raise NoteProblem(f"the `{MARKER}` marker lacks {', '.join(missing)}")
    if data["format"] not in FORMATS:
        raise NoteProblem(f"the `{MARKER}` marker names an unknown format {data['format']!r}")
    quantities = data["quantities"]
    if quantities is not None and not (
        isinstance(quantities, list) and all(isinstance(q, str) for q in quantities)
    ):
        raise NoteProblem(f"the `{MARKER}` marker's quantities must be a list of strings")
    for name in ("source", "sha256", "version"):
        if not isinstance(data[name], str):
            raise NoteProblem(f"the `{MARKER}` marker's {name} must be a string")
    template = data["template"]
    if template is not None and not isinstance(template, str):
        raise NoteProblem(f"the `{MARKER}` marker's template must be a string or null")
    number = next(i for i, line in enumerate(lines, 1) if _MARKER_LINE.match(line))
    return Marker(data["source"], data["sha256"], data["version"], data["format"],
                  None if quantities is None else tuple(quantities), template,
                  number, lines[number - 1])


# ---------------------------------------------------------------- sections

_HEADINGS = {
    "markdown": re.compile(r"^#{1,6}\s+(.*?)\s*#*\s*$"),
    "latex": re.compile(r"^\s*\\(?:sub)*section\*?(\{.*)$"),
    "html": re.compile(r"<h[1-6][^>]*>(.*?)</h[1-6]>", re.I),
}


def heading_text(line: str, fmt: str) -> str | None:
    """The plain text of a heading line, or None when the line is not a heading."""
    match = _HEADINGS[fmt].search(line)
    if match is None:
        return None
    text = match.group(1)
    if fmt == "latex":
        text = _braced(text)  # the argument only, not a `\label{..}` after it
        if text is None:
            return None
    text = re.sub(r"<[^>]+>", "", text)  # anchors and markup inside headings
    if fmt == "latex":
        # Escaped characters (`\\{`, `\\_`, `\\&`...) stay; commands and grouping go.
        parts = re.split(r"\\([{}_&%#$])", text)
        parts[::2] = [re.sub(r"\\[A-Za-z]+\*?|[{}]", "", p) for p in parts[::2]]
        text = "".join(parts)
    return html.unescape(text).strip() or None


def _braced(text: str) -> str | None:
    """The content of the balanced `{..}` group that `text` starts with (escaped braces
    `\\{` `\\}` do not count), or None when it is not closed on this line."""
    depth = 0
    for i, char in enumerate(text):
        if char in "{}" and i and text[i - 1] == "\\":
            continue
        depth += {"{": 1, "}": -1}.get(char, 0)
        if depth == 0:
            return text[1:i]
    return None


def sections(text: str, fmt: str) -> list[tuple[str, list[str]]]:
    """(heading, lines) of each section, in order; the text before the first heading is
    the section '(top)'. Blank lines and the marker are left out."""
    out: list[tuple[str, list[str]]] = [("(top)", [])]
    for line in text.splitlines():
        heading = heading_text(line, fmt)
        if heading is not None:
            out.append((heading, []))
        elif line.strip() and not _MARKER_LINE.match(line):
            out[-1][1].append(line.strip())
    return out


def changes(old: str, new: str, fmt: str) -> list[str]:
    """What differs between the note as written (`old`) and as written today (`new`), by
    section: lines such as `section "thevenin(out)" changed:` then `- old` / `+ new`."""
    before, after = sections(old, fmt), sections(new, fmt)
    old_map, new_map = dict(before), dict(after)
    report: list[str] = []
    for heading, _ in before:
        if heading not in new_map:
            report.append(f'section "{heading}" is gone')
    for heading, lines in after:
        if heading not in old_map:
            report.append(f'section "{heading}" is new')
            continue
        if old_map[heading] == lines:
            continue
        report.append(f'section "{heading}" changed:')
        shown = [line for line in difflib.ndiff(old_map[heading], lines)
                 if line[:2] in ("- ", "+ ")]
        report += [f"    {_clip(line)}" for line in shown[:SHOWN_LINES]]
        if len(shown) > SHOWN_LINES:
            report.append(f"    ... ({len(shown) - SHOWN_LINES} more changed lines)")
    return report


def unified_diff(old: str, new: str, old_name: str, new_name: str) -> str:
    """A compact unified diff (one line of context), cut after DIFF_LINES lines."""
    lines = list(difflib.unified_diff(old.splitlines(), new.splitlines(), old_name, new_name,
                                      n=1, lineterm=""))
    if len(lines) > DIFF_LINES:
        lines = lines[:DIFF_LINES] + [f"... ({len(lines) - DIFF_LINES} more diff lines)"]
    return "\n".join(_clip(line, 160) for line in lines)


def _clip(line: str, width: int = 120) -> str:
    return line if len(line) <= width else line[: width - 3] + "..."
