"""Frequency-domain quantities: design parameters as parts of a response
(`gain(Uin, out).w0`, `.Q`, `.poles`, `.f3db` ...), the response at a frequency
(`at(gain(Uin, out), 1 kHz).magnitude`, `.dB`, `.phase`), their sensitivities, and
`response(Q)`: magnitude and phase at chosen frequencies with their Monte Carlo spread.

Parts are Results like any quantity (closed forms with the nominal values), so
`sensitivities`, `tolerance`, `solve`, claims, export and notes take them as they are.
"""

from __future__ import annotations

import dataclasses
import math
from fractions import Fraction

import sympy

from ..language import syntax
from ..model.circuit import Circuit
from ..model.units import decibels, degrees, eng
from ..quantities.registry import DeriveOptions
from ..results import Result
from .quantities import Reader, _per, _unit_of, base_text, definitions, tolerances
from .response import Response, ResponseError, band, complex_text
from .tidy import tidy

# part: (unit, LaTeX symbol, sentence defining it); unit None: the unit of the response
PARTS: dict[str, tuple[str | None, str, str]] = {
    "dc": (None, r"H(0)", "DC gain H(0), the response as s -> 0."),
    "hf": (None, r"H(\infty)", "High-frequency gain, the response as s -> oo."),
    "K": (None, "K", "Section gain K: at DC for a low-pass (and notch), at high frequency for "
                     "a high-pass, at ω0 for a band-pass."),
    "w0": ("rad/s", r"\omega_{0}", "ω0 = √(d0/d2), with D(s) = d2·s² + d1·s + d0 the "
                                   "denominator (first order: ω0 = d0/d1, the pole frequency)."),
    "f0": ("Hz", r"f_{0}", "f0 = ω0/(2π)."),
    "Q": ("", "Q", "Q = d0/(d1·ω0), with the sign of d1: Q < 0 means a pole pair in the right "
                   "half-plane."),
    "zeta": ("", r"\zeta", "ζ = 1/(2Q) = d1/(2·√(d0·d2)), the damping ratio."),
    "wp": ("rad/s", r"\omega_{p}", "Pole frequency ωp = d0/d1 of a first-order response."),
    "fp": ("Hz", r"f_{p}", "fp = ωp/(2π)."),
    "tau": ("s", r"\tau", "Time constant τ = d1/d0 = 1/ωp."),
    "wz": ("rad/s", r"\omega_{z}", "Zero frequency ωz = n0/n1 of a first-order response."),
    "fz": ("Hz", r"f_{z}", "fz = ωz/(2π)."),
    "centre": ("Hz", r"f_{c}", "Centre frequency of a band-pass or notch, f0."),
    "bandwidth": ("Hz", r"B_{-3\ \mathrm{dB}}",
                  "−3 dB bandwidth of a band-pass or notch, f0/Q = d1/(2π·d2)."),
    "poles": ("rad/s", "p", "Poles: the roots of the denominator D(s)."),
    "zeros": ("rad/s", "z", "Zeros: the roots of the numerator N(s)."),
    "f3db": ("Hz", r"f_{-3\ \mathrm{dB}}",
             "−3 dB frequency at the nominal values: where |H| is 1/√2 of its pass-band "
             "value (DC, else high-frequency, else peak gain)."),
}

FLAT_PARTS = ("dc", "hf")
"""Parts that a response which does not depend on s still has (both are the response)."""

AT_PARTS = {"magnitude": r"\left\lvert H\right\rvert",
            "dB": r"\left\lvert H\right\rvert_{\mathrm{dB}}", "phase": r"\angle H"}


def _answers(result: Result, quantity: syntax.Quantity | None, inner: Result) -> Result:
    """`result` marked as the answer to `quantity` (as parsed), under `inner`'s limits."""
    return result.replace(parsed=quantity, condition=inner.condition)


def _with_part(quantity: syntax.Quantity, part: str) -> syntax.Quantity:
    """`gain(Uin, out)` and `w0`: the quantity `gain(Uin, out).w0`."""
    return dataclasses.replace(quantity, attribute=part, text=f"{quantity.text}.{part}")


def _label(inner: Result, base: str, part: str) -> str:
    """`gain(Uin, out).w0`, with the inner result's `where` clause kept at the end."""
    where = inner.quantity[len(base):] if inner.quantity.startswith(base) else ""
    return f"{base}.{part}{where}"


def _response(read: Reader, inner: Result, node: syntax.Node) -> Response:
    """The response of `inner` (kept in the pipeline's memo: every part and sensitivity of
    one response shares its coefficients, parameters and stability)."""
    key = ("response", inner.quantity, inner.text())
    store = read.options.memo.of(read.circuit)
    cached = store.get(key)
    if cached is not None:
        return cached
    if "s" not in inner.symbols and node.attribute not in FLAT_PARTS:
        raise read.error(node, f"{inner.quantity} does not depend on s: it has no frequency "
                               "response to take parts of (its .dc and .hf are itself)")
    try:
        response = Response.of(inner.expression)
    except ResponseError as problem:
        raise read.error(node, f"{inner.quantity}: {problem}") from None
    store[key] = response
    return response


def _nominals(circuit: Circuit) -> dict[sympy.Symbol, Fraction]:
    return circuit.symbol_nominals()


def _names(nominals: dict[sympy.Symbol, Fraction]) -> dict[str, Fraction]:
    return {str(k): v for k, v in nominals.items()}


def part_quantity(circuit: Circuit, quantity: syntax.Quantity,
                  options: DeriveOptions) -> list[Result]:
    """`Q.part` for a response Q in s: a design parameter, the poles, zeros or −3 dB points."""
    read = Reader(circuit, options)
    part = quantity.attribute or ""
    base = dataclasses.replace(quantity, attribute=None, text=base_text(quantity))
    out = []
    for inner in _approximated(read, base):
        response = _response(read, inner, quantity)
        for result in _parts(read, inner, response, base, part, quantity):
            if "neglected" in inner.details:  # parts of the approximated response
                result = result.with_details(neglected=inner.details["neglected"]) \
                    .with_new_notes(*inner.notes)
            out.append(result)
    return out


def _approximated(read: Reader, quantity: syntax.Quantity) -> list[Result]:
    """The response with the `big >> small` clauses applied first, so that ω0, Q and the
    rest are those of the approximated response (not expansions of their roots)."""
    results = read.derive(quantity)
    if not any(a.kind == "much_greater" for a in read.options.assumptions):
        return results
    from ..forms import finish

    return finish(read.circuit, quantity, results, dataclasses.replace(read.options,
                                                                       steps=False))


def _parts(read: Reader, inner: Result, response: Response, base: syntax.Quantity, part: str,
           node: syntax.Node) -> list[Result]:
    nominals = _nominals(read.circuit)
    unit, symbol, definition = PARTS[part]
    unit = inner.unit if unit is None else unit
    stability = response.stability(nominals)
    notes = [definition] + ([stability] if stability else [])
    label = _label(inner, base.text, part)
    try:
        if part in ("poles", "zeros"):
            return _roots(inner, response, base, part, notes, nominals)
        if part == "f3db":
            return _corners(inner, response, base, notes, nominals)
        if part == "dc":
            value = response.dc()
        elif part == "hf":
            value = response.hf()
        else:
            values = response.parameters()
            if part not in values:
                raise ResponseError(_missing_part(part, response))
            value = values[part]
    except ResponseError as problem:
        raise read.error(node, f"{inner.quantity} has no `.{part}`: {problem}") from None
    details = {"part": part, "kind": _kind_text(response), "order": response.order,
               "stable": stability is None or not stability.startswith("Unstable")}
    return [_answers(Result(label, value, unit, _names(nominals), tuple(notes),
                            name_latex=symbol, details={"response": details}),
                     _with_part(base, part), inner)]


def _missing_part(part: str, response: Response) -> str:
    kind = response.kind()
    if part in ("centre", "bandwidth"):
        return f"a centre and bandwidth belong to a band-pass or notch; this is a {kind}"
    if part in ("wz", "fz"):
        return "a zero frequency belongs to a first-order response with a finite zero"
    if part in ("wp", "fp", "tau"):
        return "this part belongs to a first-order response; this one has order 2 (use .w0)"
    return f"not defined for this order-{response.order} response"


def _kind_text(response: Response) -> str:
    order = {1: "first-order", 2: "second-order"}.get(response.order, f"order-{response.order}")
    return f"{order} {response.kind()}"


def _roots(inner: Result, response: Response, base: syntax.Quantity, part: str,
           notes: list[str],
           nominals) -> list[Result]:
    roots = response.roots(part == "zeros", nominals)
    letter = "p" if part == "poles" else "z"
    if not roots:
        return [_answers(Result(_label(inner, base.text, part), sympy.Integer(0), "rad/s",
                                _names(nominals),
                                (*notes, f"{inner.quantity} has no finite {part[:-1]}s."),
                                details={"response": {"part": part, part: []}}),
                         _with_part(base, part), inner)]
    listed = [complex_text(v, "rad/s") for _, v in roots if v is not None]
    out = []
    for k, (closed, value) in enumerate(roots, start=1):
        expression = closed if closed is not None else (
            sympy.Float(value.real, 15) + sympy.I * sympy.Float(value.imag, 15)
            if value is not None else sympy.nan)
        said = list(notes if k == 1 else ())
        if value is not None:
            hertz = eng(abs(value) / (2 * math.pi), "Hz")
            said.append(f"{letter}{k} = {complex_text(value, 'rad/s')} at the nominal "
                        f"values (|{letter}{k}|/2π = {hertz})"
                        + ("" if closed is not None else
                           "; no closed form above degree 2: the number is isolated "
                           "exactly at the nominal values") + ".")
        if k == 1 and listed:
            said.append(f"All {part} at the nominal values: {', '.join(listed)}.")
        details = {"part": part, "index": k,
                   "value": None if value is None else [value.real, value.imag]}
        out.append(_answers(Result(_label(inner, base.text, f"{letter}{k}"), expression,
                                   "rad/s", _names(nominals), tuple(said),
                                   name_latex=f"{letter}_{{{k}}}",
                                   details={"response": details}),
                            _with_part(base, f"{letter}{k}"), inner))
    return out


def _corners(inner: Result, response: Response, base: syntax.Quantity, notes: list[str],
             nominals) -> list[Result]:
    frequencies = response.corner_frequencies(nominals)
    if not frequencies:
        raise ResponseError("|H| never falls 3 dB below its pass-band value")
    names = ["f3db"] if len(frequencies) == 1 else \
        ["f3db_low", "f3db_high"] if len(frequencies) == 2 else \
        [f"f3db_{k}" for k in range(1, len(frequencies) + 1)]
    out = []
    for name, f in zip(names, frequencies, strict=True):
        out.append(_answers(Result(_label(inner, base.text, name), sympy.Float(f, 15), "Hz", {},
                                   (*notes, f"{eng(f, 'Hz')} at the nominal values (a number: "
                                            "the closed form is a root of a polynomial in ω²)."),
                                   name_latex=PARTS["f3db"][1],
                                   details={"response": {"part": "f3db",
                                                         "frequencies": frequencies}}),
                            _with_part(base, name), inner))
    return out


# ---------------------------------------------------------------- at a frequency


def at_quantity(circuit: Circuit, quantity: syntax.Quantity,
                options: DeriveOptions) -> list[Result]:
    """`at(Q, f)`: `.magnitude` (|H(j2πf)|), `.dB` and `.phase` (degrees); f may be 0 or oo."""
    read = Reader(circuit, options)
    args = read.arguments(quantity, 2, 2, "a quantity and a frequency: at(gain(Uin, out), "
                                          "1 kHz), at(Z(out), 0), at(Z(out), oo)", parts=True)
    frequency = _frequency(read, args[1])
    base = base_text(quantity)
    plain = dataclasses.replace(quantity, attribute=None, text=base)
    nominals = _nominals(circuit)
    out: list[Result] = []
    for inner in read.derive(args[0]):
        response = _response(read, inner, args[0])
        where = inner.quantity[len(read.quantity(args[0]).text):]
        try:
            real, imaginary = _at(response, frequency)
        except ResponseError as problem:
            raise read.error(quantity, f"{inner.quantity}: {problem}") from None
        magnitude_squared = _tidy(real**2 + imaginary**2)
        magnitude = sympy.sqrt(magnitude_squared)
        phase = sympy.atan2(imaginary, real) * 180 / sympy.pi
        db = 10 * sympy.log(magnitude_squared, 10)
        if frequency is None:
            at_text = "at high frequency (s -> oo)"
        elif frequency == 0:
            at_text = "at DC (s -> 0)"
        else:
            at_text = f"at f = {eng(frequency, 'Hz')} (s = j·2π·f)"
        parts = (("magnitude", magnitude, inner.unit, f"|{inner.quantity}| {at_text}."),
                 ("dB", db, "dB", f"20·log10|{inner.quantity}| {at_text}."),
                 ("phase", phase, "°", f"Phase of {inner.quantity} {at_text}, in degrees."))
        stability = response.stability(nominals)
        made = [_answers(Result(f"{base}.{part}{where}", expression, unit, _names(nominals),
                                (sentence,) + ((stability,) if stability else ()),
                                name_latex=AT_PARTS[part]),
                         _with_part(plain, part), inner)
                for part, expression, unit, sentence in parts]
        values = {part: result.nominal for (part, *_), result in zip(parts, made, strict=True)}
        hertz = None if frequency is None else float(frequency)
        out += [result.with_details(at_frequency={"part": part, "frequency": hertz, **values})
                for (part, *_), result in zip(parts, made, strict=True)]
    if quantity.attribute is None:
        return out
    if quantity.attribute not in AT_PARTS:
        raise read.error(quantity, f"at(..) has no part `.{quantity.attribute}`; it has "
                                   f"{', '.join('.' + p for p in AT_PARTS)}")
    return [r for r in out if r.details["at_frequency"]["part"] == quantity.attribute]


def _frequency(read: Reader, arg) -> Fraction | None:
    """A frequency argument in Hz; 0 for DC, None for `oo`."""
    if isinstance(arg, syntax.Name) and arg.name == "oo":
        return None
    value = read.number(arg, "a frequency", ("Hz", None))
    if value < 0:
        raise read.error(arg, "the frequency must not be negative")
    return value


def _at(response: Response, frequency: Fraction | None) -> tuple[sympy.Expr, sympy.Expr]:
    if frequency is None:
        return response.hf(), sympy.Integer(0)
    if frequency == 0:
        return response.dc(), sympy.Integer(0)
    return response.at(sympy.Rational(frequency.numerator, frequency.denominator))


def _tidy(expression: sympy.Expr) -> sympy.Expr:
    return sympy.factor(sympy.cancel(expression))


# ---------------------------------------------------------------- sensitivities of parts


def sensitivity_quantity(circuit: Circuit, quantity: syntax.Quantity,
                         options: DeriveOptions) -> list[Result]:
    """`sensitivity(P, x)` and `relative_sensitivity(P, x)` of a design parameter or an
    at-frequency value P: exact derivatives of the closed form (definitions of x's
    dependants substituted, the chain rule)."""
    read = Reader(circuit, options)
    relative = quantity.name == "relative_sensitivity"
    target, variable = read.arguments(quantity, 2, 2, "a quantity and a symbol: "
                                      f"{quantity.name}(gain(Uin, out).w0, R1)")
    x = read.symbol(variable)
    nominals = _nominals(circuit)
    defined = definitions(circuit)
    out = []
    for inner in read.derive(target):
        expression = inner.expression
        via = [k for k in expression.free_symbols if k in defined and k != x
               and x in _expanded(defined[k], defined).free_symbols]
        for k in via:
            expression = expression.xreplace({k: defined[k]})
        notes = []
        if via:
            notes.append(f"{inner.quantity} depends on {x} through the definition of "
                         f"{', '.join(sorted(map(str, via)))} (substituted for the derivative).")
        value = _relative(expression, x) if relative else _derivative(expression, x)
        if value == 0:
            notes.append(f"{inner.quantity} does not depend on {x}: the sensitivity is 0.")
        unit = "" if relative else _per(inner.unit, _unit_of(circuit, x))
        result = Result(f"{quantity.name}({inner.quantity}, {x})", value, unit,
                        _names(nominals), tuple(notes))
        if inner.parsed is not None and not inner.condition:  # one with limits is no quantity
            result = result.replace(parsed=dataclasses.replace(
                quantity, args=(inner.parsed, variable), text=result.quantity))
        out.append(result)
    return out


def _expanded(expression: sympy.Expr, defined) -> sympy.Expr:
    from .values import expand_definitions

    return expand_definitions(expression, defined)


def _derivative(expression: sympy.Expr, x: sympy.Symbol) -> sympy.Expr:
    squared = expression**2
    derivative = sympy.diff(expression, x)
    if _rational(squared) and _rational(derivative / expression):
        return sympy.factor(sympy.cancel(derivative / expression)) * expression
    return tidy(derivative)


def _relative(expression: sympy.Expr, x: sympy.Symbol) -> sympy.Expr:
    """(x/P)·∂P/∂x; for P = √R (ω0, Q, |H|) it is ½·(x/R)·∂R/∂x, a rational function."""
    if expression == 0:
        raise ResponseError("the relative sensitivity of 0 is undefined")
    squared = expression**2  # ±√R squares to R without cancelling
    if _rational(squared):
        return tidy(x * sympy.diff(squared, x) / (2 * squared))
    return tidy(x * sympy.diff(expression, x) / expression)


def _rational(expression: sympy.Expr) -> bool:
    return expression.is_rational_function(*sorted(expression.free_symbols, key=str))


# ---------------------------------------------------------------- response tables and band


def decade_frequencies(low: float, high: float) -> list[float]:
    """1, 10, 100 ... Hz from the decade at or below `low` to the one at or above `high`."""
    first, last = math.floor(math.log10(low)), math.ceil(math.log10(high))
    return [10.0**k for k in range(first, last + 1)]


def span(response: Response, nominals) -> tuple[float, float]:
    """Two decades beyond the outermost pole or zero (Hz), at the nominal values."""
    from .response import numeric_roots

    roots = [abs(r) for coefficients in (response.numerator, response.denominator)
             for r in (numeric_roots(coefficients, nominals) or []) if abs(r) > 0]
    if not roots:
        return 1.0, 1e6
    return min(roots) / (2 * math.pi) / 100, max(roots) / (2 * math.pi) * 100


def response_band(circuit: Circuit, result: Result, frequencies, samples: int = 10000,
                  seed: int | None = None, distribution: str = "uniform"):
    """The Monte Carlo band of magnitude and phase of `result` (a response in s) over
    `frequencies` (Hz), every toleranced part drawn as in `tolerance(..)`; None when no
    tolerance reaches it."""
    import numpy as np

    from . import tolerance

    response = Response.of(result.expression)
    t, u = sympy.Symbol("t_coefficient"), sympy.Symbol("u_coefficient")
    probe = sum((c * t**k for k, c in enumerate(response.numerator)), sympy.Integer(0)) + \
        u * sum((c * t**k for k, c in enumerate(response.denominator)), sympy.Integer(0))
    nominals = {**_nominals(circuit), t: Fraction(2), u: Fraction(3)}
    expanded, variables, fixed = tolerance.independent(probe, nominals, tolerances(circuit),
                                                       definitions(circuit))
    if not variables:
        return None
    fixed = {k: v for k, v in fixed.items() if k not in (t, u)}
    poly = sympy.Poly(expanded, t, u)
    terms = poly.as_dict()
    numerator = tuple(terms.get((k, 0), sympy.Integer(0)) for k in range(len(response.numerator)))
    denominator = tuple(terms.get((k, 1), sympy.Integer(0))
                        for k in range(len(response.denominator)))
    columns = tolerance.draw(variables, distribution, samples,
                             tolerance.DEFAULT_SEED if seed is None else seed)
    symbols = [v.symbol for v in variables]
    point = {v.symbol: v.nominal for v in variables}
    return band(Response(numerator, denominator), symbols, columns, fixed, point,
                np.asarray(frequencies, dtype=float))


def response_quantity(circuit: Circuit, quantity: syntax.Quantity,
                      options: DeriveOptions) -> list[Result]:
    """`response(Q)`, `response(Q, f1, f2, ...)`: Q with a table of magnitude and phase at
    the decade points and the −3 dB point (or the frequencies given), and their Monte Carlo
    spread (0.1 % … 99.9 % of 10,000 samples) when parts have tolerances."""
    read = Reader(circuit, options)
    read.arguments(quantity, 1, max(len(quantity.args), 1), "a quantity and optionally "
                   "frequencies: response(gain(Uin, out)), response(gain(Uin, out), 1 kHz)")
    given = [float(_frequency(read, a) or 0) for a in quantity.args[1:]]
    if any(f <= 0 for f in given):
        raise read.error(quantity.args[1], "response frequencies are positive numbers in Hz")
    nominals = _nominals(circuit)
    out = []
    for inner in read.derive(quantity.args[0]):
        response = _response(read, inner, quantity.args[0])
        values = response.nominal(nominals)
        if values is None:
            raise read.error(quantity, f"{inner.quantity}: a response table needs a value for "
                                       "every symbol")
        corners: list[float] = []
        try:
            corners = response.corner_frequencies(nominals)
        except ResponseError:
            corners = []
        if given:
            frequencies = sorted(given)
        else:
            low, high = span(response, nominals)
            frequencies = sorted(set(decade_frequencies(low * 10, high / 10)) | set(corners))
        table = response_table(response, values, frequencies)
        spread = response_band(circuit, inner, frequencies, seed=options.seed)
        asked = inner.quantity == read.quantity(quantity.args[0]).text
        result = Result(quantity.text if asked else f"response({inner.quantity})",
                        inner.expression, inner.unit, _names(nominals))
        if asked:
            result = result.replace(parsed=quantity)
        elif inner.parsed is not None and not inner.condition:
            result = result.replace(parsed=dataclasses.replace(
                quantity, args=(inner.parsed,), text=result.quantity))
        stability = response.stability(nominals)
        said = [stability] if stability else []
        rows = []
        for k, (f, magnitude, db, phase) in enumerate(table):
            row = {"frequency": f, "magnitude": magnitude, "dB": db, "phase": phase,
                   "corner": f in corners}
            if spread is not None:
                row.update(dB_low=float(spread.low_db[k]), dB_high=float(spread.high_db[k]),
                           phase_low=float(spread.low_phase[k]),
                           phase_high=float(spread.high_phase[k]))
            rows.append(row)
            mark = " (−3 dB)" if f in corners else ""
            band_text = "" if spread is None else (
                f" [{decibels(row['dB_low']).removesuffix(' dB')} … {decibels(row['dB_high'])}, "
                f"{degrees(row['phase_low'])} … {degrees(row['phase_high'])}]")
            said.append(f"At {eng(f, 'Hz')}{mark}: |H| = {eng(magnitude, inner.unit)}, "
                        f"{decibels(db)}, phase {degrees(phase)}{band_text}.")
        if spread is not None:
            said.append(f"Spreads in brackets: 0.1 % … 99.9 % of {spread.samples:,} "
                        "Monte Carlo samples, each toleranced part uniform over its band.")
        out.append(result.replace(notes=said, details={"response": {
            "rows": rows, "corners": corners,
            "samples": None if spread is None else spread.samples}}))
    return out


def response_table(response: Response, values, frequencies) -> list[tuple[float, ...]]:
    """(f, |H|, dB, phase °) at each frequency, from the exact coefficients."""
    import numpy as np

    from .response import continuous_phase

    n, d = values
    jw = 2j * np.pi * np.asarray(frequencies, dtype=float)
    h = np.polyval([float(c) for c in reversed(n)], jw) / np.polyval(
        [float(c) for c in reversed(d)], jw)
    phase = continuous_phase([float(c) for c in n], [float(c) for c in d], frequencies)
    return [(float(f), float(abs(x)), float(20 * np.log10(abs(x))), float(p))
            for f, x, p in zip(frequencies, h, phase, strict=True)]
