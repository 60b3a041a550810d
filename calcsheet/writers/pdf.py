"""The paged PDF: the HTML template rendered for print, equations as SVG, laid out by WeasyPrint.

WeasyPrint has no MathML, so every formula is typeset to SVG (ziamath) and embedded as an
image; long equations are broken into lines that fit the column. The bytes are reproducible:
fixed document identifier, and dates only from the input or SOURCE_DATE_EPOCH.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import logging
import os

from markupsafe import Markup, escape

from calcsheet.sheet import document as doc
from calcsheet.writers import svgmath
from calcsheet.writers.html import render_html

# The equation column of the print style (styles/default/print.css: .equation-math width).
EQUATION_WIDTH_MM = 140.0
EQUATION_WIDTH_PX = EQUATION_WIDTH_MM / 25.4 * 96.0


def write(sheet: doc.Sheet, style=None) -> bytes:
    import weasyprint

    from calcsheet.writers.plot import figure_svg, svg_data_uri

    html = render_html(sheet, style, "print", {
        "math": lambda m: Markup(_inline(m.latex)),
        "display_math": lambda m: Markup(_display(m.latex)),
        "figure": lambda f: Markup(f'<img class="figure" alt="{escape(f.title)}" src="{svg_data_uri(figure_svg(f))}">'),
    }, extra_css=_page_css(sheet), created=creation_date(sheet))
    # The screen CSS holds properties print does not use; WeasyPrint would warn about each.
    logging.getLogger("weasyprint").setLevel(logging.ERROR)
    document = weasyprint.HTML(string=html, base_url=".").render()
    identifier = hashlib.sha256(html.encode("utf-8")).hexdigest()[:32].encode("ascii")
    return document.write_pdf(pdf_identifier=identifier, uncompressed_pdf=False)


def _inline(latex: str) -> str:
    r = svgmath.render(latex)
    return (f'<img class="math-inline" alt="{escape(latex)}" src="{svgmath.data_uri(r.svg)}" '
            f'style="width:{r.width:.2f}px;height:{r.height:.2f}px;vertical-align:-{r.depth:.2f}px">')


def _display(latex: str) -> str:
    lines, scale = svgmath.lines_for(latex, EQUATION_WIDTH_PX)
    parts = []
    for line in lines:
        r = svgmath.render(line)
        parts.append(f'<img class="math-line" alt="{escape(line)}" src="{svgmath.data_uri(r.svg)}" '
                     f'style="width:{r.width * scale:.2f}px;height:{r.height * scale:.2f}px">')
    return "<br>".join(parts)


def _page_css(sheet: doc.Sheet) -> str:
    """Running heads from the title block; values written as escaped CSS strings."""
    fields = dict(sheet.title_block.fields)
    left = _css_string(sheet.title_block.title) + r' "\A " ' + _css_string(fields.get("Project", ""))
    right = (_css_string(f"Calculation {fields.get('Calculation', '-')}  Revision {fields.get('Revision', '-')}")
             + r' "\A Page " counter(page) " of " counter(pages)')
    return f"\n@page {{ @top-left {{ content: {left}; }} @top-right {{ content: {right}; }} }}\n"


def _css_string(text: str) -> str:
    """Text as a CSS string literal: quotes, backslashes, newlines and '<' escaped."""
    out = []
    for char in text:
        if char in '"\\<>' or ord(char) < 32:
            out.append(f"\\{ord(char):x} ")
        else:
            out.append(char)
    return '"' + "".join(out) + '"'


def creation_date(sheet: doc.Sheet) -> str:
    """The sheet's date from the input, else SOURCE_DATE_EPOCH, else none."""
    stated = dict(sheet.metadata).get("date", "")
    if stated:
        return stated
    epoch = os.environ.get("SOURCE_DATE_EPOCH", "")
    if epoch.isdigit():
        return dt.datetime.fromtimestamp(int(epoch), dt.timezone.utc).date().isoformat()
    return ""
