"""Where the plot's legend and text labels go, measured on the drawn figure so that nothing collides.

A reader cannot check a level whose label is struck through by a limit line, or two labels printed over
each other. So every label is tried at several spots and kept where its real box (the renderer's extent
of the drawn text, not an estimate) collides least with what is already there: other text (labels, tick
labels, axis labels, the legend), guide lines, the curves and the markers. The legend goes in the first
corner of the axes that covers no data, no marker and no guide line; when every corner would, it goes
below the axes, where it covers nothing.

A label pushed away from what it names (farther than ``HOME_PT`` from its point or line) gets a thin leader
from its box to that point or line, so a checker still knows what it labels; a label at its place gets none.
A leader is an obstacle like the text: no later label covers it, and no spot is chosen whose leader would
cross a piece of text already placed.

Everything is worked in display pixels after the layout has settled. matplotlib is imported by the
caller (writers/plot.py); this module only receives its objects.
"""

from __future__ import annotations

import math

# what a collision costs: text over text is never acceptable while any other spot is free; a line through the
# words hides them; the curve and markers behind a label are covered by its white backing but still lost
TEXT_OVER_TEXT = 100.0
OUTSIDE_FIGURE = 300.0  # cut off at the edge of the drawing: never read
OUTSIDE_AXES = 60.0
LINE_THROUGH = 20.0
OVER_CURVE = 10.0
OVER_MARKER = 5.0

# a label whose box comes this close to its point or line sits at its place; farther away it needs a leader
# (the nearest spots leave about 2 pt beside a line and 6 pt from a point; the next ones 15 pt and more)
HOME_PT = 8.0

LEGEND_CORNERS = (
    "upper right",
    "lower right",
    "upper left",
    "lower left",
    "center right",
    "center left",
    "upper center",
    "lower center",
)


class Obstacles:
    """What a label or the legend must not cover, in display pixels: polylines (the curves), marker boxes,
    horizontal and vertical guide lines, and boxes of text already placed."""

    def __init__(self, ax, renderer, polylines, markers, hlines, vlines):
        self.ax, self.renderer = ax, renderer
        self.frame = ax.get_window_extent(renderer)
        self.polylines = polylines
        self.markers = markers  # (x0, y0, x1, y1)
        self.hlines, self.vlines = hlines, vlines
        self.texts: list[tuple[float, float, float, float]] = []
        self.leaders: list[tuple[tuple[float, float], tuple[float, float]]] = []

    def add_text(self, box) -> None:
        self.texts.append(box)

    def add_leader(self, segment) -> None:
        self.leaders.append(segment)

    def hits_data(self, box) -> bool:
        """Whether the box covers a curve, a marker or a guide line (what a legend must leave visible)."""
        return self.cost(box, text=False) > 0

    def cost(self, box, text: bool = True) -> float:
        x0, y0, x1, y1 = box
        f = self.frame
        cost = 0.0
        if text:
            if x0 < f.x0 or y0 < f.y0 or x1 > f.x1 or y1 > f.y1:
                cost += OUTSIDE_AXES
            page = self.ax.figure.bbox
            if x0 < page.x0 or y0 < page.y0 or x1 > page.x1 or y1 > page.y1:
                cost += OUTSIDE_FIGURE
            cost += TEXT_OVER_TEXT * sum(_overlap(box, t) for t in self.texts)
            cost += TEXT_OVER_TEXT * sum(segment_hits(box, p, q) for p, q in self.leaders)
        cost += LINE_THROUGH * (sum(y0 < h < y1 for h in self.hlines) + sum(x0 < v < x1 for v in self.vlines))
        cost += OVER_CURVE * sum(_polyline_hits(box, line) for line in self.polylines)
        cost += OVER_MARKER * sum(_overlap(box, m) for m in self.markers)
        return cost


def data_obstacles(ax, renderer, curves, markers, hlines, vlines) -> Obstacles:
    """Obstacles from data values: ``curves`` lists of (x, y), ``markers`` (x, y, half width pt, half height pt),
    ``hlines`` y values, ``vlines`` x values."""
    to_px = ax.transData.transform
    pt = ax.figure.dpi / 72
    polylines = [[tuple(p) for p in to_px(c)] for c in curves if len(c)]
    boxes = []
    for x, y, hw, hh in markers:
        px, py = to_px((x, y))
        boxes.append((px - hw * pt, py - hh * pt, px + hw * pt, py + hh * pt))
    return Obstacles(
        ax,
        renderer,
        polylines,
        boxes,
        [to_px((0.0, h))[1] for h in hlines],
        [to_px((v, 0.0))[0] for v in vlines],
    )


def place_legend(fig, ax, obstacles: Obstacles, renderer, legend_kw: dict):
    """The legend in the first corner that covers no data; below the axes when every corner would."""
    legend = ax.legend(loc=LEGEND_CORNERS[0], **legend_kw)
    box = legend.get_window_extent(renderer)
    width, height = box.width, box.height
    pad = legend.borderaxespad * legend.prop.get_size_in_points() * fig.dpi / 72
    f = obstacles.frame
    for corner in LEGEND_CORNERS:
        vertical, horizontal = corner.split()
        x0 = {"left": f.x0 + pad, "right": f.x1 - pad - width, "center": (f.x0 + f.x1 - width) / 2}[horizontal]
        y0 = {"lower": f.y0 + pad, "upper": f.y1 - pad - height, "center": (f.y0 + f.y1 - height) / 2}[vertical]
        if not obstacles.hits_data((x0, y0, x0 + width, y0 + height)):
            legend.set_loc(corner)
            return legend
    legend.remove()
    handles, labels = ax.get_legend_handles_labels()
    return fig.legend(handles, labels, loc="outside lower center", ncols=min(len(labels), 3), **legend_kw)


def place_label(text_artist, obstacles: Obstacles, candidates, target):
    """Move ``text_artist`` (an Annotation) to the candidate whose real box, with the leader it would need,
    costs least; the first wins a tie. ``candidates``: (xy, xytext in offset points, ha, va) or the same with a
    rotation in degrees last. ``target``: what the label names, in display pixels: ``("point", (x, y))``,
    ``("hline", y)`` or ``("vline", x)``. Returns the leader (start on the box, end on the target) or None."""
    home = HOME_PT * obstacles.ax.figure.dpi / 72
    best, best_cost = None, math.inf
    for candidate in candidates:
        xy, offset, ha, va, *rotation = candidate
        _move(text_artist, xy, offset, ha, va, *rotation)
        box = _extent(text_artist, obstacles.renderer)
        cost = obstacles.cost(box)
        leader = leader_to(box, target, home)
        if leader is not None:
            cost += TEXT_OVER_TEXT * sum(segment_hits(t, *leader) for t in obstacles.texts)
        if cost < best_cost:
            best, best_cost = candidate, cost
        if cost == 0:
            break
    _move(text_artist, *best)
    box = _extent(text_artist, obstacles.renderer)
    obstacles.add_text(box)
    leader = leader_to(box, target, home)
    if leader is not None:
        obstacles.add_leader(leader)
    return leader


def leader_to(box, target, home: float):
    """The leader from a label's box to what it names, or None when the box is within ``home`` pixels of it.
    To a point it starts at the box's nearest point; to a line it runs square to the line from the middle of
    the box's nearest side."""
    x0, y0, x1, y1 = box
    kind, where = target
    if kind == "point":
        end = where
        start = (min(max(where[0], x0), x1), min(max(where[1], y0), y1))
    elif kind == "hline":
        mid = (x0 + x1) / 2
        start, end = (mid, y0 if where < y0 else y1 if where > y1 else where), (mid, where)
    elif kind == "vline":
        mid = (y0 + y1) / 2
        start, end = (x0 if where < x0 else x1 if where > x1 else where, mid), (where, mid)
    else:
        raise ValueError(f"unknown target kind {kind!r}")
    if math.hypot(end[0] - start[0], end[1] - start[1]) <= home:
        return None
    return start, end


def _move(text_artist, xy, offset, ha, va, rotation=None) -> None:
    text_artist.xy = xy
    if rotation is not None:
        text_artist.set_rotation(rotation)
    text_artist.set_position(offset)
    text_artist.set_horizontalalignment(ha)
    text_artist.set_verticalalignment(va)


def _extent(text_artist, renderer):
    """The drawn box: the white backing patch where there is one (it is what hides what lies behind)."""
    box = text_artist.get_window_extent(renderer)
    patch = text_artist.get_bbox_patch()
    if patch is not None:
        text_artist.update_bbox_position_size(renderer)
        box = box.union([box, patch.get_window_extent(renderer)])
    return (box.x0, box.y0, box.x1, box.y1)


def _overlap(a, b) -> bool:
    return a[0] < b[2] and b[0] < a[2] and a[1] < b[3] and b[1] < a[3]


def _polyline_hits(box, line) -> bool:
    return any(segment_hits(box, p, q) for p, q in zip(line, line[1:]))


def segment_hits(box, p, q) -> bool:
    """Whether the segment p-q crosses the box (Liang-Barsky clipping)."""
    x0, y0, x1, y1 = box
    dx, dy = q[0] - p[0], q[1] - p[1]
    lo, hi = 0.0, 1.0
    for step, room in ((-dx, p[0] - x0), (dx, x1 - p[0]), (-dy, p[1] - y0), (dy, y1 - p[1])):
        if step == 0:
            if room < 0:
                return False
        else:
            t = room / step
            if step < 0:
                lo = max(lo, t)
            else:
                hi = min(hi, t)
            if lo > hi:
                return False
    return True
