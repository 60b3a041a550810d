"""The document parts of an input: ``[signoff]``, ``[[revisions]]`` and dates."""

from __future__ import annotations

import datetime as dt
from typing import Any

from calcsheet.errors import InputError
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


def signoff(table: Any, originator: str) -> tuple[SignOff, ...]:
    """Prepared, checked, approved; the originator prepares unless the table says otherwise."""
    rows = []
    for role in ROLES:
        entry = table.get(role, {})
        where = f"signoff.{role}"
        if isinstance(entry, str):
            entry = {"name": entry}
        if not isinstance(entry, dict) or set(entry) - {"name", "date"}:
            raise InputError("must be a name in quotes or a table { name = \"...\", date = \"YYYY-MM-DD\" }", where)
        name = entry.get("name", originator if role == "prepared" else "")
        if not isinstance(name, str):
            raise InputError("the name must be text in quotes", f"{where}.name")
        rows.append(SignOff(role.capitalize(), name.strip(), iso_date(entry.get("date", ""), f"{where}.date")))
    return tuple(rows)


def revisions(entries: list) -> tuple[Revision, ...]:
    result = []
    for index, entry in enumerate(entries):
        where = f"revisions[{index + 1}]"
        texts = {}
        for key in ("revision", "description"):
            value = entry.get(key, "")
            if not isinstance(value, str) or not value.strip():
                raise InputError("must be non-empty text in quotes", f"{where}.{key}")
            texts[key] = value.strip()
        result.append(Revision(texts["revision"], iso_date(entry.get("date", ""), f"{where}.date"), texts["description"]))
    return tuple(result)
