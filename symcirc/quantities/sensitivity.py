"""`sensitivity(Q, x)` = dQ/dx and `relative_sensitivity(Q, x)` = (x/Q)*dQ/dx, exactly.

Q is any scalar quantity of the engine (a port name stands for its voltage); a quantity with
parts (`thevenin(out)`) gives one sensitivity per part. When x is a parameter that Q
depends on only through definitions (`Rt = R0*(1 + alpha*T)`), those definitions are
substituted first: the chain rule, stated in a note.
"""

from __future__ import annotations

from ..algebra.rational import RationalFunction
from ..language import syntax
from . import nearzero
from .basic import raw_current, raw_gain, raw_voltage
from .common import Context, Raw, handler, per, unit_of_symbol
from .equivalents import raw_admittance, raw_impedance, raw_norton, raw_thevenin
from .twoports import raw_twoport

RAW = {
    "V": raw_voltage, "I": raw_current, "gain": raw_gain, "thevenin": raw_thevenin,
    "norton": raw_norton, "Z": raw_impedance, "Y": raw_admittance, "twoport": raw_twoport,
}


def raw_quantity(context: Context, arg) -> list[Raw]:
    """The raw results of a quantity argument (a port name means its voltage)."""
    if isinstance(arg, syntax.Name) and arg.name in context.circuit.ports:
        arg = syntax.Quantity(arg.line, arg.column, "V", (arg,), None, f"V({arg.name})")
    elif isinstance(arg, syntax.Voltage):
        arg = syntax.Quantity(arg.line, arg.column, "V", arg.nodes, None,
                              "V(" + ", ".join(n.name for n in arg.nodes) + ")")
    elif isinstance(arg, syntax.Current):
        arg = syntax.Quantity(arg.line, arg.column, "I", (arg.element,), None,
                              f"I({arg.element.name})")
    if not isinstance(arg, syntax.Quantity):
        raise context.error(arg, "expected a quantity here, such as V(out), gain(Uin, out) or "
                                 "thevenin(out).impedance")
    if arg.name in ("sensitivity", "relative_sensitivity"):
        return raw_sensitivity(context, arg, arg.name == "relative_sensitivity")
    produce = RAW.get(arg.name)
    if produce is None and arg.name in ("noise_rms", "snr", "noise_bits", "noise_bandwidth"):
        raise context.error(arg, f"the sensitivity of {arg.name}(..) to one symbol is not "
                                 f"defined; sensitivities({arg.text}) gives every one "
                                 "(numerically where the band has no closed form)")
    if produce is None:
        raise context.error(arg, f"the sensitivity of {arg.name}(..) is not defined; use a "
                                 "quantity such as V(..), I(..), gain(..), Z(..) or "
                                 "thevenin(..).voltage")
    return produce(context, arg)


def raw_sensitivity(context: Context, quantity: syntax.Quantity, relative: bool) -> list[Raw]:
    context.no_attribute(quantity)
    target, variable = context.arguments(
        quantity, 2, 2, "a quantity and a symbol: "
                        f"{quantity.name}(gain(Uin, out), R1)")
    name = context.symbol(variable)
    out = []
    for raw in raw_quantity(context, target):
        function, via = context.through_definitions(raw.function, name)
        notes = []
        if via:
            listed = ", ".join(via)
            notes.append(f"{raw.quantity} depends on {name} through the definition of {listed} "
                         "(substituted for the derivative).")
        derivative = context.mutual_chain(function, function.derivative(name), name)
        text = f"{quantity.name}({raw.quantity}, {name})"
        if derivative.is_zero():
            notes.append(f"{raw.quantity} does not depend on {name}: the sensitivity is 0.")
        if relative:
            if function.is_zero():
                raise context.error(quantity, f"the relative sensitivity of {raw.quantity} is "
                                              f"undefined: {raw.quantity} is 0")
            value = derivative
            if not derivative.is_zero():
                value = derivative * RationalFunction.symbol(name, function.ring) / function
                notes += _near_zero(context, raw.quantity, function, derivative, name)
            out.append(Raw(text, value, "", tuple(notes)))
        else:
            out.append(Raw(text, derivative, per(raw.unit, unit_of_symbol(context.circuit, name)),
                           tuple(notes)))
    return out


sensitivity_quantity = handler(raw_sensitivity, relative=False)
relative_sensitivity_quantity = handler(raw_sensitivity, relative=True)


def _near_zero(context: Context, q: str, function: RationalFunction,
               derivative: RationalFunction, name: str) -> list[str]:
    """A note when Q is near zero by x alone (`nearzero`): x moved by its tolerance (1 %
    without one) moves Q by more than Q, so (x/Q)·∂Q/∂x is divided by nearly nothing."""
    circuit = context.circuit
    nominals = circuit.name_nominals()
    used = set(function.symbol_names()) | set(derivative.symbol_names()) | {name}
    if not used <= set(nominals):
        return []
    try:
        value = function.evaluate({n: nominals[n] for n in function.symbol_names()})
        slope = derivative.evaluate({n: nominals[n] for n in derivative.symbol_names()})
    except ZeroDivisionError:
        return []
    owner = circuit.parameters.get(name) or circuit.elements.get(name)
    band = nearzero.relative_band(getattr(owner, "tolerance", None), nominals[name])
    if value == 0 or not nearzero.near_zero(value, [nominals[name] * slope * band]):
        return []
    return [f"{q} is near zero at the nominal values: {name} moved by "
            f"{float(band) * 100:g} % (its tolerance, or 1 % without one) moves it by more "
            "than its own value, so this relative sensitivity is divided by an accident of "
            f"the nominal values; sensitivity({q}, {name}) gives ∂Q/∂x in Q's unit per "
            f"{name}'s, and sensitivities({q}) the table as absolute figures."]
