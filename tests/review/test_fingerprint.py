"""The content fingerprint: what changes it and what does not, and where each format shows it."""

from __future__ import annotations

import io
import json
import re
from dataclasses import replace

import pytest
from pypdf import PdfReader

from calcsheet.pipeline import build_sheet, render
from calcsheet.sheet import compose as compose_module
from calcsheet.sheet.document import Paragraph, Section
from tests.review.helpers import COUPON, coupon

HEX64 = re.compile(r"[0-9a-f]{64}")


def fingerprint_of(tmp_path, text: str) -> str:
    return build_sheet(coupon(tmp_path, text)).sheet.review.fingerprint


@pytest.fixture(scope="module")
def base(tmp_path_factory) -> str:
    return fingerprint_of(tmp_path_factory.mktemp("base"), COUPON)


CHANGES = {
    "value": ('tau = { value = "40 s"', 'tau = { value = "41 s"'),
    "unit": ('tau = { value = "40 s"', 'tau = { value = "40 min"'),
    "equation": ('equation = "tau*dT/dt + T = T_a"', 'equation = "2*tau*dT/dt + T = T_a"'),
    "criterion": ('check = "T(60 s) <= 60 degC"', 'check = "T(60 s) <= 61 degC"'),
    "criterion text": ('text = "Coupon below 60 degC after one minute"', 'text = "Coupon cool after one minute"'),
    "assumption": ('"Uniform coupon temperature."', '"Uniform coupon temperature, no radiation."'),
    "reference": ('"Coupon drawing CP-1 (test)"', '"Coupon drawing CP-2 (test)"'),
    "initial value": ('value = "90 degC"', 'value = "95 degC"'),
    "evaluation point": ('at = ["30 s"]', 'at = ["31 s"]'),
    "parameter source": ('source = "room (test)"', 'source = "room thermometer (test)"'),
}


@pytest.mark.parametrize("old, new", CHANGES.values(), ids=CHANGES.keys())
def test_a_change_to_what_the_sheet_states_changes_it(tmp_path, base, old, new):
    assert old in COUPON
    assert fingerprint_of(tmp_path, COUPON.replace(old, new)) != base


REORDERED = """[model]
variable = "t [s]"
unknown = "T [degC]"
equation = "tau*dT/dt + T = T_a"
[[criteria]]
check = "T(60 s) <= 60 degC"
text = "Coupon below 60 degC after one minute"
[parameters]
T_a = { source = "room (test)", value = "20 degC" }
tau = { source = "measured cooling (test)", value = "40 s" }
[sheet]
assumptions = ["Uniform coupon temperature."]
references = ["Coupon drawing CP-1 (test)"]
purpose = "Show the coupon is below 60 degC one minute after leaving the furnace."
originator = "T. Writer"
revision = "A"
number = "RV-1"
title = "Cool-down of a test coupon"
[evaluate]
at = ["30 s"]
[initial]
value = "90 degC"
at = "0 s"
"""

SAME = {
    "comments and blank lines": "# a comment\n\n" + COUPON.replace("\n[", "\n\n# note\n[") + "\n# end\n",
    "whitespace": re.sub(r"(?m)^(\w+) = ", r"\1   =\t ", COUPON)
    .replace("[sheet]", "  [sheet]  ")
    .replace('", "', '",   "'),
    "key and table order": REORDERED,
    "sign-off names and dates": COUPON + '\n[signoff]\nprepared = { name = "Q. Other", date = "2026-04-01" }\n'
    'checked = "R. Hand"\n',
    "revision rows": COUPON.replace('revision = "A"', 'revision = "B"')
    + (
        '\n[[revisions]]\nrevision = "A"\ndate = "2026-01-05"\ndescription = "First issue"\n'
        '\n[[revisions]]\nrevision = "B"\ndate = "2026-02-05"\ndescription = "Reworded"\n'
    ),
    "issue status": COUPON.replace('revision = "A"', 'revision = "A"\nstatus = "for check"'),
    "originator": COUPON.replace("T. Writer", "U. Author"),
}


@pytest.mark.parametrize("text", SAME.values(), ids=SAME.keys())
def test_a_change_to_the_document_parts_or_the_layout_of_the_file_keeps_it(tmp_path, base, text):
    assert text != COUPON
    assert fingerprint_of(tmp_path, text) == base


def test_a_new_version_that_changes_a_derived_line_changes_it(tmp_path, base, monkeypatch):
    """Simulate a calcsheet release that words one line of a step differently."""
    steps = []
    for key, build in compose_module.STEPS:
        if key == "classification":

            def build(d, n, original=build):
                section = original(d, n)
                blocks = tuple(
                    Paragraph(b.text.replace("solved", "worked out")) if isinstance(b, Paragraph) else b
                    for b in section.blocks
                )
                return replace(section, blocks=blocks)

        steps.append((key, build))
    monkeypatch.setattr(compose_module, "STEPS", tuple(steps))
    assert fingerprint_of(tmp_path, COUPON) != base


def test_a_new_version_that_changes_nothing_shown_keeps_it(tmp_path, base, monkeypatch):
    """A release that rebuilds every section as new objects and names the source differently shows the same."""
    original = compose_module.compose

    def rebuilt(d):
        sheet = original(d)
        return replace(
            sheet,
            source_name="elsewhere.toml",
            sections=tuple(Section(s.key, s.title, tuple(s.blocks), s.number) for s in sheet.sections),
        )

    monkeypatch.setattr(compose_module, "compose", rebuilt)
    assert fingerprint_of(tmp_path, COUPON) == base


def test_every_format_carries_it(tmp_path, base):
    sheet = build_sheet(coupon(tmp_path)).sheet
    out = render(sheet, ("txt", "json", "html", "pdf"))
    assert f"Fingerprint: {base}\n" in out["txt"]
    assert json.loads(out["json"])["fingerprint"] == base and HEX64.fullmatch(base)
    title_block = out["html"].split('<header class="title-block">')[1].split("</header>")[0]
    assert base[:12] in title_block and base[12:] not in title_block.split("title=")[0]
    reader = PdfReader(io.BytesIO(out["pdf"]))
    for page in reader.pages:
        assert f"Fingerprint {base[:12]}" in page.extract_text()
    assert base in reader.metadata["/Keywords"]


def test_same_input_same_fingerprint_and_bytes(tmp_path, base):
    sheet = build_sheet(coupon(tmp_path)).sheet
    again = build_sheet(coupon(tmp_path)).sheet
    assert sheet.review.fingerprint == again.review.fingerprint == base
    assert render(sheet, ("txt", "json", "html")) == render(again, ("txt", "json", "html"))
