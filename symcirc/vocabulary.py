"""The words of the circuit language as data: every element kind and every quantity.

One table of element kinds (keyword, terminals, unit, impedance law, how the engine stamps
it, sign convention) and one of quantities (arguments, parts, units, sign convention,
handler). The parser, the model, the engine, the quantities layer, forms, reports and the
docs' tests all read these tables instead of keeping their own lists: adding a kind or a
quantity is one entry here plus its law or handler (see DEVELOPERS.md).

Plain data only (no sympy, no imports of other stages): every stage may import it.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

Stamp = Literal["impedance", "voltage source", "current source", "opamp", "transformer",
                "coupling", "noise voltage", "noise current"]


@dataclass(frozen=True)
class ImpedanceLaw:
    """Z = x^value_power · s^s_power for an element of value x: R, 1/G, 1/(s·C), s·L."""

    value_power: Literal[1, -1]
    s_power: Literal[-1, 0, 1]

    @property
    def opens_at(self) -> str:
        """The limit of the value (`oo` or `0`) at which the element is an open circuit."""
        return "oo" if self.value_power > 0 else "0"


@dataclass(frozen=True)
class ElementKind:
    """One element keyword of the language and what every stage needs to know about it."""

    keyword: str
    """As written in a file: `resistor`, `voltage source`."""
    terminals: tuple[tuple[str, ...], ...]
    """Terminal names in order, grouped where `;` separates groups (a transformer's two
    windings); for a coupling, the names of the elements it couples."""
    unit: str
    """SI unit of the value ('' for a pure number)."""
    stamp: Stamp
    """How the engine enters it into the equations."""
    law: ImpedanceLaw | None = None
    """For an element stamped by its impedance: Z as a function of its value."""
    convention: str | None = None
    """The sign convention a note states when the circuit uses this kind (None: the
    two-terminal rule every note states says it all)."""
    couples: str | None = None
    """For a coupling: the keyword of the elements its terminals name (not nodes)."""
    resistive: bool = False
    """Dissipates V²/Z with a real Z (a resistor or conductance): checked for power."""
    layout_note: str = ""
    """Words after the terminal layout in messages: `(L1, L2), the two coupled inductors`."""

    @property
    def source(self) -> bool:
        """An (independent or controlled) voltage or current source."""
        return self.stamp in ("voltage source", "current source")

    @property
    def noise(self) -> bool:
        """An explicit noise source: no signal of its own (a short or an open), a density
        in the noise analyses."""
        return self.stamp in ("noise voltage", "noise current")

    @property
    def passive(self) -> bool:
        """A two-terminal element given by its impedance law."""
        return self.law is not None

    @property
    def carries_current(self) -> bool:
        """`I(E)` is defined for it: two-terminal elements and sources."""
        return self.passive or self.source

    @property
    def layout(self) -> str:
        """`(first, second)`, `(p1, n1; p2, n2)`, with the layout note if any."""
        text = "(" + "; ".join(", ".join(group) for group in self.terminals) + ")"
        return f"{text}, {self.layout_note}" if self.layout_note else text

    @property
    def terminal_count(self) -> int:
        return sum(len(group) for group in self.terminals)

    @property
    def words(self) -> tuple[str, ...]:
        """The keyword's words (`voltage source` is two tokens of the grammar)."""
        return tuple(self.keyword.split())


_TWO = (("first", "second"),)

ELEMENT_KINDS: dict[str, ElementKind] = {kind.keyword: kind for kind in (
    ElementKind("resistor", _TWO, "Ω", "impedance", ImpedanceLaw(1, 0), resistive=True),
    ElementKind("capacitor", _TWO, "F", "impedance", ImpedanceLaw(-1, -1)),
    ElementKind("inductor", _TWO, "H", "impedance", ImpedanceLaw(1, 1)),
    ElementKind("conductance", _TWO, "S", "impedance", ImpedanceLaw(-1, 0), resistive=True),
    ElementKind("impedance", _TWO, "Ω", "impedance", ImpedanceLaw(1, 0)),
    ElementKind("admittance", _TWO, "S", "impedance", ImpedanceLaw(-1, 0)),
    ElementKind(
        "voltage source", _TWO, "V", "voltage source",
        convention="A voltage source X (p, n) = v sets V(p) − V(n) = v; its current follows "
                   "the two-terminal rule (from p through the source to n)."),
    ElementKind(
        "current source", _TWO, "A", "current source",
        convention="A current source X (p, n) = i drives i out of its terminal p into node p "
                   "and draws it from node n."),
    ElementKind(
        "opamp", (("p", "n", "o"),), "", "opamp",
        convention="An opamp (p, n, out) draws no input current; its output is referred to "
                   "gnd. Ideal: V(p) = V(n); with a gain A(s): V(out) = A(s)·(V(p) − V(n))."),
    ElementKind(
        "transformer", (("p1", "n1"), ("p2", "n2")), "", "transformer",
        convention="An ideal transformer (p1, n1; p2, n2) = N has the turns ratio N "
                   "primary:secondary, dots at p1 and p2."),
    ElementKind(
        "coupling", (("L1", "L2"),), "", "coupling", couples="inductor",
        layout_note="the two coupled inductors",
        convention="A coupling (L1, L2) = k adds the mutual inductance M = k·√(L1·L2), dots "
                   "at the first terminals."),
    ElementKind(
        "noise voltage", _TWO, "V/√Hz", "noise voltage",
        convention="A noise voltage X (p, n) = e_n is a short for signals and a noise voltage "
                   "of density e_n (V/√Hz) in the noise analyses; `corner f_c` makes it "
                   "e_n·√(1 + f_c/f)."),
    ElementKind(
        "noise current", _TWO, "A/√Hz", "noise current",
        convention="A noise current X (p, n) = i_n is an open circuit for signals and a noise "
                   "current of density i_n (A/√Hz) between p and n in the noise analyses; "
                   "`corner f_c` makes it i_n·√(1 + f_c/f)."),
)}
"""Every element kind of the language, by keyword, in the order the docs list them."""

ELEMENT_WORDS = tuple(dict.fromkeys(kind.words[0] for kind in ELEMENT_KINDS.values()))
"""First words of the element keywords (`voltage` for `voltage source`)."""

OTHER_STATEMENTS = ("title", "typeset", "param", "port", "block", "end", "derive", "claim",
                    "temperature", "noiseless")
"""Statement keywords that are not element kinds."""
STATEMENT_WORDS = (*OTHER_STATEMENTS[:3], *ELEMENT_WORDS, *OTHER_STATEMENTS[3:])
"""Every word that can open a statement."""
STATEMENT_KEYWORDS = (*OTHER_STATEMENTS[:3], *ELEMENT_KINDS, *OTHER_STATEMENTS[3:])
"""Every statement keyword as a user writes it (`voltage source` whole): for suggestions."""


# ---------------------------------------------------------------- quantities

Role = Literal["node", "element", "port", "source", "measure", "symbol", "value"]

ROLES: dict[str, str] = {
    "node": "a node (standing alone, a port)",
    "element": "an element",
    "port": "a port",
    "source": "an independent source",
    "measure": "a port or a quantity",
    "symbol": "a parameter or element",
    "value": "a quantity, an expression or a word the analysis reads",
}
"""What each argument role accepts (checked at elaboration, where a role names a name)."""


@dataclass(frozen=True)
class Part:
    """A named part of a quantity's result: `thevenin(out).impedance`."""

    name: str
    unit: str | None
    """Its SI unit ('' for a pure number; None: the unit of the quantity it is part of)."""
    letter: str = ""
    """The letter an engineer writes for it (`Z` in Z_Th); '' when none."""


@dataclass(frozen=True)
class QuantityKind:
    """One quantity (or design analysis) of the language."""

    name: str
    arguments: tuple[Role, ...]
    """The role of each argument, in order."""
    least: int
    """How many arguments at least (the rest are optional)."""
    handler: str
    """`module:function` deriving it (imported on first use, see quantities/registry.py)."""
    unit: str
    """The unit of the result, in words where it depends on the arguments."""
    meaning: str
    """One line for the docs."""
    parts: tuple[Part, ...] = ()
    """The fixed parts a result has (checked at elaboration); () when the handler names
    them from the result (`sensitivities(Q).R1`) or there are none."""
    convention: str | None = None
    """The sign convention a note states when the quantity is shown."""
    tag: str = ""
    """Subscript tag of its parts' symbols (`Th` in V_Th)."""
    part_handler: str = ""
    """`module:function` deriving its parts when they are not its handler's (the design
    parameters of a response in s: `gain(Uin, out).w0`)."""
    analysis: bool = False
    """A design analysis (evaluated at nominal values, tables in notes)."""
    response: bool = True
    """A function of s that it gives is a response of the circuit (notes draw its Bode
    plot); False for sensitivities, whose magnitude in s is not what a reader expects."""

    @property
    def part_names(self) -> tuple[str, ...]:
        return tuple(p.name for p in self.parts)

    def part(self, name: str) -> Part | None:
        return next((p for p in self.parts if p.name == name), None)


DESIGN_PARAMETERS: tuple[Part, ...] = (
    Part("dc", None), Part("hf", None), Part("K", None), Part("w0", "rad/s"),
    Part("f0", "Hz"), Part("Q", ""), Part("zeta", ""), Part("wp", "rad/s"), Part("fp", "Hz"),
    Part("tau", "s"), Part("wz", "rad/s"), Part("fz", "Hz"), Part("centre", "Hz"),
    Part("bandwidth", "Hz"), Part("poles", "rad/s"), Part("zeros", "rad/s"),
    Part("f3db", "Hz"),
)
"""The parts of a response in s: DC and high-frequency gain, section gain, ω0, f0, Q, ζ,
first-order pole and zero, centre and bandwidth, poles, zeros and the −3 dB frequency
(their formulas and symbols are in symcirc/analysis/frequency.py)."""
_RESPONSE = "symcirc.analysis.frequency:part_quantity"


def _twoport_parts() -> tuple[Part, ...]:
    """z, y, h, g (Ω, S or pure numbers by position) and the chain parameters A B C D."""
    units = {"z": ("Ω", "Ω", "Ω", "Ω"), "y": ("S", "S", "S", "S"),
             "h": ("Ω", "", "", "S"), "g": ("S", "", "", "Ω")}
    parts = [Part(f"{family}{ij}", unit, family)
             for family, family_units in units.items()
             for ij, unit in zip(("11", "12", "21", "22"), family_units, strict=True)]
    return (*parts, *(Part(name, unit, name) for name, unit in
                      (("A", ""), ("B", "Ω"), ("C", "S"), ("D", ""))))


NOISE_CONVENTION = (
    "Noise densities are one-sided: S(f) in V²/Hz (A²/Hz) and its square root in V/√Hz "
    "(A/√Hz). Every resistor and conductance not marked `noiseless` is a thermal noise "
    "current 4·k_B·T/R in parallel with it (Johnson–Nyquist), k_B = 1.380649×10⁻²³ J/K "
    "exactly (SI, 2019), T the file's `temperature` (300 K when it gives none); sources are "
    "uncorrelated, so their powers add: S_out = Σ|H_k(j2πf)|²·S_k.")
"""The sign-free convention every noise result states."""

QUANTITIES: dict[str, QuantityKind] = {q.name: q for q in (
    QuantityKind("V", ("node", "node"), 1, "symcirc.quantities.basic:voltage", "V",
                 "node or port voltage", parts=DESIGN_PARAMETERS, part_handler=_RESPONSE),
    QuantityKind("I", ("element",), 1, "symcirc.quantities.basic:current", "A",
                 "current through an element", parts=DESIGN_PARAMETERS,
                 part_handler=_RESPONSE),
    QuantityKind(
        "thevenin", ("port",), 1, "symcirc.quantities.equivalents:thevenin_quantity", "V, Ω",
        "open-circuit voltage and impedance with independent sources zero",
        parts=(Part("voltage", "V", "V"), Part("impedance", "Ω", "Z")), tag="Th",
        convention="Thevenin equivalent: .voltage is the open-circuit port voltage, "
                   ".impedance the impedance seen at the port with independent sources set "
                   "to zero (voltage sources shorted, current sources opened)."),
    QuantityKind(
        "norton", ("port",), 1, "symcirc.quantities.equivalents:norton_quantity", "A, S",
        "short-circuit current and admittance",
        parts=(Part("current", "A", "I"), Part("admittance", "S", "Y")), tag="N",
        convention="Norton equivalent: .current is the short-circuit current, flowing from "
                   "the port's first node through the short to its second; .admittance as "
                   "seen at the port with independent sources set to zero."),
    QuantityKind("Z", ("port",), 1, "symcirc.quantities.equivalents:impedance_quantity", "Ω",
                 "driving-point impedance", parts=DESIGN_PARAMETERS, part_handler=_RESPONSE),
    QuantityKind("Y", ("port",), 1, "symcirc.quantities.equivalents:admittance_quantity", "S",
                 "driving-point admittance", parts=DESIGN_PARAMETERS,
                 part_handler=_RESPONSE),
    QuantityKind(
        "gain", ("source", "measure"), 2, "symcirc.quantities.basic:gain_quantity",
        "the measured quantity's unit per the source's",
        "Q per unit of independent source X, other independent sources zero",
        parts=DESIGN_PARAMETERS, part_handler=_RESPONSE,
        convention="gain(X, Q) is Q divided by the value of the independent source X, every "
                   "other independent source set to zero."),
    QuantityKind(
        "twoport", ("port", "port"), 2, "symcirc.quantities.twoports:twoport_quantity",
        "Ω, S or none by parameter", "z, y, h, g and A B C D parameters",
        parts=_twoport_parts(),
        convention="Two-port parameters take the port currents flowing into each port's "
                   "first node; the chain parameters A B C D take the port-2 current flowing "
                   "out: V1 = A·V2 + B·I2, I1 = C·V2 + D·I2."),
    QuantityKind(
        "sensitivity", ("measure", "symbol"), 2,
        "symcirc.quantities.sensitivity:sensitivity_quantity", "Q's unit per x's", "dQ/dx",
        convention="sensitivity(Q, x) is ∂Q/∂x.", response=False),
    QuantityKind(
        "relative_sensitivity", ("measure", "symbol"), 2,
        "symcirc.quantities.sensitivity:relative_sensitivity_quantity", "none",
        "(x/Q)·dQ/dx", convention="relative_sensitivity(Q, x) is (x/Q)·∂Q/∂x.",
        response=False),
    QuantityKind(
        "sensitivities", ("value", "value"), 1,
        "symcirc.analysis.quantities:sensitivities_quantity", "none",
        "every relative sensitivity of Q, largest first", analysis=True, response=False,
        convention="Relative sensitivities are (x/Q)·∂Q/∂x: the relative change of Q per "
                   "relative change of x."),
    QuantityKind("tolerance", ("value", "value"), 1,
                 "symcirc.analysis.quantities:tolerance_quantity", "Q's unit",
                 "worst case, extremes, RSS and Monte Carlo spread of Q", analysis=True),
    QuantityKind("loading", ("value", "value", "value"), 2,
                 "symcirc.analysis.quantities:loading_quantity", "V, none, W",
                 "loaded voltage, loading error and power in a load", analysis=True),
    QuantityKind("minimum_load", ("value", "value", "value"), 2,
                 "symcirc.analysis.quantities:minimum_load_quantity", "Ω, F",
                 "the smallest load (largest capacitance) within an error bound",
                 analysis=True),
    QuantityKind("solve", ("value", "value"), 2, "symcirc.analysis.quantities:solve_quantity",
                 "x's unit", "the value of x that meets a target, with E-series neighbours",
                 analysis=True),
    QuantityKind("at", ("value", "value"), 2, "symcirc.analysis.frequency:at_quantity",
                 "none, dB, °", "magnitude, dB and phase of a response at a frequency",
                 parts=(Part("magnitude", None), Part("dB", "dB"), Part("phase", "°")),
                 analysis=True),
    QuantityKind(
        "cmrr", ("value", "value"), 2, "symcirc.analysis.rejection:ratio_quantity", "dB",
        "common-mode rejection ratio 20·log10|A_dm/A_cm| of two gains of one unit",
        analysis=True, response=False,
        convention="cmrr(A_dm, A_cm) is 20·log10|A_dm/A_cm| in dB: the differential gain over "
                   "the common-mode gain."),
    QuantityKind(
        "psrr", ("value", "value"), 2, "symcirc.analysis.rejection:ratio_quantity", "dB",
        "power-supply rejection ratio 20·log10|A/A_supply| of two gains of one unit",
        analysis=True, response=False,
        convention="psrr(A, A_supply) is 20·log10|A/A_supply| in dB: the signal gain over the "
                   "gain from the supply source."),
    QuantityKind("response", ("value",), 1, "symcirc.analysis.frequency:response_quantity",
                 "Q's unit", "Q with its magnitude and phase at chosen frequencies",
                 analysis=True),
    QuantityKind(
        "noise", ("measure", "value"), 1, "symcirc.quantities.noise:noise_quantity",
        "V/√Hz and V²/Hz (A for a current)",
        "output noise density Σ|H_k|²·S_k of every noise source, at f or as a function of f",
        parts=(Part("density", None, "e"), Part("psd", None, "S")), tag="n", response=False,
        convention=NOISE_CONVENTION),
    QuantityKind(
        "input_noise", ("source", "measure", "value"), 2,
        "symcirc.quantities.noise:input_noise_quantity", "the source's unit per √Hz",
        "noise(Q) referred to the input: divided by |gain(X, Q)|",
        parts=(Part("density", None, "e"), Part("psd", None, "S")), tag="n",
        response=False, convention=NOISE_CONVENTION),
    QuantityKind(
        "noise_contributions", ("measure", "value"), 1,
        "symcirc.quantities.noise:contributions_quantity", "Q's unit per √Hz",
        "each noise source's share of noise(Q) at f, largest first", analysis=True,
        response=False, convention=NOISE_CONVENTION),
    QuantityKind(
        "noise_rms", ("measure", "value", "value"), 3,
        "symcirc.analysis.noise_quantities:noise_rms_quantity", "Q's unit (rms) and its square",
        "rms noise at Q over the band f1 … f2, closed form or numerical with the method stated",
        parts=(Part("rms", None), Part("mean_square", None)), analysis=True, response=False,
        convention=NOISE_CONVENTION),
    QuantityKind(
        "noise_bandwidth", ("value",), 1,
        "symcirc.analysis.noise_quantities:noise_bandwidth_quantity", "Hz",
        "equivalent noise bandwidth of a response in s", analysis=True, response=False),
    QuantityKind(
        "snr", ("value", "measure", "value", "value"), 4,
        "symcirc.analysis.noise_quantities:snr_quantity", "dB",
        "signal-to-noise ratio of a signal against the noise at Q over f1 … f2",
        analysis=True, response=False, convention=NOISE_CONVENTION),
    QuantityKind(
        "noise_bits", ("measure", "value", "value", "value"), 4,
        "symcirc.analysis.noise_quantities:noise_bits_quantity", "bits",
        "noise-free and effective resolution in a full-scale range over f1 … f2",
        parts=(Part("noise_free", ""), Part("effective", "")), analysis=True, response=False,
        convention=NOISE_CONVENTION),
)}
"""Every quantity of the language, by name, in the order the docs list them."""
