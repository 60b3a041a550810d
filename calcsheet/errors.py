"""User-facing errors: each knows where in the input it points and how the command should exit."""

from __future__ import annotations

import re

EXIT_OK = 0
EXIT_CHECK_FAILED = 1
EXIT_INPUT_ERROR = 2

# A key part that needs no quotes: TOML's bare-key characters. Anything else is shown quoted.
_BARE_KEY = re.compile(r"[A-Za-z0-9_-]+")
# Characters that could forge or hide text on a terminal or in a record: C0 and C1 controls,
# DEL, bidirectional marks, embeddings, overrides and isolates, line and paragraph separators.
_HIDDEN = re.compile("[\x00-\x1f\x7f-\x9f\u061c\u200e\u200f\u2028\u2029\u202a-\u202e\u2066-\u2069]")
_MESSAGE_LIMIT = 1000  # characters of one message line; longer ones are cut with an ellipsis


def visible(text: str) -> str:
    """``text`` with every control or bidirectional character written as an escape (\\x1b, \\u202e)."""
    return _HIDDEN.sub(lambda m: _escape(m.group(0)), text)


def _escape(char: str) -> str:
    code = ord(char)
    return f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}"


def key_part(name) -> str:
    """One part of a key path as the user can read it: bare if TOML allows it, else quoted and escaped."""
    name = str(name)
    if _BARE_KEY.fullmatch(name):
        return name
    shown = visible(name.replace("\\", "\\\\").replace('"', '\\"'))
    if len(shown) > 60:
        shown = shown[:57] + "..."
    return f'"{shown}"'


class CalcsheetError(Exception):
    """An error the user can act on; never shown as a traceback."""

    exit_code = EXIT_INPUT_ERROR

    def __init__(self, message: str, key: str = "", file: str = "", line: int = 0, column: int = 0):
        super().__init__(message)
        self.message = message
        self.key = key
        self.file = file
        self.line = line  # a position in the file, for errors of the TOML syntax itself
        self.column = column

    def located(self, file: str = "", key: str = "") -> "CalcsheetError":
        """Fill in the file and key where the raiser could not know them."""
        if not self.file:
            self.file = file
        if not self.key:
            self.key = key
        return self

    def __str__(self) -> str:
        message = visible(self.message)
        if len(message) > _MESSAGE_LIMIT:
            message = message[: _MESSAGE_LIMIT - 3] + "..."
        if self.line:  # file:LINE:COLUMN: message, the form editors jump to
            return f"{visible(self.file)}:{self.line}:{self.column}: {message}"
        parts = [visible(p) for p in (self.file, self.key) if p]
        return ": ".join(parts + [message])


class InputError(CalcsheetError):
    """The input file is malformed, inconsistent or unsafe."""


class ModelRefused(CalcsheetError):
    """The stated model is valid but not a first-order linear ODE, so it cannot be solved here."""


class ErrorList(CalcsheetError):
    """Several independent input errors, shown one per line."""

    def __init__(self, errors: list[CalcsheetError]):
        super().__init__("; ".join(str(e) for e in errors))
        self.errors = errors

    def located(self, file: str = "", key: str = "") -> "ErrorList":
        for error in self.errors:
            error.located(file=file, key=key)
        return super().located(file, key)

    def __str__(self) -> str:
        return "\n".join(str(e) for e in self.errors)


def shortened(text, limit: int = 80) -> str:
    """User text echoed in a message: runs of spaces closed up, and cut with an ellipsis past ``limit``."""
    text = " ".join(str(text).split())
    return text if len(text) <= limit else text[: limit - 3] + "..."
