"""Node and port voltages `V(..)`, element currents `I(..)` and transfers `gain(X, Q)`."""

from __future__ import annotations

from ..language import syntax
from .common import RATIO_UNITS, Context, Raw, handler


def _no_sources_note(context: Context) -> tuple[str, ...]:
    if context.network.excitations():
        return ()
    return ("The circuit has no independent source, so every voltage and current in it is 0.",)


def raw_voltage(context: Context, quantity: syntax.Quantity) -> list[Raw]:
    context.no_attribute(quantity)
    measure, text, unit = context.voltage_measure(quantity)
    with context.at(quantity):
        value = context.response(measure)
    return [Raw(text, value, unit, _no_sources_note(context))]


def raw_current(context: Context, quantity: syntax.Quantity) -> list[Raw]:
    context.no_attribute(quantity)
    measure, text, unit, notes = context.current_measure(quantity)
    with context.at(quantity):
        value = context.response(measure)
    return [Raw(text, value, unit, notes + _no_sources_note(context))]


def raw_gain(context: Context, quantity: syntax.Quantity) -> list[Raw]:
    context.no_attribute(quantity)
    source_arg, target = context.arguments(
        quantity, 2, 2, "an independent source and a quantity: gain(Uin, out), "
                        "gain(Uin, V(a, b)), gain(Iq, I(R2))")
    source = context.element(source_arg)
    if not source.is_source:
        raise context.error(source_arg, f"{source.name} is {_described(source.kind)}, not a "
                                        "source; gain(X, Q) divides by independent source X")
    if source.controls:
        raise context.error(source_arg, f"{source.name} is a controlled source; gain(X, Q) "
                                        "divides by an independent source X")
    measure, text, unit, notes = context.measure(target)
    with context.at(quantity):
        value = context.transfer(measure, source.name)
    if value.is_zero():
        notes = notes + (f"{text} does not depend on source {source.name}: the gain is 0.",)
    return [Raw(quantity.text, value, RATIO_UNITS[(unit, source.unit)], notes)]


def _described(kind: str) -> str:
    return ("an " if kind[0] in "aeiou" else "a ") + kind


voltage = handler(raw_voltage)
current = handler(raw_current)
gain_quantity = handler(raw_gain)
