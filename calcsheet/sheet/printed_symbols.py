"""The names a sheet prints otherwise than written (T_inf, c_p, rho, tau), so that the writers set them in
prose and table cells as the equations set them (symbol_spelling.py). They are the model's own names and
every name in the plain form of the sheet's equations; a word of the prose is never taken for a symbol
unless the sheet's mathematics uses it.
"""

from __future__ import annotations

import re

from calcsheet.sheet.document import Equation, Math, Section, Table
from calcsheet.symbol_spelling import respelled

_NAME = re.compile(r"[A-Za-z][A-Za-z0-9_]*")


def printed_symbols(model, sections: tuple[Section, ...]) -> tuple[str, ...]:
    """The respelled names of ``model`` and of the equations in ``sections``, sorted (same input, same sheet)."""
    names = {p.name for p in model.parameters} | {model.unknown.name, model.variable.name}
    names |= {q.name for q in getattr(model, "derived", ())}
    for section in sections:
        for block in section.blocks:
            for math in _maths(block):
                names |= set(_NAME.findall(math.text))
    return tuple(sorted(n for n in names if respelled(n)))


def _maths(block):
    if isinstance(block, Equation):
        yield block.math
    elif isinstance(block, Table):
        for row in block.rows:
            yield from (cell for cell in row if isinstance(cell, Math))
