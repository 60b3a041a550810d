"""Units as the trade prints them, from the ASCII an input writes: 'kohm' as kΩ, 'W/(m^2*K)' as W/(m²·K).

Text only, with nothing heavy imported, so that the package register and the bound PDF, written on every
build, print their basis values as the sheets do without importing sympy or pint. The sheet's own uses
(units inside equations, a unit named after "in") build on these in ``sheet/quantities.py``.
"""

from __future__ import annotations

import re

# Units as the trade prints them (HTML and PDF; the input and the text record keep the ASCII spelling):
# SI Brochure, 9th edition, section 5.4 (symbols, the middle dot for a product, superscript powers; from memory).
_TRADE_NAMES = {"ohm": "Ω", "degC": "°C", "degF": "°F", "delta_degC": "Δ°C", "percent": "%"}
_MICRO = {"F", "H", "A", "V", "s", "m", "W", "g", "L", "J", "C", "T", "Pa", "S", "Wb", "N", "mol"}
_SUPERSCRIPT = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")
_UNIT_AFTER_NUMBER = re.compile(r"(?<=\d)([ \u00a0])([A-Za-z][A-Za-z0-9_^*/()\-]*)")
UNIT_PART = re.compile(r"[A-Za-z_]+|\^-?\d+|\*")


def trade_unit(unit: str) -> str:
    """An ASCII unit as written in an input ('W/(m^2*K)', 'kohm', 'uF', 'degC') as the trade prints it
    ('W/(m²·K)', 'kΩ', 'µF', '°C'); pint reads both to the same unit (tests/sheet/test_trade_units.py)."""
    return UNIT_PART.sub(lambda m: trade_part(m.group(0)), unit)


def trade_part(part: str) -> str:
    if part == "*":
        return "·"
    if part.startswith("^"):
        return part[1:].translate(_SUPERSCRIPT)
    if part in _TRADE_NAMES:
        return _TRADE_NAMES[part]
    if part.endswith("ohm") and part[:-3] in ("k", "M", "G", "m"):
        return part[:-3] + "Ω"
    if part.startswith("u") and part[1:] in _MICRO:
        return "µ" + part[1:]
    return part


def units_after_numbers(text: str) -> str:
    """Every unit written right after a number in ``text`` ('4.7 kohm', '25 degC') in its trade form."""
    return _UNIT_AFTER_NUMBER.sub(lambda m: m.group(1) + trade_unit(m.group(2)), text)
