"""symcirc: closed-form design equations of linear circuits.

Public API::

    circuit = symcirc.load("bridge.circuit")     # or symcirc.parse(text)
    circuit.derive("thevenin(out)")              # list of Result
    circuit.thevenin("out").impedance            # a Result
"""

from __future__ import annotations

from .errors import Location, SymcircError
from .model.circuit import Circuit

__version__ = "0.1.0"

__all__ = ["Circuit", "Location", "SymcircError", "__version__", "load", "parse"]


def parse(text: str, filename: str = "<input>") -> Circuit:
    """Read circuit text into a validated `Circuit`; raises `SymcircError` on any problem."""
    from .language.parser import parse_document
    from .model.elaborate import elaborate

    return elaborate(parse_document(text, filename))


def load(path: str) -> Circuit:
    """Read a `.circuit` file into a validated `Circuit`; raises `SymcircError` on any problem."""
    from .language.parser import read_source

    return parse(read_source(path), filename=str(path))
