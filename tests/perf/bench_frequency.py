"""Benchmark (a script, not a test): frequency-domain design quantities of a second-order
section.

Targets: K, ω0, f0, Q and ζ and their relative sensitivities to every part (warm: the
circuit parsed once, each quantity derived anew) under 0.5 s; the Monte Carlo band of the
response, 10,000 samples × 200 frequencies, under 2 s. Wall clock, best of three, on an
invented circuit.
Run: python tests/perf/bench_frequency.py
"""

from __future__ import annotations

import time

import numpy

import symcirc
from symcirc.analysis.frequency import response_band

SECTION = """
title "Seismometer logger anti-alias section, gain 1.6 (invented)"
voltage source Uin (in, gnd) = 1 V
resistor R1 (in, x) = 15k ± 1 %
resistor R2 (x, p) = 15k ± 1 %
capacitor C1 (x, o) = 100n ± 5 %
capacitor C2 (p, gnd) = 100n ± 5 %
opamp U1 (p, n, o)
resistor Ra (n, gnd) = 10k ± 1 %
resistor Rb (o, n) = 5k9 ± 1 %
port out (o, gnd)
"""

PARTS = ("K", "w0", "f0", "Q", "zeta")
SYMBOLS = ("R1", "R2", "C1", "C2", "Ra", "Rb")


def _best(run, runs: int = 3) -> float:
    best = float("inf")
    for _ in range(runs):
        start = time.perf_counter()
        run()
        best = min(best, time.perf_counter() - start)
    return best


def design_parameters(circuit: symcirc.Circuit) -> None:
    for part in PARTS:
        circuit.derive(f"gain(Uin, out).{part}")
    for part in ("w0", "Q"):
        for x in SYMBOLS:
            circuit.derive(f"relative_sensitivity(gain(Uin, out).{part}, {x})")


def main() -> None:
    circuit = symcirc.parse(SECTION)
    design_parameters(circuit)  # warm: imports, parser, caches of the circuit
    seconds = _best(lambda: design_parameters(circuit))
    count = len(PARTS) + 2 * len(SYMBOLS)
    print(f"design parameters and relative sensitivities ({count} quantities): "
          f"{seconds:.3f} s (target < 0.5 s)")
    (result,) = circuit.derive("gain(Uin, out)")
    frequencies = numpy.logspace(1, 4, 200)
    response_band(circuit, result, frequencies, samples=10000)
    seconds = _best(lambda: response_band(circuit, result, frequencies, samples=10000))
    print(f"Monte Carlo band, 10,000 samples x 200 frequencies: {seconds:.3f} s "
          "(target < 2 s)")


if __name__ == "__main__":
    main()
