"""Category metrics by period: what each Pareto and column chart counts, and in which order.

- The project page's Pareto and column chart count the baseline (like every other display on
  that page), or all data when there is no baseline period, and every categorical card names
  what it counts and how many values.
- The before-and-after page's baseline Pareto stands in descending order; the after panel
  follows the baseline's order, categories new after the baseline appended, largest first.
- The sentence where a comparison table would stand never says there is no after data beside
  a chart of the after period.

The tallies here are made with csv and collections.Counter from the demo's own CSV files.
"""

from __future__ import annotations

import csv
import html
import json
import re
import sys
from collections import Counter
from datetime import date
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent))
from corpus.kit import meta, write  # noqa: E402

DEMO = Path(__file__).resolve().parents[1] / "projects"
CASES = [  # slug, metric id, file, time column, category column, baseline, after
    (
        "customer-returns",
        "return-reasons",
        "returns.csv",
        "received",
        "reason",
        ("2026-01-05", "2026-05-29"),
        ("2026-07-06", "2026-11-20"),
    ),
    (
        "paint-finish-defects",
        "defect-types",
        "paint_defects.csv",
        "found",
        "defect_type",
        ("2026-01-12", "2026-04-03"),
        ("2026-05-04", None),
    ),
]


def _tally(file: Path, time: str, column: str, period) -> Counter:
    start = date.fromisoformat(period[0])
    end = date.fromisoformat(period[1]) if period[1] else date.max
    with file.open(newline="", encoding="utf-8") as f:
        return Counter(
            r[column] for r in csv.DictReader(f) if start <= date.fromisoformat(r[time][:10]) <= end
        )


def _ranked(c: Counter) -> list[str]:
    return sorted(c, key=lambda k: (-c[k], k))


def _cards(page: str, metric_id: str) -> dict[str, tuple[str, str, str]]:
    """(title, summary, spec JSON) of every card of one metric, by display key. The summary is
    the chart's description for readers who cannot see it (its aria-label): the card's lead
    line under the title may be its most important finding instead."""
    out = {}
    for m in re.finditer(
        r'<figure class="display" id="(?:history-)?'
        + re.escape(metric_id)
        + r'-([a-z-]+)".*?<h4>(.*?)</h4>.*?role="img" aria-label="[^"]*?: (.*?)">'
        r'.*?<script type="application/json"[^>]*>(.*?)</script>',
        page,
        re.S,
    ):
        out[m[1]] = (html.unescape(m[2]), html.unescape(m[3]), m[4])
    return out


@pytest.mark.parametrize("case", CASES, ids=[c[0] for c in CASES])
def test_project_page_counts_the_baseline_and_says_so(demo_site, case):
    slug, mid, file, time, column, baseline, _ = case
    base = _tally(DEMO / slug / file, time, column, baseline)
    doc = json.loads((demo_site / "projects" / slug / "results.json").read_text("utf-8"))
    m = next(x for x in doc["metrics"] if x["id"] == mid)
    assert m["pareto"]["categories"] == _ranked(base)
    assert m["pareto"]["counts"] == [base[c] for c in _ranked(base)]
    assert m["pareto"]["scope"] == "baseline"
    assert m["pareto"]["values"] == sum(base.values())
    assert (
        dict(zip(m["column_chart"]["categories"], m["column_chart"]["counts"], strict=True)) == base
    )
    page = (demo_site / "projects" / slug / "index.html").read_text("utf-8")
    cards = _cards(page, mid)
    assert set(cards) == {"pareto", "column"}
    period = f"baseline {baseline[0]} to {baseline[1]}, {sum(base.values())} values"
    for key, (title, summary, spec) in cards.items():
        assert "baseline" in title, (key, title)
        assert period in summary, (key, summary)
        assert json.loads(spec)["title"]["subtitle"][0] == period, key


@pytest.mark.parametrize("case", CASES, ids=[c[0] for c in CASES])
def test_history_pareto_takes_the_baseline_order(demo_site, case):
    slug, mid, file, time, column, baseline, after = case
    base = _tally(DEMO / slug / file, time, column, baseline)
    later = _tally(DEMO / slug / file, time, column, after)
    order = _ranked(base) + _ranked(Counter({c: n for c, n in later.items() if c not in base}))
    doc = json.loads((demo_site / "projects" / slug / "results.json").read_text("utf-8"))
    h = next(x for x in doc["history"] if x["id"] == mid)
    assert h["paretos"]["Baseline"]["categories"] == _ranked(base)
    assert h["paretos"]["After"]["categories"] == order
    assert h["paretos"]["After"]["counts"] == [later[c] for c in order]
    page = (demo_site / "projects" / slug / "history.html").read_text("utf-8")
    spec = json.loads(_cards(page, mid)["period-pareto"][2])
    for panel, tally in (("p0_bars", base), ("p1_bars", later)):
        bars = spec["datasets"][panel]
        assert [b["category"] for b in bars] == order, panel
        assert [b["count"] for b in bars] == [tally[c] for c in order], panel
    assert [b["count"] for b in spec["datasets"]["p0_bars"]] == sorted(base.values(), reverse=True)


@pytest.mark.parametrize("case", CASES, ids=[c[0] for c in CASES])
def test_no_sentence_denies_the_after_data_beside_its_chart(demo_site, case):
    slug, mid, *_ = case
    page = (demo_site / "projects" / slug / "history.html").read_text("utf-8")
    section = page[page.index(f'id="metric-{mid}"') :]
    section = section[: section.index("</section>")]
    assert "No after period with data yet" not in section
    # the change in mix is tested (its sentence and table), so no sentence says "no test"
    assert "The shares of the categories " in section
    assert "Pearson&#39;s chi-square test of homogeneity" in section
    assert "with no test of the change" not in section


def test_without_a_baseline_period_the_cards_say_all_data(tmp_path):
    from steadyline.pipeline.build import BuildOptions, build

    rows = ["day,reason"] + [f"2026-01-{1 + i % 28:02d},{'ab'[i % 3 == 0]}" for i in range(30)]
    projects = write(
        tmp_path / "projects",
        {
            "p/project.toml": meta(
                metric={"type": "categories", "value": None, "category": "reason", "time": "day"},
                comparison=None,
            ),
            "p/data.csv": "\n".join(rows) + "\n",
        },
    )
    report = build(BuildOptions(projects, tmp_path / "site", force=True, jobs=1))
    assert report.ok
    page = (tmp_path / "site" / "projects" / "p" / "index.html").read_text("utf-8")
    cards = _cards(page, "m")
    assert set(cards) == {"pareto", "column"}
    for key, (title, summary, _) in cards.items():
        assert title.endswith("all data"), (key, title)
        assert "all data (no baseline period set), 30 values" in summary, (key, summary)
    doc = json.loads((tmp_path / "site" / "projects" / "p" / "results.json").read_text())
    assert doc["metrics"][0]["pareto"]["scope"] == "all data"
    assert doc["metrics"][0]["pareto"]["values"] == 30
