"""User text made safe to show: control characters, ANSI escapes and bidirectional overrides
become visible escapes, so what a reader sees is what the text holds.

A terminal acts on an escape sequence or a carriage return, and a bidirectional override reorders
what follows it on screen (so a line can read differently from its bytes). Each such character is
written as ``\\xNN`` or ``\\uNNNN`` instead. Line breaks are left to the caller: the text record
indents continuation lines, HTML folds them into spaces.
"""

from __future__ import annotations

import re

# Every character str.splitlines() breaks at: LF, VT, FF, CR, FS, GS, RS, NEL, LS, PS.
LINE_BREAKS = "\n\x0b\x0c\r\x1c\x1d\x1e\x85\u2028\u2029"
# C0 and C1 controls, DEL, the bidirectional embeddings, overrides and isolates (U+202A-U+202E,
# U+2066-U+2069) and the two Unicode line separators. The plain direction marks (U+200E, U+200F)
# stay: they override nothing, and right-to-left text needs them.
_BREAK = re.compile("\r\n|[" + LINE_BREAKS + "]")
_UNSAFE = re.compile("[\x00-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069\u2028\u2029]")


def visible(text: str, keep: str = "") -> str:
    """``text`` with every unsafe character except those in ``keep`` written as an escape."""
    return _UNSAFE.sub(lambda m: m.group() if m.group() in keep else _escape(m.group()), text)


def record_lines(text: str, continuation: str) -> list[str]:
    """One record line per line of ``text``: the first as it is, each further one after
    ``continuation``, so a line break in user text can never start a record line of its own."""
    parts = _BREAK.split(text)
    return [visible(parts[0])] + [continuation + visible(part) for part in parts[1:]]


def _escape(char: str) -> str:
    code = ord(char)
    return f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}"
