"""Text as a CSS string literal, for running heads and page stamps put in CSS ``content``: the sheet's PDF
and the package's bound PDF both write user text (titles, numbers) there, so both quote it here."""

from __future__ import annotations


def css_string(text: str) -> str:
    """Text as a CSS string literal: quotes, backslashes, angle brackets and control characters escaped."""
    out = []
    for char in text:
        if char in '"\\<>' or ord(char) < 32:
            out.append(f"\\{ord(char):x} ")
        else:
            out.append(char)
    return '"' + "".join(out) + '"'
