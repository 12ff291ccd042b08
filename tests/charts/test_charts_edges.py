"""Degenerate inputs still give valid, plain-JSON specs (or a clear error)."""

from __future__ import annotations

import json

import numpy as np
import pytest
import vl_convert as vlc
from chart_fixtures import make_individuals, make_run_analysis, missing_fields, unit_views

from steadyline.charts import (
    SeriesContext,
    column_chart,
    control_chart,
    histogram_chart,
    pareto_chart,
    run_chart,
)
from steadyline.stats.results import Histogram, Pareto


def _ok(cs):
    json.dumps(cs.spec, allow_nan=False)
    json.dumps(list(cs.table), allow_nan=False)
    vlc.vegalite_to_vega(cs.spec)
    assert missing_fields(cs.spec) == []


def _ctx(n, **kw):
    base = dict(
        x=tuple(f"2026-02-{d + 1:02d}T08:00:00+01:00" for d in range(n)),
        x_is_time=True,
        stage=("",) * n,
        segment=(0,) * n,
        unit="%",
        metric_name="First-pass yield",
    )
    base.update(kw)
    return SeriesContext(**base)


def test_all_values_missing():
    cc = make_individuals(n=4, secondary=False)
    cc.values[:] = np.nan
    cc.centre[:] = np.nan
    cc.upper[:] = np.inf
    cc.lower[:] = -np.inf
    cs = control_chart(_ctx(4), cc, ())
    _ok(cs)
    assert cs.spec["datasets"]["points"] == [] and cs.spec["datasets"]["limits"] == []
    assert cs.table[0]["UCL"] is None


def test_datetimes_with_offsets_become_utc():
    cc = make_individuals(n=3, secondary=False)
    cs = control_chart(_ctx(3), cc, ())
    _ok(cs)
    assert cs.spec["datasets"]["points"][0]["x"] == "2026-02-01T07:00:00Z"
    # the tooltip shows the UTC time to the minute (the positions have no seconds)
    assert cs.spec["datasets"]["points"][0]["x"] == "2026-02-01T07:00:00Z"
    when = next(
        t["calculate"]
        for v, _ in unit_views(cs.spec)
        if v["mark"]["type"] == "point"
        for t in v.get("transform", [])
        if t.get("as") == "when"
    )
    assert when == "utcFormat(datum.x, '%Y-%m-%d %H:%M')"


def test_run_chart_of_one_point_and_percent_unit():
    an = make_run_analysis(1)
    cs = run_chart(_ctx(1), [97.5], an)
    _ok(cs)
    assert cs.spec["datasets"]["centre"][0]["text"] == "median 31.2%"


def test_bad_date_is_an_error():
    with pytest.raises(ValueError):
        control_chart(
            _ctx(2, x=("2026-02-01", "not a date")), make_individuals(2, secondary=False), ()
        )


def test_empty_and_zero_categories():
    _ok(column_chart([], [], unit="count"))
    p = Pareto(("a", "b"), (0.0, 0.0), (np.nan, np.nan), (np.nan, np.nan), 0.0, ())
    cs = pareto_chart(p)
    _ok(cs)
    assert cs.table[0]["percent"] is None


def test_empty_histogram_bins():
    h = Histogram("sturges", "Sturges", (0.0, 1.0, 2.0), (0, 0), 1.0, 0, float("nan"), float("nan"))
    cs = histogram_chart(h, unit="", normal_curve=True)
    _ok(cs)
    assert "curve" not in cs.spec["datasets"]


def test_plain_times_take_the_bulk_path_with_the_same_positions():
    # reference: the one-by-one path (datetime.fromisoformat and strftime from the standard
    # library) on the same values, with one value that forces it
    from steadyline.charts.base.times import parse_time as pt
    from steadyline.charts.base.times import time_text, utc_text
    from steadyline.charts.base.xaxis import XAxis

    cases = [
        ("2026-01-05", "2026-01-06", "2026-01-09"),
        ("2026-01-05 06:00", "2026-01-05 06:01", "2026-01-05 07:30", "2026-01-06 00:00"),
        ("2026-01-05T06:00:01", "2026-01-05T06:00:02", "2026-01-05T06:00:05"),
        ("2026-01-05", "2026-01-05 06:00", "2026-01-05T06:00:07"),
    ]
    for xs in cases:
        ctx = SeriesContext(
            x=xs,
            x_is_time=True,
            stage=("",) * len(xs),
            segment=(0,) * len(xs),
            unit="",
            metric_name="m",
        )
        xa = XAxis(ctx)
        assert xa._stamps is not None
        dts = [pt(s) for s in xs]
        assert xa.pos == [time_text(s) for s in xs]
        mids = (
            [xa.pos[0]]
            + [utc_text(dts[i - 1] + (dts[i] - dts[i - 1]) / 2) for i in range(1, len(xs))]
            + [xa.pos[-1]]
        )
        assert xa.midpoints() == mids
        assert xa.has_seconds() == any(d.second for d in dts)
        assert xa.in_range(xs[1]) and not xa.in_range("2030-01-01")
    odd = ("2026-01-05T06:00+02:00", "2026-01-05T07:00Z")
    ctx = SeriesContext(
        x=odd, x_is_time=True, stage=("", ""), segment=(0, 0), unit="", metric_name="m"
    )
    xa = XAxis(ctx)
    assert xa._stamps is None and xa.pos == ["2026-01-05T04:00:00Z", "2026-01-05T07:00:00Z"]


def test_times_handed_over_by_the_maker_give_the_positions_read_from_the_text():
    # reference: the same axis with the times read back from the ISO text (numpy's parse)
    from steadyline.charts.base.xaxis import XAxis

    xs = ("2026-01-05", "2026-01-05T06:00:07", "2026-01-06T00:00:01", "2026-02-01")
    stamps = np.array(xs, dtype="datetime64[s]")
    kw = dict(x=xs, x_is_time=True, stage=("",) * 4, segment=(0,) * 4, unit="", metric_name="m")
    read = XAxis(SeriesContext(**kw))
    given = XAxis(SeriesContext(**kw, stamps=stamps))
    assert given.pos == read.pos and given.midpoints() == read.midpoints()
    assert given.has_seconds() == read.has_seconds()
    # the stamps take no part in equality, so charts of equal series share their axis
    assert SeriesContext(**kw, stamps=stamps) == SeriesContext(**kw)


def test_events_given_as_dates_are_drawn_as_their_iso_text_is_without_reading_text_back(
    monkeypatch,
):
    # reference: the same events given as ISO text (read back by datetime.fromisoformat)
    import datetime as dt

    from steadyline.charts.base import events as event_module
    from steadyline.charts.base import times, xaxis
    from steadyline.charts.base.events import event_rows
    from steadyline.charts.base.xaxis import XAxis

    xs = ("2026-01-05", "2026-01-12", "2026-01-19T06:30:00", "2026-01-26", "2026-02-02")
    stamps = np.array(xs, dtype="datetime64[s]")
    days = [dt.date(2026, 1, 5), dt.date(2026, 1, 13), dt.date(2026, 1, 20), dt.date(2026, 3, 1)]
    kw = dict(x=xs, x_is_time=True, stage=("",) * 5, segment=(0,) * 5, unit="", metric_name="m")
    as_text = [(d.isoformat(), f"event {k}") for k, d in enumerate(days)]
    as_dates = [(d, f"event {k}") for k, d in enumerate(days)]
    expected = event_rows(XAxis(SeriesContext(**kw, stamps=stamps)), as_text)
    assert len(expected) == 3  # the last event is outside the plotted range

    def refuse(text):
        raise AssertionError(f"time read back from text: {text!r}")

    for module in (times, xaxis, event_module):
        if hasattr(module, "parse_time"):
            monkeypatch.setattr(module, "parse_time", refuse)
    got = event_rows(XAxis(SeriesContext(**kw, stamps=stamps)), as_dates)
    assert got == expected


def test_a_template_is_filled_the_same_whether_cached_or_not():
    # reference: the placeholders written out by hand
    import copy

    import pytest

    from steadyline.charts.base.templates import cached_template, fill, list_slot, slot

    def build():
        return {
            "a": slot("title"),
            "b": {"values": list_slot("xs"), "keep": [1, "two"]},
            "c": list_slot("one"),
        }

    values = {"title": "T", "xs": [3, 4], "one": "single"}
    want = {"a": "T", "b": {"values": [3, 4], "keep": [1, "two"]}, "c": ["single"]}
    cached = cached_template(("test-fill",), build)
    assert fill(cached, values) == fill(copy.deepcopy(cached), values) == want
    assert fill(cached, values)["b"]["values"] is not values["xs"]  # a copy, not the list
    with pytest.raises(KeyError, match="title"):
        fill(build(), {"xs": [], "one": 1})
