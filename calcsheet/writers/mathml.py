"""LaTeX to MathML for the HTML sheet (browsers lay MathML out natively)."""

from __future__ import annotations

import functools

from latex2mathml.converter import convert


@functools.lru_cache(maxsize=1024)
def to_mathml(latex: str, display: bool = False) -> str:
    return convert(latex, display="block" if display else "inline")
