"""Benchmark (a script, not a test): limits and approximations with steps.

Target: `symcirc derive tests/forms/strain_bridge.circuit --steps` (a full bridge of four
strain gauges behind excitation leads, `V(out) where Rid -> oo`) under 3 s; it took minutes
while the limit's expansion multiplied unreduced ratios in sympy's rings. Also shown: the
same with `--substitute`, and the bundled examples' limits. Wall clock and CPU time of a
fresh interpreter, best of three; the target is read on the CPU time, which is the wall
clock of an idle machine (on a shared one the wall clock mostly measures the others).
Run: python tests/perf/bench_limits.py
"""

from __future__ import annotations

import resource
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
BRIDGE = ROOT / "tests" / "forms" / "strain_bridge.circuit"
TARGET = 3.0

CASES = [
    ("full bridge with leads, Rid -> oo, --steps", [str(BRIDGE), "--steps"]),
    ("the same, --substitute", [str(BRIDGE), "--steps", "--substitute"]),
    ("bridge_adc example, --steps", [str(ROOT / "examples" / "bridge_adc.circuit"), "--steps"]),
    ("diff_amp example, --steps", [str(ROOT / "examples" / "diff_amp.circuit"), "--steps"]),
]


def cold(*arguments: str) -> tuple[float, float]:
    """(wall clock, CPU time) of `symcirc derive` in a fresh interpreter, best of three."""
    command = [sys.executable, "-m", "symcirc.cli", "derive", *arguments]
    best_wall = best_cpu = float("inf")
    for _ in range(3):
        before = resource.getrusage(resource.RUSAGE_CHILDREN)
        start = time.perf_counter()
        subprocess.run(command, check=True, stdout=subprocess.DEVNULL)
        wall = time.perf_counter() - start
        after = resource.getrusage(resource.RUSAGE_CHILDREN)
        cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
        best_wall, best_cpu = min(best_wall, wall), min(best_cpu, cpu)
    return best_wall, best_cpu


def main() -> None:
    print(f"{'case':48} {'wall s':>8} {'CPU s':>8}")
    for name, arguments in CASES:
        wall, cpu = cold(*arguments)
        mark = ""
        if arguments[0] == str(BRIDGE):
            mark = "  ok" if cpu < TARGET else f"  OVER the {TARGET:g} s target"
        print(f"{name:48} {wall:8.2f} {cpu:8.2f}{mark}")


if __name__ == "__main__":
    main()
