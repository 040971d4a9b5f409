"""Figures of the analyses (matplotlib, Agg, no pyplot): frequency response, Monte Carlo
histogram, sensitivity bars, loading error against load. PNG or SVG, byte-identical on
every run (fixed SVG hash salt, no date), text kept as text in SVG.
"""

from __future__ import annotations

import cmath
import io
import math
import os
from collections.abc import Sequence
from pathlib import Path
from typing import TYPE_CHECKING, Any

from ..errors import SymcircError

if TYPE_CHECKING:  # pragma: no cover
    from ..language import syntax
    from ..model.circuit import Circuit
    from ..quantities.registry import DeriveOptions
    from .sensitivity import SensitivityTable
    from .tolerance import ToleranceAnalysis

FORMATS = (".png", ".svg")
_STYLE = {
    "svg.hashsalt": "symcirc",
    "svg.fonttype": "none",
    "font.size": 9,
    "axes.grid": True,
    "grid.alpha": 0.35,
    "axes.spines.top": False,
    "axes.spines.right": False,
}


def _figure(rows: int = 1):
    from matplotlib.figure import Figure

    figure = Figure(figsize=(6.4, 4.0 if rows == 1 else 5.2), dpi=150, layout="constrained")
    axes = figure.subplots(rows, 1, sharex=True) if rows > 1 else figure.subplots()
    return figure, axes


def _eng_axis(axis, unit: str) -> None:
    """Tick labels in the notes' number style (`10 kHz`, `−4.7 µ`)."""
    from matplotlib.ticker import FuncFormatter

    from ..model.units import eng

    axis.set_major_formatter(FuncFormatter(lambda value, _: eng(value, unit)))


def _scaled_axis(axis, values: Sequence[float], unit: str) -> str:
    """Tick labels as plain numbers in one SI prefix chosen from the data (`−3.05` with the
    axis in mV), never a prefix on each tick: returns the axis' unit with its prefix
    (`mV`), or a power of ten (`×10⁻³`) for a pure number."""
    from matplotlib.ticker import FuncFormatter

    from ..model.units import MINUS, PREFIXES, UNPREFIXED

    finite = [abs(float(v)) for v in values if math.isfinite(float(v)) and v != 0]
    largest = max(finite, default=1.0)
    plain = unit in UNPREFIXED or (not unit and 1e-2 <= largest < 1e4)  # 0.25, not 250×10⁻³
    exponent = 0 if plain else max(-15, min(12, 3 * math.floor(math.log10(largest) / 3)))
    scale = 10.0 ** exponent

    def tick(value: float, _: int) -> str:
        number = f"{value / scale:.6g}"
        return ("0" if float(number) == 0 else number).replace("-", MINUS)

    axis.set_major_formatter(FuncFormatter(tick))
    if unit:
        return PREFIXES[exponent] + unit
    if exponent == 0:
        return ""
    return "×10" + str(exponent).translate(_SUPERSCRIPT)


_SUPERSCRIPT = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")


def _legend_below(figure, axes) -> None:
    """The legend under the plot, outside the axes: never over the data it explains."""
    handles, labels = axes.get_legend_handles_labels()
    if not handles:
        return
    longest = sorted((len(label) for label in labels), reverse=True)
    # as many columns as fit the figure's width (about 100 characters at 7 pt)
    columns = max([k for k in (1, 2, 3) if k <= len(labels)
                   and k * (longest[0] + 6) <= 100] or [1])
    figure.legend(handles, labels, loc="outside lower center", ncols=columns, fontsize=7,
                  frameon=False)


def _percent_axis(axis) -> None:
    """Plain decimal percentages on a log axis (`0.01 %`, not a power of ten)."""
    from matplotlib.ticker import FuncFormatter

    from ..model.units import percent_text

    axis.set_major_formatter(FuncFormatter(lambda value, _: percent_text(value / 100)))


def _axis_label(name: str, unit: str) -> str:
    return f"{name} ({unit})" if unit else name


def image(figure, fmt: str) -> bytes:
    """`figure` as PNG, SVG or PDF bytes (`fmt`: 'png', 'svg' or 'pdf'; PDF for the PDF
    note), deterministically."""
    from matplotlib import rc_context

    metadata = {"svg": {"Date": None}, "pdf": {"CreationDate": None}}.get(
        fmt, {"Software": None})
    buffer = io.BytesIO()
    with rc_context(_STYLE):
        figure.savefig(buffer, format=fmt, metadata=metadata)
    return buffer.getvalue()


def image_format(path: str | os.PathLike) -> str:
    """'png' or 'svg' from the file's extension; SymcircError for any other."""
    suffix = Path(path).suffix.lower()
    if suffix not in FORMATS:
        raise SymcircError(f"plots are written as .png or .svg, not "
                           f"{suffix or 'no extension'}", str(path))
    return suffix[1:]


def save(figure, path: str | os.PathLike, inputs: Sequence[str | os.PathLike] = ()) -> None:
    """Write `figure` as PNG or SVG (by extension) through the one output writer."""
    from ..output import write_file

    write_file(path, image(figure, image_format(path)), inputs)


def _styled(build):
    """Build a figure under the plot style (fonts and grid are read when artists are made)."""
    from matplotlib import rc_context

    def wrapper(*args: Any, **kwargs: Any):
        with rc_context(_STYLE):
            return build(*args, **kwargs)

    wrapper.__doc__ = build.__doc__
    wrapper.__name__ = build.__name__
    return wrapper


# ---------------------------------------------------------------- figures from data


@_styled
def frequency_response_figure(
    frequencies: Sequence[float], response: Sequence[complex], label: str, unit: str = "",
    band: Any = None, unstable: bool = False, markers: Sequence[tuple[float, str]] = (),
):
    """Magnitude and phase (°) against frequency on a log axis; with `band` (a
    response.Band over the same frequencies) the Monte Carlo spread shaded around them.
    A pure number (a voltage gain) is drawn in dB; a quantity with a unit (an impedance in
    Ω) as its magnitude in that unit on log axes. `markers` (frequency, name) are drawn as
    vertical lines through both plots, named at the top (f0, the −3 dB points)."""
    import numpy as np

    f = np.asarray(frequencies, dtype=float)
    h = np.asarray(response, dtype=complex)
    figure, (top, bottom) = _figure(rows=2)
    in_db = not unit
    with np.errstate(divide="ignore"):
        if in_db:
            top.semilogx(f, 20 * np.log10(np.abs(h)), color="C0", label="nominal")
        else:
            top.loglog(f, np.abs(h), color="C0", label="nominal")
    phase = np.degrees(np.unwrap(np.angle(h)))
    bottom.semilogx(f, phase, color="C1")
    if band is not None:
        low, high = band.quantiles
        shown = f"Monte Carlo {100 * low:g} % … {100 * high:g} % ({band.samples:,} samples)"
        low_band, high_band = band.low_db, band.high_db
        if not in_db:
            low_band, high_band = 10 ** (low_band / 20), 10 ** (high_band / 20)
        top.fill_between(f, low_band, high_band, color="C0", alpha=0.25, linewidth=0,
                         label=shown)
        # the band follows the nominal phase's branch; shift it onto the curve as drawn
        shift = phase - band.nominal_phase
        bottom.fill_between(f, band.low_phase + shift, band.high_phase + shift, color="C1",
                            alpha=0.25, linewidth=0)
    _mark_frequencies(top, bottom, f, h, markers, in_db)
    if band is not None or markers:
        _legend_below(figure, top)
    if in_db:
        top.set_ylabel("Magnitude (dB)")
    else:
        top.set_ylabel(f"|{label}| ({unit})" if len(label) <= 12 else f"Magnitude ({unit})")
        _eng_axis(top.yaxis, unit)
    bottom.set_ylabel("Phase (°)")
    bottom.set_xlabel("Frequency (Hz)")
    _eng_axis(bottom.xaxis, "Hz")
    title = label + ("  (unstable: a pole in the right half-plane)" if unstable else "")
    # above the markers' names
    figure.suptitle(title, fontsize=9, color="C3" if unstable else "k")
    return figure


MARKER_STYLE = {"f0": ("0.3", ":"), "−3 dB": ("C2", "--")}
"""Colour and line style of each kind of frequency marker."""


def _mark_frequencies(top, bottom, f, h, markers: Sequence[tuple[float, str]],
                      in_db: bool) -> None:
    """Vertical lines through both plots at each marked frequency, named in the legend (`f0 =
    1.03 kHz`, `−3 dB: 969 Hz, 1.09 kHz`: close markers cannot overlap there); the −3 dB
    points also as dots on the magnitude curve."""
    import numpy as np

    from ..model.units import eng

    for kind, (color, style) in MARKER_STYLE.items():
        found = sorted(frequency for frequency, name in markers if name == kind)
        if not found:
            continue
        joined = ", ".join(eng(x, "Hz") for x in found)
        label = f"{kind} = {joined}" if kind == "f0" else f"{kind}: {joined}"
        for k, frequency in enumerate(found):
            top.axvline(frequency, color=color, linestyle=style, linewidth=1,
                        label=label if k == 0 else None)
            bottom.axvline(frequency, color=color, linestyle=style, linewidth=1)
        if kind == "−3 dB":
            magnitude = np.interp(np.log10(found), np.log10(f), np.abs(h))
            top.plot(found, 20 * np.log10(magnitude) if in_db else magnitude, "o",
                     color=color, markersize=4)


def response_markers(expression, nominals) -> list[tuple[float, str]]:
    """(frequency in Hz, kind) of f0 (a second-order section's natural frequency) and of
    each −3 dB point, at the nominal values; the kinds are those of MARKER_STYLE. None that
    cannot be found."""
    from .response import Response, ResponseError
    from .values import rational

    markers: list[tuple[float, str]] = []
    try:
        response = Response.of(expression)
    except ResponseError:
        return markers
    if response.order == 2:
        try:
            f0 = response.parameters()["f0"].xreplace(
                {x: rational(v) for x, v in nominals.items()})
            if f0.is_number and f0.is_real and float(f0) > 0:
                markers.append((float(f0), "f0"))
        except (ResponseError, TypeError, KeyError):
            pass
    try:
        corners = response.corner_frequencies(nominals)
    except ResponseError:
        corners = []
    markers += [(f, "−3 dB") for f in corners if f > 0]
    return markers


def is_unstable(expression, nominals) -> bool:
    """Whether the response has a pole in the right half-plane at the nominal values."""
    from .response import Response, ResponseError

    try:
        words = Response.of(expression).stability(nominals)
    except ResponseError:
        return False
    return bool(words and words.startswith("Unstable"))


@_styled
def histogram_figure(analysis: ToleranceAnalysis, label: str, unit: str = ""):
    """Monte Carlo histogram with nominal, linearised worst case and true extremes marked."""
    figure, axes = _figure()
    mc = analysis.monte_carlo
    axes.hist(mc.values, bins=100, color="C0", alpha=0.75, label=f"Monte Carlo ({mc.samples:,})")
    marks = [
        (analysis.nominal, "nominal", "k", "-"),
        (analysis.linear_low, "linearised worst case", "C3", "--"),
        (analysis.linear_high, None, "C3", "--"),
        (analysis.extremes.low, "extremes over the box", "C2", ":"),
        (analysis.extremes.high, None, "C2", ":"),
    ]
    for value, name, color, style in marks:
        axes.axvline(float(value), color=color, linestyle=style, linewidth=1.2, label=name)
    shown = [float(v) for v, *_ in marks] + [float(mc.minimum), float(mc.maximum)]
    pad = 0.04 * (max(shown) - min(shown)) or 0.04 * abs(shown[0]) or 1.0
    axes.set_xlim(min(shown) - pad, max(shown) + pad)  # the outermost marks clear of the edge
    axes.set_xlabel(_axis_label(label, _scaled_axis(axes.xaxis, shown, unit)))
    axes.set_ylabel("Samples")
    axes.set_title(f"Spread of {label} ({mc.distribution} tolerances)")
    _legend_below(figure, axes)
    return figure


@_styled
def level_histogram_figure(levels: Any, worst: float, nominal: float | None, label: str):
    """Monte Carlo histogram of a level in dB (a rejection ratio), its worst case over the
    tolerance box and its nominal value marked; levels above the 99.9 % quantile (a near
    perfect match, up to infinity) are left out of the bins and said so."""
    import numpy as np

    values = np.asarray(levels, dtype=float)
    top = float(np.quantile(values, 0.999))
    kept = values[values <= top]
    figure, axes = _figure()
    axes.hist(kept, bins=100, color="C0", alpha=0.75,
              label=f"Monte Carlo ({values.size:,}; top 0.1 % not drawn)")
    axes.axvline(worst, color="C3", linestyle="--", linewidth=1.2,
                 label=f"worst case over the box {worst:.1f} dB")
    if nominal is not None and nominal <= top:
        axes.axvline(nominal, color="k", linewidth=1.2, label="nominal")
    axes.set_xlabel(f"{label} (dB)")
    axes.set_ylabel("Samples")
    axes.set_title(f"Spread of {label}")
    _legend_below(figure, axes)
    return figure


@_styled
def sensitivity_figure(table: SensitivityTable, label: str, unit: str = ""):
    """Horizontal bars of the relative sensitivities, largest at the top; `unit` is that of
    the rows when they are referred to something other than Q (x·∂Q/∂x has Q's unit)."""
    rows = [r for r in table.rows if r.relative_value is not None]
    figure, axes = _figure()
    names = [str(r.symbol) for r in rows][::-1]
    values = [float(r.relative_value) for r in rows][::-1]
    limit = dominance_limit(values)
    drawn = values if limit is None else [max(-limit, min(limit, v)) for v in values]
    axes.barh(names, drawn, color=["C0" if v >= 0 else "C3" for v in values],
              hatch=[("//" if limit is not None and abs(v) > limit else "") for v in values])
    axes.axvline(0, color="k", linewidth=0.8)
    if table.reference == 1:
        name = "Sensitivity x·∂Q/∂x"
    else:
        reference = "Q" if table.reference is None else str(table.reference)
        name = f"Relative sensitivity (x/{reference})·∂Q/∂x"
    shown = _scaled_axis(axes.xaxis, drawn, unit)
    axes.set_xlabel(_axis_label(name, shown) if shown else name)
    from ..model.units import eng

    span = max((abs(v) for v in drawn), default=1.0) or 1.0
    for y, (value, bar) in enumerate(zip(values, drawn, strict=True)):
        clipped = limit is not None and abs(value) > limit
        text = eng(value, unit) + (" (bar cut)" if clipped else "")
        inside = clipped or abs(bar) > 0.6 * span  # long bars carry their value inside
        axes.text(bar - (0.02 * span if bar >= 0 else -0.02 * span) if inside
                  else bar + (0.02 * span if bar >= 0 else -0.02 * span), y, text,
                  va="center", fontsize=7,
                  ha=("right" if bar >= 0 else "left") if inside else
                  ("left" if bar >= 0 else "right"),
                  color="white" if inside else "k")
    axes.set_xlim(-1.25 * span if min(drawn, default=0) < 0 else 0,
                  1.25 * span if max(drawn, default=0) > 0 else 0.05 * span)
    axes.set_ylabel("Symbol x")
    axes.set_title(f"Sensitivities of Q = {label}")
    return figure


DOMINANCE = 5.0
"""A bar longer than this many times the next longest is cut (and its value written on it),
so that the others stay readable on a linear axis."""


def dominance_limit(values: Sequence[float]) -> float | None:
    """Where bars are cut when one dominates: 1.5 times the second longest, or None.

    A log axis would lose the signs and make small bars look alike; a cut bar with its value
    written keeps the axis linear, so the other bars compare by length as before."""
    magnitudes = sorted((abs(v) for v in values), reverse=True)
    if len(magnitudes) < 2 or magnitudes[1] == 0 or magnitudes[0] <= DOMINANCE * magnitudes[1]:
        return None
    return 1.5 * magnitudes[1]


@_styled
def loading_figure(
    source_impedance: complex,
    label: str,
    load: float | None = None,
    bound: float | None = None,
    smallest: float | None = None,
):
    """|Loading error| against a resistive load, log–log, with the chosen load, the error
    bound and the smallest load meeting it marked."""
    import numpy as np

    scale = abs(source_impedance) or 1.0
    loads = np.logspace(math.log10(scale) - 1, math.log10(scale) + 6, 400)
    error = np.abs(source_impedance / (source_impedance + loads))
    figure, axes = _figure()
    axes.loglog(loads, 100 * error, color="C0")
    from ..model.units import percent_text

    if load is not None:
        at = abs(source_impedance / (source_impedance + load))
        axes.plot([load], [100 * at], "o", color="C3", label=f"load: {percent_text(at)}")
    if bound is not None:
        axes.axhline(100 * bound, color="C2", linestyle="--", label=f"bound {percent_text(bound)}")
    if smallest is not None:
        from ..model.units import eng

        axes.axvline(smallest, color="C2", linestyle=":",
                     label=f"smallest load {eng(smallest, 'Ω')}")
    axes.set_xlabel("Load resistance R_L (Ω)")
    axes.set_ylabel("Loading error |ΔU/U| (%)")
    _eng_axis(axes.xaxis, "Ω")
    _percent_axis(axes.yaxis)
    axes.set_title(f"Loading of {label}")
    if load is not None or bound is not None:
        _legend_below(figure, axes)
    return figure


DENSITY_PREFIXES = ((1e-15, "f"), (1e-12, "p"), (1e-9, "n"), (1e-6, "µ"), (1e-3, "m"),
                    (1.0, ""))
"""Prefixes of a noise density's axis, chosen so that the total's peak reads 1 … 1000."""

MAJOR_CONTRIBUTIONS = 6
"""Contributions drawn one by one in a density figure; the rest are drawn summed."""


def density_scale(largest: float) -> tuple[float, str]:
    """(factor, prefix) for an amplitude density whose largest value is `largest`."""
    for factor, prefix in reversed(DENSITY_PREFIXES):
        if largest >= factor:
            return factor, prefix
    return DENSITY_PREFIXES[0]


@_styled
def noise_density_figure(
    frequencies: Sequence[float], contributions: Sequence[tuple[str, Sequence[float]]],
    label: str, unit: str = "V", band: tuple[float, float] | None = None,
):
    """Amplitude noise density √S (nV/√Hz, pA/√Hz …) against frequency, log–log: the total
    and each major contribution (`contributions`: (name, power density in unit²/Hz) over
    `frequencies`), the largest first, the others summed; the legend beside the axes, clear
    of the data; with `band` (f1, f2) the integration band shaded."""
    import numpy as np

    f = np.asarray(frequencies, dtype=float)
    powers = [(name, np.asarray(p, dtype=float)) for name, p in contributions]
    total = np.sum([p for _, p in powers], axis=0) if powers else np.zeros_like(f)
    # rank by the power over the plotted range (a trapezoid sum in ln f is enough to rank)
    weight = np.gradient(np.log(f)) * f
    ranked = sorted(powers, key=lambda item: -float(np.sum(item[1] * weight)))
    shown, rest = ranked[:MAJOR_CONTRIBUTIONS], ranked[MAJOR_CONTRIBUTIONS:]
    if len(rest) == 1:
        shown, rest = ranked, []
    factor, prefix = density_scale(float(np.sqrt(np.max(total))) if total.size else 0.0)
    figure, axes = _figure()
    figure.set_size_inches(7.6, 4.2)
    with np.errstate(divide="ignore"):
        axes.loglog(f, np.sqrt(total) / factor, color="k", linewidth=1.8, label="total")
        for k, (name, p) in enumerate(shown):
            axes.loglog(f, np.sqrt(p) / factor, color=f"C{k}", linewidth=1.1, label=name)
        if rest:
            others = np.sum([p for _, p in rest], axis=0)
            axes.loglog(f, np.sqrt(others) / factor, color="0.55", linewidth=1.0,
                        linestyle="--", label=f"{len(rest)} others")
    if band is not None:
        low, high = band
        from ..model.units import eng

        axes.axvspan(max(low, float(f[0])), min(high, float(f[-1])), color="C0", alpha=0.07,
                     linewidth=0, label=f"band {eng(low, 'Hz')} … {eng(high, 'Hz')}")
    top = float(np.sqrt(np.max(total))) / factor if total.size else 1.0
    axes.set_ylim(top / 1e4, top * 3)
    density_unit = f"{prefix}{unit}/√Hz"
    axes.set_ylabel(f"Noise density ({density_unit})")
    axes.set_xlabel("Frequency (Hz)")
    _eng_axis(axes.xaxis, "Hz")
    from matplotlib.ticker import FuncFormatter

    axes.yaxis.set_major_formatter(FuncFormatter(lambda value, _: f"{value:g}"))
    axes.set_title(f"Noise density of {label}")
    axes.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), borderaxespad=0.0, fontsize=7)
    return figure


# ---------------------------------------------------------------- from a circuit


def plot(
    circuit: Circuit, quantity: syntax.Quantity, options: DeriveOptions,
    path: str | os.PathLike,
) -> None:
    """Plot a quantity of `circuit` to `path` (.png or .svg), never over the circuit's file."""
    image_format(path)
    save(figure_of(circuit, quantity, options), path, inputs=(circuit.file,))


def figure_of(circuit: Circuit, quantity: syntax.Quantity, options: DeriveOptions):
    """The figure of a quantity of `circuit`, derived with `options` (the pipeline's).

    `tolerance(Q)`: Monte Carlo histogram with the worst-case bounds; the noise quantities
    (`noise(Q)`, `noise_rms(Q, f1, f2)`, ...): the density at Q per source; `sensitivities(Q)`:
    bars; `loading(port, Z)` and `minimum_load(port, error)`: loading error against load;
    a transfer function (a quantity in s): magnitude and phase against frequency, and for
    `response(Q)` their Monte Carlo band shaded.
    """
    from . import quantities as q
    from .noise_quantities import MEASURE_ARGUMENT

    inner = quantity.args[0] if quantity.args else None
    if quantity.name == "tolerance" and getattr(inner, "name", None) in ("cmrr", "psrr"):
        from .rejection import spread

        level = spread(circuit, inner, options)
        figure = level_histogram_figure(level.levels, level.worst, level.nominal,
                                        level.label)
    elif quantity.name == "tolerance":
        result, analysis = q.tolerance_analyses(circuit, quantity, options)[0]
        figure = histogram_figure(analysis, result.quantity, result.unit)
    elif quantity.name == "sensitivities":
        result, table = q.sensitivity_tables(circuit, quantity, options)[0]
        if not any(row.relative_value is not None for row in table.rows):
            raise q.Reader(circuit, options).error(
                quantity, f"no sensitivity of {result.quantity} has a value to plot (a symbol "
                          "without a nominal value, or s)")
        unit = q.sensitivity_unit(circuit, result, table)
        figure = sensitivity_figure(table, result.quantity, unit)
    elif quantity.name in MEASURE_ARGUMENT:
        from .noise_quantities import density_curves

        curves = density_curves(circuit, quantity, options)
        figure = noise_density_figure(curves.frequencies, curves.contributions, curves.label,
                                      curves.unit, curves.band)
    elif quantity.name in ("loading", "minimum_load"):
        case = q.loading_case(circuit, quantity, options)
        if not cmath.isfinite(case.source_impedance_value):
            raise q.Reader(circuit, options).error(
                quantity, f"the source impedance at {case.port} has no value here; a reactive "
                          "source needs a frequency, e.g. loading(out, 10 kΩ, 1 kHz)")
        if case.source_impedance_value == 0:
            raise q.Reader(circuit, options).error(
                quantity, f"nothing to plot: the source impedance at {case.port} is 0 (an ideal "
                          "source), so every load reads the open-circuit voltage (the loading "
                          "error is 0)")
        smallest = None
        if case.bound is not None:
            from .loading import minimum_load

            smallest = minimum_load(case.thevenin_impedance.expression, case.bound,
                                    case.nominals, case.frequency).resistance_value
        figure = loading_figure(case.source_impedance_value, case.port, case.load_value,
                                None if case.bound is None else float(case.bound), smallest)
    else:
        read = q.Reader(circuit, options)
        result = read.single(quantity)
        try:
            frequencies, response = frequency_response(result.expression, circuit.symbol_nominals())
        except SymcircError as problem:
            raise read.error(quantity, problem.message) from None
        band = None
        if quantity.name == "response":  # with the Monte Carlo band of magnitude and phase
            from .frequency import response_band

            band = response_band(circuit, result, frequencies, seed=options.seed)
        figure = frequency_response_figure(
            frequencies, response, result.quantity, result.unit, band,
            is_unstable(result.expression, circuit.symbol_nominals()),
            response_markers(result.expression, circuit.symbol_nominals()))
    return figure


def frequency_response(expression, nominals):
    """H(j·2π·f) at the nominal values over a range set by the poles and zeros (±2 decades)."""
    import numpy as np
    import sympy

    from ..model.circuit import LAPLACE
    from .values import rational

    if LAPLACE not in expression.free_symbols:
        raise SymcircError("nothing to plot against frequency: the quantity does not depend on s; "
                    "plot a transfer function, tolerance(..), sensitivities(..) or loading(..)")
    missing = sorted(str(x) for x in expression.free_symbols - set(nominals) - {LAPLACE})
    if missing:
        raise SymcircError(f"no value for {', '.join(missing)}: a frequency response needs "
                           "numbers")
    h = sympy.cancel(expression.xreplace({x: rational(v) for x, v in nominals.items()}))
    numerator, denominator = (sympy.Poly(p, LAPLACE) for p in sympy.fraction(h))
    corners = [abs(complex(r)) / (2 * math.pi)
               for p in (numerator, denominator) if p.degree() > 0
               for r in p.nroots(n=15)]
    corners = [c for c in corners if c > 0]
    # two decades below the lowest and above the highest, widened to whole decades (a
    # corner a rounding error above a decade does not add one)
    low = 10 ** math.floor(math.log10(min(corners)) - 2 + 1e-9) if corners else 1.0
    high = 10 ** math.ceil(math.log10(max(corners)) + 2 - 1e-9) if corners else 1e6
    frequencies = np.logspace(math.log10(low), math.log10(high), 600)
    s = 2j * math.pi * frequencies
    response = np.polyval([complex(c) for c in numerator.all_coeffs()], s) / np.polyval(
        [complex(c) for c in denominator.all_coeffs()], s)
    return frequencies, response
