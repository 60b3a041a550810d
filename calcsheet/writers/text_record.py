"""The plain-text record, made for ``git diff``: one fact per line, no alignment padding.

Column padding would make one changed value ripple through a whole table, so rows are written
as fields separated by ' | ' and nothing else. User text cannot forge a line: a line break inside
a field continues on a line that starts with CONTINUATION, and control characters, ANSI escapes
and bidirectional overrides are written as visible escapes (writers/visible_text.py).
"""

from __future__ import annotations

from calcsheet.sheet.document import Equation, Figure, ItemList, Math, Note, Paragraph, Section, Sheet, Table
from calcsheet.writers.visible_text import record_lines

# Starts every line that continues a field across a line break; no record line starts so.
CONTINUATION = "  \u21b3 "


def write(sheet: Sheet, style=None) -> str:
    lines = [f"CALCULATION SHEET: {sheet.title_block.title}"]
    lines += [f"{label}: {value}" for label, value in sheet.title_block.fields]
    lines += ["", f"OUTCOME: {sheet.outcome.text}"] + [f"  {line}" for line in sheet.outcome.lines]
    for section in sheet.sections:
        lines += ["", _heading(section)] + [line for block in section.blocks for line in _block(block)]
    if sheet.revisions:
        lines += ["", "REVISIONS"] + [f"  {r.revision} | {r.date or '-'} | {r.description}" for r in sheet.revisions]
    lines += ["", "SIGN-OFF"] + [f"  {s.role}: name {s.name or '______'}  date {s.date or '______'}"
                                 for s in sheet.signoff]
    lines += ["", "CAUTION"] + [f"  {c}" for c in sheet.cautions]
    return "\n".join(safe for line in lines for safe in record_lines(line, CONTINUATION)) + "\n"


def _heading(section: Section) -> str:
    prefix = f"STEP {section.number}. " if section.number else ""
    return f"== {prefix}{section.title} =="


def _block(block) -> list[str]:
    if isinstance(block, Paragraph):
        return [block.text]
    if isinstance(block, Equation):
        label = f"   [{block.label}]" if block.label else ""
        return [f"    {block.math.text}{label}"]
    if isinstance(block, Note):
        return [f"{block.kind.upper()}: {block.text}"]
    if isinstance(block, ItemList):
        return [f"  - {item}" for item in block.items]
    if isinstance(block, Table):
        caption = [f"{block.caption}:"] if block.caption else []
        return caption + ["  " + " | ".join(block.header)] + ["  " + " | ".join(_cell(c) for c in row) for row in block.rows]
    if isinstance(block, Figure):
        first, last = block.curve[0][0], block.curve[-1][0]
        return [f"FIGURE: {block.title}: {block.y_label} against {block.x_label}, from {first:.4g} to {last:.4g}; "
                f"{len(block.curve)} curve points, {len(block.independent)} independent points, "
                f"{len(block.levels)} horizontal and {len(block.limits)} vertical guides"]
    raise TypeError(f"no text form for {type(block).__name__}")


def _cell(cell) -> str:
    return cell.text if isinstance(cell, Math) else str(cell)
