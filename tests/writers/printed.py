"""Every sheet the tool can print, printed: each demo and each `calcsheet new` starter, in the default style
and the example house style, as PDF bytes; and where each block of the Sheet lands on the pages, read back by
poppler's pdftotext (an outside reader), not from our layout.

The page tests share this; the PDFs come from tests/shared_builds.py, so that a test process builds each once,
whichever test files it runs.
"""

from __future__ import annotations

import html
import re
import shutil
import subprocess
import unicodedata
from dataclasses import dataclass
from pathlib import Path

from calcsheet.sheet import document as doc
from calcsheet.writers.unbroken import unbroken
from calcsheet.writers.visible_text import visible
from tests import shared_builds

ROOT = Path(__file__).resolve().parents[2]
DEMOS = shared_builds.DEMOS
STARTERS = shared_builds.STARTERS
STYLES = shared_builds.STYLES
POPPLER = all(shutil.which(tool) for tool in ("pdftotext", "pdftoppm", "pdftocairo"))


@dataclass(frozen=True)
class Printed:
    sheet: doc.Sheet
    pdf: bytes


def printed(source: str, style: str) -> Printed:
    """A demo (by its file's stem) or a starter (by its kind's name) built and printed in a style, once per
    test process (tests/shared_builds.py)."""
    return Printed(shared_builds.sheet(source), shared_builds.rendered(source, "pdf", style))


def poppler_warnings(pdf: bytes, folder: Path) -> list[str]:
    """What poppler says on stderr while drawing every page, with both its renderers (Splash and cairo:
    only cairo reported the singular glyph transforms); a clean PDF draws in silence."""
    source = folder / "sheet.pdf"
    source.write_bytes(pdf)
    said = []
    for command in (["pdftoppm", "-r", "50", "-png"], ["pdftocairo", "-r", "50", "-png"]):
        run = subprocess.run([*command, str(source), str(folder / command[0])], capture_output=True, check=False)
        said += [f"{command[0]}: {line}" for line in run.stderr.decode("utf-8", "replace").splitlines()]
        said += [f"{command[0]} exited with {run.returncode}"] if run.returncode else []
    return said


def page_texts(pdf: bytes) -> list[str]:
    """Each page's text as poppler reads it, squeezed (see `squeeze`)."""
    out = subprocess.run(["pdftotext", "-enc", "UTF-8", "-", "-"], input=pdf, capture_output=True, check=True)
    return [squeeze(page) for page in out.stdout.decode("utf-8").split("\f")[:-1]]


def squeeze(text: str) -> str:
    """Text without white space and hyphens, in compatibility form, so that line wrapping (pdftotext joins a
    word broken after its hyphen, "sharp-" "edged" as "sharpedged") and ligatures do not decide whether a
    block's words are found."""
    return "".join(unicodedata.normalize("NFKC", text).replace("\u2060", "").replace("-", "").split())


def locate(block, pages: list[str], cursor: int, symbols: tuple[str, ...] = ()) -> tuple[int, int]:
    """The pages where a block starts and ends, searching from page ``cursor`` on (-1 where not found).

    A table is followed row by row, each row found by all its text cells, so that a row whose words
    repeat an earlier row's is still placed on its own page."""
    if isinstance(block, doc.Table):
        head = block.caption or next((h for h in block.header if squeeze(h)), "")
        start = end = find_page(pages, squeeze(shown(head, symbols))[:30], cursor)
        for row in block.rows:
            cells = [squeeze(shown(c, symbols))[:30] for c in row if isinstance(c, str) and squeeze(c)]
            if cells and end >= 0:
                end = next((i for i in range(end, len(pages)) if all(c in pages[i] for c in cells)), -1)
        return start, end
    if isinstance(block, doc.ItemList):
        first, last = squeeze(shown(block.items[0], symbols)), squeeze(shown(block.items[-1], symbols))
    else:
        text = {doc.Paragraph: "text", doc.Note: "text"}.get(type(block))
        if isinstance(block, (doc.Equation, doc.Figure)):  # drawn, with their words as the Sheet has them
            words = squeeze(
                visible(block.math.text) if isinstance(block, doc.Equation) else shown(block.caption, symbols)
            )
        else:
            words = squeeze(shown(getattr(block, text), symbols))
        first = last = words
    start = find_page(pages, first[:40], cursor)
    return start, find_page(pages, last[-40:], max(start, cursor))


def shown(text: str, symbols: tuple[str, ...] = ()) -> str:
    """User-facing text as the HTML and PDF show it (writers/unbroken.py: trade units, ≤ and ≥, the sheet's
    symbols set as its equations set them), as a reader of the page gets it: without the markup."""
    return html.unescape(_TAG.sub("", str(unbroken(text, symbols))))


_TAG = re.compile(r"<[^>]+>")


def find_page(pages: list[str], words: str, start: int) -> int:
    """The first page from ``start`` on that holds ``words`` (-1 where none does)."""
    return next((i for i in range(start, len(pages)) if words and words in pages[i]), -1)


def break_problems(printed_sheet: Printed) -> list[str]:
    """Where the pages break a sheet badly: a step heading apart from its first block, a run of three or
    fewer equations (a short derivation) split, a table of four or fewer rows split, an equation apart from
    the table it leads into, or the sign-off on a page with nothing of the calculation. Also any block
    whose words the reader cannot find, so that a change of wording cannot make these checks pass unseen."""
    sheet, pages = printed_sheet.sheet, page_texts(printed_sheet.pdf)
    problems: list[str] = []
    cursor, last_end = 0, 0
    for section in sheet.sections:
        title = f"{sheet.labels.step} {section.number} {section.title}" if section.number else section.title
        heading = find_page(pages, squeeze(visible(title))[:40], cursor)
        if heading < 0:
            problems.append(f"heading {title!r} not found")
            continue
        cursor, spans = heading, []
        for block in section.blocks:
            start, end = locate(block, pages, cursor, sheet.symbols)
            if start < 0 or end < 0:
                problems.append(f"{title!r}: a {type(block).__name__} not found (block {len(spans) + 1})")
                spans.append(None)
                continue
            spans.append((start, end))
            cursor = last_end = end
        problems += _section_problems(title, section.blocks, heading, spans)
    signoff = find_page(pages, squeeze(visible(sheet.labels.signoff)), last_end)
    if signoff != last_end:
        problems.append(f"the sign-off is on page {signoff + 1}, apart from the last step (page {last_end + 1})")
    return problems


def _section_problems(title: str, blocks, heading: int, spans: list) -> list[str]:
    problems = []
    if spans and spans[0] is not None and spans[0][0] != heading:
        problems.append(f"{title!r}: heading on page {heading + 1}, its first block on page {spans[0][0] + 1}")
    run: list[int] = []
    for i, block in enumerate([*blocks, None]):
        if isinstance(block, doc.Equation):
            run.append(i)
            continue
        known = [spans[j] for j in run if spans[j] is not None]
        if 1 < len(run) <= 3 and len({p for span in known for p in span}) > 1:
            problems.append(f"{title!r}: a derivation of {len(run)} lines split across pages")
        if run and isinstance(block, doc.Table) and spans[i] is not None and known and known[-1][1] != spans[i][0]:
            problems.append(f"{title!r}: equations on page {known[-1][1] + 1}, the table they lead into on the next")
        run = []
        if isinstance(block, doc.Table) and len(block.rows) <= 4 and spans[i] is not None and len(set(spans[i])) > 1:
            problems.append(f"{title!r}: a table of {len(block.rows)} rows split across pages")
    return problems


_PAIR = re.compile(r"(?<![\w.])\d[\d.]*(?:e-?\d+)? (?:[^\W\d_]|[°µΩ%])\S*")


def split_pairs(printed_sheet: Printed) -> list[str]:
    """Each number and unit in a table cell ("4.7 kohm") that poppler, reading the page's layout, does not
    find on one line: the column was too narrow and the line broke between them."""
    out = subprocess.run(
        ["pdftotext", "-layout", "-enc", "UTF-8", "-", "-"], input=printed_sheet.pdf, capture_output=True
    )
    said = unicodedata.normalize("NFKC", out.stdout.decode("utf-8")).replace("\u2060", "")
    lines = {" ".join(line.split()) for line in said.splitlines()}
    text = "\n".join(lines)
    cells = [
        " ".join(unicodedata.normalize("NFKC", shown(cell, printed_sheet.sheet.symbols)).replace("\u2060", "").split())
        for section in printed_sheet.sheet.sections
        for block in section.blocks
        if isinstance(block, doc.Table)
        for row in block.rows
        for cell in row
        if isinstance(cell, str)
    ]
    pairs = sorted({m.group(0) for cell in cells for m in _PAIR.finditer(cell)})
    # poppler sometimes reads a short "5 s" as "5s" (its gap heuristic); a pair broken across lines is neither
    return [pair for pair in pairs if pair not in text and pair.replace(" ", "", 1) not in text]
