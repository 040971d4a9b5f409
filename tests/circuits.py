"""The small circuits many tests build (invented scenarios), written once.

Plain text constants, importable from any test folder (`from circuits import BRIDGE`:
tests/ is on the path through tests/conftest.py). `conftest.circuit_file` writes one to a
file for the command-line tests.
"""

# A strain-gauge bridge on a data-logger input, with its supply as a second port.
BRIDGE = """
title "Strain-gauge bridge, logger channel 2"
voltage source U (exc, gnd)
resistor R1 (exc, a)
resistor R2 (a, gnd)
resistor R3 (exc, b)
resistor R4 (b, gnd)
port out (a, b)
port supply (exc, gnd)
"""

# The same bridge with a detector across the diagonal.
BRIDGE_LOADED = BRIDGE + "resistor R5 (a, b)\n"

# The loaded bridge driven from a current source.
BRIDGE_CURRENT = BRIDGE_LOADED.replace("voltage source U (exc, gnd)",
                                       "current source I (gnd, exc)")

# The bridge of a scale's front end, excited by Ub, output across the diagonal.
SCALE_BRIDGE = """
voltage source Ub (exc, gnd)
resistor R1 (exc, a)
resistor R2 (a, gnd)
resistor R3 (exc, b)
resistor R4 (b, gnd)
port out (a, b)
"""

# Three buffered RC sections smoothing a logger's reference.
BUFFERED_RC = """
voltage source Uin (b0, gnd)
resistor R1 (b0, x1)
capacitor C1 (x1, gnd)
opamp U1 (x1, b1, b1)
resistor R2 (b1, x2)
capacitor C2 (x2, gnd)
opamp U2 (x2, b2, b2)
resistor R3 (b2, x3)
capacitor C3 (x3, gnd)
port out (x3, gnd)
"""

# A divider loaded by a meter's input resistance.
LOADED_DIVIDER = """
voltage source U (in, gnd)
resistor R1 (in, o)
resistor R2 (o, gnd)
resistor RL (o, gnd)
port out (o, gnd)
"""

# Unity-gain Sallen-Key low pass of an anti-aliasing stage.
SALLEN_KEY_LOW = """
voltage source Uin (in, gnd)
resistor R1 (in, x)
resistor R2 (x, p)
capacitor C1 (x, o)
capacitor C2 (p, gnd)
opamp U1 (p, o, o)
port out (o, gnd)
"""

# Multiple-feedback band pass picking a pilot tone.
MFB_BAND_PASS = """
voltage source Uin (in, gnd)
resistor R1 (in, x)
resistor R2 (x, gnd)
capacitor C1 (x, n)
capacitor C2 (x, o)
resistor R3 (n, o)
opamp U1 (gnd, n, o)
port out (o, gnd)
"""
