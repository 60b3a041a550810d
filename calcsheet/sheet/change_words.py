"""The words of one change between two sheets: what it is about, its old and new values, how much it moved.

One wording for every place a comparison is shown: `calcsheet diff` (review/diff_words.py, as text,
Markdown or JSON) and the section "Changes since revision A" on the sheet (sheet/changes.py). The facts
are ``change_facts.Change``; user text (names, checks) is shown through ``errors.visible``.
"""

from __future__ import annotations

from calcsheet.errors import visible
from calcsheet.formatting import number
from calcsheet.sheet.change_facts import FORM, INPUT, RESULT, SECTIONS, SIGNOFF, VERDICT, Change

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
    "worst value": "worst-case value of criterion",
    "sensitivity": "sensitivity of",
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
    "criterion source": "source of the limit of criterion",
    "criterion basis": "basis of the limit of criterion",
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
QUOTED = (
    "criterion",
    "criterion text",
    "criterion source",
    "criterion basis",
    "worst case",
    "worst value",
)  # names that are a check as written
STATES = {"pass": "PASS", "fail": "FAIL", "not assessed": "NOT ASSESSED", True: "PASS", False: "FAIL"}
ABSENT = "(none)"


def label(change: Change) -> str:
    """What the change is about, in words: 'parameter R', 'interval 2: time constant'."""
    if change.section == SIGNOFF and change.subject != "fingerprint":
        text = f"{change.subject} ({visible(change.name)})" if change.name else change.subject
    else:
        text = SUBJECTS.get(change.subject, change.subject)
        if change.name:
            text += f' "{visible(change.name)}"' if change.subject in QUOTED else f" {visible(change.name)}"
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


def grouped(changes: list[Change]):
    """(section, its changes) for each section that has any, in ``SECTIONS`` order."""
    for section in SECTIONS:
        found = [c for c in changes if c.section == section]
        if found:
            yield section, found
