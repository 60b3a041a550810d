"""The one place that owns pint: parsing quantities and units, SI conversion and dimension text.

Everything downstream works in coherent SI base units, so a dimensionally consistent equation
gives SI results; conversion back to the units the engineer asked for happens only for display.
Absolute temperatures (degC, degF) are converted with their offset; differences stay differences.
"""

from __future__ import annotations

import functools
import math
import re

import pint

from calcsheet.errors import InputError

_NUMBER = r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"
_QUANTITY = re.compile(rf"^\s*({_NUMBER})\s*(.*?)\s*$")
# Characters a unit string may hold: names, digits, operators and brackets. Anything else
# (quotes, commas, brackets of other kinds) is refused before pint ever sees the text.
_UNIT_CHARS = re.compile(r"^[A-Za-z0-9_µμΩ°%\s*/^().·-]+$")
_SINGLE_NAME = re.compile(r"^[A-Za-z_°][A-Za-z0-9_]*$")
_OFFSET_NAMES = re.compile(r"(?<![A-Za-z_])(degC|degF|celsius|fahrenheit|degree_Celsius|degree_Fahrenheit)(?![A-Za-z0-9_])")


@functools.lru_cache(maxsize=1)
def registry() -> pint.UnitRegistry:
    """The shared unit registry, built once per process.

    Parsing pint's definitions costs most of a second; pint's own on-disk cache of them cuts that
    to a few hundredths. Where the cache cannot be written, the registry is built without it.
    """
    try:
        ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=False, cache_folder=":auto:")
    except Exception:  # an unwritable cache folder must not stop the tool
        ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=False)
    ureg.formatter.default_format = "~"
    return ureg


def parse_unit(text: str) -> pint.Unit:
    """Parse a unit string such as ``kohm`` or ``W/(m^2*K)``; an empty string is dimensionless."""
    cleaned = text.strip().replace("·", "*").replace("μ", "µ")
    if not cleaned:
        return registry().dimensionless
    if not _UNIT_CHARS.match(cleaned) or "__" in cleaned:
        raise InputError(f"unit '{text}' holds characters a unit cannot have")
    if cleaned.startswith("/"):
        cleaned = "1" + cleaned
    if not _SINGLE_NAME.match(cleaned):
        # Inside a compound unit (degC/min) a temperature can only be a difference.
        cleaned = _OFFSET_NAMES.sub(lambda m: "delta_" + m.group(1), cleaned)
    try:
        parsed = registry().parse_expression(cleaned)
    except Exception as exc:  # pint raises several unrelated types for unknown units
        raise InputError(f"unknown unit '{text}' ({_reason(exc)})") from None
    if isinstance(parsed, pint.Quantity):
        if not math.isclose(parsed.magnitude, 1.0):
            raise InputError(f"unit '{text}' carries a number; write the number in the value")
        return parsed.units
    if isinstance(parsed, (int, float)) and parsed == 1:
        return registry().dimensionless
    raise InputError(f"'{text}' is not a unit")


def parse_quantity(text: str | int | float) -> pint.Quantity:
    """Parse ``"47 kohm"``, ``"0.85"`` or a bare number into a quantity."""
    if isinstance(text, bool):
        raise InputError("expected a number with a unit, got true/false")
    if isinstance(text, (int, float)):
        if not math.isfinite(text):
            raise InputError(f"'{text}' is not a finite number")
        return registry().Quantity(float(text), registry().dimensionless)
    if not isinstance(text, str):
        raise InputError(f"expected a number with a unit such as \"47 kohm\", got {type(text).__name__}")
    match = _QUANTITY.match(text)
    if not match:
        raise InputError(f"'{text}' is not a number followed by a unit (for example \"47 kohm\")")
    value = float(match.group(1))
    if not math.isfinite(value):
        raise InputError(f"'{text}' is not a finite number")
    return registry().Quantity(value, parse_unit(match.group(2)))


def is_offset(unit: pint.Unit) -> bool:
    """True for absolute temperature scales with an offset (degC, degF)."""
    return not registry().Quantity(1, unit)._is_multiplicative


def si_unit(unit: pint.Unit) -> pint.Unit:
    """The coherent SI base unit with the same dimension."""
    return registry().Quantity(1, unit).to_base_units().units


def to_si(quantity: pint.Quantity) -> float:
    """Magnitude in SI base units; absolute temperatures go to kelvin with their offset."""
    return float(quantity.to_base_units().magnitude)


def from_si(value: float, unit: pint.Unit) -> float:
    """Convert an SI base magnitude to ``unit`` (absolute conversion for degC and degF)."""
    ureg = registry()
    return float(ureg.Quantity(value, si_unit(unit)).to(unit).magnitude)


def same_dimension(a: pint.Unit, b: pint.Unit) -> bool:
    return registry().Quantity(1, a).dimensionality == registry().Quantity(1, b).dimensionality


def dimension_text(unit: pint.Unit) -> str:
    """A dimension as engineers read it, e.g. ``[mass]*[length]^2/[time]^3``, or 'dimensionless'."""
    dims = registry().Quantity(1, unit).dimensionality
    if not dims:
        return "dimensionless"
    up = [_power(name, exp) for name, exp in sorted(dims.items()) if exp > 0]
    down = [_power(name, -exp) for name, exp in sorted(dims.items()) if exp < 0]
    text = "*".join(up) if up else "1"
    return text + ("/" + "/".join(down) if down else "")


def _power(name: str, exp: float) -> str:
    exp_text = f"{exp:g}"
    return name if exp_text == "1" else f"{name}^{exp_text}"


def _reason(exc: Exception) -> str:
    text = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
    return text[:120]


# Units that stay as they are when a value is shown in SI: the base units and the coherent
# derived units with special names (SI Brochure, 9th edition, tables 2 and 4; from memory).
COHERENT = {
    "meter", "kilogram", "second", "ampere", "kelvin", "mole", "candela", "radian", "steradian",
    "hertz", "newton", "pascal", "joule", "watt", "coulomb", "volt", "farad", "ohm", "siemens",
    "weber", "tesla", "henry",
}


def coherent_si(unit: pint.Unit) -> pint.Unit:
    """The unit as an engineer writes it in SI: prefixes dropped (kohm -> ohm), named coherent
    units kept (J/(kg*K) stays), anything else (min, L, degC, rpm) in base units."""
    ureg = registry()
    result = ureg.dimensionless
    for name, exponent in unit._units.items():
        _, root, _ = ureg.parse_unit_name(name)[0]
        root = "kilogram" if root == "gram" else root
        if root in COHERENT:
            part = ureg.Unit(root)
        else:
            part = ureg.Quantity(1, "delta_" + root if root.startswith("degree_") else root).to_base_units().units
        result = result * part ** exponent
    return result


def unit_label(unit: pint.Unit) -> str:
    """A compact label: numerator*numerator/(denominator*denominator), powers with ^."""
    ureg = registry()
    up, down = [], []
    for name, exponent in unit._units.items():
        symbol = f"{ureg.Unit(name):~}"
        target = up if exponent > 0 else down
        power = abs(exponent)
        target.append(symbol if power == 1 else f"{symbol}^{power:g}")
    if not up and not down:
        return ""
    text = "*".join(up) or "1"
    if down:
        text += "/" + (down[0] if len(down) == 1 else "(" + "*".join(down) + ")")
    return text
