"""The HTML sheets as a reader's browser lays them out: headless Chromium, one process per session.

For every demo sheet: each <math> element is laid out as MathML (a math display type, a non-zero
height, fractions stacked), nothing sticks out of the page at a 1000 px screen width or at 794 px
(A4 at 96 px per inch), and a full-page screenshot at A4 width is a real PNG of the whole page.
The detectors themselves are checked on small pages that are wrong on purpose.
"""

from __future__ import annotations

import struct
from pathlib import Path

import pytest
from tests.end_to_end.demo_verdicts import DEMOS as DEMO_SHEETS

ROOT = Path(__file__).resolve().parents[2]
DEMOS = DEMO_SHEETS

A4_WIDTH = 794  # A4 portrait, 210 mm at 96 px per inch
WIDTHS = [1000, A4_WIDTH]  # a desktop window, and A4

# The outermost elements whose boxes reach past the left or right edge of the viewport, unless an ancestor
# lets the reader scroll it into view (overflow-x auto or scroll). Also the page's own scroll width,
# and, for the record, the scroll containers whose content is wider than they are.
OVERFLOW_PROBE = r"""
(() => {
  const root = document.documentElement;
  const viewport = root.clientWidth;
  const describe = (el) => {
    const r = el.getBoundingClientRect();
    return {
      tag: el.tagName.toLowerCase(),
      cls: el.getAttribute('class') || '',
      text: (el.textContent || '').replace(/\s+/g, ' ').trim().slice(0, 80),
      left: Math.round(r.left * 10) / 10, right: Math.round(r.right * 10) / 10,
      width: Math.round(r.width * 10) / 10,
    };
  };
  const scrollsX = (el) => ['auto', 'scroll'].includes(getComputedStyle(el).overflowX);
  const insideScroller = (el) => {
    for (let p = el.parentElement; p && p !== document.body && p !== root; p = p.parentElement) {
      if (scrollsX(p)) return true;
    }
    return false;
  };
  const offenders = [], scrolling = [], outside = new Set();
  for (const el of document.body.querySelectorAll('*')) {
    const r = el.getBoundingClientRect();
    if (r.width === 0 && r.height === 0) continue;
    if ((r.right > viewport + 0.5 || r.left < -0.5) && !insideScroller(el)) {
      outside.add(el);
      if (!outside.has(el.parentElement)) offenders.push(describe(el));  // the outermost one says it
    }
    if (scrollsX(el) && el.scrollWidth > el.clientWidth + 1) {
      scrolling.push({...describe(el), scrollWidth: el.scrollWidth, clientWidth: el.clientWidth});
    }
  }
  return {viewport, scrollWidth: root.scrollWidth, clientWidth: root.clientWidth, offenders, scrolling};
})()
"""

# Every <math> element: its display type (Chromium gives MathML 'math' or 'block math'), its box,
# and whether each fraction's numerator sits above its denominator with room for the bar between.
MATH_PROBE = r"""
(() => {
  const snippet = (el) => (el.textContent || '').replace(/\s+/g, ' ').trim().slice(0, 80);
  const maths = [...document.querySelectorAll('math')].map((m) => {
    const r = m.getBoundingClientRect();
    return {display: getComputedStyle(m).display, height: r.height, width: r.width,
            cls: m.getAttribute('class') || '', parent: m.parentElement.getAttribute('class') || '',
            text: snippet(m)};
  });
  const fractions = [...document.querySelectorAll('mfrac')].map((f) => {
    const [top, bottom] = [...f.children].map((c) => c.getBoundingClientRect());
    return {stacked: !!(top && bottom && top.height > 0 && bottom.height > 0 && top.bottom < bottom.top),
            text: snippet(f)};
  });
  return {maths, fractions};
})()
"""


def overflow(page) -> dict:
    return page.evaluate(OVERFLOW_PROBE)


def math_problems(page) -> tuple[int, list[str]]:
    found = page.evaluate(MATH_PROBE)
    problems = [
        f"<math> not laid out as MathML: display={m['display']!r} height={m['height']} "
        f"class={m['cls']!r} in .{m['parent']} text={m['text']!r}"
        for m in found["maths"]
        if "math" not in m["display"] or m["height"] <= 0
    ]
    problems += [f"fraction not stacked: {f['text']!r}" for f in found["fractions"] if not f["stacked"]]
    return len(found["maths"]), problems


def overflow_problems(report: dict) -> list[str]:
    problems = []
    if report["scrollWidth"] > report["clientWidth"]:
        problems.append(
            f"page scrolls sideways: scrollWidth {report['scrollWidth']} > clientWidth {report['clientWidth']}"
        )
    problems += [
        f"<{o['tag']} class={o['cls']!r}> spans x={o['left']}..{o['right']} (width {o['width']}) "
        f"past the {report['viewport']} px viewport: {o['text']!r}"
        for o in report["offenders"]
    ]
    return problems


def png_size(path) -> tuple[int, int]:
    data = path.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n", f"{path} is not a PNG"
    assert data[12:16] == b"IHDR"
    return struct.unpack(">II", data[16:24])


# ---------------------------------------------------------------- the detectors can fail


def test_overflow_detector_reports_an_over_wide_element(page, tmp_path):
    sample = tmp_path / "too-wide.html"
    sample.write_text(
        "<!DOCTYPE html><html><body style='margin:0'>"
        "<p>fits</p>"
        "<div class='too-wide' style='width:1200px'>a line wider than the page</div>"
        "<div class='scroller' style='overflow-x:auto'>"
        "<div class='wide-but-scrolled' style='width:3000px'>x</div></div>"
        "</body></html>",
        encoding="utf-8",
    )
    page.open(sample, 794)
    report = overflow(page)
    classes = {o["cls"] for o in report["offenders"]}
    assert "too-wide" in classes
    assert "wide-but-scrolled" not in classes and "scroller" not in classes
    assert report["scrollWidth"] > report["clientWidth"]
    assert any(s["cls"] == "scroller" for s in report["scrolling"])
    assert overflow_problems(report)

    page.open(sample, 1300)
    assert overflow_problems(overflow(page)) == []


def test_math_detector_reports_math_that_is_not_laid_out(page, tmp_path):
    sample = tmp_path / "math.html"
    sample.write_text(
        "<!DOCTYPE html><html><body>"
        "<math display='block'><mfrac><mn>1</mn><mi>τ</mi></mfrac></math>"
        "<p>with <math class='inline'><mi>y</mi></math> in a line</p>"
        "</body></html>",
        encoding="utf-8",
    )
    page.open(sample, 794)
    count, problems = math_problems(page)
    assert count == 2
    assert problems == []
    page.evaluate("document.querySelector('math.inline').style.display = 'none'")
    _, problems = math_problems(page)
    assert len(problems) == 1 and "'inline'" in problems[0]
    page.evaluate("document.querySelector('mfrac').style.display = 'flex'")  # side by side, as plain text would be
    _, problems = math_problems(page)
    assert any("fraction not stacked" in p for p in problems)


# ---------------------------------------------------------------- the demo sheets


def test_every_demo_is_built(sheets):
    assert len(DEMOS) >= 4
    assert set(sheets) == {demo.stem for demo in DEMOS}


@pytest.mark.parametrize("demo", [d.stem for d in DEMOS])
def test_every_math_element_is_laid_out(page, sheets, demo):
    page.open(sheets[demo], 1000)
    count, problems = math_problems(page)
    assert count == sheets[demo].read_text(encoding="utf-8").count("<math"), "DOM and source disagree on <math> count"
    assert count > 0
    assert problems == []


@pytest.mark.parametrize("width", WIDTHS)
@pytest.mark.parametrize("demo", [d.stem for d in DEMOS])
def test_nothing_sticks_out_of_the_page(page, sheets, demo, width, record_property):
    page.open(sheets[demo], width)
    report = overflow(page)
    record_property("scroll_containers_wider_than_shown", report["scrolling"])
    assert overflow_problems(report) == []


@pytest.mark.parametrize("demo", [d.stem for d in DEMOS])
def test_full_page_screenshot(page, sheets, demo, tmp_path):
    width = A4_WIDTH  # one width only: a full-page screenshot costs most of a second
    page.open(sheets[demo], width)
    shot = tmp_path / f"{demo}-{width}.png"
    size = page.screenshot(shot)
    assert shot.stat().st_size > 1000
    png_width, png_height = png_size(shot)
    assert png_width == size["width"] and png_height == size["height"]
    assert png_height > 1100, "the whole page, not just the first screen"
