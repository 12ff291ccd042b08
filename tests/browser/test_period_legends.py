"""The control charts by period as Chromium draws them: the legend names, in full, every mark the
chart draws (from results.json's change evidence and the spec's points) and every kind of period
its bands show, and each band carries its kind's name."""

from __future__ import annotations

import json

import pytest
from test_site import open_page

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
