"""The response plot writer: reproducible SVG, guide styles by status, axis ranges, empty figures."""

from __future__ import annotations

import base64
import math
import re
import xml.etree.ElementTree as ET
from dataclasses import replace
from pathlib import Path

import pytest

from calcsheet.sheet.document import Figure, Guide
from calcsheet.sheet.figure import LEGEND
from calcsheet.writers.plot import GUIDE_STYLE, label_text, build_figure, figure_svg
from calcsheet.writers.svgmath import data_uri

ROOT = Path(__file__).resolve().parents[2]

SVG_NS = "{http://www.w3.org/2000/svg}"


def _rise(tau=40.0, end=200.0, n=81):
    """A first-order rise from 15 to 55 over [0, end], made up for the tests."""
    return tuple((end * i / (n - 1), 15 + 40 * (1 - math.exp(-end * i / (n - 1) / tau))) for i in range(n))


def _figure(levels=(), limits=(), points=True, curve=None, **kw):
    curve = _rise() if curve is None else curve
    return Figure(
        title="Response of w",
        x_label="t [s]",
        y_label="w [mm]",
        curve=curve,
        independent=curve[::10],
        points=((40.0, 15 + 40 * (1 - math.exp(-1)), "w(40 s)"), (160.0, 15 + 40 * (1 - math.exp(-4)), "w(160 s)"))
        if points
        else (),
        levels=levels,
        limits=limits,
        caption="",
        legend=kw.pop("legend", LEGEND),
        **kw,
    )


FULL = _figure(
    levels=(
        Guide(40.3, "level 63 %", ""),
        Guide(52.0, "limit w(200 s) >= 52 mm", "pass"),
        Guide(54.0, "limit w(200 s) <= 54 mm", "fail"),
    ),
    limits=(
        Guide(60.0, "limit t_reach <= 60 s", "pass"),
        Guide(120.0, "limit t_95 <= 120 s", "fail"),
        Guide(150.0, "limit tau <= 150 s", ""),
    ),
)


@pytest.fixture(scope="module")
def svg():
    return figure_svg(FULL)


@pytest.fixture(scope="module")
def built():
    return build_figure(FULL)


@pytest.fixture(scope="module")
def wide():
    """Levels above and below the curve, limits before and after it."""
    return build_figure(
        _figure(
            levels=(Guide(70.0, "limit w <= 70 mm", "fail"), Guide(5.0, "level 5 mm", "")),
            limits=(Guide(-50.0, "limit t >= -50 s", "pass"), Guide(300.0, "limit t_95 <= 300 s", "fail")),
        )
    )


def _lines(fig, prefix):
    return [line for line in fig.axes[0].get_lines() if (line.get_gid() or "").startswith(prefix)]


def _styles_in_group(svg_text, gid):
    root = ET.fromstring(svg_text)
    group = next(el for el in root.iter(f"{SVG_NS}g") if el.get("id") == gid)
    return [p.get("style", "") for p in group.iter(f"{SVG_NS}path")]


def test_same_figure_gives_the_same_bytes(svg):
    assert figure_svg.__wrapped__(FULL) == svg  # drawn anew, past the cache


def test_no_date_or_time_in_the_output(svg):
    assert "dc:date" not in svg
    assert not re.search(r"\d{4}-\d{2}-\d{2}", svg)
    assert not re.search(r"\d{2}:\d{2}:\d{2}", svg)


def test_inlinable_scalable_svg(svg):
    assert svg.startswith("<svg")
    assert "<?xml" not in svg and "<!DOCTYPE" not in svg
    root = ET.fromstring(svg)  # well-formed on its own
    assert re.fullmatch(r"0 0 [\d.]+ [\d.]+", root.get("viewBox"))
    assert root.get("width").endswith("pt") and root.get("height").endswith("pt")
    width = float(root.get("width")[:-2]) / 72 * 2.54
    assert 15 < width < 17  # about 16 cm wide


def test_text_is_drawn_as_paths(svg):
    assert "<text" not in svg
    assert "clip-path" in svg and re.search(r'id="p[0-9a-f]{10}"', svg)


def test_data_uri_round_trips(svg):
    uri = data_uri(svg)
    prefix = "data:image/svg+xml;base64,"
    assert uri.startswith(prefix)
    assert base64.b64decode(uri[len(prefix) :]).decode("utf-8") == svg


def test_axis_labels(built):
    ax = built.axes[0]
    assert ax.get_xlabel() == "t [s]"
    assert ax.get_ylabel() == "w [mm]"


def test_curve_independent_and_points(built):
    (curve,) = _lines(built, "calcsheet-curve")
    assert curve.get_linestyle() == "-" and curve.get_label() == "derived solution"
    (independent,) = _lines(built, "calcsheet-independent")
    assert independent.get_linestyle() == "None" and independent.get_marker() == "o"
    assert independent.get_markerfacecolor() == "white" and independent.get_label() == "independent integration"
    (points,) = _lines(built, "calcsheet-points")
    assert points.get_linestyle() == "None" and points.get_marker() == "o"
    texts = [t.get_text() for t in built.axes[0].texts]
    assert "w(40 s)" in texts and "w(160 s)" in texts


def test_guides_are_labelled(built):
    texts = {t.get_text() for t in built.axes[0].texts}
    assert {label_text(g.label) for g in FULL.levels + FULL.limits} <= texts


@pytest.mark.parametrize("status, style", [("", ":"), ("pass", "-"), ("fail", "--")])
def test_level_style_by_status(built, status, style):
    (line,) = _lines(built, f"calcsheet-level-{status or 'none'}-")
    colour, linestyle, width = GUIDE_STYLE[status]
    assert line.get_linestyle() == linestyle == style
    assert line.get_color() == colour
    assert line.get_linewidth() == width


@pytest.mark.parametrize("status, style", [("", ":"), ("pass", "-"), ("fail", "--")])
def test_limit_style_by_status(built, status, style):
    (line,) = _lines(built, f"calcsheet-limit-{status or 'none'}-")
    assert line.get_linestyle() == style
    assert line.get_color() == GUIDE_STYLE[status][0]


def test_fail_is_heavier_than_pass_and_level():
    assert GUIDE_STYLE["fail"][2] > GUIDE_STYLE["pass"][2] > 0
    assert GUIDE_STYLE["fail"][2] > GUIDE_STYLE[""][2]
    assert len({style for _, style, _ in GUIDE_STYLE.values()}) == 3
    assert len({colour for colour, _, _ in GUIDE_STYLE.values()}) == 3


def test_dash_patterns_in_the_svg(svg):
    def dashes(gid):
        (style,) = _styles_in_group(svg, gid)
        found = re.search(r"stroke-dasharray: ([\d.,\s]+)", style)
        return found.group(1).strip() if found else None

    assert dashes("calcsheet-limit-pass-0") is None  # solid
    assert dashes("calcsheet-level-pass-1") is None
    fail, level = dashes("calcsheet-limit-fail-1"), dashes("calcsheet-limit-none-2")
    assert fail and level and fail != level
    assert dashes("calcsheet-level-fail-2") == fail
    assert "#a3171b" in _styles_in_group(svg, "calcsheet-limit-fail-1")[0]
    assert "#1d6b35" in _styles_in_group(svg, "calcsheet-limit-pass-0")[0]


def test_y_range_takes_in_levels_with_a_margin(wide):
    low, high = wide.axes[0].get_ylim()
    assert high - 70.0 == pytest.approx(0.05 * 65.0)
    assert 5.0 - low == pytest.approx(0.05 * 65.0)


def test_x_range_stops_at_the_curve_when_the_limits_lie_within_it(built):
    assert built.axes[0].get_xlim() == (0.0, 200.0)


def test_x_range_extends_to_limits_beyond_the_curve(wide):
    low, high = wide.axes[0].get_xlim()
    assert low < -50.0 and high > 300.0
    (curve,) = _lines(wide, "calcsheet-curve")
    assert (min(curve.get_xdata()), max(curve.get_xdata())) == (0.0, 200.0)  # the curve is not stretched


def _legend_place(fig):
    ax = fig.axes[0]
    box, frame = ax.get_legend().get_window_extent(), ax.get_window_extent()
    vertical = "lower" if (box.y0 + box.y1) / 2 < (frame.y0 + frame.y1) / 2 else "upper"
    horizontal = "right" if (box.x0 + box.x1) / 2 > (frame.x0 + frame.x1) / 2 else "left"
    return f"{vertical} {horizontal}"


def test_legend_corner_follows_the_curve():
    assert _legend_place(build_figure(_figure())) == "lower right"  # a rise ends high
    falling_curve = tuple((x, 70 - y) for x, y in _rise())
    assert _legend_place(build_figure(_figure(curve=falling_curve, points=False))) == "upper right"


def test_the_legend_goes_below_the_axes_when_every_corner_would_cover_a_line(built):
    # FULL has levels and limits crossing every corner of the axes
    assert built.axes[0].get_legend() is None and len(built.legends) == 1
    legend, frame = built.legends[0].get_window_extent(), built.axes[0].get_window_extent()
    assert legend.y1 < frame.y0


def test_without_levels_limits_or_points_and_with_awkward_text():
    plain = Figure(
        title="a <b> & $c$", x_label="cost [$]", y_label="q -- <W>", curve=_rise(), independent=(), points=()
    )
    svg = figure_svg(plain)
    assert svg.startswith("<svg") and "viewBox" in svg
    ET.fromstring(svg)  # '<', '&', '--' and '$' in the labels keep the SVG well-formed


def test_completely_empty_figure():
    empty = Figure(title="nothing", x_label="x", y_label="y", curve=(), independent=(), points=())
    svg = figure_svg(empty)
    assert "viewBox" in svg
    assert "derived solution" not in svg  # no legend without anything to name


def test_constant_curve_and_awkward_point_and_guide_labels():
    flat = tuple((float(i), 3.0) for i in range(5))
    odd = Figure(
        title="flat",
        x_label="t",
        y_label="q",
        curve=flat,
        independent=(),
        points=((2.0, 3.0, "q(2) -- $x$"),),
        levels=(Guide(3.0, "limit q <= 3 & more", "pass"),),
    )
    fig = build_figure(odd)
    low, high = fig.axes[0].get_ylim()
    assert low < 3.0 < high
    assert {"q(2) -- $x$", "limit q ≤ 3 & more"} <= {t.get_text() for t in fig.axes[0].texts}


def test_labels_print_comparisons_and_units_as_the_sheet_does():
    fig = build_figure(replace(FULL, levels=(Guide(60.0, "limit T(45 min) <= 60 degC", "pass"),)))
    texts = {t.get_text() for t in fig.axes[0].texts}
    assert "limit T(45 min) ≤ 60 °C" in texts and not any("<=" in t or "degC" in t for t in texts)
    assert label_text("T [degC]") == "T [°C]" and label_text("q [m^3/s]") == "q [m³/s]"


def test_a_limit_at_one_point_is_drawn_at_that_point_not_across_the_plot():
    # The bus demo's v(60 s) <= 50 V: a mark at t = 60 s, and no horizontal line at 50 V for it (a curve that
    # crosses 50 V earlier would otherwise look like a failure). The level 50 V asked for in [evaluate] stays a line.
    from calcsheet.pipeline import build_sheet

    built = build_sheet(ROOT / "inputs" / "bus-capacitor-bleed-down.toml")
    figure = next(b for s in built.sheet.sections for b in s.blocks if type(b).__name__ == "Figure")
    assert [(p.x, p.value, p.status, p.allowed) for p in figure.point_limits] == [(60.0, 50.0, "pass", "below")]
    assert not any(g.label.startswith("limit v(60 s)") for g in figure.levels)
    assert any(g.label == "level 50 V" for g in figure.levels)
    assert len(figure.crossings) == 2  # the two levels asked for, each where it is first reached


def test_the_legend_words_come_from_the_figure_not_the_writer():
    from calcsheet.sheet.document import Legend

    words = Legend("LINE-X", "RINGS-X", "DOTS-X", "UP-X", "DOWN-X")
    svg = figure_svg(_figure(legend=words))
    assert "LINE-X" in svg and "RINGS-X" in svg and "DOTS-X" in svg
    assert "derived solution" not in svg
