"""A one-line progress indication on standard error while a document's quantities are
derived: it appears only when the work has taken longer than a second and only on a terminal.
"""

from __future__ import annotations

import sys
import threading
import time
from typing import TextIO


class Progress:
    """Use as a context manager; call `step(label)` before each piece of work.

    A background thread redraws the line while one long derivation runs; on exit the line
    is cleared so nothing remains in a terminal or a log.
    """

    def __init__(self, total: int, stream: TextIO | None = None, delay: float = 1.0,
                 interval: float = 0.25, enabled: bool = True) -> None:
        self.total = total
        self.stream = sys.stderr if stream is None else stream
        self.delay = delay
        self.interval = interval
        self.enabled = enabled and bool(getattr(self.stream, "isatty", lambda: False)())
        self.done = 0
        self.label = ""
        self.shown = False
        self._start = time.monotonic()
        self._stop = threading.Event()
        self._lock = threading.Lock()
        self._thread: threading.Thread | None = None

    def __enter__(self) -> Progress:
        self._start = time.monotonic()
        if self.enabled:
            self._thread = threading.Thread(target=self._run, name="symcirc-progress",
                                            daemon=True)
            self._thread.start()
        return self

    def __exit__(self, *exc: object) -> None:
        self._stop.set()
        if self._thread is not None:
            self._thread.join()
        with self._lock:
            if self.shown:
                self.stream.write("\r\033[K")
                self.stream.flush()
                self.shown = False

    def step(self, label: str) -> None:
        """Start the next piece of work, called `label`."""
        with self._lock:
            self.done += 1
            self.label = label
        self.tick()

    def tick(self) -> None:
        """Redraw the line if the work has run past the delay (no-op when not a terminal)."""
        if not self.enabled:
            return
        elapsed = time.monotonic() - self._start
        if elapsed < self.delay:
            return
        with self._lock:
            line = f"symcirc: deriving {self.done}/{self.total} {self.label}  {elapsed:.0f} s"
            self.stream.write("\r\033[K" + line[:200])
            self.stream.flush()
            self.shown = True

    def _run(self) -> None:
        while not self._stop.wait(self.interval):
            self.tick()
