"""The PDF's fonts come with the package, font subsets carry no build time, and a bad
SOURCE_DATE_EPOCH is ignored rather than fatal."""

from __future__ import annotations

import importlib.metadata
import io
import os
import re
import shutil
import subprocess
from types import SimpleNamespace
from pathlib import Path

import pytest
from fontTools.ttLib import TTFont
from pypdf import PdfReader

from calcsheet.sheet.compose import sheet_labels, title_block
from calcsheet.sheet.document import Outcome, Sheet
from calcsheet.writers import fonts, pdf
from calcsheet.writers.plot import figure_svg
from tests import shared_builds

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "inputs" / "bus-capacitor-bleed-down.toml"
# The PDF names a font after its CSS family and face; the subset tag is six capitals and a '+'.
EMBEDDED_NAME = re.compile(r"^[A-Z]{6}\+Calcsheet-Sans(-Bold|-Italic|-BoldItalic)?$")
FACE_OF_NAME = {
    "": "DejaVuSans.ttf",
    "-Bold": "DejaVuSans-Bold.ttf",
    "-Italic": "DejaVuSans-Oblique.ttf",
    "-BoldItalic": "DejaVuSans-BoldOblique.ttf",
}


@pytest.fixture(scope="module")
def sheet():
    return shared_builds.sheet(DEMO.stem)


@pytest.fixture(scope="module")
def built_pdf(sheet):
    return pdf.write(sheet)


def embedded_fonts(data: bytes) -> dict[str, TTFont]:
    """Every embedded TrueType program of a PDF, by its PDF font name."""
    found = {}
    for page in PdfReader(io.BytesIO(data)).pages:
        for font in (page["/Resources"].get("/Font") or {}).values():
            font = font.get_object()
            for child in font.get("/DescendantFonts", [font]):
                descriptor = child.get_object()["/FontDescriptor"].get_object()
                name = str(descriptor["/FontName"]).lstrip("/")
                found[name] = TTFont(io.BytesIO(descriptor["/FontFile2"].get_object().get_data()))
    return found


def test_the_bundled_fonts_ship_in_the_matplotlib_wheel_with_their_licence():
    """The package's fonts are files of an installed distribution, listed in its RECORD."""
    shipped = {str(f).replace("\\", "/") for f in importlib.metadata.files("matplotlib")}
    for name in [*fonts.FACES, fonts.LICENCE]:
        assert f"matplotlib/mpl-data/fonts/ttf/{name}" in shipped, name
        assert (fonts.font_dir() / name).is_file(), name
    assert "Bitstream" in (fonts.font_dir() / fonts.LICENCE).read_text(encoding="utf-8")


@pytest.mark.skipif(shutil.which("pdffonts") is None, reason="pdffonts (poppler-utils) not installed")
def test_pdffonts_lists_only_the_bundled_fonts_all_embedded(built_pdf, tmp_path):
    path = tmp_path / "sheet.pdf"
    path.write_bytes(built_pdf)
    listing = subprocess.run(["pdffonts", str(path)], capture_output=True, text=True, check=True).stdout
    rows = [line.split() for line in listing.splitlines()[2:] if line.strip()]
    assert rows, listing
    for row in rows:
        assert EMBEDDED_NAME.match(row[0]), listing  # no system family, no font without a name
        assert row[-5:-2] == ["yes", "yes", "yes"], listing  # embedded, subset, with a ToUnicode map


def test_each_embedded_font_is_the_bundled_file_not_a_system_copy(built_pdf):
    """The subset keeps the name table, so its version string tells which file it came from."""
    embedded = embedded_fonts(built_pdf)
    assert len(embedded) >= 3  # regular, bold and italic are all in use
    for name, font in embedded.items():
        face = FACE_OF_NAME[EMBEDDED_NAME.match(name).group(1) or ""]
        bundled = TTFont(fonts.font_dir() / face)
        assert font["name"].getDebugName(5) == bundled["name"].getDebugName(5), name  # "Version 2.35"
        assert font["head"].fontRevision == bundled["head"].fontRevision, name


def test_font_subsets_made_by_fonttools_carry_no_build_time(sheet, monkeypatch):
    """Where WeasyPrint has no HarfBuzz subsetter (HarfBuzz older than 4.1) it subsets with
    fontTools, which stamps each subset with the current time. Two builds at different clock
    times must still give the same bytes, and the subsets keep the font file's own timestamp."""
    from fontTools.ttLib.tables import _h_e_a_d
    from weasyprint.pdf import fonts as weasyprint_fonts

    monkeypatch.setattr(weasyprint_fonts, "harfbuzz_subset", None)
    monkeypatch.delenv("SOURCE_DATE_EPOCH", raising=False)
    builds = []
    for clock in (3_000_000_000, 3_900_000_000):  # seconds since 1904, as fontTools counts
        monkeypatch.setattr(_h_e_a_d, "timestampNow", lambda clock=clock: clock)
        builds.append(pdf.write(sheet))
    assert builds[0] == builds[1]
    for name, font in embedded_fonts(builds[0]).items():
        face = FACE_OF_NAME[EMBEDDED_NAME.match(name).group(1) or ""]
        assert font["head"].modified == TTFont(fonts.font_dir() / face)["head"].modified, name


def test_a_bad_source_date_epoch_leaves_the_pdf_as_without_one(sheet, built_pdf, monkeypatch):
    """fontTools and matplotlib read SOURCE_DATE_EPOCH with a bare int(); the writer hides a bad
    value from them and ignores it itself, so the PDF is the one built without the variable."""
    from weasyprint.pdf import fonts as weasyprint_fonts

    monkeypatch.setattr(weasyprint_fonts, "harfbuzz_subset", None)  # the path where fontTools reads it
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "soon")
    figure_svg.cache_clear()  # the plot drawn anew, so matplotlib meets the bad value too
    with_bad_value = pdf.write(sheet)
    assert os.environ["SOURCE_DATE_EPOCH"] == "soon"  # put back after the build
    monkeypatch.delenv("SOURCE_DATE_EPOCH")
    assert with_bad_value == pdf.write(sheet)


def test_the_font_module_is_restored_after_a_build(built_pdf):
    from fontTools.ttLib import TTFont as original
    from weasyprint.pdf import fonts as weasyprint_fonts

    assert weasyprint_fonts.TTFont is original


def _undated_sheet() -> Sheet:
    untitled = SimpleNamespace(title="t", number="", revision="", project="", originator="", status="")
    return Sheet(
        title_block=title_block(untitled), labels=sheet_labels(), outcome=Outcome(True, "ok"), sections=(), cautions=()
    )


@pytest.mark.parametrize(
    "value",
    ["", " ", "soon", "-5", "1.5", "1e9", "\u00b2", "\u0661\u0662", "0x10", "253402300800", "99999999999999999999999"],
)
def test_a_bad_source_date_epoch_is_ignored(value, monkeypatch):
    """Empty, non-integer, negative, non-ASCII digits, past year 9999: no date, no exception."""
    monkeypatch.setenv("SOURCE_DATE_EPOCH", value)
    assert pdf.creation_date(_undated_sheet()) == ""


@pytest.mark.parametrize(
    "value, date", [("0", "1970-01-01"), ("1700000000", "2023-11-14"), ("253402300799", "9999-12-31")]
)
def test_a_valid_source_date_epoch_gives_the_date(value, date, monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", value)  # 1700000000 s is 2023-11-14 22:13:20 UTC
    assert pdf.creation_date(_undated_sheet()) == date
