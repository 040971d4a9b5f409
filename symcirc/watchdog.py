"""The command line's Ctrl-C watchdog, run as a script of its own (stdlib only, so it starts
in milliseconds without importing symcirc):

    python -I -S watchdog.py READ_FD PARENT_PID GRACE_SECONDS

It waits on the read end of the parent's signal wakeup pipe. The pipe closes when the
parent ends; a SIGINT byte starts the grace period, after which a parent that has not
ended is told so on stderr and killed (it may be inside a long flint call that holds the
interpreter lock and never looks at signals).
"""

from __future__ import annotations

import os
import select
import signal
import sys
import time


def watch(read: int, parent: int, grace: float) -> None:
    while True:
        data = os.read(read, 64)
        if not data:
            return  # the command ended
        if signal.SIGINT in data:
            break
    deadline = time.monotonic() + grace
    while (left := deadline - time.monotonic()) > 0:
        ready, _, _ = select.select([read], [], [], left)
        if ready and not os.read(read, 64):
            return  # the command ended by itself
    os.write(2, b"symcirc: interrupted\n")
    os.kill(parent, signal.SIGKILL)


if __name__ == "__main__":
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # Ctrl-C reaches the whole process group
    watch(int(sys.argv[1]), int(sys.argv[2]), float(sys.argv[3]))
