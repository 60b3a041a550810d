"""Every sheet node is shown by every writer, an unknown node stops the build, and every word a
writer shows around the content comes from the Sheet's labels and named title-block entries.

The JSON record is built from ``Sheet.record``, not from the nodes, so it has no node handlers.
"""

from __future__ import annotations

import dataclasses
import inspect
import io
import re
from dataclasses import dataclass
from html.parser import HTMLParser
from pathlib import Path
from typing import get_args

import pytest
from pypdf import PdfReader

from calcsheet.model import Revision
from calcsheet.sheet import document as doc
from calcsheet.sheet.compose import sheet_labels
from calcsheet.writers import dispatch, writer_for

# Document types that are not nodes a Section holds: the sheet's frame and the parts of nodes.
FRAME = {
    doc.Sheet,
    doc.Section,
    doc.TitleBlock,
    doc.Field,
    doc.Labels,
    doc.Outcome,
    doc.Math,
    doc.Guide,
    doc.PointLimit,
    doc.Legend,
    doc.SignOffLine,
    doc.Review,
}
NODE_WRITERS = ("txt", "html", "pdf")


def one_of_each_block() -> dict[type, tuple[object, str]]:
    """A block of every type, with a text each writer must show for it (invented for the test)."""
    curve = tuple((float(i), 20.0 - 0.5 * i) for i in range(21))
    return {
        doc.Paragraph: (doc.Paragraph("Plain paragraph alpha."), "Plain paragraph alpha."),
        doc.Equation: (doc.Equation(doc.Math("y = 2 x", "y = 2*x"), "bravo relation"), "bravo relation"),
        doc.Table: (
            doc.Table(("Column charlie", "Symbol"), (("cell delta", doc.Math("k", "k")),), "Table echo"),
            "cell delta",
        ),
        doc.Note: (doc.Note("method", "Remark foxtrot."), "Remark foxtrot."),
        doc.ItemList: (doc.ItemList(("item golf", "item hotel")), "item hotel"),
        doc.Figure: (
            doc.Figure(
                "Plot india", "t [s]", "y [K]", curve, curve[::5], ((5.0, 17.5, "y(5 s)"),), caption="Caption juliet"
            ),
            "Caption juliet",
        ),
    }


def relabelled() -> doc.Labels:
    """Every label replaced by a word no writer could hold: 'Lbl' and the field's name."""
    words = {}
    for f in dataclasses.fields(doc.Labels):
        value = getattr(sheet_labels(), f.name)
        if f.name == "notes":
            words[f.name] = tuple((kind, f"Lblnote{kind}") for kind, _ in value)
        elif f.name == "figure_summary":
            words[f.name] = "Lblfigsum {curve}"
        elif isinstance(value, tuple):
            words[f.name] = tuple(f"Lbl{f.name}{i}" for i in range(len(value)))
        else:
            words[f.name] = f"Lbl{f.name}"
    return doc.Labels(**words)


def sheet_with(blocks, labels: doc.Labels | None = None, field_label=lambda name: name.capitalize()) -> doc.Sheet:
    fields = {
        name: doc.Field(field_label(name), f"val_{name}") for name in ("number", "revision", "project", "originator")
    }
    return doc.Sheet(
        title_block=doc.TitleBlock("Sheet kilo", **fields),
        labels=labels or sheet_labels(),
        outcome=doc.Outcome(True, "Result lima."),
        sections=(doc.Section("s", "Section mike", tuple(blocks), 1),),
        cautions=("Hazard line november.",),
        signoff=(doc.SignOffLine("Prepared", "P. Oscar", "2026-01-02"),),
        revisions=(Revision("A", "2026-01-02", "issue papa"),),
    )


def written_text(fmt: str, sheet: doc.Sheet) -> str:
    """What a reader of the output sees: the text record, the HTML's text, the PDF's text."""
    out = writer_for(fmt)(sheet, None)
    if fmt == "pdf":
        return "\n".join(page.extract_text() for page in PdfReader(io.BytesIO(out)).pages)
    if fmt == "html":
        reader = _VisibleText()
        reader.feed(out)
        return " ".join(reader.parts)
    return out


class _VisibleText(HTMLParser):
    """The text of an HTML page outside style, svg and math elements."""

    HIDDEN = {"style", "svg", "math", "title"}

    def __init__(self):
        super().__init__()
        self.parts, self.depth = [], 0

    def handle_starttag(self, tag, attrs):
        self.depth += tag in self.HIDDEN

    def handle_endtag(self, tag):
        self.depth -= tag in self.HIDDEN

    def handle_data(self, data):
        if not self.depth and data.strip():
            self.parts.append(data.strip())


@dataclass(frozen=True)
class Sidebar:
    """A node type no writer knows."""

    text: str = "sidebar text"


def test_every_dataclass_of_the_document_is_a_block_a_cell_or_part_of_the_frame():
    defined = {
        obj
        for _, obj in inspect.getmembers(doc, inspect.isclass)
        if dataclasses.is_dataclass(obj) and obj.__module__ == doc.__name__
    }
    blocks = set(get_args(doc.Block))
    assert defined == FRAME | blocks, "a new node type must join doc.Block (or FRAME, if it is no node)"
    assert set(dispatch.BLOCK_KINDS) == blocks
    assert set(dispatch.CELL_KINDS) == set(get_args(doc.Cell))
    assert set(one_of_each_block()) == blocks


@pytest.fixture(scope="module")
def shown():
    """Each node writer's visible output for one sheet holding a block of every type."""
    blocks = [block for block, _ in one_of_each_block().values()]
    return {fmt: written_text(fmt, sheet_with(blocks)) for fmt in NODE_WRITERS}


@pytest.mark.parametrize("fmt", NODE_WRITERS)
@pytest.mark.parametrize("node_type", list(one_of_each_block()), ids=lambda t: t.__name__)
def test_every_node_type_is_shown_by_every_writer(shown, fmt, node_type):
    block, expected = one_of_each_block()[node_type]
    if fmt == "txt" and node_type is doc.Figure:
        expected = block.title  # the text record summarises the plot; it has no caption line
    assert expected in shown[fmt]


@pytest.mark.parametrize("fmt", NODE_WRITERS)
def test_a_node_type_no_writer_knows_raises_naming_it_and_the_writer(fmt):
    writer = {"txt": "text"}.get(fmt, fmt)
    with pytest.raises(NotImplementedError, match=rf"the {writer} writer .*Sidebar"):
        writer_for(fmt)(sheet_with([doc.Paragraph("before"), Sidebar()]), None)


@pytest.mark.parametrize("fmt", NODE_WRITERS)
def test_a_known_kind_without_a_form_raises_instead_of_vanishing(fmt, monkeypatch):
    """A node registered in the dispatch but given no branch in a writer (text handler, template)."""
    monkeypatch.setitem(dispatch.BLOCK_KINDS, Sidebar, "sidebar")
    writer = {"txt": "text"}.get(fmt, fmt)
    with pytest.raises(NotImplementedError, match=rf"the {writer} writer has no form for a Sidebar node"):
        writer_for(fmt)(sheet_with([Sidebar()]), None)


def test_a_table_cell_of_an_unknown_type_raises():
    table = doc.Table(("a",), ((3.5,),))
    with pytest.raises(NotImplementedError, match="the text writer does not know the table cell node type float"):
        writer_for("txt")(sheet_with([table]), None)


# Where each label shows: the text record has no table heads for revisions nor a page frame; the
# HTML has no "calculation sheet" prefix, outcome label or figure line; the PDF adds the page frame.
SHOWN_BY = {
    "txt": (
        "sheet",
        "outcome",
        "step",
        "revisions",
        "signoff",
        "signoff_columns1",
        "signoff_columns2",
        "cautions",
        "notemethod",
        "figure",
        "figsum 21",
    ),
    "html": (
        "step",
        "revisions",
        "revision_columns0",
        "revision_columns1",
        "revision_columns2",
        "signoff",
        "signoff_columns0",
        "signoff_columns1",
        "signoff_columns2",
        "signoff_columns3",
        "signoff_state",
        "cautions",
        "notemethod",
    ),
}
SHOWN_BY["pdf"] = SHOWN_BY["html"] + ("page", "of", "footer")


@pytest.mark.parametrize("fmt", NODE_WRITERS)
def test_writers_show_the_sheets_labels_and_no_words_of_their_own(fmt):
    """Relabel everything: each writer shows the new words, and none of the default ones remains.

    The PDF's running heads come from the named title-block entries, so a renamed entry still
    heads every page (they were once found by searching for the label text, and went blank).
    """
    blocks = [block for block, _ in one_of_each_block().values()]
    sheet = sheet_with(blocks, relabelled(), field_label=lambda name: f"Lblfield{name}")
    text = written_text(fmt, sheet)
    for word in SHOWN_BY[fmt]:
        assert f"lbl{word}" in text.lower(), word
    for name in ("number", "revision", "project", "originator"):
        assert re.search(rf"Lblfield{name}\W*val_{name}", text), name
    defaults = [w for f in dataclasses.fields(doc.Labels) for w in _words(getattr(sheet_labels(), f.name))]
    defaults += ["Calculation", "Revision", "Project", "Originator"]
    for word in defaults:
        assert not re.search(rf"\b{re.escape(word)}\b", text, re.IGNORECASE), word
    if fmt == "pdf":
        pages = PdfReader(io.BytesIO(writer_for("pdf")(sheet, None))).pages
        for page in pages:
            head = page.extract_text()
            assert re.search(r"Lblfieldnumber\s*val_number\s*Lblfieldrevision\s*val_revision", head)
            assert "val_project" in head and re.search(r"Lblpage\s*\d+\s*Lblof\s*\d+", head)


def _words(value) -> list[str]:
    """A label's words for the absence check ('of' is too common a word to look for)."""
    if isinstance(value, tuple):
        return [w for item in value for w in _words(item[1] if isinstance(item, tuple) else item)]
    if "{" in value:  # the figure summary template: its fixed words
        return re.findall(r"[a-z]{4,}", re.sub(r"\{[^}]*\}", " ", value))
    return [value] if len(value) > 2 else []


def test_the_default_css_sets_no_words_through_content():
    """Words in CSS ``content`` would bypass the labels (the writer's page CSS would hide them in
    the PDF); punctuation such as the title block's ':' is allowed."""
    styles = Path(__file__).resolve().parents[2] / "styles" / "default"
    for css in styles.glob("*.css"):
        for value in re.findall(r"content\s*:\s*([^;}]*)", css.read_text(encoding="utf-8")):
            assert not re.search(r"[A-Za-z]{2,}", re.sub(r"counter\([^)]*\)", "", value)), (css.name, value)
