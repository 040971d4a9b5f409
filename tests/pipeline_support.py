"""Circuits on which the commands once disagreed: parts defined by expressions, coupled
coils, an ideal transformer, `where` clauses. Invented scenarios; each formula beside its
circuit is worked by hand from the textbook rules (divider, parallel resistances,
coupled coils V1 = s·L1·I1 + s·M·I2 with M = k·√(L1·L2), ideal transformer V1 = N·V2)."""

from __future__ import annotations

from pathlib import Path

RTD_DIVIDER = """\
title "Heated sensor on a divider"
param R0 = 100 Ω ± 0.1 %  "sensor at 0 °C"
param alpha = 0.00385     "temperature coefficient"
param T = 25              "temperature"
voltage source Uin (in, gnd) = 1 V
resistor Rt (in, out) = R0*(1 + alpha*T)
resistor R2 (out, gnd) = 1 kΩ ± 1 %
port P (out, gnd)
derive Z(P), V(out)
claim Z(P) = R0*(1 + alpha*T)*R2/(R0*(1 + alpha*T) + R2)
"""
"""Z(P) = Rt∥R2 with Rt = R0·(1 + α·T): the claim is right."""

STRAIN_BRIDGE = """\
title "Load cell, four active gauges"
param R0 = 350 Ω ± 0.05 %  "unstrained gauge"
param kg = 2               "gauge factor"
param eps = 0.0005         "strain"
voltage source Uexc (exc, gnd) = 5 V
resistor G1 (exc, a) = R0*(1 + kg*eps)
resistor G2 (a, gnd) = R0*(1 - kg*eps)
resistor G3 (exc, b) = R0*(1 - kg*eps)
resistor G4 (b, gnd) = R0*(1 + kg*eps)
port out (b, a)
derive thevenin(out)
claim thevenin(out).voltage = Uexc*kg*eps
claim thevenin(out).impedance = R0*(1 - kg^2*eps^2)
"""
"""A full bridge: V = Uexc·(G4/(G3 + G4) − G2/(G1 + G2)) = Uexc·kg·ε, and the output
resistance G1∥G2 + G3∥G4 = R0·(1 − kg²·ε²)."""

COUPLED_COILS = """\
title "Pickup coil pair"
voltage source Uin (a, gnd) = 1 V
resistor R1 (a, b) = 50 Ω
inductor L1 (b, gnd) = 10 uH
inductor L2 (c, gnd) = 40 uH
coupling k12 (L1, L2) = 0.9
resistor R2 (c, gnd) = 1 kΩ
port p1 (b, gnd)
port p2 (c, gnd)
port bare (a, b)
derive V(c), Z(p1)
claim Z(bare) = R1
"""

COUPLED_PAIR = """\
title "Coupled coils alone"
inductor L1 (a, gnd) = 10 uH
inductor L2 (c, gnd) = 40 uH
coupling k12 (L1, L2) = 0.9
port p1 (a, gnd)
port p2 (c, gnd)
derive twoport(p1, p2).z12, twoport(p1, p2).z11
claim twoport(p1, p2).z12 = s*k12*sqrt(L1*L2)
claim twoport(p1, p2).z22 = s*L2
"""
"""z12 = s·M = s·k·√(L1·L2) and z22 = s·L2 (open-circuit parameters of coupled coils)."""

TRANSFORMER = """\
title "Matching transformer"
param N = 2               "turns ratio"
voltage source Uin (a, gnd) = 1 V
resistor R1 (a, b) = 50 Ω
transformer Tx (b, gnd; c, gnd) = N
resistor R2 (c, gnd) = 1 kΩ
port out (c, gnd)
derive V(out), Z(out)
claim Z(out) = R1*R2/(R1 + N^2*R2)
claim V(out) = Uin*N*R2/(R1 + N^2*R2)
"""
"""V1 = N·V2: R1 seen from the secondary is R1/N², and V(out) = Uin·N·R2/(R1 + N²·R2)."""

LIMITS = """\
title "Buffered divider with a finite input resistance"
voltage source Uin (in, gnd) = 10 V
resistor R1 (in, out) = 10 kΩ ± 1 %
resistor R2 (out, gnd) = 10 kΩ ± 1 %
resistor Rin (out, gnd) = 1 MΩ
derive V(out) where Rin -> oo
derive V(out) where Rin >> R2
claim V(out) = Uin*R2*Rin/(R1*R2 + R1*Rin + R2*Rin)
"""

BAD_WHERE = """\
title "Where clause comparing unlike parts"
voltage source Uin (in, gnd) = 1 V
resistor R1 (in, out) = 1 kΩ
capacitor C1 (out, gnd) = 10 nF
derive V(out) where R1 >> C1
"""

CIRCUITS = {
    "rtd_divider": RTD_DIVIDER, "strain_bridge": STRAIN_BRIDGE,
    "coupled_coils": COUPLED_COILS, "coupled_pair": COUPLED_PAIR,
    "transformer": TRANSFORMER, "limits": LIMITS,
}
"""Valid circuits of this module, by file stem."""

ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = sorted((ROOT / "examples").glob("*.circuit"))
VALID = sorted((ROOT / "tests" / "valid").glob("*.circuit"))


def write(folder: Path, name: str, text: str) -> Path:
    path = folder / f"{name}.circuit"
    path.write_text(text, encoding="utf-8")
    return path


def written(folder: Path) -> list[Path]:
    """Every circuit of this module written into `folder`."""
    return [write(folder, name, text) for name, text in CIRCUITS.items()]
