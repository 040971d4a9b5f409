"""Work done once per circuit (its network, solved systems, expanded definitions, forms).

The pipeline owns one `Memo` per circuit and hands it down in `DeriveOptions`; the model
itself holds no cache. A stage that derives from a changed copy of the circuit (a load
taken out) gets a store of its own, because stores are kept per circuit object.
"""

from __future__ import annotations

from typing import Any


class Memo:
    """Stores of memoised work, one per circuit object."""

    def __init__(self) -> None:
        self._stores: dict[int, tuple[object, dict[Any, Any]]] = {}

    def of(self, circuit: object) -> dict[Any, Any]:
        """The store of `circuit` (kept with the circuit itself, so an id is never reused)."""
        entry = self._stores.get(id(circuit))
        if entry is None or entry[0] is not circuit:
            entry = self._stores[id(circuit)] = (circuit, {})
        return entry[1]
