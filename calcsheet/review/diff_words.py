"""The words of `calcsheet diff`: plain text, Markdown tables and JSON from the facts of ``diff.py``.

Kept apart from the comparison so that the facts stay testable without wording, and so that a new
format is one more function here. User text (names, checks) is shown through ``errors.visible``.
"""

from __future__ import annotations

import json
from dataclasses import asdict

from calcsheet.errors import visible
from calcsheet.formatting import number
from calcsheet.review.diff import FORM, INPUT, RESULT, SECTIONS, SIGNOFF, VERDICT, Change, answer_changed

HEADINGS = {
    VERDICT: "VERDICT FLIPS",
    INPUT: "Inputs changed",
    RESULT: "Results changed",
    FORM: "Solution forms changed",
    SIGNOFF: "Sign-off consequences",
}
SUBJECTS = {
    "criterion": "criterion",
    "overall": "overall verdict",
    "worst case": "at worst case of the tolerances, criterion",
    "tolerance": "range of parameter",
    "parameter": "parameter",
    "parameter source": "source of parameter",
    "initial at": "initial condition, at",
    "initial value": "initial condition, value",
    "interval": "interval",
    "switch": "switch",
    "equation": "equation",
    "kind": "model kind",
    "forcing": "forcing",
    "criterion text": "wording of criterion",
    "value": "value",
    "reach": "time to reach",
    "extreme value": "extreme",
    "extreme at": "instant of extreme",
    "time_constant": "time constant",
    "final_value": "final value",
    "integrating_factor": "integrating factor",
    "general": "general solution",
    "particular": "particular solution",
    "natural": "natural response",
    "forced": "forced response",
    "fingerprint": "fingerprint",
}
STATES = {"pass": "PASS", "fail": "FAIL", "not assessed": "NOT ASSESSED", True: "PASS", False: "FAIL"}
ABSENT = "(none)"


def label(change: Change) -> str:
    """What the change is about, in words: 'parameter R', 'interval 2: time constant'."""
    if change.section == SIGNOFF and change.subject != "fingerprint":
        text = f"{change.subject} ({visible(change.name)})" if change.name else change.subject
    else:
        text = SUBJECTS.get(change.subject, change.subject)
        if change.name:
            text += (
                f' "{visible(change.name)}"'
                if change.subject in ("criterion", "criterion text", "worst case")
                else f" {visible(change.name)}"
            )
    return f"interval {change.scope}: {text}" if change.scope else text


def shown(change: Change, value) -> str:
    """An old or new value as a reader wants it: a verdict in capitals, a quantity with its unit."""
    if change.section == VERDICT:
        return STATES.get(value, str(value))
    if change.subject == "fingerprint":
        return value[:12] if value else ABSENT
    if change.subject == "interval":
        return "present" if value else "absent"
    if isinstance(value, dict):
        amount = value.get("value")
        if amount is None:
            return "not reached"
        figure = number(amount) if isinstance(amount, (int, float)) else visible(str(amount))
        return f"{figure} {visible(str(value.get('unit', '')))}".strip()
    if value is None:
        return ABSENT
    return visible(str(value))


def delta(change: Change) -> str:
    """The absolute change in the old value's unit and the relative change in per cent, where known."""
    parts = []
    if change.absolute is not None and change.section == RESULT:
        unit = change.old.get("unit", "") if isinstance(change.old, dict) else ""
        parts.append(f"{'+' if change.absolute > 0 else ''}{number(change.absolute)} {unit}".strip())
    if change.relative is not None:
        parts.append(f"{'+' if change.relative > 0 else ''}{number(100 * change.relative)} %")
    if change.section == SIGNOFF and change.new == "stale":
        parts.append("re-check required")
    return ", ".join(parts)


def _grouped(changes: list[Change]):
    for section in SECTIONS:
        found = [c for c in changes if c.section == section]
        if found:
            yield section, found


def text_report(comparisons: list[tuple[str, str, list[Change]]]) -> str:
    """Plain text for a terminal or a log: one heading per section, one line per change."""
    lines = []
    for old_name, new_name, changes in comparisons:
        lines.append(f"{visible(old_name)} -> {visible(new_name)}")
        if not changes:
            lines.append("  no change")
        for section, found in _grouped(changes):
            lines.append(f"  {HEADINGS[section]}:")
            for change in found:
                if section == FORM:
                    lines.append(f"    {label(change)}:")
                    lines.append(f"      old: {shown(change, change.old)}")
                    lines.append(f"      new: {shown(change, change.new)}")
                    continue
                mark = "!! " if section == VERDICT else ""
                extra = delta(change)
                tail = f" ({extra})" if extra else ""
                lines.append(
                    f"    {mark}{label(change)}: {shown(change, change.old)} -> {shown(change, change.new)}{tail}"
                )
    return "\n".join(lines) + "\n"


def _cell(text: str) -> str:
    return text.replace("\\", "\\\\").replace("|", "\\|").replace("`", "'")


def markdown_report(comparisons: list[tuple[str, str, list[Change]]]) -> str:
    """Markdown for a pull-request comment: a table per section."""
    lines = []
    for old_name, new_name, changes in comparisons:
        lines += [f"## {_cell(visible(old_name))} → {_cell(visible(new_name))}", ""]
        if not changes:
            lines += ["No change.", ""]
        for section, found in _grouped(changes):
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
