"""The staged control chart of the history page: baseline limits carried forward (dashed), the
after period's own limits (solid, after period only); later points in signals against the
baseline's limits marked as evidence of a change, points in signals on their own period's
limits marked as instability."""

from __future__ import annotations

import re

import pytest
from chart_fixtures import (
    MAIN_SIGNALS,
    make_ctx,
    make_individuals,
    make_individuals_per_period,
    make_p_chart,
    missing_fields,
    resolved_points,
    run_fresh,
    unit_views,
)

from steadyline.charts import control_chart, staged_control_chart
from steadyline.charts.series.marks import (
    MARK_CHANGE_BETTER,
    MARK_CHANGE_UNJUDGED,
    MARK_CHANGE_WORSE,
    MARK_ORDINARY,
    MARK_OWN_SIGNAL,
    MARK_SIGNAL,
)
from steadyline.stats.evidence import point_evidence
from steadyline.stats.results import Signal

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


def test_own_limits_solid_over_the_after_period_only():
    cs = staged_control_chart(
        make_ctx(), make_individuals(), make_individuals_per_period(), MAIN_SIGNALS
    )
    spec = cs.spec
    own = _parts(spec, set="after")
    assert {p["name"] for p in own} == {"after CL", "after UCL", "after LCL"}
    assert all(p["look"] == "solid" for p in own)
    for p in own:
        xs = [x for x, _ in _path(spec, p["p"])]
        assert xs[0] == MID and xs[-1] == "2026-07-27"  # from the change of period to the end
    (ucl,) = _parts(spec, name="after UCL")
    assert {y for _, y in _path(spec, ucl["p"])} == {41}
    # labelled at the after period's last point (drawn right of it), in their own dataset
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
        make_ctx(), make_individuals(), make_individuals_per_period(), ()
    ).spec
    view = next(v for v, d in unit_views(spec) if d == "limits")
    enc = view["encoding"]
    dash = dict(
        zip(enc["strokeDash"]["scale"]["domain"], enc["strokeDash"]["scale"]["range"], strict=True)
    )
    assert dash["solid"] == [1, 0] and dash["dashed"] != [1, 0]
    stroke = enc["stroke"]
    assert stroke["condition"]["test"] == "datum.set == 'after'"
    assert stroke["condition"]["value"] != stroke["value"]  # the after set in its own colour
    assert view["mark"]["interpolate"] == "step-after"


def _evidence(better="lower", own_signals=(), target=None):
    return point_evidence(make_individuals(), MAIN_SIGNALS, own_signals, better, target)


OWN = (Signal("beyond-limits", "beyond the 3σ limits", (27,), "below"),)


def test_change_and_instability_marked_apart():
    staged = staged_control_chart(
        make_ctx(),
        make_individuals(),
        make_individuals_per_period(),
        MAIN_SIGNALS,
        OWN,
        _evidence(own_signals=OWN),
    )
    pts = {r["label"]: r for r in resolved_points(staged.spec)}
    x = make_ctx().x
    # an after point beyond the baseline's UCL of a lower-is-better metric: a change, worse
    assert pts[x[25]]["marker"] == MARK_CHANGE_WORSE and not pts[x[25]]["own"]
    assert pts[x[25]]["signals"] == "against the baseline's limits: beyond the 3σ limits"
    # baseline points in a run, on the baseline's own limits: instability (the diamond)
    assert all(pts[x[i]]["own"] and pts[x[i]]["marker"] == MARK_ORDINARY for i in range(8, 16))
    # an after point in a signal on the after period's own limits: instability, not a change
    assert pts[x[27]]["own"] and pts[x[27]]["marker"] == MARK_ORDINARY
    assert pts[x[27]]["signals"] == "on its own limits: beyond the 3σ limits"
    others = set(range(30)) - {5, 25, 27, *range(8, 16)}
    assert all(pts[x[i]]["marker"] == MARK_ORDINARY and not pts[x[i]]["own"] for i in others)
    # the legend names exactly the marks drawn, each in a shape of its own
    # the main chart's point layers: the diamonds beneath, then the points
    own_view, view = [
        v for v, d in unit_views(staged.spec) if d == "points" and v["mark"]["type"] == "point"
    ][:2]
    assert own_view["encoding"]["size"]["condition"]["test"] == "datum.own"
    assert own_view["encoding"]["shape"]["scale"] == view["encoding"]["shape"]["scale"]
    shape = view["encoding"]["shape"]["scale"]
    assert shape["domain"] == [MARK_ORDINARY, MARK_CHANGE_WORSE, MARK_OWN_SIGNAL]
    assert len(set(shape["range"])) == 3
    colour = view["encoding"]["color"]["scale"]
    assert colour["domain"] == shape["domain"]
    # the subtitle names the periods and limits drawn; what they show is in the summary (the
    # chart's description) and the card's sentences
    sub = staged.spec["title"]["subtitle"]
    assert sub[0].startswith("limits from Baseline, 2026-01-05 to 2026-05-18 (20 points)")
    assert sub[0].endswith("dashed where carried forward")
    assert sub[1:] == [
        "after period's own limits (solid) from 2026-05-25 to 2026-07-27 (10 points)"
    ]
    assert "1 of 10 after points signal a change: 1 worse" in staged.summary
    assert "on their own period's limits 3 signals" in staged.summary
    # the table names the mark in the legend's words
    # (the fixture's mR chart has every point in stage 0, so its signal is on its own limits)
    assert staged.table[25]["mark"] == (
        f"{MARK_CHANGE_WORSE}; {MARK_OWN_SIGNAL} (dispersion chart)"
    )
    assert staged.table[27]["mark"] == MARK_OWN_SIGNAL
    assert staged.table[3]["mark"] == ""
    # the tooltip names both sets of limits on after points
    info = resolved_points(staged.spec)[-1]["info"]
    assert info == "CL 30, UCL 44.4; after: LCL 21, CL 31, UCL 41"


@pytest.mark.parametrize(
    ("better", "target", "mark"),
    [
        ("lower", None, MARK_CHANGE_WORSE),  # 52 is above the baseline's UCL
        ("higher", None, MARK_CHANGE_BETTER),
        ("target", 50.0, MARK_CHANGE_BETTER),  # nearer the target than the centre line 30
        ("target", 20.0, MARK_CHANGE_WORSE),
        ("target", None, MARK_CHANGE_UNJUDGED),
    ],
)
def test_direction_of_a_change_follows_the_metric(better, target, mark):
    staged = staged_control_chart(
        make_ctx(),
        make_individuals(),
        None,
        MAIN_SIGNALS,
        evidence=_evidence(better, target=target),
    )
    pts = {r["label"]: r for r in resolved_points(staged.spec)}
    assert pts[make_ctx().x[25]]["marker"] == mark


def test_marks_without_evidence_judge_no_direction():
    staged = staged_control_chart(make_ctx(), make_individuals(), None, MAIN_SIGNALS)
    pts = {r["label"]: r for r in resolved_points(staged.spec)}
    assert pts[make_ctx().x[25]]["marker"] == MARK_CHANGE_UNJUDGED


def test_the_project_pages_control_chart_keeps_its_signal_marks():
    plain = control_chart(make_ctx(), make_individuals(), MAIN_SIGNALS)
    pts = {r["label"]: r for r in resolved_points(plain.spec)}
    assert pts[make_ctx().x[25]]["marker"] == MARK_SIGNAL and "own" not in pts[make_ctx().x[25]]


def test_table_keeps_both_sets_of_limits():
    cs = staged_control_chart(
        make_ctx(), make_individuals(), make_individuals_per_period(), MAIN_SIGNALS
    )
    for col in ("UCL", "after UCL", "after centre line", "after LCL", "mR UCL", "after mR UCL"):
        assert col in cs.columns
    assert cs.table[0]["after UCL"] is None and cs.table[0]["UCL"] == 44.4
    assert cs.table[25]["after UCL"] == 41.0 and cs.table[25]["UCL"] == 44.4
    assert cs.table[25]["after mR UCL"] == 12.3
    assert "beyond the 3σ limits" in cs.table[25]["signals"]
    assert "against the baseline's limits" in cs.summary


def test_attribute_chart_without_companion():
    p = make_p_chart()
    cs = staged_control_chart(make_ctx(), p, None, ())
    assert "vconcat" not in cs.spec and missing_fields(cs.spec) == []


def test_mismatched_charts_are_refused():
    with pytest.raises(ValueError):
        staged_control_chart(
            make_ctx(), make_individuals(secondary=False), make_individuals_per_period(), ()
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
    # the texts drawn (a carried label's narrow-box twin is drawn transparent)
    texts = [
        t
        for attrs, t in re.findall(r"<text([^>]*)>([^<]*)</text>", out)
        if not re.search(r'opacity="0"|opacity: ?0[;"]', attrs)
    ]
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
