"""Which blocks of a step a printed page keeps together, so that a checker never turns a page in the middle
of a short argument.

A short derivation (three equation lines or fewer) is read as one piece; so is a short table (four rows or
fewer); equations lead into the table that follows them; a sentence that introduces an equation, a table or
a list leads into it. Longer runs may break, at a row or between lines. The template wraps each kept group
in an element the print CSS does not break inside (styles/default/print.css: .keep).
"""

from __future__ import annotations

from dataclasses import dataclass

from calcsheet.sheet import document as doc

SHORT_DERIVATION = 3  # equation lines read as one piece
SHORT_TABLE = 4  # table rows read as one piece


@dataclass(frozen=True)
class Group:
    """Consecutive blocks of a step; ``keep`` where a page must not break between or inside them."""

    blocks: tuple
    keep: bool


def page_groups(blocks) -> list[Group]:
    """The blocks in order, as groups: each kept group is short enough to move to the next page whole."""
    groups: list[Group] = []
    i = 0
    while i < len(blocks):
        end = _kept_until(blocks, i)
        groups.append(Group(tuple(blocks[i:end]), end - i > 1 or _short(blocks[i])))
        i = end
    return groups


def _kept_until(blocks, i: int) -> int:
    """The end of the kept group starting at ``i`` (``i + 1`` where the block stands alone: a long table or
    list may break, and its lead-in sentence stays with it through the CSS's break-after instead)."""
    first = i + 1 if isinstance(blocks[i], doc.Paragraph) and i + 1 < len(blocks) else i
    run = first
    while run < len(blocks) and isinstance(blocks[run], doc.Equation):
        run += 1
    if run > first:
        if run - first > SHORT_DERIVATION:  # a long derivation may break between lines
            return first + 1
        return run + 1 if run < len(blocks) and _short(blocks[run]) else run
    return first + 1 if _short(blocks[first]) else i + 1


def _short(block) -> bool:
    """A table or list short enough never to be split."""
    if isinstance(block, doc.Table):
        return len(block.rows) <= SHORT_TABLE
    return isinstance(block, doc.ItemList) and len(block.items) <= SHORT_TABLE


@dataclass(frozen=True)
class Mark:
    """Per block, for a template that loops over blocks: whether a kept group opens before it, closes after it."""

    opens: bool
    closes: bool


def keep_marks(blocks) -> list[Mark]:
    """`page_groups` as one mark per block, so the template keeps its single loop over the blocks."""
    marks: list[Mark] = []
    for group in page_groups(blocks):
        n = len(group.blocks)
        marks += [Mark(group.keep and k == 0, group.keep and k == n - 1) for k in range(n)]
    return marks
