"""Run and control charts: what is drawn, where, and how it is labelled."""

from __future__ import annotations

import numpy as np
import pytest
from chart_fixtures import (
    MAIN_SIGNALS,
    N,
    limit_pieces,
    make_ctx,
    make_individuals,
    make_p_chart,
    make_run_analysis,
    make_values,
    missing_fields,
    resolved_points,
    unit_views,
)

from steadyline.charts import SeriesContext, control_chart, run_chart
from steadyline.charts.base.numbers import fmt
from steadyline.charts.base.times import time_text
from steadyline.charts.series.marks import MARK_ORDINARY, MARK_SIGNAL


def _pieces(spec, kind, name="limits"):
    """A limit's step line as drawn, one [(x, y), ...] path per piece."""
    return limit_pieces(spec, kind, name)


# --- control chart --------------------------------------------------------------------------


def test_limits_are_steps_and_absent_where_nan():
    cc = make_individuals()
    spec = control_chart(make_ctx(), cc, MAIN_SIGNALS).spec
    # constant limits: one horizontal line over the whole series, first to last point
    assert _pieces(spec, "UCL") == [[("2026-01-05", 44.4), ("2026-07-27", 44.4)]]
    assert _pieces(spec, "centre line") == [[("2026-01-05", 30.0), ("2026-07-27", 30.0)]]
    # LCL is nan from point 20 on: it stops midway between the last baseline week and the next
    assert _pieces(spec, "LCL") == [[("2026-01-05", 15.6), ("2026-05-21T12:00:00Z", 15.6)]]
    # right-end labels carry the values
    labels = {r["kind"]: r["text"] for r in spec["datasets"]["labels"]}
    assert labels == {"centre line": "CL 30", "UCL": "UCL 44.4", "LCL": "LCL 15.6"}
    assert all(r["x"] == "2026-07-27" for r in spec["datasets"]["labels"])  # the last date


def test_stepped_p_limits_follow_every_point():
    cc = make_p_chart()
    spec = control_chart(make_ctx(), cc, ()).spec
    (line,) = _pieces(spec, "UCL")
    # sizes change at every point: one horizontal step per point, joined by vertical steps
    # data rows carry 6 significant digits (display precision; the table keeps full precision)
    np.testing.assert_allclose([y for _, y in line], np.repeat(cc.upper, 2), rtol=5e-6)
    assert [x for x, _ in line[:4]] == [
        "2026-01-05",
        "2026-01-08T12:00:00Z",
        "2026-01-08T12:00:00Z",
        "2026-01-15T12:00:00Z",
    ]
    assert line[-1][0] == "2026-07-27"
    assert len({round(y, 12) for _, y in line}) == 4  # four subgroup sizes, four levels
    # a p chart's axis is in proportions, not in the metric's unit: the measure, with a
    # proportion's unit, never the chart's name
    assert "Lead time (proportion)" in _y_titles(spec)


def _y_titles(spec):
    titles = set()
    for view, _ in unit_views(spec):
        y = view.get("encoding", {}).get("y", {})
        if "axis" in y and y["axis"] and "title" in y["axis"]:
            titles.add(y["axis"]["title"])
    return titles


def test_signal_points_marked_by_shape_size_and_colour_with_rule_in_tooltip():
    spec = control_chart(make_ctx(), make_individuals(), MAIN_SIGNALS).spec
    pts = {r["label"]: r for r in resolved_points(spec)}
    x = make_ctx().x
    assert pts[x[25]]["marker"] == MARK_SIGNAL
    assert pts[x[25]]["signals"] == "beyond the 3σ limits"
    assert pts[x[10]]["signals"] == "8 in a row on one side of the centre line"
    assert pts[x[2]]["marker"] == MARK_ORDINARY and pts[x[2]]["signals"] == ""
    # the secondary signal lands on the mR chart, at the mR point of x[24]: index 24 -> x[25]
    sec = {r["label"]: r for r in resolved_points(spec, "2")}
    assert sec[x[25]]["marker"] == MARK_SIGNAL
    assert pts[x[24]]["marker"] == MARK_ORDINARY
    # the point layer maps the marker to a different shape AND colour AND size
    view = next(v for v, d in unit_views(spec) if d == "points" and v["mark"]["type"] == "point")
    enc = view["encoding"]
    assert enc["shape"]["scale"]["domain"] == [MARK_ORDINARY, MARK_SIGNAL]
    shapes = enc["shape"]["scale"]["range"]
    colours = enc["color"]["scale"]["range"]
    assert shapes[0] != shapes[1] and colours[0] != colours[1]
    assert "condition" in enc["size"]
    assert {t["field"] for t in enc["tooltip"]} >= {"signals", "fitted", "when", "v", "info"}
    # the marker and the signal text are computed in the view from the short row fields
    calcs = {t["as"]: t["calculate"] for t in view["transform"] if "calculate" in t}
    assert calcs["marker"] == f"datum.signals ? '{MARK_SIGNAL}' : '{MARK_ORDINARY}'"
    assert calcs["signals"] == "datum.signals || 'none'"
    # the signal text is written once per distinct combination, not per point
    info = spec["datasets"]["point_info"]
    assert sorted(r["signals"] for r in info if "signals" in r) == [
        "8 in a row on one side of the centre line",
        "beyond the 3σ limits",
        "beyond the upper limit of the moving range",
    ]


def test_fitted_points_named_in_subtitle_and_tooltip():
    cs = control_chart(make_ctx(), make_individuals(), MAIN_SIGNALS)
    sub = cs.spec["title"]["subtitle"]
    assert sub[0].startswith("limits from Baseline, 2026-01-05 to 2026-05-18 (20 points)")
    pts = resolved_points(cs.spec)
    assert {r["fitted"] for r in pts[:19]} == {"yes"}
    assert {r["fitted"] for r in pts[-5:]} == {"no"}
    assert [r["used for limits"] for r in cs.table].count("yes") == 20


def test_all_points_fitted_sentence():
    cs = control_chart(make_ctx(), make_p_chart(), ())
    assert cs.spec["title"]["subtitle"][0].startswith("limits from all 30 points")


def test_lines_break_at_segments_and_gaps():
    spec = control_chart(make_ctx(), make_individuals(), ()).spec
    pts = resolved_points(spec)
    assert len(pts) == N - 1  # the nan at point 5 is not plotted
    groups = {}
    for r in pts:
        groups.setdefault(r["line"], []).append(r["label"])
    x = make_ctx().x
    # pieces: 0..4 | 6..11 (after the gap) | 12.. (new segment)
    assert groups[0] == list(x[0:5])
    assert groups[1] == list(x[6:12])
    assert groups[2] == list(x[12:])
    line_view = next(
        v for v, d in unit_views(spec) if d == "points" and v["mark"]["type"] == "line"
    )
    assert line_view["encoding"]["detail"]["field"] == "g"


def test_secondary_is_beneath_with_its_own_limits():
    cs = control_chart(make_ctx(), make_individuals(), MAIN_SIGNALS)
    spec = cs.spec
    assert len(spec["vconcat"]) == 2
    labels = {r["kind"]: r["text"] for r in spec["datasets"]["secondary_labels"]}
    assert labels == {"centre line": "CL 5.40", "UCL": "UCL 17.6", "LCL": "LCL 0"}
    assert "mR UCL" in cs.columns
    assert cs.table[0]["mR"] is None  # the first point has no moving range
    np.testing.assert_allclose(
        [r["mR"] for r in cs.table[1:] if r["mR"] is not None],
        [v for v in np.abs(np.diff(make_values())) if np.isfinite(v)],
    )
    # without a secondary chart there is a single layered view
    single = control_chart(make_ctx(), make_individuals(secondary=False), ()).spec
    assert "vconcat" not in single and "layer" in single


def test_phases_and_events_drawn():
    spec = control_chart(make_ctx(), make_individuals(), ()).spec
    bands = spec["datasets"]["bands"]
    assert [b["kind"] for b in bands] == ["baseline", "after"]
    assert [b["label"] for b in bands] == ["Baseline", "After"]
    assert bands[0]["x2"] == bands[1]["x"] == "2026-05-21T12:00:00Z"  # midway between weeks
    assert spec["datasets"]["events"] == [
        {
            "x": "2026-03-30",
            "label": "new intake form",
            "when": "2026-03-30",
            "y": 16,
            "align": "left",
            "edge": make_ctx().x[-1] + "T00:00:00Z",
        }
    ]


def test_labels_of_successive_events_step_down():
    ctx = make_ctx(
        events=(("2026-02-02", "a"), ("2026-02-09", "b"), ("2026-02-16", "c"), ("2026-02-23", "d"))
    )
    spec = run_chart(ctx, make_values(), make_run_analysis()).spec
    assert [e["y"] for e in spec["datasets"]["events"]] == [16, 28, 40, 16]
    # each label may run until the next event on its line, the last ones until the last point
    end = ctx.x[-1] + "T00:00:00Z"
    assert [e["edge"] for e in spec["datasets"]["events"]] == [
        "2026-02-23T00:00:00Z",
        end,
        end,
        end,
    ]
    assert {e["align"] for e in spec["datasets"]["events"]} == {"left"}  # left half: text right


def test_recent_events_read_leftwards_and_share_the_gap():
    # the series runs 2026-01-05 .. 2026-07-27; its middle is 2026-04-16
    ctx = make_ctx(
        events=(
            ("2026-02-02", "early"),
            ("2026-05-04", "b"),
            ("2026-06-01", "c"),
            ("2026-06-29", "late"),
        )
    )
    rows = run_chart(ctx, make_values(), make_run_analysis()).spec["datasets"]["events"]
    assert [(e["label"], e["align"]) for e in rows] == [
        ("early", "left"),
        ("b", "right"),
        ("c", "right"),
        ("late", "right"),
    ]
    start = ctx.x[0] + "T00:00:00Z"
    # "early" and "late" share a line and face each other: each gets half of the gap
    # (2026-02-02 + 147 days / 2)
    assert [e["edge"] for e in rows] == [
        "2026-04-16T12:00:00Z",
        start,
        start,
        "2026-04-16T12:00:00Z",
    ]


def test_events_are_laid_out_in_time_order():
    ctx = make_ctx(events=(("2026-02-16", "c"), ("2026-02-02", "a"), ("2026-02-09", "b")))
    spec = run_chart(ctx, make_values(), make_run_analysis()).spec
    assert [(e["label"], e["y"]) for e in spec["datasets"]["events"]] == [
        ("a", 16),
        ("b", 28),
        ("c", 40),
    ]


def test_event_labels_get_room_above_the_points_and_limits():
    from steadyline.charts import style

    spec = control_chart(make_ctx(), make_individuals(), ()).spec
    ds = spec["datasets"]
    (room,) = ds["headroom"]
    drawn = [r["v"] for r in ds["points"] if r.get("v") is not None]  # the upper chart's values
    drawn += [r["y"] for r in ds["limits"]]
    lo, hi = min(drawn), max(drawn)
    # one line of labels: 40 px of the 260 px plot are kept clear above the highest value
    share = (28 + 12) / style.HEIGHT_MAIN
    assert room["y"] == pytest.approx(hi + (hi - lo) * share / (1 - share), rel=1e-3)
    quiet = control_chart(make_ctx(events=()), make_individuals(), ()).spec
    assert quiet["datasets"]["headroom"] == []  # no labels, no room taken from the points


def test_events_outside_the_series_are_left_out():
    ctx = make_ctx(events=(("2025-01-01", "long ago"), ("2026-02-02", "inside")))
    spec = control_chart(ctx, make_individuals(), ()).spec
    assert [e["label"] for e in spec["datasets"]["events"]] == ["inside"]


def test_label_axis_for_non_time_series():
    ctx = make_ctx(time=False)
    spec = control_chart(ctx, make_individuals(), ()).spec
    assert spec["datasets"]["points"][0]["x"] == 0
    x_enc = spec["vconcat"][0]["layer"][0]["encoding"]["x"]
    assert x_enc["type"] == "quantitative"
    assert '"Lot 1"' in x_enc["axis"]["labelExpr"]
    assert x_enc["axis"]["values"] == list(range(N))
    assert spec["datasets"]["events"] == []


def test_time_axis_is_utc_and_dates_are_iso_strings():
    spec = control_chart(make_ctx(), make_individuals(), ()).spec
    x_enc = spec["vconcat"][0]["layer"][0]["encoding"]["x"]
    assert x_enc["type"] == "temporal" and x_enc["scale"]["type"] == "utc"
    assert spec["datasets"]["points"][0]["x"] == "2026-01-05"


def test_time_text_writes_utc():
    assert time_text("2026-01-05") == "2026-01-05"
    assert time_text("2026-01-05T08:30:00") == "2026-01-05T08:30:00Z"  # naive read as UTC
    assert time_text("2026-01-05T08:30:00+02:00") == "2026-01-05T06:30:00Z"
    with pytest.raises(TypeError):
        time_text(np.datetime64("2026-01-05").astype(object))  # a date object


def test_lengths_are_checked():
    ctx = make_ctx(n=10)
    with pytest.raises(ValueError, match="points"):
        control_chart(ctx, make_individuals(), ())
    with pytest.raises(ValueError):
        SeriesContext(x=("a",), x_is_time=False, stage=(), segment=(0,), unit="", metric_name="m")


def test_control_chart_table():
    cs = control_chart(make_ctx(), make_individuals(), MAIN_SIGNALS)
    assert cs.columns[:8] == (
        "date",
        "period",
        "value",
        "centre line",
        "LCL",
        "UCL",
        "used for limits",
        "signals",
    )
    assert cs.table[5]["value"] is None
    assert cs.table[25]["LCL"] is None and cs.table[0]["LCL"] == 15.6
    assert "beyond the upper limit of the moving range" in cs.table[25]["signals"]
    assert "3 signals" in cs.summary


# --- run chart ------------------------------------------------------------------------------


def test_run_chart_median_label_and_signal_points():
    cs = run_chart(make_ctx(), make_values(), make_run_analysis())
    spec = cs.spec
    assert spec["datasets"]["centre"] == [
        {"y": 31.24, "x": "2026-07-27", "text": "median 31.2 hours"}
    ]
    pts = {r["label"]: r for r in resolved_points(spec)}
    x = make_ctx().x
    assert pts[x[21]]["marker"] == MARK_SIGNAL
    assert pts[x[21]]["signals"] == "a run of 9 on one side of the median"
    # the crossings signal spans the whole series: not marked per point; the subtitle names
    # the values it is judged by, the card's sentences the signal (said once)
    assert pts[x[2]]["marker"] == MARK_ORDINARY
    sub = " ".join(spec["title"]["subtitle"])
    assert "Anhøj rules" in sub and "fewer crossings of the median than expected" not in sub
    assert "8 crossings (signal below 10)" in sub
    assert [b["kind"] for b in spec["datasets"]["bands"]] == ["baseline", "after"]
    assert missing_fields(spec) == []
    assert cs.columns == ("date", "period", "value", "median", "signals")
    assert cs.table[2]["signals"] == "fewer crossings of the median than expected"


def test_run_chart_without_phases_has_no_bands():
    ctx = SeriesContext(
        x=make_ctx().x,
        x_is_time=True,
        stage=("",) * N,
        segment=(0,) * N,
        unit="",
        metric_name="Calls",
    )
    cs = run_chart(ctx, make_values(), make_run_analysis())
    assert cs.spec["datasets"]["bands"] == []
    assert "period" not in cs.columns
    assert cs.spec["datasets"]["centre"][0]["text"] == "median 31.2"


def test_number_format_for_labels():
    # common practice: three significant digits, whole numbers shown whole
    assert fmt(44.444) == "44.4"
    assert fmt(31.26) == "31.3"
    assert fmt(0.012345) == "0.0123"
    assert fmt(30.0) == "30"
    assert fmt(123456.7) == "123,457"
    assert fmt(float("nan")) == "n/a"
    assert fmt(-0.0001) == "-0.000100"
    # remembered answers: the same text whatever form the number comes in, and -0.0 as 0.0
    assert fmt(np.float64(44.444)) == fmt(44.444) == "44.4"
    assert fmt(0.0) == fmt(-0.0) == "0"
    assert fmt(-1e-12, 2) == "0.00000000"  # shown as zero: no minus sign
    assert fmt(None) == fmt("x") == fmt(float("inf")) == "n/a"
    assert fmt(7) == "7" and fmt(44.444, 4) == "44.44"


def test_per_period_limits_step_at_the_change_of_period():
    cc = make_individuals(secondary=False)
    upper = cc.upper.copy()
    upper[20:] = 40.0  # limits recomputed for the After period
    cc2 = type(cc)(**{**cc.__dict__, "upper": upper})
    spec = control_chart(make_ctx(), cc2, ()).spec
    assert len(spec["datasets"]["limits"]) == 3 + 2 + 2  # one vertex per change and per end
    assert _pieces(spec, "UCL") == [
        [
            ("2026-01-05", 44.4),
            ("2026-05-21T12:00:00Z", 44.4),
            ("2026-05-21T12:00:00Z", 40.0),
            ("2026-07-27", 40.0),
        ]
    ]
    labels = control_chart(make_ctx(), cc2, ()).spec["datasets"]["labels"]
    assert {r["kind"]: r["text"] for r in labels}["UCL"] == "UCL 40"  # the current limit


def test_subtitle_names_the_limits_not_the_signals():
    from steadyline.stats.results import Signal

    sigs = MAIN_SIGNALS + (Signal("trend", "6 in a row rising", (1, 2, 3, 4, 5, 6), "up"),)
    cs = control_chart(make_ctx(), make_individuals(), sigs)
    sub = " ".join(cs.spec["title"]["subtitle"])
    assert sub.startswith("limits from")
    # the signals are said once, in the card's sentences; the chart's description names them
    # all for readers who cannot see the chart
    assert "signal" not in sub and "in a row" not in sub
    assert "6 in a row rising" in cs.summary


def test_long_subtitle_lines_are_wrapped_at_spaces():
    from steadyline.charts.base.templates import SUBTITLE_WIDTH, make_spec

    words = [f"word{i}" for i in range(60)]
    spec = make_spec({}, {}, {}, "t", [" ".join(words), "short"])
    lines = spec["title"]["subtitle"]
    assert all(len(x) <= SUBTITLE_WIDTH for x in lines) and len(lines) >= 4
    assert " ".join(lines[:-1]).split() == words and lines[-1] == "short"


def test_subtitle_times_read_as_a_reader_writes_them():
    from steadyline.charts.series.words import _when

    assert _when("2026-02-02T14:53:00") == "2026-02-02 14:53"
    assert _when("2026-02-02T14:53:07") == "2026-02-02 14:53:07"
    assert _when("2026-02-02") == "2026-02-02"


def test_long_axis_titles_wrap_instead_of_stretching_the_chart():
    from steadyline.charts.base.templates import AXIS_TITLE_LINES, axis_title

    assert axis_title("Lead time (hours)", 260) == "Lead time (hours)"
    words = "Percentage of customer orders shipped complete within a day of receipt at the dock"
    lines = axis_title(words, 130)
    assert isinstance(lines, list) and 1 < len(lines) <= AXIS_TITLE_LINES
    assert max(map(len, lines)) <= 130 / 5.4
    assert lines[-1].endswith("\u2026")  # more than three lines' worth: cut, and says so
    short = axis_title("Subgroup standard deviation (S), kN", 130)
    assert " ".join(short) == "Subgroup standard deviation (S), kN"


def test_bands_filled_by_kind_of_period_not_by_order():
    from steadyline.charts import style
    from steadyline.charts.base.periods import band_rows, band_values, period_kinds
    from steadyline.charts.base.xaxis import x_axis

    names = ["Between periods", "Baseline", "Between periods", "After", "Between periods"]
    assert period_kinds(names) == [
        "before the baseline",
        "baseline",
        "between periods",
        "after",
        "after the after period",
    ]
    # the same periods in another order keep their kinds' fills
    stages = tuple(["Baseline"] * 10 + ["Between periods"] * 5 + ["After"] * 15)
    ctx = SeriesContext(
        x=make_ctx().x, x_is_time=True, stage=stages, segment=(0,) * N, unit="", metric_name="Calls"
    )
    rows = band_rows(x_axis(ctx), stages)
    assert [r["kind"] for r in rows] == ["baseline", "between periods", "after"]
    assert [r["label"] for r in rows] == ["Baseline", "Between periods", "After"]
    values = band_values(rows)
    assert values["period_kinds"] == ["baseline", "between periods", "after"]
    assert values["period_fills"] == [style.PERIOD_FILLS[k] for k in values["period_kinds"]]
    early = tuple(["Between periods"] * 5 + ["Baseline"] * 10 + ["After"] * 15)
    ctx2 = SeriesContext(
        x=make_ctx().x, x_is_time=True, stage=early, segment=(0,) * N, unit="", metric_name="Calls"
    )
    spec = run_chart(ctx2, make_values(), make_run_analysis()).spec
    fill = next(
        v["encoding"]["fill"]
        for v in spec["layer"]
        if v["data"]["name"] == "bands" and v["mark"]["type"] == "rect"
    )
    by_kind = dict(zip(fill["scale"]["domain"], fill["scale"]["range"], strict=True))
    assert by_kind == {
        k: style.PERIOD_FILLS[k] for k in ("before the baseline", "baseline", "after")
    }
    assert fill["legend"]["title"] == "period"
    # one named period only: its band and its name, in its kind's fill
    one = band_rows(x_axis(ctx), ("Baseline",) * N)
    assert [(r["kind"], r["label"]) for r in one] == [("baseline", "Baseline")]
