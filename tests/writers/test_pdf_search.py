"""PDF equations are drawn as SVG paths; their plain form is in the PDF's text so a search, a copy or a
text extraction finds them (read back with pypdf, an outside library)."""

from __future__ import annotations

import io

from pypdf import PdfReader

from tests import shared_builds


def test_every_displayed_equation_of_a_sheet_can_be_found_in_the_pdf_text():
    built = shared_builds.built("bus-capacitor-bleed-down")
    pdf = shared_builds.rendered("bus-capacitor-bleed-down", "pdf")
    text = "".join(page.extract_text() for page in PdfReader(io.BytesIO(pdf)).pages)
    flat = " ".join(text.split())
    equations = [b.math.text for s in built.sheet.sections for b in s.blocks if type(b).__name__ == "Equation"]
    assert len(equations) > 10
    missing = [e for e in equations if " ".join(e.split()) not in flat]
    assert not missing, missing
