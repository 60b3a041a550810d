"""Text as the HTML and PDF show it: units after numbers in the trade's form (sheet/quantities.py::trade_units:
4.7 kΩ, 25 °C, W/(m²·K)), and no-break spaces where a line must not break: between a number and its unit
("4.7 kΩ", "10 %") and in a header's closing "at t =", so a narrow table column never shows "4.7 / kohm" or
a lone "=", and a word joiner after each '/' of such a unit, so it stays whole. The words stay as the
Sheet has them; a table's column has to make room for the joined pair.
The text record keeps the ASCII units and plain spaces (one form there, one form here).
"""

from __future__ import annotations

import re

from calcsheet.sheet.quantities import trade_units

NO_BREAK = "\u00a0"
WORD_JOINER = "\u2060"  # invisible; forbids the break a line may otherwise take after the '/' of W/(m²·K)
_NUMBER_AND_UNIT = re.compile(r"(?<=\d) (?=[^\W\d_]|[°µΩ%])")
_CLOSING_EQUALS = re.compile(r"(\S+) (\S+) =$")
_UNIT_WITH_SLASH = re.compile(r"(?<=\d\u00a0)[^\s/]*/\S*")


def unbroken(text: str) -> str:
    """``text`` with trade units, and no-break spaces between each number and its unit and in a closing "at t =" ."""
    text = _NUMBER_AND_UNIT.sub(NO_BREAK, trade_units(text))
    text = _UNIT_WITH_SLASH.sub(lambda m: m.group(0).replace("/", "/" + WORD_JOINER), text)
    return _CLOSING_EQUALS.sub(rf"\1{NO_BREAK}\2{NO_BREAK}=", text)
