"""Small readers shared by the loader and the kinds: a declared name with its unit."""

from __future__ import annotations

import re

from calcsheet.errors import InputError

_DECLARED = re.compile(r"^\s*([A-Za-z][A-Za-z0-9_]*)\s*\[\s*(.*?)\s*\]\s*$")


def declared_parts(text, where: str) -> tuple[str, str]:
    """'v [V]' -> ('v', 'V')."""
    match = _DECLARED.match(text) if isinstance(text, str) else None
    if not match:
        raise InputError(f"'{text}' must be a name and a unit in brackets, e.g. \"v [V]\"", where)
    return match.group(1), match.group(2)
