"""The charts accept what the statistics package really returns (an open dataset end to end)."""

from __future__ import annotations

import json

import numpy as np
import pytest
import vl_convert as vlc
from chart_fixtures import missing_fields, resolved_points

from steadyline import charts
from steadyline.stats import control, distribution, rules, runs
from steadyline.stats.pareto import pareto as pareto_of

# Open data shipped in a package: annual Nile flow at Aswan, 1871-1970 (statsmodels.datasets.nile)
sm_datasets = pytest.importorskip("statsmodels.datasets")


@pytest.fixture(scope="module")
def nile():
    data = sm_datasets.nile.load_pandas().data
    years = [f"{int(y)}-01-01" for y in data["year"]]
    return years, data["volume"].to_numpy(dtype=float)


def _ok(cs):
    json.dumps(cs.spec, allow_nan=False)
    vlc.vegalite_to_vega(cs.spec)
    assert missing_fields(cs.spec) == []


def test_nile_end_to_end(nile):
    years, flow = nile
    n = len(flow)
    stage_names = tuple("Before 1899" if y < "1899" else "From 1899" for y in years)
    ctx = charts.SeriesContext(
        x=tuple(years),
        x_is_time=True,
        stage=stage_names,
        segment=(0,) * n,
        unit="10⁸ m³",
        metric_name="Nile flow at Aswan",
        events=(("1899-01-01", "Aswan dam works"),),
    )
    stage = np.array([0 if s == "Before 1899" else 1 for s in stage_names])
    cc = control.individuals(flow, stage=stage)
    sigs = rules.detect_signals(cc)
    cs = charts.control_chart(ctx, cc, sigs)
    _ok(cs)
    # the well-known drop in flow around 1898 shows as signals after the change
    assert any(r["marker"] != "point" for r in resolved_points(cs.spec))
    assert cs.spec["title"]["subtitle"][0].startswith("limits from Before 1899, 1871-01-01")

    an = runs.analyse_runs(flow)
    _ok(charts.run_chart(ctx, flow, an))

    h = distribution.histogram(flow)
    _ok(charts.histogram_chart(h, unit="10⁸ m³", normal_curve=True, lsl=600))
    boxes = [
        ("Before 1899", distribution.box_summary(flow[stage == 0])),
        ("From 1899", distribution.box_summary(flow[stage == 1])),
    ]
    _ok(charts.box_chart(boxes, unit="10⁸ m³"))


def test_real_pareto():
    cats = ["late"] * 30 + ["damaged"] * 12 + ["wrong item"] * 5 + ["lost"] * 2 + ["other"]
    p = pareto_of(cats)
    cs = charts.pareto_chart(p)
    _ok(cs)
    assert [r["category"] for r in cs.spec["datasets"]["bars"]] == list(p.categories)
    q = pareto_of(["late"] * 4 + ["damaged"] * 9)
    _ok(charts.period_pareto_chart([("Before", p), ("After", q)]))
