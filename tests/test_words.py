"""One vocabulary, honest roll-ups, and the wording of the demo site.

Each wording test reads the demo site as built and fails on the wording it guards against;
the vocabulary tests hold the README's lists to :mod:`steadyline.vocab`.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
import pytest
from scipy import stats as sps

from steadyline import vocab
from steadyline.stats import runs

ROOT = Path(__file__).resolve().parent.parent
README = (ROOT / "README.md").read_text(encoding="utf-8")


def _pages(site: Path) -> str:
    return "\n".join(p.read_text(encoding="utf-8") for p in sorted(site.rglob("*.html")))


def _specs(site: Path) -> dict[str, dict]:
    return {
        p.name: json.loads(p.read_text(encoding="utf-8")) for p in sorted(site.rglob("*.vl.json"))
    }


# ----------------------------------------------------------------------------- the vocabulary


def test_the_statistics_name_each_run_rule_set_as_the_pages_do():
    # stats imports nothing of the site's, so its own words are held to the vocabulary here
    for code in vocab.RunRules:
        assert runs.RULE_SET_SHORT[code] == code.label
        assert runs.RULE_SET_LABELS[code].startswith(code.label + " (")


def _readme_choices(key: str) -> list[str]:
    """The `a | b | c` list after ``key = ...  #`` in the README's project.toml."""
    project = README.split("`project.toml`, with every key", 1)[1]
    m = re.search(rf"^{re.escape(key)} = [^#\n]*# (?:required: )?([^\n]+)", project, re.M)
    assert m, key
    return [re.split(r"[\s:(]", w.strip())[0] for w in m.group(1).split("|")]


@pytest.mark.parametrize(
    ("key", "enum"),
    [
        ("type", vocab.DataType),
        ("chart", vocab.ChartKind),
        ("signal_rules", vocab.SignalRules),
        ("run_rules", vocab.RunRules),
        ("period", vocab.RollupPeriod),
        ("statistic", vocab.RollupStatistic),
    ],
)
def test_readme_lists_equal_the_vocabulary(key, enum):
    assert _readme_choices(key) == list(enum.codes())


def test_readme_names_of_rule_sets_chart_kinds_and_periods_are_the_vocabulary():
    table = README.split("### The words", 1)[1].split("\n## ", 1)[0]
    rows = {}
    for line in table.splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells) == 3 and cells[1].startswith("`"):
            rows.setdefault(cells[0], []).append((cells[1].strip("`"), cells[2]))
    want = {
        "signal rules": vocab.SignalRules,
        "run rules": vocab.RunRules,
        "chart": vocab.ChartKind,
        "kind of period": vocab.PeriodKind,
        "type of data": vocab.DataType,
    }
    for what, enum in want.items():
        assert rows[what] == [(m.value, m.label) for m in enum], what
    assert rows["status"] == [(s.value, s.label) for s in vocab.Status]
    # the README's account of the chart bands names the same kinds, in time order
    bands = README.split("**Periods.**", 1)[1].split("\n\n", 1)[0]
    found = [k for k in vocab.PeriodKind if f"{k.value} (" in bands.replace("\n", " ")]
    assert found == list(vocab.PeriodKind)


def test_percentage_points():
    assert vocab.percentage_points(-0.0313) == "−3.13 percentage points"
    assert vocab.percentage_points(0.015) == "+1.50 percentage points"
    assert vocab.percentage_points(None) == "—"


# ----------------------------------------------------------------------------- the demo's words


def test_no_chart_named_chart_chart(demo_site):
    text = _pages(demo_site)
    assert "chart chart" not in text
    assert "Laney p′ chart of" in text  # the summary that said "Laney p′ chart chart of"


def test_counts_read_in_words_not_with_parenthesised_plurals(demo_site):
    text = _pages(demo_site)
    assert "(s)" not in text
    assert "(1 rows" not in text
    assert re.search(r"crosses the median only \d+ times;", text)
    assert "Numbers and downloads (1 row)" in text


def test_a_change_of_a_proportion_is_in_percentage_points(demo_site):
    hist = (demo_site / "projects/order-picking-errors/history.html").read_text("utf-8")
    # the Change row said "-3.13%" for a fall from 4.90% to 1.77%
    assert "−3.13 percentage points" in hist
    assert not re.search(r"<td>[-−]\d+\.\d+%", hist)
    # n counts the weeks pooled, and the baseline median is a share of the orders (it was
    # "0.04721 orders", a proportion with the items' unit)
    assert "<td>20 periods</td>" in hist
    assert re.search(r"baseline median \d+\.\d+% of orders by the Anhøj rules", hist)
    index = (demo_site / "index.html").read_text("utf-8")
    assert "down 3.13 percentage points" in index
    results = json.loads(
        (demo_site / "projects/order-picking-errors/results.json").read_text("utf-8")
    )
    assert "percentage points" in results["metrics"][0]["comparison"]["sentence"]


def test_a_proportion_reads_as_a_percentage_of_its_items(demo_site):
    text = _pages(demo_site)
    assert not re.search(r"\d proportion\b", text)  # "median 0.0753 proportion"
    assert re.search(r"median \d+(\.\d+)?% of frames", text)


def test_medians_in_sentences_carry_four_significant_figures(demo_site):
    text = _pages(demo_site)
    fixed = re.findall(r"fixed median of ([0-9.]+)\.", text)
    assert fixed
    for number in fixed:
        assert len(number.replace(".", "").lstrip("0")) <= 4, number  # was 0.0752856


def test_y_axes_are_the_measure_with_its_unit(demo_site):
    specs = _specs(demo_site)
    titles = {}
    for name, spec in specs.items():

        def walk(node, name=name):
            if isinstance(node, dict):
                for k, v in node.items():
                    if k == "axis" and isinstance(v, dict) and v.get("title"):
                        t = v["title"]
                        titles.setdefault(name, set()).add(t if isinstance(t, str) else " ".join(t))
                    walk(v)
            elif isinstance(node, list):
                for v in node:
                    walk(v)

        walk(spec)
    flat = {t for ts in titles.values() for t in ts}
    # never the chart's name: these were the y-axes of p, Laney p′, np and X-bar charts
    for old in (
        "Laney p′ chart",
        "Proportion defective (p)",
        "Number defective (np)",
        "Subgroup mean (X̄), kgf",
        "Defects per unit (u)",
    ):
        assert old not in flat
    retrue = titles["retrue-rate-control.vl.json"]
    assert "Wheels needing re-truing (proportion)" in retrue
    tension = titles["tension-control.vl.json"]
    assert any(
        t.startswith("Spoke tension") and "subgroup mean" in t and "kgf" in t for t in tension
    )
    box = titles["press-fit-force-box.vl.json"]
    assert any(t.startswith("Bearing press-fit force") and "kN" in t for t in box)


# ----------------------------------------------------------------------------- roll-ups


def test_every_display_of_a_rolled_up_metric_says_which_values_it_uses(demo_site):
    page = (demo_site / "projects/wheel-build-lead-time/index.html").read_text("utf-8")
    section = page.split('id="metric-lead-time-daily"', 1)[1].split(
        'id="metric-lead-time-order"', 1
    )[0]
    assert "Each point is a daily mean" in section  # run and control charts
    assert "Histogram of the baseline, individual values" in section
    assert "Box plot of the baseline, individual values" in section
    assert "individual values before the roll-up, not from the daily means" in section
    specs = _specs(demo_site)
    for chart in ("lead-time-daily-run", "lead-time-daily-control"):
        assert "Each point is a daily mean" in json.dumps(
            specs[f"{chart}.vl.json"]["title"], ensure_ascii=False
        )
    for chart in ("lead-time-daily-histogram", "lead-time-daily-box"):
        assert "individual values" in json.dumps(specs[f"{chart}.vl.json"]["title"])
    # the metric that is not rolled up says nothing of the kind
    other = page.split('id="metric-lead-time-order"', 1)[1]
    assert "Each point is a" not in other


def test_the_before_after_test_of_a_roll_up_compares_the_period_values(demo_site):
    slug = demo_site / "projects/wheel-build-lead-time"
    results = json.loads((slug / "results.json").read_text("utf-8"))
    daily = results["metrics"][0]
    assert daily["id"] == "lead-time-daily"
    points = daily["points"]
    vals = np.asarray(points["value"], dtype=float)
    stage = np.asarray(points["period_kind"])
    # the days set aside (a known cause removed) are no part of the baseline's figures
    aside = set(daily["set_aside"]["labels"])
    kept = np.array([label not in aside for label in points["label"]])
    assert (~kept).sum() == 3
    before, after = vals[(stage == "Baseline") & kept], vals[stage == "After"]
    c = daily["comparison"]
    assert (c["n_baseline"], c["n_after"]) == (len(before), len(after))
    # checked against scipy's Welch test on the same daily means
    t, p = sps.ttest_ind(after, before, equal_var=False)
    assert c["test"] == "Welch's t-test"
    assert c["p_value"] == pytest.approx(p, rel=1e-6)
    assert c["baseline"] == pytest.approx(before.mean(), rel=1e-6)
    hist = (slug / "history.html").read_text("utf-8")
    assert "Welch&#39;s t-test, on the daily means" in hist
    assert f"{len(before)} daily means" in hist
    index = (demo_site / "index.html").read_text("utf-8")
    assert "Mean of the daily means 51.7 hours → 29.9 hours" in index
    # the metric of the same rows, not rolled up, still compares its individual values
    order = results["metrics"][1]
    assert order["comparison"]["n_baseline"] == daily["histogram"]["n"]


def test_a_point_before_the_baseline_is_named_so_in_its_table_as_on_its_band(demo_site):
    slug = demo_site / "projects/paint-finish-defects"
    results = json.loads((slug / "results.json").read_text("utf-8"))
    blemishes = next(m for m in results["metrics"] if m["id"] == "scanner-blemishes")
    stages = blemishes["points"]["period_kind"]
    # the first week lies before the baseline: it was called "Between periods"
    assert stages[0] == "Before the baseline" and stages[1] == "Baseline"
    assert "Between periods" in stages  # the weeks between the baseline and the after period
    csv = (slug / "data/scanner-blemishes-control.csv").read_text("utf-8").splitlines()
    assert "Before the baseline" in csv[1]
    spec = (slug / "data/scanner-blemishes-control.vl.json").read_text("utf-8")
    assert '"Before the baseline"' in spec  # the band's name


def test_each_chart_kind_has_one_name(demo_site):
    text = _pages(demo_site)
    titles = set(re.findall(r"Control chart: ([^<:\"]+)", text))
    labels = {k.label for k in vocab.ChartKind}
    assert titles and titles <= labels, titles - labels
    # the chart's own title and the card named it by the labels of its two series
    for old in ("Individuals (X) with", "Subgroup mean (X̄) and", "Control chart: Proportion"):
        assert old not in text
    # the reason a chart was chosen (words of the statistics) names it the same way
    for res in sorted((demo_site / "projects").glob("*/results.json")):
        for m in json.loads(res.read_text("utf-8"))["metrics"]:
            choice = (m.get("control_chart") or {}).get("choice")
            if choice:
                assert vocab.ChartKind(choice["kind"]).label in choice["reason"], choice


def test_the_statistics_name_each_chart_kind_as_the_pages_do():
    from steadyline.stats import choice

    for code in choice.CHART_KINDS:
        assert choice.CHART_NAMES[code] == vocab.ChartKind(code).label
    # a chart chosen in project.toml is named, not given by its code (was "xbar-s chart
    # chosen by the user (the suggested chart was xbar-r)")
    picked = choice.choose_chart("continuous", subgroup_sizes=[5] * 30, override="xbar-s")
    assert picked.reason.startswith("Xbar-S chart chosen in project.toml")
    assert picked.reason.endswith("the data suggest the Xbar-R chart)")
