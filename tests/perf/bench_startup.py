"""Benchmark (a script, not a test): cold start of the commands on examples/bridge_adc.circuit.

    python tests/perf/bench_startup.py [--runs K] [--symcirc PATH]

Each command runs K times in a fresh process; the table gives the fastest wall time and
the fastest CPU time (user + system, which a busy machine disturbs less) with bytecode
(the installed package's cached .pyc files) and without (a fresh, empty bytecode cache
each run: every module compiled, as on a first run after installing from source).
Targets: `--version` < 0.08 s, `inspect` < 0.2 s, `derive` < 0.35 s (`derive one` is a
single quantity without steps: `gain(Uref, out)`; the indented rows are the bridge's derive
statements one at a time). The last rows are the floors: the interpreter and the imports
of lark, python-flint and sympy, alone and together.
"""

from __future__ import annotations

import argparse
import os
import resource
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
BRIDGE = ROOT / "examples" / "bridge_adc.circuit"
COMMANDS = {
    "--version": ["--version"],
    "inspect": ["inspect", str(BRIDGE)],
    "derive": ["derive", str(BRIDGE)],
    "derive one": ["derive", str(BRIDGE), "gain(Uref, out)"],
    "derive --values": ["derive", str(BRIDGE), "--values"],
    "check": ["check", str(BRIDGE)],
}
STATEMENTS = {  # the bridge's derive statements, one per process
    "  thevenin": ["derive", str(BRIDGE), "thevenin(out)"],
    "  gain": ["derive", str(BRIDGE), "gain(Uref, out)"],
    "  V -> oo": ["derive", str(BRIDGE), "V(out) where Rin -> oo"],
    "  sens. >>": ["derive", str(BRIDGE), "sensitivity(V(out), T) where Rin >> R1"],
    "  sens. alone": ["derive", str(BRIDGE), "sensitivity(V(out), T)"],
}
BASELINES = {
    "python -c pass": [sys.executable, "-c", "pass"],
    "import lark": [sys.executable, "-c", "import lark"],
    "import flint": [sys.executable, "-c", "import flint"],
    "import sympy": [sys.executable, "-c", "import sympy"],
    "lark+flint": [sys.executable, "-c", "import lark, flint"],
    "lark+flint+sympy": [sys.executable, "-c", "import lark, flint, sympy"],
}


def timed(argv: list[str], environment: dict[str, str]) -> tuple[float, float]:
    """(wall, cpu) seconds of one run in a fresh process."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    subprocess.run(argv, env=environment, stdout=subprocess.DEVNULL,
                   stderr=subprocess.DEVNULL, check=False)
    wall = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    return wall, (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def fastest(argv: list[str], runs: int, bytecode: bool) -> tuple[float, float]:
    walls, cpus = [], []
    for _ in range(runs):
        environment = dict(os.environ)
        environment.pop("PYTHONDONTWRITEBYTECODE", None)  # the first run writes the cache
        environment.pop("PYTHONPYCACHEPREFIX", None)
        cache = None
        if not bytecode:
            cache = tempfile.mkdtemp(prefix="symcirc-bytecode-")
            environment["PYTHONPYCACHEPREFIX"] = cache
            environment["PYTHONDONTWRITEBYTECODE"] = "1"
        wall, cpu = timed(argv, environment)
        if cache is not None:
            shutil.rmtree(cache, ignore_errors=True)
        walls.append(wall)
        cpus.append(cpu)
    return min(walls), min(cpus)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=7)
    parser.add_argument("--symcirc", default=str(Path(sys.executable).with_name("symcirc")),
                        help="the command to time (default: beside this Python)")
    args = parser.parse_args()
    print(f"{'command':<18} {'wall':>7} {'cpu':>7}   {'no .pyc wall':>12} {'cpu':>7}")
    rows = {name: [args.symcirc, *argv] for name, argv in {**COMMANDS, **STATEMENTS}.items()}
    rows.update(BASELINES)
    for name, argv in rows.items():
        warm = fastest(argv, args.runs, bytecode=True)
        cold = fastest(argv, max(2, args.runs // 3), bytecode=False)
        print(f"{name:<18} {warm[0]:7.3f} {warm[1]:7.3f}   {cold[0]:12.3f} {cold[1]:7.3f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
