"""Plain result types returned by the statistics functions.

Every statistic in :mod:`steadyline.stats` takes arrays (or sequences) in and returns one of these
frozen dataclasses. They hold plain Python floats / ints / tuples and numpy arrays only, so that a
practitioner can use them from a notebook and the site layer can serialise them generically
(see ``steadyline.site.serialise``). Nothing here knows about files, charts or pages.

Conventions
- Missing / not-applicable numbers are ``None`` for scalars and ``nan`` inside arrays.
- Point indices are 0-based positions in the plotted sequence.
- ``notes`` carry plain sentences that state what was done in a degenerate case
  (zero sigma, one point, ...), so that pages can show them instead of a silent NaN.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np


class StatsError(ValueError):
    """The one domain error of the statistics package.

    Its message states the requirement that was not met, e.g.
    "an individuals chart requires at least two data points, got 1".
    """


@dataclass(frozen=True)
class Signal:
    """One detected signal of a rule on a chart.

    rule:        a stable key of our own, e.g. "beyond-limits", "long-run-one-side".
    description: the rule in plain words, e.g. "2 of 3 in a row beyond 2σ on one side".
    indices:     every point taking part in the pattern (0-based, sorted).
    side:        "above" / "below" / "up" / "down" where the rule has a direction, else None.
    chart:       which chart of a pair it was found on: "main" or "secondary" (mR, R, S).
    """

    rule: str
    description: str
    indices: tuple[int, ...]
    side: str | None = None
    chart: str = "main"


@dataclass(frozen=True)
class ControlChart:
    """A control chart: the plotted statistic with its centre line and limits per point.

    All arrays have one entry per plotted point. Limits may vary per point (stepped p / u
    limits, variable subgroup sizes, limits recomputed per period); a missing limit is nan
    (e.g. an LCL that does not exist).

    kind:          "individuals", "moving-range", "xbar", "range", "stdev", "p", "np", "c", "u",
                   "laney-p", "laney-u".
    label:         short name for display, e.g. "Individuals (X)", "Moving range (mR)".
    values:        the plotted statistic.
    centre/lower/upper: centre line and 3-sigma limits per point.
    sigma:         sigma of the plotted statistic per point (what zones are measured in).
    process_sigma: estimate of the within-subgroup sigma of the individual values (for
                   capability), None for attribute charts.
    sigma_method:  how the sigma was estimated, in words ("average moving range / d2(2)").
    fitted:        boolean mask of the points the limits were computed from.
    stage:         integer stage number per point (0 = baseline); limits are constant
                   within a stage's fit unless they step with subgroup size.
    sizes:         subgroup size / area of opportunity per point where it applies, else None.
    secondary:     the companion dispersion chart (mR, R or S) where there is one.
    extras:        chart-specific figures, e.g. {"sigma_z": 1.54} for Laney charts.
    notes:         plain sentences on degenerate handling.
    set_aside:     boolean mask of the points set aside (a known cause found and removed):
                   left out of every fit and never judged by the signal rules; None when none.
    """

    kind: str
    label: str
    values: np.ndarray
    centre: np.ndarray
    lower: np.ndarray
    upper: np.ndarray
    sigma: np.ndarray
    process_sigma: float | None
    sigma_method: str
    fitted: np.ndarray
    stage: np.ndarray
    sizes: np.ndarray | None = None
    secondary: ControlChart | None = None
    extras: dict[str, float | str | None] = field(default_factory=dict)
    notes: tuple[str, ...] = ()
    # written to results.json only when some point is set aside
    set_aside: np.ndarray | None = field(default=None, metadata={"json": "omit-none"})


@dataclass(frozen=True)
class ChartChoice:
    """Which control chart fits the data, and why, in one sentence."""

    kind: str  # "xmr", "xbar-r", "xbar-s", "p", "np", "c", "u", "laney-p", "laney-u"
    reason: str
    overridden: bool = False


@dataclass(frozen=True)
class RunChartAnalysis:
    """Median and run-chart rules for a sequence of values.

    rule_set:       "anhoj" or "perla".
    median:         the centre line.
    n:              number of points; n_useful: points not on the median.
    longest_run:    longest run on one side of the median (points on the median skipped).
    longest_run_limit: Anhøj: signal when longest_run > this; Perla: shift length (6).
    crossings:      number of times consecutive useful points change side.
    crossings_limit: Anhøj: signal when crossings < this. None for Perla.
    runs:           number of runs (= crossings + 1 when n_useful > 0).
    runs_limits:    Perla: (too few if <= low, too many if >= high), None for Anhøj.
    signals:        detected signals with the points involved.
    notes:          plain sentences (e.g. "points on the median are not counted").
    """

    rule_set: str
    median: float
    n: int
    n_useful: int
    longest_run: int
    longest_run_limit: int | None
    crossings: int
    crossings_limit: int | None
    runs: int
    runs_limits: tuple[int, int] | None
    signals: tuple[Signal, ...]
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class BoxSummary:
    """Five-number summary with Tukey fences at 1.5 x IQR (far out at 3 x IQR)."""

    method: str  # numpy quantile method name, e.g. "linear" (Hyndman & Fan type 7)
    method_label: str  # e.g. "Hyndman & Fan type 7 (linear interpolation)"
    n: int
    mean: float
    q1: float
    median: float
    q3: float
    iqr: float
    lower_fence: float
    upper_fence: float
    whisker_low: float  # most extreme data point inside the fences
    whisker_high: float
    outlier_indices: tuple[int, ...]  # positions of points beyond the inner fences
    outlier_values: tuple[float, ...]
    far_out_indices: tuple[int, ...]  # beyond 3 x IQR
    minimum: float
    maximum: float


@dataclass(frozen=True)
class Histogram:
    rule: str  # "fd", "sturges", "scott", "edges"
    rule_label: str  # e.g. "Freedman–Diaconis"
    edges: tuple[float, ...]
    counts: tuple[int, ...]
    bin_width: float | None  # None when explicit unequal edges
    n: int
    mean: float
    std: float  # sample standard deviation (n-1), for an optional fitted normal curve
    below_range: int = 0  # points outside explicit edges
    above_range: int = 0


@dataclass(frozen=True)
class NormalityTest:
    """Anderson–Darling test for normality, mean and sigma estimated (Stephens' case 3)."""

    statistic: float  # A²
    adjusted: float  # A*² = A²(1 + 0.75/n + 2.25/n²)
    p_value: float | None  # None when A*² is past the range of the p-value approximation
    n: int
    normal_at_5pct: bool
    # Set (with p_value None) when A*² is past the approximation's range: the p-value is then
    # only known to be below this bound, the smallest value the approximation gives.
    p_below: float | None = None


@dataclass(frozen=True)
class Capability:
    """Process capability and performance indices. One-sided specs leave the other side None."""

    lsl: float | None
    usl: float | None
    target: float | None
    mean: float
    sigma_within: float | None
    sigma_overall: float
    n: int
    cp: float | None
    cpu: float | None
    cpl: float | None
    cpk: float | None
    cpk_ci: tuple[float, float] | None  # 95% interval (Bissell 1990)
    pp: float | None
    ppu: float | None
    ppl: float | None
    ppk: float | None
    ppm_expected_within: float | None
    ppm_expected_overall: float
    ppm_observed: float
    normality: NormalityTest | None
    trustworthy: bool
    reasons: tuple[str, ...]  # why not to trust the indices, plain sentences


@dataclass(frozen=True)
class Pareto:
    categories: tuple[str, ...]  # descending by count (ties by name); "other" bucket last if any
    counts: tuple[float, ...]
    percent: tuple[float, ...]
    cumulative_percent: tuple[float, ...]
    total: float
    vital_few: tuple[str, ...]  # categories that make up the first 80%
    threshold: float = 80.0


@dataclass(frozen=True)
class Comparison:
    """Baseline versus after for one metric."""

    measure: str  # "mean", "median", "proportion", "rate"
    baseline: float
    after: float
    change: float
    percent_change: float | None
    better: str  # "lower", "higher", "target"
    improved: bool | None  # None when the direction is "target" and cannot be judged
    test: (
        str  # e.g. "Welch's t-test", "Mann–Whitney U", "two-proportion z-test", "Poisson rate test"
    )
    statistic: float | None
    p_value: float | None
    sentence: str
    n_baseline: int
    n_after: int
