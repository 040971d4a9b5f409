"""Benchmark (a script, not a test): checking claims.

Targets: `symcirc check examples/bridge_adc.circuit` under 1.5 s wall clock from a cold
start (a new process); the decision, counterexample search and diagnosis of a wrong claim
under 2 s for expressions of up to 200 terms. Best of three runs.
Run: python tests/perf/bench_check.py
"""

from __future__ import annotations

import subprocess
import sys
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


def cold_check() -> float:
    """Wall clock of the whole command in a fresh interpreter."""
    command = [sys.executable, "-m", "symcirc.cli", "check",
               str(ROOT / "examples" / "bridge_adc.circuit")]

    def run() -> None:
        subprocess.run(command, check=False, stdout=subprocess.DEVNULL)

    return _best(run)


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
    print(f"symcirc check examples/bridge_adc.circuit, cold: {cold_check():.2f} s "
          "(target < 1.5 s)")
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
