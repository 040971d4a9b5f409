"""Two-port parameters: z, y, h, g and the chain (transmission) parameters A, B, C, D.

Port currents I1, I2 flow into each port's first node; the chain parameters take the
port-2 current flowing out (V1 = A*V2 + B*I2', I1 = C*V2 + D*I2' with I2' = -I2). The
network (its independent sources zero) is solved once with test sources at both ports:
open ports (test currents) give z; when that system is singular, shorted ports give y,
then mixed ones give h or g. Whatever was found is written as two linear relations among
(V1, I1, V2, I2), and every set is read off those relations; a set whose dependent
variables the relations do not determine does not exist, and saying so is the answer.
"""

from __future__ import annotations

from ..algebra.rational import RationalFunction
from ..engine.mna import Current, SingularCircuit, Voltage, port_excitation
from ..language import syntax
from ..vocabulary import QUANTITIES
from .common import Context, Raw, handler

VARIABLES = ("V1", "I1", "V2", "I2")

SETS: dict[str, tuple[tuple[str, str], tuple[str, str]]] = {
    "z": (("V1", "V2"), ("I1", "I2")),
    "y": (("I1", "I2"), ("V1", "V2")),
    "h": (("V1", "I2"), ("I1", "V2")),
    "g": (("I1", "V2"), ("V1", "I2")),
    "chain": (("V1", "I1"), ("V2", "I2")),
}
"""Each parameter set: its dependent variables and independent variables (rows, columns)."""

NAMES = {
    "z": ("z11", "z12", "z21", "z22"), "y": ("y11", "y12", "y21", "y22"),
    "h": ("h11", "h12", "h21", "h22"), "g": ("g11", "g12", "g21", "g22"),
    "chain": ("A", "B", "C", "D"),
}

UNITS = {part.name: part.unit for part in QUANTITIES["twoport"].parts}

WHY_MISSING = {
    "z": "the open-circuit impedances are unbounded (with both ports open, a port current "
         "cannot be set freely, e.g. a series element alone)",
    "y": "the short-circuit admittances are unbounded (with both ports shorted, a port "
         "voltage cannot be set freely, e.g. a shunt element alone)",
    "h": "with port 1 driven by a current and port 2 shorted, the port variables are not "
         "determined",
    "g": "with port 1 driven by a voltage and port 2 open, the port variables are not "
         "determined",
    "chain": "port 2's voltage and current do not determine port 1's (no transmission from "
             "port 1 to port 2)",
}


def family_of(attribute: str) -> str:
    return "chain" if attribute in NAMES["chain"] else attribute[0]


def raw_twoport(context: Context, quantity: syntax.Quantity) -> list[Raw]:
    first, second = context.arguments(quantity, 2, 2, "two ports: twoport(in, out)")
    p1, p2 = context.port(first), context.port(second)
    if p1[0] == p2[0]:
        raise context.error(second, "a two-port needs two different ports")
    every = [n for names in NAMES.values() for n in names]
    if quantity.attribute is not None and quantity.attribute not in every:
        raise context.error(quantity, f"twoport(..) has no part `.{quantity.attribute}`; it has "
                                      "z11..z22, y11..y22, h11..h22, g11..g22 and A, B, C, D")
    with context.at(quantity):
        relations = _relations(context, p1[0], p2[0])
    families = [family_of(quantity.attribute)] if quantity.attribute else list(NAMES)
    label = f"twoport({p1[0]}, {p2[0]})"
    raws: list[Raw] = []
    missing: list[str] = []
    for family in families:
        params = _parameters(relations, family)
        if params is None:
            if quantity.attribute is not None:
                raise context.error(quantity, f"{label} has no {_set_name(family)}: "
                                              f"{WHY_MISSING[family]}")
            missing.append(family)
            continue
        for name, value in zip(NAMES[family], params, strict=True):
            if quantity.attribute in (None, name):
                raws.append(Raw(f"{label}.{name}", value, UNITS[name], part=name))
    if missing and raws:
        note = "; ".join(f"no {_set_name(f)} ({WHY_MISSING[f]})" for f in missing)
        raws[0] = Raw(raws[0].quantity, raws[0].function, raws[0].unit, (f"{label}: {note}.",),
                      raws[0].part)
    return raws


def _set_name(family: str) -> str:
    return "chain parameters A B C D" if family == "chain" else f"{family} parameters"


def _relations(context: Context, port1: str, port2: str) -> list[dict[str, RationalFunction]]:
    """Two linear relations sum(coefficient * variable) = 0 among V1, I1, V2, I2."""
    one = RationalFunction(1, 1, context.network.ring, canonical=True)
    singular: SingularCircuit | None = None
    for family in ("z", "y", "h", "g"):
        dependent, independent = SETS[family]
        shorted = [port for port, variable in ((port1, independent[0]), (port2, independent[1]))
                   if variable.startswith("V")]
        try:
            matrix = [[_measure(context, port_d, dep, port_i, shorted)
                       for port_i in (port1, port2)]
                      for port_d, dep in ((port1, dependent[0]), (port2, dependent[1]))]
        except SingularCircuit as problem:
            singular = singular or problem
            continue
        # dependent_k - sum_j matrix[k][j] * independent_j = 0
        rows = []
        for k in range(2):
            row = {dependent[k]: one}
            for j in range(2):
                row[independent[j]] = -matrix[k][j]
            rows.append(row)
        return rows
    raise singular  # type: ignore[misc]


def _measure(context: Context, port: str, variable: str, driven: str, shorted: list[str]
             ) -> RationalFunction:
    """`variable` of `port` per unit of the test source at port `driven`.

    An open port's voltage is measured; a shorted port's current into its first node is
    minus the current through its short (from the first node to the second)."""
    excitation = port_excitation(driven)
    if variable.startswith("V"):
        p = context.circuit.ports[port]
        return context.transfer(Voltage(p.positive, p.negative), excitation, shorted)
    return -context.transfer(Current(port_excitation(port)), excitation, shorted)


def _parameters(relations: list[dict[str, RationalFunction]], family: str
                ) -> list[RationalFunction] | None:
    """[p11, p12, p21, p22] of a set, or None when it does not exist."""
    dependent, independent = SETS[family]

    def coefficient(row: dict[str, RationalFunction], variable: str) -> RationalFunction:
        value = row.get(variable)
        if value is None:
            return 0 * relations[0][next(iter(relations[0]))]
        # the chain set takes I2' = -I2 as its variable
        return -value if family == "chain" and variable == "I2" else value

    md = [[coefficient(r, v) for v in dependent] for r in relations]
    mf = [[coefficient(r, v) for v in independent] for r in relations]
    det = md[0][0] * md[1][1] - md[0][1] * md[1][0]
    if det.is_zero():
        return None
    inverse = [[md[1][1] / det, -md[0][1] / det], [-md[1][0] / det, md[0][0] / det]]
    # dependent = -inverse(md) * mf * independent
    return [-(inverse[i][0] * mf[0][j] + inverse[i][1] * mf[1][j])
            for i in range(2) for j in range(2)]


twoport_quantity = handler(raw_twoport)
