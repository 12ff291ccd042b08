"""Histogram, box plot, column chart and Pareto charts: content and geometry."""

from __future__ import annotations

import numpy as np
import pytest
import vl_convert as vlc
from chart_fixtures import (
    LABEL7,
    make_boxes,
    make_histogram,
    make_pareto,
    make_pareto_after,
    unit_views,
)
from scipy import stats as sps

from steadyline.charts import (
    box_chart,
    column_chart,
    histogram_chart,
    pareto_chart,
    period_pareto_chart,
)
from steadyline.charts.categorical.by_period import common_order
from steadyline.charts.categorical.categories import REST_LABEL, VITAL_LABEL
from steadyline.stats.results import Histogram

# --- histogram ------------------------------------------------------------------------------


def test_histogram_bars_use_given_edges_without_rebinning():
    h = make_histogram()
    cs = histogram_chart(h, unit="hours", title="Lead time")
    bins = cs.spec["datasets"]["bins"]
    assert [(b["start"], b["end"], b["count"]) for b in bins] == [
        (h.edges[k], h.edges[k + 1], h.counts[k]) for k in range(len(h.counts))
    ]
    for view, _ in unit_views(cs.spec):
        for ch in view.get("encoding", {}).values():
            assert not (isinstance(ch, dict) and ch.get("bin")), "Vega-Lite must not rebin"
    bar = next(v for v, d in unit_views(cs.spec) if d == "bins")
    assert bar["encoding"]["x"]["field"] == "start" and bar["encoding"]["x2"]["field"] == "end"
    assert cs.table[0] == {"from": 10.0, "to": 15.0, "count": 2}
    assert "1 below the range shown" in " ".join(cs.spec["title"]["subtitle"])
    assert "Freedman–Diaconis" in cs.spec["title"]["subtitle"][0]


def test_histogram_spec_limits_and_target_labelled():
    cs = histogram_chart(make_histogram(), unit="hours", lsl=12, usl=38.5, target=24)
    refs = cs.spec["datasets"]["refs"]
    assert [(r["kind"], r["value"], r["text"]) for r in refs] == [
        ("LSL", 12.0, "LSL 12"),
        ("target", 24.0, "target 24"),
        ("USL", 38.5, "USL 38.5"),
    ]
    assert len({r["ypx"] for r in refs}) == 3  # staggered labels
    one_sided = histogram_chart(make_histogram(), unit="hours", usl=38)
    assert [r["kind"] for r in one_sided.spec["datasets"]["refs"]] == ["USL"]


def test_histogram_normal_curve_scaled_to_counts():
    h = make_histogram()
    cs = histogram_chart(h, unit="hours", normal_curve=True)
    curve = cs.spec["datasets"]["curve"]
    x = np.array([r["x"] for r in curve])
    y = np.array([r["y"] for r in curve])
    # reference: scipy.stats.norm.pdf; expected count per bin = n * width * density. The spec
    # carries x and y to 6 significant digits (display precision): y is checked against the
    # density at the rounded x, so the slope times x's rounding error is allowed for.
    expected = h.n * h.bin_width * sps.norm.pdf(x, h.mean, h.std)
    slope = np.abs(np.gradient(expected, x))
    np.testing.assert_array_less(np.abs(y - expected), 5e-6 * np.abs(y) + slope * 5e-6 * np.abs(x))
    assert x.min() >= h.edges[0] and x.max() <= h.edges[-1]
    # area under the curve over the bins is close to the count inside them (most of n)
    area = np.trapezoid(y, x) / h.bin_width
    inside = sps.norm.cdf(h.edges[-1], h.mean, h.std) - sps.norm.cdf(h.edges[0], h.mean, h.std)
    assert area == pytest.approx(h.n * inside, rel=1e-3)
    assert "curve" not in histogram_chart(h, unit="hours").spec["datasets"]


def test_histogram_curve_needs_equal_bins():
    h = Histogram("edges", "given edges", (0.0, 1.0, 5.0), (3, 4), None, 7, 2.0, 1.5)
    cs = histogram_chart(h, unit="", normal_curve=True)
    assert "curve" not in cs.spec["datasets"]
    assert any("no normal curve" in s for s in cs.spec["title"]["subtitle"])


# --- box plot -------------------------------------------------------------------------------


def test_box_plot_from_summaries():
    cs = box_chart(make_boxes(), unit="hours")
    boxes = cs.spec["datasets"]["boxes"]
    assert [b["group"] for b in boxes] == ["Baseline", "After"]
    assert boxes[0]["q1"] == 17.0 and boxes[0]["median"] == 22.0 and boxes[0]["q3"] == 27.0
    assert boxes[0]["whisker_low"] == 9.0 and boxes[0]["whisker_high"] == 41.0
    marks = cs.spec["datasets"]["marks"]
    kinds = {(m["group"], m["value"]): m["kind"] for m in marks}
    assert kinds[("Baseline", 60.0)].startswith("far out")
    assert kinds[("Baseline", 44.0)].startswith("outlier")
    assert kinds[("Baseline", 1.0)].startswith("outlier")
    assert kinds[("Baseline", 25.0)] == "mean"
    view = next(v for v, d in unit_views(cs.spec) if d == "marks")
    shapes = view["encoding"]["shape"]["scale"]["range"]
    assert len(set(shapes)) == 3  # mean, outlier and far out differ in shape
    assert any(line.startswith(f"quartiles: {LABEL7};") for line in cs.spec["title"]["subtitle"])
    # group order as given
    x = view["encoding"]["x"]
    assert x["sort"] == ["Baseline", "After"]
    assert cs.table[0]["outliers"] == 2 and cs.table[0]["far out"] == 1
    assert cs.table[1]["outliers"] == 0


def test_box_plot_rejects_duplicate_groups():
    b = make_boxes()[0][1]
    with pytest.raises(ValueError):
        box_chart([("A", b), ("A", b)], unit="")


# --- column chart ---------------------------------------------------------------------------


def _drawn_labels(spec):
    """The category axis labels as Vega draws them (vl-convert's scenegraph), left to right."""
    sg = vlc.vegalite_to_scenegraph(spec)
    out = []

    def walk(node):
        if isinstance(node, dict):
            if node.get("role") == "axis":
                for item in node.get("items", []):
                    if item.get("orient") == "bottom":
                        for mark in item.get("items", []):
                            if mark.get("role") == "axis-label":
                                out.extend(
                                    i["text"] for i in sorted(mark["items"], key=lambda i: i["x"])
                                )
                return
            for v in node.values():
                walk(v)
        elif isinstance(node, list):
            for v in node:
                walk(v)

    walk(sg)
    return out


def test_column_chart_order_and_zero_axis():
    cats = ["Wed", "Mon", "Tue"]
    cs = column_chart(cats, [12, 5, 0], unit="orders")
    rows = cs.spec["datasets"]["bars"]
    assert [r["category"] for r in rows] == cats
    bar = next(v for v, d in unit_views(cs.spec) if v["mark"]["type"] == "bar")
    assert _drawn_labels(cs.spec) == cats
    assert bar["encoding"]["y"]["scale"]["zero"] is True
    assert bar["encoding"]["y"]["scale"]["domainMin"] == 0
    assert cs.columns == ("category", "orders")
    assert "largest Wed (12)" in cs.summary


# --- Pareto ---------------------------------------------------------------------------------


def _y_scales(spec):
    out = {}
    for view, _ in unit_views(spec):
        y = view.get("encoding", {}).get("y", {})
        if "scale" in y and "domain" in y["scale"]:
            out.setdefault(y["field"], []).append(y["scale"])
    return out


def test_pareto_axes_aligned_total_at_100_percent():
    p = make_pareto()
    spec = pareto_chart(p).spec
    scales = _y_scales(spec)
    for s in scales["count"]:
        assert s["domain"] == [0, 100.0] and s["nice"] is False
    for s in scales["cumulative"]:
        assert s["domain"] == [0, 100] and s["nice"] is False
    assert spec["resolve"]["scale"]["y"] == "independent"


def _marks(node, marktype, found=None):
    found = [] if found is None else found
    if isinstance(node, dict):
        if node.get("marktype") == marktype and node.get("role") == "mark":
            found.append(node["items"])
        for v in node.values():
            _marks(v, marktype, found)
    elif isinstance(node, list):
        for v in node:
            _marks(v, marktype, found)
    return found


@pytest.mark.parametrize("make", [make_pareto, make_pareto_after])
def test_pareto_rendered_percent_axis_meets_count_axis(make):
    # reference: Vega's own layout (vl-convert scenegraph). The first cumulative point equals the
    # first bar's share of the total, so it must sit exactly at the bar's top; 100 % at the top.
    p = make()
    sg = vlc.vegalite_to_scenegraph(pareto_chart(p).spec)
    (bars,) = _marks(sg, "rect")
    (points,) = _marks(sg, "symbol")
    plot_height = bars[0]["y"] + bars[0]["height"]
    assert bars[0]["y"] == pytest.approx(points[0]["y"], abs=1e-6)
    assert points[-1]["y"] == pytest.approx(0, abs=1e-6)  # 100 %
    assert bars[0]["height"] / plot_height == pytest.approx(p.counts[0] / p.total)


def test_pareto_other_total():
    p = make_pareto_after()
    scales = _y_scales(pareto_chart(p).spec)
    assert scales["count"][0]["domain"] == [0, 40.0]


def test_pareto_vital_few_set_apart_by_fill_opacity_and_legend():
    cs = pareto_chart(make_pareto())
    rows = cs.spec["datasets"]["bars"]
    assert [r["group"] for r in rows] == [VITAL_LABEL] * 2 + [REST_LABEL] * 3
    bar = next(v for v, d in unit_views(cs.spec) if v["mark"]["type"] == "bar")
    enc = bar["encoding"]
    assert enc["opacity"]["scale"]["range"][0] != enc["opacity"]["scale"]["range"][1]
    assert enc["fill"]["scale"]["domain"] == [VITAL_LABEL, REST_LABEL]
    assert _drawn_labels(cs.spec) == list(make_pareto().categories)
    assert cs.spec["datasets"]["threshold"] == [{"cumulative": 80.0, "text": "80%"}]
    assert cs.table[1] == {
        "category": "Wrong label",
        "count": 30.0,
        "percent": 30.0,
        "cumulative percent": 80.0,
        "in the first 80%": "yes",
    }


def test_period_pareto_same_order_in_every_panel():
    base, after = make_pareto(), make_pareto_after()
    cs = period_pareto_chart([("Baseline", base), ("After", after)])
    order = common_order([("Baseline", base), ("After", after)])
    assert order == ["Missing part", "Wrong label", "Damaged", "Late", "Scratched", "other"]
    d = cs.spec["datasets"]
    assert [r["category"] for r in d["p0_bars"]] == order
    assert [r["category"] for r in d["p1_bars"]] == order
    counts = [r["count"] for r in d["p1_bars"]]
    assert counts == [10.0, 20.0, 2.0, 0.0, 8.0, 0.0]
    # reference: numpy.cumsum over the common order
    np.testing.assert_allclose(
        [r["cumulative"] for r in d["p1_bars"]], 100 * np.cumsum(counts) / 40.0
    )
    assert len(cs.spec["hconcat"]) == 2
    for k, panel in enumerate(cs.spec["hconcat"]):
        assert panel["title"] in ("Baseline (total 100)", "After (total 40)")
        scales = _y_scales(panel)
        assert scales["count"][0]["domain"] == [0, [100.0, 40.0][k]]
    assert {r["period"] for r in cs.table} == {"Baseline", "After"}
    assert [r["in the first 80%"] for r in cs.table if r["period"] == "After"] == [
        "yes",
        "yes",
        "no",
        "no",
        "yes",
        "no",
    ]
