"""What each point of a control chart by period shows: evidence of a change, or instability.

A point judged against limits computed from its own period (the baseline on the baseline's
limits, a later period on its own limits) that takes part in a signal says that period's process
is not stable. A point of another period judged against the baseline's limits carried forward
that takes part in a signal says something else: it no longer fits the baseline process, which
is the evidence of a change the project set out to make (or of one it did not want). The two
are kept apart here so that a chart, its sentences and results.json can say the same.

Direction of a change, per point:
- main chart, ``better`` "lower" / "higher": the side of the signal ("above" / "up" is higher,
  "below" / "down" lower);
- main chart, ``better`` "target": the point's own distance to the target against the distance
  of the centre line it is judged on (closer: better; as far or farther: worse); no target, or
  no centre line there: not judged;
- dispersion chart (mR, R, S): higher is more variation, so "above" is worse and "below" better,
  whatever ``better`` says of the values;
- a signal without a side (e.g. points hugging the centre line), or signals on both sides at
  one point: not judged.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from .results import ControlChart, Signal

BETTER = "better"
WORSE = "worse"
NOT_JUDGED = "not judged"
DIRECTIONS = (BETTER, WORSE, NOT_JUDGED)

_HIGHER = {"above": True, "up": True, "below": False, "down": False}


@dataclass(frozen=True)
class PointEvidence:
    """Per point of one chart (the main chart, or its dispersion companion, in that chart's own
    indexing).

    carried:  the point is judged against the baseline's limits carried forward (it is outside
              the baseline and its limits were not computed from its own period).
    change:   per point "better" / "worse" / "not judged" where a carried point takes part in
              a signal against the baseline's limits, else "" (an array of str objects).
    unstable: the point takes part in a signal on limits of its own period (a baseline point on
              the baseline's limits, a later point on that period's own limits).
    """

    carried: np.ndarray
    change: np.ndarray
    unstable: np.ndarray


def carried_mask(stage, fitted) -> np.ndarray:
    """Points outside the baseline (stage 0) whose limits were not fitted on them."""
    return (np.asarray(stage, dtype=int) != 0) & ~np.asarray(fitted, dtype=bool)


def _companion_stage_and_fit(
    chart: ControlChart, sec: ControlChart
) -> tuple[np.ndarray, np.ndarray, int]:
    """The companion chart's (``sec``, ``chart.secondary``) stage and fitted flags per its own
    point, and its offset (0 or 1) into the main chart's points (an mR chart has one point fewer
    when its first is dropped)."""
    offset = len(chart.values) - len(sec.values)
    stage = sec.stage if len(sec.stage) == len(sec.values) else np.asarray(chart.stage)[offset:]
    fitted = sec.fitted if len(sec.fitted) == len(sec.values) else np.asarray(chart.fitted)[offset:]
    return np.asarray(stage, dtype=int), np.asarray(fitted, dtype=bool), offset


def _one_chart(
    chart: ControlChart,
    stage,
    fitted,
    signals: Sequence[Signal],
    own_signals: Sequence[Signal],
    better: str,
    target: float | None,
    dispersion: bool,
) -> PointEvidence:
    n = len(chart.values)
    carried = carried_mask(stage, fitted)
    unstable = np.zeros(n, dtype=bool)
    in_signal = np.zeros(n, dtype=bool)  # carried points in a signal against the baseline
    higher = np.zeros(n, dtype=bool)  # ... in a signal on the higher side
    lower = np.zeros(n, dtype=bool)  # ... on the lower side
    for s in signals:
        idx = np.asarray(s.indices, dtype=np.int64)
        idx = idx[(idx >= 0) & (idx < n)]
        on = idx[carried[idx]]
        unstable[idx[~carried[idx]]] = True
        in_signal[on] = True
        if s.side in _HIGHER:
            (higher if _HIGHER[s.side] else lower)[on] = True
    for s in own_signals:
        idx = np.asarray(s.indices, dtype=np.int64)
        unstable[idx[(idx >= 0) & (idx < n)]] = True
    one_side = higher ^ lower  # signals on both sides at one point: not judged
    if dispersion or better == "lower":
        good = one_side & lower
    elif better == "higher":
        good = one_side & higher
    elif target is not None:
        values = np.asarray(chart.values, dtype=float)
        centre = np.asarray(chart.centre, dtype=float)
        with np.errstate(invalid="ignore"):
            one_side &= np.isfinite(values) & np.isfinite(centre)
            good = one_side & (np.abs(values - target) < np.abs(centre - target))
    else:
        one_side = np.zeros(n, dtype=bool)
        good = one_side
    change = np.full(n, "", dtype=object)
    change[in_signal] = NOT_JUDGED
    change[in_signal & one_side] = WORSE
    change[in_signal & good] = BETTER
    # read-only where made: the pages find results again by identity (steadyline.memo) and rely
    # on them never changing after they are computed
    for arr in (carried, change, unstable):
        arr.setflags(write=False)
    return PointEvidence(carried, change, unstable)


def point_evidence(
    chart: ControlChart,
    signals: Sequence[Signal],
    own_signals: Sequence[Signal] = (),
    better: str = "lower",
    target: float | None = None,
) -> tuple[PointEvidence, PointEvidence | None]:
    """Evidence per point of ``chart`` (baseline limits carried forward) and of its companion.

    signals:     found on ``chart`` (against the baseline's limits where carried);
    own_signals: found on the later periods' own limits (``only_stage`` of the after period), in
                 the same indexing as ``chart`` and its companion.

    >>> from steadyline.stats.control import individuals
    >>> from steadyline.stats.rules import detect_signals
    >>> c = individuals([10, 11, 10, 9, 10, 11, 10, 9, 10, 11, 2, 3],
    ...                 stage=[0] * 10 + [1, 1])
    >>> main, _ = point_evidence(c, detect_signals(c), better="lower")
    >>> main.change[10:].tolist(), bool(main.unstable.any())
    (['better', 'better'], False)
    """
    main_signals = [s for s in signals if s.chart != "secondary"]
    main_own = [s for s in own_signals if s.chart != "secondary"]
    main = _one_chart(
        chart, chart.stage, chart.fitted, main_signals, main_own, better, target, dispersion=False
    )
    if chart.secondary is None:
        return main, None
    stage, fitted, _ = _companion_stage_and_fit(chart, chart.secondary)
    sec = _one_chart(
        chart.secondary,
        stage,
        fitted,
        [s for s in signals if s.chart == "secondary"],
        [s for s in own_signals if s.chart == "secondary"],
        better,
        target,
        dispersion=True,
    )
    return main, sec


def change_counts(evidence: PointEvidence, stage, values, of_stage: int = 1) -> dict[str, int]:
    """Of one period's drawn points (``of_stage``, default the after period; with a value) of
    one chart: how many there are ("points") and how many are marked as evidence of a change
    in each direction ("better", "worse", "not judged").

    >>> ev = PointEvidence(np.array([False, True, True]),
    ...                    np.array(["", "better", ""], dtype=object), np.zeros(3, dtype=bool))
    >>> change_counts(ev, [0, 1, 1], [1.0, 2.0, 3.0])
    {'points': 2, 'better': 1, 'worse': 0, 'not judged': 0}
    """
    here = (np.asarray(stage, dtype=int) == of_stage) & np.isfinite(np.asarray(values, float))
    change = evidence.change[here]
    out = {"points": int(here.sum())}
    for d in DIRECTIONS:
        out[d] = int((change == d).sum())
    return out
