"""The response plot as a standalone SVG string, drawn with matplotlib.

Only reads a :class:`calcsheet.sheet.document.Figure`; every number in it is already in the
units the engineer declared, and every word on the plot comes from the Figure except the
legend entries below.

The output is byte-for-byte reproducible: matplotlib starts from its built-in defaults (a
user's matplotlibrc cannot leak in), clip-path ids are hashed with a fixed salt, no date is
written, and text is drawn as glyph paths from the bundled DejaVu Sans, so the SVG looks the
same in a browser and in WeasyPrint whatever fonts are installed.

Guides are told apart by line style as well as colour, so the plot survives a greyscale print:
a level (no verdict) is dotted grey, a limit that passes is solid green, a limit that fails is
dashed red and thicker.

matplotlib is imported inside the functions, never at module level, and pyplot is not used.
"""

from __future__ import annotations

import functools
import math
import re

from calcsheet.unit_text import trade_unit, units_after_numbers
from calcsheet.writers.build_date import invalid_source_date_epoch_hidden
from calcsheet.writers.unbroken import with_signs

INK = "#1b1f24"
GREY = "#6b7580"
PASS = "#1d6b35"
FAIL = "#a3171b"
INDEPENDENT = "#2f5577"
GRID = "#dde1e6"
FRAME = "#4a525c"

FIGSIZE_IN = (6.3, 3.35)  # about 16 cm x 8.5 cm
MARGIN = 0.05  # fraction of the data span added above and below

EXTREME = "#7a4a00"
NONLINEAR = "#b3541e"  # the non-linear model beside a linearised one: apart from the ink and the checks' blue
FORCING = "#6a3d8f"  # the forcing drawn as a value of the unknown: thin, apart from the solution's black

# status -> (colour, matplotlib linestyle, linewidth in pt); the dash patterns are set in _RC
GUIDE_STYLE = {
    "": (GREY, ":", 1.0),
    "pass": (PASS, "-", 1.2),
    "fail": (FAIL, "--", 1.8),
}

_RC = {
    "svg.hashsalt": "calcsheet",
    "svg.fonttype": "path",
    "font.family": "DejaVu Sans",
    "font.size": 8.0,
    "axes.labelsize": 8.5,
    "axes.edgecolor": FRAME,
    "axes.linewidth": 0.8,
    "axes.labelcolor": INK,
    "xtick.color": FRAME,
    "ytick.color": FRAME,
    "xtick.labelcolor": INK,
    "ytick.labelcolor": INK,
    "xtick.labelsize": 7.5,
    "ytick.labelsize": 7.5,
    "xtick.major.width": 0.6,
    "ytick.major.width": 0.6,
    "xtick.major.size": 3.0,
    "ytick.major.size": 3.0,
    "lines.scale_dashes": False,
    "lines.dotted_pattern": [1.0, 2.2],
    "lines.dashed_pattern": [5.5, 2.8],
    "legend.fontsize": 7.5,
    "axes.formatter.useoffset": False,
    "axes.formatter.limits": [-4, 6],
}

# a faint white backing so a line running behind a label does not cut through its letters
_LABEL_BOX = {"boxstyle": "square,pad=0.1", "facecolor": "white", "edgecolor": "none", "alpha": 0.8}

_DECLARATION = re.compile(r"\A\s*<\?xml[^>]*\?>\s*")
_DOCTYPE = re.compile(r"\A\s*<!DOCTYPE[^>]*>\s*")


@functools.lru_cache(maxsize=8)
def figure_svg(figure) -> str:
    """The Figure as an SVG element (no XML declaration, no DOCTYPE), ready to inline in HTML. Cached by the
    Figure's value (a frozen dataclass of tuples), so the HTML and PDF writers of one sheet share one drawing:
    the drawing is the same bytes every time, and it is most of a writer's time."""
    import io

    import matplotlib
    import matplotlib.style
    from matplotlib.backends.backend_svg import FigureCanvasSVG

    with matplotlib.style.context("default"), matplotlib.rc_context(_RC):
        fig = _build(figure)
        FigureCanvasSVG(fig)
        out = io.BytesIO()
        with invalid_source_date_epoch_hidden():  # matplotlib reads it with int() on its layout pass
            fig.savefig(out, format="svg", metadata={"Date": None, "Creator": None, "Title": figure.title})
    svg = out.getvalue().decode("utf-8")
    svg = _DOCTYPE.sub("", _DECLARATION.sub("", svg))
    return svg.strip() + "\n"


def build_figure(figure):
    """The matplotlib Figure (not yet saved), for inspection in tests."""
    import matplotlib
    import matplotlib.style

    with matplotlib.style.context("default"), matplotlib.rc_context(_RC):
        return _build(figure)


def _build(figure):
    from matplotlib.figure import Figure as MplFigure

    fig = MplFigure(figsize=FIGSIZE_IN, layout="constrained")
    fig.get_layout_engine().set(w_pad=4 / 72, h_pad=4 / 72)
    ax = fig.add_subplot()
    ax.set_xlabel(label_text(figure.x_label), parse_math=False)
    ax.set_ylabel(label_text(figure.y_label), parse_math=False)
    ax.grid(True, color=GRID, linewidth=0.5)
    ax.set_axisbelow(True)

    curve = [(x, y) for x, y in figure.curve if _finite(x, y)]
    xlim, ylim = _ranges(figure, curve)
    ax.set_xlim(*xlim)
    ax.set_ylim(*ylim)

    if figure.curve:
        ax.plot(
            [p[0] for p in figure.curve],
            [p[1] for p in figure.curve],
            color=INK,
            linewidth=1.5,
            solid_capstyle="round",
            label=_legend(figure, "curve"),
            zorder=3,
            gid="calcsheet-curve",
        )
    if figure.nonlinear:
        ax.plot(
            [p[0] for p in figure.nonlinear],
            [p[1] for p in figure.nonlinear],
            color=NONLINEAR,
            linewidth=1.2,
            linestyle=(0, (5, 3)),
            label=_legend(figure, "nonlinear"),
            zorder=3,
            gid="calcsheet-nonlinear",
        )
    forcing = [(x, y) for x, y in figure.forcing if _finite(x, y)]
    if forcing:
        ax.plot(
            [p[0] for p in forcing],
            [p[1] for p in forcing],
            color=FORCING,
            linewidth=0.9,
            label=figure.forcing_label or "_nolegend_",
            zorder=2.5,
            gid="calcsheet-forcing",
        )
    if figure.independent:
        ax.plot(
            [p[0] for p in figure.independent],
            [p[1] for p in figure.independent],
            linestyle="none",
            marker="o",
            markersize=4.0,
            markerfacecolor="white",
            markeredgecolor=INDEPENDENT,
            markeredgewidth=0.9,
            label=_legend(figure, "independent"),
            zorder=4,
            clip_on=False,
            gid="calcsheet-independent",
        )
    if figure.points:
        ax.plot(
            [p[0] for p in figure.points],
            [p[1] for p in figure.points],
            linestyle="none",
            marker="o",
            markersize=5.0,
            markerfacecolor=INK,
            markeredgecolor="white",
            markeredgewidth=0.8,
            label=_legend(figure, "points"),
            zorder=5,
            clip_on=False,
            gid="calcsheet-points",
        )

    extremes = [e for e in figure.extremes if _finite(e[0], e[1])]
    for kind in ("max", "min"):  # an upward triangle on a largest value, a downward one on a smallest
        marks = [e for e in extremes if e[2].startswith(kind)]
        if marks:
            ax.plot(
                [e[0] for e in marks],
                [e[1] for e in marks],
                linestyle="none",
                marker="^" if kind == "max" else "v",
                markersize=6.0,
                markerfacecolor=EXTREME,
                markeredgecolor="white",
                markeredgewidth=0.7,
                label=_legend(figure, "largest" if kind == "max" else "smallest"),
                zorder=6,
                clip_on=False,
                gid=f"calcsheet-extremes-{kind}",
            )

    crossings = [c for c in figure.crossings if _finite(c[0], c[1])]
    if crossings:
        ax.plot(
            [c[0] for c in crossings],
            [c[1] for c in crossings],
            linestyle="none",
            marker="x",
            markersize=5.5,
            markeredgecolor=INK,
            markeredgewidth=1.1,
            zorder=6,
            clip_on=False,
            gid="calcsheet-crossings",
        )
    point_limits = [p for p in figure.point_limits if _finite(p.x, p.value)]
    for i, mark in enumerate(point_limits):  # a bar at the limit, a caret on the side allowed
        colour, _, _ = GUIDE_STYLE.get(mark.status, GUIDE_STYLE[""])
        ax.plot(
            [mark.x],
            [mark.value],
            linestyle="none",
            marker="_",
            markersize=16,
            markeredgewidth=2.4,
            color=colour,
            zorder=6,
            clip_on=False,
            gid=f"calcsheet-point-limit-{mark.status or 'none'}-{i}",
        )
        ax.plot(
            [mark.x],
            [mark.value],
            linestyle="none",
            marker=7 if mark.allowed == "below" else 6,
            markersize=6,
            color=colour,
            zorder=6,
            clip_on=False,
        )
    for i, (x, _) in enumerate(s for s in figure.switches if _finite(s[0])):
        ax.axvline(x, color=GREY, linestyle="-.", linewidth=0.9, zorder=2, gid=f"calcsheet-switch-{i}")

    levels = [g for g in figure.levels if _finite(g.value)]
    limits = [g for g in figure.limits if _finite(g.value)]
    for draw, kind, guides in ((ax.axhline, "level", levels), (ax.axvline, "limit", limits)):
        for i, guide in enumerate(guides):
            colour, style, width = GUIDE_STYLE.get(guide.status, GUIDE_STYLE[""])
            draw(
                guide.value,
                color=colour,
                linestyle=style,
                linewidth=width,
                zorder=2,
                gid=f"calcsheet-{kind}-{guide.status or 'none'}-{i}",
            )

    # settle the layout, then put the legend and the labels where they cover least, measured on the drawing;
    # the layout is kept from then on (the labels sit inside the axes, so laying out again would change nothing)
    _place_legend_and_labels(fig, ax, figure, curve, levels, limits, extremes, point_limits)
    return fig


_LEGEND_STYLE = {
    "frameon": True,
    "framealpha": 0.92,
    "edgecolor": GRID,
    "fancybox": False,
    "borderpad": 0.5,
    "handlelength": 2.2,
    "labelcolor": INK,
}


def _place_legend_and_labels(fig, ax, figure, curve, levels, limits, extremes, point_limits):
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    from calcsheet.writers import plot_labels

    renderer = FigureCanvasAgg(fig).get_renderer()  # measures text in the same DejaVu Sans the SVG draws
    fig.draw_without_rendering()
    obstacles = _obstacles(ax, renderer, figure, curve, levels, limits, extremes, point_limits)
    if ax.get_legend_handles_labels()[0]:
        legend = plot_labels.place_legend(fig, ax, obstacles, renderer, _LEGEND_STYLE)
        legend.get_frame().set_linewidth(0.6)
        legend.set_zorder(10)
        fig.draw_without_rendering()  # a legend moved below the axes shrinks them
        obstacles = _obstacles(ax, renderer, figure, curve, levels, limits, extremes, point_limits)
        obstacles.add_text(tuple(legend.get_window_extent(renderer).extents))
    fig.set_layout_engine("none")
    for t in ax.get_xticklabels() + ax.get_yticklabels() + [ax.xaxis.label, ax.yaxis.label]:
        if t.get_visible() and t.get_text().strip():
            obstacles.add_text(tuple(t.get_window_extent(renderer).extents))
    labels = _Labels(ax, obstacles)
    for guide in sorted(levels, key=lambda g: -g.value):  # from the top, where the frame leaves least room
        labels.level(guide)
    for guide in limits:
        labels.limit(guide)
    # criteria first, where there is most room: a limit's words matter more than a point's name
    for x, y, label in [(m.x, m.value, m.label) for m in point_limits] + extremes + [p for p in figure.points]:
        labels.point(x, y, label, curve)


def _obstacles(ax, renderer, figure, curve, levels, limits, extremes, point_limits):
    from calcsheet.writers.plot_labels import data_obstacles

    markers = [(x, y, 2.5, 2.5) for x, y in figure.independent if _finite(x, y)]
    markers += [(p[0], p[1], 3.0, 3.0) for p in figure.points if _finite(p[0], p[1])]
    markers += [(e[0], e[1], 3.5, 3.5) for e in extremes]
    markers += [(c[0], c[1], 3.0, 3.0) for c in figure.crossings if _finite(c[0], c[1])]
    markers += [(m.x, m.value, 8.0, 4.0) for m in point_limits]  # the bar and its caret
    switches = [s[0] for s in figure.switches if _finite(s[0])]
    return data_obstacles(
        ax,
        renderer,
        [curve, [(x, y) for x, y in figure.forcing if _finite(x, y)]],
        markers,
        [g.value for g in levels],
        [g.value for g in limits] + switches,
    )


class _Labels:
    """Each label drawn once, then moved by plot_labels.place_label among spots in the order preferred; a label
    that ends up away from what it names gets a leader to it. Label n has the gid ``calcsheet-label-KIND-n``
    (KIND: level, limit or point) and its leader, when it has one, ``calcsheet-leader-n``."""

    FONT_SIZE = 7.0
    GAP = 2.5  # pt between a label and its line or point
    AWAY = (12.0, 22.0)  # pt from a line, for a label that finds no free spot beside it
    LEADER_WIDTH = 0.5  # pt

    def __init__(self, ax, obstacles):
        self.ax, self.obstacles = ax, obstacles
        self.count = 0

    def _draw(self, text, colour, xycoords, kind, rotated=False):
        self.count += 1
        return self.ax.annotate(
            label_text(text),
            (0.0, 0.0),
            xycoords=xycoords,
            xytext=(0.0, 0.0),
            textcoords="offset points",
            rotation=90 if rotated else 0,
            fontsize=self.FONT_SIZE,
            color=colour,
            parse_math=False,
            zorder=6,
            annotation_clip=False,
            bbox=_LABEL_BOX,
            in_layout=False,
            gid=f"calcsheet-label-{kind}-{self.count}",
        )

    def _place(self, artist, candidates, target, end, colour):
        """Place the label; draw its leader in data coordinates (so the SVG, saved at another dpi, has it where
        the label is), ending exactly at ``end``, the named point, or None for (x, y) on the named line."""
        from calcsheet.writers.plot_labels import place_label

        leader = place_label(artist, self.obstacles, candidates, target)
        if leader is None:
            return
        to_data = self.ax.transData.inverted().transform
        (xa, ya), (xb, yb) = to_data(leader[0]), to_data(leader[1])
        kind = target[0]
        if kind == "hline":
            yb = end
        elif kind == "vline":
            xb = end
        else:
            xb, yb = end
        self.ax.plot(
            [xa, xb],
            [ya, yb],
            color=colour,
            linewidth=self.LEADER_WIDTH,
            solid_capstyle="butt",
            zorder=3.5,  # over the curve, under the markers it ends on and the label it starts from
            gid=f"calcsheet-leader-{self.count}",
        )

    def level(self, guide):
        if not guide.label:
            return
        colour = GUIDE_STYLE.get(guide.status, GUIDE_STYLE[""])[0]
        artist = self._draw(guide.label, colour, self.ax.get_yaxis_transform(), "level")
        g, y = self.GAP, guide.value
        spots = ((0.01, "left"), (0.99, "right"), (0.25, "left"), (0.5, "left"), (0.75, "right"))
        candidates = []
        for d in (g, *self.AWAY):  # beside the line first; farther out (with a leader) only when it is crowded
            for fx, ha in spots:
                candidates += [((fx, y), (0, d), ha, "bottom"), ((fx, y), (0, -d), ha, "top")]
        target = ("hline", self.ax.get_yaxis_transform().transform((0.0, y))[1])
        self._place(artist, candidates, target, y, colour)

    def limit(self, guide):
        if not guide.label:
            return
        colour = GUIDE_STYLE.get(guide.status, GUIDE_STYLE[""])[0]
        artist = self._draw(guide.label, colour, self.ax.get_xaxis_transform(), "limit", rotated=True)
        g, x = self.GAP, guide.value
        spots = ((0.98, "top"), (0.02, "bottom"), (0.5, "center"), (0.75, "center"), (0.25, "center"))
        candidates = []
        for fy, va in spots:
            candidates += [((x, fy), (-g, 0), "right", va, 90), ((x, fy), (g, 0), "left", va, 90)]
        # written across where no upright spot is free: a long label does not fit between close levels
        for fy, va in spots:
            candidates += [((x, fy), (g, 0), "left", va, 0), ((x, fy), (-g, 0), "right", va, 0)]
        for d in self.AWAY:  # farther out, with a leader, only when every spot beside the line is taken
            for fy, va in spots:
                candidates += [((x, fy), (-d, 0), "right", va, 90), ((x, fy), (d, 0), "left", va, 90)]
        target = ("vline", self.ax.get_xaxis_transform().transform((x, 0.0))[0])
        self._place(artist, candidates, target, x, colour)

    def point(self, x, y, label, curve):
        if not label or not _finite(x, y):
            return
        artist = self._draw(label, INK, "data", "point")
        spots = {}
        for d in (self.GAP + 2.5, self.GAP + 9.0, self.GAP + 18.0, self.GAP + 30.0):  # clear of the dot, then farther
            spots[d] = {
                "below right": ((d, -d), "left", "top"),
                "above left": ((-d, d), "right", "bottom"),
                "above right": ((d, d), "left", "bottom"),
                "below left": ((-d, -d), "right", "top"),
                "above": ((0, d), "center", "bottom"),
                "below": ((0, -d), "center", "top"),
                "right": ((d, 0), "left", "center"),
                "left": ((-d, 0), "right", "center"),
            }
        # a rising curve leaves the lower right and upper left free, a falling one the other two
        before, after = _height_near(curve, x, -1), _height_near(curve, x, 1)
        rising = before is None or after >= before
        order = (
            ["below right", "above left", "above right", "below left"]
            if rising
            else ["above right", "below left", "below right", "above left"]
        ) + ["above", "below", "right", "left"]
        candidates = [((x, y), *spots[d][k]) for d in spots for k in order]
        target = ("point", tuple(self.ax.transData.transform((x, y))))
        self._place(artist, candidates, target, (x, y), INK)


def _legend(figure, mark: str) -> str:
    """The legend's words for a kind of mark, from the Figure (the sheet words; a writer only draws). No
    words, no legend entry (matplotlib leaves out labels that start with an underscore)."""
    legend = figure.legend
    return getattr(legend, mark) if legend is not None else "_nolegend_"


def _finite(*values) -> bool:
    return all(isinstance(v, (int, float)) and math.isfinite(v) for v in values)


def _span(values, fallback):
    values = [v for v in values if _finite(v)]
    return (min(values), max(values)) if values else fallback


def _ranges(figure, curve):
    """Axis ranges: x covers the curve and every vertical limit, y the data and every level."""
    xs = [x for x, _ in curve] or [x for x, _ in figure.independent] + [p[0] for p in figure.points]
    x0, x1 = _span(xs, (0.0, 1.0))
    if x0 == x1:
        x0, x1 = x0 - 0.5 * (abs(x0) or 1.0), x1 + 0.5 * (abs(x1) or 1.0)
    lo, hi = _span([g.value for g in figure.limits] + [x0, x1], (x0, x1))
    width = hi - lo
    # the curve keeps its own extent; a side pushed out by a limit gets a margin so the line is not on the frame
    if lo < x0 or any(g.value == x0 for g in figure.limits if _finite(g.value)):
        lo -= 0.03 * width
    if hi > x1 or any(g.value == x1 for g in figure.limits if _finite(g.value)):
        hi += 0.03 * width

    ys = (
        [y for _, y in curve]
        + [y for _, y in figure.independent]
        + [y for _, y in figure.nonlinear if _finite(y)]
        + [y for _, y in figure.forcing if _finite(y)]
        + [p[1] for p in figure.points]
        + [g.value for g in figure.levels]
        + [p.value for p in figure.point_limits]
    )
    y0, y1 = _span(ys, (0.0, 1.0))
    pad = 0.1 * (abs(y0) or 1.0) if y0 == y1 else MARGIN * (y1 - y0)
    return (lo, hi), (y0 - pad, y1 + pad)


def _height_near(curve, x, side):
    """The curve's height a little before (side -1) or after (side +1) x, by linear interpolation; None
    without a curve."""
    if len(curve) < 2:
        return None
    pts = sorted(curve)
    fx = x + side * 0.01 * (pts[-1][0] - pts[0][0])
    if fx <= pts[0][0]:
        return pts[0][1]
    for (xa, ya), (xb, yb) in zip(pts, pts[1:]):
        if xa <= fx <= xb:
            return ya if xb == xa else ya + (yb - ya) * (fx - xa) / (xb - xa)
    return pts[-1][1]


def label_text(label: str) -> str:
    """A label as the sheet's text prints it: ≤ and ≥ for <= and >=, units in their trade form (60 °C, and an
    axis's unit in brackets, T [°C])."""
    text = units_after_numbers(with_signs(label))
    return _BRACKETED_UNIT.sub(lambda m: f"[{trade_unit(m.group(1))}]", text)


_BRACKETED_UNIT = re.compile(r"\[([A-Za-z][A-Za-z0-9_^*/()\-]*)\]")
