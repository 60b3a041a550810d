"""A checker who evaluates the printed numeric equation by hand gets the printed table (a property of our
own sheet; the evaluation goes through calcsheet's own parser and sympy, not through the code that chose
the digits)."""

from __future__ import annotations

import sympy as sp

from calcsheet.sheet.document import Equation, Table
from calcsheet.source.expressions import parse_expression
from calcsheet.source.symbolic import to_sympy
from tests import shared_builds


def test_every_numeric_equation_reproduces_its_values_table():
    checked = 0
    for source in shared_builds.every_source():
        built = shared_builds.built(source)
        model = built.derivation.model
        if model.switches or not built.derivation.solution.closed_form:
            continue
        numbers = next(s for s in built.sheet.sections if s.key == "numbers")
        equation = next(b for b in numbers.blocks if isinstance(b, Equation))
        shown = equation.math.text.split(" = ", 1)[1]
        x = model.variable.symbol
        expr = to_sympy(parse_expression(shown), {model.variable.name: x})
        table = next((b for b in numbers.blocks if isinstance(b, Table) and b.caption.startswith("Values")), None)
        if table is None:
            continue
        for value, row in zip(built.derivation.numbers.values, table.rows):
            evaluated = complex(sp.N(expr.subs(x, sp.Float(value.at.si, 30)), 30)).real
            assert model.unknown.text_of(evaluated) == row[1], (source, shown, row)
            checked += 1
    assert checked >= 10
