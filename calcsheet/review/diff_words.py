"""The reports of `calcsheet diff`: plain text (coloured on a terminal), Markdown tables and JSON.

The comparison's facts come from ``diff.py``; the words of each change from ``sheet/change_words.py``,
which the sheet's section "Changes since revision A" shares. A new format is one more function here.
"""

from __future__ import annotations

import json
from dataclasses import asdict

import click

from calcsheet.errors import visible
from calcsheet.review.diff import FORM, SIGNOFF, VERDICT, Change, answer_changed
from calcsheet.sheet.change_words import HEADINGS, delta, grouped, label, shown

# Colours on a terminal: red for what got worse, green for what got better, as a reader of `git diff` expects.
WORSE, BETTER, NOTICE = "red", "green", "yellow"


def text_report(comparisons: list[tuple[str, str, list[Change]]], colour: bool = False) -> str:
    """Plain text for a terminal or a log: one heading per section, one line per change; with ``colour``,
    ANSI colours for a terminal (flips to FAIL red, to PASS green, stale sign-offs yellow)."""

    def paint(text: str, hue: str | None = None, bold: bool = False) -> str:
        return click.style(text, fg=hue, bold=bold) if colour and (hue or bold) else text

    lines = []
    for old_name, new_name, changes in comparisons:
        lines.append(paint(f"{visible(old_name)} -> {visible(new_name)}", bold=True))
        if not changes:
            lines.append("  no change")
        for section, found in grouped(changes):
            heading = f"  {HEADINGS[section]}:"
            lines.append(paint(heading, WORSE if section == VERDICT else None, bold=True))
            for change in found:
                if section == FORM:
                    lines.append(f"    {label(change)}:")
                    lines.append(paint(f"      old: {shown(change, change.old)}", WORSE))
                    lines.append(paint(f"      new: {shown(change, change.new)}", BETTER))
                    continue
                mark = "!! " if section == VERDICT else ""
                extra = delta(change)
                tail = f" ({extra})" if extra else ""
                line = f"    {mark}{label(change)}: {shown(change, change.old)} -> {shown(change, change.new)}{tail}"
                lines.append(paint(line, _hue(change), bold=section == VERDICT))
    return "\n".join(lines) + "\n"


def _hue(change: Change) -> str | None:
    """A flip to FAIL is red and to PASS green; a sign-off gone stale yellow; other changes uncoloured."""
    if change.section == VERDICT:
        return BETTER if change.new in ("pass", True) else WORSE
    if change.section == SIGNOFF and change.new == "stale":
        return NOTICE
    return None


def _cell(text: str) -> str:
    return text.replace("\\", "\\\\").replace("|", "\\|").replace("`", "'")


def markdown_report(comparisons: list[tuple[str, str, list[Change]]]) -> str:
    """Markdown for a pull-request comment: a table per section."""
    lines = []
    for old_name, new_name, changes in comparisons:
        lines += [f"## {_cell(visible(old_name))} → {_cell(visible(new_name))}", ""]
        if not changes:
            lines += ["No change.", ""]
        for section, found in grouped(changes):
            heading = f"**{HEADINGS[section]}**" if section == VERDICT else HEADINGS[section]
            lines += [f"### {heading}", "", "| item | old | new | change |", "|---|---|---|---|"]
            for change in found:
                old, new = _cell(shown(change, change.old)), _cell(shown(change, change.new))
                if section == FORM:
                    old, new = f"`{old}`", f"`{new}`"
                lines.append(f"| {_cell(label(change))} | {old} | {new} | {_cell(delta(change))} |")
            lines.append("")
    return "\n".join(lines)


def json_report(comparisons: list[tuple[str, str, list[Change]]]) -> str:
    """The facts for tools, with each comparison's answer_changed (what --exit-code reports)."""
    document = {
        "format": "calcsheet-diff",
        "version": 1,
        "comparisons": [
            {"old": old, "new": new, "answer_changed": answer_changed(changes), "changes": [asdict(c) for c in changes]}
            for old, new, changes in comparisons
        ],
    }
    return json.dumps(document, indent=2, ensure_ascii=False) + "\n"


REPORTS = {"text": text_report, "md": markdown_report, "json": json_report}


def report(fmt: str, comparisons: list[tuple[str, str, list[Change]]], colour: bool = False) -> str:
    """The report in ``fmt``; only the text for a terminal takes colour."""
    return text_report(comparisons, colour) if fmt == "text" else REPORTS[fmt](comparisons)
