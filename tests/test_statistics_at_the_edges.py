"""Statistics at the edges, end to end: the normality p-value past its approximation's range
and moving ranges at gaps of a rolled-up series, as the page and results.json show them."""

from __future__ import annotations

import html
import json
from pathlib import Path

import numpy as np
import pytest

from steadyline.pipeline.build import BuildOptions, build
from steadyline.stats.distribution import AD_P_FLOOR, AD_P_MAX_ADJUSTED

SKEWED_TOML = """title = "Skewed lead time"
owner = "Test"
phase = "measure"
problem = "A test project."

[[metric]]
id = "lead"
name = "Lead time"
file = "lead.csv"
type = "continuous"
time = "t"
value = "v"
unit = "h"
better = "lower"
spec_upper = 40.0
"""


def _csv(t: np.ndarray, x: np.ndarray) -> str:
    rows = (f"{np.datetime_as_string(ti, unit='m')},{v:.3f}" for ti, v in zip(t, x, strict=True))
    return "t,v\n" + "\n".join(rows) + "\n"


def _build(tmp_path: Path, toml: str, csv_name: str, csv_text: str) -> tuple[dict, str]:
    src = tmp_path / "projects"
    folder = src / "p"
    folder.mkdir(parents=True)
    (folder / "project.toml").write_text(toml)
    (folder / csv_name).write_text(csv_text)
    out = tmp_path / "site"
    report = build(BuildOptions(src, out, jobs=1))
    assert report.ok, [p.format() for p in report.problems]
    result = json.loads((out / "projects" / "p" / "results.json").read_text())
    page = html.unescape((out / "projects" / "p" / "index.html").read_text())
    return result, page


def test_a_large_skewed_sample_reads_p_below_on_the_page_and_in_results(tmp_path):
    # 6,000 lognormal lead times: A*² is far past the range of the p-value approximation
    # (the old code overflowed here and the project failed with an internal error)
    x = np.random.default_rng(4).lognormal(2.0, 0.6, 6000)
    t = np.datetime64("2026-01-05T00:00") + np.arange(6000) * np.timedelta64(10, "m")
    result, page = _build(tmp_path, SKEWED_TOML, "lead.csv", _csv(t, x))
    (m,) = result["metrics"]
    for normality in (m["normality"], m["capability"]["normality"]):
        assert normality["adjusted"] > AD_P_MAX_ADJUSTED
        assert normality["p_value"] is None
        # results.json keeps 10 significant digits
        assert normality["p_below"] == pytest.approx(AD_P_FLOOR, rel=1e-9)
        assert normality["normal_at_5pct"] is False
    assert m["capability"]["trustworthy"] is False
    said = "p below 2e-190, the smallest p-value the approximation gives"
    assert any(said in r for r in m["capability"]["reasons"])
    assert f"{said}: not consistent with a normal distribution at the 5% level" in page
    assert "p = 1" not in page and "no p-value" not in page


def test_an_ordinary_sample_keeps_its_p_value_and_an_empty_bound(tmp_path):
    x = np.random.default_rng(4).normal(20.0, 3.0, 200)
    t = np.datetime64("2026-01-05T00:00") + np.arange(200) * np.timedelta64(1, "h")
    result, _page = _build(tmp_path, SKEWED_TOML, "lead.csv", _csv(t, x))
    normality = result["metrics"][0]["normality"]
    assert 0.0 < normality["p_value"] < 1.0
    assert normality["p_below"] is None


ROLLUP_TOML = """title = "Daily width"
owner = "Test"
phase = "measure"
problem = "A test project."

[comparison]
baseline = [2026-01-05, 2026-01-16]

[[metric]]
id = "width"
name = "Width, daily mean"
file = "w.csv"
type = "continuous"
time = "t"
value = "v"
unit = "mm"
better = "target"
[metric.rollup]
period = "day"
statistic = "mean"
"""


def test_a_rolled_up_series_has_no_moving_range_across_a_missing_period(tmp_path):
    # two working weeks, rolled up by day; Saturday and Sunday have no rows, so the series
    # has a gap between Friday 9 and Monday 12 January, and the level moves across it.
    # Two rows a day whose mean is the day's value.
    days = [
        "2026-01-05",
        "2026-01-06",
        "2026-01-07",
        "2026-01-08",
        "2026-01-09",
        "2026-01-12",
        "2026-01-13",
        "2026-01-14",
        "2026-01-15",
        "2026-01-16",
    ]
    means = [10.0, 12.0, 11.0, 13.0, 12.0, 30.0, 31.0, 29.0, 30.0, 32.0]
    rows = [
        f"{d}T{h},{m + s}"
        for d, m in zip(days, means, strict=True)
        for h, s in (("08:00", -0.5), ("14:00", 0.5))
    ]
    result, _page = _build(tmp_path, ROLLUP_TOML, "w.csv", "t,v\n" + "\n".join(rows) + "\n")
    (m,) = result["metrics"]
    assert m["points"]["value"] == means
    chart = m["control_chart"]["chart"]
    mr = chart["secondary"]
    # Monday's moving range would span the weekend: undefined, null, drawn as a break
    assert mr["values"][0] is None and mr["values"][5] is None
    assert all(v is not None for i, v in enumerate(mr["values"]) if i not in (0, 5))
    # by hand (NIST/SEMATECH e-Handbook 6.3.2.2; Montgomery section 6.4): the moving ranges
    # inside the weeks are 2, 1, 2, 1 and 1, 2, 1, 2: MR-bar = 12 / 8 = 1.5 (the range across
    # the weekend, 18, would make it 30 / 9 = 3.33); x-bar = 210 / 10 = 21; with the printed
    # d2(2) = 1.128 and D4(2) = 3.267: UCL = 21 + 3 * 1.5 / 1.128 = 24.989, LCL = 17.011,
    # mR UCL = 4.9005
    assert chart["extras"]["average_moving_range"] == pytest.approx(1.5)
    assert chart["extras"]["moving_ranges_used"] == 8
    assert chart["centre"][0] == pytest.approx(21.0)
    assert chart["upper"][0] == pytest.approx(24.989, abs=2e-3)
    assert chart["lower"][0] == pytest.approx(17.011, abs=2e-3)
    assert mr["upper"][1] == pytest.approx(4.9005, abs=2e-3)
    assert any("gap in the periods" in n for n in chart["notes"])
