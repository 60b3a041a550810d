"""The document parts of an input: ``[signoff]``, ``[[revisions]]``, the issue status and dates."""

from __future__ import annotations

import datetime as dt
import re
from typing import Any

from calcsheet.errors import ErrorList, InputError
from calcsheet.input_keys import FINGERPRINT_PATTERN, ROLES, SIGNATURE_KEYS, STATUSES, names
from calcsheet.model import Revision, SignOff

SIGNATURE_KEY_NAMES = frozenset(names(SIGNATURE_KEYS))
_FINGERPRINT = re.compile(FINGERPRINT_PATTERN.strip("^$"))


def iso_date(value: Any, where: str) -> str:
    """A date as YYYY-MM-DD, from a TOML date or text; empty stays empty."""
    if value in ("", None):
        return ""
    if isinstance(value, dt.datetime):
        value = value.date()
    if isinstance(value, dt.date):
        return value.isoformat()
    if isinstance(value, str):
        try:
            return dt.date.fromisoformat(value.strip()).isoformat()
        except ValueError:
            pass
        raise InputError(f"'{value}' is not a date written as YYYY-MM-DD", where)
    from calcsheet.source.text_rules import toml_kind

    raise InputError(f"must be a date written as YYYY-MM-DD, but found {toml_kind(value)}", where)


def signoff(table: Any, originator: str) -> tuple[SignOff, ...]:
    """Prepared, checked, approved; the originator prepares unless the table says otherwise."""
    rows, errors = [], []
    for role in ROLES:
        try:
            rows.append(_signoff_row(table, role, originator))
        except InputError as error:
            errors.append(error)
    _raise_all(errors)
    return tuple(rows)


def _signoff_row(table: dict, role: str, originator: str) -> SignOff:
    entry = table.get(role, {})
    where = f"signoff.{role}"
    if isinstance(entry, str):
        entry = {"name": entry}
    if not isinstance(entry, dict) or set(entry) - SIGNATURE_KEY_NAMES:
        raise InputError('must be a name in quotes or a table { name = "...", date = "YYYY-MM-DD" }', where)
    name = entry.get("name", originator if role == "prepared" else "")
    if not isinstance(name, str):
        raise InputError("the name must be text in quotes", f"{where}.name")
    fingerprint = entry.get("fingerprint", "")
    if "fingerprint" in entry and not (isinstance(fingerprint, str) and _FINGERPRINT.fullmatch(fingerprint)):
        raise InputError(
            "must be the 64 hexadecimal digits `calcsheet sign` writes; sign again rather than edit it",
            f"{where}.fingerprint",
        )
    if fingerprint and not name.strip():
        raise InputError("a signed entry needs the signer's name", f"{where}.name")
    return SignOff(role.capitalize(), name.strip(), iso_date(entry.get("date", ""), f"{where}.date"), fingerprint)


def issue_status(value: Any) -> str:
    """``[sheet] status``: one of STATUSES, "" when not stated."""
    if value in ("", None):
        return ""
    if not isinstance(value, str) or value.strip() not in STATUSES:
        shown = f"'{value}'" if isinstance(value, str) else _kind(value)
        raise InputError(f"{shown} is not an issue status (choose from {', '.join(STATUSES)})", "sheet.status")
    return value.strip()


def check_consistency(revision: str, rows: tuple[Revision, ...], signoffs: tuple[SignOff, ...]) -> None:
    """The revision label matches the last revision row, rows are in date order, and no sign-off is dated
    before the revision it signs."""
    errors = []
    if rows and revision != rows[-1].revision:
        errors.append(
            InputError(
                f"'{revision}' differs from the last [[revisions]] row ('{rows[-1].revision}'): "
                "the sheet's revision is its latest row",
                "sheet.revision",
            )
        )
    dated = [(index, row) for index, row in enumerate(rows, start=1) if row.date]
    for (_, earlier), (index, row) in zip(dated, dated[1:]):
        if row.date < earlier.date:
            errors.append(
                InputError(
                    f"{row.date} comes before the row above it ({earlier.date}): revision rows "
                    "go in date order, oldest first",
                    f"revisions[{index}].date",
                )
            )
    current = rows[-1].date if rows else ""
    for line in signoffs:
        if current and line.date and line.date < current:
            errors.append(
                InputError(
                    f"{line.date} is before the date of revision {rows[-1].revision} ({current}): "
                    "a sign-off cannot predate what it signs",
                    f"signoff.{line.role.lower()}.date",
                )
            )
    _raise_all(errors)


def _kind(value: Any) -> str:
    from calcsheet.source.text_rules import toml_kind

    return toml_kind(value)


def revisions(entries: list) -> tuple[Revision, ...]:
    """Every [[revisions]] table, each key checked on its own."""
    result, errors = [], []
    for index, entry in enumerate(entries):
        where = f"revisions[{index + 1}]"
        texts = {}
        for key in ("revision", "description"):
            value = entry.get(key, "")
            if not isinstance(value, str) or not value.strip():
                errors.append(InputError("must be non-empty text in quotes", f"{where}.{key}"))
            else:
                texts[key] = value.strip()
        try:
            date = iso_date(entry.get("date", ""), f"{where}.date")
        except InputError as error:
            errors.append(error)
            continue
        if len(texts) == 2:
            result.append(Revision(texts["revision"], date, texts["description"]))
    _raise_all(errors)
    return tuple(result)


def _raise_all(errors: list[InputError]) -> None:
    if len(errors) == 1:
        raise errors[0]
    if errors:
        raise ErrorList(errors)
