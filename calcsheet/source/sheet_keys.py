"""The document parts of an input: ``[signoff]``, ``[[revisions]]`` and dates."""

from __future__ import annotations

import datetime as dt
from typing import Any

from calcsheet.errors import ErrorList, InputError
from calcsheet.model import Revision, SignOff

ROLES = ("prepared", "checked", "approved")


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
    if not isinstance(entry, dict) or set(entry) - {"name", "date"}:
        raise InputError("must be a name in quotes or a table { name = \"...\", date = \"YYYY-MM-DD\" }", where)
    name = entry.get("name", originator if role == "prepared" else "")
    if not isinstance(name, str):
        raise InputError("the name must be text in quotes", f"{where}.name")
    return SignOff(role.capitalize(), name.strip(), iso_date(entry.get("date", ""), f"{where}.date"))


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
