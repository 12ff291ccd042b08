"""Charts fit every screen and paper: a window that narrows, a phone, an A4 page.

- Resize: every chart is drawn again for its box's new width once resizing settles (stacked
  charts and wrapped titles were fitted once and kept their first width: the page scrolled
  sideways).
- Phone (390 px): no page scrolls sideways, time charts keep at least 300 px of plot (their
  limit labels move into the plot) and other charts 100 px.
- A4 portrait: laid out as print (print media at the paper's width), every chart's drawing, its
  labels and its points lie inside the page; and a real PDF printed by Chromium holds every
  chart's title and keeps all its text and drawing inside the page box.
"""

from __future__ import annotations

import re

import pytest
from test_site import open_page, screenshot_pages, site_pages

pytestmark = pytest.mark.browser

# Every drawn chart's box, and the boxes of its text and point marks, in page coordinates.
CHART_BOXES = """
async () => {
  await new Promise(r => setTimeout(r, 450));   // let a resize settle (200 ms) and start drawing
  await window.steadylineCharts;
  const box = e => { const r = e.getBoundingClientRect();
                     return [r.left, r.top, r.right, r.bottom, r.width, r.height]; };
  return {
    clientWidth: document.documentElement.clientWidth,
    scrollWidth: document.documentElement.scrollWidth,
    charts: Array.from(document.querySelectorAll('.chart[data-render=done]')).map(c => {
      const svg = c.querySelector('svg');
      const marks = Array.from(svg.querySelectorAll(
        'text, g.mark-symbol path, g.role-axis-domain'));
      return {id: c.id, svg: box(svg),
              axes: Array.from(c.querySelectorAll('g.role-axis-domain'))
                         .map(g => g.getBBox().width),
              marks: marks.filter(m => (m.textContent || 'x').trim())
                          .map(m => [m.tagName, (m.textContent || '').slice(0, 40), box(m)])};
    }),
  };
}
"""


def _outside(state: dict, right: float) -> list[str]:
    """Marks and charts that reach past *right* (px) or outside their own chart's drawing."""
    bad = []
    for c in state["charts"]:
        left, _top, r, _bottom = c["svg"][:4]
        if r > right + 1 or left < -1:
            bad.append(f"{c['id']}: drawing spans {left:.0f}..{r:.0f} px, page {right:.0f} px")
        for tag, text, (ml, _mt, mr, _mb, mw, mh) in c["marks"]:
            if mw == 0 and mh == 0:
                continue  # not displayed
            if ml < left - 1 or mr > r + 1 or mr > right + 1 or ml < -1:
                bad.append(f"{c['id']}: {tag} {text!r} at {ml:.0f}..{mr:.0f} px is cut")
    return bad


def test_charts_are_drawn_again_for_a_narrower_window(browser, site_url, built_site):
    ctx = browser.new_context(base_url=site_url, viewport={"width": 1280, "height": 900})
    ctx.set_default_timeout(30_000)
    try:
        path = next(
            p
            for p in screenshot_pages(built_site)
            if p.endswith("/index.html") and p.startswith("projects/")
        )
        page, watch = open_page(ctx, site_url, path)
        wide = page.evaluate(CHART_BOXES)
        page.set_viewport_size({"width": 700, "height": 900})
        narrow = page.evaluate(CHART_BOXES)
        page.close()
    finally:
        ctx.close()
    assert not watch.problems, watch.problems
    assert narrow["scrollWidth"] <= narrow["clientWidth"], "the page scrolls sideways"
    assert not _outside(narrow, narrow["clientWidth"])
    # every chart was drawn again for its box's new width: its x axis changed length (shorter,
    # or longer where a chart that shared a row at 1280 px has the row to itself at 700 px)
    before = {c["id"]: max(c["axes"] or [0]) for c in wide["charts"]}
    after = {c["id"]: max(c["axes"] or [0]) for c in narrow["charts"]}
    assert before.keys() == after.keys() and before
    kept = [cid for cid in before if before[cid] and abs(after[cid] - before[cid]) < 1]
    assert not kept, f"charts that kept their first width: {kept}"


# Time charts (run, control, control by period) keep at least 300 px of plot on a phone: their
# limit labels move into the plot there. Other charts keep at least 100 px (a Pareto by period
# is as wide as its bars need).
TIME_CHART = re.compile(r"-(run|control|staged-control)$")
PHONE_PLOT_MIN = {True: 300, False: 100}


def test_a_phone_keeps_300_px_of_plot_for_time_charts(browser, site_url, built_site):
    ctx = browser.new_context(base_url=site_url, viewport={"width": 390, "height": 844})
    ctx.set_default_timeout(30_000)
    problems = []
    try:
        for path in dict.fromkeys(list(screenshot_pages(built_site)) + site_pages(built_site)[:6]):
            page, watch = open_page(ctx, site_url, path)
            try:
                st = page.evaluate(CHART_BOXES)
            finally:
                page.close()
            problems += [f"{path}: {p}" for p in watch.problems]
            if st["scrollWidth"] > st["clientWidth"]:
                problems.append(f"{path}: {st['scrollWidth']} px wide in {st['clientWidth']}")
            problems += [f"{path}: {b}" for b in _outside(st, st["clientWidth"])]
            for c in st["charts"]:
                plot = max(c["axes"] or [0])
                least = PHONE_PLOT_MIN[bool(TIME_CHART.search(c["id"]))]
                if plot < least:
                    problems.append(f"{path}: {c['id']} has {plot:.0f} px of plot, not {least}")
    finally:
        ctx.close()
    assert not problems, "\n".join(problems)


A4_WIDTH_PX = 794  # 210 mm at 96 px per inch


def test_a4_portrait_print_cuts_no_chart_label_or_point(browser, site_url, built_site, tmp_path):
    from pdfminer.high_level import extract_pages, extract_text
    from pdfminer.layout import LTChar, LTCurve, LTImage

    pages = list(screenshot_pages(built_site))
    ctx = browser.new_context(base_url=site_url, viewport={"width": 1280, "height": 900})
    ctx.set_default_timeout(60_000)
    problems = []
    try:
        for path in pages:
            page, watch = open_page(ctx, site_url, path)
            try:
                page.evaluate(CHART_BOXES)
                titles = page.evaluate(
                    "() => Array.from(document.querySelectorAll('.display h4'))"
                    ".map(h => h.textContent.trim())"
                )
                pdf = tmp_path / (path.replace("/", "-") + ".pdf")
                page.pdf(path=str(pdf), format="A4")
                # the same page laid out as print at the paper's width
                page.emulate_media(media="print")
                page.set_viewport_size({"width": A4_WIDTH_PX, "height": 1123})
                st = page.evaluate(CHART_BOXES)
            finally:
                page.close()
            problems += [f"{path}: {p}" for p in watch.problems]
            problems += [f"{path} (print): {b}" for b in _outside(st, st["clientWidth"])]
            # the PDF Chromium printed: every display's title is in it, nothing lies outside
            # the page box
            text = re.sub(r"\s+", "", extract_text(str(pdf)))
            problems += [
                f"{path}: PDF lacks {t!r}" for t in titles if re.sub(r"\s+", "", t) not in text
            ]
            for n, pg in enumerate(extract_pages(str(pdf))):
                stack = [pg]
                while stack:
                    o = stack.pop()
                    if isinstance(o, LTChar | LTCurve | LTImage) and (
                        o.x0 < -1 or o.y0 < -1 or o.x1 > pg.width + 1 or o.y1 > pg.height + 1
                    ):
                        problems.append(
                            f"{path}: PDF page {n + 1}: {type(o).__name__} at "
                            f"{tuple(round(v) for v in o.bbox)} outside the page"
                        )
                    if hasattr(o, "__iter__"):
                        stack.extend(o)
    finally:
        ctx.close()
    assert not problems, "\n".join(problems[:40])
