"""Benchmark (a script, not a test): design analyses of a large result against the
derivation they rest on, and printing a result of a million terms.

The circuit is a ten-section resistive ladder (invented: a sensor line terminated at its far
end), twenty parts at 1 %, whose output V(out) has a denominator of 10,946 terms.
Targets: sensitivities(V(out)) < 3 s; its Markdown note < 5 s and < 300 MB; tolerance with
20 parts < 2 s; a result of about a million terms printed as text < 1 s. Each figure is the
best of a few runs, wall clock and CPU (on a shared machine the CPU time is the steadier),
with its ratio to the derivation measured in the same run.
Run: python tests/perf/bench_analyses.py
"""

from __future__ import annotations

import contextlib
import io
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import symcirc
from symcirc.cli import main as cli


def ladder(sections: int, toleranced: bool = True, derive: str = "") -> str:
    """A resistive ladder of series Rs_i and shunt Rp_i driven by U = Ub (invented)."""
    band = " ± 1 %" if toleranced else ""
    lines = ['title "Sensor line terminated at its far end (invented)"', "param Ub = 5 V",
             "voltage source U (n0, gnd) = Ub"]
    for i in range(1, sections + 1):
        lines += [f"resistor Rs{i} (n{i - 1}, n{i}) = 1 kΩ{band}",
                  f"resistor Rp{i} (n{i}, gnd) = 10 kΩ{band}"]
    lines.append(f"port out (n{sections}, gnd)")
    if derive:
        lines.append(f"derive {derive}")
    return "\n".join(lines) + "\n"


def best(run, runs: int = 3) -> tuple[float, float]:
    """(wall, CPU) seconds of the fastest of `runs` runs."""
    fastest = (float("inf"), float("inf"))
    for _ in range(runs):
        start, cpu = time.perf_counter(), time.process_time()
        run()
        fastest = min(fastest, (time.perf_counter() - start, time.process_time() - cpu))
    return fastest


def command(*args: str) -> None:
    """One command in this process, its output discarded."""
    with contextlib.redirect_stdout(io.StringIO()):
        status = cli(list(args))
    if status not in (0, None):
        raise SystemExit(f"symcirc {' '.join(args)} failed with status {status}")


NOTE = ("import resource, sys\n"
        "from symcirc.cli import main\n"
        "status = main(sys.argv[1:])\n"
        "print(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss, file=sys.stderr)\n"
        "sys.exit(status)\n")
"""`symcirc note` in a fresh interpreter that reports its own peak resident size (kB)."""


def note_in_child(path: Path, out: Path) -> tuple[float, float, float]:
    """(wall, CPU, peak MB) of `symcirc note` in a fresh process."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    done = subprocess.run([sys.executable, "-c", NOTE, "note", str(path), "-o", str(out)],
                          check=True, capture_output=True, text=True)
    wall = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime + after.ru_stime) - (before.ru_utime + before.ru_stime)
    return wall, cpu, int(done.stderr.split()[-1]) / 1024


def main() -> int:
    rows = []
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder, "ladder.circuit")
        path.write_text(ladder(10, derive="V(out)"), encoding="utf-8")
        # first, while this process is small: a child's peak size counts what it was forked from
        note = min(note_in_child(path, Path(folder, "ladder.md")) for _ in range(2))
        derive = best(lambda: command("derive", str(path), "V(out)"))
        sensitivities = best(lambda: command("derive", str(path), "sensitivities(V(out))"), 1)
        circuit = symcirc.parse(ladder(10))
        (result,) = circuit.derive("V(out)")

        def tolerance():
            circuit.pipeline.derive(circuit.pipeline.request("tolerance(V(out))"))

        analysis = best(tolerance, 2)
        rows += [
            ("derive V(out) (10,946-term denominator)", *derive, None, None),
            ("derive sensitivities(V(out)), 21 rows", *sensitivities, 3.0, derive),
            ("tolerance(V(out)), 20 parts (analysis)", *analysis, 2.0, derive),
            (f"note (Markdown), peak {note[2]:.0f} MB", note[0], note[1], 5.0, derive),
        ]
        print(f"{'':48} {'wall s':>8} {'CPU s':>8} {'target':>7} {'CPU/derive':>10}")
        for name, wall, cpu, target, base in rows:
            ratio = "" if base is None else f"{cpu / base[1]:.1f}x"
            goal = "" if target is None else f"< {target:g}"
            print(f"{name:48} {wall:8.3f} {cpu:8.3f} {goal:>7} {ratio:>10}")

    big = symcirc.parse(ladder(15, toleranced=False))
    (voltage,) = big.derive("thevenin(out).voltage")
    terms = sum(voltage.exact.size())

    def text():
        voltage.exact.__dict__.pop("_text", None)  # the text is remembered once written
        voltage.exact.to_text()

    printed = best(text, 2)
    per_term = printed[1] / terms * 1e6
    print(f"text of a {terms:,}-term result: {printed[0]:.3f} s wall, {printed[1]:.3f} s CPU "
          f"({per_term:.2f} µs per term; a million terms < 1 s needs < 1 µs)")
    # the floor: python-flint's own printer, the fastest way out of its polynomials
    denominator = voltage.exact.denominator
    flint_alone = best(lambda: str(denominator), 2)
    written = str(denominator)
    factors = written.count("*") - 2 * written.count("**") + len(denominator)
    print(f"  of which python-flint's printer alone: {flint_alone[1]:.3f} s CPU for the "
          f"{len(denominator):,}-term denominator, {factors / len(denominator):.1f} factors per "
          f"term, {flint_alone[1] / factors * 1e9:.0f} ns per factor")
    small = result.exact.denominator
    exponents = best(lambda: small.monoms(), 2)
    print(f"  reading exponents instead (monoms, {len(small):,} terms): "
          f"{exponents[1] / len(small) * 1e6:.2f} µs per term before any text is written")
    load = os.getloadavg()[0]
    print(f"load average {load:.1f} on {os.cpu_count()} CPUs")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
