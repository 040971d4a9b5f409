"""Number literals of the circuit language decoded exactly: plain numbers, SI prefixes,
IEC 60062 RKM codes and units (`350`, `2.5E6`, `10k`, `4k7`, `2R2`, `10 kΩ`, `1 %`)."""

from __future__ import annotations

import re
from fractions import Fraction
from functools import lru_cache
from typing import NamedTuple

PREFIXES: dict[str, int] = {
    "f": -15, "p": -12, "n": -9, "u": -6, "µ": -6, "μ": -6,
    "m": -3, "k": 3, "M": 6, "G": 9, "T": 12,
}
"""SI prefix letter → power of ten (`u`, the micro sign and the Greek mu all mean micro)."""

RKM_MARKERS: dict[str, int] = {
    "L": -3, "R": 0, "k": 3, "K": 3, "M": 6, "G": 9, "T": 12,
    "p": -12, "n": -9, "u": -6, "µ": -6, "μ": -6, "m": -3, "F": 0,
}
"""IEC 60062 RKM code letter (it stands where the decimal point goes) → power of ten:
L R K M G T for resistance (`6L8` = 6.8 mΩ), p n µ m F for capacitance (`4F7` = 4.7 F);
`k`, `u` and the Greek mu are accepted as well. The code gives a number, not a unit."""

UNITS: dict[str, str] = {
    "Ω": "Ω", "\u2126": "Ω", "ohm": "Ω", "V": "V", "A": "A", "F": "F", "H": "H",
    "S": "S", "Hz": "Hz", "W": "W", "s": "s",
    "V/√Hz": "V/√Hz", "V/rtHz": "V/√Hz", "A/√Hz": "A/√Hz", "A/rtHz": "A/√Hz",
    "K": "K", "°C": "°C",
}
"""Unit as written → normalised SI unit (the ohm sign U+2126 and `ohm` become Ω U+03A9)."""

PERCENT = "%"
MAX_DIGITS = 60
MAX_EXPONENT = 60

_UNIT = "|".join(sorted(map(re.escape, UNITS), key=len, reverse=True))
_PREFIX = "[" + "".join(PREFIXES) + "]"
_MANTISSA = r"(?P<mantissa>[0-9]+\.?[0-9]*|\.[0-9]+)(?P<exponent>[eE][+-]?[0-9]+)?"
_PLAIN = re.compile(_MANTISSA + f"(?P<prefix>{_PREFIX})?")
_RKM = re.compile(
    r"(?P<whole>[0-9]*)(?P<marker>[" + "".join(RKM_MARKERS) + r"])(?P<fraction>[0-9]+)"
    r"|(?P<whole_only>[0-9]+)(?P<end_marker>[RKL])"
)
_SUFFIX = re.compile(f"(?P<prefix>{_PREFIX})?(?P<unit>{_UNIT})")

UNIT_LIST = "Ω (or ohm), V, A, F, H, S, Hz, W, s, V/√Hz (or V/rtHz), A/√Hz, K, °C"


class Decoded(NamedTuple):
    """A decoded literal: its exact value (1 % is 1/100) and normalised unit (or None)."""

    value: Fraction
    unit: str | None


class NumberError(ValueError):
    """A literal that is not a number; `offset` is where in the literal the problem starts."""

    def __init__(self, message: str, offset: int = 0) -> None:
        super().__init__(message)
        self.message = message
        self.offset = offset


@lru_cache(maxsize=4096)
def decode_number(text: str) -> Decoded:
    """Decode a number literal as written (`4k7`, `2.2µ`, `10 kΩ`, `1e-3`, `0.1 %`) exactly."""
    head, *spaced = text.split(None, 1)
    tail = spaced[0] if spaced else ""
    value, power, used = _number_part(text, head)
    unit = None
    rest = head[used:]
    if rest and tail:
        raise NumberError(f"`{text}` is not a number: `{rest}` before the unit `{tail}`", used)
    suffix = rest or tail
    suffix_offset = used if rest else len(text) - len(tail)
    if suffix == PERCENT:
        if power:
            raise NumberError(f"`{text}`: a percentage takes no SI prefix or RKM code", 0)
        return Decoded(value / 100, PERCENT)
    if suffix:
        match = _SUFFIX.fullmatch(suffix)
        if match is None:
            raise NumberError(_bad_suffix(text, head[:used], suffix, power), suffix_offset)
        if match["prefix"]:
            if power:
                raise NumberError(
                    f"`{text}` is not a number: two SI prefixes (`{head[:used]}` and "
                    f"`{match['prefix']}`)", suffix_offset)
            power = PREFIXES[match["prefix"]]
        unit = UNITS[match["unit"]]
    return Decoded(value * _ten_to(power), unit)


def _number_part(text: str, head: str) -> tuple[Fraction, int, int]:
    """The longest number at the start of `head`: (value without the prefix, power of ten
    of the SI prefix or RKM letter, characters used)."""
    rkm = _RKM.match(head)
    plain = _PLAIN.match(head)
    if rkm and (plain is None or rkm.end() >= plain.end()):
        if rkm["whole_only"] is not None:  # `470R`, `47K`, `47L`
            digits, fraction = rkm["whole_only"], ""
            power = RKM_MARKERS[rkm["end_marker"]]
        else:
            digits, fraction, power = rkm["whole"], rkm["fraction"], RKM_MARKERS[rkm["marker"]]
        _check_length(text, digits + fraction)
        return Fraction(f"{digits or 0}.{fraction or 0}"), power, rkm.end()
    if plain is None:
        raise NumberError(f"`{text}` is not a number", 0)
    _check_length(text, plain["mantissa"])
    exponent = int(plain["exponent"][1:]) if plain["exponent"] else 0
    if abs(exponent) > MAX_EXPONENT:
        raise NumberError(f"`{text}`: exponent out of range (at most ±{MAX_EXPONENT})", 0)
    mantissa = plain["mantissa"]
    value = Fraction(mantissa if mantissa[-1] != "." else mantissa[:-1]) * _ten_to(exponent)
    power = PREFIXES[plain["prefix"]] if plain["prefix"] else 0
    return value, power, plain.end()


def _check_length(text: str, digits: str) -> None:
    if len(digits) > MAX_DIGITS:
        raise NumberError(f"`{text[:20]}...` is too long for a number "
                          f"(at most {MAX_DIGITS} digits)", 0)


def _ten_to(power: int) -> Fraction:
    return Fraction(10) ** power


def _bad_suffix(text: str, number: str, suffix: str, power: int) -> str:
    """A message for letters after a number that are neither a prefix nor a unit."""
    if suffix[0] in PREFIXES and (power or any(c in RKM_MARKERS for c in number)):
        return (f"`{text}` is not a number: `{suffix[0]}` after `{number}`, which already has "
                f"an SI prefix or RKM code")
    if suffix[0] in "eE":
        return f"`{text}` is not a number: incomplete exponent (write e.g. `1e-3`)"
    if suffix[0] == ".":
        return f"`{text}` is not a number: more than one decimal point"
    unit = suffix[1:] if suffix[0] in PREFIXES else suffix
    return (f"`{text}` is not a number: `{unit}` is not a unit (units: {UNIT_LIST}, with an "
            f"optional SI prefix; write `*` for a product)")
