"""Benchmark (a script, not a test): noise of a second-order response integrated over a band.

Target: the rms noise over 10 Hz … 10 kHz of a white + 1/f density through the gain of a
second-order low-pass section, in closed form, under 0.2 s warm (imports and the circuit's
derivation done once; the integral built anew each time). Also shown: the same with the
band running to ∞, the numerical path (a third-order response), the noise bandwidth, and
`noise_rms` of the circuit (every noise source through the pipeline).
Wall clock, best of three, on an invented circuit.
Run: python tests/perf/bench_noise_band.py
"""

from __future__ import annotations

import time

import sympy

import symcirc
from symcirc.analysis import noise_band

SECTION = """
title "Hydrophone preamplifier anti-alias section (invented)"
voltage source Uin (in, gnd) = 1 V
resistor R1 (in, x) = 22k ± 1 %
resistor R2 (x, p) = 22k ± 1 %
capacitor C1 (x, o) = 47n ± 5 %
capacitor C2 (p, gnd) = 22n ± 5 %
opamp U1 (p, n, o)
noise U1 en = 5 nV/√Hz corner 200 Hz, in = 0.5 pA/√Hz
resistor Ra (n, gnd) = 10k ± 1 %
resistor Rb (o, n) = 4k7 ± 1 %
port out (o, gnd)
"""

DENSITY = noise_band.Density(sympy.Rational(25, 10**18), sympy.Integer(200))
"""5 nV/√Hz with a 1/f corner at 200 Hz."""


def _best(run, runs: int = 3) -> float:
    best = float("inf")
    for _ in range(runs):
        start = time.perf_counter()
        run()
        best = min(best, time.perf_counter() - start)
    return best


def main() -> None:
    circuit = symcirc.parse(SECTION)
    (result,) = circuit.derive("gain(Uin, out)")
    nominals = circuit.symbol_nominals()
    gain = result.expression

    def band(low, high, h=gain):
        return noise_band.band_noise(h, DENSITY, low, high, nominals)

    band(10, 10**4)  # warm: imports
    for low, high, text in ((10, 10**4, "10 Hz … 10 kHz"), (10, sympy.oo, "10 Hz … ∞")):
        seconds = _best(lambda low=low, high=high: band(low, high))
        noise = band(low, high)
        print(f"second order, {text}: {seconds:.3f} s (target < 0.2 s); "
              f"{noise.rms_value * 1e6:.4g} µV rms, {noise.method}")
    third = gain / (1 + sympy.Symbol("s") * sympy.Rational(1, 10**5))
    seconds = _best(lambda: band(10, 10**4, third))
    print(f"third order, 10 Hz … 10 kHz: {seconds:.3f} s; {band(10, 10**4, third).method}")
    seconds = _best(lambda: noise_band.noise_bandwidth(gain, nominals))
    print(f"noise bandwidth: {seconds:.3f} s; "
          f"{noise_band.noise_bandwidth(gain, nominals).value:.6g} Hz")
    bands = iter(range(10, 10**4))  # a new band each run: nothing cached between them
    circuit.derive("noise_rms(out, 1 Hz, 10 kHz).rms")
    seconds = _best(lambda: circuit.derive(f"noise_rms(out, {next(bands)} Hz, 10 kHz).rms"))
    (rms,) = circuit.derive("noise_rms(out, 10 Hz, 10 kHz).rms")
    print(f"noise_rms(out, 10 Hz, 10 kHz) of the circuit, every source (resistors, en, in): "
          f"{seconds:.3f} s; {rms.nominal * 10**6:.4g} µV rms")


if __name__ == "__main__":
    main()
