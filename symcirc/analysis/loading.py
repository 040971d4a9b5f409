"""Loading of a port by the next stage, from the port's Thevenin equivalent (U_th, Z_th).

Closed forms: loaded voltage U_th·Z_L/(Z_th + Z_L), relative loading error −Z_th/(Z_th + Z_L),
power in a resistive load, maximum power transfer; and the smallest load resistance or the
largest load capacitance that keeps the loading error within a bound. At a frequency the
source value is taken as an RMS phasor and s = j·2π·f.
"""

from __future__ import annotations

import cmath
import math
from collections.abc import Mapping
from dataclasses import dataclass
from fractions import Fraction

import sympy

from ..model.circuit import LAPLACE
from ..model.units import eng
from .cautions import value_caution
from .tidy import tidy
from .values import exact_value, rational


def _tidy(expression: sympy.Expr) -> sympy.Expr:
    """A readable closed form: cancelled and factored (rational functions stay rational)."""
    return tidy(expression)


@dataclass(frozen=True)
class AtFrequency:
    """Numbers at s = j·2π·f (nominal values), for a reactive source or load."""

    frequency: float
    voltage: complex
    error: complex
    power: float
    """Average power in the load, the source value taken as RMS."""
    matched_load: complex
    """Z_L for maximum power transfer: the complex conjugate of Z_th(j·2π·f)."""
    maximum_power: float | None
    """|U_th|²/(4·Re Z_th), or None when Re Z_th is not positive."""


@dataclass(frozen=True)
class Loading:
    source_voltage: sympy.Expr
    source_impedance: sympy.Expr
    load: sympy.Expr
    voltage: sympy.Expr
    """Loaded port voltage."""
    error: sympy.Expr
    """Relative loading error (U_loaded − U_open)/U_open = −Z_th/(Z_th + Z_L)."""
    power: sympy.Expr | None
    """Power in the load, when source and load are resistive (no s): U_loaded²/R_L."""
    maximum_power: sympy.Expr | None
    """U_th²/(4·R_th) at R_L = R_th, when the source is resistive and R_th > 0."""
    at_frequency: AtFrequency | None = None
    no_maximum: str | None = None
    """Why a resistive source has no maximum power transfer (R_th = 0 or negative)."""


class NoAnswer(ValueError):
    """The question has no finite answer for this source and load (said why)."""


def is_reactive(*expressions: sympy.Expr) -> bool:
    return any(LAPLACE in e.free_symbols for e in expressions)


def phasor(
    expression: sympy.Expr, nominals: Mapping[sympy.Symbol, Fraction], frequency: float
) -> complex:
    """`expression` at s = j·2π·f and the nominal values, as a complex number."""
    values = {x: sympy.Float(float(v), 30) for x, v in nominals.items()}
    values[LAPLACE] = sympy.I * 2 * sympy.pi * sympy.Float(frequency, 30)
    missing = sorted(str(x) for x in expression.free_symbols if x not in values)
    if missing:
        raise NoAnswer(f"the numbers at {eng(frequency, 'Hz')} need a value for "
                       f"{', '.join(missing)}: give {'it' if len(missing) == 1 else 'them'} "
                       "one in the file, or ask without a frequency for the closed forms")
    return complex(expression.xreplace(values).evalf(30))


def loading(
    source_voltage: sympy.Expr,
    source_impedance: sympy.Expr,
    load: sympy.Expr,
    nominals: Mapping[sympy.Symbol, Fraction] | None = None,
    frequency: float | None = None,
) -> Loading:
    """The loading of a source (U_th, Z_th) by `load`; numbers at `frequency` when given."""
    u, z, zl = source_voltage, source_impedance, load
    nominals = nominals or {}
    if _tidy(z + zl) == 0:
        raise NoAnswer(_SHORTED.format(where="for every value"))
    if exact_value(z + zl, nominals) == 0:
        raise NoAnswer(_SHORTED.format(where="at the nominal values"))
    voltage = _tidy(u * zl / (z + zl))
    error = _tidy(-z / (z + zl))
    resistive = not is_reactive(u, z, zl)
    # U_th²·R_L/(R_th + R_L)², not U_loaded²/R_L: the same, and finite for a short (R_L = 0)
    power = _tidy(u**2 * zl / (z + zl) ** 2) if resistive else None
    maximum, no_maximum = None, None
    if not is_reactive(z, u):
        no_maximum = _no_maximum(z, nominals)
        maximum = _tidy(u**2 / (4 * z)) if no_maximum is None else None
    at_f = None
    if frequency is not None:
        uf, zf, zlf = (phasor(e, nominals, frequency) for e in (u, z, zl))
        if abs(zf + zlf) == 0:
            raise NoAnswer(_SHORTED.format(where=f"at {eng(frequency, 'Hz')}"))
        current = uf / (zf + zlf)
        at_f = AtFrequency(
            frequency=frequency,
            voltage=current * zlf,
            error=-zf / (zf + zlf),
            power=abs(current) ** 2 * zlf.real,
            matched_load=zf.conjugate(),
            maximum_power=abs(uf) ** 2 / (4 * zf.real) if zf.real > 0 else None,
        )
    return Loading(u, z, zl, voltage, error, power, maximum, at_f, no_maximum)


_SHORTED = ("source and load impedance add up to zero {where} (Z_th + Z_L = 0: a short across "
            "an ideal source, or a load that cancels the source impedance): the load current, "
            "the loaded voltage and the power have no finite value")


def _no_maximum(z: sympy.Expr, nominals: Mapping[sympy.Symbol, Fraction]) -> str | None:
    """Why a resistive source R_th has no maximum power transfer, or None when it has one."""
    if z == 0 or _tidy(z) == 0:
        return ("there is no maximum power transfer: the source resistance R_th is 0 (an "
                "ideal voltage source), so the power U_th²·R_L/(R_th + R_L)² = U_th²/R_L in a "
                "load grows without bound as R_L → 0")
    value = exact_value(z, nominals)
    if value is not None and value < 0:
        return (f"there is no maximum power transfer: the source resistance R_th is negative "
                f"at the nominal values ({eng(value, 'Ω')}), so the power in a load grows "
                "without bound as R_L approaches −R_th")
    if value == 0:
        return ("there is no maximum power transfer: the source resistance R_th is 0 at the "
                "nominal values, so the power in a load grows without bound as R_L → 0")
    return None


@dataclass(frozen=True)
class MinimumLoad:
    """Loads that keep |loading error| ≤ bound: resistance at least, capacitance at most."""

    bound: Fraction
    resistance: sympy.Expr | None
    """Closed form of the smallest load resistance (resistive source), else None."""
    resistance_value: float | None
    frequency: float | None = None
    capacitance: sympy.Expr | None = None
    """Closed form of the largest load capacitance at `frequency` (resistive source)."""
    capacitance_value: float | None = None


def minimum_load(
    source_impedance: sympy.Expr,
    bound: Fraction,
    nominals: Mapping[sympy.Symbol, Fraction],
    frequency: float | None = None,
) -> MinimumLoad:
    """Smallest R_L (and, at a frequency, largest C_L) with |Z_th/(Z_th + Z_L)| ≤ bound.

    Resistive source R: R_L ≥ R·(1 − e)/e and C_L ≤ e/(2π·f·R·√(1 − e²)). A reactive source
    is solved at the frequency from the same inequality with complex Z_th (numbers only).
    """
    e = rational(bound)
    z = source_impedance
    if not 0 < bound < 1:
        raise ValueError("the loading error bound must lie between 0 and 100 %")
    if not is_reactive(z):
        resistance = _tidy(z * (1 - e) / e)
        value = exact_value(resistance, nominals)
        if frequency is None:
            return MinimumLoad(bound, resistance, None if value is None else float(value))
        omega = 2 * sympy.pi * rational(Fraction(frequency))
        capacitance = e / (omega * z * sympy.sqrt(1 - e**2))
        c_value = exact_value(capacitance, nominals)
        return MinimumLoad(
            bound, resistance, None if value is None else float(value), frequency,
            capacitance, None if c_value is None else float(c_value),
        )
    if frequency is None:
        raise ValueError("the source impedance depends on s: give a frequency")
    zf = phasor(z, nominals, frequency)
    eb = float(bound)
    # |Z|² ≤ e²|Z + R|²  ⇔  R ≥ −Re Z + √(Re² Z + (1/e² − 1)|Z|²)
    r_min = -zf.real + math.sqrt(zf.real**2 + (1 / eb**2 - 1) * abs(zf) ** 2)
    # a = jωZ: |aC| ≤ e|1 + aC|  ⇔  (1 − e²)|a|²C² − 2e²Re(a)C − e² ≤ 0
    a = 1j * 2 * cmath.pi * frequency * zf
    c_max = (eb**2 * a.real + eb * math.sqrt(eb**2 * a.real**2 + (1 - eb**2) * abs(a) ** 2)) / (
        (1 - eb**2) * abs(a) ** 2)
    return MinimumLoad(bound, None, max(r_min, 0.0), frequency, None, c_max)


def cautions(voltage: float | None, power: float | None, where: str) -> list[str]:
    """Safety cautions for a voltage or dissipation at nominal that calls for one (the limits
    of symcirc.analysis.cautions)."""
    out = []
    above = value_caution(voltage, "V")
    if above:
        out.append(
            f"Caution: {eng(abs(voltage), 'V')} at {where}: {above}. Voltages at this level can "
            "be hazardous: follow local electrical codes and licensed practice for insulation, "
            "clearances and protection; this result is no safety review.")
    above = value_caution(power, "W")
    if above:
        out.append(
            f"Caution: {eng(abs(power), 'W')} dissipated in {where}: {above}. Check the part's "
            "power rating with derating for the ambient temperature and its surface "
            "temperature; follow local codes and licensed practice.")
    return out
