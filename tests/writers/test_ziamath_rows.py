"""Rows measured once (writers/ziamath_rows.py) draw the same SVG as ziamath's own two-pass layout, and lay out
far fewer rows for deeply nested brackets. The reference is ziamath itself (its layout with the change undone);
rows are counted, never timed."""

from __future__ import annotations

from collections import Counter

import pytest

ziamath = pytest.importorskip("ziamath")
from ziamath.nodes.mrow import Mrow  # noqa: E402

from calcsheet.writers import ziamath_rows  # noqa: E402

if not ziamath_rows.measure_once():
    pytest.skip("the change applies only to the ziamath version it was read from", allow_module_level=True)


def nested(depth: int, inner: str = "x") -> str:
    latex = inner
    for level in range(depth):
        latex = rf"\left(a_{{{level}}} + \frac{{{latex}}}{{k^{{2}} \omega^{{2}} + 1}}\right)"
    return latex


# Shapes of the solutions the sheets show: sine forcing (nested brackets in fractions, sines and cosines,
# exponentials), scripts on bracket groups, radicals, integrals, and a few plain ones.
EQUATIONS = [
    nested(1),
    nested(3),
    nested(2, r"\sin{\left(\omega t \right)}"),
    r"S{\left(t \right)} = \left(S_{0} - \frac{Q_{0} k \left(k^{2} \omega^{2} + 1\right) - A k}{k^{2} \omega^{2} + 1}"
    r"\right) e^{- \frac{t}{k}} + \frac{A k \left(\sin{\left(\omega t \right)} - k \omega \cos{\left(\omega t \right)}"
    r"\right)}{k^{2} \omega^{2} + 1}",
    r"\left(a + \left(b + \frac{x}{2}\right)^{2}\right)",
    r"\left(a + \left(b + \left(c + \frac{x}{2}\right)^{2}\right)_{1}\right)^{3}",
    r"\sqrt{\left(\frac{\left(a + b\right)}{c}\right)^{2} + 1}",
    r"\int_{0}^{t} \left(\frac{\left(1 + s\right)}{2}\right) e^{\frac{s}{\tau}}\, ds",
    r"\left. \left(x + \left(y + 1\right)\right) \right|_{t = 0}",
    r"v{\left(t \right)} = V_{0} e^{- \frac{t}{R C}}",
]


@pytest.mark.parametrize("latex", EQUATIONS)
def test_the_drawing_is_ziamaths_own(latex):
    with ziamath_rows.two_pass_layout():
        own = ziamath.Latex(latex, size=13.5).svg()
    assert ziamath.Latex(latex, size=13.5).svg() == own


def rows_laid_out(latex: str, monkeypatch) -> int:
    count = Counter()
    setup = Mrow._setup

    def counted(self, **kwargs):
        count["rows"] += 1
        return setup(self, **kwargs)

    with monkeypatch.context() as patch:
        patch.setattr(Mrow, "_setup", counted)
        ziamath.Latex(latex, size=13.5).svg()
    return count["rows"]


def test_nested_brackets_no_longer_double_the_work_per_level(monkeypatch):
    latex = "x"
    for level in range(6):
        latex = rf"\left(a_{{{level}}} + {latex}\right)"
    once = rows_laid_out(latex, monkeypatch)
    with ziamath_rows.two_pass_layout():
        twice = rows_laid_out(latex, monkeypatch)
    assert twice >= 2**6  # ziamath's own layout doubles with each of the six levels
    assert once * 3 < twice, (once, twice)
