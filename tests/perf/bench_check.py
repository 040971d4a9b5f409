"""Benchmark (a script, not a test): checking claims.

Targets: `symcirc check examples/bridge_adc.circuit` under 1.5 s wall clock from a cold
start (a new process); also shown: `symcirc verify` of a fresh note per format. The
decision, counterexample search and diagnosis of a wrong claim
under 2 s for expressions of up to 200 terms. Best of three runs.
Run: python tests/perf/bench_check.py
"""

from __future__ import annotations

import resource
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import sympy

from symcirc.check.claims import decide
from symcirc.check.dimensions import UNITS

ROOT = Path(__file__).resolve().parents[2]


def _best(run, runs: int = 3) -> float:
    best = float("inf")
    for _ in range(runs):
        start = time.perf_counter()
        run()
        best = min(best, time.perf_counter() - start)
    return best


def cold(*arguments: str) -> tuple[float, float]:
    """(wall clock, CPU time) of a symcirc command in a fresh interpreter, best of three.
    The CPU time (user + system of the child) tells the cost on a loaded machine."""
    command = [sys.executable, "-m", "symcirc.cli", *arguments]
    best_wall = best_cpu = float("inf")
    for _ in range(3):
        before = resource.getrusage(resource.RUSAGE_CHILDREN)
        start = time.perf_counter()
        subprocess.run(command, check=False, stdout=subprocess.DEVNULL)
        wall = time.perf_counter() - start
        after = resource.getrusage(resource.RUSAGE_CHILDREN)
        cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
        best_wall, best_cpu = min(best_wall, wall), min(best_cpu, cpu)
    return best_wall, best_cpu


def verify_times() -> dict[str, tuple[float, float]]:
    """`symcirc verify` of a fresh note of the bridge example, per format."""
    out = {}
    with tempfile.TemporaryDirectory() as folder:
        source = Path(folder) / "bridge.circuit"
        shutil.copy(ROOT / "examples" / "bridge_adc.circuit", source)
        for extension in ("md", "tex", "html"):
            note = Path(folder) / f"note.{extension}"
            subprocess.run([sys.executable, "-m", "symcirc.cli", "note", str(source), "-o",
                            str(note)], check=True, stdout=subprocess.DEVNULL)
            out[extension] = cold("verify", str(note))
    return out


def ladder(sections: int) -> tuple[sympy.Expr, dict]:
    """Input impedance of an RC ladder (invented), expanded: a ratio of two long sums."""
    s = sympy.Symbol("s")
    rs = sympy.symbols(f"R1:{sections + 1}")
    cs = sympy.symbols(f"C1:{sections + 1}")
    z = rs[-1]
    for i in range(sections - 2, -1, -1):
        z = rs[i] + 1 / (s * cs[i] + 1 / z)
    num, den = (sympy.expand(p) for p in sympy.fraction(sympy.cancel(sympy.together(z))))
    dims = {str(r): UNITS["Ω"] for r in rs} | {str(c): UNITS["F"] for c in cs}
    dims["s"] = UNITS["Hz"]
    return num / den, dims


def main() -> None:
    wall, cpu = cold("check", str(ROOT / "examples" / "bridge_adc.circuit"))
    print(f"symcirc check examples/bridge_adc.circuit, cold: {wall:.2f} s wall, {cpu:.2f} s "
          "CPU (target < 1.5 s wall)")
    for extension, (wall, cpu) in verify_times().items():
        print(f"symcirc verify of a fresh bridge note (.{extension}), cold: {wall:.2f} s wall, "
              f"{cpu:.2f} s CPU")
    s = sympy.Symbol("s")
    for sections in (5, 6, 7):
        derived, dims = ladder(sections)
        num, den = sympy.fraction(derived)
        terms = len(num.args) + len(den.args)
        r2, r3 = sympy.Symbol("R2"), sympy.Symbol("R3")
        wrong = {
            "term counted twice": (num + s * sympy.Symbol("C2") * r2 * r3) / den,
            "two parts swapped": derived.xreplace({r2: r3, r3: r2}),
            "no simple explanation": (num + 1) / (den + s),
        }
        for name, claimed in wrong.items():
            seconds = _best(lambda c=claimed, d=derived, m=dims: decide("Z(in)", d, c, m))
            verdict = decide("Z(in)", derived, claimed, dims)
            found = verdict.diagnosis[0] if verdict.diagnosis else "(none)"
            print(f"{sections}-section ladder ({terms} terms), {name}: {seconds:.2f} s "
                  f"(target < 2 s): {found[:70]}")


if __name__ == "__main__":
    main()
