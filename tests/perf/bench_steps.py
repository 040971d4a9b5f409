"""Benchmark (a script, not a test): `derive --steps` of every derive statement of the
bundled examples and of tests/valid, one line per quantity.

Each quantity is derived in a fresh interpreter (every module imported and a small
derivation run first; no cache or memo carried over from another quantity), with its
statement's `where` clauses, design forms and steps, as `symcirc derive FILE --steps` does;
CPU time of the derivation (reading the file not included), best of three. Compare two
versions by running the script in each and reading the columns side by side.
Run: python tests/perf/bench_steps.py [--runs N]
"""

from __future__ import annotations

import argparse
import importlib
import pkgutil
import subprocess
import sys
import time
from pathlib import Path

import symcirc
from symcirc.pipeline import Pipeline

ROOT = Path(__file__).resolve().parents[2]
FOLDERS = ("examples", "tests/valid")


def statements() -> list[tuple[Path, int, str]]:
    """(file, request index, text) of every derived quantity."""
    out = []
    for folder in FOLDERS:
        for path in sorted((ROOT / folder).glob("*.circuit")):
            for i, request in enumerate(Pipeline.load(path).requests(steps=True)):
                where = [f"{a.symbol} {a.kind} {a.target}"
                         for a in request.options.assumptions]
                out.append((path, i, request.text + (f" where {', '.join(where)}"
                                                     if where else "")))
    return out


def derive_once(pipeline: Pipeline, i: int) -> None:
    """The i-th derived quantity of the file, with steps, as `derive FILE --steps` does."""
    pipeline.derive(pipeline.requests(steps=True)[i])


def cpu_seconds(path: Path, i: int, runs: int) -> float:
    """Best CPU time of one derivation, each run in a new interpreter."""
    best = float("inf")
    for _ in range(runs):
        command = [sys.executable, __file__, "--one", str(path), str(i)]
        done = subprocess.run(command, check=True, capture_output=True, text=True)
        best = min(best, float(done.stdout.split()[-1]))
    return best


WARM_UP = """
voltage source U (a, gnd)
resistor R1 (a, b)
resistor R2 (b, gnd)
resistor R3 (b, gnd)
port out (b, gnd)
derive V(out) where R3 -> oo
"""
"""A divider derived first, outside the timing, so that modules imported on first use are."""


def one(path: Path, i: int) -> None:
    """Print the CPU seconds of one derivation (run in a fresh interpreter)."""
    for module in pkgutil.walk_packages(symcirc.__path__, "symcirc."):
        importlib.import_module(module.name)
    derive_once(Pipeline.parse(WARM_UP), 0)
    pipeline = Pipeline.load(path)
    start = time.process_time()
    derive_once(pipeline, i)
    print(time.process_time() - start)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=3, help="runs per quantity (best kept)")
    parser.add_argument("--one", nargs=2, metavar=("FILE", "INDEX"),
                        help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.one:
        one(Path(args.one[0]), int(args.one[1]))
        return
    total = 0.0
    for path, i, text in statements():
        seconds = cpu_seconds(path, i, args.runs)
        total += seconds
        print(f"{seconds * 1000:9.1f} ms  {path.relative_to(ROOT)}  {text}")
    print(f"{total * 1000:9.1f} ms  total")


if __name__ == "__main__":
    main()
