"""The self-contained HTML sheet: Jinja2 template (autoescaped), inlined CSS, MathML equations."""

from __future__ import annotations

from markupsafe import Markup

from calcsheet.sheet import document as doc
from calcsheet.writers.mathml import to_mathml
from calcsheet.writers.styles import environment, read_css


def write(sheet: doc.Sheet, style=None) -> str:
    env = environment(style)
    env.filters["math"] = lambda m: Markup(to_mathml(m.latex))
    env.filters["display_math"] = lambda m: Markup(to_mathml(m.latex, display=True))
    env.filters["kind"] = _kind
    template = env.get_template("sheet.html.j2")
    return template.render(sheet=sheet, css=Markup(read_css(env, "sheet.css")))


def _kind(node) -> str:
    return {doc.Paragraph: "paragraph", doc.Equation: "equation", doc.Table: "table", doc.Note: "note",
            doc.ItemList: "list", doc.Math: "math"}.get(type(node), "text")
