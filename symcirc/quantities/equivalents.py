"""Thevenin and Norton equivalents at a port, and its driving-point impedance and admittance.

The Thevenin impedance is the port voltage per unit of a test current driven into the
port's first node, every independent source zero; the Norton current is the short-circuit
current from the first node through the short to the second. When the open port has no
determined voltage (an ideal current source drives it), the port is shorted instead and
the Norton equivalent comes from that system.
"""

from __future__ import annotations

from ..algebra.rational import RationalFunction
from ..engine.mna import Current, SingularCircuit, Voltage, port_excitation
from ..language import syntax
from ..model.circuit import REFERENCE
from .common import Context, Raw, handler

# ---------------------------------------------------------------- the parts


def _port(context: Context, quantity: syntax.Quantity) -> tuple[str, str, str]:
    (arg,) = context.arguments(quantity, 1, 1, f"one port: {quantity.name}(out)")
    return context.port(arg)


def _wanted(context: Context, quantity: syntax.Quantity, parts: tuple[str, ...]) -> tuple:
    if quantity.attribute is None:
        return parts
    if quantity.attribute not in parts:
        listed = ", ".join("." + p for p in parts)
        raise context.error(quantity, f"{quantity.name}(..) has no part `.{quantity.attribute}`; "
                                      f"it has {listed}")
    return (quantity.attribute,)


def _open(context: Context, port: str, a: str, b: str
          ) -> tuple[RationalFunction, RationalFunction] | None:
    """(open-circuit voltage, Thevenin impedance), or None when the open port is undetermined
    but the shorted one is not (an ideal current source drives the port)."""
    measure = Voltage(a, b)
    try:
        impedance = context.transfer(measure, port_excitation(port))
        return context.response(measure), impedance
    except SingularCircuit:
        try:
            context.transfer(Current(port_excitation(port)), port_excitation(port), (port,))
        except SingularCircuit:
            pass
        else:
            return None
        raise


def _shorted(context: Context, port: str) -> tuple[RationalFunction, RationalFunction]:
    """(short-circuit current from the first node through the short to the second,
    admittance seen by the short)."""
    through = Current(port_excitation(port))
    current = context.response(through, (port,))
    admittance = -context.transfer(through, port_excitation(port), (port,))
    return current, admittance


def _short_cause(context: Context, port: str, a: str, b: str) -> str:
    """Why a port's impedance is zero, for messages."""
    for element in context.circuit.elements.values():
        if element.kind == "voltage source" and set(element.nodes[:2]) == {a, b}:
            return f"voltage source {element.name} is connected across port {port}"
        if element.kind == "opamp" and {element.nodes[2], REFERENCE} == {a, b}:
            return f"the output of opamp {element.name} holds port {port}"
    return (f"port {port} is held by a voltage source, an opamp output or a short (its "
            "impedance is 0)")


def _open_cause(port: str) -> str:
    return (f"an ideal current source drives port {port}, or nothing conducts between its "
            "terminals while the other ports are open")


def raw_thevenin(context: Context, quantity: syntax.Quantity) -> list[Raw]:
    port, a, b = _port(context, quantity)
    parts = _wanted(context, quantity, ("voltage", "impedance"))
    with context.at(quantity):
        found = _open(context, port, a, b)
    if found is None:
        raise context.error(
            quantity, f"port {port} has no Thevenin equivalent: {_open_cause(port)} (its "
                      "impedance is infinite); use norton(" + port + ")")
    voltage, impedance = found
    raws = []
    if "voltage" in parts:
        raws.append(Raw(f"thevenin({port}).voltage", voltage, "V", part="voltage"))
    if "impedance" in parts:
        notes = ()
        if impedance.is_zero():
            notes = (f"The Thevenin impedance is 0: {_short_cause(context, port, a, b)}.",)
        raws.append(Raw(f"thevenin({port}).impedance", impedance, "Ω", notes, "impedance"))
    return raws


def raw_norton(context: Context, quantity: syntax.Quantity) -> list[Raw]:
    port, a, b = _port(context, quantity)
    parts = _wanted(context, quantity, ("current", "admittance"))
    with context.at(quantity):
        found = _open(context, port, a, b)
        if found is None:
            current, admittance = _shorted(context, port)
        else:
            voltage, impedance = found
            if impedance.is_zero():
                raise context.error(
                    quantity, f"port {port} has no Norton equivalent: "
                              f"{_short_cause(context, port, a, b)}, so its impedance is 0 and "
                              f"its short-circuit current is unbounded; use thevenin({port})")
            current, admittance = voltage / impedance, impedance.inverse()
    raws = []
    if "current" in parts:
        raws.append(Raw(f"norton({port}).current", current, "A", part="current"))
    if "admittance" in parts:
        raws.append(Raw(f"norton({port}).admittance", admittance, "S", part="admittance"))
    return raws


def raw_impedance(context: Context, quantity: syntax.Quantity) -> list[Raw]:
    context.no_attribute(quantity)
    port, a, b = _port(context, quantity)
    with context.at(quantity):
        found = _open(context, port, a, b)
    if found is None:
        raise context.error(quantity, f"Z({port}) is infinite: {_open_cause(port)}; its "
                                      f"admittance Y({port}) is 0")
    impedance = found[1]
    notes = ()
    if impedance.is_zero():
        notes = (f"Z({port}) is 0: {_short_cause(context, port, a, b)}.",)
    return [Raw(quantity.text, impedance, "Ω", notes)]


def raw_admittance(context: Context, quantity: syntax.Quantity) -> list[Raw]:
    context.no_attribute(quantity)
    port, a, b = _port(context, quantity)
    with context.at(quantity):
        found = _open(context, port, a, b)
        if found is None:
            admittance = _shorted(context, port)[1]
        elif found[1].is_zero():
            raise context.error(quantity, f"Y({port}) is infinite: "
                                          f"{_short_cause(context, port, a, b)}; Z({port}) = 0")
        else:
            admittance = found[1].inverse()
    return [Raw(quantity.text, admittance, "S")]


thevenin_quantity = handler(raw_thevenin)
norton_quantity = handler(raw_norton)
impedance_quantity = handler(raw_impedance)
admittance_quantity = handler(raw_admittance)
