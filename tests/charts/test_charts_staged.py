"""The staged control chart of the history page: baseline limits carried forward (dashed), the
after phase's own limits (solid, after phase only), signals judged against the baseline."""

from __future__ import annotations

import re

import pytest
from chart_fixtures import (
    MAIN_SIGNALS,
    make_ctx,
    make_individuals,
    make_individuals_per_phase,
    make_p_chart,
    missing_fields,
    resolved_points,
    run_fresh,
    unit_views,
)

from steadyline.charts import control_chart, staged_control_chart
from steadyline.charts.series import MARK_SIGNAL

MID = "2026-05-21T12:00:00Z"  # midway between the last baseline week and the first after week


def _parts(spec, dataset="limits", **match):
    """The pieces of one chart's limit lines (main: "limits", companion: "secondary_limits")."""
    used = {r["p"] for r in spec["datasets"][dataset]}
    return [
        p
        for p in spec["datasets"]["limit_parts"]
        if p["p"] in used and all(p.get(k) == v for k, v in match.items())
    ]


def _path(spec, p, name="limits"):
    return [(r["x"], r["y"]) for r in spec["datasets"][name] if r["p"] == p]


def test_carried_limits_dashed_and_named_after_the_baseline():
    cs = staged_control_chart(make_ctx(), make_individuals(), None, MAIN_SIGNALS)
    spec = cs.spec
    # over the baseline: the usual look (solid centre line, dashed limits)
    (cl,) = _parts(spec, kind="centre line", name="CL")
    assert cl["look"] == "solid" and cl["set"] == "baseline"
    assert _path(spec, cl["p"]) == [("2026-01-05", 30), (MID, 30)]
    # over the later points: every baseline line dashed and labelled "baseline ..."
    (carried_cl,) = _parts(spec, kind="centre line", name="baseline CL")
    assert carried_cl["look"] == "dashed"
    assert _path(spec, carried_cl["p"]) == [(MID, 30), ("2026-07-27", 30)]
    (carried_ucl,) = _parts(spec, kind="UCL", name="baseline UCL")
    assert carried_ucl["look"] == "dashed"
    labels = {r["kind"]: r["text"] for r in spec["datasets"]["labels"]}
    assert labels["UCL"] == "baseline UCL 44.4" and labels["centre line"] == "baseline CL 30"
    # the LCL is nan after the change in the fixture: nothing is carried, nothing is drawn there
    assert not _parts(spec, name="baseline LCL")
    # no own limits given: none drawn, and the template still finds its (empty) dataset
    assert not _parts(spec, set="after") and spec["datasets"]["own_labels"] == []
    assert missing_fields(spec) == []
    assert "after UCL" not in cs.columns


def test_own_limits_solid_over_the_after_phase_only():
    cs = staged_control_chart(
        make_ctx(), make_individuals(), make_individuals_per_phase(), MAIN_SIGNALS
    )
    spec = cs.spec
    own = _parts(spec, set="after")
    assert {p["name"] for p in own} == {"after CL", "after UCL", "after LCL"}
    assert all(p["look"] == "solid" for p in own)
    for p in own:
        xs = [x for x, _ in _path(spec, p["p"])]
        assert xs[0] == MID and xs[-1] == "2026-07-27"  # from the phase change to the end
    (ucl,) = _parts(spec, name="after UCL")
    assert {y for _, y in _path(spec, ucl["p"])} == {41}
    # labelled at the after phase's last point (drawn right of it), in their own dataset
    own_labels = {r["kind"]: r for r in spec["datasets"]["own_labels"]}
    assert own_labels["UCL"]["text"] == "after UCL 41"
    assert own_labels["centre line"]["text"] == "after CL 31"
    assert {r["x"] for r in own_labels.values()} == {make_ctx().x[-1]}
    # carried limits still there
    assert {r["text"] for r in spec["datasets"]["labels"]} >= {"baseline UCL 44.4"}
    # the companion chart the same way
    (sec_ucl,) = _parts(spec, "secondary_limits", name="after UCL")
    assert {y for _, y in _path(spec, sec_ucl["p"], "secondary_limits")} == {12.3}
    assert [r["text"] for r in spec["datasets"]["secondary_own_labels"]] == [
        "after CL 3.80",
        "after UCL 12.3",
        "after LCL 0",
    ]
    assert missing_fields(spec) == []


def test_own_and_carried_sets_differ_in_dash_and_colour():
    spec = staged_control_chart(
        make_ctx(), make_individuals(), make_individuals_per_phase(), ()
    ).spec
    view = next(v for v, d in unit_views(spec) if d == "limits")
    enc = view["encoding"]
    dash = dict(
        zip(enc["strokeDash"]["scale"]["domain"], enc["strokeDash"]["scale"]["range"], strict=True)
    )
    assert dash["solid"] == [1, 0] and dash["dashed"] != [1, 0]
    colour = dict(
        zip(enc["stroke"]["scale"]["domain"], enc["stroke"]["scale"]["range"], strict=True)
    )
    assert colour["baseline"] != colour["after"]
    assert view["mark"]["interpolate"] == "step-after"


def test_signals_marked_as_on_the_control_chart_and_named_in_the_subtitle():
    cc = make_individuals()
    staged = staged_control_chart(make_ctx(), cc, make_individuals_per_phase(), MAIN_SIGNALS)
    plain = control_chart(make_ctx(), cc, MAIN_SIGNALS)
    marks = [(r["label"], r["marker"], r["signals"]) for r in resolved_points(staged.spec)]
    assert marks == [(r["label"], r["marker"], r["signals"]) for r in resolved_points(plain.spec)]
    assert {r["label"]: r for r in resolved_points(staged.spec)}[make_ctx().x[25]][
        "marker"
    ] == MARK_SIGNAL
    sec = {r["label"]: r for r in resolved_points(staged.spec, "2")}
    assert sec[make_ctx().x[25]]["marker"] == MARK_SIGNAL
    sub = staged.spec["title"]["subtitle"]
    assert sub[0].startswith("limits from Baseline, 2026-01-05 to 2026-05-18 (20 points)")
    assert sub[0].endswith("dashed where carried forward; signals judged against these")
    assert sub[1] == "after phase's own limits (solid) from 2026-05-25 to 2026-07-27 (10 points)"
    assert sub[2].startswith("3 signals: beyond the 3σ limits")
    # the tooltip names both sets of limits on after points
    info = resolved_points(staged.spec)[-1]["info"]
    assert info == "CL 30, UCL 44.4; after: LCL 21, CL 31, UCL 41"


def test_table_keeps_both_sets_of_limits():
    cs = staged_control_chart(
        make_ctx(), make_individuals(), make_individuals_per_phase(), MAIN_SIGNALS
    )
    for col in ("UCL", "after UCL", "after centre line", "after LCL", "mR UCL", "after mR UCL"):
        assert col in cs.columns
    assert cs.table[0]["after UCL"] is None and cs.table[0]["UCL"] == 44.4
    assert cs.table[25]["after UCL"] == 41.0 and cs.table[25]["UCL"] == 44.4
    assert cs.table[25]["after mR UCL"] == 12.3
    assert "beyond the 3σ limits" in cs.table[25]["signals"]
    assert "against the baseline limits" in cs.summary


def test_attribute_chart_without_companion():
    p = make_p_chart()
    cs = staged_control_chart(make_ctx(), p, None, ())
    assert "vconcat" not in cs.spec and missing_fields(cs.spec) == []


def test_mismatched_charts_are_refused():
    with pytest.raises(ValueError):
        staged_control_chart(
            make_ctx(), make_individuals(secondary=False), make_individuals_per_phase(), ()
        )
    with pytest.raises(ValueError, match="points"):
        staged_control_chart(make_ctx(n=10), make_individuals(), None, ())


def test_renders_with_both_sets_labelled():
    # reference: vl-convert's renderer (TZ=UTC in a child process, as in test_charts_vega)
    code = (
        "import sys, vl_convert as vlc\n"
        "sys.path.insert(0, sys.argv[1])\n"
        "from chart_fixtures import all_chart_specs\n"
        "spec = dict(all_chart_specs())['staged-control-chart own'].spec\n"
        "print(vlc.vegalite_to_svg(spec, allowed_base_urls=[]))\n"
    )
    out = run_fresh(code, TZ="UTC")
    texts = re.findall(r"<text[^>]*>([^<]*)</text>", out)
    for text in (
        "baseline UCL 44.4",
        "baseline CL 30",
        "after UCL 41",
        "after CL 31",
        "after LCL 21",
        "after UCL 12.3",
        "UCL 17.6",
    ):
        assert texts.count(text) == 1, text
    # the dashed carried lines and the solid own lines are both drawn
    assert 'stroke-dasharray="6,4"' in out
