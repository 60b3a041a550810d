"""One spelling per symbol, one form per unit and one number format on every printed sheet: the visible text of
each demo's and each starter's PDF, as poppler's pdftotext (an outside reader) finds it, holds no ASCII unit
spelling (degC, kohm, uF, m^3), no symbol the equations respell written by its input name (T_inf beside T∞),
no <= or >=, and no value in two number forms ("120.0 s" beside "120 s"). The equations' hidden plain-text
layer (writers/pdf.py::_searchable, set at 2 pt) keeps the input's ASCII form for search and is left out here by
the height of its words."""

from __future__ import annotations

import re
import subprocess
from html import unescape

import pytest

from tests.writers.printed import DEMOS, POPPLER, STARTERS, printed

HIDDEN_BELOW_PT = 4.0  # the searchable layer is 2 pt; the smallest visible text (a subscript) is above 5 pt
_WORD = re.compile(r'<word xMin="[^"]+" yMin="([^"]+)" xMax="[^"]+" yMax="([^"]+)">(.*?)</word>')
# a unit after a number or after "in" ('T in degC'): degC, kohm, uF, and ASCII powers and products (m^3, J/(kg*K))
ASCII_UNITS = re.compile(
    r"(?<![\w])(?:delta_)?deg[CF]\b|\b[kMGm]?ohm\b(?! law)|\d\s*u[FHAVs]\b"
    r"|(?:\d|\bin)[\s\u00a0]+[A-Za-z(][^\s,;]*(?:\^|[A-Za-z)]\*)"
)
PADDED = re.compile(r"(?<![\d.])(\d+)\.0+[\s\u00a0]*([^\s\d.,;)]+)")


def padded_beside_plain(text: str) -> list[str]:
    """'120.0 s' where the same sheet prints '120 s': one value, two forms."""
    found = []
    for m in PADDED.finditer(text):
        whole, unit = m.groups()
        if re.search(rf"(?<![\d.]){whole}[\s\u00a0]*{re.escape(unit)}(?![\w])", text):
            found.append(m.group(0))
    return found


def visible_text(pdf: bytes) -> str:
    """The words a reader sees, in reading order, without the equations' hidden plain-text layer."""
    out = subprocess.run(["pdftotext", "-bbox", "-enc", "UTF-8", "-", "-"], input=pdf, capture_output=True, check=True)
    words = _WORD.findall(out.stdout.decode("utf-8"))
    return " ".join(unescape(text) for top, bottom, text in words if float(bottom) - float(top) >= HIDDEN_BELOW_PT)


SOURCES = [*DEMOS, *STARTERS]


@pytest.mark.skipif(not POPPLER, reason="poppler's pdftotext is needed to read the PDF back")
@pytest.mark.parametrize("source", SOURCES)
def test_printed_text_has_one_spelling(source):
    sheet_pdf = printed(source, "default")
    text = visible_text(sheet_pdf.pdf)
    assert len(text) > 1000  # the words were read at all
    problems = [f"ASCII unit {m.group(0)!r}" for m in ASCII_UNITS.finditer(text)]
    problems += [f"comparison {sign!r}" for sign in ("<=", ">=") if sign in text]
    problems += [f"one value in two forms: {found!r}" for found in padded_beside_plain(text)]
    for name in sheet_pdf.sheet.symbols:
        for m in re.finditer(rf"(?<![\w.]){re.escape(name)}(?!\w)", text):
            problems.append(f"symbol {name!r} as written: ...{text[max(m.start() - 40, 0) : m.end() + 20]}...")
    assert not problems, "\n".join(problems)


def test_the_hidden_layer_is_what_is_left_out():
    # the filter must not hide what a reader sees: a demo's PDF still shows its title and a unit in trade form
    text = visible_text(printed("flange-cool-down", "default").pdf)
    assert "Cool-down of a stress-relieved flange" in text and "°C" in text and "T∞" in text.replace(" ", "")
    everything = subprocess.run(
        ["pdftotext", "-enc", "UTF-8", "-", "-"], input=printed("flange-cool-down", "default").pdf, capture_output=True
    ).stdout.decode("utf-8")
    assert "T_inf" in everything  # the searchable layer keeps the input's names
