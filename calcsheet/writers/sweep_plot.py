"""A sweep's plots, drawn with matplotlib as the sheet's response plot is (writers/plot.py's settings).

``sweep_image``: one panel per quantity against the varied parameter, each point marked by the verdict of the
criterion on that quantity, each criterion's limit as a horizontal line and each limiting value as a vertical
line with a diamond where the quantity meets the limit. ``family_image``: the response for a few values of the
parameter on one plot, with the criteria's limits. Only reads the layout of sheet/sweep_layout.py; every word
comes from it. Byte-for-byte reproducible: matplotlib's defaults, a fixed hash salt, no date, no software tag.
"""

from __future__ import annotations

import io
import math

from calcsheet.writers.build_date import invalid_source_date_epoch_hidden
from calcsheet.writers.plot import _RC, EXTREME, FAIL, GREY, GRID, INK, PASS

PANEL_HEIGHT_IN = 2.1
WIDTH_IN = 6.3
PNG_DPI = 150
# status -> (marker, face colour, edge colour): told apart by shape as well as colour, for greyscale prints
MARKERS = {
    "pass": ("o", PASS, PASS),
    "fail": ("X", FAIL, FAIL),
    "not assessed": ("o", "white", GREY),
    "": ("o", INK, INK),
}
FAMILY_STYLES = ("-", "--", "-.", ":", (0, (6, 1.5, 1, 1.5, 1, 1.5)))
LABEL_SIZE = 7.0
ABSENT = "^"  # a point whose quantity does not exist, on the panel's top edge
_LABEL_BOX = {"boxstyle": "square,pad=0.1", "facecolor": "white", "edgecolor": "none", "alpha": 0.8}


def sweep_image(plot, fmt: str) -> str | bytes:
    return _saved(lambda: _sweep_figure(plot), fmt, plot.title)


def family_image(plot, fmt: str) -> str | bytes:
    return _saved(lambda: _family_figure(plot), fmt, plot.title)


def _saved(build, fmt: str, title: str) -> str | bytes:
    import matplotlib
    import matplotlib.style

    with matplotlib.style.context("default"), matplotlib.rc_context(_RC):
        fig = build()
        out = io.BytesIO()
        with invalid_source_date_epoch_hidden():
            if fmt == "svg":
                from matplotlib.backends.backend_svg import FigureCanvasSVG

                FigureCanvasSVG(fig)
                fig.savefig(out, format="svg", metadata={"Date": None, "Creator": None, "Title": title})
            else:
                from matplotlib.backends.backend_agg import FigureCanvasAgg

                FigureCanvasAgg(fig)
                fig.savefig(out, format="png", dpi=PNG_DPI, metadata={"Software": None, "Title": title})
    data = out.getvalue()
    return data.decode("utf-8") if fmt == "svg" else data


def _sweep_figure(plot):
    from matplotlib.figure import Figure

    n = len(plot.panels)
    fig = Figure(figsize=(WIDTH_IN, 0.6 + PANEL_HEIGHT_IN * n), layout="constrained")
    fig.get_layout_engine().set(w_pad=4 / 72, h_pad=4 / 72)
    axes = fig.subplots(n, 1, sharex=True, squeeze=False)[:, 0]
    fig.suptitle(plot.title, fontsize=8.5, color=INK)
    for i, (ax, panel) in enumerate(zip(axes, plot.panels)):
        _panel(ax, panel, plot.log, gid=f"calcsheet-sweep-{i}")
    axes[-1].set_xlabel(plot.x_label, parse_math=False)
    shown = {s for p in plot.panels for (_, y), s in zip(p.points, p.statuses) if s and y is not None}
    handles = []
    for status, words in plot.legend:
        if status in shown:
            marker, face, edge = MARKERS[status]
            handles.append(_handle(axes[0], marker, face, edge, words))
    if any(y is None for p in plot.panels for _, y in p.points):
        handles.append(_handle(axes[0], ABSENT, "white", INK, plot.absent))
    if handles:
        axes[0].legend(handles=handles, loc="best", frameon=True, framealpha=0.92, edgecolor=GRID, fancybox=False)
    return fig


def _handle(ax, marker, face, edge, words):
    """A legend entry for a kind of point marker."""
    (handle,) = ax.plot([], [], linestyle="none", marker=marker, markerfacecolor=face, markeredgecolor=edge)
    handle.set_label(words)
    return handle


def _panel(ax, panel, log: bool, gid: str) -> None:
    ax.set_ylabel(panel.y_label, parse_math=False)
    ax.grid(True, color=GRID, linewidth=0.5)
    ax.set_axisbelow(True)
    if log:
        ax.set_xscale("log")
    xs = [x for x, _ in panel.points]
    ys = [math.nan if y is None else y for _, y in panel.points]
    ax.plot(xs, ys, color=INK, linewidth=1.2, zorder=3, gid=f"{gid}-line")
    for status in MARKERS:
        chosen = [(x, y) for (x, y), s in zip(panel.points, panel.statuses) if s == status and y is not None]
        if chosen:
            marker, face, edge = MARKERS[status]
            ax.plot(
                [x for x, _ in chosen],
                [y for _, y in chosen],
                linestyle="none",
                marker=marker,
                markersize=4.5,
                markerfacecolor=face,
                markeredgecolor=edge,
                markeredgewidth=0.9,
                zorder=4,
                clip_on=False,
                gid=f"{gid}-{status.replace(' ', '-') or 'points'}",
            )
    absent = [(x, s) for (x, y), s in zip(panel.points, panel.statuses) if y is None]
    if absent:  # the quantity does not exist there (a level never reached): marked on the top edge
        for status in MARKERS:
            chosen = [x for x, s in absent if s == status]
            if chosen:
                _, face, edge = MARKERS[status]
                ax.plot(
                    chosen,
                    [1.0] * len(chosen),
                    transform=ax.get_xaxis_transform(),
                    linestyle="none",
                    marker=ABSENT,
                    markersize=5.0,
                    markerfacecolor="white" if status == "" else face,
                    markeredgecolor=edge,
                    zorder=4,
                    clip_on=False,
                    gid=f"{gid}-absent-{status.replace(' ', '-') or 'points'}",
                )
    values = [y for _, y in panel.points if y is not None] + [limit.value for limit in panel.limits]
    if values:
        low, high = min(values), max(values)
        pad = 0.08 * (high - low) if high > low else 0.1 * (abs(low) or 1.0)
        ax.set_ylim(low - pad, high + pad)
    for j, limit in enumerate(panel.limits):
        ax.axhline(limit.value, color=GREY, linestyle="--", linewidth=1.1, zorder=2, gid=f"{gid}-limit-{j}")
        ax.annotate(
            limit.label,
            (0.01, limit.value),
            xycoords=ax.get_yaxis_transform(),
            xytext=(0, 2.5),
            textcoords="offset points",
            ha="left",
            va="bottom",
            fontsize=LABEL_SIZE,
            color=GREY,
            parse_math=False,
        )
        for x, label in limit.changes:
            ax.axvline(x, color=EXTREME, linestyle=":", linewidth=1.0, zorder=2)
            ax.plot(
                [x],
                [limit.value],
                linestyle="none",
                marker="D",
                markersize=5.5,
                markerfacecolor=EXTREME,
                markeredgecolor="white",
                zorder=5,
                gid=f"{gid}-limiting-{j}",
            )
            ax.annotate(
                label,
                (x, limit.value),
                xytext=(4, -4),
                textcoords="offset points",
                ha="left",
                va="top",
                fontsize=LABEL_SIZE,
                color=EXTREME,
                parse_math=False,
                zorder=6,
                bbox=_LABEL_BOX,
            )


def _family_figure(plot):
    from matplotlib import colormaps
    from matplotlib.figure import Figure

    fig = Figure(figsize=(WIDTH_IN, 3.6), layout="constrained")
    fig.get_layout_engine().set(w_pad=4 / 72, h_pad=4 / 72)
    ax = fig.add_subplot()
    fig.suptitle(plot.title, fontsize=8.5, color=INK)
    ax.set_xlabel(plot.x_label, parse_math=False)
    ax.set_ylabel(plot.y_label, parse_math=False)
    ax.grid(True, color=GRID, linewidth=0.5)
    ax.set_axisbelow(True)
    colours = colormaps["viridis"]
    n = len(plot.curves)
    for i, (label, points) in enumerate(plot.curves):
        ax.plot(
            [x for x, _ in points],
            [y for _, y in points],
            color=colours(0.85 * i / max(n - 1, 1)),
            linestyle=FAMILY_STYLES[i % len(FAMILY_STYLES)],
            linewidth=1.4,
            label=label,
            zorder=3,
            gid=f"calcsheet-family-{i}",
        )
    for j, (value, label) in enumerate(plot.levels):
        ax.axhline(value, color=GREY, linestyle="--", linewidth=1.0, zorder=2, gid=f"calcsheet-family-level-{j}")
        _guide_label(ax, label, (0.01, value), ax.get_yaxis_transform(), 0)
    for j, (value, label) in enumerate(plot.limits):
        ax.axvline(value, color=GREY, linestyle="--", linewidth=1.0, zorder=2, gid=f"calcsheet-family-limit-{j}")
        _guide_label(ax, label, (value, 0.98), ax.get_xaxis_transform(), 90)
    for j, (x, value, label) in enumerate(plot.point_limits):
        ax.plot(
            [x],
            [value],
            linestyle="none",
            marker="_",
            markersize=16,
            markeredgewidth=2.4,
            color=GREY,
            zorder=5,
            clip_on=False,
            gid=f"calcsheet-family-point-limit-{j}",
        )
        ax.annotate(
            label,
            (x, value),
            xytext=(0, 4),
            textcoords="offset points",
            ha="center",
            va="bottom",
            fontsize=LABEL_SIZE,
            color=GREY,
            parse_math=False,
            bbox=_LABEL_BOX,
            zorder=6,
        )
    if plot.curves:
        ax.legend(loc="best", frameon=True, framealpha=0.92, edgecolor=GRID, fancybox=False)
    return fig


def _guide_label(ax, label: str, at, transform, rotation: int) -> None:
    ax.annotate(
        label,
        at,
        xycoords=transform,
        xytext=(2.5, 2.5) if rotation == 0 else (-2.5, 0),
        textcoords="offset points",
        ha="left" if rotation == 0 else "right",
        va="bottom" if rotation == 0 else "top",
        rotation=rotation,
        fontsize=LABEL_SIZE,
        color=GREY,
        parse_math=False,
        bbox=_LABEL_BOX,
    )
