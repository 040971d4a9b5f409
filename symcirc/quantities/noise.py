"""Noise: every noise source of a circuit, its transfer to a measure computed by the engine,
and the densities built from them: `noise(Q)`, `input_noise(X, Q)` and
`noise_contributions(Q)`.

The sources are uncorrelated, so their powers add: S_out(f) = Σ_k |H_k(j2πf)|²·S_k(f),
each term kept on its own. A resistor is a thermal noise current 4·k_B·T/R in parallel with
it (Johnson 1928, Nyquist 1928); a conductance 4·k_B·T·G; an impedance or admittance that
depends on s a noise current 4·k_B·T·Re{Y(j2πf)} across it, Y = 1/Z. An explicit noise voltage is a
voltage source (a short for signals), a noise current a current source (an open), an opamp's
input voltage noise a voltage source in series with its + input and its current noise a
current source from each input to gnd. A 1/f corner f_c makes a density S·(1 + f_c/f).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from fractions import Fraction
from itertools import pairwise

import sympy

from ..engine.mna import Measure
from ..errors import SymcircError
from ..language import syntax
from ..model.circuit import (
    BOLTZMANN_SYMBOL,
    LAPLACE,
    REFERENCE,
    TEMPERATURE_SYMBOL,
    Circuit,
    Element,
)
from ..model.typeset import symbol_latex
from ..model.units import eng
from ..results import Result
from .common import Context, Raw, _with_part
from .registry import DeriveOptions

FREQUENCY = sympy.Symbol("f")
"""The frequency in Hz of a noise density S(f)."""

SQUARED = {"V": "V²/Hz", "A": "A²/Hz"}
ROOT = {"V": "V/√Hz", "A": "A/√Hz"}


@dataclass(frozen=True)
class NoiseSource:
    """One uncorrelated noise source of a circuit."""

    name: str
    """As shown: `R1`, `Un1`, `en_U1`, `in_U1_p` and `in_U1_n` (the + and − inputs)."""
    excitation: str
    """The independent source standing for it in the noise circuit."""
    kind: str
    """`thermal`, `voltage` or `current`."""
    white: sympy.Expr
    """S_k without its 1/f part: V²/Hz for a voltage, A²/Hz for a current."""
    corner: sympy.Expr
    """Its 1/f corner in Hz (0: white): S_k(f) = white·(1 + corner/f)."""
    unit: str
    """`V` or `A`: what the source is."""

    @property
    def psd(self) -> sympy.Expr:
        """S_k(f)."""
        return self.white if self.corner == 0 else self.white * (1 + self.corner / FREQUENCY)


@dataclass(frozen=True)
class NoiseSetup:
    """The circuit with every noise source as an independent source, and the sources."""

    circuit: Circuit
    sources: tuple[NoiseSource, ...]
    notes: tuple[str, ...]


@dataclass(frozen=True)
class NoiseTerm:
    """One source's part of a noise density: S_k·|H_k(j2πf)|²."""

    source: NoiseSource
    transfer: sympy.Expr
    """H_k(s): the measure per unit of the source."""
    gain_squared: sympy.Expr
    """|H_k(j2πf)|²."""
    psd: sympy.Expr
    """S_k·|H_k|²."""


def noise_setup(circuit: Circuit, memo) -> NoiseSetup:
    """The noise circuit of `circuit` (kept in `memo`, so its solved systems are shared)."""
    store = memo.of(circuit)
    cached = store.get("noise setup")
    if cached is None:
        cached = store["noise setup"] = _setup(circuit)
    return cached


def _setup(circuit: Circuit) -> NoiseSetup:
    taken = {*circuit.elements, *circuit.parameters, *circuit.ports}
    nodes = list(circuit.nodes)

    def fresh(base: str, pool: set[str] | list[str]) -> str:
        name = base
        while name in pool:
            name += "_"
        if isinstance(pool, set):
            pool.add(name)
        else:
            pool.append(name)
        return name

    def source(name: str, kind: str, a: str, b: str, like: Element) -> Element:
        return Element(name, kind, (a, b), None, None, None,
                       "V" if kind == "voltage source" else "A", None, like.location)

    four_kt = 4 * BOLTZMANN_SYMBOL * TEMPERATURE_SYMBOL
    elements: dict[str, Element] = {}
    sources: list[NoiseSource] = []
    left_out: list[str] = []
    for e in circuit.elements.values():
        if e.entry.noise:
            kind = "voltage source" if e.kind == "noise voltage" else "current source"
            elements[e.name] = dataclasses.replace(e, kind=kind)
            sources.append(NoiseSource(e.name, e.name, kind.split()[0], e.symbol**2,
                                       _corner(e.corner), kind[0].upper()))
            continue
        elements[e.name] = e
        if _real(e) and e.name not in circuit.noise.noiseless:
            name = fresh(f"n_{e.name}", taken)
            elements[name] = source(name, "current source", *e.nodes, e)
            psd = four_kt / e.symbol if e.law.value_power > 0 else four_kt * e.symbol
            sources.append(NoiseSource(e.name, name, "thermal", psd, sympy.Integer(0), "A"))
        elif e.kind in ("impedance", "admittance") and e.name not in circuit.noise.noiseless:
            if e.definition is None:
                left_out.append(e.name)
            else:
                name = fresh(f"n_{e.name}", taken)
                elements[name] = source(name, "current source", *e.nodes, e)
                real = _real_admittance(circuit, e)
                sources.append(NoiseSource(e.name, name, "thermal", four_kt * real,
                                           sympy.Integer(0), "A"))
        opamp = circuit.noise.opamps.get(e.name)
        if opamp is None:
            continue
        p, n, _ = e.nodes
        if opamp.voltage is not None:
            inner = fresh(f"{p}_{e.name}_en", nodes)
            elements[e.name] = dataclasses.replace(e, nodes=(inner, *e.nodes[1:]))
            name = fresh(f"n_{e.name}_en", taken)
            elements[name] = source(name, "voltage source", inner, p, e)
            sources.append(NoiseSource(str(opamp.voltage.symbol), name, "voltage",
                                       opamp.voltage.symbol**2, _corner(opamp.voltage.corner),
                                       "V"))
        if opamp.current is not None:
            for node, which in ((p, "p"), (n, "n")):
                if node == REFERENCE:
                    continue
                name = fresh(f"n_{e.name}_in{which}", taken)
                elements[name] = source(name, "current source", node, REFERENCE, e)
                sources.append(NoiseSource(
                    f"{opamp.current.symbol}_{which}", name, "current",
                    opamp.current.symbol**2, _corner(opamp.current.corner), "A"))
    notes = ()
    if left_out:
        notes = (f"{', '.join(left_out)}: an impedance or admittance with no value is taken "
                 "as noiseless; give it a value, or write its resistive part as a resistor, to "
                 "count its thermal noise.",)
    noisy = dataclasses.replace(circuit, elements=elements, nodes=tuple(nodes), derives=(),
                                claims=())
    return NoiseSetup(noisy, tuple(sources), notes)


def _real(element: Element) -> bool:
    """A resistor or conductance, or an impedance or admittance with a real value (a number
    or an expression without s): a thermal noise source."""
    if element.entry.resistive:
        return True
    if element.kind not in ("impedance", "admittance"):
        return False
    if element.definition is not None:
        return LAPLACE not in element.definition.free_symbols
    return element.nominal is not None


def _real_admittance(circuit: Circuit, element: Element) -> sympy.Expr:
    """Re{Y(j2πf)} of an impedance or admittance whose value depends on s (Y = 1/Z), refused
    where it is negative at the nominal values: such an element is not passive."""
    value = element.definition
    numerator, denominator = sympy.fraction(sympy.together(value))
    if element.kind == "impedance":
        numerator, denominator = denominator, numerator
    omega = sympy.Dummy("omega", positive=True)
    try:
        (nr, ni), (dr, di) = _parts(numerator, omega), _parts(denominator, omega)
    except sympy.PolynomialError:
        raise SymcircError.at(element.location, f"{element.name}: its noise needs a value "
                              "that is a ratio of polynomials in s", circuit.source) from None
    real = sympy.expand(nr * dr + ni * di)
    values = {k: sympy.Rational(v.numerator, v.denominator)
              for k, v in circuit.symbol_nominals().items()}
    at_nominal = real.xreplace(values)
    if at_nominal.free_symbols <= {omega} and _negative_somewhere(at_nominal, omega):
        raise SymcircError.at(element.location, f"{element.name}: the real part of its "
                              "admittance is negative at some frequency at the nominal values, "
                              "so it is not a passive element and has no thermal noise 4·k_B·T·"
                              "Re{Y}; write the noise of the part it models explicitly",
                              circuit.source)
    return (real / (dr**2 + di**2)).xreplace({omega: 2 * sympy.pi * FREQUENCY})


def _negative_somewhere(polynomial: sympy.Expr, omega: sympy.Symbol) -> bool:
    """Whether a polynomial in ω with rational coefficients is below 0 for some ω > 0."""
    poly = sympy.Poly(polynomial, omega)
    if all(c >= 0 for c in poly.coeffs()):
        return False
    roots = sorted({r for r in poly.real_roots() if r > 0}, key=float)
    if not roots:
        return poly(1) < 0
    points = [roots[0] / 2, *((a + b) / 2 for a, b in pairwise(roots)), roots[-1] * 2]
    return any(poly(point) < 0 for point in points)


def _parts(polynomial: sympy.Expr, omega: sympy.Expr) -> tuple[sympy.Expr, sympy.Expr]:
    """Re and Im of a polynomial in s at s = jω: its even and its odd powers of s."""
    real = imaginary = sympy.Integer(0)
    if LAPLACE not in polynomial.free_symbols:
        return polynomial, imaginary
    for (power,), coefficient in sympy.Poly(sympy.expand(polynomial), LAPLACE).terms():
        term = coefficient * omega**power * (-1) ** (power // 2)
        if power % 2:
            imaginary += term
        else:
            real += term
    return real, imaginary


def _corner(corner: sympy.Expr | None) -> sympy.Expr:
    """A density's 1/f corner in Hz, 0 for white noise."""
    return sympy.Integer(0) if corner is None else corner


def magnitude_squared(transfer: sympy.Expr) -> sympy.Expr:
    """|H(j2πf)|² of a rational function of s as (Re² + Im²)/(Re² + Im²) in f, each
    polynomial split into its even (real) and odd (imaginary) powers of s."""
    if LAPLACE not in transfer.free_symbols:
        return transfer**2
    numerator, denominator = sympy.fraction(sympy.together(transfer))
    return _polynomial_squared(numerator) / _polynomial_squared(denominator)


def _polynomial_squared(polynomial: sympy.Expr) -> sympy.Expr:
    if LAPLACE not in polynomial.free_symbols:
        return polynomial**2
    real, imaginary = _parts(polynomial, 2 * sympy.pi * FREQUENCY)
    return real**2 + imaginary**2


def noise_terms(context: Context, setup: NoiseSetup, measure: Measure,
                quantity: syntax.Quantity, divide_by: str | None = None) -> list[NoiseTerm]:
    """S_k·|H_k|² of every source that reaches `measure` (H_k divided by the gain from the
    source `divide_by` when given: referred to that input)."""
    gain = None
    if divide_by is not None:
        with context.at(quantity):
            gain = _in_s(context, context.transfer(measure, divide_by))
        if gain.is_zero():
            raise context.error(quantity, f"{quantity.text}: the measure does not depend on "
                                          f"{divide_by}, so nothing can be referred to it")
    terms = []
    for source in setup.sources:
        with context.at(quantity):
            transfer = _in_s(context, context.transfer(measure, source.excitation))
        if transfer.is_zero():
            continue
        if gain is not None:
            transfer = transfer / gain
        (result,) = context.finish([Raw(quantity.text, transfer, "")])
        expression = result.expression
        if expression == 0:
            continue
        squared = magnitude_squared(expression)
        terms.append(NoiseTerm(source, expression, squared, source.psd * squared))
    return terms


def _in_s(context: Context, function):
    """`function` with each impedance or admittance that depends on s replaced by its
    definition: |H(j2πf)|² needs every s written out."""
    for element in context.circuit.elements.values():
        if element.kind in ("impedance", "admittance") and element.name in \
                function.symbol_names() and element.name in context.definitions and \
                LAPLACE in context.definitions[element.name].free_symbols:
            function = context.substitute(function, element.name,
                                          context.definitions[element.name])
    return function


def _frequency(context: Context, arg) -> Fraction:
    """A frequency argument: `1 kHz`, `1000`, or a parameter with a value in Hz."""
    if isinstance(arg, syntax.Number):
        if arg.unit not in (None, "Hz"):
            raise context.error(arg, f"a frequency is in Hz, not {arg.unit}")
        value = arg.value
    elif isinstance(arg, syntax.Name) and arg.name in context.circuit.parameters:
        value = context.circuit.parameters[arg.name].nominal
        if value is None:
            raise context.error(arg, f"parameter {arg.name} has no value to take as the "
                                     "frequency")
    else:
        raise context.error(arg, "expected a frequency here: `1 kHz`, or a parameter")
    if value <= 0:
        raise context.error(arg, "the frequency of a noise density must be above 0 Hz")
    return value


def _check_names(context: Context, quantity: syntax.Quantity) -> None:
    if "f" in context.circuit.parameters or "f" in context.circuit.elements:
        raise context.error(quantity, "noise densities are functions of the frequency `f`, "
                                      "which this circuit uses as a name; rename it")


def _numbers(terms: list[NoiseTerm], nominals: dict[str, Fraction],
             frequency: Fraction | None) -> list[float | None]:
    """Each term's power density at the nominal values (and at `frequency`), or None."""
    values = {sympy.Symbol(k): sympy.Rational(v.numerator, v.denominator)
              for k, v in nominals.items()}
    if frequency is not None:
        values[FREQUENCY] = sympy.Rational(frequency.numerator, frequency.denominator)
    out: list[float | None] = []
    for term in terms:
        number = term.psd.xreplace(values)
        out.append(float(number) if number.is_number else None)
    return out


def _text(expression: sympy.Expr) -> str:
    """A term as text, its factors in sympy's own order (sorting them costs more than the
    derivation)."""
    return sympy.sstr(expression, order="none")


def _latex(expression: sympy.Expr) -> str:
    names = {s: symbol_latex(s.name) for s in expression.free_symbols
             if isinstance(s, sympy.Symbol)}
    return sympy.latex(expression, symbol_names=names, order="none")


def temperature_text(circuit: Circuit) -> str:
    """`T = 300 K (the default)` or `T = 300.1 K (27 °C)`, as every noise result says."""
    kelvin = eng(circuit.noise.temperature, "K")
    written = circuit.noise.temperature_written
    if written is None:
        return f"T = {kelvin} (the default; a file sets it with `temperature`)"
    return f"T = {kelvin}" + (f" ({written})" if not written.endswith(" K") else "")


def _details(setup: NoiseSetup, terms: list[NoiseTerm], values: list[float | None],
             frequency: Fraction | None, unit: str) -> dict:
    """The terms as notes, JSON and tables show them, largest first where they have values."""
    total = sum(v for v in values if v is not None)
    rows = []
    for term, value in zip(terms, values, strict=True):
        rows.append({
            "source": term.source.name,
            "kind": term.source.kind,
            "source_psd": _text(term.source.psd),
            "source_psd_latex": _latex(term.source.psd),
            "term": _text(term.psd),
            "psd": value,
            "density": None if value is None else value**0.5,
            "share": None if value is None or not total else value / total,
        })
    if all(v is not None for v in values):
        rows.sort(key=lambda row: -row["psd"])
    return {"frequency": None if frequency is None else float(frequency),
            "temperature": float(setup.circuit.noise.temperature),
            "unit": unit, "terms": rows}


def _results(context: Context, setup: NoiseSetup, quantity: syntax.Quantity,
             terms: list[NoiseTerm], unit: str, frequency: Fraction | None,
             notes: tuple[str, ...], described: str) -> list[Result]:
    psd = sympy.Add(*(t.psd for t in terms)) if terms else sympy.Integer(0)
    if frequency is not None:
        psd = psd.xreplace({FREQUENCY: sympy.Rational(frequency.numerator,
                                                      frequency.denominator)})
    values = _numbers(terms, context.nominals, frequency)
    details = _details(setup, terms, values, frequency, unit)
    said = [f"{described} {temperature_text(context.circuit)}.", *setup.notes, *notes]
    if not terms:
        said.append("No noise source reaches it: the density is 0.")
    elif FREQUENCY in psd.free_symbols:
        said.append("A function of the frequency f in Hz; give a frequency for a value, "
                    f"e.g. {_base(quantity)[:-1]}, 1 kHz).")
    clause = ", ".join(f"{a.symbol} -> {a.target}" for a in context.options.assumptions
                       if a.kind == "limit")
    plain = dataclasses.replace(quantity, attribute=None, text=_base(quantity))
    out = []
    for part, value, shown in (("density", sympy.sqrt(psd), ROOT[unit]),
                               ("psd", psd, SQUARED[unit])):
        if quantity.attribute not in (None, part):
            continue
        text = f"{plain.text}.{part}"
        out.append(Result(f"{text} where {clause}" if clause else text, value, shown,
                          context.nominals, tuple(said), part=part, base=text,
                          condition=clause, parsed=_with_part(plain, part),
                          details={"noise": details}))
    if not out:
        raise context.error(quantity, f"{quantity.name}(..) has no part `.{quantity.attribute}`"
                                      "; it has .density and .psd")
    return out


def _base(quantity: syntax.Quantity) -> str:
    text = quantity.text
    if quantity.attribute is not None and text.endswith(f".{quantity.attribute}"):
        text = text[: -len(quantity.attribute) - 1]
    return text


def noise_quantity(circuit: Circuit, quantity: syntax.Quantity,
                   options: DeriveOptions) -> list[Result]:
    """`noise(Q)`, `noise(Q, f)`: the noise density at Q, `.density` and `.psd`."""
    setup = noise_setup(circuit, options.memo)
    context = Context(setup.circuit, options)
    args = context.arguments(quantity, 1, 2, "a port, V(..) or I(..) and optionally a "
                                             "frequency: noise(out), noise(out, 1 kHz)")
    _check_names(context, quantity)
    measure, text, unit, notes = context.measure(args[0])
    frequency = _frequency(context, args[1]) if len(args) == 2 else None
    terms = noise_terms(context, setup, measure, quantity)
    at = "" if frequency is None else f" at {eng(frequency, 'Hz')}"
    described = (f"Noise density of {text}{at}: S = Σ|H_k(j2πf)|²·S_k over every noise "
                 f"source k, in {SQUARED[unit]}; the density is √S in {ROOT[unit]};")
    return _results(context, setup, quantity, terms, unit, frequency, notes, described)


def input_noise_quantity(circuit: Circuit, quantity: syntax.Quantity,
                         options: DeriveOptions) -> list[Result]:
    """`input_noise(X, Q)`, `input_noise(X, Q, f)`: noise(Q) divided by |gain(X, Q)|²."""
    setup = noise_setup(circuit, options.memo)
    context = Context(setup.circuit, options)
    args = context.arguments(quantity, 2, 3, "an independent source, a port, V(..) or I(..), "
                                             "and optionally a frequency: input_noise(Uin, "
                                             "out), input_noise(Uin, out, 1 kHz)")
    _check_names(context, quantity)
    source = context.element(args[0])
    if not source.is_source or source.controls:
        raise context.error(args[0], f"{source.name} is not an independent source; "
                                     "input_noise(X, Q) refers the noise to source X")
    measure, text, _, notes = context.measure(args[1])
    frequency = _frequency(context, args[2]) if len(args) == 3 else None
    terms = noise_terms(context, setup, measure, quantity, divide_by=source.name)
    unit = source.unit
    at = "" if frequency is None else f" at {eng(frequency, 'Hz')}"
    described = (f"Noise of {text}{at} referred to {source.name}: S_in = Σ|H_k/G|²·S_k, G "
                 f"the gain from {source.name} to {text}, in {SQUARED[unit]}; the density is "
                 f"√S_in in {ROOT[unit]};")
    return _results(context, setup, quantity, terms, unit, frequency, notes, described)


def contributions_quantity(circuit: Circuit, quantity: syntax.Quantity,
                           options: DeriveOptions) -> list[Result]:
    """`noise_contributions(Q[, f])`: one result per source, largest first: its density
    √(S_k·|H_k|²) at Q, with its share of the total power in the notes and details."""
    setup = noise_setup(circuit, options.memo)
    context = Context(setup.circuit, options)
    args = context.arguments(quantity, 1, 2, "a port, V(..) or I(..) and optionally a "
                                             "frequency: noise_contributions(out, 1 kHz)")
    _check_names(context, quantity)
    measure, text, unit, notes = context.measure(args[0])
    frequency = _frequency(context, args[1]) if len(args) == 2 else None
    terms = noise_terms(context, setup, measure, quantity)
    values = _numbers(terms, context.nominals, frequency)
    if any(v is None for v in values):
        missing = "a frequency" if frequency is None else "values for every symbol"
        raise context.error(quantity, f"the contributions to the noise of {text} have no "
                                      f"numbers without {missing}: give "
                                      f"noise_contributions({text}, 1 kHz)")
    details = _details(setup, terms, values, frequency, unit)
    total = sum(values)
    at = "" if frequency is None else f" at {eng(frequency, 'Hz')}"
    heading = (f"Contributions to the noise density of {text}{at}, largest first (total "
               f"{eng(total**0.5, ROOT[unit])}; {temperature_text(context.circuit)}).")
    base = _base(quantity)
    out = []
    by_name = {t.source.name: t for t in terms}
    for rank, row in enumerate(details["terms"], start=1):
        term = by_name[row["source"]]
        density = sympy.powdenest(sympy.sqrt(term.psd), force=True)  # every factor is > 0
        if frequency is not None:
            density = density.xreplace({FREQUENCY: sympy.Rational(frequency.numerator,
                                                                  frequency.denominator)})
        said = (heading,) if rank == 1 or quantity.attribute else ()
        said += (f"{row['source']} ({row['kind']}): {eng(row['density'], ROOT[unit])}, "
                 f"{100 * row['share']:.3g} % of the noise power.",)
        if quantity.attribute not in (None, row["source"]):
            continue
        out.append(Result(f"{base}.{row['source']}", density, ROOT[unit], context.nominals,
                          said + setup.notes + notes, part=row["source"],
                          details={"noise_contribution": {**row, "rank": rank,
                                                          "total_density": total**0.5,
                                                          "frequency": details["frequency"],
                                                          "unit": unit}}))
    if not out and quantity.attribute is not None:
        raise context.error(quantity, f"no noise source `{quantity.attribute}` reaches {text}")
    return out
