"""Text as the HTML and PDF show it: units after numbers in the trade's form (sheet/quantities.py::trade_units:
4.7 kΩ, 25 °C, W/(m²·K)), <= and >= as ≤ and ≥, each symbol the sheet's equations respell (Sheet.symbols) as
they spell it (T_inf as T with subscript ∞, rho as ρ: symbol_spelling.py), and no-break spaces where a line
must not break: between a number and its unit ("4.7 kΩ", "10 %") and in a header's closing "at t =", so a
narrow table column never shows "4.7 / kohm" or a lone "=", and a word joiner after each '/' of such a unit,
so it stays whole. The words stay as the Sheet has them; a table's column has to make room for the joined pair.
The text record keeps the ASCII units, the names as written and plain spaces (one form there, one form here).
"""

from __future__ import annotations

import functools
import re

from markupsafe import Markup, escape

from calcsheet.sheet.quantities import trade_units
from calcsheet.writers.visible_text import visible
from calcsheet.symbol_spelling import symbol_text

NO_BREAK = "\u00a0"
WORD_JOINER = "\u2060"  # invisible; forbids the break a line may otherwise take after the '/' of W/(m²·K)
_NUMBER_AND_UNIT = re.compile(r"(?<=\d) (?=[^\W\d_]|[°µΩ%])")
_CLOSING_EQUALS = re.compile(r"(\S+) (\S+) =$")
_UNIT_WITH_SLASH = re.compile(r"(?<=\d\u00a0)[^\s/]*/\S*")
_COMPARISONS = {" <= ": " ≤ ", " >= ": " ≥ "}


def unbroken(text: str, symbols: tuple[str, ...] = ()) -> Markup:
    """``text`` with trade units, ≤ and ≥, the ``symbols`` set as the equations set them, and no-break spaces
    between each number and its unit and in a closing "at t =" ; control characters shown (visible_text.py) and
    the rest escaped, as HTML."""
    text = with_signs(trade_units(visible(text, keep="\n\t")))
    text = _NUMBER_AND_UNIT.sub(NO_BREAK, text)
    text = _UNIT_WITH_SLASH.sub(lambda m: m.group(0).replace("/", "/" + WORD_JOINER), text)
    text = _CLOSING_EQUALS.sub(rf"\1{NO_BREAK}\2{NO_BREAK}=", text)
    pattern = _symbol_pattern(symbols)
    if pattern is None:
        return Markup(escape(text))
    pieces = pattern.split(text)  # names at the odd places
    return Markup("").join(_symbol_html(piece) if k % 2 else escape(piece) for k, piece in enumerate(pieces))


def with_signs(text: str) -> str:
    """<= and >= between spaces as the signs ≤ and ≥ (the text record keeps the ASCII)."""
    for ascii_form, sign in _COMPARISONS.items():
        text = text.replace(ascii_form, sign)
    return text


@functools.lru_cache(maxsize=64)
def _symbol_pattern(symbols: tuple[str, ...]) -> re.Pattern | None:
    """A whole name of ``symbols``, not part of a longer name and not a unit right after a number."""
    if not symbols:
        return None
    names = "|".join(re.escape(s) for s in sorted(symbols, key=len, reverse=True))
    return re.compile(rf"(?<![\w.])(?<!\d[ \u00a0])({names})(?![\w])")


def _symbol_html(name: str) -> Markup:
    base, subscript = symbol_text(name)
    return escape(base) + (Markup("<sub>%s</sub>") % subscript if subscript else Markup(""))
