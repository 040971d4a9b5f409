"""Size limits that stop a job before memory grows, and the process guards of the command line.

The limits are checked where the size is known before the work is done (statements as they
are read, parts of a block instance before it is expanded, terms of a product before it is
formed), so an oversized input gets a clear error within seconds instead of exhausting
memory. python-flint and GMP abort the whole process when an allocation fails, so these
checks, not the memory ceiling, are what must fire first; the ceiling (`guard_process`)
turns what they miss into an error message rather than an abort of the machine.
"""

from __future__ import annotations

import atexit
import os
import signal
import sys
import threading
from math import comb
from pathlib import Path

from .errors import SymcircError

MAX_STATEMENTS = 20_000
"""Most parameters, elements and ports a circuit may hold, counted as the file is read and
again with every block instance expanded (the expanded count is known before expanding)."""

MAX_SOURCE_BYTES = 16 * 2**20
"""Largest circuit file read (read in one bounded piece: the path may be a device or pipe)."""

MAX_INSTANCE_DEPTH = 50
"""Deepest chain of block instances (an instance of a block holding an instance of ...)."""

MAX_ELIMINATION_TERMS = 1_000_000
"""Largest entry (terms) elimination may form on the way to a result."""

MAX_PRODUCT_TERMS = 10_000_000
"""Largest product of two polynomials' term counts (a bound on the product's terms and on
the work to form it) that elimination, claim checking or substitution may multiply."""

MAX_EXPANSION_TERMS = 1_000_000
"""Largest polynomial (terms) expanding written expressions may give: a claim as it is
decided, or a result with definitions substituted into it (`--substitute`)."""

MAX_TABLE_TERMS = 1_000_000
"""Largest sensitivity table: rows times the terms of the result they differentiate (each
row prints a closed-form derivative of the whole result)."""

MEMORY_FRACTION = 0.75
"""Share of physical memory the command line allows itself (SYMCIRC_MEMORY_LIMIT overrides)."""

MEMORY_FLOOR = 4 * 2**30
"""Least ceiling set by default: address space is not memory, and the libraries reserve
more of it than they use."""

MEMORY_VARIABLE = "SYMCIRC_MEMORY_LIMIT"
"""Environment variable: the address-space ceiling in bytes, with an optional k/M/G suffix
(`8G`), or `none` to set no ceiling."""

INTERRUPT_GRACE = 0.75
"""Seconds after Ctrl-C before the process ends even inside a call that ignores signals."""



def power_terms(base_terms: int, exponent: int) -> int:
    """The most terms `p**exponent` can have when `p` has `base_terms` terms: the number of
    multisets of `exponent` terms (a binomial count, reached when no two products collide)."""
    if base_terms <= 1 or exponent <= 1:
        return base_terms if exponent >= 1 else 1
    return comb(exponent + base_terms - 1, base_terms - 1)


# ---------------------------------------------------------------- process guards


def memory_ceiling(environ: dict[str, str] | None = None) -> int | None:
    """The address-space ceiling to set, in bytes (None: set none)."""
    environ = os.environ if environ is None else environ
    wanted = environ.get(MEMORY_VARIABLE, "").strip()
    if wanted.lower() in ("none", "off", "0"):
        return None
    if wanted:
        return parse_bytes(wanted)
    try:
        physical = os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES")
    except (ValueError, OSError, AttributeError):
        return None
    if physical <= 0:
        return None
    return max(int(physical * MEMORY_FRACTION), MEMORY_FLOOR)


def parse_bytes(text: str) -> int:
    """`8G`, `512M`, `100000k` or a plain number of bytes; ValueError on anything else."""
    scale = {"k": 2**10, "m": 2**20, "g": 2**30, "t": 2**40}
    text = text.strip()
    if not text:
        raise ValueError("an empty size")
    factor = 1
    if text[-1:].lower() in scale:
        factor, text = scale[text[-1].lower()], text[:-1]
    value = float(text) * factor
    if not 0 < value < 2**62:  # also refuses nan and inf
        raise ValueError(f"{text!r} is not a positive size")
    return int(value)


def guard_process() -> None:
    """Set the memory ceiling (never above a lower one the user set) and make Ctrl-C end
    the process within INTERRUPT_GRACE seconds wherever it is. For the command line only:
    it forks a watchdog process and changes process-wide settings."""
    _set_memory_ceiling()
    _watch_interrupts()


def _set_memory_ceiling() -> None:
    try:
        import resource
    except ImportError:  # not on this platform
        return
    try:
        ceiling = memory_ceiling()
    except ValueError:
        raise SymcircError(f"`{os.environ.get(MEMORY_VARIABLE)}` is not a size such as 8G "
                           "(or none)", MEMORY_VARIABLE) from None
    if ceiling is None:
        return
    soft, hard = resource.getrlimit(resource.RLIMIT_AS)
    if soft != resource.RLIM_INFINITY and soft <= ceiling:
        return  # the user's own limit is lower: keep it
    if hard != resource.RLIM_INFINITY:
        ceiling = min(ceiling, hard)
    try:
        resource.setrlimit(resource.RLIMIT_AS, (ceiling, hard))
    except (ValueError, OSError):
        pass  # a ceiling the system refuses is no worse than none


def _watch_interrupts() -> None:
    """Start the watchdog (`symcirc/watchdog.py`, a process of its own) that ends this one
    INTERRUPT_GRACE seconds after a SIGINT it has not answered. The interpreter raises
    KeyboardInterrupt only between bytecodes, and flint holds the interpreter lock through a
    long multiplication, so no thread of this process could act in time; the interpreter's
    C-level handler does write the signal number to the wakeup pipe at once, and the
    watchdog reads it there. (A fork would be simpler, but copying a process that has
    imported sympy costs the command more than starting a small interpreter.)"""
    script = Path(__file__).with_name("watchdog.py")
    if (os.name != "posix" or not sys.executable or not script.is_file()
            or threading.current_thread() is not threading.main_thread()):
        return  # a POSIX pipe and a script on disk are needed
    import subprocess

    read, write = os.pipe()
    interrupt = signal.signal(signal.SIGINT, signal.SIG_IGN)  # the watchdog starts ignoring it
    try:
        _WATCHDOG.append(subprocess.Popen(
            [sys.executable, "-I", "-S", str(script), str(read), str(os.getpid()),
             str(INTERRUPT_GRACE)],
            pass_fds=(read,), stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL))
    except OSError:
        os.close(write)
        return
    finally:
        signal.signal(signal.SIGINT, signal.SIG_DFL if interrupt is None else interrupt)
        os.close(read)
    os.set_blocking(write, False)
    signal.set_wakeup_fd(write, warn_on_full_buffer=False)
    atexit.register(_release_watchdog, write)


_WATCHDOG: list = []
"""The watchdog process (held so that it is not reaped while the command runs)."""


def _release_watchdog(write: int) -> None:
    """Closing the pipe tells the watchdog the command has ended (before the interpreter's
    own shutdown, which may take longer than the grace after an interrupt)."""
    signal.set_wakeup_fd(-1)
    os.close(write)
