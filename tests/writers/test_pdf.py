"""The paged PDF: equations fit the column, bytes are reproducible, heads, metadata, fonts, styles."""

from __future__ import annotations

import io
import subprocess
import sys
from pathlib import Path

import pytest
from pypdf import PdfReader

from calcsheet.pipeline import build_sheet, render
from calcsheet.sheet.document import Equation
from calcsheet.writers import pdf, svgmath
from tests import shared_builds
from tests.end_to_end.demo_verdicts import DEMOS as DEMO_SHEETS

ROOT = Path(__file__).resolve().parents[2]
DEMOS = DEMO_SHEETS
# A4 is 210 mm wide; print.css sets 16 mm side margins, a 6 mm indent, the 140 mm equation column
# and a 24 mm label column beside it.
CONTENT_MM = 210 - 2 * 16


@pytest.fixture(scope="module")
def sheets():
    return {demo.stem: shared_builds.sheet(demo.stem) for demo in DEMOS}


@pytest.fixture(scope="module")
def pdfs():
    return {demo.stem: shared_builds.rendered(demo.stem, "pdf") for demo in DEMOS}


def test_equation_column_fits_inside_the_page():
    assert 6 + pdf.EQUATION_WIDTH_MM + 24 <= CONTENT_MM


def test_every_equation_fits_the_column_at_a_readable_size(sheets):
    checked = 0
    for name, sheet in sheets.items():
        for section in sheet.sections:
            for block in section.blocks:
                if not isinstance(block, Equation):
                    continue
                lines, scale = svgmath.lines_for(block.math.latex, pdf.EQUATION_WIDTH_PX)
                widest = max(svgmath.render(line).width for line in lines) * scale
                assert widest <= pdf.EQUATION_WIDTH_PX + 1e-6, (name, block.math.text)
                assert scale >= svgmath.SMALLEST_SCALE, (name, block.math.text, scale)
                checked += 1
    assert checked > 40


def test_a_long_equation_is_broken_at_equals_then_plus():
    terms = " + ".join(f"a_{{{i}}} e^{{- \\frac{{t}}{{\\tau_{{{i}}}}}}}" for i in range(14))
    latex = f"y\\left(t\\right) = {terms} = z"
    lines, scale = svgmath.lines_for(latex, 300)
    assert len(lines) > 2 and scale == 1.0
    assert all(svgmath.render(line).width <= 300 for line in lines)
    assert lines[1].startswith(r"\quad +")


def test_same_input_same_pdf_bytes(sheets, pdfs):
    name = DEMOS[0].stem
    assert render(sheets[name], ("pdf",))["pdf"] == pdfs[name]


def test_pdf_creation_date_comes_from_source_date_epoch(sheets, monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")  # 2023-11-14 UTC
    reader = PdfReader(io.BytesIO(render(sheets[DEMOS[0].stem], ("pdf",))["pdf"]))
    assert reader.metadata.get("/CreationDate", "").startswith("D:20231114")


@pytest.mark.parametrize("demo", DEMOS, ids=lambda p: p.stem)
def test_pages_carry_the_title_block_and_page_n_of_m(pdfs, sheets, demo):
    reader = PdfReader(io.BytesIO(pdfs[demo.stem]))
    block, words = sheets[demo.stem].title_block, sheets[demo.stem].labels
    total = len(reader.pages)
    assert total >= 2
    for number, page in enumerate(reader.pages, start=1):
        text = page.extract_text()
        assert f"{words.page} {number} {words.of} {total}" in text
        assert f"Calculation {block.number.value}" in text and f"Revision {block.revision.value}" in text
        assert block.project.value in text and words.footer in text
    last = reader.pages[-1].extract_text()
    assert words.signoff in last


@pytest.mark.parametrize("demo", DEMOS, ids=lambda p: p.stem)
def test_metadata_and_embedded_fonts(pdfs, sheets, demo):
    reader = PdfReader(io.BytesIO(pdfs[demo.stem]))
    info = sheets[demo.stem].title_block
    assert reader.metadata.title == info.title
    assert reader.metadata.author == info.originator.value
    assert info.number.value in reader.metadata.subject
    fonts = []
    for page in reader.pages:
        for font in (page["/Resources"].get("/Font") or {}).values():
            descriptor = font.get_object().get("/FontDescriptor")
            if descriptor is None:
                for child in font.get_object().get("/DescendantFonts", []):
                    descriptor = child.get_object().get("/FontDescriptor")
            embedded = ("/FontFile", "/FontFile2", "/FontFile3")
            fonts.append(descriptor is not None and any(k in descriptor for k in embedded))
    assert fonts and all(fonts), "every font is embedded"


def test_no_pdf_or_plot_libraries_for_records_only(tmp_path):
    """Start-up stays light: json and txt never import WeasyPrint or matplotlib."""
    code = (
        "import sys; from click.testing import CliRunner; from calcsheet.cli import main; "
        f"r = CliRunner().invoke(main, ['build', {str(DEMOS[0])!r}, '--format', 'json,txt', "
        f"'--out', {str(tmp_path)!r}]); "
        "assert r.exit_code == 0, r.output; "
        "print(sorted(m for m in ('weasyprint', 'matplotlib', 'ziamath') if m in sys.modules))"
    )
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert result.stdout.strip() == "[]"


def test_signoff_and_revisions_from_the_input(tmp_path):
    text = (ROOT / "inputs" / "bus-capacitor-bleed-down.toml").read_text(encoding="utf-8")
    text += (
        '\n[signoff]\nprepared = { name = "P. Person", date = "2026-11-30" }\nchecked = "C. Checker"\n'
        '\n[[revisions]]\nrevision = "A"\ndate = "2026-11-30"\ndescription = "First issue"\n'
    )
    path = tmp_path / "signed.toml"
    path.write_text(text, encoding="utf-8")
    sheet = build_sheet(path).sheet
    reader = PdfReader(io.BytesIO(render(sheet, ("pdf",))["pdf"]))
    last = reader.pages[-1].extract_text()
    for expected in ("P. Person", "2026-11-30", "C. Checker", "First issue", "Revisions"):
        assert expected in last
    assert reader.metadata.get("/CreationDate", "").startswith("D:20261130")


def test_house_style_overrides_and_inherits(tmp_path):
    style = ROOT / "styles" / "example_firm"
    html = render(shared_builds.sheet(DEMOS[0].stem), ("html",), style)["html"]
    assert "Northgate Consulting Engineers" in html  # the firm's title block
    assert "Step 9" in html and "Sign-off" in html  # inherited from the default template
    assert "--ink: #12263a" in html and "--pass: #1d6b35" in html  # firm CSS after the default CSS


@pytest.mark.parametrize("demo", DEMOS, ids=lambda p: p.stem)
def test_no_page_ends_with_a_step_heading(pdfs, demo):
    """A step's heading never stands at the foot of a page, away from what it introduces."""
    import re

    reader = PdfReader(io.BytesIO(pdfs[demo.stem]))
    for number, page in enumerate(reader.pages[:-1], start=1):
        body = [
            line for line in page.extract_text().splitlines() if line.strip() and "Prepared with calcsheet" not in line
        ]
        assert not re.match(r"^Step \d+\b", body[-1]), f"page {number} ends with '{body[-1]}'"


def test_an_equation_drawn_twice_on_a_page_has_no_singular_matrix():
    # WeasyPrint 70 drew an SVG's second occurrence with every <symbol>/<use> glyph scaled to zero, and
    # ziamath's zero-width thin space did so at the first: a singular matrix in the PDF (poppler: "matrix not
    # invertible") that cairo drew as debris. Read back with pypdf: no transform may be singular.
    import io

    import weasyprint
    from pypdf import PdfReader
    from pypdf.generic import ContentStream

    shown = svgmath.render(r"\mu = \exp\left(\int p\,dt\right) = \frac{A}{B}")
    assert "<use" not in shown.svg and "<symbol" not in shown.svg
    image = f'<p><img src="{svgmath.data_uri(shown.svg)}" style="width:{shown.width}px;height:{shown.height}px"></p>'
    reader = PdfReader(io.BytesIO(weasyprint.HTML(string=image * 2).write_pdf()))
    operations = ContentStream(reader.pages[0].get_contents(), reader).operations
    matrices = [[float(v) for v in args[:4]] for args, op in operations if op == b"cm"]
    assert len(matrices) > 4
    assert [m for m in matrices if abs(m[0] * m[3] - m[1] * m[2]) < 1e-12] == []
