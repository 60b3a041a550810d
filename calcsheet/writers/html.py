"""The self-contained HTML sheet: Jinja2 template (autoescaped), inlined CSS, MathML equations.

The PDF writer renders the same template with ``medium="print"`` and its own math filters.
"""

from __future__ import annotations

from markupsafe import Markup

from calcsheet.sheet import document as doc
from calcsheet.writers.mathml import to_mathml
from calcsheet.writers.styles import environment, read_css, render_template


def write(sheet: doc.Sheet, style=None) -> str:
    from calcsheet.writers.plot import figure_svg

    return render_html(sheet, style, "screen", {
        "math": lambda m: Markup(to_mathml(m.latex)),
        "display_math": lambda m: Markup(to_mathml(m.latex, display=True)),
        "figure": lambda f: Markup(figure_svg(f)),
    }, created=dict(sheet.metadata).get("date", ""))


def render_html(sheet: doc.Sheet, style, medium: str, filters: dict, extra_css: str = "", created: str = "") -> str:
    env = environment(style)
    env.filters.update(filters)
    env.filters["kind"] = _kind
    css = read_css(style, "sheet.css") + ("\n" + read_css(style, "print.css") if medium == "print" else "")
    return render_template(env, style, "sheet.html.j2",
                           sheet=sheet, medium=medium, css=Markup(css + extra_css), created=created)


def _kind(node) -> str:
    return {doc.Paragraph: "paragraph", doc.Equation: "equation", doc.Table: "table", doc.Note: "note",
            doc.ItemList: "list", doc.Math: "math", doc.Figure: "figure"}.get(type(node), "text")
