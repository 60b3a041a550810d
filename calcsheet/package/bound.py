"""The bound PDF of a package (``<package number>.pdf``): front matter, then every sheet's own PDF in register order.

The front matter (cover with the package sign-off block, the register as a contents table, the design basis
with its sources, the caution) is HTML laid out by WeasyPrint in the bundled fonts. pypdf then appends each
sheet's PDF as the build wrote it, so each keeps its own running heads; makes the contents rows links to the
sheets' first pages; builds the outline (one entry per sheet, its steps nested from the sheet's own
bookmarks); and stamps "package page N of M" on every page from a one-line-per-page overlay.

The bytes are reproducible: no dates at all, WeasyPrint's identifiers from the HTML, the file identifier a
hash of everything bound, and the same objects written in the same order.
"""

from __future__ import annotations

import dataclasses
import hashlib
import io
import json
import logging
import warnings

from markupsafe import escape

from calcsheet.errors import visible
from calcsheet.load.package_file import Package
from calcsheet.package.register import ROLES, Row
from calcsheet.unit_text import units_after_numbers
from calcsheet.writers.css_text import css_string
from calcsheet.writers.fonts import FACES

# Contents rows link to this made-up address, numbered by sheet; pypdf turns each into a jump to the sheet.
_LINK = "https://sheet.invalid/"
_CAUTION = (
    "Each sheet in this package is a calculation to be reviewed. Review by a licensed engineer governs any use "
    "of it, under the codes and practice that apply where the work is built."
)


def bound_key(package: Package, rows: list[Row], sheet_pdfs: dict[int, bytes]) -> str:
    """A digest of everything the bound PDF is made from: the package file, the register rows, each sheet's
    PDF and calcsheet's version. Equal digests, equal bound PDF, so it need not be made again. The rows are
    hashed as sorted JSON: a row read back from the build cache holds the same values in another key order."""
    from importlib.metadata import version

    digest = hashlib.sha256()
    digest.update(package.file.read_bytes())
    rows_json = json.dumps([dataclasses.asdict(row) for row in rows], sort_keys=True, ensure_ascii=False)
    digest.update(rows_json.encode("utf-8"))
    for index, data in sorted(sheet_pdfs.items()):
        digest.update(f"{index}:{len(data)}:".encode("ascii"))
        digest.update(hashlib.sha256(data).digest())
    digest.update(version("calcsheet").encode("utf-8"))
    return digest.hexdigest()


def bind(package: Package, rows: list[Row], sheet_pdfs: dict[int, bytes]) -> bytes:
    """The bound PDF. ``sheet_pdfs`` maps a row's index to that sheet's PDF bytes; rows without one (a sheet
    that did not build) are listed in the contents and left out."""
    from pypdf import PdfReader, PdfWriter, Transformation
    from pypdf.generic import ArrayObject, ByteStringObject

    readers = {i: PdfReader(io.BytesIO(data)) for i, data in sorted(sheet_pdfs.items())}
    counts = {i: len(r.pages) for i, r in readers.items()}
    front, sections = _front_matter(package, rows, counts)
    front_reader = PdfReader(io.BytesIO(front))
    starts = _starts(len(front_reader.pages), counts)
    total = len(front_reader.pages) + sum(counts.values())

    writer = PdfWriter()
    writer.append(front_reader, import_outline=False)
    for reader in readers.values():
        writer.append(reader, import_outline=False)
    for title, page in sections:
        writer.add_outline_item(title=title, page_number=page)
    for i, reader in readers.items():
        parent = writer.add_outline_item(title=_sheet_label(rows[i]), page_number=starts[i])
        _copy_outline(writer, reader, reader.outline, parent, starts[i], top=True)
    _links_to_sheets(writer, len(front_reader.pages), starts)

    stamps = PdfReader(io.BytesIO(_stamp_pages(package, total)))
    for index, page in enumerate(writer.pages):
        stamp = stamps.pages[index]
        shift = float(page.mediabox.right) - float(stamp.mediabox.right)  # keep the stamp at the right margin
        page.merge_transformed_page(stamp, Transformation().translate(shift, 0))
        page.compress_content_streams()
    writer.add_metadata(
        {
            "/Title": visible(f"{package.number}: {package.title}"),
            "/Subject": visible(f"Calculation package {package.number}" + _rev(package.revision)),
            "/Creator": "calcsheet",
        }
    )
    digest = hashlib.sha256(front + b"".join(sheet_pdfs[i] for i in sorted(sheet_pdfs))).digest()[:16]
    writer._ID = ArrayObject(
        (ByteStringObject(digest), ByteStringObject(digest))
    )  # pypdf documents the attribute, with no setter
    out = io.BytesIO()
    writer.write(out)
    return out.getvalue()


def _starts(front_pages: int, counts: dict[int, int]) -> dict[int, int]:
    """Each bound sheet's first page (0-based) in the whole document."""
    starts, at = {}, front_pages
    for i, count in counts.items():
        starts[i] = at
        at += count
    return starts


def _rev(revision: str) -> str:
    return f" rev {revision}" if revision else ""


def _sheet_label(row: Row) -> str:
    return visible(f"{row.number or '-'}{_rev(row.revision)}: {row.title}")


def _copy_outline(writer, reader, items, parent, start: int, top: bool) -> None:
    """The sheet's own bookmarks under its package entry. A sheet's outline is its title with the steps
    nested under it; the title is the package entry itself, so its children move up one level."""
    last = parent
    for item in items:
        if isinstance(item, list):
            _copy_outline(writer, reader, item, last, start, top=False)
            continue
        if top:
            last = parent  # the sheet's own title: the package entry already stands for it
            continue
        page = reader.get_destination_page_number(item)
        last = writer.add_outline_item(title=visible(str(item.title)), page_number=start + page, parent=parent)


def _links_to_sheets(writer, front_pages: int, starts: dict[int, int]) -> None:
    """The contents table's placeholder links become jumps to each sheet's first page."""
    from pypdf.generic import ArrayObject, NameObject

    for page in writer.pages[:front_pages]:
        for annotation in page.get("/Annots", []):
            annotation = annotation.get_object()
            action = annotation.get("/A")
            uri = str(action.get_object().get("/URI", "")) if action is not None else ""
            if not uri.startswith(_LINK):
                continue
            target = writer.pages[starts[int(uri[len(_LINK) :])]]
            del annotation["/A"]
            annotation[NameObject("/Dest")] = ArrayObject([target.indirect_reference, NameObject("/Fit")])


def _front_matter(package: Package, rows: list[Row], counts: dict[int, int]) -> tuple[bytes, list]:
    """The front matter's PDF and its outline entries (title, page). Its length decides the sheets' package
    pages, which the contents shows, so it is laid out until the two agree (twice, almost always)."""
    front_pages = 2
    for _ in range(4):
        laid_out = _layout(_front_html(package, rows, counts, _starts(front_pages, counts)))
        document = laid_out[0]
        if len(document.pages) == front_pages:
            break
        front_pages = len(document.pages)
    sections = []
    for anchor, title in (("cover", "Cover"), ("contents", "Contents"), ("basis", "Design basis")):
        page = next((n for n, p in enumerate(document.pages) if anchor in p.anchors), None)
        if page is not None:
            sections.append((title, page))
    return _write(laid_out), sections


def _front_html(package: Package, rows: list[Row], counts: dict[int, int], starts: dict[int, int]) -> str:
    e = lambda text: str(escape(visible(str(text))))  # noqa: E731
    identity = "".join(
        f"<tr><th>{label}</th><td>{e(value)}</td></tr>"
        for label, value in (
            ("Package", package.number),
            ("Revision", package.revision or "-"),
            ("Project", package.project),
            ("Client", package.client),
            ("Sheets", f"{len(rows)}, of which {len(counts)} bound here"),
        )
        if value
    )
    signed = {s.role.lower(): s for s in package.signoff}
    signoff = "".join(
        f"<tr><td>{role.capitalize()}</td><td>{e(getattr(signed.get(role), 'name', ''))}</td>"
        f"<td>{e(getattr(signed.get(role), 'date', ''))}</td><td></td></tr>"
        for role in ROLES
    )
    contents = []
    for i, row in enumerate(rows):
        if i in starts:
            link = lambda text, i=i: f'<a href="{_LINK}{i}">{e(text)}</a>'  # noqa: E731
            page, pages, verdict = str(starts[i] + 1), str(counts[i]), row.verdict
        else:
            link, page, pages = e, "", ""
            verdict = "NOT BUILT" + (f": {row.problem}" if row.problem else "")
        status = row.status or ("" if row.problem else "not stated")  # as the register page says it
        contents.append(
            f"<tr><td>{link(row.number or '-')}</td><td>{link(row.title or row.file)}</td><td>{e(row.revision)}</td>"
            f"<td>{e(status)}</td><td>{e(verdict)}</td><td>{e(row.criteria)}</td><td>{pages}</td>"
            f"<td>{page}</td></tr>"
        )
    basis = "".join(
        f"<tr><td>{e(b.name)}</td><td>{e(units_after_numbers(b.value))}</td>"
        f"<td>{e(units_after_numbers(_range_text(b.entry)))}</td>"
        f"<td>{e(b.source or 'no source given')}</td></tr>"
        for b in package.basis.values()
    )
    basis_section = (
        f'<h2 id="basis">Design basis</h2><table><thead><tr><th>Name</th><th>Value</th><th>Range</th>'
        f"<th>Source</th></tr></thead><tbody>{basis}</tbody></table>"
        if basis
        else '<h2 id="basis">Design basis</h2><p>This package states no design-basis values.</p>'
    )
    head = css_string(visible(package.title))
    right = css_string(visible(f"{package.number}{_rev(package.revision)}"))
    return f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><title>{e(package.title)}</title>
<style>
{_FONT_FACES}
@page {{ size: A4; margin: 30mm 16mm 18mm 16mm;
  @top-left {{ content: {head}; font: 8.5pt "Calcsheet Sans"; vertical-align: bottom; width: 120mm;
    border-bottom: 1.2pt solid #1b1f24; padding-bottom: 2mm; }}
  @top-right {{ content: {right}; font: 8.5pt "Calcsheet Sans"; vertical-align: bottom; text-align: right;
    border-bottom: 1.2pt solid #1b1f24; padding-bottom: 2mm; width: 58mm; }} }}
body {{ font: 9.5pt "Calcsheet Sans"; color: #1b1f24; }}
h1 {{ font-size: 18pt; margin-top: 30mm; }}
h2 {{ font-size: 12pt; margin-top: 8mm; }}
h1, h2 {{ bookmark-level: none; }}
table {{ border-collapse: collapse; width: 100%; font-size: 8.5pt; margin: 3mm 0; }}
th, td {{ border: 0.5pt solid #8a939c; padding: 1.2mm 1.5mm; text-align: left; vertical-align: top; }}
thead th {{ background: #e8ecef; }}
table.identity th {{ width: 30mm; }}
table.signoff td {{ height: 9mm; }}
a {{ color: inherit; }}
.contents {{ break-before: page; }}
.caution {{ border-left: 3pt solid #4a5560; padding-left: 3mm; margin-top: 10mm; }}
</style></head><body>
<section id="cover">
<h1>{e(package.title)}</h1>
<p>Calculation package</p>
<table class="identity">{identity}</table>
<h2>Package sign-off</h2>
<table class="signoff"><thead><tr><th>Role</th><th>Name</th><th>Date</th><th>Signature</th></tr></thead>
<tbody>{signoff}</tbody></table>
<p class="caution">{e(_CAUTION)}</p>
</section>
<section class="contents" id="contents">
<h2>Contents: register of sheets</h2>
<table><thead><tr><th>Number</th><th>Title</th><th>Rev</th><th>Issue status</th><th>Verdict</th><th>Criteria</th>
<th>Pages</th><th>Package page</th></tr></thead><tbody>{"".join(contents)}</tbody></table>
{basis_section}
</section>
</body></html>
"""


def _range_text(entry: dict) -> str:
    return ", ".join(f"{key} {entry[key]}" for key in ("tolerance", "min", "max") if key in entry)


def _stamp_html(package: Package, total: int) -> str:
    label = css_string(visible(f"{package.number}{_rev(package.revision)}, package page "))
    return f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><title>stamp</title><style>
{_FONT_FACES}
@page {{ size: A4; margin: 0 16mm 7mm 16mm;
  @bottom-right {{ content: {label} counter(page) " of " counter(pages); font: 7.5pt "Calcsheet Sans";
    color: #4a5560; vertical-align: middle; }} }}
div + div {{ break-before: page; }}
</style></head><body>{"<div></div>" * total}</body></html>
"""


def _stamp_pages(package: Package, total: int) -> bytes:
    """One page per bound page, blank but for its package page number at the foot's right."""
    return _write(_layout(_stamp_html(package, total)))


_FONT_FACES = "\n".join(
    f'@font-face {{ font-family: "Calcsheet Sans"; font-weight: {weight}; font-style: {style}; '
    f'src: url("calcsheet-font:{name}"); }}'
    for name, (weight, style) in FACES.items()
)


def _layout(html: str):
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", message=".*(FontConfig|Fontconfig).*")
        import weasyprint

    from calcsheet.writers.fetcher import STYLE_ROOT, ConfinedFetcher
    from calcsheet.writers.styles import default_style_dir

    logging.getLogger("weasyprint").setLevel(logging.ERROR)
    fetcher = ConfinedFetcher(default_style_dir(), default_style_dir())
    document = weasyprint.HTML(string=html, base_url=STYLE_ROOT, url_fetcher=fetcher).render()
    return document, html


def _write(laid_out) -> bytes:
    """WeasyPrint's PDF with its identifier a hash of the HTML, as a sheet's is."""
    from calcsheet.writers.pdf import font_subsets_keep_their_timestamp

    document, html = laid_out
    with font_subsets_keep_their_timestamp():
        identifier = hashlib.sha256(html.encode("utf-8")).hexdigest()[:32].encode("ascii")
        return document.write_pdf(pdf_identifier=identifier, uncompressed_pdf=False)
