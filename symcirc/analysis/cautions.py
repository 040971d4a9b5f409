"""Safety cautions of a circuit, computed once here and shown by every command and the API.

At the nominal values, every independent source that has a value drives the circuit (DC, or
a sinusoid of peak amplitude equal to its value when written `at 50 Hz`; sources add by
superposition). The voltage between every pair of nodes is judged against the touch and
extra-low-voltage limits below, and the dissipation of every resistor and conductance
against a small part's usual rating. The circuit is solved numerically at the nominal
values (the engine's equations with numbers, solved by numpy), so a large circuit costs
little. Sources or parts without a value are listed as not assessed; the rest is still
judged.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from fractions import Fraction
from functools import cached_property

import numpy

from ..algebra.convert import atom_value
from ..engine.memo import Memo
from ..engine.mna import Equations
from ..errors import SymcircError
from ..model.circuit import REFERENCE, Circuit
from ..model.units import engineering
from ..quantities.common import Context
from ..quantities.registry import DeriveOptions


@dataclass(frozen=True)
class Limit:
    """A voltage limit: above `volts` (rms for AC) a caution says `what` and `source`."""

    volts: float
    what: str
    source: str


DC_LIMITS = (
    Limit(120.0, "the upper limit of extra-low voltage for ripple-free DC",
          "IEC 61140 / IEC 60449 band I, from memory"),
    Limit(60.0, "the limit for ripple-free DC that may be touched",
          "class ES1 of IEC 62368-1, from memory"),
)
"""Highest first: the first limit a DC voltage exceeds is the one stated."""
AC_LIMITS = (
    Limit(50.0, "the upper limit of extra-low voltage for AC",
          "IEC 61140 / IEC 60449 band I, from memory"),
    Limit(30.0, "the limit for AC that may be touched",
          "class ES1 of IEC 62368-1, from memory"),
)
POWER_LIMIT = 0.25
"""Watts in one resistor or conductance from which a caution is given (common practice: a
small through-hole resistor is rated 1/4 W, a 0805 chip resistor about 1/8 W)."""
MAX_UNKNOWNS = 2000
"""Largest system solved for the cautions (a dense complex matrix of 64 MB)."""
LISTED = 8
"""Pairs of nodes named one by one; more are counted."""

DEFER = ("These cautions are a design aid, not a safety review: check ratings, clearances "
         "and protection against the applicable standards and local codes, and have the "
         "design reviewed by a licensed or otherwise qualified person before building or "
         "connecting it.")

THRESHOLDS = (
    "Voltage between any two nodes: ripple-free DC above 60 V (ES1 of IEC 62368-1) and above "
    "120 V (extra-low-voltage limit of IEC 61140 / IEC 60449); AC above 30 V rms (ES1) and "
    "above 50 V rms (extra-low-voltage limit); the limits are quoted from memory.",
    "Dissipation in one resistor or conductance above 0.25 W, the usual rating of a small "
    "through-hole resistor (common practice).",
    "Judged at the nominal values: a source given a frequency (at 50 Hz) is a sinusoid whose "
    "peak amplitude is its value, any other source is DC; sources add by superposition.",
)


@dataclass(frozen=True)
class Assessment:
    """What every output shows: cautions, what was not assessed, thresholds and advice."""

    cautions: tuple[str, ...]
    not_assessed: tuple[str, ...]
    """Sentences naming the sources and parts left out for want of a value."""
    assessed: bool
    """True when at least one source was judged (else the circuit is all symbols)."""
    ac: bool
    """True when a judged source has a frequency (limits for shown values are then AC)."""

    @property
    def shown(self) -> bool:
        """Whether outputs show a cautions block: a caution, or a partial assessment."""
        return bool(self.cautions) or (self.assessed and bool(self.not_assessed))

    @property
    def thresholds(self) -> tuple[str, ...]:
        return THRESHOLDS

    @property
    def advice(self) -> str:
        return DEFER

    def lines(self) -> list[str]:
        """Every sentence of the block, in order (for text outputs and code comments)."""
        if not self.shown:
            return []
        out = [f"Caution: {c}" for c in self.cautions]
        out += [f"Not assessed: {n}" for n in self.not_assessed]
        out += [f"Threshold: {t}" for t in THRESHOLDS]
        return out + [DEFER]

    def to_json(self) -> dict:
        return {"cautions": list(self.cautions), "not_assessed": list(self.not_assessed),
                "thresholds": list(THRESHOLDS) if self.shown else [],
                "advice": DEFER if self.shown else None}


def assess(circuit: Circuit, memo: Memo | None = None) -> Assessment:
    """The cautions of `circuit` (computed once per circuit when the pipeline's `memo` is
    given)."""
    if memo is None:
        return _Assessor(circuit, Memo()).run()
    store = memo.of(circuit)
    cached = store.get("cautions")
    if cached is None:
        cached = store["cautions"] = _Assessor(circuit, memo).run()
    return cached


def attach(circuit: Circuit, results: list, memo: Memo | None = None) -> list:
    """The results with the cautions a reader must see beside each (the Python API's
    display): its own value's, then the circuit's."""
    assessment = assess(circuit, memo)
    shared = list(assessment.cautions)
    if assessment.shown:
        shared += list(assessment.not_assessed) + list(THRESHOLDS) + [DEFER]
    out = []
    for result in results:
        own = value_caution(result.nominal, result.unit, assessment.ac)
        out.append(result.replace(cautions=(
            [f"{result.quantity} is {engineering(result.nominal_exact, result.unit)}: {own}."]
            if own else []) + shared))
    return out


def value_caution(value: float | None, unit: str, ac: bool = False) -> str | None:
    """A short caution for a value shown on its own (a result's nominal), or None.

    A voltage is held against the limits above (in a circuit driven at a frequency, the AC
    limits as peaks: 42.4 V and 70.7 V); a power against the small-part rating."""
    if value is None:
        return None
    if unit == "V":
        for limit in AC_LIMITS if ac else DC_LIMITS:
            volts = limit.volts * math.sqrt(2) if ac else limit.volts
            if abs(value) > volts:
                kind = f"{limit.volts:g} V rms" if ac else f"{limit.volts:g} V DC"
                return f"above {kind}, a shock hazard"
    if unit == "W" and abs(value) > POWER_LIMIT:
        return f"above {POWER_LIMIT:g} W, check the part's rating"
    return None


class _Unsolvable(Exception):
    """The operating point cannot be computed (said in the not-assessed list)."""


class _Assessor:
    """One assessment: which sources drive the circuit, the solved node voltages, the
    cautions they call for."""

    def __init__(self, circuit: Circuit, memo: Memo) -> None:
        self.circuit = circuit
        self.context = Context(circuit, DeriveOptions(steps=False, memo=memo))
        self.not_assessed: list[str] = []

    def run(self) -> Assessment:
        groups = self.groups()  # frequency (None: DC) -> [(excitation, value)]
        if not groups:
            return Assessment((), tuple(self.not_assessed), False, False)
        unvalued = self.unvalued_parts()
        if unvalued:
            names = ", ".join(unvalued)
            one = len(unvalued) == 1
            self.not_assessed.append(f"{'Part' if one else 'Parts'} {names} "
                                     f"{'has' if one else 'have'} no value: only the voltage "
                                     "sources' own voltages were judged.")
            # the sources' own voltages are still judged; the gap is said only where a source
            # is itself above a limit (a symbolic circuit with a 1 V reference needs no word)
            cautions = self.voltage_cautions(self.source_pairs(groups))
            return Assessment(tuple(cautions), tuple(self.not_assessed), self.hazardous(groups),
                              any(f is not None for f in groups))
        try:
            voltages = {f: self.node_voltages(f, parts) for f, parts in groups.items()}
        except (SymcircError, _Unsolvable) as problem:
            message = problem.message if isinstance(problem, SymcircError) else str(problem)
            self.not_assessed.append(f"The operating point could not be computed: {message}; "
                                     "only the voltage sources' own voltages were judged.")
            cautions = self.voltage_cautions(self.source_pairs(groups))
            return Assessment(tuple(cautions), tuple(self.not_assessed), True,
                              any(f is not None for f in groups))
        ac = any(f is not None for f in voltages)
        cautions = self.voltage_cautions(self.node_pairs(voltages)) \
            + self.power_cautions(voltages)
        return Assessment(tuple(cautions), tuple(self.not_assessed), True, ac)

    # -- what drives the circuit
    def groups(self) -> dict[float | None, list[tuple[str, complex | Fraction]]]:
        nominals = self.context.nominals
        out: dict[float | None, list[tuple[str, complex | Fraction]]] = {}
        for name, value in self.context.network.excitations().items():
            element = self.circuit.elements.get(name)
            missing = [n for n in value.symbol_names() if n not in nominals]
            if missing:
                self.not_assessed.append(f"Source {name} has no value: it was left out, the "
                                         "other sources were judged.")
                continue
            frequency = None
            if element is not None and element.frequency is not None:
                frequency = self.frequency(element)
                if frequency is None:
                    continue
            amount = value.evaluate({n: nominals[n] for n in value.symbol_names()})
            out.setdefault(frequency, []).append((name, amount))
        return out

    def hazardous(self, groups) -> bool:
        """True when a voltage source's own value is above the lowest voltage limit."""
        for frequency, parts in groups.items():
            limit = min(DC_LIMITS, key=lambda x: x.volts).volts if frequency is None \
                else min(AC_LIMITS, key=lambda x: x.volts).volts * math.sqrt(2)
            for name, amount in parts:
                element = self.circuit.elements.get(name)
                if element is not None and element.kind == "voltage source" \
                        and abs(complex(amount)) > limit:
                    return True
        return False

    def frequency(self, element) -> float | None:
        written = element.frequency
        if written.is_Rational:
            return float(written)
        value = self.context.nominals.get(str(written))
        if value is None or value <= 0:
            self.not_assessed.append(f"Source {element.name} was left out: its frequency "
                                     f"{written} has no positive value.")
            return None
        return float(value)

    def unvalued_parts(self) -> list[str]:
        """Names (parts, or the parameters their values use) without a nominal value."""
        nominals = self.context.nominals
        names: set[str] = set()
        for element in self.circuit.elements.values():
            if element.is_source and not element.controls:
                continue  # judged one by one in groups()
            if element.controls:
                used = [c.coefficient_formula for c in element.controls]
            elif element.definition_formula is not None:
                used = [element.definition_formula]
            elif element.nominal is None and not element.is_ideal_opamp:
                names.add(element.name)
                continue
            else:
                continue
            # the model's formulas answer without sympy when plain (`s` is never a name)
            names |= {x for formula in used for x in formula.free_names() if x not in nominals}
        return sorted(names)

    # -- solving at the nominal values
    def node_voltages(self, frequency: float | None, parts) -> dict[str, complex]:
        """Every node's voltage for one group of sources (a DC value, or a phasor of peak
        amplitude): the engine's equations with every symbol at its nominal value, solved
        by numpy (the symbolic solution of a large circuit would be far too big)."""
        equations = self.equations
        s = 0j if frequency is None else complex(0.0, 2 * math.pi * frequency)
        point = self.point(s)
        size = len(equations.unknowns)
        if size > MAX_UNKNOWNS:
            raise _Unsolvable(f"the circuit has {size} unknowns; cautions are computed for up "
                              f"to {MAX_UNKNOWNS}")
        if len(equations.rows) != size:
            raise _Unsolvable("the circuit's equations are not square")
        matrix = numpy.zeros((size, size), dtype=complex)
        for i, row in enumerate(equations.rows):
            for j, entry in row.items():
                matrix[i, j] = _polynomial_at(equations.ring, entry, point)
        drive = numpy.zeros(size, dtype=complex)
        for excitation, amount in parts:
            for i, entry in equations.rhs.get(excitation, {}).items():
                drive[i] += _polynomial_at(equations.ring, entry, point) * complex(amount)
        try:
            solved = numpy.linalg.solve(matrix, drive)
        except numpy.linalg.LinAlgError:
            where = "at DC" if frequency is None else f"at {_hertz(frequency)}"
            raise _Unsolvable(f"the circuit has no unique operating point {where}") from None
        return {node: complex(solved[equations.index[("V", node)]])
                if ("V", node) in equations.index else 0j for node in self.circuit.nodes}

    @cached_property
    def equations(self) -> Equations:
        return Equations(self.context.network)

    def point(self, s: complex) -> dict[str, complex]:
        """A value for every variable of the engine's ring: nominal values, atoms (pi,
        square roots), elements defined with s (`Rs + 1/(s*C)`) at this s."""
        nominals = self.context.nominals
        point = {name: complex(value) for name, value in nominals.items()}
        for name, expr in self.context.atoms.items():
            point.setdefault(name, complex(atom_value(expr, nominals)))
        defined = [e for e in self.circuit.elements.values()
                   if e.name not in point and e.definition_formula is not None]
        if defined:  # values without a nominal (written with s, or with a part left free)
            import sympy

            values = {sympy.Symbol(n): sympy.Rational(v.numerator, v.denominator)
                      for n, v in nominals.items()}
            values[sympy.Symbol("s")] = sympy.Float(s.real) + sympy.I * sympy.Float(s.imag)
            for element in defined:
                value = sympy.N(element.definition.xreplace(values))
                if value.is_number:  # a source without a value is left out of the groups
                    point[element.name] = complex(value)
        point["s"] = s
        return point

    # -- judging
    def node_pairs(self, voltages: dict[float | None, dict[str, complex]]):
        """(a, b, V(a) - V(b) per frequency) for every pair of nodes that may be above a
        limit; the pairs are screened with numpy so that a large circuit costs little."""
        nodes = list(self.circuit.nodes)
        rows = {f: numpy.array([v[n] for n in nodes]) for f, v in voltages.items()}
        dc = rows[None].real if None in rows else numpy.zeros(len(nodes))
        between = numpy.abs(dc[:, None] - dc[None, :])
        candidates = between > min(limit.volts for limit in DC_LIMITS)
        squares = between**2
        for f, row in rows.items():
            if f is not None:
                squares = squares + numpy.abs(row[:, None] - row[None, :]) ** 2 / 2
        if len(rows) > (None in rows):  # a frequency: the AC limits apply to the rms value
            candidates |= numpy.sqrt(squares) > min(limit.volts for limit in AC_LIMITS)
        for i, j in zip(*numpy.nonzero(numpy.triu(candidates, 1)), strict=True):
            yield nodes[i], nodes[j], {f: v[nodes[i]] - v[nodes[j]] for f, v in voltages.items()}

    def source_pairs(self, groups) -> list[tuple[str, str, dict[float | None, complex]]]:
        """(p, n, value per frequency) of every valued voltage source: known without
        solving, so judged even when other parts have no value."""
        across: dict[tuple[str, str], dict[float | None, complex]] = {}
        for frequency, parts in groups.items():
            for name, amount in parts:
                element = self.circuit.elements.get(name)
                if element is not None and element.kind == "voltage source":
                    values = across.setdefault((element.nodes[0], element.nodes[1]), {})
                    values[frequency] = values.get(frequency, 0j) + complex(amount)
        return [(a, b, values) for (a, b), values in across.items()]

    def voltage_cautions(self, pairs) -> list[str]:
        found = []
        for a, b, across in pairs:
            dc = sum(v.real for f, v in across.items() if f is None)
            peaks = {f: abs(v) for f, v in across.items() if f is not None and abs(v) > 1e-12}
            judged = _judge_voltage(dc, peaks)
            if judged is not None:  # the reference is named second
                first, second = (b, a) if a == REFERENCE else (a, b)
                found.append((judged[0], first, second, judged[1], judged[2]))
        found.sort(key=lambda item: -item[0])
        out = [f"{text} between {a} and {b} at the nominal values: above "
               f"{limit.volts:g} V{'' if limit in DC_LIMITS else ' rms'}, "
               f"{limit.what} ({limit.source}); a shock hazard."
               for _, a, b, text, limit in found[:LISTED]]
        if len(found) > LISTED:
            out.append(f"{len(found) - LISTED} more pairs of nodes are above a voltage limit.")
        return out

    def power_cautions(self, voltages: dict[float | None, dict[str, complex]]) -> list[str]:
        out = []
        for element in self.circuit.elements.values():
            if not element.entry.resistive or not element.nominal:
                continue
            a, b = element.nodes[:2]
            squares = 0.0  # mean square voltage across the part
            for f, v in voltages.items():
                across = abs(v[a] - v[b])
                squares += across**2 if f is None else across**2 / 2
            value = float(element.nominal)
            power = squares / value**element.law.value_power  # P = V²/Z
            if power > POWER_LIMIT:
                kinds = ", ".join("DC" if f is None else _hertz(f) for f in voltages)
                out.append(f"{element.name} dissipates {engineering(_exactish(power), 'W')} "
                           f"({kinds}) at the nominal values: above {POWER_LIMIT:g} W, the "
                           "usual rating of a small through-hole resistor (common practice); "
                           "check its rating, derating and temperature.")
        return out


def _judge_voltage(dc: float, peaks: dict[float, float]) -> tuple[float, str, Limit] | None:
    """(size, how it is described, the limit exceeded) or None when within every limit."""
    if not peaks:
        for limit in DC_LIMITS:
            if abs(dc) > limit.volts:
                return abs(dc), f"{engineering(_exactish(abs(dc)), 'V')} DC", limit
        return None
    rms = math.sqrt(dc**2 + sum(p**2 / 2 for p in peaks.values()))
    for limit in AC_LIMITS:
        if rms > limit.volts:
            peak = abs(dc) + sum(peaks.values())
            where = ", ".join(_hertz(f) for f in sorted(peaks))
            text = (f"{engineering(_exactish(rms), 'V')} rms "
                    f"({engineering(_exactish(peak), 'V')} peak, {where}"
                    f"{' with DC' if abs(dc) > 1e-12 else ''})")
            return rms, text, limit
    return None


def _hertz(frequency: float) -> str:
    return engineering(_exactish(frequency), "Hz")


def _exactish(value: float) -> Fraction:
    """Four significant digits, as the cautions show values."""
    return Fraction(float(f"{value:.4g}"))


def _polynomial_at(ring, p, point: dict[str, complex]) -> complex:
    names = ring.names
    total = 0j
    for monomial, coefficient in ring.terms(p):
        term = complex(coefficient)
        for name, exponent in zip(names, monomial, strict=False):
            if exponent:
                if name not in point:
                    raise _Unsolvable(f"{name} has no value")
                term *= point[name] ** int(exponent)
        total += term
    return total


__all__ = ["AC_LIMITS", "DC_LIMITS", "DEFER", "POWER_LIMIT", "THRESHOLDS", "Assessment",
           "assess", "attach", "value_caution"]
