"""Small readers shared by the loader and the kinds: a declared name with its unit."""

from __future__ import annotations

import re

from calcsheet.errors import InputError, shortened

MAX_DECLARED = 200
# Applied to stripped text; the unit part excludes brackets, so the match is linear in the length.
_DECLARED = re.compile(r"([A-Za-z][A-Za-z0-9_]*)\s*\[([^\[\]]*)\]")


def declared_parts(text, where: str) -> tuple[str, str]:
    """'v [V]' -> ('v', 'V')."""
    if isinstance(text, str) and len(text) > MAX_DECLARED:
        raise InputError(f"is {len(text)} characters long; a name with its unit has at most {MAX_DECLARED}", where)
    if not isinstance(text, str):
        from calcsheet.source.text_rules import toml_kind

        raise InputError(
            f'must be a name and a unit in brackets, in quotes, e.g. "v [V]", but found {toml_kind(text)}', where
        )
    match = _DECLARED.fullmatch(text.strip())
    if not match:
        raise InputError(f"'{shortened(text)}' must be a name and a unit in brackets, e.g. \"v [V]\"", where)
    return match.group(1), match.group(2).strip()
