"""Styles read from plain dicts (writers/ziamath_lookups.py) are exactly what ``dataclasses.asdict`` and a
``ChainMap`` give, and the equations ziamath draws with them are the same SVG. The references are the standard
library's ``asdict`` and ``ChainMap``, and ziamath's own drawing with them."""

from __future__ import annotations

import dataclasses
from collections import ChainMap

import pytest

ziamath = pytest.importorskip("ziamath")
from ziamath import styles  # noqa: E402
from ziamath.nodes.mnode import Mnode  # noqa: E402

from calcsheet.writers import ziamath_lookups  # noqa: E402

if not ziamath_lookups.cheap_lookups():
    pytest.skip("the change applies only to the ziamath version it was read from", allow_module_level=True)

# shapes the sheets show: a sine-forced solution (nested brackets, scripts), a radical, an integral, styled letters
EQUATIONS = [
    r"S{\left(t \right)} = \left(S_{0} - \frac{Q_{0} k \left(k^{2} \omega^{2} + 1\right) - A k}{k^{2} \omega^{2} + 1}"
    r"\right) e^{- \frac{t}{k}} + \frac{A k \left(\sin{\left(\omega t \right)} - k \omega \cos{\left(\omega t"
    r" \right)}\right)}{k^{2} \omega^{2} + 1}",
    r"\sqrt{\left(\frac{\left(a + b\right)}{c}\right)^{2} + 1}",
    r"\int_{0}^{t} \left(\frac{\left(1 + s\right)}{2}\right) e^{\frac{s}{\tau}}\, ds",
    r"\tau = R\,C = 47\ \mathrm{k\Omega} \cdot 10\ \mathrm{\mu F}",
    r"\mathbf{F} = \mathrm{d}\mathit{p}/dt",
    r"\mathsf{A}_{\mathbb{R}} + \mathcal{L}^{\prime}",
]

STYLES = [
    styles.MathStyle(),
    styles.MathStyle(
        mathvariant=styles.MathVariant(style="sans", italic=True, bold=True, normal=False),
        displaystyle=False,
        mathcolor="red",
        mathbackground="#eee",
        mathsize="120%",
        scriptlevel=2,
    ),
    styles.MathStyle(mathvariant=styles.MathVariant(style="double", normal=True), scriptlevel=1),
]


@pytest.mark.parametrize("style", STYLES)
def test_the_copy_is_asdicts(style):
    copied = ziamath_lookups.style_as_dict(style)
    assert copied == dataclasses.asdict(style)
    assert list(copied) == list(dataclasses.asdict(style))  # the same keys in the same order


def test_every_field_of_the_style_is_copied():
    """A ziamath that added a field would need the copy read again (the version check guards it too)."""
    assert [f.name for f in dataclasses.fields(styles.MathStyle)] == list(
        ziamath_lookups.style_as_dict(styles.MathStyle())
    )
    assert [f.name for f in dataclasses.fields(styles.MathVariant)] == list(
        ziamath_lookups.style_as_dict(styles.MathStyle())["mathvariant"]
    )


@pytest.mark.parametrize("latex", EQUATIONS)
def test_the_drawing_is_ziamaths_own(latex, monkeypatch):
    drawn = ziamath.Latex(latex, size=13.5).svg()
    monkeypatch.setattr(styles, "asdict", dataclasses.asdict)
    monkeypatch.setattr(styles, "ChainMap", ChainMap)
    monkeypatch.setattr(Mnode, "size_px", Mnode.size_px.computed)
    assert ziamath.Latex(latex, size=13.5).svg() == drawn


@pytest.mark.parametrize(
    "attributes",
    [{}, {"mathcolor": "red"}, {"displaystyle": "false", "scriptlevel": "1"}, {"style": "color: blue;", "x": "1"}],
)
def test_the_merged_dict_reads_as_the_chain(attributes):
    parent = ziamath_lookups.style_as_dict(STYLES[1])
    merged, chain = ziamath_lookups.attributes_over_parent(attributes, parent), ChainMap(attributes, parent)
    for key in [*parent, *attributes, "display", "missing"]:
        assert (key in merged) == (key in chain)
        assert merged.get(key, "default") == chain.get(key, "default")
    assert dict(merged) == dict(chain)


def test_ziamath_uses_both():
    assert styles.asdict is ziamath_lookups.style_as_dict
    assert styles.ChainMap is ziamath_lookups.attributes_over_parent


@pytest.mark.parametrize("size", ["thinmathspace", "negativemediummathspace", "0.2em", "3px", "1.5", "2ex", "bad", ""])
@pytest.mark.parametrize("fontsize", [None, 9.45, 13.5])
def test_a_remembered_size_is_the_computed_one(size, fontsize):
    node = ziamath.Latex("x", size=13.5).node  # any node: the size reads its glyph size only
    assert node.size_px(size, fontsize) == Mnode.size_px.computed(node, size, fontsize)
