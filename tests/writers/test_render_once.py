"""The plot and each equation are drawn once per sheet, however many writers show them: the HTML and PDF
writers share one plot (writers/plot.py) and one SVG per equation's LaTeX (writers/svgmath.py). Counted by
wrapping the drawing functions, never timed."""

from __future__ import annotations

from collections import Counter

import pytest

from calcsheet.pipeline import render
from calcsheet.writers import mathml, plot, svgmath
from tests import shared_builds
from tests.end_to_end.demo_verdicts import DEMOS


@pytest.fixture(scope="module")
def sheet():
    return shared_builds.sheet(DEMOS[0].stem)  # the drawing caches are cleared below, not the build


def test_the_plot_and_each_equation_are_drawn_once_for_all_four_formats(sheet, monkeypatch):
    import ziamath

    plots, equations, mathml_forms = Counter(), Counter(), Counter()
    build, latex, convert = plot._build, ziamath.Latex, mathml.convert

    def counted_build(figure):
        plots[figure.title] += 1
        return build(figure)

    def counted_latex(text, *args, **kwargs):
        equations[text] += 1
        return latex(text, *args, **kwargs)

    def counted_convert(text, *args, **kwargs):
        mathml_forms[(text, *args, *sorted(kwargs.items()))] += 1
        return convert(text, *args, **kwargs)

    monkeypatch.setattr(plot, "_build", counted_build)
    monkeypatch.setattr(ziamath, "Latex", counted_latex)
    monkeypatch.setattr(mathml, "convert", counted_convert)
    for cache in (plot.figure_svg, svgmath.render, mathml.to_mathml):
        cache.cache_clear()
    render(sheet, ("html", "pdf", "json", "txt"))
    assert sum(plots.values()) == 1, plots
    assert equations and max(equations.values()) == 1, [text for text, n in equations.items() if n > 1]
    assert mathml_forms and max(mathml_forms.values()) == 1


def test_a_long_piece_with_nothing_to_break_at_is_not_typeset_on_its_own(monkeypatch):
    """Breaking a wide equation typesets the whole, the pieces it can break further, and the lines; a piece with
    no top-level '+' or '-' stays whole whatever its width, so typesetting it alone would decide nothing."""
    import ziamath

    typeset = Counter()
    latex = ziamath.Latex

    def counted_latex(text, *args, **kwargs):
        typeset[text] += 1
        return latex(text, *args, **kwargs)

    monkeypatch.setattr(ziamath, "Latex", counted_latex)
    svgmath.render.cache_clear()
    wide = r"\frac{" + r" \cdot ".join(f"a_{{{i}}}" for i in range(40)) + "}{2}"
    lines, _ = svgmath.lines_for(f"y = {wide}", 200.0)
    assert lines == ["y", rf"\quad = {wide}"]
    assert f"= {wide}" not in typeset
    assert set(typeset) == {f"y = {wide}", *lines}
    svgmath.render.cache_clear()
