"""Every demo's plot and every starter's plot, drawn and measured: no two pieces of text overlap, no label is
struck through by a guide line or the curve, and the legend covers no part of the curve or its markers.

The boxes are matplotlib's own renderer extents of the drawn text (the same layout the SVG is saved from),
so the test sees what a reader sees, not the placer's estimate of it.
"""

from __future__ import annotations

import pytest

from calcsheet.sheet.document import Figure
from tests import shared_builds

CASES = list(shared_builds.every_source())
GAP_PX = 0.0  # boxes may touch, not overlap


def figure_of(source: str) -> Figure:
    """The response Figure a demo's or a starter's sheet draws, as the pipeline composed it."""
    response = next(s for s in shared_builds.sheet(source).sections if s.key == "response")
    return next(block for block in response.blocks if isinstance(block, Figure))


@pytest.fixture(scope="module", params=CASES)
def drawn(request):
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    from calcsheet.writers.plot import build_figure

    fig = build_figure(figure_of(request.param))
    FigureCanvasAgg(fig)  # a renderer to measure text with (the same fonts the SVG draws as paths)
    fig.draw_without_rendering()  # the layout the SVG is saved from
    return fig


def _text_boxes(fig):
    """(what, box) for every visible piece of text; the legend counts as one box with its entries inside."""
    from matplotlib.text import Text

    renderer = fig.canvas.get_renderer()
    ax = fig.axes[0]
    legend = ax.get_legend() or (fig.legends[0] if fig.legends else None)
    inside_legend = set(legend.get_texts()) | {legend.get_title()} if legend else set()
    boxes = [
        (t.get_text(), t.get_window_extent(renderer))
        for t in fig.findobj(Text)
        if t.get_visible() and t.get_text().strip() and t not in inside_legend and _in_figure(t, fig)
    ]
    if legend is not None:
        boxes.append(("<legend>", legend.get_window_extent(renderer)))
    return boxes


def _in_figure(text, fig) -> bool:
    """Tick labels outside the view are kept by matplotlib but not drawn."""
    box = text.get_window_extent(fig.canvas.get_renderer())
    return box.width > 0 and box.height > 0 and box.x1 > 0 and box.y1 > 0


def _overlap(a, b) -> bool:
    return a.x0 < b.x1 - GAP_PX and b.x0 < a.x1 - GAP_PX and a.y0 < b.y1 - GAP_PX and b.y0 < a.y1 - GAP_PX


def test_no_two_pieces_of_text_overlap(drawn):
    boxes = _text_boxes(drawn)
    clashes = [(a[0], b[0]) for i, a in enumerate(boxes) for b in boxes[i + 1 :] if _overlap(a[1], b[1])]
    assert not clashes, clashes


def _data_points(fig):
    """The curve's samples and every marker, in display pixels."""
    ax = fig.axes[0]
    found = []
    for line in ax.get_lines():
        gid = line.get_gid() or ""
        if gid.startswith(("calcsheet-curve", "calcsheet-independent", "calcsheet-points", "calcsheet-extremes")) or (
            gid.startswith(("calcsheet-crossings", "calcsheet-forcing", "calcsheet-point-limit"))
        ):
            found += [tuple(p) for p in line.get_transform().transform(line.get_xydata())]
    return found


def test_the_legend_covers_no_curve_sample_and_no_marker(drawn):
    ax = drawn.axes[0]
    legend = ax.get_legend() or (drawn.legends[0] if drawn.legends else None)
    if legend is None:
        return
    box = legend.get_window_extent(drawn.canvas.get_renderer())
    covered = [p for p in _data_points(drawn) if box.x0 <= p[0] <= box.x1 and box.y0 <= p[1] <= box.y1]
    assert not covered, covered[:5]


def test_no_label_is_struck_through_by_a_guide_line(drawn):
    """A level's or limit's label sits beside lines, not on one (a line through the words hides them)."""
    ax = drawn.axes[0]
    renderer = drawn.canvas.get_renderer()
    labels = [t for t in ax.texts if t.get_visible() and t.get_text().strip()]
    guides = [
        line
        for line in ax.get_lines()
        if (line.get_gid() or "").startswith(("calcsheet-level", "calcsheet-limit", "calcsheet-switch"))
    ]
    struck = []
    for t in labels:
        box = t.get_window_extent(renderer)
        for line in guides:
            (x0, y0), (x1, y1) = line.get_transform().transform(line.get_xydata())
            if x0 == x1 and box.x0 < x0 < box.x1 and min(y0, y1) < box.y1 and box.y0 < max(y0, y1):
                struck.append((t.get_text(), line.get_gid()))
            if y0 == y1 and box.y0 < y0 < box.y1 and min(x0, x1) < box.x1 and box.x0 < max(x0, x1):
                struck.append((t.get_text(), line.get_gid()))
    assert not struck, struck
