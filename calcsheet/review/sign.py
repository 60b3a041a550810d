"""``calcsheet sign``: bind a role's signature to the content it vouches for, in the input file itself.

The entry is written with tomlkit, so every other byte of the file (comments, order, spacing, quoting)
stays as the engineer wrote it.
"""

from __future__ import annotations

import datetime as dt
from pathlib import Path

from calcsheet.errors import InputError
from calcsheet.review.states import CURRENT, lower_roles, role_states
from calcsheet.load.sheet_keys import ROLES, iso_date


def sign(
    path: Path, role: str, name: str, date: str | None, accept_failing: bool = False, *, build_sheet, write_file
) -> tuple[str, str]:
    """Write ``signoff.<role> = { name, date, fingerprint }`` into ``path``; returns (fingerprint, date).
    ``build_sheet`` and ``write_file`` are the pipeline's (the command line passes them): review sits beside
    the pipeline and does not import it, so the layers stay one-way."""

    if role not in ROLES:
        raise InputError(f"'{role}' is not a role (choose from {', '.join(ROLES)})", "--role", str(path))
    if not name.strip():
        raise InputError("the signer's name must not be empty", "--name", str(path))
    try:
        when = iso_date(date, "--date") if date else dt.date.today().isoformat()
    except InputError as error:
        raise error.located(file=str(path)) from None
    built = build_sheet(path)
    info, value = built.derivation.model.sheet, built.sheet.review.fingerprint
    where = f"signoff.{role}"
    if not built.derivation.passed and not accept_failing:
        raise InputError(
            "not signed: the sheet's criteria or verification fail (build it to see which); "
            "give --accept-failing to sign a failing sheet knowingly",
            where,
            str(path),
        )
    states = {s.role: s for s in role_states(info.signoff, value)}
    for lower in lower_roles(role):
        if states[lower].state != CURRENT:
            raise InputError(
                f"not signed: the {lower} sign-off is {states[lower].state}; roles sign in the order "
                f"{', '.join(ROLES)}, so sign {lower} for this content first",
                where,
                str(path),
            )
    if info.revisions and info.revisions[-1].date and when < info.revisions[-1].date:
        raise InputError(
            f"{when} is before the date of revision {info.revisions[-1].revision} "
            f"({info.revisions[-1].date}): a sign-off cannot predate what it signs",
            "--date",
            str(path),
        )
    text = path.read_text(encoding="utf-8")
    write_file(path, with_signature(text, role, name.strip(), when, value, str(path)))
    return value, when


def with_signature(text: str, role: str, name: str, date: str, fingerprint: str, file: str = "") -> str:
    """``text`` with the role's entry in ``[signoff]`` set (the table is added at the end if missing)."""
    import tomlkit
    from tomlkit.exceptions import TOMLKitError

    try:
        document = tomlkit.parse(text)
    except TOMLKitError as error:
        raise InputError(f"cannot be edited as TOML: {error}", file=file) from None
    entry = tomlkit.inline_table()
    entry.update({"name": name, "date": date, "fingerprint": fingerprint})
    table = document.get("signoff")
    if table is None:
        table = tomlkit.table()
        table.add(role, entry)
        if text and not text.endswith("\n"):
            document.add(tomlkit.nl())
        document.add("signoff", table)
    elif isinstance(table, dict):
        table[role] = entry
    else:
        raise InputError("must be a table of roles to add a signature to it", "signoff", file)
    return tomlkit.dumps(document)
