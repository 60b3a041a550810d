"""Every equation the PDF prints, of every demo and every starter, is legible at print size.

The PDF writer sets each equation as an SVG from ziamath at ``svgmath.FONT_SIZE`` (13.5 px, the 10 pt
body text), a displayed equation shrunk by the scale ``svgmath.lines_for`` gives it to fit
``pdf.EQUATION_WIDTH_PX`` (140 mm). The PDF writes each glyph as a plain path; the measure lays the same
equation out with ziafont's SVG 2 form, where each glyph is a ``<use>`` of a ``<symbol>``, so that its printed
size is the ratio of the two heights times the equation's size and scale. The cap height of that size is read
from the font itself (the ink height of an "H").

The limit, a cap height of 4.4 pt at print, admits a first-level script of the 10 pt body (a power v^2
or a subscript, set at 70 % by ziamath: cap height about 4.7 pt) and refuses a second-level script (a
fraction or a subscript inside a superscript, 60 %: about 4.0 pt) and a first-level script in a line
shrunk below about 95 %. Body, script and second-level sizes of 10/7/5 pt are the habit of printed
mathematics, and type below about 6 pt (cap height near 4 pt) is what checkers send back as unreadable:
common practice, no source; the 6 pt figure is from memory.
"""

from __future__ import annotations

import dataclasses
import functools
import re

from calcsheet.sheet.document import Equation, Math
from calcsheet.writers import pdf, svgmath
from tests import shared_builds

SMALLEST_CAP_HEIGHT_PT = 4.4
PT_PER_PX = 0.75  # CSS px are 1/96 in, as WeasyPrint lays them out

_SYMBOL = re.compile(r'<symbol id="([^"]+)" viewBox="([^"]+)"')
_PATH = re.compile(r'<path d="([^"]*)"')
_USE = re.compile(r'<use href="#([^"]+)"[^>]*height="([^"]+)"')


@functools.lru_cache(maxsize=None)
def measured_svg(latex: str, size: float = svgmath.FONT_SIZE) -> str:
    """The equation laid out as the PDF writer lays it out (its settings and ziamath_rows' patch in force), with
    glyphs as <symbol>/<use> pairs, whose scale can be read; only the form of the glyphs differs."""
    import ziafont
    import ziamath

    svgmath.render(latex, size)
    ziafont.config.svg2 = True
    try:
        return ziamath.Latex(latex, size=size).svg()
    finally:
        ziafont.config.svg2 = False


def glyph_scales(svg: str) -> list[float]:
    """Each glyph's drawn size as a fraction of the equation's font size."""
    heights = {name: float(box.split()[3]) for name, box in _SYMBOL.findall(svg)}
    return [float(height) / heights[name] for name, height in _USE.findall(svg)]


@functools.lru_cache(maxsize=None)
def cap_height_per_em() -> float:
    """The font's cap height over its em, measured on the ink of an "H" set at 100 px."""
    svg = measured_svg("H", 100.0)
    path, scale = _PATH.findall(svg)[0], glyph_scales(svg)[0]
    ys = [float(y) for y in re.findall(r"[-\d.]+ ([-\d.]+)", path)]
    return (max(ys) - min(ys)) * scale / 100.0


@functools.lru_cache(maxsize=None)
def smallest_cap_height_pt(latex: str, display: bool) -> float:
    """The smallest cap height at print, in pt, of any glyph of one equation as the PDF writer sets it."""
    lines, scale = svgmath.lines_for(latex, pdf.EQUATION_WIDTH_PX) if display else ([latex], 1.0)
    smallest = min(min(glyph_scales(measured_svg(line)), default=1.0) for line in lines)
    return smallest * scale * svgmath.FONT_SIZE * PT_PER_PX * cap_height_per_em()


def every_math(node, display: bool = False):
    """(latex, displayed?) for every piece of mathematics in a Sheet, wherever it sits."""
    if isinstance(node, Equation):
        yield node.math.latex, True
    elif isinstance(node, Math):
        yield node.latex, display
    elif dataclasses.is_dataclass(node):
        for field in dataclasses.fields(node):
            yield from every_math(getattr(node, field.name))
    elif isinstance(node, (tuple, list)):
        for item in node:
            yield from every_math(item)


def test_the_measure_sees_a_second_level_script():
    """The measure itself: a fraction in a superscript is refused, a plain power is not."""
    assert smallest_cap_height_pt(r"e^{\frac{t}{R C}}", True) < SMALLEST_CAP_HEIGHT_PT
    assert smallest_cap_height_pt(r"P = v^{2} R", True) >= SMALLEST_CAP_HEIGHT_PT
    assert smallest_cap_height_pt(r"x_{\mathrm{in}}", True) >= SMALLEST_CAP_HEIGHT_PT


def test_every_equation_of_every_demo_and_starter_is_legible_at_print_size():
    too_small, seen = [], 0
    for source in shared_builds.every_source():  # an equation two sheets print is measured once (cached above)
        for latex, display in sorted(set(every_math(shared_builds.sheet(source)))):
            seen += 1
            size = smallest_cap_height_pt(latex, display)
            if size < SMALLEST_CAP_HEIGHT_PT:
                too_small.append(f"{source}.toml: {size:.2f} pt in {latex}")
    assert seen > 100
    assert not too_small, "\n".join(too_small)
