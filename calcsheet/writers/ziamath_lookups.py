"""ziamath's two lookups made for every node, a style and a size, made cheap; the drawing is the same.

**A node's math style from plain dicts, not through ``dataclasses.asdict`` and a ``ChainMap``.**

ziamath (0.13) reads every node's style as its own attributes over its parent's style turned into a dict: it
turns the parent's style into a dict with ``dataclasses.asdict``, which walks the nested variant recursively and
deep-copies every value, and looks the attributes up through a ``collections.ChainMap``, whose every lookup is
Python code. An equation makes a node per glyph run, per row and per script, each laid out more than once, so
the two were about 40 % of all of ziamath's time on a sine-forced sheet's PDF.

``style_as_dict`` makes the same dict as ``asdict`` (the same keys, the variant as a nested dict, values that
are strings, numbers and booleans, which need no copy) without the walk; ``attributes_over_parent`` gives the
lookups the same answers as ``ChainMap(attributes, parent)`` from one merged dict (ziamath only reads it). Both
are put in place of those two names in ziamath's styles module only, and only for the ziamath version they were
read from.

**A size named in an attribute (``thinmathspace``, ``0.2em``) converted once per font size.** ``size_px``
builds its table of fourteen named spaces anew at every call; the answer depends on nothing but the size and
the font size, so it is remembered.

The SVGs are the same, compared with ziamath's own in ``tests/writers/test_ziamath_lookups.py``.
"""

from __future__ import annotations

import functools

import ziamath
from ziamath import styles
from ziamath.nodes.mnode import Mnode

READ_FROM_VERSION = "0.13"


def style_as_dict(style) -> dict:
    """``dataclasses.asdict`` of a MathStyle, as ziamath 0.13 defines it (six fields, the variant nested)."""
    variant = style.mathvariant
    return {
        "mathvariant": {
            "style": variant.style,
            "italic": variant.italic,
            "bold": variant.bold,
            "normal": variant.normal,
        },
        "displaystyle": style.displaystyle,
        "mathcolor": style.mathcolor,
        "mathbackground": style.mathbackground,
        "mathsize": style.mathsize,
        "scriptlevel": style.scriptlevel,
    }


def attributes_over_parent(attributes, parent: dict) -> dict:
    """What ``ChainMap(attributes, parent)`` answers to a read: an attribute of the node's own, else the parent's."""
    return {**parent, **attributes}


def cheap_lookups() -> bool:
    """Put the cheap lookups in place in ziamath (once per process); False if the version differs."""
    if ziamath.__version__ != READ_FROM_VERSION:
        return False
    styles.asdict = style_as_dict
    styles.ChainMap = attributes_over_parent
    if not hasattr(Mnode.size_px, "computed"):
        Mnode.size_px = _remembered_size(Mnode.size_px)
    return True


def _remembered_size(computed):
    remembered = functools.lru_cache(maxsize=4096)(lambda size, fontsize: computed(None, size, fontsize))

    @functools.wraps(computed)
    def size_px(self, size: str, fontsize=None) -> float:
        return remembered(size, self.glyphsize if fontsize is None else fontsize)

    size_px.computed = computed
    return size_px
