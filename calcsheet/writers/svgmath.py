"""LaTeX to SVG for the PDF (WeasyPrint lays out no MathML), with line breaking for long equations.

ziamath typesets with its own math font in pure Python. A displayed equation wider than the
column is broken at top-level '=' signs, then at top-level '+' and '-', and only then scaled down.
Glyphs are written as plain paths, not SVG 2 <symbol>/<use> pairs: WeasyPrint 70 draws an image's second
occurrence on a page (an equation shown twice, the same data URI) with each <use> scaled to zero, a singular
matrix that poppler reports ("matrix not invertible") and cairo draws as debris; and ziamath's glyph of zero
width (the thin space in ``p\\,dt``) gave the same singular matrix at its first occurrence.
"""

from __future__ import annotations

import base64
import functools
from dataclasses import dataclass

FONT_SIZE = 13.5  # px; matches 10 pt body text
SMALLEST_SCALE = 0.7  # below this an equation is hard to read; only an unbreakable one goes there


@dataclass(frozen=True)
class Rendered:
    svg: str
    width: float  # px
    height: float  # px
    depth: float  # px below the baseline


@functools.lru_cache(maxsize=2048)
def render(latex: str, size: float = FONT_SIZE) -> Rendered:
    import ziafont
    import ziamath

    ziafont.config.svg2 = False  # paths, not <symbol>/<use>: see the module's docstring
    from calcsheet.writers.ziamath_rows import measure_once
    from calcsheet.writers.ziamath_lookups import cheap_lookups

    measure_once()
    cheap_lookups()
    math = ziamath.Latex(latex, size=size)
    svg = math.svg()
    width, height = _viewbox_size(svg)
    top = float(svg.split('viewBox="', 1)[1].split()[1])
    return Rendered(svg, width, height, max(height + top, 0.0))


def data_uri(svg: str) -> str:
    """A ``data:`` URI carrying an SVG (an equation or the plot) for ``<img src=...>`` in the PDF."""
    return "data:image/svg+xml;base64," + base64.b64encode(svg.encode("utf-8")).decode("ascii")


def split_top_level(latex: str, separators: tuple[str, ...]) -> list[str]:
    """Split at separators that stand outside every brace group and \\left...\\right pair.

    Each piece after the first keeps its separator at the front (so '= x' or '+ y').
    """
    pieces, depth, start, i = [], 0, 0, 0
    while i < len(latex):
        if latex.startswith(r"\left", i):
            depth, i = depth + 1, i + 5
            continue
        if latex.startswith(r"\right", i):
            depth, i = depth - 1, i + 6
            continue
        char = latex[i]
        if char == "{":
            depth += 1
        elif char == "}":
            depth -= 1
        elif depth == 0 and i > start:
            for sep in separators:
                if latex.startswith(sep, i):
                    pieces.append(latex[start:i].strip())
                    start = i + 1
                    break
        i += 1
    pieces.append(latex[start:].strip())
    return [p for p in pieces if p]


def lines_for(latex: str, width: float) -> tuple[list[str], float]:
    """Lines that fit ``width`` px, and the scale needed for the widest of them (1.0 if none)."""
    if render(latex).width <= width:
        return [latex], 1.0
    tokens = []
    for piece in split_top_level(latex, (" = ",)):
        terms = split_top_level(piece, (" + ", " - "))
        # a piece with no '+' or '-' to break at stays whole whatever its width: typesetting it decides nothing
        tokens.extend(terms if len(terms) > 1 and render(piece).width > width else [piece])
    lines = _pack(tokens, width)
    widest = max(render(line).width for line in lines)
    return lines, min(1.0, width / widest)


def _pack(tokens: list[str], width: float) -> list[str]:
    """Greedy packing; every continuation line is indented and starts with its own operator."""
    lines: list[str] = []
    for token in tokens:
        if lines and render(f"{lines[-1]} {token}").width <= width:
            lines[-1] = f"{lines[-1]} {token}"
        else:
            lines.append(token if not lines else rf"\quad {token}")
    return lines


def _viewbox_size(svg: str) -> tuple[float, float]:
    head = svg.split(">", 1)[0]
    width = float(head.split('width="', 1)[1].split('"', 1)[0])
    height = float(head.split('height="', 1)[1].split('"', 1)[0])
    return width, height
