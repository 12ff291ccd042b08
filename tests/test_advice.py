"""The plain-words findings printed under each chart (steadyline.advice)."""

from __future__ import annotations

from steadyline.advice import sentences, series
from steadyline.stats import analyse_runs
from steadyline.stats.results import Signal

X = [f"2026-01-{d:02d}" for d in range(1, 32)]


def test_side_named_once_when_the_rule_names_it():
    # a run chart's shift names its side ("below the median"): no second side in brackets
    values = [10.0] * 5 + [1.0, 2.0, 3.0, 1.5, 2.5, 1.0, 2.0, 3.0] + [10.0] * 5
    run = analyse_runs(values, "perla", median=5.0)
    shift = [f.text for f in series.run_findings(run, X, "rules") if "shift" in f.text]
    assert shift and "below the median" in shift[0]
    assert "(below" not in shift[0] and "centre line" not in shift[0]


def test_side_added_where_the_rule_leaves_it_open():
    sig = Signal(
        "run-of-8-one-side",
        "8 points in a row on one side of the centre line",
        tuple(range(8)),
        "below",
    )
    text = sentences.group_sentence([sig], X)
    assert text.startswith(
        "8 points in a row on one side of the centre line (below the centre "
        "line): 8 points, 2026-01-01,"
    )
    rising = Signal("trend", "6 points in a row all rising", tuple(range(6)), "up")
    assert "(rising)" not in sentences.group_sentence([rising], X)


def test_dates_listed_up_to_a_limit():
    assert sentences.list_dates(["a"]) == "a"
    assert sentences.list_dates(["a", "b", "a"]) == "a and b"
    many = [str(i) for i in range(sentences.MAX_DATES_LISTED + 3)]
    assert sentences.list_dates(many).endswith(" and 3 more")


def test_own_limit_findings_say_whether_the_new_process_is_stable():
    assert series.own_limit_findings((), X)[0].kind == "clear"
    sig = Signal("beyond-limits", "a point outside the control limits", (3,), "above")
    found = series.own_limit_findings((sig,), X)
    assert "shows 1 signal" in found[0].text
    assert found[1].text.startswith(
        "After, on its own limits: a point outside the control "
        "limits (above the centre line): 1 point, 2026-01-04."
    )


def test_change_findings_count_the_after_points_in_the_legends_words():
    import numpy as np

    from steadyline.stats.evidence import point_evidence
    from steadyline.stats.results import ControlChart

    n = 20
    stage = np.array([0] * 10 + [2, 2] + [1] * 8)
    values = np.array([10.0] * 10 + [10, 10] + [5, 6, 5, 6, 15, 6, 5, 6])
    chart = ControlChart(
        kind="individuals",
        label="X",
        values=values,
        centre=np.full(n, 10.0),
        lower=np.full(n, 7.0),
        upper=np.full(n, 13.0),
        sigma=np.ones(n),
        process_sigma=1.0,
        sigma_method="",
        fitted=np.arange(n) < 10,
        stage=stage,
    )
    signals = (
        Signal("beyond-limits", "outside", (3,), "above"),
        Signal("beyond-limits", "outside", (12, 13, 14, 15, 17, 18, 19), "below"),
        Signal("beyond-limits", "outside", (16,), "above"),
    )
    ev = point_evidence(chart, signals, (), better="lower")
    texts = [f.text for f in series.change_findings(ev, chart, signals)]
    assert texts[0] == (
        "7 of 8 after points take part in signals against the baseline's limits "
        "on the better side (marked “baseline limits: change, better”): "
        "evidence of a change for the better."
    )
    assert texts[1] == (
        "1 of 8 after points takes part in signals against the baseline's "
        "limits on the worse side (marked “baseline limits: change, worse”): "
        "evidence of a change for the worse."
    )
    assert texts[2].startswith(
        "The baseline shows 1 signal on its own limits (marked “signal on its own period's limits”)"
    )
    kinds = [f.kind for f in series.change_findings(ev, chart, signals)]
    assert kinds == ["change-better", "change-worse", "signal"]
    quiet = series.change_findings(point_evidence(chart, (), (), "lower"), chart, ())
    assert [f.text for f in quiet] == [
        "None of the 8 after points takes part in a signal against the baseline's limits: no "
        "evidence yet that the process has changed."
    ]
