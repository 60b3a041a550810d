"""The package register: one row per sheet (identity, verdict, verification, sign-off states, fingerprint,
pages, what it uses), written as CSV, JSON and a self-contained HTML page. Its words are here."""

from __future__ import annotations

import csv
import io
import json
from dataclasses import dataclass

from markupsafe import escape

from calcsheet.errors import visible
from calcsheet.load.package_file import Package
from calcsheet.load.references import SheetEntry
from calcsheet.unit_text import units_after_numbers

ROLES = ("prepared", "checked", "approved")


@dataclass(frozen=True)
class Row:
    file: str
    number: str
    title: str
    revision: str
    status: str  # the issue status: preliminary, for check, issued, superseded
    verdict: str  # PASS, FAIL or NOT BUILT
    criteria: str  # "2 of 3 criteria pass"
    verification: str  # passed, FAILED or ""
    signoff: dict  # role -> current, stale or unsigned
    fingerprint: str
    pages: int | None
    basis: tuple[str, ...]
    upstream: tuple[str, ...]  # "EL-014 rev B"
    problem: str = ""  # why it did not build


def built_row(entry: SheetEntry, built, pages: int | None, upstream: tuple[str, ...]) -> Row:
    return row_from_facts(entry, row_facts(built, pages), upstream)


def row_facts(built, pages: int | None) -> dict:
    """What the register shows of a built sheet, as plain values: the build cache keeps them, so that a
    sheet reused from the cache gets its row without being built."""
    from calcsheet.review.status import sheet_status

    state = sheet_status(built)
    verdicts = built.derivation.numbers.verdicts if hasattr(built.derivation, "numbers") else ()
    passed = sum(v.status == "pass" for v in verdicts)
    margin = getattr(built.derivation, "margin", None)
    at_worst = [
        f"#{k}"
        for k, (v, w) in enumerate(zip(verdicts, margin.worst if margin else ()), 1)
        if v.status == "pass" and w is not None and not w.passed
    ]
    info = built.derivation.model.sheet
    return {
        "number": info.number,
        "title": info.title,
        "revision": info.revision,
        "status": info.status,
        "verdict": "PASS" if built.derivation.passed else "FAIL",
        "criteria": (f"{passed} of {len(verdicts)} criteria pass" if verdicts else "no criteria")
        + (f"; fail at worst case: {', '.join(at_worst)}" if at_worst else ""),
        "verification": "passed" if built.derivation.verification.passed else "FAILED",
        "signoff": {r.role: r.state for r in state.roles},
        "fingerprint": state.fingerprint,
        "pages": pages,
    }


def row_from_facts(entry: SheetEntry, facts: dict, upstream: tuple[str, ...]) -> Row:
    return Row(file=str(entry.path), basis=entry.basis_used, upstream=upstream, **facts)


def failed_row(entry: SheetEntry, problem: str, upstream: tuple[str, ...]) -> Row:
    return Row(
        file=str(entry.path),
        number=entry.number,
        title="",
        revision=entry.revision,
        status="",
        verdict="NOT BUILT",
        criteria="",
        verification="",
        signoff={role: "" for role in ROLES},
        fingerprint="",
        pages=None,
        basis=entry.basis_used,
        upstream=upstream,
        problem=problem,
    )


COLUMNS = (
    "number",
    "title",
    "revision",
    "status",
    "verdict",
    "criteria",
    "verification",
    *(f"{role} sign-off" for role in ROLES),
    "fingerprint",
    "pages",
    "design basis used",
    "sheets used",
    "file",
    "problem",
)


def _cells(row: Row) -> list[str]:
    return [
        row.number,
        row.title,
        row.revision,
        row.status,
        row.verdict,
        row.criteria,
        row.verification,
        *(row.signoff.get(role, "") for role in ROLES),
        row.fingerprint,
        "" if row.pages is None else str(row.pages),
        "; ".join(row.basis),
        "; ".join(row.upstream),
        row.file,
        row.problem,
    ]


def register_csv(rows: list[Row]) -> str:
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(COLUMNS)
    for row in rows:
        writer.writerow([visible(cell) for cell in _cells(row)])
    return buffer.getvalue()


def register_json(package: Package, rows: list[Row]) -> str:
    document = {
        "format": "calcsheet-register",
        "version": 1,
        "package": {
            "title": package.title,
            "number": package.number,
            "revision": package.revision,
            "project": package.project,
            "client": package.client,
        },
        "basis": [
            {"name": b.name, "value": b.value, "source": b.source or None, **_range(b.entry)}
            for b in package.basis.values()
        ],
        "sheets": [
            {
                "file": r.file,
                "number": r.number,
                "title": r.title,
                "revision": r.revision,
                "status": r.status,
                "verdict": r.verdict,
                "criteria": r.criteria,
                "verification": r.verification,
                "signoff": r.signoff,
                "fingerprint": r.fingerprint,
                "pages": r.pages,
                "basis": list(r.basis),
                "upstream": list(r.upstream),
                "problem": r.problem or None,
            }
            for r in rows
        ],
    }
    return json.dumps(document, indent=2, sort_keys=True, ensure_ascii=False) + "\n"


def _range(entry: dict) -> dict:
    return {key: str(entry[key]) for key in ("tolerance", "min", "max") if key in entry}


def register_html(package: Package, rows: list[Row]) -> str:
    """A page a reviewer opens first: the package's identity, the basis with its sources, one row per sheet."""
    head = " · ".join(
        visible(x)
        for x in (package.number, f"rev {package.revision}" if package.revision else "", package.project)
        if x
    )
    failing = sum(r.verdict != "PASS" for r in rows)
    summary = f"{len(rows)} sheets; {len(rows) - failing} pass" + (
        f", {failing} fail or did not build" if failing else ""
    )
    basis_rows = "".join(
        f"<tr><td>{escape(visible(b.name))}</td><td>{escape(units_after_numbers(visible(b.value)))}</td>"
        f"<td>{escape(units_after_numbers(visible(_range_text(b.entry))))}</td>"
        f"<td>{escape(visible(b.source) or 'no source given')}</td></tr>"
        for b in package.basis.values()
    )
    shown = ("number", "title", "revision", "status", "verdict", "criteria", "verification")
    sheet_rows = []
    for row in rows:
        cells = dict(zip(COLUMNS, _cells(row)))
        if not cells["status"] and not row.problem:  # the CSV and JSON keep "": a reader of the page sees why
            cells["status"] = "not stated"
        verdict_class = {"PASS": "pass", "FAIL": "fail"}.get(row.verdict, "notbuilt")
        tds = "".join(
            f'<td class="{verdict_class}">{escape(visible(cells[c]))}</td>'
            if c == "verdict"
            else f"<td>{escape(visible(cells[c]))}</td>"
            for c in shown
        )
        signs = "".join(f"<td>{escape(row.signoff.get(role, ''))}</td>" for role in ROLES)
        uses = "; ".join([*row.basis, *row.upstream])
        note = f"<br><small>{escape(visible(row.problem))}</small>" if row.problem else ""
        sheet_rows.append(
            f"<tr>{tds}{signs}<td><code>{escape(row.fingerprint[:12])}</code></td>"
            f"<td>{'' if row.pages is None else row.pages}</td><td>{escape(visible(uses))}{note}</td></tr>"
        )
    title = escape(visible(package.title))
    return f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><title>{title}: register</title>
<style>
body {{ font-family: sans-serif; margin: 2em; color: #111; }}
table {{ border-collapse: collapse; margin: 1em 0; font-size: 0.9em; }}
th, td {{ border: 1px solid #999; padding: 0.25em 0.5em; text-align: left; vertical-align: top; }}
th {{ background: #eee; }}
td.fail, td.notbuilt {{ font-weight: bold; text-decoration: underline; }}
.caution {{ border-left: 4px solid #555; padding-left: 0.75em; }}
</style></head><body>
<h1>{title}</h1>
<p>{escape(head)}{"<br>Client: " + str(escape(visible(package.client))) if package.client else ""}</p>
<h2>Register of sheets</h2>
<p>{escape(summary)}</p>
<table><thead><tr><th>Number</th><th>Title</th><th>Rev</th><th>Issue status</th><th>Verdict</th><th>Criteria</th>
<th>Verification</th><th>Prepared</th><th>Checked</th><th>Approved</th><th>Fingerprint</th><th>Pages</th>
<th>Uses</th></tr></thead>
<tbody>{"".join(sheet_rows)}</tbody></table>
<h2>Design basis</h2>
<table><thead><tr><th>Name</th><th>Value</th><th>Range</th><th>Source</th></tr></thead>
<tbody>{basis_rows}</tbody></table>
<p class="caution">Each sheet is a calculation to be reviewed; review by a licensed engineer governs any use,
under the codes and practice that apply where the work is built.</p>
</body></html>
"""


def _range_text(entry: dict) -> str:
    parts = [f"{key} {entry[key]}" for key in ("tolerance", "min", "max") if key in entry]
    return ", ".join(parts)
