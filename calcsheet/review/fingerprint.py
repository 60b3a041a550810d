"""The content fingerprint: SHA-256 of the canonical record, the part of a sheet a signature vouches for.

The canonical record is the text record (writers/text_record.py) of the composed Sheet with its
document parts left out: the sign-off block, the revision rows, the title block's revision, issue
status and originator, the fingerprint itself, and a comparison with an earlier sheet (the section
"Changes since ..." and the revision marks on changed rows, from build --changes-since). Every
table's rows are taken in sorted order, and so are the outcome's criterion lines, so that listing
the same parameters, points or criteria in another order in the input is not a change. Everything
else the record shows counts: the inputs as the sheet states them, every derived line, and the words
around them.
"""

from __future__ import annotations

import hashlib
from dataclasses import replace

from calcsheet.sheet.changes import SECTION_KEY as CHANGES
from calcsheet.sheet.document import Math, Review, Sheet, Table

SHOWN_DIGITS = 12  # digits printed on the pages and in the title block


def fingerprint(sheet: Sheet) -> str:
    """64 lowercase hex digits."""
    return hashlib.sha256(canonical_text(sheet).encode("utf-8")).hexdigest()


def canonical_text(sheet: Sheet) -> str:
    from calcsheet.writers.text_record import write

    return write(canonical_sheet(sheet))


def canonical_sheet(sheet: Sheet) -> Sheet:
    """``sheet`` without the parts that record a signature, a revision or a comparison rather than the calculation."""
    block = sheet.title_block
    blank = {name: replace(getattr(block, name), value="") for name in ("revision", "status", "originator")}
    return replace(
        sheet,
        title_block=replace(block, **blank),
        signoff=(),
        revisions=(),
        review=Review(),
        outcome=replace(sheet.outcome, lines=tuple(sorted(sheet.outcome.lines))),
        sections=tuple(
            replace(section, blocks=tuple(_rows_sorted(b) for b in section.blocks))
            for section in sheet.sections
            if section.key != CHANGES
        ),
    )


def _rows_sorted(block):
    if not isinstance(block, Table):
        return block
    block = replace(block, changed=())
    if len(block.rows) < 2:
        return block
    statuses = block.row_status or ("",) * len(block.rows)
    pairs = sorted(zip(block.rows, statuses), key=lambda pair: tuple(_text(cell) for cell in pair[0]))
    return replace(
        block,
        rows=tuple(row for row, _ in pairs),
        row_status=tuple(status for _, status in pairs) if block.row_status else (),
    )


def _text(cell) -> str:
    return cell.text if isinstance(cell, Math) else str(cell)
