"""Measure each of ziamath's rows once, not once per level of nesting.

ziamath (0.13) lays every row out twice: first a measuring pass, with stretchy brackets left out of the
height, to learn how tall the row's own stretchy brackets must be; then the real pass. The measuring pass lays
out the row's children, and each child row inside it runs its own measuring pass before its own layout, so the
work doubles with each level of nesting (brackets nested seven deep: 511 row layouts for one equation). A sine-
forced solution nests that deep, and its PDF spent most of its time here.

Inside a measuring pass, a row's own measuring pass only chooses the size of the row's stretchy brackets, and a
measuring pass leaves stretchy brackets out of every height (``moperator``'s ``nostretch``), which is all the
outer row reads from it; a bracket's size moves a height only where a script sits on it (``\right)^2``: the
script is kerned against the bracket's glyph). So a row being measured, with no script on an operator of its
own, skips its own measuring pass, and its brackets take the sizes measured further out. The drawn result is the same:
``tests/writers/test_ziamath_rows.py`` compares the SVG with ziamath's own two-pass layout, and the PDFs of the
demos and of a sine-forced reservoir were compared byte for byte. The change is made only to
the ziamath version whose code it was read from; any other version lays out as it always did.
"""

from __future__ import annotations

import functools

import ziamath
from ziamath.nodes.mrow import Mrow

READ_FROM_VERSION = "0.13"
_applied: list = []  # once per process, even while a test has ziamath's own layout back
_EMPTY_ROW = (9999, -9999)  # what ziamath's measuring pass returns for a row with nothing to measure
# Nodes that read the glyph at the edge of a child (a script's kerning, an accent's or a radical's attachment)
_READS_EDGE_GLYPHS = ("msup", "msub", "msubsup", "munder", "mover", "munderover", "mroot", "msqrt", "mfenced")


def measure_once() -> bool:
    """Make rows being measured skip their own measuring pass (once per process); False if the version differs."""
    if ziamath.__version__ != READ_FROM_VERSION:
        return False
    if _applied:
        return True
    _applied.append(True)
    two_pass = Mrow._get_height_nostretch

    @functools.wraps(two_pass)
    def height_without_stretch(self, line, **kwargs):
        if kwargs.get("nostretch") and not _under_a_script(self):
            # inside a measuring pass, and no bracket size here can move a height: skip this row's own
            return kwargs.get("rowymin", _EMPTY_ROW[0]), kwargs.get("rowymax", _EMPTY_ROW[1])
        return two_pass(self, line, **kwargs)

    height_without_stretch.two_pass = two_pass
    Mrow._get_height_nostretch = height_without_stretch
    return True


def _under_a_script(row) -> bool:
    """Whether the nearest node above this row (rows apart) is one that reads a glyph at the edge of its base or
    script: a script is kerned against the glyph it follows (``\\right)^2``) and placed by the glyph it starts
    with, so there a bracket's size moves a height. Such a row measures itself as ziamath always did."""
    node = row.parent
    while node is not None and getattr(node, "mtag", None) == "mrow":
        node = node.parent
    return getattr(node, "mtag", None) in _READS_EDGE_GLYPHS


def two_pass_layout():
    """ziamath's own layout, for the test that compares the two: a context manager restoring the change."""
    from contextlib import contextmanager

    @contextmanager
    def restored():
        current = Mrow._get_height_nostretch
        Mrow._get_height_nostretch = getattr(current, "two_pass", current)
        try:
            yield
        finally:
            Mrow._get_height_nostretch = current

    return restored()
