"""The one dispatch from sheet nodes to writers' handlers, failing loudly on a node no writer knows.

A block a writer cannot show must stop the build, not vanish from the sheet: every writer asks
here for a node's kind and hands it to its own handler for that kind. The text writer calls
``dispatch`` with a table of functions; the HTML and PDF template asks ``block_kind`` (as its
``kind`` filter) and ends its branches with ``unhandled``, so a new node type raises in every
writer until each has a form for it.
"""

from __future__ import annotations

from typing import Callable, Mapping

from calcsheet.sheet import document as doc

# Every block node a Section may hold, by the name its handlers are filed under.
BLOCK_KINDS: dict[type, str] = {
    doc.Paragraph: "paragraph",
    doc.Equation: "equation",
    doc.Table: "table",
    doc.Note: "note",
    doc.ItemList: "list",
    doc.Figure: "figure",
}

# Every kind of table cell.
CELL_KINDS: dict[type, str] = {str: "text", doc.Math: "math"}


def block_kind(node, writer: str) -> str:
    return _kind(node, BLOCK_KINDS, "block", writer)


def cell_kind(cell, writer: str) -> str:
    return _kind(cell, CELL_KINDS, "table cell", writer)


def dispatch(node, handlers: Mapping[str, Callable], writer: str):
    """``handlers[kind](node)`` for the node's kind; a kind without a handler is an error."""
    kind = block_kind(node, writer)
    if kind not in handlers:
        unhandled(node, writer)
    return handlers[kind](node)


def unhandled(node, writer: str):
    """Raise for a node the writer has no form for (the template's final ``else`` calls this)."""
    raise NotImplementedError(f"the {writer} writer has no form for a {type(node).__name__} node")


def _kind(node, table: dict, what: str, writer: str) -> str:
    try:
        return table[type(node)]
    except KeyError:
        raise NotImplementedError(
            f"the {writer} writer does not know the {what} node type {type(node).__name__}"
        ) from None
