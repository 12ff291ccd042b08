"""The control charts by period as Chromium draws them: the legend names, in full, every mark the
chart draws (from results.json's change evidence and the spec's points) and every kind of period
its bands show, and each band carries its kind's name."""

from __future__ import annotations

import json

import pytest
from test_site import open_page, site_pages

from steadyline.charts.series.marks import CHANGE_MARKS, MARK_ORDINARY, MARK_OWN_SIGNAL

pytestmark = pytest.mark.browser

# Every text of a drawn chart's SVG, and those of its legends.
DRAWN = """
(id) => {
  const el = document.getElementById(id);
  const texts = Array.from(el.querySelectorAll('svg text')).map(t => t.textContent);
  return {texts: texts, legend: Array.from(el.querySelectorAll('svg .role-legend text'))
                                    .map(t => t.textContent)};
}
"""


def _history_charts(built_site):
    out = []
    for res in sorted(built_site.glob("projects/*/results.json")):
        r = json.loads(res.read_text())
        for h in r["history"] or []:
            if "control_chart_by_period" in h:
                out.append((r["project"]["slug"], h))
    return out


@pytest.mark.slow  # seven history pages drawn: about 20 s
def test_legends_name_every_mark_and_period_in_full(browser_context, site_url, built_site):
    charts = _history_charts(built_site)
    assert len(charts) >= 8
    by_page: dict[str, list] = {}
    for slug, h in charts:
        by_page.setdefault(f"projects/{slug}/history.html", []).append(h)
    for path, entries in by_page.items():
        page, watch = open_page(browser_context, site_url, path)
        try:
            page.evaluate("async () => { await window.steadylineCharts; }")
            for h in entries:
                cid = f"chart-history-{h['id']}-staged-control"
                drawn = page.evaluate(DRAWN, cid)
                sc = h["control_chart_by_period"]
                marks = {MARK_ORDINARY} | {
                    CHANGE_MARKS[g["direction"]] for g in sc["change_evidence"]
                }
                spec = json.loads(
                    (built_site / path)
                    .parent.joinpath("data", f"history-{h['id']}-staged-control.vl.json")
                    .read_text()
                )
                if any(p["own"] for p in spec["datasets"]["point_info"]):
                    marks.add(MARK_OWN_SIGNAL)
                legend = drawn["legend"]
                for words in marks:
                    assert words in legend, (path, h["id"], words, legend)
                assert not any(t.endswith("…") for t in legend), legend  # none cut short
                kinds = {b["kind"] for b in spec["datasets"]["bands"]}
                assert "period" in legend
                for kind in kinds:
                    assert kind in legend, (path, h["id"], kind, legend)
                    label = kind[:1].upper() + kind[1:]
                    # the band's own name, unless the band is too narrow for it
                    if any(b["label"] for b in spec["datasets"]["bands"] if b["kind"] == kind):
                        assert any(t.startswith(label[:8]) for t in drawn["texts"]), label
        finally:
            page.close()
        assert watch.problems == [], watch.problems


# Each legend label's box, and the box of the drawing it belongs to (an SVG shows nothing past
# its edge), as Chromium lays them out.
LEGEND_BOXES = """
() => Array.from(document.querySelectorAll('.chart svg')).flatMap(svg => {
  const box = svg.getBoundingClientRect(), chart = svg.closest('.chart');
  return Array.from(svg.querySelectorAll('.role-legend text')).map(t => {
    const r = t.getBoundingClientRect();
    return [chart.id, t.textContent, r.left - box.left, r.right - box.right, r.width];
  });
})
"""


@pytest.mark.slow  # every page of the demo drawn: about 20 s
def test_every_legend_label_is_drawn_whole_inside_its_chart(browser_context, site_url, built_site):
    # a legend of two columns once ran past the card's edge and cut "share of the variance
    # (contribution)"; Vega's own cut ends a label with an ellipsis
    seen = 0
    for path in site_pages(built_site):
        page, _ = open_page(browser_context, site_url, path)
        try:
            page.evaluate("async () => { await window.steadylineCharts; }")
            boxes = page.evaluate(LEGEND_BOXES)
        finally:
            page.close()
        for chart_id, text, left, right, width in boxes:
            seen += 1
            where = (path, chart_id, text)
            assert left >= -1 and right <= 1 and width > 0, where
            assert not text.endswith("…"), where
    assert seen >= 100
