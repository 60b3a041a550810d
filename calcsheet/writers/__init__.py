"""Writers: one module per output format, each a function Sheet -> text, registered by name.

A writer only reads the Sheet. Adding a format means adding a module here with a
``write(sheet, style) -> str | bytes`` function and one line in WRITERS.
"""

from __future__ import annotations

from importlib import import_module

WRITERS = {
    "pdf": "calcsheet.writers.pdf",
    "html": "calcsheet.writers.html",
    "json": "calcsheet.writers.json_record",
    "txt": "calcsheet.writers.text_record",
}


def writer_for(name: str):
    """The ``write`` function of a format, imported only when asked for (keeps start-up quick)."""
    return import_module(WRITERS[name]).write
