"""The paged PDF: the HTML template rendered for print, equations as SVG, laid out by WeasyPrint.

WeasyPrint has no MathML, so every formula is typeset to SVG (ziamath) and embedded as an
image; long equations are broken into lines that fit the column. The bytes are reproducible:
fixed document identifier, dates only from the input or SOURCE_DATE_EPOCH, fonts bundled with the
package (writers/fonts.py), and font subsets that keep their font's own timestamp.

WeasyPrint reads resources only through writers/fetcher.py (the style folder and our own files),
relative URLs resolve against the style folder, and a style may neither attach files nor link out.
"""

from __future__ import annotations

import contextlib
import datetime as dt
import functools
import hashlib
import logging
import threading
import warnings
from pathlib import Path

from markupsafe import Markup, escape

from calcsheet.errors import InputError
from calcsheet.sheet import document as doc
from calcsheet.writers import build_date, svgmath
from calcsheet.writers.css_text import css_string
from calcsheet.writers.html import render_html
from calcsheet.writers.styles import default_style_dir, style_name
from calcsheet.writers.visible_text import visible

# The equation column of the print style (styles/default/print.css: .equation-math width).
EQUATION_WIDTH_MM = 140.0
EQUATION_WIDTH_PX = EQUATION_WIDTH_MM / 25.4 * 96.0


def write(sheet: doc.Sheet, style=None) -> bytes:
    return _write(sheet, style, ())


def write_archive(sheet: doc.Sheet, style, attachments: tuple[tuple[str, bytes], ...]) -> bytes:
    """The sheet as PDF/A-3b (an archival PDF) carrying ``attachments`` (file name, bytes): the input and the
    JSON record it was made from, so that the signed file keeps what it was made from."""
    return _write(sheet, style, attachments)


def _write(sheet: doc.Sheet, style, attachments: tuple[tuple[str, bytes], ...]) -> bytes:
    with warnings.catch_warnings():
        # WeasyPrint warns at import when the machine has no fonts; the PDF needs none of them.
        warnings.filterwarnings("ignore", message=".*(FontConfig|Fontconfig).*")
        import weasyprint

    from calcsheet.writers.fetcher import STYLE_ROOT, ConfinedFetcher
    from calcsheet.writers.plot import figure_svg

    html = render_html(
        sheet,
        style,
        "pdf",
        {
            "math": lambda m: Markup(_inline(m.latex)),
            "display_math": lambda m: Markup(_display(m.latex) + _searchable(m.text)),
            "figure": lambda f: Markup(
                f'<img class="figure" alt="{escape(visible(f.title))}" src="{svgmath.data_uri(figure_svg(f))}">'
            ),
        },
        extra_css=_page_css(sheet),
        created=creation_date(sheet),
    )
    # The screen CSS holds properties print does not use; WeasyPrint would warn about each.
    logging.getLogger("weasyprint").setLevel(logging.ERROR)
    fetcher = ConfinedFetcher(Path(style) if style is not None else default_style_dir(), default_style_dir())
    document = weasyprint.HTML(string=html, base_url=STYLE_ROOT, url_fetcher=fetcher).render()
    _refuse_attachments_and_outward_links(document, style)
    with font_subsets_keep_their_timestamp():
        identifier = hashlib.sha256(html.encode("utf-8")).hexdigest()[:32].encode("ascii")
        with warnings.catch_warnings():
            # For PDF/A WeasyPrint 70 reads its sRGB profile from a file it leaves to the garbage collector.
            warnings.simplefilter("ignore", ResourceWarning)
            options = _archival(attachments, sheet)
            data = document.write_pdf(pdf_identifier=identifier, uncompressed_pdf=False, **options)
    if fetcher.refused or fetcher.missing:
        url = (fetcher.refused or fetcher.missing)[0]
        problem = (
            "lies outside the style folder; a style may use only its own files and data: URLs"
            if fetcher.refused
            else "is not in the style folder"
        )
        raise InputError(f"{style_name(style)}: '{visible(url)}' {problem}")
    return data


def _archival(attachments: tuple[tuple[str, bytes], ...], sheet: doc.Sheet) -> dict:
    """WeasyPrint's options for a PDF/A-3b with attached files; none for an ordinary PDF. Each attachment is
    dated with the sheet's own date (or none), never the clock, so the bytes are the same at every build."""
    if not attachments:
        return {}
    import weasyprint

    date = creation_date(sheet)
    # WeasyPrint stamps an attachment with the clock unless given a date; without one of the sheet's, the
    # Unix epoch (the date SOURCE_DATE_EPOCH=0 would give).
    stamp = dt.datetime.fromisoformat(date or "1970-01-01").replace(tzinfo=dt.timezone.utc)
    files = [
        weasyprint.Attachment(string=data, name=name, created=stamp, modified=stamp, relationship="Source")
        for name, data in attachments
    ]
    return {"pdf_variant": "pdf/a-3b", "attachments": files}


def _refuse_attachments_and_outward_links(document, style) -> None:
    """A style may not attach files to the PDF nor link out of it (by HTML or CSS); links within
    the sheet are fine."""
    links = [(kind, target) for page in document.pages for kind, target, *_ in page.links if kind != "internal"]
    if document.metadata.attachments:
        raise InputError(f"{style_name(style)}: the sheet may not carry attached files")
    if links:
        kind, target = links[0]
        what = "an attached file" if kind == "attachment" else "a link"
        raise InputError(
            f"{style_name(style)}: {what} to '{visible(str(target))}' would leave the sheet; "
            "only links within the sheet (#name) are allowed"
        )


_FONT_LOCK = threading.Lock()


@contextlib.contextmanager
def font_subsets_keep_their_timestamp():
    """Font subsets made with fontTools keep the font's own ``head.modified``.

    WeasyPrint subsets with HarfBuzz where it can, which keeps the font's timestamp. Where it falls
    back to fontTools (an older HarfBuzz, or a variable font to instantiate), fontTools stamps
    each subset with the current time unless SOURCE_DATE_EPOCH is set, and two PDFs of one
    sheet would differ. For the length of one write, WeasyPrint's font module opens fonts with
    ``recalcTimestamp=False``; the lock and the restore keep this from reaching any other code.
    """
    from weasyprint.pdf import fonts as pdf_fonts

    with _FONT_LOCK:
        original = pdf_fonts.TTFont
        pdf_fonts.TTFont = functools.partial(original, recalcTimestamp=False)
        try:
            yield
        finally:
            pdf_fonts.TTFont = original


def _inline(latex: str) -> str:
    r = svgmath.render(latex)
    return (
        f'<img class="math-inline" alt="{escape(latex)}" src="{svgmath.data_uri(r.svg)}" '
        f'style="width:{r.width:.2f}px;height:{r.height:.2f}px;vertical-align:-{r.depth:.2f}px">'
    )


def _display(latex: str) -> str:
    lines, scale = svgmath.lines_for(latex, EQUATION_WIDTH_PX)
    parts = []
    for line in lines:
        r = svgmath.render(line)
        parts.append(
            f'<img class="math-line" alt="{escape(line)}" src="{svgmath.data_uri(r.svg)}" '
            f'style="width:{r.width * scale:.2f}px;height:{r.height * scale:.2f}px">'
        )
    return "<br>".join(parts)


def _searchable(text: str) -> str:
    """The equation's plain form as text the reader cannot see (print.css .math-text) but a search, a copy or
    pdftotext finds: the equation itself is drawn as SVG paths, which hold no text."""
    return f'<span class="math-text">{escape(visible(text))}</span>'


def _page_css(sheet: doc.Sheet) -> str:
    """Running heads and foot from the title block's named entries and the Sheet's labels, as escaped
    CSS strings (print.css sets only their look)."""
    block, words = sheet.title_block, sheet.labels
    left = css_string(visible(block.title)) + r' "\A " ' + css_string(visible(block.project.value))
    number, revision = (f"{f.label} {visible(f.value) or '-'}" for f in (block.number, block.revision))
    status = f"  {block.status.label} {visible(block.status.value)}" if block.status.value else ""
    right = (
        css_string(f"{number}  {revision}{status}")
        + " "
        + css_string(f"\n{words.page} ")
        + " counter(page) "
        + css_string(f" {words.of} ")
        + " counter(pages)"
    )
    foot = (
        f"@bottom-right {{ content: {css_string(f'{words.fingerprint} {sheet.review.shown}')}; }} "
        if sheet.review.shown
        else ""
    )
    return (
        f"\n@page {{ @top-left {{ content: {left}; }} @top-right {{ content: {right}; }} "
        f"@bottom-left {{ content: {css_string(words.footer)}; }} {foot}}}\n"
    )


def creation_date(sheet: doc.Sheet) -> str:
    """The sheet's date from the input, else a valid SOURCE_DATE_EPOCH, else none."""
    stated = dict(sheet.metadata).get("date", "")
    if stated:
        return stated
    epoch = build_date.source_date_epoch()
    return dt.datetime.fromtimestamp(epoch, dt.timezone.utc).date().isoformat() if epoch is not None else ""
