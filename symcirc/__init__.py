"""symcirc: closed-form design equations of linear circuits.

Public API::

    circuit = symcirc.load("bridge.circuit")     # or symcirc.parse(text)
    circuit.derive("thevenin(out)")              # list of Result
    circuit.thevenin("out").impedance            # a Result

Both go through one `symcirc.pipeline.Pipeline` per circuit, as every command does.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from .errors import Location, SymcircError
from .version import __version__

if TYPE_CHECKING:  # pragma: no cover
    from pathlib import Path

    from .api import Circuit


__all__ = ["Circuit", "Location", "SymcircError", "__version__", "load", "parse"]


def parse(text: str, filename: str = "<input>") -> Circuit:
    """Read circuit text into a validated `Circuit`; raises `SymcircError` on any problem."""
    from .api import parse

    return parse(text, filename)


def load(path: str | Path) -> Circuit:
    """Read a `.circuit` file into a validated `Circuit`; raises `SymcircError` on any problem."""
    from .api import load

    return load(path)


def __getattr__(name: str) -> object:
    if name == "Circuit":  # the API class, imported on use (keeps `symcirc` quick to import)
        from .api import Circuit

        return Circuit
    raise AttributeError(name)
