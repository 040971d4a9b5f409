"""Benchmark (a script, not a test): noise of an invented load-cell front end.

Targets: the output noise density of a 10-resistor bridge with an amplifier (4 bridge arms,
2 input resistors, a 4-resistor difference stage, the opamp's en and in) under 0.5 s warm;
the rms noise over a band of a second-order response under 0.2 s. Warm: imports and the
parser loaded, the circuit read anew for every run (nothing of it cached). Wall clock, best
of three.
Run: python tests/perf/bench_noise.py
"""

from __future__ import annotations

import time

import symcirc

BRIDGE_AMPLIFIER = """
title "Load-cell bridge on a difference amplifier (invented)"
temperature 40 °C
voltage source Uexc (exc, gnd) = 5 V
resistor R1 (exc, a) = 350 ± 0.1 %
resistor R2 (a, gnd) = 350 ± 0.1 %
resistor R3 (exc, b) = 350 ± 0.1 %
resistor R4 (b, gnd) = 350 ± 0.1 %
resistor Rp1 (a, ia) = 1 kΩ
resistor Rp2 (b, ib) = 1 kΩ
resistor Ra (ia, n) = 10 kΩ ± 0.1 %
resistor Rb (n, o) = 1 MΩ ± 0.1 %
resistor Rc (ib, p) = 10 kΩ ± 0.1 %
resistor Rd (p, gnd) = 1 MΩ ± 0.1 %
opamp U1 (p, n, o)
noise U1 en = 8 nV/√Hz corner 3 Hz, in = 0.2 pA/√Hz
port out (o, gnd)
"""

SECOND_ORDER = """
title "Anti-alias section of a seismometer logger (invented)"
voltage source Uin (i, gnd)
resistor R1 (i, x) = 15k
resistor R2 (x, p) = 15k
capacitor C1 (x, o) = 200n
capacitor C2 (p, gnd) = 100n
opamp U1 (p, o, o)
noise U1 en = 10 nV/√Hz corner 10 Hz, in = 1 pA/√Hz
port out (o, gnd)
"""


def _best(run, runs: int = 3) -> float:
    best = float("inf")
    for _ in range(runs):
        start = time.perf_counter()
        run()
        best = min(best, time.perf_counter() - start)
    return best


def density() -> None:
    symcirc.parse(BRIDGE_AMPLIFIER).derive("noise(out).density")


def band() -> None:
    symcirc.parse(SECOND_ORDER).derive("noise_rms(out, 0.1 Hz, 100 Hz).rms")


def main() -> None:
    density()  # warm: imports and the parser
    band()
    (result,) = symcirc.parse(BRIDGE_AMPLIFIER).derive("noise(out, 1 kHz).density")
    seconds = _best(density)
    print(f"output noise density, 10-resistor bridge with an amplifier: {seconds:.3f} s "
          f"(target < 0.5 s; {result.nominal * 1e9:.4g} nV/√Hz at 1 kHz)")
    (rms,) = symcirc.parse(SECOND_ORDER).derive("noise_rms(out, 0.1 Hz, 100 Hz).rms")
    seconds = _best(band)
    print(f"rms noise over 0.1 Hz … 100 Hz, second-order section: {seconds:.3f} s "
          f"(target < 0.2 s; {rms.nominal * 1e9:.4g} nV rms)")


if __name__ == "__main__":
    main()
