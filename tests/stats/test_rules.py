"""Signal rules: each rule fires exactly where its pattern occurs and not one point short.

Rule definitions: Western Electric Statistical Quality Control Handbook (1956), from memory;
Nelson (1984) J. Quality Technology 16(4):237-239, from memory. Sequences are built by hand on a
chart with centre 0, sigma 1 and limits +-3, so each value is its own z-score.
"""

from __future__ import annotations

import numpy as np
import pytest

from steadyline.stats import rules as R
from steadyline.stats.control.individuals import individuals
from steadyline.stats.control.rates import p_chart
from steadyline.stats.results import ControlChart, StatsError

# a background that triggers nothing: no run, trend or alternation builds up, and it leaves
# 1 sigma often enough that the 15-within-1-sigma test stays quiet
QUIET = [0.3, -1.2, -0.4, 1.1, 0.2, -0.3, 1.3, -0.6]


def chart(values, stage=None, secondary=None) -> ControlChart:
    v = np.asarray(values, dtype=float)
    m = v.size
    return ControlChart(
        kind="individuals",
        label="test",
        values=v,
        centre=np.zeros(m),
        lower=np.full(m, -3.0),
        upper=np.full(m, 3.0),
        sigma=np.ones(m),
        process_sigma=1.0,
        sigma_method="given",
        fitted=np.ones(m, dtype=bool),
        stage=np.zeros(m, dtype=int) if stage is None else np.asarray(stage),
        secondary=secondary,
    )


def found(values, rule, rule_set="nelson", **kw):
    sigs = R.detect_signals(chart(values, **kw), rule_set)
    return [(s.indices, s.side) for s in sigs if s.rule == rule]


def test_quiet_background_has_no_signals():
    for rule_set in R.RULE_SETS:
        assert R.detect_signals(chart(QUIET * 4), rule_set) == ()


def test_beyond_limits_strict():
    assert found([0.1, 3.01, -0.2, -3.5], "beyond-limits") == [((1,), "above"), ((3,), "below")]
    assert found([0.1, 3.0, -3.0, 0.2], "beyond-limits") == []  # exactly on a limit: not beyond


def test_two_of_three_beyond_2_sigma():
    assert found([0.1, 2.5, 0.0, 2.2, -0.1], "two-of-three-beyond-2-sigma") == [((1, 3), "above")]
    assert found([2.5, 0.0, 0.0, 2.5], "two-of-three-beyond-2-sigma") == []  # 2 of 4
    assert found([2.5, -2.5, 0.1], "two-of-three-beyond-2-sigma") == []  # opposite sides
    assert found([2.0, 2.0, 0.1], "two-of-three-beyond-2-sigma") == []  # exactly 2 sigma
    got = found([-2.1, -2.6, -0.1], "two-of-three-beyond-2-sigma", "western-electric")
    assert got == [((0, 1), "below")]


def test_four_of_five_beyond_1_sigma():
    rule = "four-of-five-beyond-1-sigma"
    assert found([1.5, 1.2, 0.0, 1.8, 1.1], rule) == [((0, 1, 3, 4), "above")]
    assert found([1.5, 1.2, 0.0, -0.2, 1.8, 1.1], rule) == []  # 4 of 6
    assert found([1.5, 1.2, 1.0, 1.8], rule) == []  # exactly 1 sigma is not beyond
    # a longer stretch is one merged signal with all its points
    assert found([1.5] * 7, rule) == [((0, 1, 2, 3, 4, 5, 6), "above")]


@pytest.mark.parametrize(
    ("rule_set", "rule", "length"),
    [
        ("western-electric", "run-of-8-one-side", 8),
        ("nelson", "run-of-9-one-side", 9),
    ],
)
def test_run_on_one_side(rule_set, rule, length):
    pad = [0.2, -0.3]
    short = pad + [0.5] * (length - 1) + [-0.4]
    assert found(short, rule, rule_set) == []
    exact = pad + [0.5] * length + [-0.4]
    assert found(exact, rule, rule_set) == [(tuple(range(2, 2 + length)), "above")]
    below = pad + [-0.5] * (length + 2)
    assert found(below, rule, rule_set) == [(tuple(range(1, 4 + length)), "below")]
    # a point exactly on the centre line breaks the run
    broken = [0.5] * (length - 1) + [0.0] + [0.5] * (length - 1)
    assert R.ON_CENTRE_BREAKS_RUN
    assert found(broken, rule, rule_set) == []


def test_trend_of_six():
    rule = "trend-of-6"
    assert found([0.0, 0.1, 0.2, 0.3, 0.4, -0.5], rule) == []  # 5 rising points
    assert found([0.0, 0.1, 0.2, 0.3, 0.4, 0.5, -0.5], rule) == [((0, 1, 2, 3, 4, 5), "up")]
    assert found([0.5, 0.4, 0.3, 0.2, 0.1, 0.0], rule) == [((0, 1, 2, 3, 4, 5), "down")]
    assert R.TIES_BREAK_TREND
    assert found([0.0, 0.1, 0.2, 0.2, 0.3, 0.4, 0.5], rule) == []  # a tie breaks it


def test_alternating_fourteen():
    rule = "alternating-14"
    zigzag = [0.3 if i % 2 else -0.3 for i in range(14)]
    assert found(zigzag[:13] + [zigzag[12]], rule) == []  # 13 alternate, then a tie
    assert found(zigzag, rule) == [(tuple(range(14)), None)]
    with_tie = zigzag[:7] + [zigzag[6]] + zigzag[7:]
    assert found(with_tie, rule) == []


def test_hugging_centre_fifteen():
    rule = "hugging-centre-15"
    base = [0.2, 0.5, 0.1, -0.3, -0.6, 0.4, -0.2]  # within 1 sigma, no other pattern
    seq14 = (base * 3)[:14]
    assert found([2.5] + seq14 + [-1.5], rule) == []
    seq15 = (base * 3)[:15]
    assert found([2.5] + seq15 + [-1.5], rule) == [(tuple(range(1, 16)), None)]
    # exactly 1 sigma counts as within
    assert found([1.0] * 15, rule) == [(tuple(range(15)), None)]


def test_avoiding_centre_eight():
    rule = "avoiding-centre-8"
    mix = [1.5, -1.6, -1.4, 1.7, 1.3, -1.5, 1.6, -1.2]
    assert found(mix[:7] + [0.1], rule) == []
    assert found(mix + [0.1], rule) == [(tuple(range(8)), None)]
    assert found(mix[:4] + [1.0] + mix[4:], rule) == []  # exactly 1 sigma is not beyond


def test_western_electric_set_is_default_and_has_four_rules():
    assert R.default_rule_set() == "western-electric" == R.DEFAULT_RULE_SET
    assert [k for k, _ in R.RULE_SETS["western-electric"]] == [
        "beyond-limits",
        "two-of-three-beyond-2-sigma",
        "four-of-five-beyond-1-sigma",
        "run-of-8-one-side",
    ]
    assert len(R.RULE_SETS["nelson"]) == 8
    for rules in R.RULE_SETS.values():
        for key, text in rules:
            assert R.rule_description(key) == text and "rule" not in text.lower()
    # a trend is not part of the Western Electric set
    assert found([0.0, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6], "trend-of-6", "western-electric") == []
    with pytest.raises(StatsError, match="unknown rule set"):
        R.detect_signals(chart([1.0]), "rule-2")
    with pytest.raises(StatsError, match="unknown rule"):
        R.rule_description("test-5")


def test_nan_points_are_skipped():
    assert R.NAN_POINTS_SKIPPED
    vals = [0.5] * 4 + [np.nan] + [0.5] * 4
    assert found(vals, "run-of-8-one-side", "western-electric") == [
        ((0, 1, 2, 3, 5, 6, 7, 8), "above")
    ]


def test_patterns_do_not_span_stages_and_only_stage():
    vals = [0.5] * 8 + [-0.5] * 3 + [0.5] * 8
    st = [0] * 4 + [1] * 7 + [2] * 8
    assert found(vals, "run-of-8-one-side", "western-electric", stage=st) == [
        (tuple(range(11, 19)), "above")
    ]
    c = chart(vals, stage=st)
    assert R.detect_signals(c, only_stage=1) == ()
    assert len(R.detect_signals(c, only_stage=2)) == 1


def test_dispersion_chart_gets_only_beyond_limits():
    sec = chart([np.nan] + [0.5] * 9 + [3.5])
    sigs = R.detect_signals(chart(QUIET + [0.2, -0.1, 0.3], secondary=sec))
    assert [(s.rule, s.indices, s.chart) for s in sigs] == [("beyond-limits", (10,), "secondary")]
    assert R.DISPERSION_CHART_RULES == ("beyond-limits",)


def test_stepped_limits_on_p_chart():
    # the same proportion is inside the limits of a small subgroup and outside those of a large
    d = [5] * 8 + [10, 150]
    n = [100] * 8 + [100, 1500]
    ch = p_chart(d, n, stage=[0] * 8 + [1, 1])
    beyond = [s.indices for s in R.detect_signals(ch, "limits-only")]
    assert beyond == [(9,)]
    assert ch.values[8] == ch.values[9]


def test_zero_sigma_chart():
    ch = individuals([4.0, 4.0, 4.0, 4.0, 4.0], stage=[0, 0, 0, 0, 1])
    sigs = R.detect_signals(ch, "limits-only")
    assert sigs == ()
    ch2 = individuals([4.0, 4.0, 4.0, 4.0, 4.5], stage=[0, 0, 0, 0, 1])
    assert [s.indices for s in R.detect_signals(ch2, "limits-only")] == [(4,)]


def test_nile_shift_is_flagged():
    # statsmodels.datasets.nile: known level shift around 1898 (index 27/28; series from 1871).
    sm = pytest.importorskip("statsmodels.api")
    x = sm.datasets.nile.load_pandas().data["volume"].to_numpy(dtype=float)
    sigs = R.detect_signals(individuals(x))
    runs = [s for s in sigs if s.rule == "run-of-8-one-side"]
    assert any(s.side == "above" and max(s.indices) <= 27 for s in runs)
    assert any(s.side == "below" and min(s.indices) >= 28 for s in runs)
    # before the shift the signals are above, after it below
    for s in sigs:
        if s.chart == "main" and s.rule != "beyond-limits":
            assert (s.side == "above") == (max(s.indices) <= 27)


def test_signal_fields():
    (s,) = R.detect_signals(chart([0.1, 4.0, 0.2]))
    assert s.rule == "beyond-limits" and s.chart == "main" and s.side == "above"
    assert s.description == R.rule_description("beyond-limits")
