"""Spaces a line must not break at, for the HTML and PDF: a number and its unit ("4.7 kohm", "10 %"), and a
header's closing "at t =", so that a narrow table column never shows "4.7 / kohm" or a lone "=".

The words stay as the Sheet has them; only the space becomes a no-break space (U+00A0), which a table's
column then has to make room for. The text record keeps plain spaces.
"""

from __future__ import annotations

import re

NO_BREAK = "\u00a0"
_NUMBER_AND_UNIT = re.compile(r"(?<=\d) (?=[^\W\d_]|[°µΩ%])")
_CLOSING_EQUALS = re.compile(r"(\S+) (\S+) =$")


def unbroken(text: str) -> str:
    """``text`` with no-break spaces between each number and its unit and inside a closing "at t =" ."""
    text = _NUMBER_AND_UNIT.sub(NO_BREAK, text)
    return _CLOSING_EQUALS.sub(rf"\1{NO_BREAK}\2{NO_BREAK}=", text)
