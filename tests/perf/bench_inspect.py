"""Benchmark (a script, not a test): `symcirc inspect` on a generated 10,000-element circuit
(target < 3 s) and on examples/bridge_adc.circuit from a cold start (target < 1 s wall).

    python tests/perf/bench_inspect.py [--elements N] [--runs K]

Each figure is the median wall time of K runs of the real command in a fresh process.
"""

from __future__ import annotations

import argparse
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import symcirc

ROOT = Path(__file__).resolve().parents[2]


def generated_circuit(elements: int) -> str:
    """A resistor-capacitor ladder with parameters, tolerances, units and block instances."""
    lines = [
        'title "Generated ladder for the inspect benchmark"',
        'param Rload = 10 kΩ ± 1 %   "load"',
        "param k = 2",
        "block section (left, right)",
        "    resistor Rs (left, mid) = 4k7 ± 1 %",
        "    resistor Rp (mid, right) = 2*Rload",
        "end",
        "voltage source U (n0, gnd) = 5 V",
    ]
    count = 1
    node = 0
    while count < elements - 3:
        nxt = node + 1
        match node % 4:
            case 0:
                lines.append(f"resistor R{node} (n{node}, n{nxt}) = 1k ± 0.1 %")
                lines.append(f"capacitor C{node} (n{nxt}, gnd) = 4n7 ± 5 %")
                count += 2
            case 1:
                lines.append(f"resistor R{node} (n{node}, n{nxt}) = k*Rload")
                lines.append(f"resistor Rg{node} (n{nxt}, gnd) = 100 kΩ")
                count += 2
            case 2:
                lines.append(f"section s{node} (n{node}, n{nxt})")
                lines.append(f"inductor L{node} (n{nxt}, gnd) = 10 uH")
                count += 3
            case _:
                lines.append(f"conductance G{node} (n{node}, n{nxt}) = 1 mS")
                lines.append(f"resistor Rg{node} (n{nxt}, gnd) = 2R2")
                count += 2
        node = nxt
    for extra in range(elements - 1 - count):  # pad to the exact count
        lines.append(f"resistor Rpad{extra} (n{node}, gnd) = 1M")
    lines.append(f"resistor Rend (n{node}, gnd) = Rload")
    lines.append(f"port out (n{node}, gnd)")
    lines.append("derive thevenin(out)")
    return "\n".join(lines) + "\n"


def wall_time(command: list[str], runs: int) -> float:
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        done = subprocess.run(command, capture_output=True, text=True)
        times.append(time.perf_counter() - start)
        if done.returncode != 0:
            raise SystemExit(f"{' '.join(command)} failed:\n{done.stderr}")
    return statistics.median(times)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--elements", type=int, default=10_000)
    parser.add_argument("--runs", type=int, default=5)
    args = parser.parse_args()
    inspect = [sys.executable, "-m", "symcirc.cli", "inspect"]

    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "ladder.circuit"
        path.write_text(generated_circuit(args.elements), encoding="utf-8")
        elements = len(symcirc.load(str(path)).elements)
        large = wall_time([*inspect, str(path)], args.runs)

    bridge = ROOT / "examples" / "bridge_adc.circuit"
    cold = wall_time([*inspect, str(bridge)], args.runs)
    console = Path(sys.executable).with_name("symcirc")
    script = wall_time([str(console), "inspect", str(bridge)], args.runs) \
        if console.exists() else None

    print(f"inspect, generated circuit of {elements} elements: {large:.2f} s "
          f"(target < 3 s) {'ok' if large < 3 else 'TOO SLOW'}")
    print(f"inspect examples/bridge_adc.circuit, cold start: {cold:.2f} s "
          f"(target < 1 s) {'ok' if cold < 1 else 'TOO SLOW'}")
    if script is not None:
        print(f"  the same through the `symcirc` console script: {script:.2f} s")


if __name__ == "__main__":
    main()
