"""The demo's days set aside as Chromium draws them, on a wide and a phone-sized page: the run
chart and the control chart of the daily lead time draw each point set aside as a grey square,
their legends name the mark, and the control chart's card lists the days with their reason.
Screenshots of the two charts at each width land in test-artifacts/."""

from __future__ import annotations

import json

import pytest
from test_site import open_page

from steadyline.charts import style
from steadyline.charts.series.marks import MARK_ASIDE

pytestmark = pytest.mark.browser

PAGE = "projects/wheel-build-lead-time/index.html"
LEGEND = """
(id) => Array.from(document.getElementById(id).querySelectorAll('svg .role-legend text'))
             .map(t => t.textContent)
"""
# the drawn point marks of the chart whose fill is the set-aside grey
GREY = """
([id, colour]) => Array.from(document.getElementById(id).querySelectorAll('svg path'))
  .filter(p => (p.getAttribute('fill') || '').toLowerCase() === colour).length
"""


@pytest.mark.parametrize("width", [1280, 390])
def test_the_days_set_aside_are_drawn_named_and_listed(
    browser, site_url, built_site, artifacts_dir, width
):
    results = json.loads((built_site / PAGE).parent.joinpath("results.json").read_text())
    daily = next(m for m in results["metrics"] if m["id"] == "lead-time-daily")
    k = daily["set_aside"]["points"]
    assert k == 3
    context = browser.new_context(base_url=site_url, viewport={"width": width, "height": 900})
    try:
        page, _watch = open_page(context, site_url, PAGE)
        page.evaluate("async () => { await window.steadylineCharts; }")
        for key in ("run", "control"):
            cid = f"chart-lead-time-daily-{key}"
            assert MARK_ASIDE in page.evaluate(LEGEND, cid), (width, key)
            # the points themselves, plus the legend's swatch (and, on the control chart, the
            # moving ranges that involve one: 4 of them, three set aside and the one after)
            drawn = page.evaluate(GREY, [cid, style.ASIDE.lower()])
            assert drawn >= k + 1, (width, key, drawn)
            page.locator(f"#lead-time-daily-{key}").screenshot(
                path=str(artifacts_dir / f"set-aside-{key}-{width}.png")
            )
        method = page.locator("#lead-time-daily-control details.method")
        method.locator("summary").click()
        text = method.inner_text()
        assert "2026-02-16 to 2026-02-18, 3 points: Rim shipment held at customs" in text
    finally:
        context.close()
