"""The machine-readable record: the Sheet's structured results as stable, sorted JSON."""

from __future__ import annotations

import json

from calcsheet.sheet.document import Sheet


def write(sheet: Sheet, style=None) -> str:
    return json.dumps(sheet.record, indent=2, sort_keys=True, ensure_ascii=False) + "\n"
