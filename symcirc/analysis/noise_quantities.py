"""Noise over a band as quantities: `noise_rms(Q, f1, f2)`, `noise_bandwidth(Q)`,
`snr(S, Q, f1, f2)` and `noise_bits(Q, FSR, f1, f2)`.

Each noise source's transfer comes from `symcirc.quantities.noise` (the engine), its band
integral from `noise_band` (closed form where one exists, else adaptive quadrature, the
method stated); the sources are uncorrelated, so their mean squares add.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from fractions import Fraction

import sympy

from ..language import syntax
from ..model.circuit import Circuit
from ..model.units import eng
from ..quantities.common import Context
from ..quantities.noise import FREQUENCY, noise_setup, noise_terms, temperature_text
from ..quantities.registry import DeriveOptions
from ..results import Result
from . import noise_band
from .quantities import Reader, base_text
from .response import Response, ResponseError


@dataclass(frozen=True)
class SourceBand:
    """One source's mean square over the band."""

    name: str
    kind: str
    band: noise_band.BandNoise


@dataclass(frozen=True)
class Band:
    """The noise of a measure over f1 … f2: per source and in total."""

    text: str
    """The measure as written (`V(out)`)."""
    unit: str
    low: sympy.Expr
    high: sympy.Expr
    sources: tuple[SourceBand, ...]
    notes: tuple[str, ...]
    integrands: tuple[tuple[Response, noise_band.Density], ...] = ()
    """Each source's transfer (coefficients in s) and density, to integrate again at other
    values."""

    @property
    def symbols(self) -> frozenset[sympy.Symbol]:
        """The symbols the band's noise depends on (its transfers and densities)."""
        found: set[sympy.Symbol] = set()
        for transfer, density in self.integrands:
            for c in (*transfer.numerator, *transfer.denominator, density.white,
                      density.corner):
                found |= getattr(c, "free_symbols", set())  # a plain number has none
        return frozenset(found - {sympy.Symbol("s"), FREQUENCY})

    def mean_square_at(self, point: Mapping[sympy.Symbol, Fraction]) -> float:
        """The band's mean square with the symbols at `point` (integrated again)."""
        return float(sum(noise_band.band_noise(transfer, density, self.low, self.high,
                                               point).mean_square_value
                         for transfer, density in self.integrands))

    @property
    def error(self) -> float:
        """The estimated absolute error of the numerical integration (0 when closed)."""
        return float(sum(s.band.error for s in self.sources))

    @property
    def mean_square(self) -> sympy.Expr | None:
        """Σ of the sources' closed forms, None when one has none."""
        if any(s.band.mean_square is None for s in self.sources):
            return None
        return sympy.Add(*(s.band.mean_square for s in self.sources))

    @property
    def value(self) -> float | None:
        values = [s.band.mean_square_value for s in self.sources]
        return None if None in values else float(sum(values))

    @property
    def methods(self) -> str:
        found = list(dict.fromkeys(s.band.method for s in self.sources))
        return "; ".join(found) if found else "no noise source reaches it"


def _hertz(read: Reader, arg, what: str) -> sympy.Expr:
    if isinstance(arg, syntax.Name) and arg.name == "oo":
        return sympy.oo
    value = read.number(arg, what, ("Hz", None))
    if value < 0:
        raise read.error(arg, f"{what} must not be negative")
    return sympy.Rational(value.numerator, value.denominator)


def band_of(circuit: Circuit, quantity: syntax.Quantity, options: DeriveOptions,
            measure_arg, low_arg, high_arg) -> Band:
    """Every source's noise at a measure over the band f1 … f2."""
    read = Reader(circuit, options)
    low = _hertz(read, low_arg, "the band's lower frequency f1")
    high = _hertz(read, high_arg, "the band's upper frequency f2")
    if not high > low:
        raise read.error(high_arg, "a noise band runs from f1 up to f2 > f1")
    setup = noise_setup(circuit, options.memo)
    context = Context(setup.circuit, options)
    measure, text, unit, notes = context.measure(measure_arg)
    nominals = setup.circuit.symbol_nominals()
    sources = []
    integrands = []
    for term in noise_terms(context, setup, measure, quantity):
        source = term.source
        try:
            band = noise_band.band_noise(term.transfer,
                                         noise_band.Density(source.white, source.corner),
                                         low, high, nominals)
        except ResponseError as problem:
            raise read.error(quantity, f"the noise of {source.name} at {text}: "
                                       f"{problem}") from None
        sources.append(SourceBand(source.name, source.kind, band))
        integrands.append((noise_band.response_of(term.transfer),
                           noise_band.Density(source.white, source.corner)))
    return Band(text, unit, low, high, tuple(sources), setup.notes + notes, tuple(integrands))


def _band_text(band: Band) -> str:
    return f"{_hz(band.low)} … {_hz(band.high)}"


def _hz(value: sympy.Expr) -> str:
    return "∞" if value == sympy.oo else eng(Fraction(int(value.p), int(value.q)), "Hz")


def _shown(value: float) -> sympy.Expr:
    """A value found by numerical integration, as the decimal number it is (every digit of
    the double kept: 4 digits would move the nominal value by up to 1e-4)."""
    return sympy.Float(value, 15) if value else sympy.Integer(0)


def _decimal(value: sympy.Expr, band: Band) -> sympy.Expr:
    """A figure built on a numerically integrated band, as one decimal number."""
    if band.mean_square is None and value.is_number:
        return _shown(float(value))
    return value


def _error_text(band: Band) -> str:
    value = band.value or 0.0
    return f"{band.error / value:.1e} relative" if value else f"{band.error:.1e}"


def numeric_band(circuit: Circuit, quantity: syntax.Quantity, options: DeriveOptions,
                 result: Result) -> tuple[frozenset[sympy.Symbol],
                                          Callable[[Mapping[sympy.Symbol, Fraction]], float],
                                          float] | None:
    """For a result integrated numerically: (the symbols it depends on, its value at other
    values of them, its estimated relative error); None for a closed form. Only
    `noise_rms(..).rms` and `.mean_square` are re-integrated; snr and noise_bits of a
    numerical band are refused at `quantity`."""
    band_info = result.details.get("noise_band")
    if band_info is None or band_info.get("exact", True):
        return None
    read = Reader(circuit, options)
    if quantity.name != "noise_rms" or result.part not in ("rms", "mean_square"):
        raise read.error(quantity, f"{result.quantity} has no closed form (its band is "
                                   "integrated numerically); ask for the sensitivities or the "
                                   "tolerance of noise_rms(..) over the same band instead")
    args = read.arguments(quantity, 3, 3, "a port, V(..) or I(..) and a band", parts=True)
    band = band_of(circuit, quantity, options, *args)
    relative = band.error / band.value if band.value else 0.0
    if result.part == "rms":
        return band.symbols, lambda point: math.sqrt(band.mean_square_at(point)), relative / 2
    return band.symbols, band.mean_square_at, relative


def _contributions(band: Band) -> list[dict]:
    total = band.value or 0.0
    rows = [{"source": s.name, "kind": s.kind, "rms": s.band.rms_value,
             "share": None if s.band.mean_square_value is None or not total
             else s.band.mean_square_value / total,
             "method": s.band.method} for s in band.sources]
    if all(r["rms"] is not None for r in rows):
        rows.sort(key=lambda r: -r["rms"])
    return rows


def noise_rms_quantity(circuit: Circuit, quantity: syntax.Quantity,
                       options: DeriveOptions) -> list[Result]:
    """`noise_rms(Q, f1, f2)`: `.rms` and `.mean_square` of the noise at Q over f1 … f2."""
    read = Reader(circuit, options)
    args = read.arguments(quantity, 3, 3, "a port, V(..) or I(..) and a band: "
                                          "noise_rms(out, 0.1 Hz, 10 Hz), noise_rms(out, 0, oo)",
                          parts=True)
    band = band_of(circuit, quantity, options, *args)
    nominals = {str(k): v for k, v in noise_setup(circuit, options.memo).circuit
                .symbol_nominals().items()}
    mean_square = band.mean_square
    numeric = mean_square is None
    if numeric:
        mean_square = _shown(band.value or 0.0)
    rows = _contributions(band)
    said = [f"Noise of {band.text} over {_band_text(band)}, √(Σ ∫ |H_k(j2πf)|²·S_k(f) df) "
            f"over every noise source k; {temperature_text(circuit)}.",
            f"Method: {band.methods}.", *band.notes]
    if rows and rows[0]["rms"] is not None and band.value:
        said.append("Largest: " + ", ".join(
            f"{r['source']} {eng(r['rms'], band.unit)} ({100 * r['share']:.3g} %)"
            for r in rows[:3]) + ".")
    details = {"noise_band": {"low": float(band.low), "high": float(band.high),
                              "method": band.methods, "unit": band.unit,
                              "exact": not numeric, "contributions": rows}}
    rms = sympy.sqrt(mean_square)
    if numeric:
        said.insert(1, f"No closed form: U_n,rms = {eng(math.sqrt(band.value or 0.0), band.unit)}"
                       f" is a numerical value (estimated error {_error_text(band)}).")
        rms = _shown(math.sqrt(band.value or 0.0))
        details["noise_band"] |= {"value": band.value, "error": band.error}
    base = base_text(quantity)
    letter = "U" if band.unit == "V" else "I"
    results = [Result(f"{base}.rms", rms, band.unit, nominals,
                      tuple(said), part="rms", details=details,
                      name_latex=rf"{letter}_{{\mathrm{{n,rms}}}}"),
               Result(f"{base}.mean_square", mean_square, f"{band.unit}²", nominals,
                      tuple(said), part="mean_square", details=details,
                      name_latex=rf"{letter}_{{\mathrm{{n,rms}}}}^{{2}}")]
    return read.select(quantity, results)


def noise_bandwidth_quantity(circuit: Circuit, quantity: syntax.Quantity,
                             options: DeriveOptions) -> list[Result]:
    """`noise_bandwidth(Q)`: the equivalent noise bandwidth of a response in s, in Hz."""
    read = Reader(circuit, options)
    (arg,) = read.arguments(quantity, 1, 1, "a response in s: noise_bandwidth(gain(Uin, out))")
    inner = read.single(arg)
    nominals = circuit.symbol_nominals()
    try:
        found = noise_band.noise_bandwidth(inner.expression, nominals)
    except ResponseError as problem:
        raise read.error(quantity, f"{inner.quantity}: {problem}") from None
    value = found.expression if found.expression is not None else _shown(found.value or 0.0)
    said = (f"Equivalent noise bandwidth of {inner.quantity}: ∫0^∞ |H(j2πf)|² df / "
            f"|H_ref|², the reference being {found.reference}.", f"Method: {found.method}.")
    return [Result(base_text(quantity), value, "Hz", {str(k): v for k, v in nominals.items()},
                   said, details={"noise_bandwidth": {"reference": found.reference,
                                                      "method": found.method,
                                                      "value": found.value}},
                   name_latex=r"B_{\mathrm{n}}")]


def snr_quantity(circuit: Circuit, quantity: syntax.Quantity,
                 options: DeriveOptions) -> list[Result]:
    """`snr(S, Q, f1, f2)`: 20·log10(S / noise_rms(Q, f1, f2)) in dB, S the signal's rms (or
    DC) value."""
    read = Reader(circuit, options)
    signal_arg, *band_args = read.arguments(
        quantity, 4, 4, "a signal, where its noise is, and a band: "
                        "snr(V(out), out, 0.1 Hz, 10 Hz)")
    signal = _signal(read, signal_arg)
    band = band_of(circuit, quantity, options, *band_args)
    mean_square = band.mean_square if band.mean_square is not None \
        else _shown(band.value or 0.0)
    if mean_square == 0:
        raise read.error(quantity, f"no noise reaches {band.text}: the ratio is infinite")
    value = _decimal(noise_band.signal_to_noise(signal.expression, mean_square), band)
    nominals = {str(k): v for k, v in noise_setup(circuit, options.memo).circuit
                .symbol_nominals().items()}
    said = (f"Signal-to-noise ratio of {signal.quantity} (taken as an rms or DC value) against "
            f"the noise of {band.text} over {_band_text(band)}, 10·log10(S²/U_n²); "
            f"{temperature_text(circuit)}.", f"Method: {band.methods}.", *band.notes)
    return [Result(base_text(quantity), value, "dB", nominals, said,
                   details={"noise_band": {"low": float(band.low), "high": float(band.high),
                                           "method": band.methods, "unit": band.unit,
                                           "exact": band.mean_square is not None,
                                           "contributions": _contributions(band)}},
                   name_latex=r"\mathrm{SNR}")]


def _signal(read: Reader, arg) -> Result:
    if isinstance(arg, syntax.Quantity | syntax.Voltage | syntax.Current):
        result = read.single(arg)
        if sympy.Symbol("s") in result.expression.free_symbols:
            raise read.error(arg, f"{result.quantity} depends on s: give the signal's value, "
                                  "e.g. at(gain(Uin, out), 1 kHz).magnitude times the input")
        return result
    expression = read.expression(arg)
    return Result(syntax.expression_text(arg), expression, "")


def noise_bits_quantity(circuit: Circuit, quantity: syntax.Quantity,
                        options: DeriveOptions) -> list[Result]:
    """`noise_bits(Q, FSR, f1, f2)`: `.noise_free` = log2(FSR/(6.6·U_n,rms)) and
    `.effective` = log2(FSR/U_n,rms), the resolution the noise at Q leaves a converter of
    full-scale range FSR."""
    read = Reader(circuit, options)
    measure_arg, range_arg, *band_args = read.arguments(
        quantity, 4, 4, "where the converter sees the noise, its full-scale range and a band: "
                        "noise_bits(out, 5 V, 0.1 Hz, 10 Hz)", parts=True)
    full_scale = read.expression(range_arg)
    band = band_of(circuit, quantity, options, measure_arg, *band_args)
    rms = band.mean_square
    rms = sympy.sqrt(rms) if rms is not None else _shown(math.sqrt(band.value or 0.0))
    if rms == 0:
        raise read.error(quantity, f"no noise reaches {band.text}: the resolution is unbounded")
    nominals = {str(k): v for k, v in noise_setup(circuit, options.memo).circuit
                .symbol_nominals().items()}
    range_text = syntax.expression_text(range_arg)
    said = (f"Resolution left by the noise of {band.text} over {_band_text(band)} in a "
            f"full-scale range of {range_text}: noise-free bits log2(FSR/(6.6·U_n,rms)) "
            "(peak-to-peak noise taken as 6.6 σ, common practice), effective bits "
            f"log2(FSR/U_n,rms); {temperature_text(circuit)}.", f"Method: {band.methods}.",
            *band.notes)
    base = base_text(quantity)
    details = {"noise_band": {"low": float(band.low), "high": float(band.high),
                              "method": band.methods, "unit": band.unit,
                              "exact": band.mean_square is not None}}
    noise_free = _decimal(noise_band.noise_free_bits(full_scale, rms), band)
    effective = _decimal(noise_band.effective_bits(full_scale, rms), band)
    results = [Result(f"{base}.noise_free", noise_free, "",
                      nominals, said, part="noise_free", details=details,
                      name_latex=r"N_{\mathrm{noise-free}}"),
               Result(f"{base}.effective", effective, "",
                      nominals, said, part="effective", details=details,
                      name_latex=r"N_{\mathrm{eff}}")]
    return read.select(quantity, results)


MEASURE_ARGUMENT = {"noise": 0, "noise_contributions": 0, "noise_rms": 0, "snr": 1,
                    "noise_bits": 0, "input_noise": 1}
"""Where each noise quantity names the measure whose density its figure shows."""
BAND_ARGUMENTS = {"noise_rms": (1, 2), "snr": (2, 3), "noise_bits": (2, 3)}
"""Where a band quantity names f1 and f2 (shaded in its figure)."""
DENSITY_POINTS = 400
"""Frequencies of a density figure (log-spaced)."""


@dataclass(frozen=True)
class DensityCurves:
    """What a noise density figure shows: each source's power density over frequency."""

    frequencies: object  # numpy array, Hz
    contributions: tuple[tuple[str, object], ...]
    """(source, |H_k|²·S_k in unit²/Hz at the frequencies), in the order of the sources."""
    label: str
    unit: str
    band: tuple[float, float] | None


def density_curves(circuit: Circuit, quantity: syntax.Quantity,
                   options: DeriveOptions) -> DensityCurves:
    """The noise density at the measure of a noise quantity (`noise(out)`,
    `noise_rms(out, f1, f2)`, ...), per source, at the nominal values: over the poles,
    zeros and 1/f corners of every source's transfer ± 2 decades, widened to the band."""
    import numpy as np

    read = Reader(circuit, options)
    args = quantity.args
    where = MEASURE_ARGUMENT[quantity.name]
    if len(args) <= where:
        raise read.error(quantity, f"{quantity.name}(..) needs a measure to plot its noise")
    band = None
    if quantity.name in BAND_ARGUMENTS and len(args) > max(BAND_ARGUMENTS[quantity.name]):
        low, high = (_hertz(read, args[k], what) for k, what in
                     zip(BAND_ARGUMENTS[quantity.name], ("f1", "f2"), strict=True))
        band = (float(low), math.inf if high == sympy.oo else float(high))
    setup = noise_setup(circuit, options.memo)
    context = Context(setup.circuit, options)
    measure, text, unit, _ = context.measure(args[where])
    divide_by = None
    if quantity.name == "input_noise":
        divide_by = context.element(args[0]).name
        unit = context.element(args[0]).unit
        text = f"{text} referred to {divide_by}"
    terms = noise_terms(context, setup, measure, quantity, divide_by=divide_by)
    if not terms:
        raise read.error(quantity, f"no noise source reaches {text}: nothing to plot")
    nominals = setup.circuit.symbol_nominals()
    corners = [float(value) for t in terms
               if (value := noise_band.value_of(t.source.corner, nominals))]
    if band is not None:
        corners += [b for b in band if 0 < b < math.inf]
    try:
        low, high = noise_band.plot_range([t.transfer for t in terms], nominals, corners)
        frequencies = np.logspace(math.log10(low), math.log10(high), DENSITY_POINTS)
        contributions = tuple(
            (t.source.name,
             noise_band.density_values(t.transfer, noise_band.Density(t.source.white,
                                                                      t.source.corner),
                                       frequencies, nominals))
            for t in terms)
    except ResponseError as problem:
        raise read.error(quantity, f"the noise density of {text}: {problem}") from None
    return DensityCurves(frequencies, contributions, text, unit, band)
