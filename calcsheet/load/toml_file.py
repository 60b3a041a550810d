"""Reading an input or package file: bounded in size, UTF-8, TOML; every problem one InputError."""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

from calcsheet.errors import InputError
from calcsheet.source.text_rules import MAX_FILE_BYTES

_TOML_POSITION = re.compile(r"\(at line (\d+), column (\d+)\)$")


def read_toml(path: Path) -> dict:
    """The input's tables; every problem reading it is one InputError (with its line where TOML gives one)."""
    try:
        with path.open("rb") as handle:
            data = handle.read(MAX_FILE_BYTES + 1)
    except OSError as exc:
        raise InputError(f"cannot read the file ({exc.strerror or exc})")
    return read_toml_bytes(data)


def read_toml_text(text: str) -> dict:
    """TOML given as text rather than in a file (the Python API's ``load``), within the same bounds."""
    try:
        data = text.encode("utf-8")
    except UnicodeEncodeError:  # a lone surrogate: not text a file could hold
        raise InputError("the file is not UTF-8 text") from None
    return read_toml_bytes(data)


def read_toml_bytes(data: bytes) -> dict:
    """The tables of an input's bytes; every problem one InputError, as ``read_toml`` reports it."""
    if len(data) > MAX_FILE_BYTES:
        raise InputError(f"the file is larger than {MAX_FILE_BYTES:,} bytes; an input is a short text")
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError:
        raise InputError("the file is not UTF-8 text")
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        message = str(exc)
        position = _TOML_POSITION.search(message)
        if position:
            line, column = int(position.group(1)), int(position.group(2))
            raise InputError(f"not valid TOML: {message[: position.start()].strip()}", line=line, column=column)
        raise InputError(f"not valid TOML: {message}")
    except RecursionError:
        raise InputError("not valid here: lists or tables are nested too deeply to be read") from None
    except (ValueError, MemoryError) as exc:  # an integer of thousands of digits, say
        raise InputError(f"cannot be read: {type(exc).__name__} while reading a value (a number too long?)")
