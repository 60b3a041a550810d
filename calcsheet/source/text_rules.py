"""What any text in an input may hold, and how big an input may be, checked before anything reads it.

Every string and key in the file is checked once, where it sits, so the message names its key:

- no control characters (C0, DEL, C1: this covers ANSI escape sequences, which start with ESC),
  no bidirectional marks, embeddings, overrides or isolates (U+061C, U+200E, U+200F,
  U+202A-U+202E, U+2066-U+2069) and no line or paragraph separators (U+2028, U+2029);
- a line break (``\\n``) only in the multi-line fields, ``sheet.purpose`` and each item of
  ``sheet.assumptions``; every other field is one line;
- bounded sizes: the file, each string, each key, and how deeply tables and lists nest.
"""

from __future__ import annotations

import datetime as dt
import re

from calcsheet.errors import InputError, key_part

MAX_FILE_BYTES = 1_000_000
MAX_TEXT = 5_000  # characters in a one-line field (equations and values have tighter bounds of their own)
MAX_MULTI_LINE_TEXT = 20_000  # characters in a multi-line field
MAX_KEY = 100  # characters in a key
MAX_NESTING = 8  # tables and lists inside each other; the format needs 4 (switch[1].parameters.R.value)

_MULTI_LINE = re.compile(r"sheet\.purpose|sheet\.assumptions\[\d+\]")
_FORBIDDEN = re.compile("[\x00-\x09\x0b-\x1f\x7f-\x9f\u061c\u200e\u200f\u2028\u2029\u202a-\u202e\u2066-\u2069]")


def toml_kind(value) -> str:
    """What a TOML value is, in the words of the format: text, a number, true/false, a table, ..."""
    if isinstance(value, bool):
        return "true/false"
    if isinstance(value, (int, float)):
        return "a number"
    if isinstance(value, str):
        return "text"
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, list):
        return "a list"
    if isinstance(value, (dt.date, dt.time)):
        return "a date or time"
    return "a value of another kind"


def check_raw(raw: dict) -> list[InputError]:
    """Every problem of size or characters in the parsed file, each naming its key."""
    errors: list[InputError] = []
    stack = [("", raw, 0)]
    while stack:
        where, value, depth = stack.pop()
        if depth > MAX_NESTING:
            errors.append(InputError(f"tables and lists are nested more than {MAX_NESTING} deep", where))
            continue
        if isinstance(value, dict):
            children = []
            for key, item in value.items():
                path = f"{where}.{key_part(key)}" if where else key_part(key)
                problem = _key_problem(key)
                if problem:
                    errors.append(InputError(problem, path))
                else:
                    children.append((path, item, depth + 1))
            stack.extend(reversed(children))
        elif isinstance(value, list):
            stack.extend(reversed([(f"{where}[{i + 1}]", item, depth + 1) for i, item in enumerate(value)]))
        elif isinstance(value, str):
            problem = text_problem(value, multi_line=bool(_MULTI_LINE.fullmatch(where)))
            if problem:
                errors.append(InputError(problem, where))
    return errors


def text_problem(text: str, multi_line: bool = False) -> str:
    """Why ``text`` may not stand in a field, or '' if it may."""
    limit = MAX_MULTI_LINE_TEXT if multi_line else MAX_TEXT
    if len(text) > limit:
        return f"is {len(text)} characters long; a field holds at most {limit}"
    if not multi_line and "\n" in text:
        return "holds a line break; this field is one line (only purpose and assumptions may have several)"
    found = _FORBIDDEN.search(text)
    if found:
        return (
            f"holds the control or text-direction character U+{ord(found.group(0)):04X} at position "
            f"{found.start() + 1}; write plain text"
        )
    return ""


def _key_problem(key: str) -> str:
    if not key:
        return "an empty key name; give every value a name"
    if len(key) > MAX_KEY:
        return f"a key name of {len(key)} characters; at most {MAX_KEY}"
    if _FORBIDDEN.search(key) or "\n" in key:
        return "a key name holding control or text-direction characters"
    return ""
