"""The results of loading: a metric's points as plotted (MetricData), how a long series is drawn
by period instead (ByPeriod), and a measurement study's rows (StudyData).

They live apart from the reading and shaping so that the analysis, the pages and the notebook
can name the types without the readers' code."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..config import MetricSpec
from ..errors import Problem


@dataclass
class MetricData:
    """A metric's data as plotted.

    kind:       the effective data type: continuous, subgroups, defectives, defects, categories.
    points:     one row per plotted point with columns
                  period (datetime64, naive wall-clock time), label (str, ISO date or date-time),
                  value (the plotted figure: value, subgroup mean, proportion, rate or count),
                  count, size (defectives / defects), n (rows behind the point),
                  stage (0 baseline, 1 after, 2 between), segment (int).
                For categories: one row per input row with columns category, weight, stage.
    subgroups:  for subgroups: the values of each subgroup, in point order.
    raw_rows:   data rows read from the file.
    by_period:  when the metric had more points than a chart shows legibly and no roll-up of its
                own, the period its time-based charts are drawn by and why (else None).
    """

    spec: MetricSpec
    kind: str
    points: pd.DataFrame
    subgroups: list[np.ndarray] | None = None
    values: pd.DataFrame | None = None  # individual values (value, stage) for distributions
    raw_rows: int = 0
    problems: list[Problem] = field(default_factory=list)  # warnings only
    by_period: ByPeriod | None = None


@dataclass(frozen=True)
class ByPeriod:
    """How a metric with too many points to draw one by one is drawn instead.

    period:   day, week, month, quarter or year (the finest that brings the points under limit).
    points:   the points it would have had (rows, or the user's subgroups).
    periods:  the points drawn (periods with data).
    limit:    DRAWN_POINTS_MAX.
    how:      "subgroups" (each period's values form one subgroup: Xbar-S / Xbar-R by period),
              "totals" (each period's defectives or defects over its items or area: p / u
              chart), or "mean" (the period's mean, when an X-mR chart was asked for).
    reason:   the sentence the pages and results.json give.
    """

    period: str
    points: int
    periods: int
    limit: int
    how: str
    reason: str


@dataclass
class StudyData:
    """A measurement study's rows as read: one measurement per row, with the part and the
    appraiser it belongs to and its line in the file. The trials of a part by an appraiser are
    that pair's rows, in the file's order."""

    spec: MetricSpec
    values: np.ndarray
    parts: tuple[str, ...]
    appraisers: tuple[str, ...]
    lines: np.ndarray
    raw_rows: int = 0
    problems: list[Problem] = field(default_factory=list)  # warnings only
