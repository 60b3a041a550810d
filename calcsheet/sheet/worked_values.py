"""Values written in terms of other values, shown so a checker can redo them by hand: each parameter written as
an expression as a line "C = 4 × 550 uF = 2200 uF", and each limit written so beside its value; and where each
criterion's limit comes from."""

from __future__ import annotations

from calcsheet.mathtext import symbol_latex
from calcsheet.sheet.as_written import node_latex
from calcsheet.sheet.document import Equation, Math, Paragraph
from calcsheet.sheet.quantities import quantity_latex
from calcsheet.source import expressions as ex
from calcsheet.source.value_expressions import substituted

NO_SOURCE = "no source given"


def hand_check_blocks(parameters) -> list:
    """A lead and one line per parameter written as an expression, in the order the input gives them."""
    worked = [p for p in parameters if p.node is not None]
    if not worked:
        return []
    texts = {p.name: p.text for p in parameters}
    blocks = [Paragraph("Values written in terms of other values, worked out with the values above:")]
    for p in worked:
        numbers = substituted(p.node, texts)
        sides = [(node_latex(p.node), ex.render(p.node, " × "))]
        if numbers != p.node:
            sides.append((node_latex(numbers), ex.render(numbers, " × ")))
        sides.append((quantity_latex(p.text), p.text))
        latex = " = ".join([symbol_latex(p.name)] + [tex for tex, _ in sides])
        text = " = ".join([p.name] + [plain for _, plain in sides])
        blocks.append(Equation(Math(latex, text), "worked out"))
    return blocks


def parameter_source(p) -> str:
    if p.source:
        return p.source
    return f"worked out from {p.expression}" if p.expression else "not stated"


def check_cell(criterion) -> str:
    """The check as written, and a limit written in terms of parameters with the value it comes to."""
    if not criterion.limit_expression:
        return criterion.check
    return f"{criterion.check}, where {criterion.limit_expression} = {criterion.limit.text}"


def source_cell(criterion) -> str:
    """Where the limit comes from: the document cited, the basis stated, or that none is given."""
    if criterion.source:
        return criterion.source
    if criterion.basis:
        return f"basis: {criterion.basis}"
    return NO_SOURCE
