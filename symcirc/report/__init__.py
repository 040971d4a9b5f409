"""Documents: design notes and formula sheets rendered with jinja2 from `templates/`.

`render_note_for(path, format, quantities=None, template=None, output_path=None)` gives the
text of a design note (used by `symcirc note` and `symcirc verify`); `render_sheet_for`
the text of a formula sheet. Both are imported on first use.
"""

from __future__ import annotations

from typing import Any

__all__ = ["render_note_for", "render_sheet_for"]


def __getattr__(name: str) -> Any:
    if name == "render_note_for":
        from .note import render_note_for

        return render_note_for
    if name == "render_sheet_for":
        from .sheet import render_sheet_for

        return render_sheet_for
    raise AttributeError(name)
