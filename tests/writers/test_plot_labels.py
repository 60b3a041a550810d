"""Every demo's plot and every starter's plot, drawn and measured: no two pieces of text overlap, no label is
struck through by a guide line or the curve, and the legend covers no part of the curve or its markers.

The boxes are matplotlib's own renderer extents of the drawn text (the same layout the SVG is saved from),
so the test sees what a reader sees, not the placer's estimate of it.
"""

from __future__ import annotations

import math

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


LEADER_ENDS_PX = 0.75  # a leader's end lies on its target, its start on its label's box, within this


def _label_box(label, renderer):
    """The drawn box of a label: its text with the white backing behind it."""
    box = label.get_window_extent(renderer)
    patch = label.get_bbox_patch()
    if patch is not None:
        label.update_bbox_position_size(renderer)
        box = box.union([box, patch.get_window_extent(renderer)])
    return box


def _target(label, ax):
    """What a label names, in display pixels, read from its kind (in its gid) and its anchor: a point, or the
    height of a level's line, or the abscissa of a limit's line."""
    kind = label.get_gid().split("-")[2]
    if kind == "level":
        return kind, ax.get_yaxis_transform().transform(label.xy)[1]
    if kind == "limit":
        return kind, ax.get_xaxis_transform().transform(label.xy)[0]
    return kind, tuple(ax.transData.transform(label.xy))


def _distance_to_target(box, kind, where) -> float:
    def gap(v, lo, hi):
        return max(lo - v, 0.0, v - hi)

    if kind == "level":
        return gap(where, box.y0, box.y1)
    if kind == "limit":
        return gap(where, box.x0, box.x1)
    return math.hypot(gap(where[0], box.x0, box.x1), gap(where[1], box.y0, box.y1))


def _on_box_edge(p, box) -> bool:
    inside = box.x0 - LEADER_ENDS_PX <= p[0] <= box.x1 + LEADER_ENDS_PX and (
        box.y0 - LEADER_ENDS_PX <= p[1] <= box.y1 + LEADER_ENDS_PX
    )
    near_edge = min(abs(p[0] - box.x0), abs(p[0] - box.x1), abs(p[1] - box.y0), abs(p[1] - box.y1))
    return inside and near_edge <= LEADER_ENDS_PX


def _crosses(p, q, box) -> bool:
    """Whether the segment p-q enters the inside of the box, by dense sampling (kept apart from the placer's
    clipping arithmetic on purpose)."""
    steps = 2000
    for i in range(steps + 1):
        t = i / steps
        x, y = p[0] + t * (q[0] - p[0]), p[1] + t * (q[1] - p[1])
        if box.x0 + 0.5 < x < box.x1 - 0.5 and box.y0 + 0.5 < y < box.y1 - 0.5:
            return True
    return False


def _labels_and_leaders(fig):
    ax = fig.axes[0]
    labels = {
        t.get_gid().rsplit("-", 1)[1]: t
        for t in ax.texts
        if (t.get_gid() or "").startswith("calcsheet-label-") and t.get_visible() and t.get_text().strip()
    }
    leaders = {
        line.get_gid().rsplit("-", 1)[1]: line
        for line in ax.get_lines()
        if (line.get_gid() or "").startswith("calcsheet-leader-")
    }
    return labels, leaders


def test_a_label_away_from_what_it_names_has_a_leader_ending_on_it_and_one_at_its_place_has_none(drawn):
    from calcsheet.writers.plot_labels import HOME_PT

    ax = drawn.axes[0]
    renderer = drawn.canvas.get_renderer()
    home = HOME_PT * drawn.dpi / 72
    labels, leaders = _labels_and_leaders(drawn)
    assert set(leaders) <= set(labels), "a leader without its label"
    wrong = []
    for n, label in labels.items():
        box = _label_box(label, renderer)
        kind, where = _target(label, ax)
        away = _distance_to_target(box, kind, where) > home
        if not away:
            if n in leaders:
                wrong.append((label.get_text(), "a leader, though at its place"))
            continue
        if n not in leaders:
            wrong.append((label.get_text(), "displaced without a leader"))
            continue
        start, end = leaders[n].get_transform().transform(leaders[n].get_xydata())
        if not _on_box_edge(start, box):
            wrong.append((label.get_text(), "leader does not start on its box", tuple(start)))
        on_target = {
            "level": lambda: abs(end[1] - where) <= LEADER_ENDS_PX,
            "limit": lambda: abs(end[0] - where) <= LEADER_ENDS_PX,
            "point": lambda: math.dist(end, where) <= LEADER_ENDS_PX,
        }[kind]()
        if not on_target:
            wrong.append((label.get_text(), "leader does not end on its target", tuple(end), where))
    assert not wrong, wrong


def test_no_leader_crosses_another_label_or_piece_of_text(drawn):
    labels, leaders = _labels_and_leaders(drawn)
    own = {n: labels[n].get_text() for n in leaders}
    crossed = []
    for n, line in leaders.items():
        p, q = line.get_transform().transform(line.get_xydata())
        for what, box in _text_boxes(drawn):
            if what == own[n]:
                continue
            if _crosses(p, q, box):
                crossed.append((own[n], what))
    assert not crossed, crossed


def test_a_crowded_plot_draws_leaders_that_end_on_their_targets():
    """The bus-capacitor demo puts point labels away from their dots (the limit line and its label take the
    nearest spots), so the checks above see leaders there; without them they would pass on no leader at all."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    from calcsheet.writers.plot import build_figure

    fig = build_figure(figure_of("bus-capacitor-bleed-down"))
    FigureCanvasAgg(fig)
    fig.draw_without_rendering()
    labels, leaders = _labels_and_leaders(fig)
    assert {labels[n].get_text() for n in leaders} >= {"v(60 s)", "v(2 min)"}
