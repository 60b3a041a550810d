"""User text is shown, never obeyed: markup and template syntax come out literally, and no
character in a field can forge a line of the text record or reorder what a reader sees."""

from __future__ import annotations

import io
import json
import re
from pathlib import Path

import pytest
from pypdf import PdfReader

from calcsheet.model import Revision
from calcsheet.pipeline import build_sheet, render
from calcsheet.sheet.compose import sheet_labels
from calcsheet.sheet.document import (
    Field,
    ItemList,
    Note,
    Outcome,
    Paragraph,
    Section,
    Sheet,
    SignOffLine,
    Table,
    TitleBlock,
)
from calcsheet.writers import html, json_record, pdf, text_record

ROOT = Path(__file__).resolve().parents[2]
SCRIPT = "<script>alert(1)</script>"
EXPRESSION = "{{7*7}}"
STATEMENT = "{% for x in y %}"


@pytest.fixture(scope="module")
def hostile_build(tmp_path_factory):
    """A demo input whose title, purpose, sources, notes and criterion text carry markup and
    template syntax, built for real in all four formats."""
    text = (ROOT / "inputs" / "bus-capacitor-bleed-down.toml").read_text(encoding="utf-8")
    replacements = {
        'title = "Bleed-down of the DC bus capacitor bank, pump drive PD-3"': f'title = "Bus {SCRIPT}"',
        'purpose = "Show that': f'purpose = "{EXPRESSION} Show that',
        '"Drive panel layout DWG-PD3-02 rev C (demo)"': f'"{STATEMENT} layout"',
        'source = "discharge resistor, drawing DWG-PD3-02"': f'source = "{SCRIPT} resistor"',
        'note = "2 x 9.4 kohm in parallel"': f'note = "{EXPRESSION} parallel"',
        'text = "Bus below 50 V within 60 s"': f'text = "{STATEMENT} below 50 V"',
    }
    for old, new in replacements.items():
        assert old in text, old
        text = text.replace(old, new)
    path = tmp_path_factory.mktemp("hostile") / "hostile.toml"
    path.write_text(text, encoding="utf-8")
    return render(build_sheet(path).sheet, ("html", "pdf", "json", "txt"))


def test_html_shows_markup_and_template_syntax_escaped_and_literal(hostile_build):
    page = hostile_build["html"]
    assert "<script" not in page.lower()
    assert page.count("&lt;script&gt;alert(1)&lt;/script&gt;") >= 3  # <title>, <h1>, the source cell
    assert EXPRESSION in page and STATEMENT in page  # printed as text, never run as template code
    assert "49 Show that" not in page


def test_pdf_shows_the_same_text_literally(hostile_build):
    reader = PdfReader(io.BytesIO(hostile_build["pdf"]))
    text = "\n".join(page.extract_text() for page in reader.pages)
    for literal in (SCRIPT, EXPRESSION, STATEMENT):
        assert literal in text, literal
    assert reader.metadata.title == f"Bus {SCRIPT}"


def test_records_keep_the_text_as_written(hostile_build):
    record = hostile_build["txt"]
    assert f"CALCULATION SHEET: Bus {SCRIPT}" in record
    assert EXPRESSION in record and STATEMENT in record
    assert f"Bus {SCRIPT}" in json.dumps(json.loads(hostile_build["json"]), ensure_ascii=False)


FORGED = "\nOUTCOME: All 2 criteria pass. Verification passed."
TRICKS = {
    "carriage return": "\rOUTCOME: passes",
    "crlf": "\r\nOUTCOME: passes",
    "vertical tab and form feed": "\x0bOUTCOME: a\x0cOUTCOME: b",
    "unicode line and paragraph separators": "\u2028OUTCOME: a\u2029OUTCOME: b",
    "next line": "\x85OUTCOME: passes",
    "ansi colour": "\x1b[32mPASS\x1b[0m",
    "ansi cursor up and erase": "\x1b[1A\x1b[2KOUTCOME: passes",
    "right-to-left override": "\u202eessap",
    "isolates": "\u2066a\u2067b\u2068c\u2069",
    "null and bell": "\x00\x07",
    "delete and C1": "\x7f\x9b31m",
}
UNSAFE = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069\u2028\u2029]")


def forging_sheet(trick: str) -> Sheet:
    """A failing sheet whose every kind of text field tries to add lines of its own."""
    return Sheet(
        title_block=TitleBlock(
            "Title" + FORGED + trick,
            number=Field("Calculation", "X-1" + FORGED),
            revision=Field("Revision", "A" + trick),
            project=Field("Project", "P" + FORGED + trick),
            originator=Field("Originator"),
        ),
        labels=sheet_labels(),
        outcome=Outcome(False, "1 of 2 criteria FAIL.", ("FAIL: criterion text" + FORGED + trick,)),
        sections=(
            Section(
                "basis",
                "Basis" + FORGED,
                (
                    Paragraph("Purpose: a purpose" + FORGED + trick),
                    ItemList(("a reference" + FORGED, "an assumption" + trick)),
                    Table(("Symbol", "Source"), (("R", "a source" + FORGED + trick),), caption="Parameters" + FORGED),
                    Note("warning", "a note" + FORGED + trick),
                ),
                1,
            ),
        ),
        cautions=("a caution" + FORGED,),
        signoff=(SignOffLine("Prepared", "A. Name" + FORGED + trick, "2026-01-01"),),
        revisions=(Revision("A", "2026-01-01", "first issue" + FORGED + trick),),
        record={"title": "Title" + FORGED + trick, "passed": False},
    )


@pytest.mark.parametrize("trick", list(TRICKS.values()), ids=list(TRICKS))
def test_the_text_record_cannot_be_forged(trick):
    record = text_record.write(forging_sheet(trick))
    lines = record.split("\n")
    assert [line for line in lines if line.startswith("OUTCOME")] == ["OUTCOME: 1 of 2 criteria FAIL."]
    assert not UNSAFE.search(record), "a control, escape or override character reached the record"
    assert sum(line.startswith(text_record.CONTINUATION) for line in lines) >= 10  # every field continued
    assert len(lines) == len(record.splitlines()) + 1  # the only line breaks are the record's own


@pytest.mark.parametrize("trick", list(TRICKS.values()), ids=list(TRICKS))
def test_html_and_json_neutralise_controls_and_overrides(trick):
    sheet = forging_sheet(trick)
    page = html.write(sheet)
    assert not UNSAFE.search(page)
    data = json_record.write(sheet)
    assert not UNSAFE.search(data)
    assert json.loads(data) == sheet.record  # a JSON reader still gets the text as written


def test_a_right_to_left_override_is_shown_not_obeyed():
    trick = TRICKS["right-to-left override"]
    sheet = forging_sheet(trick)
    assert "essap" in text_record.write(sheet) and "\\u202e" in text_record.write(sheet)
    assert "\\u202e" in html.write(sheet)
    text = "\n".join(page.extract_text() for page in PdfReader(io.BytesIO(pdf.write(sheet))).pages)
    assert "\u202e" not in text and "\\u202e" in text
