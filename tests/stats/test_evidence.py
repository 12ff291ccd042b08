"""Which points of a control chart by period are evidence of a change, in which direction, and
which are signals of instability (steadyline.stats.evidence). The charts are small hand-made
series whose limits are set here, so every expectation can be read off the numbers."""

from __future__ import annotations

import numpy as np
import pytest

from steadyline.stats import individuals
from steadyline.stats.evidence import change_counts, point_evidence
from steadyline.stats.results import ControlChart, Signal

# baseline 0-9 (limits fitted there), between periods 10-11, after 12-19
STAGE = [0] * 10 + [2, 2] + [1] * 8


def chart(values, centre=10.0, secondary=None) -> ControlChart:
    n = len(values)
    return ControlChart(
        kind="individuals",
        label="X",
        values=np.asarray(values, float),
        centre=np.full(n, centre),
        lower=np.full(n, centre - 3),
        upper=np.full(n, centre + 3),
        sigma=np.ones(n),
        process_sigma=1.0,
        sigma_method="",
        fitted=np.arange(n) < 10,
        stage=np.asarray(STAGE),
        secondary=secondary,
    )


VALUES = [10, 11, 9, 10, 14, 10, 9, 11, 10, 10, 6, 10, 5, 6, 5, 6, 15, 6, 5, 6]
SIGNALS = (
    Signal("beyond-limits", "outside", (4,), "above"),  # baseline: instability
    Signal("beyond-limits", "outside", (10,), "below"),  # between: change
    Signal("run", "8 on one side", tuple(range(12, 20)), "below"),  # after: change
    Signal("beyond-limits", "outside", (16,), "above"),  # after, the other side too
    Signal("hug", "15 within 1 sigma", (13,), None),  # no side
)
OWN = (Signal("beyond-limits", "outside its own limits", (16,), "above"),)


def test_carried_points_in_signals_are_change_the_rest_instability():
    main, sec = point_evidence(chart(VALUES), SIGNALS, OWN, better="lower")
    assert sec is None
    assert main.carried.tolist() == [False] * 10 + [True] * 10
    # the baseline's own signal is instability, never change
    assert main.change[4] == "" and main.unstable[4]
    assert main.change[10] == "better"  # lower, below the baseline's LCL
    assert main.change[11] == ""  # between periods, in no signal
    assert main.change[12:16].tolist() == ["better"] * 4
    # in signals on both sides at once (the run below, the point above): not judged
    assert main.change[16] == "not judged"
    assert main.unstable[16]  # and in a signal on the after period's own limits
    assert main.unstable.tolist() == [i in (4, 16) for i in range(20)]


@pytest.mark.parametrize(
    ("better", "target", "expect"),
    [
        ("lower", None, "better"),
        ("higher", None, "worse"),
        ("target", 5.0, "better"),  # 6 is nearer 5 than the centre line 10 is
        ("target", 12.0, "worse"),
        ("target", None, "not judged"),
    ],
)
def test_direction_by_what_better_means(better, target, expect):
    main, _ = point_evidence(chart(VALUES), SIGNALS, (), better=better, target=target)
    assert main.change[10] == expect


def test_an_undirected_signal_is_not_judged():
    sig = (Signal("hug", "15 within 1 sigma", (13,), None),)
    main, _ = point_evidence(chart(VALUES), sig, (), better="lower")
    assert main.change[13] == "not judged"


def test_dispersion_chart_lower_is_better_whatever_the_metric():
    c = individuals(VALUES, stage=STAGE)  # its mR chart comes with it, fitted on the baseline
    assert c.secondary is not None
    n2 = len(c.secondary.values)
    offset = len(VALUES) - n2
    up = Signal("beyond-limits", "mR outside", (16 - offset,), "above", "secondary")
    _, sec = point_evidence(c, (up,), (), better="higher")
    assert sec.change[16 - offset] == "worse"
    down = Signal("beyond-limits", "mR outside", (16 - offset,), "below", "secondary")
    _, sec = point_evidence(c, (down,), (), better="lower")
    assert sec.change[16 - offset] == "better"


def test_counts_of_the_after_period():
    main, _ = point_evidence(chart(VALUES), SIGNALS, OWN, better="lower")
    values = np.asarray(VALUES, float)
    values[19] = np.nan  # a missing period: not drawn, not counted
    # 13 is in the run below and in a signal without a side: the run gives its direction
    assert change_counts(main, STAGE, values) == {
        "points": 7,
        "better": 6,
        "worse": 0,
        "not judged": 1,
    }


def test_evidence_arrays_are_read_only():
    # found again by identity by the pages' memos: a write must raise, not change a drawn figure
    c = individuals([10, 11, 10, 9, 10, 11, 10, 9, 10, 11, 2, 3], stage=[0] * 10 + [1, 1])
    from steadyline.stats.rules import detect_signals

    for ev in point_evidence(c, detect_signals(c), better="lower"):
        assert ev is not None
        for arr in (ev.carried, ev.change, ev.unstable):
            with pytest.raises(ValueError, match="read-only"):
                arr[0] = arr[0]
