"""Copy a parent's math style field by field, not through ``dataclasses.asdict``.

ziamath (0.13) reads every node's style as its own attributes over its parent's style turned into a dict, and
turns the parent's style into a dict with ``dataclasses.asdict``, which walks the nested variant recursively and
deep-copies every value. An equation makes a node per glyph run, per row and per script, each laid out more
than once, so ``asdict`` was about a quarter of all of ziamath's time on a sine-forced sheet's PDF.
``style_as_dict`` makes the same dict (the same keys, the variant as a nested dict, values that are strings,
numbers and booleans, which need no copy) without the walk. It is put in place of ``asdict`` in ziamath's
styles module only, and only for the ziamath version it was read from; the SVGs are the same, compared in
``tests/writers/test_ziamath_style.py``.
"""

from __future__ import annotations

import ziamath
from ziamath import styles

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


def copy_styles_directly() -> bool:
    """Make ziamath's style parsing use ``style_as_dict`` (once per process); False if the version differs."""
    if ziamath.__version__ != READ_FROM_VERSION:
        return False
    if styles.asdict is not style_as_dict:
        styles.asdict = style_as_dict
    return True
