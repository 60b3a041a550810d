"""`calcsheet build --archive`: the PDF as PDF/A-3b carrying the input file and the JSON record it was made
from, read back with pypdf and poppler's pdftotext (outside readers)."""

from __future__ import annotations

import io
import shutil
import subprocess
from pathlib import Path

import pytest
from click.testing import CliRunner
from pypdf import PdfReader

from calcsheet.cli import main
from calcsheet.pipeline import render
from tests import shared_builds

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "inputs" / "bus-capacitor-bleed-down.toml"


@pytest.fixture(scope="module")
def archived():
    sheet = shared_builds.sheet(DEMO.stem)
    return sheet, render(sheet, ("pdf", "json"), None, DEMO)


def test_the_archival_pdf_carries_the_input_and_the_record_byte_for_byte(archived):
    _, rendered = archived
    files = PdfReader(io.BytesIO(rendered["pdf"])).attachments
    assert files == {DEMO.name: [DEMO.read_bytes()], f"{DEMO.stem}.json": [rendered["json"].encode("utf-8")]}


def test_the_archival_pdf_declares_pdf_a_3b(archived):
    # ISO 19005-3 identifies a conforming file by pdfaid:part 3 and pdfaid:conformance B in its XMP metadata.
    metadata = PdfReader(io.BytesIO(archived[1]["pdf"])).xmp_metadata.stream.get_data().decode("utf-8")
    assert 'pdfaid:part="3"' in metadata and 'pdfaid:conformance="B"' in metadata


def test_the_archival_pdf_is_the_same_bytes_at_every_build(archived):
    sheet, rendered = archived
    assert render(sheet, ("pdf",), None, DEMO)["pdf"] == rendered["pdf"]


def test_an_ordinary_pdf_carries_no_attachment(archived):
    sheet, _ = archived
    reader = PdfReader(io.BytesIO(render(sheet, ("pdf",))["pdf"]))
    assert reader.attachments == {}
    assert reader.xmp_metadata is None or b"pdfaid" not in reader.xmp_metadata.stream.get_data()


@pytest.mark.skipif(shutil.which("pdftotext") is None, reason="poppler's pdftotext is needed")
def test_the_equations_of_the_archival_pdf_can_be_searched(archived):
    sheet, rendered = archived
    text = subprocess.run(["pdftotext", "-", "-"], input=rendered["pdf"], capture_output=True, check=True).stdout
    flat = " ".join(text.decode("utf-8").split())
    equations = [b.math.text for s in sheet.sections for b in s.blocks if type(b).__name__ == "Equation"]
    assert len(equations) > 10
    assert [e for e in equations if " ".join(e.split()) not in flat] == []


def test_archive_without_the_pdf_format_is_one_line_and_exit_2(tmp_path):
    result = CliRunner().invoke(main, ["build", "--archive", "--format", "json", "--out", str(tmp_path), str(DEMO)])
    assert result.exit_code == 2
    assert result.output.strip().splitlines() == ["--archive: makes the PDF an archival one; add pdf to --format"]
    assert list(tmp_path.iterdir()) == []


def test_build_archive_writes_the_archival_pdf(tmp_path):
    result = CliRunner().invoke(
        main, ["build", "--archive", "--format", "pdf", "--jobs", "1", "--quiet", "--out", str(tmp_path), str(DEMO)]
    )
    assert result.exit_code == 0, result.output
    files = PdfReader(tmp_path / f"{DEMO.stem}.pdf").attachments
    assert files[DEMO.name] == [DEMO.read_bytes()] and list(files) == [DEMO.name, f"{DEMO.stem}.json"]
