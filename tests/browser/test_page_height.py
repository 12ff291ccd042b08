"""The longest project page of the demo is at most half as tall as it was before each chart's
findings were said once.

Baseline, measured on the site before that change (each chart's findings in its subtitle,
its summary line and an unordered list of up to eleven bullets; method notes and cautions
open; the project's notes after the charts): the demo built with ``steadyline build
projects``, each project page opened in this headless Chromium at a viewport 1280 px wide and
again 390 px wide (900 px tall), every chart awaited (``window.steadylineCharts``), then
``document.documentElement.scrollHeight`` read. The longest page was
wheel-build-lead-time's at both widths: 9,847 px at 1280 px and 16,631 px at 390 px.
"""

from __future__ import annotations

import pytest
from test_site import open_page

pytestmark = [pytest.mark.browser, pytest.mark.slow]

BASELINE_PX = {1280: 9847, 390: 16631}  # wheel-build-lead-time, measured as told above

PAGE_HEIGHT = """
async () => {
  await window.steadylineCharts;
  return document.documentElement.scrollHeight;
}
"""


@pytest.mark.parametrize("width", sorted(BASELINE_PX, reverse=True))
def test_the_longest_project_page_is_at_most_half_as_tall(browser, site_url, built_site, width):
    ctx = browser.new_context(base_url=site_url, viewport={"width": width, "height": 900})
    ctx.set_default_timeout(30_000)
    heights, problems = {}, []
    try:
        for d in sorted((built_site / "projects").iterdir()):
            path = f"projects/{d.name}/index.html"
            page, watch = open_page(ctx, site_url, path)
            try:
                heights[d.name] = page.evaluate(PAGE_HEIGHT)
            finally:
                page.close()
            problems += [f"{path}: {p}" for p in watch.problems]
    finally:
        ctx.close()
    assert not problems, problems
    assert len(heights) >= 9, heights
    slug, tallest = max(heights.items(), key=lambda kv: kv[1])
    assert tallest <= BASELINE_PX[width] / 2, (
        f"at {width} px the longest project page, {slug}, is {tallest} px: more than half of "
        f"{BASELINE_PX[width]} px ({heights})"
    )


def test_the_more_link_opens_the_cards_data_table(browser_context, site_url):
    page, watch = open_page(browser_context, site_url, "projects/wheel-build-lead-time/index.html")
    try:
        link = page.locator("ul.findings li.more a").first
        target = link.get_attribute("href")[1:]
        assert not page.evaluate(f"document.getElementById({target!r}).open")
        link.click()
        assert page.evaluate(f"document.getElementById({target!r}).open")
        assert page.evaluate(f"document.getElementById({target!r}).tagName") == "DETAILS"
    finally:
        page.close()
    assert not watch.problems, watch.problems
