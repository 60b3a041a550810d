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

from calcsheet.writers.build_date import invalid_source_date_epoch_hidden

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
    ax.set_xlabel(figure.x_label, parse_math=False)
    ax.set_ylabel(figure.y_label, parse_math=False)
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

    legend = None
    if ax.get_legend_handles_labels()[0]:
        legend = ax.legend(
            loc=_legend_corner(curve, xlim, ylim),
            frameon=True,
            framealpha=0.92,
            edgecolor=GRID,
            fancybox=False,
            borderpad=0.5,
            handlelength=2.2,
            labelcolor=INK,
        )
        legend.get_frame().set_linewidth(0.6)
        legend.set_zorder(10)

    # settle the layout so the labels below can be placed against the real axes size and legend box, then
    # keep it: the labels sit inside the axes, so laying out again when saving would change nothing
    fig.draw_without_rendering()
    fig.set_layout_engine("none")
    placer = _Placer(fig, ax, legend, curve, figure, levels, limits)
    for guide in sorted(levels, key=lambda g: -g.value):  # from the top, where the frame leaves least room
        placer.level_label(guide)
    for guide in limits:
        placer.limit_label(guide)
    for x, y, label in figure.points:
        placer.point_label(x, y, label)
    for x, y, label in extremes:
        placer.point_label(x, y, label)
    for mark in point_limits:
        placer.point_label(mark.x, mark.value, mark.label)
    return fig


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
        + [p[1] for p in figure.points]
        + [g.value for g in figure.levels]
        + [p.value for p in figure.point_limits]
    )
    y0, y1 = _span(ys, (0.0, 1.0))
    pad = 0.1 * (abs(y0) or 1.0) if y0 == y1 else MARGIN * (y1 - y0)
    return (lo, hi), (y0 - pad, y1 + pad)


def _legend_corner(curve, xlim, ylim) -> str:
    """Lower right when the curve sits high on the right-hand half, upper right otherwise."""
    middle = 0.5 * (xlim[0] + xlim[1])
    right = [y for x, y in curve if x >= middle]
    if not right:
        return "upper right"
    return "lower right" if sum(right) / len(right) > 0.5 * (ylim[0] + ylim[1]) else "upper right"


class _Placer:
    """Puts each text label at the candidate spot that collides least with what is already drawn.

    Everything is worked in axes fractions (0..1 across the plotting area). A candidate is scored
    by what its box would cover: leaving the axes, crossing the curve, crossing another guide line,
    covering markers, the legend or a label already placed. The first candidate wins a tie, so the
    order of candidates carries the preferred placement.
    """

    FONT_SIZE = 7.0
    GAP = 2.5  # pt between a label and its line or point

    def __init__(self, fig, ax, legend, curve, figure, levels, limits):
        from matplotlib.font_manager import FontProperties
        from matplotlib.textpath import TextToPath

        self.ax = ax
        box = ax.get_window_extent()
        self.size = (box.width * 72 / fig.dpi, box.height * 72 / fig.dpi)  # axes size in pt
        self.xlim, self.ylim = ax.get_xlim(), ax.get_ylim()
        self._measure = lambda text: TextToPath().get_text_width_height_descent(
            text, FontProperties(family="DejaVu Sans", size=self.FONT_SIZE), ismath=False
        )
        to_axes = ax.transAxes.inverted()
        self.placed = [tuple(legend.get_window_extent().transformed(to_axes).extents)] if legend else []
        self.curve = [self._frac(x, y) for x, y in curve]
        self.markers = [self._frac(x, y) for x, y in figure.independent if _finite(x, y)]
        self.markers += [self._frac(p[0], p[1]) for p in figure.points if _finite(p[0], p[1])]
        self.markers += [self._frac(p[0], p[1]) for p in figure.extremes if _finite(p[0], p[1])]
        self.hlines = [self._frac(self.xlim[0], g.value)[1] for g in levels]
        self.vlines = [self._frac(g.value, self.ylim[0])[0] for g in limits]

    def _frac(self, x, y):
        return ((x - self.xlim[0]) / (self.xlim[1] - self.xlim[0]), (y - self.ylim[0]) / (self.ylim[1] - self.ylim[0]))

    def _text_size(self, text, rotated=False):
        width, height, _ = self._measure(text)
        pad = 2 * 0.1 * self.FONT_SIZE
        w, h = (width + pad) / self.size[0], (height + pad) / self.size[1]
        if rotated:
            w, h = (height + pad) / self.size[0], (width + pad) / self.size[1]
        return w, h

    def _box(self, anchor, offset, ha, va, wh):
        x = anchor[0] + offset[0] / self.size[0]
        y = anchor[1] + offset[1] / self.size[1]
        x0 = {"left": x, "right": x - wh[0]}[ha]
        y0 = {"bottom": y, "top": y - wh[1]}[va]
        return (x0, y0, x0 + wh[0], y0 + wh[1])

    def _cost(self, box) -> float:
        x0, y0, x1, y1 = box
        cost = 0.0
        if x0 < 0 or y0 < 0 or x1 > 1 or y1 > 1:
            cost += 6
        cost += 3 * any(_segment_hits(box, p, q) for p, q in zip(self.curve, self.curve[1:]))
        cost += 2 * sum(y0 < h < y1 for h in self.hlines) + 2 * sum(x0 < v < x1 for v in self.vlines)
        cost += sum(x0 <= mx <= x1 and y0 <= my <= y1 for mx, my in self.markers)
        cost += 4 * sum(x0 < b[2] and b[0] < x1 and y0 < b[3] and b[1] < y1 for b in self.placed)
        return cost

    def _place(self, text, colour, xy, xycoords, candidates, rotated=False, anchor_of=None):
        """candidates: (offset in pt, ha, va, anchor in axes fractions)."""
        wh = self._text_size(text, rotated)
        best = min(candidates, key=lambda c: self._cost(self._box(c[3], c[0], c[1], c[2], wh)))
        offset, ha, va, anchor = best
        self.placed.append(self._box(anchor, offset, ha, va, wh))
        self.ax.annotate(
            text,
            xy(anchor) if callable(xy) else xy,
            xycoords=xycoords,
            xytext=offset,
            textcoords="offset points",
            ha=ha,
            va=va,
            rotation=90 if rotated else 0,
            fontsize=self.FONT_SIZE,
            color=colour,
            parse_math=False,
            zorder=6,
            annotation_clip=False,
            bbox=_LABEL_BOX,
            in_layout=False,
        )

    def level_label(self, guide):
        if not guide.label:
            return
        colour = GUIDE_STYLE.get(guide.status, GUIDE_STYLE[""])[0]
        f = self._frac(self.xlim[0], guide.value)[1]
        g = self.GAP
        candidates = [
            ((0, g), "left", "bottom", (0.01, f)),
            ((0, -g), "left", "top", (0.01, f)),
            ((0, g), "right", "bottom", (0.99, f)),
            ((0, -g), "right", "top", (0.99, f)),
        ]
        self._place(guide.label, colour, lambda a: (a[0], guide.value), self.ax.get_yaxis_transform(), candidates)

    def limit_label(self, guide):
        if not guide.label:
            return
        colour = GUIDE_STYLE.get(guide.status, GUIDE_STYLE[""])[0]
        f = self._frac(guide.value, self.ylim[0])[0]
        g = self.GAP
        candidates = [
            ((-g, 0), "right", "top", (f, 0.98)),
            ((-g, 0), "right", "bottom", (f, 0.02)),
            ((g, 0), "left", "top", (f, 0.98)),
            ((g, 0), "left", "bottom", (f, 0.02)),
        ]
        self._place(
            guide.label, colour, lambda a: (guide.value, a[1]), self.ax.get_xaxis_transform(), candidates, rotated=True
        )

    def point_label(self, x, y, label):
        if not label or not _finite(x, y):
            return
        anchor = self._frac(x, y)
        d = self.GAP + 2.5  # clear of the dot
        quadrants = {
            "below right": ((d, -d), "left", "top", anchor),
            "above left": ((-d, d), "right", "bottom", anchor),
            "above right": ((d, d), "left", "bottom", anchor),
            "below left": ((-d, -d), "right", "top", anchor),
        }
        # a rising curve leaves the lower right and upper left free, a falling one the other two
        before, after = _height_near(self.curve, anchor[0] - 0.01), _height_near(self.curve, anchor[0] + 0.01)
        rising = before is None or after >= before
        order = (
            ["below right", "above left", "above right", "below left"]
            if rising
            else ["above right", "below left", "below right", "above left"]
        )
        self._place(label, INK, (x, y), "data", [quadrants[k] for k in order])


def _height_near(curve, fx):
    """The curve's height (axes fraction) at fx by linear interpolation; None without a curve."""
    if not curve:
        return None
    pts = sorted(curve)
    if fx <= pts[0][0]:
        return pts[0][1]
    for (xa, ya), (xb, yb) in zip(pts, pts[1:]):
        if xa <= fx <= xb:
            return ya if xb == xa else ya + (yb - ya) * (fx - xa) / (xb - xa)
    return pts[-1][1]


def _segment_hits(box, p, q) -> bool:
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
