"""The plain-text record, made for ``git diff``: one fact per line, no alignment padding.

Column padding would make one changed value ripple through a whole table, so rows are written
as fields separated by ' | ' and nothing else. User text cannot forge a line: a line break inside
a field continues on a line that starts with CONTINUATION, and control characters, ANSI escapes
and bidirectional overrides are written as visible escapes (writers/visible_text.py).
"""

from __future__ import annotations

from functools import partial

from calcsheet.sheet.document import (
    Equation,
    Figure,
    ItemList,
    Labels,
    Note,
    Paragraph,
    Section,
    Sheet,
    SignOffLine,
    Table,
)
from calcsheet.writers.dispatch import cell_kind, dispatch
from calcsheet.writers.visible_text import record_lines

# Starts every line that continues a field across a line break; no record line starts so.
CONTINUATION = "  \u21b3 "
WRITER = "text"


def write(sheet: Sheet, style=None) -> str:
    words = sheet.labels
    lines = [f"{words.sheet.upper()}: {sheet.title_block.title}"]
    lines += [f"{field.label}: {field.value}" for field in sheet.title_block.given]
    if sheet.review.fingerprint:
        lines.append(f"{words.fingerprint}: {sheet.review.fingerprint}")
    lines += ["", f"{words.outcome.upper()}: {sheet.outcome.text}"] + [f"  {line}" for line in sheet.outcome.lines]
    handlers = _handlers(words)
    for section in sheet.sections:
        lines += ["", _heading(section, words)]
        lines += [line for block in section.blocks for line in dispatch(block, handlers, WRITER)]
    if sheet.revisions:
        lines += ["", words.revisions.upper()]
        lines += [f"  {r.revision} | {r.date or '-'} | {r.description}" for r in sheet.revisions]
    lines += ["", words.signoff.upper()] + [_signoff_line(s, words) for s in sheet.signoff]
    lines += ["", words.cautions.upper()] + [f"  {c}" for c in sheet.cautions]
    return "\n".join(safe for line in lines for safe in record_lines(line, CONTINUATION)) + "\n"


def _signoff_line(line: SignOffLine, words: Labels) -> str:
    """'  Checked: name B. Checker  date 2026-03-02  state STALE: <why>'; the state only once it is known."""
    _, name, date, _ = (column.lower() for column in words.signoff_columns)
    text = f"  {line.role}: {name} {line.name or '______'}  {date} {line.date or '______'}"
    if line.state_text:
        text += f"  {words.signoff_state.lower()} {line.state_text}" + (f": {line.reason}" if line.reason else "")
    return text


def _heading(section: Section, words: Labels) -> str:
    prefix = f"{words.step.upper()} {section.number}. " if section.number else ""
    return f"== {prefix}{section.title} =="


def _handlers(words: Labels) -> dict:
    """One function per block kind (writers/dispatch.py names the kinds)."""
    return {
        "paragraph": _paragraph,
        "equation": _equation,
        "note": partial(_note, words=words),
        "list": _list,
        "table": _table,
        "figure": partial(_figure, words=words),
    }


def _paragraph(block: Paragraph) -> list[str]:
    return [block.text]


def _equation(block: Equation) -> list[str]:
    label = f"   [{block.label}]" if block.label else ""
    return [f"    {block.math.text}{label}"]


def _note(block: Note, words: Labels) -> list[str]:
    return [f"{words.note(block.kind).upper()}: {block.text}"]


def _list(block: ItemList) -> list[str]:
    return [f"  - {item}" for item in block.items]


# Starts a table row that changed since the sheet this one is compared with (Table.changed): the revision
# bar in the margin, in the column where an unchanged row has a space, so the row's own text stays put.
CHANGED_ROW = "| "
ROW = "  "


def _table(block: Table) -> list[str]:
    caption = [f"{block.caption}:"] if block.caption else []
    changed = block.changed or (False,) * len(block.rows)
    rows = [
        (CHANGED_ROW if mark else ROW) + " | ".join(_cell(c) for c in row) for row, mark in zip(block.rows, changed)
    ]
    return caption + [ROW + " | ".join(block.header)] + rows


def _figure(block: Figure, words: Labels) -> list[str]:
    summary = words.figure_summary.format(
        title=block.title,
        y_label=block.y_label,
        x_label=block.x_label,
        first=block.curve[0][0],
        last=block.curve[-1][0],
        curve=len(block.curve),
        independent=len(block.independent),
        levels=len(block.levels),
        limits=len(block.limits),
    )
    return [f"{words.figure.upper()}: {summary}"]


def _cell(cell) -> str:
    return cell.text if cell_kind(cell, WRITER) == "math" else cell
