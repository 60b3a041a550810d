"""The machine-readable record: the Sheet's structured results as stable, sorted JSON.

json.dumps already escapes C0 controls; DEL, C1 controls, bidirectional overrides and the Unicode
line separators it leaves raw are written as \\uNNNN too, so the file shows in a terminal or a
diff as what it holds. A JSON reader gets the same strings either way.
"""

from __future__ import annotations

import json
import re

from calcsheet.sheet.document import Sheet

_RAW_UNSAFE = re.compile("[\x7f-\x9f\u202a-\u202e\u2066-\u2069\u2028\u2029]")


def write(sheet: Sheet, style=None) -> str:
    text = json.dumps(sheet.record, indent=2, sort_keys=True, ensure_ascii=False) + "\n"
    return _RAW_UNSAFE.sub(lambda m: f"\\u{ord(m.group()):04x}", text)
