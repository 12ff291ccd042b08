"""The history page's figures: staged limits against a baseline-only computation, comparisons."""

from __future__ import annotations

import html
import json
from pathlib import Path

import numpy as np
import pytest

D2_2 = 1.1283791670955126  # d2 for n = 2: 2/sqrt(pi) (Montgomery, Appendix VI: 1.128)


def metric(site: Path, slug: str, mid: str) -> tuple[dict, dict]:
    doc = json.loads((site / "projects" / slug / "results.json").read_text("utf-8"))
    m = next(x for x in doc["metrics"] if x["id"] == mid)
    h = next(x for x in doc["history"] if x["id"] == mid)
    return m, h


def mr_bar_within_runs(values: np.ndarray, days: np.ndarray) -> float:
    """Average moving range of a daily series, leaving out each range across missing days
    (weekends): MR_i = |x_i - x_(i-1)| joins successive days only (NIST/SEMATECH e-Handbook
    6.3.2.2; Montgomery §6.4)."""
    d = days.astype("datetime64[D]").astype(np.int64)
    neighbours = np.diff(d) == 1
    return float(np.abs(np.diff(values))[neighbours].mean())


def test_individuals_limits_over_the_after_period_are_the_baseline_limits(demo_site):
    m, h = metric(demo_site, "wheel-build-lead-time", "lead-time-daily")
    values = np.array(m["points"]["value"], dtype=float)
    stage = np.array(m["points"]["period_kind"])
    days = np.array(m["points"]["period"], dtype="datetime64[D]")
    # the days set aside (a known cause removed) are no part of the baseline's limits
    aside = np.isin(m["points"]["label"], m["set_aside"]["labels"])
    kept = (stage == "Baseline") & ~aside
    base = values[kept]
    # Reference computed here with numpy from the baseline alone: x̄ ± 3·MR̄/d2(2)
    # (Montgomery, Introduction to SQC, §6.4; NIST/SEMATECH e-Handbook 6.3.2.2), no moving
    # range across a weekend (the daily roll-up has no Saturday or Sunday) or across the days
    # set aside (successive days only: the days either side of them are no neighbours)
    centre = base.mean()
    mr_bar = mr_bar_within_runs(base, days[kept])
    assert np.isclose(mr_bar, m["control_chart"]["chart"]["extras"]["average_moving_range"])
    ucl, lcl = centre + 3 * mr_bar / D2_2, centre - 3 * mr_bar / D2_2
    chart = h["control_chart_by_period"]["chart"]
    after = stage == "After"
    assert np.allclose(np.array(chart["upper"], float)[after], ucl, rtol=1e-9)
    assert np.allclose(np.array(chart["lower"], float)[after], lcl, rtol=1e-9)
    assert np.allclose(np.array(chart["centre"], float)[after], centre, rtol=1e-9)


def test_the_after_period_own_limits_come_from_the_after_data_alone(demo_site):
    m, h = metric(demo_site, "wheel-build-lead-time", "lead-time-daily")
    staged = h["control_chart_by_period"]
    assert staged["own_after_limits"] is True
    values = np.array(m["points"]["value"], dtype=float)
    stage = np.array(m["points"]["period_kind"])
    after = stage == "After"
    own = values[after]
    centre = own.mean()
    # the after points run on without a change of period; weekends are gaps, as above
    days = np.array(m["points"]["period"], dtype="datetime64[D]")
    mr_bar = mr_bar_within_runs(own, days[after])
    chart = staged["after_chart"]
    assert np.allclose(np.array(chart["centre"], float)[after], centre, rtol=1e-9)
    assert np.allclose(
        np.array(chart["upper"], float)[after], centre + 3 * mr_bar / D2_2, rtol=1e-9
    )


def test_p_chart_limits_over_the_after_period_step_with_n_around_the_baseline_p_bar(demo_site):
    m, h = metric(demo_site, "order-picking-errors", "picking-error-rate")
    raw = (
        (
            Path(__file__).resolve().parent.parent
            / "projects"
            / "order-picking-errors"
            / "picking_audit.csv"
        )
        .read_text("utf-8")
        .splitlines()
    )
    header = raw[0].split(",")
    rows = [dict(zip(header, line.split(","), strict=True)) for line in raw[1:]]
    stage = np.array(m["points"]["period_kind"])
    n = np.array([float(r["orders_checked"]) for r in rows])
    d = np.array([float(r["orders_with_error"]) for r in rows])
    base = stage == "Baseline"
    # Reference: p̄ = Σd/Σn over the baseline, limits p̄ ± 3·sqrt(p̄(1−p̄)/nᵢ), LCL ≥ 0
    # (Montgomery, Introduction to SQC, §7.2; NIST/SEMATECH e-Handbook 6.3.3.2).
    p_bar = d[base].sum() / n[base].sum()
    ucl = p_bar + 3 * np.sqrt(p_bar * (1 - p_bar) / n)
    lcl = np.maximum(p_bar - 3 * np.sqrt(p_bar * (1 - p_bar) / n), 0)
    chart = h["control_chart_by_period"]["chart"]
    after = stage == "After"
    assert np.allclose(np.array(chart["upper"], float)[after], ucl[after], rtol=1e-9)
    assert np.allclose(np.array(chart["lower"], float)[after], lcl[after], rtol=1e-9, atol=1e-12)


@pytest.mark.parametrize(
    "slug,mid",
    [
        ("wheel-build-lead-time", "lead-time-daily"),
        ("spoke-tension", "tension"),
        ("order-picking-errors", "picking-error-rate"),
        ("customer-returns", "returns-weekly"),
        ("paint-finish-defects", "defects-per-frame"),
    ],
)
def test_results_carry_the_comparison_with_its_test_and_p_value(demo_site, slug, mid):
    m, h = metric(demo_site, slug, mid)
    c = h["comparison"]
    assert c == m["comparison"]
    for key in ("baseline", "after", "change", "percent_change", "test", "p_value", "sentence"):
        assert c[key] is not None, key
    assert c["improved"] is True  # the demo's improvements are real
    assert c["p_value"] < 0.05
    page = html.unescape((demo_site / "projects" / slug / "history.html").read_text("utf-8"))
    assert "Sustained shift" in page and c["test"] in page


def test_every_demo_metric_with_after_data_has_a_history_entry(demo_site):
    for res in (demo_site / "projects").glob("*/results.json"):
        doc = json.loads(res.read_text("utf-8"))
        for m in doc["metrics"]:
            stages = set(m.get("points", {}).get("period_kind", []))
            if "After" in stages:
                assert doc["history"], res
                h = next(x for x in doc["history"] if x["id"] == m["id"])
                assert "comparison" in h, (res, m["id"])
