"""Which derivation each quantity gets: structural (reduction, dividers, superposition)
where the circuit allows it, the nodal equations otherwise. Each returns the symbol of its
result; the recorder holds the steps and the design form of every intermediate."""

from __future__ import annotations

from dataclasses import dataclass

import sympy

from ..language import syntax
from ..model.circuit import REFERENCE, Circuit, Element
from . import nodal, structural
from .dividers import Unsupported
from .printing import latex, text
from .steps import Recorder


@dataclass(frozen=True)
class Target:
    """What to derive, in the circuit's terms."""

    kind: str
    """'voltage', 'current', 'impedance', 'admittance', 'norton', 'gain', 'twoport'."""
    nodes: tuple[str, str] = ("", "")
    element: str | None = None
    """current: the element; gain: the driving source."""
    measure: Target | None = None
    """gain: the measured voltage or current."""
    parameter: str | None = None
    """twoport: z11, ..., A, B, C, D; ports in `nodes` as two port names."""
    name: str = "X"
    """Name of the final symbol."""


# ------------------------------------------------------------------ reading quantities


def target_of(circuit: Circuit, quantity: syntax.Quantity, attribute: str | None) -> Target | None:
    """The target a result of `quantity` stands for, or None when forms do not cover it."""
    name, args = quantity.name, quantity.args
    if name in ("thevenin", "norton", "Z", "Y"):
        nodes = _two_nodes(circuit, args)
        if nodes is None:
            return None
        label = _label(args)
        if name == "thevenin":
            return (
                Target("voltage", nodes, name="V_th")
                if attribute == "voltage"
                else Target("impedance", nodes, name="th")
                if attribute == "impedance"
                else None
            )
        if name == "norton":
            return (
                Target("norton", nodes, name="I_N")
                if attribute == "current"
                else Target("admittance", nodes, name="Y_N")
                if attribute == "admittance"
                else None
            )
        return Target(
            "impedance" if name == "Z" else "admittance",
            nodes,
            name=label if name == "Z" else f"Y_{label}",
        )
    if name in ("V", "I"):
        return _measure(circuit, quantity)
    if name == "gain" and len(args) == 2:
        source = _arg_name(args[0])
        if source not in circuit.elements:
            return None
        measured = args[1]
        if isinstance(measured, syntax.Name):
            nodes = _two_nodes(circuit, (measured,))
            inner = Target("voltage", nodes, name=f"V_{measured.name}") if nodes else None
        else:
            inner = _measure(circuit, measured)
        if inner is None:
            return None
        return Target("gain", element=source, measure=inner, name="H")
    if name == "twoport" and len(args) == 2 and attribute:
        ports = tuple(_arg_name(a) for a in args)
        if all(p in circuit.ports for p in ports) and attribute in TWO_PORT:
            return Target("twoport", ports, parameter=attribute, name=attribute)
    return None


def _arg_name(arg) -> str | None:
    if isinstance(arg, syntax.Name):
        return REFERENCE if arg.name == "0" else arg.name
    return None


def _label(args) -> str:
    names = [_arg_name(a) or "" for a in args]
    return "".join(names)


def _two_nodes(circuit: Circuit, args) -> tuple[str, str] | None:
    names = [_arg_name(a) for a in args]
    if None in names or not names:
        return None
    if len(names) == 1:
        if names[0] in circuit.ports:
            port = circuit.ports[names[0]]
            return port.positive, port.negative
        return (names[0], REFERENCE) if names[0] in circuit.nodes else None
    if len(names) == 2 and all(n in circuit.nodes for n in names):
        return names[0], names[1]
    return None


def _measure(circuit: Circuit, quantity) -> Target | None:
    if isinstance(quantity, syntax.Voltage) or (
        isinstance(quantity, syntax.Quantity) and quantity.name == "V"
    ):
        args = quantity.nodes if isinstance(quantity, syntax.Voltage) else quantity.args
        nodes = _two_nodes(circuit, args)
        if nodes is None:
            return None
        return Target("voltage", nodes, name="V_" + "".join(_arg_name(a) for a in args))
    if isinstance(quantity, syntax.Current) or (
        isinstance(quantity, syntax.Quantity) and quantity.name == "I"
    ):
        arg = (
            quantity.element
            if isinstance(quantity, syntax.Current)
            else (quantity.args[0] if len(quantity.args) == 1 else None)
        )
        element = _arg_name(arg) if arg is not None else None
        if element not in circuit.elements:
            return None
        return Target("current", element=element, name=f"I_{element}")
    return None


# ------------------------------------------------------------------ structural route


def structural_route(circuit: Circuit, target: Target, rec: Recorder) -> sympy.Expr:
    kind = target.kind
    if kind == "voltage":
        return structural.voltage(circuit, *target.nodes, rec, target.name)
    if kind == "impedance":
        return structural.impedance(circuit, *target.nodes, rec, target.name)
    if kind == "admittance":
        z = structural.impedance(circuit, *target.nodes, rec, target.name[2:] or "in")
        return _reciprocal(rec, z, target.name)
    if kind == "norton":
        v = structural.voltage(circuit, *target.nodes, rec, "V_th")
        z = structural.impedance(circuit, *target.nodes, rec, "th")
        symbol = rec.fresh([target.name], "I")
        rec.add(
            "ohm",
            "The short-circuit current is the open-circuit voltage over the "
            "source impedance (Norton from Thevenin).",
            symbol,
            v / z,
            voltage=v,
            impedance=z,
        )
        return symbol
    if kind == "current":
        return structural.current(circuit, circuit.elements[target.element], rec, target.name)
    if kind == "gain":
        source = circuit.elements[target.element]
        if not source.is_source or source.is_controlled:
            raise Unsupported("gain from a controlled source")
        inner = target.measure
        if inner.kind == "voltage":
            measured = structural.voltage(circuit, *inner.nodes, rec, inner.name, only=source)
        else:
            measured = structural.current(
                circuit, circuit.elements[inner.element], rec, inner.name, only=source
            )
        return _ratio(
            rec,
            measured,
            source.symbol,
            target.name,
            f"The gain is {text(measured)} per unit of {source.name}.",
        )
    raise Unsupported(kind)


def _reciprocal(rec: Recorder, z: sympy.Expr, name: str) -> sympy.Symbol:
    symbol = rec.fresh([name], "Y")
    rec.add(
        "reciprocal", "The admittance is the reciprocal of the impedance.", symbol, 1 / z, operand=z
    )
    return symbol


def _ratio(
    rec: Recorder, numerator: sympy.Expr, denominator: sympy.Expr, name: str, sentence: str
) -> sympy.Symbol:
    symbol = rec.fresh([name], "H")
    rec.add(
        "ratio",
        sentence,
        symbol,
        numerator / denominator,
        numerator=numerator,
        denominator=denominator,
    )
    return symbol


# ------------------------------------------------------------------ nodal route

TWO_PORT: dict[str, tuple[str, int, str, tuple[str, int], bool]] = {
    # parameter: (drive 'V'|'I', driven port, other port 'open'|'short',
    #             measured ('V'|'Iin'|'Iout', port), measured/drive (else drive/measured))
    "z11": ("I", 1, "open", ("V", 1), True),
    "z21": ("I", 1, "open", ("V", 2), True),
    "z12": ("I", 2, "open", ("V", 1), True),
    "z22": ("I", 2, "open", ("V", 2), True),
    "y11": ("V", 1, "short", ("Iin", 1), True),
    "y21": ("V", 1, "short", ("Iin", 2), True),
    "y12": ("V", 2, "short", ("Iin", 1), True),
    "y22": ("V", 2, "short", ("Iin", 2), True),
    "h11": ("I", 1, "short", ("V", 1), True),
    "h21": ("I", 1, "short", ("Iin", 2), True),
    "h12": ("V", 2, "open", ("V", 1), True),
    "h22": ("V", 2, "open", ("Iin", 2), True),
    "g11": ("V", 1, "open", ("Iin", 1), True),
    "g21": ("V", 1, "open", ("V", 2), True),
    "g12": ("I", 2, "short", ("Iin", 1), True),
    "g22": ("I", 2, "short", ("V", 2), True),
    "A": ("V", 1, "open", ("V", 2), False),
    "B": ("V", 1, "short", ("Iout", 2), False),
    "C": ("I", 1, "open", ("V", 2), False),
    "D": ("I", 1, "short", ("Iout", 2), False),
}


def nodal_route(circuit: Circuit, target: Target, rec: Recorder) -> sympy.Expr:
    sources = structural.independent_sources(circuit)
    kind = target.kind
    if kind == "voltage":
        system = nodal.build_system(circuit, {e.name for e in sources})
        return _solve_voltage(system, *target.nodes, rec, target.name)
    if kind in ("impedance", "admittance"):
        structural.deactivate(circuit, rec)
        test = rec.fresh(["I_t"], "I")
        pos, neg = target.nodes
        rec.add(
            "test-source",
            f"Drive the port with a test current {text(test)} into node "
            f"{pos} and out of node {neg}; the impedance is the voltage it "
            "develops over the test current.",
            equation=(f"I({pos} → {neg}) = {text(test)}", r"I_{t}"),
            current=test,
        )
        system = nodal.build_system(
            circuit, set(), (nodal.Extra("current", "test", (pos, neg), test),)
        )
        v = _solve_voltage(system, pos, neg, rec, f"V_{pos}{neg}")
        name = target.name if kind == "impedance" else target.name[2:] or "in"
        z = _ratio(
            rec,
            v,
            test,
            ("Z_" + name) if kind == "impedance" else "Z_" + name,
            "Impedance: voltage over test current.",
        )
        return z if kind == "impedance" else _reciprocal(rec, z, target.name)
    if kind == "norton":
        pos, neg = target.nodes
        rec.add(
            "short",
            f"Short the port: join nodes {pos} and {neg} by a wire whose current, "
            f"from {pos} to {neg}, is the short-circuit current.",
            equation=(f"V({pos}, {neg}) = 0", rf"V_{{{pos}}} - V_{{{neg}}} = 0"),
        )
        system = nodal.build_system(
            circuit, {e.name for e in sources}, (nodal.Extra("short", "sc", (pos, neg)),)
        )
        current = system.current_symbol["sc"]
        return nodal.record(system, [current], rec, {current: target.name})[current]
    if kind == "current":
        element = circuit.elements[target.element]
        return _nodal_current(circuit, element, {e.name for e in sources}, rec, target.name)
    if kind == "gain":
        source = circuit.elements[target.element]
        if source not in sources:
            raise Unsupported("gain from a controlled source")
        structural.deactivate(circuit, rec, keep=source)
        inner = target.measure
        if inner.kind == "voltage":
            system = nodal.build_system(circuit, {source.name})
            measured = _solve_voltage(system, *inner.nodes, rec, inner.name)
        else:
            measured = _nodal_current(
                circuit, circuit.elements[inner.element], {source.name}, rec, inner.name
            )
        return _ratio(
            rec,
            measured,
            source.symbol,
            target.name,
            f"The gain is {text(measured)} per unit of {source.name}.",
        )
    if kind == "twoport":
        return _two_port(circuit, target, rec)
    raise Unsupported(kind)


def _solve_voltage(
    system: nodal.System, pos: str, neg: str, rec: Recorder, name: str
) -> sympy.Expr:
    form = nodal._add(system.voltage(pos), nodal._scale(system.voltage(neg), -1))
    targets = [u for u in system.unknowns if form.get(u, 0) != 0]
    constant = form.get(nodal.ONE, sympy.Integer(0))
    if len(targets) == 1 and form[targets[0]] == 1 and constant == 0:
        return nodal.record(system, targets, rec, {targets[0]: name})[targets[0]]
    solved = nodal.record(system, targets, rec, {})
    rhs = constant + sympy.Add(*[form[u] * solved[u] for u in targets])
    symbol = rec.fresh([name], "V")
    rec.add(
        "loop",
        f"The voltage from node {pos} to node {neg} is the difference of their node voltages.",
        symbol,
        rhs,
        terms=[(1, rhs)],
    )
    rec.forms[symbol] = structural.common_factor(rec.forms[symbol])
    return symbol


def _nodal_current(
    circuit: Circuit, element: Element, active: set[str], rec: Recorder, name: str
) -> sympy.Expr:
    if element.law is not None and not any(
        e.kind == "coupling" and element.name in (e.coupled or ())
        for e in circuit.elements.values()
    ):
        system = nodal.build_system(circuit, active)
        v = _solve_voltage(system, *element.nodes, rec, f"V_{element.name}")
        return structural.ohm(rec, element, name, v, element.impedance)
    if element.kind == "current source":
        raise Unsupported("the current of a current source is its value")
    system = nodal.build_system(circuit, active, currents=frozenset({element.name}))
    current = system.current_symbol.get(element.name)
    if current is None:
        raise Unsupported(f"no current unknown for {element.name}")
    return nodal.record(system, [current], rec, {current: name})[current]


def _two_port(circuit: Circuit, target: Target, rec: Recorder) -> sympy.Expr:
    drive, driven, other, (what, where), measured_over_drive = TWO_PORT[target.parameter]
    ports = [circuit.ports[p] for p in target.nodes]
    port_nodes = [(p.positive, p.negative) for p in ports]
    structural.deactivate(circuit, rec)
    test = rec.fresh(["I_t" if drive == "I" else "V_t"], "X")
    extras = [
        nodal.Extra("current" if drive == "I" else "voltage", "drive", port_nodes[driven - 1], test)
    ]
    other_port = 3 - driven
    if other == "short":
        extras.append(nodal.Extra("short", f"short{other_port}", port_nodes[other_port - 1]))
    rec.add(
        "test-source",
        f"Drive port {driven} ({ports[driven - 1].name}) with a test "
        f"{'current' if drive == 'I' else 'voltage'} {text(test)}; "
        f"{'short' if other == 'short' else 'leave open'} port {other_port} "
        f"({ports[other_port - 1].name}).",
        equation=(f"{text(test)} at port {driven}", latex(test)),
        drive=test,
    )
    system = nodal.build_system(circuit, set(), tuple(extras))
    if what == "V":
        measured = _solve_voltage(system, *port_nodes[where - 1], rec, f"V_{where}")
    else:
        branch = "drive" if where == driven else f"short{where}"
        current = system.current_symbol.get(branch)
        if current is None:
            raise Unsupported("port current")
        solved = nodal.record(system, [current], rec, {})[current]
        sign = -1 if what == "Iin" else 1
        measured = rec.fresh([f"I_{where}"], "I")
        rec.add(
            "loop",
            f"The current {'into' if what == 'Iin' else 'out of'} port {where} is "
            f"{'minus ' if sign < 0 else ''}the current of the "
            f"{'test source' if branch == 'drive' else 'short'}.",
            measured,
            sign * solved,
            terms=[(sign, solved)],
        )
    if measured_over_drive:
        return _ratio(
            rec,
            measured,
            test,
            target.name,
            f"{target.parameter} is the measured quantity over the test source.",
        )
    return _ratio(
        rec,
        test,
        measured,
        target.name,
        f"{target.parameter} is the test source over the measured quantity.",
    )
