"""The self-contained HTML sheet: Jinja2 template (autoescaped), inlined CSS, MathML equations.

The PDF writer renders the same template with ``medium="print"`` and its own math filters.
"""

from __future__ import annotations

from functools import partial

from markupsafe import Markup

from calcsheet.sheet import document as doc
from calcsheet.writers.dispatch import block_kind, cell_kind, unhandled
from calcsheet.writers.mathml import to_mathml
from calcsheet.writers.page_groups import keep_marks
from calcsheet.writers.unbroken import unbroken
from calcsheet.writers.styles import environment, read_css, render_template


def write(sheet: doc.Sheet, style=None) -> str:
    from calcsheet.writers.plot import figure_svg

    return render_html(
        sheet,
        style,
        "html",
        {
            "math": lambda m: Markup(to_mathml(m.latex)),
            "display_math": lambda m: Markup(to_mathml(m.latex, display=True)),
            "figure": lambda f: Markup(figure_svg(f)),
        },
        created=dict(sheet.metadata).get("date", ""),
    )


# The medium the template lays out for, by writer: the PDF writer renders the template for print.
MEDIUM = {"html": "screen", "pdf": "print"}


def render_html(sheet: doc.Sheet, style, writer: str, filters: dict, extra_css: str = "", created: str = "") -> str:
    """The template rendered for ``writer``; a node it has no branch for raises (writers/dispatch.py)."""
    medium = MEDIUM[writer]
    env = environment(style)
    env.filters.update(filters)
    env.filters.update(
        kind=partial(block_kind, writer=writer),
        cell_kind=partial(cell_kind, writer=writer),
        unhandled=partial(unhandled, writer=writer),
        keep_marks=keep_marks,
        unbroken=partial(unbroken, symbols=sheet.symbols),
    )
    css = read_css(style, "sheet.css") + ("\n" + read_css(style, "print.css") if medium == "print" else "")
    return render_template(
        env, style, "sheet.html.j2", sheet=sheet, medium=medium, css=Markup(css + extra_css), created=created
    )
