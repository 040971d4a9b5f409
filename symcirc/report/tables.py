"""Tables of the analyses for notes and sheets: sensitivities, tolerance spreads, and any other
details an analysis attaches to a result (loading, minimum load, component values).

Analyses put JSON-ready data in `Result.details` (it also goes into `derive --format json`);
the tolerance and sensitivity layouts are known here, anything else is shown generically.
"""

from __future__ import annotations

from fractions import Fraction
from typing import Any

import sympy

from ..model.typeset import latex_of
from ..model.units import decibels, degrees
from ..model.units import per as unit_per
from .content import Cell, Spread, Table, name_latex
from .filters import eng, percent

_STANDARD_TOLERANCE_NOTES = ("Nominal ", "Near zero", "Linearised", "Extremes", "Root-sum-square",
                             "Monte Carlo", "Largest contributions", "No symbol")


def sensitivity_table(results: list[Any], quantity: str) -> Table | None:
    """One table from the results of `sensitivities(Q)` (one result per symbol)."""
    rows = []
    heading = "Relative sensitivity"
    for result in results:
        row = result.details.get("sensitivity")
        if row is None:
            continue
        reference = row.get("relative_to")
        if reference == "1":
            heading = "Sensitivity x·∂Q/∂x"
        elif row.get("referred"):
            heading = f"Sensitivity (x/{reference})·∂Q/∂x"
        unit = row.get("derivative_unit") or ""
        rows.append((
            Cell(row["symbol"], name_latex(row["symbol"])),
            Cell(result.text(), result.latex()),
            Cell(_number(row.get("relative_nominal"), result.unit)),
            Cell(eng(row["derivative_nominal"], unit) if row.get("derivative_nominal")
                 is not None else "—"),
        ))
    if not rows:
        return None
    caption = results[0].notes[0] if results[0].notes else None
    return Table(f"Sensitivities of {quantity}",
                 ("Symbol x", heading, "At nominal", "∂Q/∂x at nominal"),
                 tuple(rows), caption)


def tolerance_tables(details: dict[str, Any], unit: str,
                     units: dict[str, str] | None = None) -> list[Table]:
    """The spread of a result (linearised, extremes, RSS, Monte Carlo) and the parts that
    contribute most, from `details['tolerance']`; `units` gives each symbol's unit (for the
    ranges of the toleranced values)."""
    units = units or {}
    t = details
    nominal = t["nominal"]
    near = t.get("near_zero", not nominal)

    def rel(value: float) -> str:
        if near:  # an offset in Q's unit: a relative figure would divide by nearly nothing
            return _signed(value - nominal, unit)
        change = (value - nominal) / nominal
        return ("+" if change > 0 else "") + percent(change)

    mc = t["monte_carlo"]
    rows = (
        (Cell("Linearised worst case"), Cell(eng(t["linearised"]["low"], unit)),
         Cell(eng(t["linearised"]["high"], unit)),
         Cell(f"{rel(t['linearised']['low'])} / {rel(t['linearised']['high'])}")),
        (Cell("Extremes over the tolerance box"), Cell(eng(t["extremes"]["low"], unit)),
         Cell(eng(t["extremes"]["high"], unit)),
         Cell(f"{rel(t['extremes']['low'])} / {rel(t['extremes']['high'])}")),
        (Cell("Root-sum-square"), Cell(eng(nominal - t["rss"], unit)),
         Cell(eng(nominal + t["rss"], unit)),
         Cell(f"± {eng(t['rss'], unit)}" if near else f"± {percent(t['rss'] / abs(nominal))}")),
        (Cell("Monte Carlo 0.1 % … 99.9 %"), Cell(eng(mc["quantile_0.1%"], unit)),
         Cell(eng(mc["quantile_99.9%"], unit)),
         Cell(f"mean {eng(mc['mean'], unit)}, σ {eng(mc['std'], unit)}")),
    )
    caption = (f"Nominal {eng(nominal, unit)}. "
               + ("Q is near zero, so its spread is given as offsets from nominal in its unit, "
                  f"not relative to it; {t.get('near_zero_rule', 'it is 0 at nominal')}. "
                  if near else "")
               + f"Extremes: {t['extremes']['method']}. "
               f"Monte Carlo: {mc['samples']:,} samples, seed {mc['seed']}, {mc['convention']}.")
    tables = [Table("Tolerance", ("Method", "Low", "High", "Offset" if near else "Relative"),
                    rows, caption)]
    contributions = [
        (Cell(c["symbol"], _label_latex(c["symbol"])),
         Cell(f"{_number(c['low'], units.get(c['symbol'], ''))} … "
              f"{_number(c['high'], units.get(c['symbol'], ''))}"),
         Cell(eng(c["derivative"], unit_per(unit, units.get(c["symbol"], "")))),
         Cell(eng(c["nominal"] * c["derivative"], unit) if near
              else eng(c["nominal"] * c["derivative"] / nominal)),
         Cell(eng(c["down"], unit)), Cell("+" + eng(c["up"], unit)))
        for c in t["contributions"]
    ]
    if contributions:
        tables.append(Table(
            "Sensitivities and contributions of the toleranced values",
            ("Symbol x", "Range", "∂Q/∂x", "x·∂Q/∂x" if near else "(x/Q)·∂Q/∂x",
             "Lowers Q by", "Raises Q by"),
            tuple(contributions),
            "At the nominal values, largest contribution first; Q moves by ∂Q/∂x times the "
            "change of x (linearised)."
            + (" Q is near zero: x·∂Q/∂x is the change of Q per unit relative change of x, "
               "in Q's unit." if near else "")))
    return tables


def response_table(details: dict[str, Any], unit: str) -> Table | None:
    """Magnitude and phase at chosen frequencies, with their Monte Carlo band, from
    `details['response']` of `response(Q)` (None for the parts of a response: their
    kind and stability are in the notes)."""
    rows = details.get("rows")
    if not rows:
        return None
    spread = "dB_low" in rows[0]
    out = []
    for row in rows:
        cells = [Cell(eng(row["frequency"], "Hz") + (" (−3 dB)" if row["corner"] else "")),
                 Cell(f"{eng(row['magnitude'], unit)} ({decibels(row['dB'])})"),
                 Cell(degrees(row["phase"]))]
        if spread:
            cells += [Cell(f"{decibels(row['dB_low']).removesuffix(' dB')} … "
                           f"{decibels(row['dB_high'])}"),
                      Cell(f"{degrees(row['phase_low'])} … {degrees(row['phase_high'])}")]
        out.append(tuple(cells))
    columns = ["Frequency", "Magnitude", "Phase"]
    caption = "At the nominal values."
    if spread:
        columns += ["Spread", "Phase spread"]
        caption += (f" Spreads: 0.1 % … 99.9 % of {details['samples']:,} Monte Carlo samples, "
                    "each toleranced part uniform over its band.")
    return Table("Response at chosen frequencies", tuple(columns), tuple(out), caption)


_ROOT_UNITS = {"V": "V/√Hz", "A": "A/√Hz"}


def noise_table(details: dict[str, Any]) -> Table | None:
    """The sources of a noise density from `details['noise']` of `noise(Q)` or
    `input_noise(X, Q)`: each source's own power density, and at a frequency its density
    at the measure and its share, largest first."""
    terms = details.get("terms")
    if not terms:
        return None
    root = _ROOT_UNITS.get(details.get("unit", ""), "")
    rows = tuple((Cell(t["source"], _label_latex(t["source"])), Cell(t["kind"]),
                  Cell(t["source_psd"], t["source_psd_latex"]),
                  Cell(_number(t["density"], root)),
                  Cell("—" if t["share"] is None else percent(t["share"])))
                 for t in terms)
    at = details.get("frequency")
    caption = ("Each source's power density S_k; its term S_k·|H_k(j2πf)|² is the matching "
               "term of the formula above (uncorrelated sources, so the terms add). "
               f"T = {eng(details['temperature'], 'K')}.")
    if at is not None:
        caption += f" Densities and shares at {eng(at, 'Hz')}."
    return Table("Noise contributions", ("Source", "Kind", "S_k", "Density", "Share"),
                 rows, caption)


def noise_band_table(details: dict[str, Any]) -> Table | None:
    """Each source's rms noise over a band and its share, from `details['noise_band']`."""
    rows = details.get("contributions")
    if not rows:
        return None
    unit = details.get("unit", "")
    out = tuple((Cell(r["source"], _label_latex(r["source"])), Cell(r["kind"]),
                 Cell(_number(r["rms"], unit)),
                 Cell("—" if r["share"] is None else percent(r["share"])), Cell(r["method"]))
                for r in rows)
    caption = (f"Over {eng(details['low'], 'Hz')} … "
               + ("∞" if details["high"] == float("inf") else eng(details["high"], "Hz"))
               + ", at the nominal values.")
    return Table("Noise over the band", ("Source", "Kind", "rms", "Share", "Method"), out,
                 caption)


def contribution_table(results: list[Any], quantity: str) -> Table | None:
    """One table from the results of `noise_contributions(Q)` (one result per source)."""
    rows = []
    for result in results:
        row = result.details.get("noise_contribution")
        if row is None:
            continue
        rows.append((Cell(row["source"], _label_latex(row["source"])), Cell(row["kind"]),
                     Cell(result.text(), result.latex()),
                     Cell(_number(row["density"], result.unit)),
                     Cell(percent(row["share"]) if row["share"] is not None else "—")))
    if not rows:
        return None
    caption = results[0].notes[0] if results[0].notes else None
    return Table(f"Noise contributions to {quantity}",
                 ("Source", "Kind", "Density", "At nominal", "Share of the power"),
                 tuple(rows), caption)


def tolerance_notes(notes: list[str]) -> list[str]:
    """The notes of a tolerance result that its tables do not already show (warnings)."""
    return [n for n in notes if not n.startswith(_STANDARD_TOLERANCE_NOTES)]


def spread(details: dict[str, Any]) -> Spread | None:
    """The worst-case range of a toleranced result (extremes over the tolerance box)."""
    t = details.get("tolerance")
    if not t or not t.get("contributions"):
        return None
    return Spread(t["extremes"]["low"], t["extremes"]["high"], t["extremes"]["method"])


def detail_tables(details: dict[str, Any]) -> list[Table]:
    """Generic tables of an analysis' details: a list of records becomes a table with one
    column per key; a record becomes a two-column table; plain values share a last table."""
    tables: list[Table] = []
    loose: list[tuple[Cell, ...]] = []
    formulas: list[tuple[Cell, ...]] = []
    for key, value in details.items():
        title = _title(key)
        if isinstance(value, dict) and "latex" in value:  # a formula (e.g. a neglected term)
            formulas.append((Cell(title), Cell(str(value.get("text", "")), str(value["latex"])),
                             _cell(value.get("nominal"))))
        elif isinstance(value, list) and value and all(isinstance(v, dict) for v in value):
            columns = list(dict.fromkeys(k for row in value for k in row))
            rows = tuple(tuple(_cell(row.get(c)) for c in columns) for row in value)
            tables.append(Table(title, tuple(_title(c) for c in columns), rows))
        elif isinstance(value, dict):
            rows = tuple((Cell(_title(k)), _cell(v)) for k, v in value.items()
                         if not isinstance(v, dict | list) and not k.endswith("_latex"))
            nested = {f"{key} {k}": v for k, v in value.items() if isinstance(v, dict | list)}
            if rows:
                tables.append(Table(title, ("", "Value"), rows))
            tables.extend(detail_tables(nested))
        elif isinstance(value, list):
            loose.append((Cell(title), Cell(", ".join(_cell(v).text for v in value))))
        else:
            loose.append((Cell(title), _cell(value)))
    if formulas:
        tables.append(Table("Formulas", ("", "Formula", "At nominal"), tuple(formulas)))
    if loose:
        tables.append(Table("Details", ("", "Value"), tuple(loose)))
    return tables


def _label_latex(label: str) -> str | None:
    return name_latex(label) if label.isidentifier() else None


def _signed(value: float, unit: str) -> str:
    return ("+" if value > 0 else "") + eng(value, unit)


def _number(value: Any, unit: str) -> str:
    return "—" if value is None else eng(value, unit)


def _title(key: str) -> str:
    text = str(key).replace("_", " ").strip()
    return text[:1].upper() + text[1:]


def _cell(value: Any) -> Cell:
    if value is None:
        return Cell("—")
    if isinstance(value, bool):
        return Cell("yes" if value else "no")
    if isinstance(value, float | int | Fraction):
        return Cell(eng(value))
    if isinstance(value, sympy.Basic):
        return Cell(sympy.sstr(value), latex_of(value))
    return Cell(str(value))
