"""The result types of the analysis: what a process metric's and a measurement study's
statistics come to, in one place.

The pages, results.json and the notebook read only these; the modules beside this one fill
them. A field added here is the one change a new figure needs on this side.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field

import numpy as np

from ..config import MetricSpec
from ..loading import STAGE_AFTER, STAGE_BASELINE, ByPeriod, MetricData, StudyData
from ..stats.evidence import PointEvidence
from ..stats.results import (
    BoxSummary,
    Capability,
    ChartChoice,
    Comparison,
    ControlChart,
    Histogram,
    NormalityTest,
    Pareto,
    RunChartAnalysis,
    Signal,
)
from ..stats.results_studies import (
    AfterSamplePlan,
    AppraiserRanges,
    BusinessFigures,
    CapabilityChange,
    GaugeStudy,
    MixChange,
    PowerReached,
)

# Fewer than this many points in the after period: its own limits are not drawn on the history
# page (Montgomery ch. 6 wants 20-25 subgroups for trial limits, from memory; we accept 12 for a
# first look at the new process, common practice).
AFTER_OWN_LIMITS_MIN = 12


@dataclass
class MetricAnalysis:
    """One process metric's statistics: each display's result, or None when it does not fit
    the data or the statistics refused it (the reason then in ``failures``)."""

    data: MetricData
    x: tuple[str, ...] = ()
    stage_names: tuple[str, ...] = ()
    run: RunChartAnalysis | None = None
    choice: ChartChoice | None = None
    control: ControlChart | None = None
    signals: tuple[Signal, ...] = ()
    after_limits: ControlChart | None = None  # per-period limits, for the history page
    after_signals: tuple[Signal, ...] = ()  # after-period points against the after_limits
    # per point of the control chart and its companion: change against the carried baseline
    # limits, or instability on a period's own limits (the history page's staged chart)
    evidence: tuple[PointEvidence, PointEvidence | None] | None = None
    box: BoxSummary | None = None
    histogram: Histogram | None = None
    normality: NormalityTest | None = None
    capability: Capability | None = None
    pareto: Pareto | None = None
    column: tuple[tuple[str, ...], tuple[float, ...]] | None = None
    comparison: Comparison | None = None
    after_shift: RunChartAnalysis | None = None
    period_boxes: list[tuple[str, BoxSummary]] = field(default_factory=list)
    period_histograms: list[tuple[str, Histogram, Capability | None]] = field(default_factory=list)
    period_paretos: list[tuple[str, Pareto]] = field(default_factory=list)
    category_scope: str = ""  # categories: what the Pareto counts, "baseline" or "all data"
    category_rows: int = 0  # categories: how many rows it counts
    failures: list[tuple[str, str]] = field(default_factory=list)  # (display, sentence)
    # what the before/after test compared, in words ("daily means", "individual values",
    # "items checked, pooled over each period"), and what its n counts ("daily means",
    # "individual values", "periods"): said beside its figures on the history page
    compared: str = ""
    counted: str = ""
    # per point of the run and control charts: set aside (a known cause found and removed,
    # `set_aside` in project.toml), None when the metric sets none aside
    aside: np.ndarray | None = None
    # the individual values left out of the baseline's histogram, box plot and capability
    values_aside: int = 0
    aside_counts: tuple[int, ...] = ()  # points per entry of spec.set_aside
    # the history page's studies: the change in mix of a categories metric, Cpk before vs after
    mix: MixChange | None = None
    capability_change: CapabilityChange | None = None
    # the figures the business reports, per period (baseline first, then after when it has data)
    business: list[tuple[str, BusinessFigures]] = field(default_factory=list)
    # the after sample needed to detect spec.expected_change, and the power reached so far
    after_plan: AfterSamplePlan | None = None
    after_power: PowerReached | None = None
    after_points: int = 0  # points of the after period (what the plan's points are counted in)

    @property
    def spec(self) -> MetricSpec:
        return self.data.spec

    @functools.cached_property
    def has_after(self) -> bool:
        # the data never change once loaded: worked out once, from the pages' mask
        return bool(self.in_after.any())

    # ---------------------------------------------------------------- what the pages read
    # The data as plotted, in arrays and plain values: steadyline.site reads these, never the
    # loader's frame (``data``), so that pages depend on the analysis alone. Stages stay codes
    # (in_baseline / in_after) until a chart or sentence draws their label. The data never
    # change once loaded, so each array is made once; callers must not write into them.

    @property
    def effective_type(self) -> str:
        """The type the data were analysed as (continuous, subgroups, defectives, defects,
        categories)."""
        return self.data.kind

    @property
    def rows_read(self) -> int:
        return self.data.raw_rows

    @property
    def by_period(self) -> ByPeriod | None:
        """The period the tool chose to draw the series by, and why (None: drawn as read)."""
        return self.data.by_period

    @functools.cached_property
    def point_values(self) -> np.ndarray:
        """The plotted figure of each point (a time series' points only)."""
        return self.data.points["value"].to_numpy(float)

    @functools.cached_property
    def point_periods(self) -> np.ndarray | None:
        """Each point's period (datetime64), None when the data have no date column."""
        points = self.data.points
        return points["period"].to_numpy() if "period" in points else None

    @functools.cached_property
    def point_segments(self) -> np.ndarray:
        """Each point's segment of the series (int64)."""
        return self.data.points["segment"].to_numpy(dtype=np.int64)

    @functools.cached_property
    def in_baseline(self) -> np.ndarray:
        """Per point (per row for categories): in the baseline period."""
        return self.data.points["stage"].to_numpy(int) == STAGE_BASELINE

    @functools.cached_property
    def in_after(self) -> np.ndarray:
        """Per point (per row for categories): in the after period."""
        return self.data.points["stage"].to_numpy(int) == STAGE_AFTER

    @functools.cached_property
    def baseline_rate(self) -> float:
        """Defectives or defects: the baseline's count over its items or area, pooled (all
        points when none is in the baseline)."""
        pts = self.data.points
        base = pts[self.in_baseline] if self.in_baseline.any() else pts
        return base["count"].sum() / base["size"].sum()

    # ------------------------------------------------------------ end of what the pages read


@dataclass
class StudyAnalysis:
    """A measurement study's figures: the ANOVA study and each appraiser's range chart (None
    when the statistics refused the data, with the reason in ``failures``)."""

    spec: MetricSpec
    data: StudyData
    study: GaugeStudy | None = None
    ranges: tuple[AppraiserRanges, ...] | None = None
    failures: list[tuple[str, str]] = field(default_factory=list)

    # ---------------------------------------------------------------- what the pages read
    # the study's rows as read, for its pages (steadyline.site never reads ``data``)

    @property
    def measurements(self) -> np.ndarray:
        return self.data.values

    @property
    def parts(self) -> tuple[str, ...]:
        return self.data.parts

    @property
    def appraisers(self) -> tuple[str, ...]:
        return self.data.appraisers

    @property
    def rows_read(self) -> int:
        return self.data.raw_rows

    # ------------------------------------------------------------ end of what the pages read
