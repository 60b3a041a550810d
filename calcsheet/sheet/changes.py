"""The section "Changes since revision A" and the revision marks on the rows that changed.

``build --changes-since`` compares the sheet with an earlier one (review/diff.py gives the facts); this
module words them on the sheet, in prose and tables, with the words `calcsheet diff` uses
(change_words.py), and flags each table row whose item changed, which every writer shows as a bar in
the margin. The section describes a comparison, not the calculation: the fingerprint leaves it and the
marks out (review/fingerprint.py).
"""

from __future__ import annotations

from dataclasses import asdict, replace

from calcsheet.errors import visible
from calcsheet.sheet.change_facts import FORM, INPUT, RESULT, SIGNOFF, VERDICT, Baseline, Change
from calcsheet.sheet.change_words import HEADINGS, STATES, delta, grouped, label, shown
from calcsheet.sheet.document import Note, Paragraph, Section, Sheet, Table

SECTION_KEY = "changes"
# The table (Table.key) that lists each kind of item, by the Change's section and subject.
TABLE_OF = {
    (INPUT, "parameter"): "parameters",
    (INPUT, "parameter source"): "parameters",
    (INPUT, "tolerance"): "tolerances",
    (INPUT, "criterion"): "criteria",
    (INPUT, "criterion text"): "criteria",
    (INPUT, "criterion source"): "criteria",
    (INPUT, "criterion basis"): "criteria",
    (VERDICT, "criterion"): "criteria",
    (VERDICT, "worst case"): "worst_case",
    (RESULT, "value"): "values",
    (RESULT, "reach"): "reach",
    (RESULT, "extreme value"): "extremes",
    (RESULT, "extreme at"): "extremes",
    (RESULT, "worst value"): "worst_case",
    (RESULT, "sensitivity"): "sensitivities",
}
# The sections whose tables hold the results over the whole response: an ordinary sheet's steps, or a
# switched sheet's results across the switches (its intervals' own tables are not compared).
RESULT_SECTIONS = ("numbers", "extremes", "criteria", "margin", "across", "across_margin")
COUNTED = {
    VERDICT: ("verdict flips", "verdict flip"),
    INPUT: ("inputs changed", "input changed"),
    RESULT: ("results changed", "result changed"),
    FORM: ("solution forms changed", "solution form changed"),
}


def since_words(baseline: Baseline) -> str:
    """What the sheet is compared with, short: 'revision A', 'revision 1a2b3c4' (git), or the file's name."""
    if baseline.revision:
        return f"revision {baseline.revision}"
    if baseline.commit:
        return f"revision {baseline.commit}"
    return baseline.file


def with_changes(sheet: Sheet, changes: list[Change], baseline: Baseline, revision_now: str = "") -> Sheet:
    """``sheet`` with the section "Changes since ..." first and the changed rows of its tables marked;
    the JSON record gains ``changes_since`` (the facts as `calcsheet diff --format json` gives them)."""
    marked = tuple(_marked(section, changes) for section in sheet.sections)
    section = changes_section(changes, baseline, revision_now, any(any(t.changed) for t in _tables(marked)))
    record = {
        **sheet.record,
        "changes_since": {
            "file": baseline.file,
            "revision": baseline.revision,
            "git_revision": baseline.commit,
            "changes": [asdict(c) for c in changes],
        },
    }
    return replace(sheet, sections=(section,) + marked, record=record)


def changes_section(changes: list[Change], baseline: Baseline, revision_now: str = "", marks: bool = False) -> Section:
    since = since_words(baseline)
    blocks: list = [Paragraph(_lead(changes, baseline, marks))]
    if changes and baseline.revision and baseline.revision == revision_now:
        blocks.append(
            Note(
                "warning",
                f"This sheet still states revision {visible(revision_now)}, as the one it is compared with does; "
                "a changed sheet normally gets a new revision and a row in its revision history before it is issued.",
            )
        )
    for section, found in grouped(changes):
        if section == VERDICT:
            blocks.append(Note("warning", " ".join(_flip_sentence(c, since) for c in found)))
        if section == FORM:
            rows = tuple((label(c), shown(c, c.old), shown(c, c.new)) for c in found)
            blocks.append(Table(("Form", _first_up(since), "This sheet"), rows, HEADINGS[section]))
            continue
        rows = tuple((label(c), shown(c, c.old), shown(c, c.new), delta(c) or "-") for c in found)
        status = tuple(_verdict_status(c) for c in found) if section == VERDICT else ()
        blocks.append(
            Table(
                ("Item", _first_up(since), "This sheet", "Change"),
                rows,
                HEADINGS[section],
                row_status=status,
                status_column=2 if status else -1,
            )
        )
    return Section(SECTION_KEY, f"Changes since {since}", tuple(blocks))


def _lead(changes: list[Change], baseline: Baseline, marks: bool) -> str:
    if baseline.commit:
        what = f"{visible(baseline.file)} as git held it at {baseline.commit}" + (
            f" (revision {visible(baseline.revision)})" if baseline.revision else ""
        )
    else:
        what = f"the file {visible(baseline.file)}" + (
            f" (revision {visible(baseline.revision)})" if baseline.revision else ""
        )
    if not changes:
        return (
            f"This sheet is compared with {what}. Nothing it states has changed since: the inputs, results, "
            "verdicts and solution forms are as they were."
        )
    counts = []
    for section, found in grouped(changes):
        if section in COUNTED:
            many, one = COUNTED[section]
            counts.append(f"{len(found)} {one if len(found) == 1 else many}")
    stale = [c for c in changes if c.section == SIGNOFF and c.new == "stale"]
    if stale:
        counts.append(f"{len(stale)} sign-off{'s' if len(stale) > 1 else ''} out of date")
    text = f"This sheet is compared with {what}: " + (", ".join(counts) or "document parts changed") + "."
    if marks:
        text += " In the tables of the steps below, each row that changed carries a revision bar in the margin."
    return text


def _first_up(text: str) -> str:
    return text[:1].upper() + text[1:]


def _flip_sentence(change: Change, since: str) -> str:
    was, now = STATES.get(change.old, str(change.old)), STATES.get(change.new, str(change.new))
    if change.subject == "overall":
        return f"The sheet as a whole now reads {now}; at {since} it read {was}."
    return f"{_first_up(label(change))}: {now} now, {was} at {since}."


def _verdict_status(change: Change) -> str:
    return "pass" if change.new in ("pass", True) else "fail"


def _tables(sections):
    return [b for s in sections for b in s.blocks if isinstance(b, Table)]


def _marked(section: Section, changes: list[Change]) -> Section:
    rows_of: dict[str, set[int]] = {}
    for change in changes:
        table = TABLE_OF.get((change.section, change.subject))
        if table is None or change.row is None or not _holds(section.key, table, change.scope):
            continue
        rows_of.setdefault(table, set()).add(change.row)
    if not rows_of:
        return section
    blocks = tuple(
        replace(b, changed=tuple(k in rows_of[b.key] for k in range(len(b.rows))))
        if isinstance(b, Table) and b.key in rows_of
        else b
        for b in section.blocks
    )
    return replace(section, blocks=blocks)


def _holds(section_key: str, table: str, scope: str) -> bool:
    """Whether the section of this key shows the items a change of this table and scope is about."""
    if table == "parameters":
        return section_key == ("governing" if not scope else f"i{scope}_governing")
    return section_key in RESULT_SECTIONS
