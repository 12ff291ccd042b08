"""One metric's data -> every statistic its displays need.

This is the seam between loading (pandas frames) and the pure statistics (arrays in, results
out). It decides which displays fit the metric's data type, calls the statistics, and keeps each
failure of a single display as a plain sentence instead of failing the whole metric.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field, replace

import numpy as np

from .config import MetricSpec
from .loading import (
    STAGE_AFTER,
    STAGE_BASELINE,
    STAGE_NAMES,
    STAGE_OTHER,
    ByPeriod,
    MetricData,
    StudyData,
)
from .stats import control, distribution, rules, runs
from .stats.after_sample import after_sample_needed, power_reached
from .stats.business import defect_figures, defective_figures, measured_figures
from .stats.capability import capability as capability_of
from .stats.capability_change import capability_change
from .stats.choice import choose_chart
from .stats.compare import compare
from .stats.evidence import PointEvidence, point_evidence
from .stats.gauge import appraiser_ranges, gauge_study
from .stats.mix import mix_change
from .stats.pareto import pareto, pareto_in_order
from .stats.results import (
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
    StatsError,
)
from .stats.results_studies import (
    AfterSamplePlan,
    AppraiserRanges,
    BusinessFigures,
    CapabilityChange,
    GaugeStudy,
    MixChange,
    PowerReached,
)
from .vocab import PeriodKind, period_value

# Fewer than this many points in the after phase: its own limits are not drawn on the history
# page (Montgomery ch. 6 wants 20-25 subgroups for trial limits, from memory; we accept 12 for a
# first look at the new process, common practice).
AFTER_OWN_LIMITS_MIN = 12


@dataclass
class MetricAnalysis:
    data: MetricData
    x: tuple[str, ...] = ()
    stage_names: tuple[str, ...] = ()
    run: RunChartAnalysis | None = None
    choice: ChartChoice | None = None
    control: ControlChart | None = None
    signals: tuple[Signal, ...] = ()
    after_limits: ControlChart | None = None  # per-phase limits, for the history page
    after_signals: tuple[Signal, ...] = ()  # after-phase points against the after_limits
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
    phase_boxes: list[tuple[str, BoxSummary]] = field(default_factory=list)
    phase_histograms: list[tuple[str, Histogram, Capability | None]] = field(default_factory=list)
    phase_paretos: list[tuple[str, Pareto]] = field(default_factory=list)
    category_scope: str = ""  # categories: what the Pareto counts, "baseline" or "all data"
    category_rows: int = 0  # categories: how many rows it counts
    failures: list[tuple[str, str]] = field(default_factory=list)  # (display, sentence)
    # what the before/after test compared, in words ("daily means", "individual values",
    # "items checked, pooled over each phase"), and what its n counts ("daily means",
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
    # the figures the business reports, per phase (baseline first, then after when it has data)
    business: list[tuple[str, BusinessFigures]] = field(default_factory=list)
    # the after sample needed to detect spec.expected_change, and the power reached so far
    after_plan: AfterSamplePlan | None = None
    after_power: PowerReached | None = None
    after_points: int = 0  # points of the after phase (what the plan's points are counted in)

    @property
    def spec(self) -> MetricSpec:
        return self.data.spec

    @functools.cached_property
    def has_after(self) -> bool:
        # the data never change once loaded: worked out once
        return bool((self.data.points["stage"].to_numpy() == STAGE_AFTER).any())

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


def phase_names(stage: np.ndarray) -> tuple[str, ...]:
    """Each point's phase by its kind of period (``vocab.PeriodKind``), capitalised as the
    charts' bands name it: a point in neither period is "Before the baseline" before the first
    baseline point, "After the after period" past an after point, else "Between periods"."""
    names = list(map(STAGE_NAMES.__getitem__, stage.tolist()))
    other = stage == STAGE_OTHER
    if other.any():
        base = np.flatnonzero(stage == STAGE_BASELINE)
        after = np.flatnonzero(stage == STAGE_AFTER)
        first_base = int(base[0]) if len(base) else len(stage)
        first_after = int(after[0]) if len(after) else len(stage)
        for i in np.flatnonzero(other).tolist():
            kind = (
                PeriodKind.BEFORE
                if i < first_base and i < first_after
                else PeriodKind.LATER
                if i > first_after
                else PeriodKind.BETWEEN
            )
            names[i] = kind.label[:1].upper() + kind.label[1:]
    return tuple(names)


def _try(result: MetricAnalysis, display: str, fn, *args, **kwargs):
    try:
        return fn(*args, **kwargs)
    except StatsError as e:
        result.failures.append((display, str(e)))
        return None


def _control(kind: str, data: MetricData, stage: np.ndarray, limits: str) -> ControlChart:
    pts = data.points
    # points set aside are left out of every fit (the revised trial limits of phase I)
    aside = pts["aside"].to_numpy(bool) if "aside" in pts else None
    # a rolled-up series starts a new segment after missing periods: a moving range never
    # spans that gap (the line breaks there and the limits do not use that range either)
    segment = pts["segment"].to_numpy(np.int64) if "segment" in pts else None
    if kind == "xmr":
        return control.individuals(
            pts["value"].to_numpy(float),
            stage=stage,
            limits=limits,
            segment=segment,
            set_aside=aside,
        )
    if kind in ("xbar-r", "xbar-s"):
        fn = control.xbar_r if kind == "xbar-r" else control.xbar_s
        return fn(data.subgroups, stage=stage, limits=limits, set_aside=aside)
    counts = pts["count"].to_numpy(float)
    sizes = pts["size"].to_numpy(float)
    if kind in ("laney-p", "laney-u"):
        fn = control.laney_p if kind == "laney-p" else control.laney_u
        return fn(counts, sizes, stage=stage, limits=limits, segment=segment, set_aside=aside)
    fns = {"p": control.p_chart, "u": control.u_chart}
    if kind in fns:
        return fns[kind](counts, sizes, stage=stage, limits=limits, set_aside=aside)
    if kind == "np":
        return control.np_chart(counts, sizes, stage=stage, limits=limits, set_aside=aside)
    if kind == "c":
        return control.c_chart(counts, stage=stage, limits=limits, set_aside=aside)
    raise StatsError(f"unknown chart {kind!r}")


def _choose(data: MetricData) -> ChartChoice:
    spec = data.spec
    override = None if spec.chart == "auto" else spec.chart
    pts = data.points
    if data.kind == "continuous":
        return choose_chart("continuous", override=override)
    if data.kind == "subgroups":
        sizes = [len(g) for g in data.subgroups or []]
        return choose_chart("continuous", subgroup_sizes=sizes, override=override)
    return choose_chart(
        data.kind,
        sizes=pts["size"].to_numpy(float),
        counts=pts["count"].to_numpy(float),
        override=override,
    )


def analyse(data: MetricData) -> MetricAnalysis:
    """Every statistic that fits the metric's data."""
    spec = data.spec
    res = MetricAnalysis(data)
    pts = data.points
    if data.kind == "categories":
        _categories(res)
        return res
    stage = pts["stage"].to_numpy(int)
    # labels are text already; read through numpy (iterating a pandas string column value by
    # value costs more than the rest of this function's bookkeeping)
    res.x = tuple(map(str, pts["label"].to_numpy(dtype=object).tolist()))
    res.stage_names = phase_names(stage)
    values = pts["value"].to_numpy(float)
    base = stage == STAGE_BASELINE
    if "aside" in pts:
        res.aside = pts["aside"].to_numpy(bool)
        days = pts["period"].to_numpy().astype("datetime64[D]")
        res.aside_counts = tuple(
            int(((days >= np.datetime64(e.start, "D")) & (days <= np.datetime64(e.end, "D"))).sum())
            for e in spec.set_aside
        )
    kept = base if res.aside is None else base & ~res.aside  # the baseline without them

    # Run chart: the median of the baseline is the centre line carried over later points; the
    # points set aside are left out of it, as they are of the control limits.
    base_vals = values[kept] if kept.any() else values
    res.run = _try(
        res,
        "run chart",
        runs.analyse_runs,
        values,
        spec.run_rules,
        median=float(np.median(base_vals)) if len(base_vals) else None,
        set_aside=res.aside,
    )

    # Control chart.
    res.choice = _try(res, "control chart", _choose, data)
    if res.choice is not None:
        res.control = _try(
            res, "control chart", _control, res.choice.kind, data, stage, spec.limits
        )
        if res.control is not None:
            res.signals = tuple(rules.detect_signals(res.control, spec.signal_rules))
            if res.has_after and int((stage == STAGE_AFTER).sum()) >= AFTER_OWN_LIMITS_MIN:
                res.after_limits = _try(
                    res, "history", _control, res.choice.kind, data, stage, "per-phase"
                )
                if res.after_limits is not None:
                    res.after_signals = (
                        _try(res, "history", _after_signals, res.after_limits, spec.signal_rules)
                        or ()
                    )
            # also without after data: the history page shows every metric of its project
            res.evidence = point_evidence(
                res.control, res.signals, res.after_signals, spec.better, spec.target
            )

    # Distribution displays on individual values (continuous and subgrouped data).
    if data.values is not None and len(data.values):
        vals = data.values["value"].to_numpy(float)
        vstage = data.values["stage"].to_numpy(int)
        if "aside" in data.values:
            # the baseline describes the process without the removed cause: the values of the
            # points set aside are left out of its histogram, box plot and capability
            vaside = data.values["aside"].to_numpy(bool)
            res.values_aside = int((vaside & (vstage == STAGE_BASELINE)).sum())
            vstage = np.where(vaside, -1, vstage)
        vbase = vals[vstage == STAGE_BASELINE] if (vstage == STAGE_BASELINE).any() else vals
        res.box = _try(res, "box plot", distribution.box_summary, vbase, spec.quartiles)
        res.histogram = _try(res, "histogram", distribution.histogram, vbase, spec.bins)
        if len(vbase) >= distribution.AD_MIN_POINTS:
            res.normality = _try(res, "capability", distribution.anderson_darling, vbase)
        if spec.spec_lower is not None or spec.spec_upper is not None:
            res.capability = _capability(res, vbase, STAGE_BASELINE, res.normality)
        # One set of bins for every phase: the baseline's, extended on the same grid to cover
        # the after values (given edges stay as given: the user chose their range).
        given = isinstance(spec.bins, tuple)
        grid = res.histogram.edges if res.histogram is not None else None
        if grid is not None and not given:
            grid = distribution.extend_edges(grid, vals[vstage == STAGE_AFTER])
        for st in (STAGE_BASELINE, STAGE_AFTER):
            sel = vals[vstage == st]
            if len(sel) == 0:
                continue
            name = STAGE_NAMES[st]
            if st == STAGE_BASELINE and res.box is not None:
                b = res.box  # the same baseline values as the box plot above
            else:
                b = _try(res, "history", distribution.box_summary, sel, spec.quartiles)
            if b is not None:
                res.phase_boxes.append((name, b))
            if st == STAGE_BASELINE and grid is not None and grid == res.histogram.edges:
                h = res.histogram  # the baseline's own bins serve every phase
            else:
                h = _try(
                    res,
                    "history",
                    distribution.histogram,
                    sel,
                    grid if grid is not None else spec.bins,
                )
                if h is not None and grid is not None and not given:
                    h = replace(
                        h,
                        rule=res.histogram.rule,
                        rule_label=(
                            f"{res.histogram.rule_label}, the baseline's bins"
                            + ("" if grid == res.histogram.edges else ", extended on the same grid")
                        ),
                    )
            if spec.spec_lower is None and spec.spec_upper is None:
                c = None
            elif st == STAGE_BASELINE:
                c = res.capability  # the same values as the baseline's own capability above
            else:
                c = _capability(res, sel, st)
            if h is not None:
                res.phase_histograms.append((name, h, c))

    # Before / after: the baseline without the points set aside, as its charts describe it.
    base = kept
    if res.has_after and base.any():
        after = stage == STAGE_AFTER
        dtype = {
            "continuous": "continuous",
            "subgroups": "continuous",
            "defectives": "defectives",
            "defects": "defects",
        }[data.kind]
        if data.kind == "continuous" and spec.rollup is not None:
            # A rolled-up metric compares its period values, the points its charts judge: the
            # rows of one period share that period's conditions and are not independent, as
            # the t-test and the rank test assume (treating them as independent is
            # pseudoreplication, Hurlbert 1984, Ecological Monographs 54(2):187-211); and a
            # period's total or count is no statistic of its rows' own values.
            b_arr, a_arr, bs, as_ = values[base], values[after], None, None
            res.compared = period_value(spec.rollup.period, spec.rollup.statistic, plural=True)
            res.counted = res.compared
        elif data.kind in ("continuous", "subgroups") and data.values is not None:
            vv, vs = data.values["value"].to_numpy(float), data.values["stage"].to_numpy(int)
            if "aside" in data.values:
                vs = np.where(data.values["aside"].to_numpy(bool), -1, vs)
            b_arr, a_arr, bs, as_ = vv[vs == STAGE_BASELINE], vv[vs == STAGE_AFTER], None, None
            res.compared = res.counted = "individual values"
        else:
            b_arr, a_arr = pts["count"].to_numpy(float)[base], pts["count"].to_numpy(float)[after]
            bs, as_ = pts["size"].to_numpy(float)[base], pts["size"].to_numpy(float)[after]
            # each phase's totals: all its items checked, or all its area, pooled
            res.compared = (
                "items checked, pooled over each phase"
                if data.kind == "defectives"
                else "defects over the area checked, pooled over each phase"
            )
            res.counted = "periods"  # n of these tests counts the periods pooled
        res.comparison = _try(
            res,
            "comparison",
            compare,
            b_arr,
            a_arr,
            dtype,
            spec.better,
            baseline_sizes=bs,
            after_sizes=as_,
            target=spec.target,
            metric=_subject(spec.name, data.kind),
            unit=spec.unit,
        )
        if res.run is not None:
            res.after_shift = _try(
                res, "comparison", runs.shift_against, values[after], res.run.median, spec.run_rules
            )
    _business(res)
    if len(res.phase_histograms) > 1:
        (_, _, cb), (_, _, ca) = res.phase_histograms[0], res.phase_histograms[-1]
        if cb is not None and ca is not None and cb.cpk is not None and ca.cpk is not None:
            res.capability_change = _try(
                res, "capability before and after", capability_change, cb, ca
            )
    if spec.expected_change is not None:
        _after_sample(res)
    return res


SHIFT = {"with-shift": True, "without-shift": False, "off": False}


def _business(res: MetricAnalysis) -> None:
    """The figures the business reports, for the baseline and (with data) the after period:
    from each phase's totals (defectives; defects counted on units, ``size``), or from the
    phase's capability study (measured values with specification limits)."""
    data, spec = res.data, res.data.spec
    shift = SHIFT[spec.sigma_level]
    if data.kind in ("defectives", "defects"):
        if data.kind == "defects" and spec.size is None:
            return  # no units checked: no figure per unit
        pts = data.points
        stage = pts["stage"].to_numpy(int)
        counts, sizes = pts["count"].to_numpy(float), pts["size"].to_numpy(float)
        for st in (STAGE_BASELINE, STAGE_AFTER):
            sel = stage == st
            if not sel.any():
                continue
            d, u = float(counts[sel].sum()), float(sizes[sel].sum())
            f = (
                _try(res, "business figures", defective_figures, d, u, shift)
                if data.kind == "defectives"
                else _try(
                    res,
                    "business figures",
                    defect_figures,
                    d,
                    u,
                    spec.opportunities_per_unit,
                    shift,
                )
            )
            if f is not None:
                res.business.append((STAGE_NAMES[st], f))
    elif res.phase_histograms:
        for name, _, c in res.phase_histograms:
            if c is not None:
                f = _try(res, "business figures", measured_figures, c, "overall", shift)
                if f is not None:
                    res.business.append((name, f))
    elif res.capability is not None:
        f = _try(res, "business figures", measured_figures, res.capability, "overall", shift)
        if f is not None:
            res.business.append((STAGE_NAMES[STAGE_BASELINE], f))


PLAN_KIND = {
    "continuous": "continuous",
    "subgroups": "continuous",
    "defectives": "defectives",
    "defects": "defects",
}


def _after_sample(res: MetricAnalysis) -> None:
    """How many after points the comparison's test needs to detect the expected change, at its
    5% level with 80% power, and the power the after phase has reached so far.

    Sizes are what the test counts: values (the period values of a rolled-up metric), items
    checked (defectives) or the area of opportunity (defects; each point counts 1 without a
    ``size``); a point's size is the baseline's average per point."""
    data, spec = res.data, res.data.spec
    if data.kind not in PLAN_KIND:
        return
    pts = data.points
    stage = pts["stage"].to_numpy(int)
    base, after = stage == STAGE_BASELINE, stage == STAGE_AFTER
    if not base.any():
        res.failures.append(("after sample", "no baseline period with data to plan from"))
        return
    kind = PLAN_KIND[data.kind]
    sd = None
    if kind == "continuous":
        if spec.rollup is None and data.values is not None:
            vv = data.values["value"].to_numpy(float)
            vs = data.values["stage"].to_numpy(int)
            b, a = vv[vs == STAGE_BASELINE], vv[vs == STAGE_AFTER]
        else:
            vals = pts["value"].to_numpy(float)
            b, a = vals[base], vals[after]
        b = b[np.isfinite(b)]
        a = a[np.isfinite(a)]
        level, n1, n2 = float(np.mean(b)) if len(b) else float("nan"), float(len(b)), len(a)
        sd = float(np.std(b, ddof=1)) if len(b) > 1 else None
    else:
        counts, sizes = pts["count"].to_numpy(float), pts["size"].to_numpy(float)
        n1, n2 = float(sizes[base].sum()), float(sizes[after].sum())
        level = float(counts[base].sum()) / n1 if n1 > 0 else float("nan")
    per_point = n1 / int(base.sum())
    target = level + float(spec.expected_change)
    if kind == "defectives" and not 0 < target < 1 or kind == "defects" and not target > 0:
        what = "proportion" if kind == "defectives" else "rate"
        show = (lambda v: f"{100 * v:.3g}%") if kind == "defectives" else (lambda v: f"{v:.4g}")
        bound = "between 0% and 100%" if kind == "defectives" else "above 0"
        res.failures.append(
            (
                "after sample",
                (
                    f"expected_change ({spec.expected_change:g}) takes the baseline {what} "
                    f"{show(level)} to {show(target)}, which is not {bound}; no after sample is "
                    "planned"
                ),
            )
        )
        return
    res.after_points = int(after.sum())
    res.after_plan = _try(
        res,
        "after sample",
        after_sample_needed,
        kind,
        level,
        target,
        n1,
        size_per_point=per_point,
        sd=sd,
    )
    if res.after_plan is not None and n2 > 0:
        res.after_power = _try(
            res, "after sample", power_reached, kind, level, target, n1, n2, sd=sd
        )


def points_note(spec: MetricSpec) -> str:
    """What one point of a rolled-up metric's run and control charts is, in a sentence ("" for
    a metric that is not rolled up): those charts judge the period values."""
    r = spec.rollup
    if r is None:
        return ""
    one = period_value(r.period, r.statistic)
    if spec.type == "defectives" or r.statistic == "proportion":
        what = f"the defective items over the items checked that {r.period}"
    elif spec.type == "defects":
        what = (
            f"the defects per unit of area that {r.period}"
            if r.statistic == "mean"
            else f"the defects counted that {r.period}"
        )
    else:
        what = (
            f"the number of rows with a value that {r.period}"
            if r.statistic == "count"
            else f"the {r.statistic} of that {r.period}'s values"
        )
    return f"Each point is a {one}: {what}, not a single value."


def values_note(spec: MetricSpec, n: int) -> str:
    """What a rolled-up metric's histogram, box plot and capability describe ("" for a metric
    that is not rolled up): the individual values, since the specification limits apply to
    single items and a period's mean varies less than they do."""
    r = spec.rollup
    if r is None:
        return ""
    return (
        f"Drawn from the {n} individual values before the roll-up, not from the "
        f"{period_value(r.period, r.statistic, plural=True)}: the spread of single items, "
        "which the specification limits apply to."
    )


def values_brief(spec: MetricSpec, n: int) -> str:
    """:func:`values_note` in a few words, for a chart's subtitle (the card's method line says
    why): "The 412 individual values, not the daily means." ("" when not rolled up)."""
    r = spec.rollup
    if r is None:
        return ""
    return f"The {n} individual values, not the {period_value(r.period, r.statistic, plural=True)}."


def _subject(name: str, kind: str) -> str:
    """The metric's name as the subject of a sentence: 'the proportion of orders with …'."""
    lowered = name[:1].lower() + name[1:] if name[1:2].islower() else name
    return f"proportion of {lowered}" if kind == "defectives" else lowered


def _after_signals(chart: ControlChart, rule_set: str) -> tuple[Signal, ...]:
    """Signals of the after phase's points against the after phase's own limits."""
    return tuple(rules.detect_signals(chart, rule_set, only_stage=STAGE_AFTER))


def _sigma_within(res: MetricAnalysis, stage: int) -> float | None:
    """Within-subgroup sigma of the individual values, from the chart fitted on that stage."""
    chart = res.control if stage == STAGE_BASELINE else res.after_limits
    if chart is None or chart.process_sigma is None:
        return None
    if res.data.spec.rollup is not None:
        return None  # sigma of rolled-up means is not the sigma of single values
    if stage == STAGE_BASELINE:
        return chart.process_sigma
    # the per-phase chart fitted each stage on its own points and keeps each stage's sigma
    sigma = chart.extras.get(f"process_sigma_stage_{stage}")
    return None if sigma is None else float(sigma)


def _capability(
    res: MetricAnalysis, vals: np.ndarray, stage: int, normality: NormalityTest | None = None
) -> Capability | None:
    """Capability of *vals*; *normality*, when given, is the Anderson–Darling result already
    computed for these same values."""
    spec = res.data.spec
    chart = res.control
    stable, reason = True, None
    if chart is not None and stage == STAGE_BASELINE:
        here = (np.asarray(chart.stage) == stage).tolist()  # per point: in this period
        own = [s for s in res.signals if any(map(here.__getitem__, s.indices))]
        if own:
            stable = False
            reason = (
                f"{len(own)} signal{'' if len(own) == 1 else 's'} on the control chart "
                "in this period"
            )
    elif chart is not None:
        # a later phase is judged on its own limits (those of the baseline would flag the
        # very change the project made)
        if res.after_limits is None:
            stable = False
            reason = (
                f"the phase has too few points for limits of its own "
                f"({AFTER_OWN_LIMITS_MIN} are needed), so its stability is not yet judged"
            )
        else:
            own = res.after_signals
            if own:
                stable = False
                reason = (
                    f"{len(own)} signal{'' if len(own) == 1 else 's'} against the phase's "
                    "own control limits"
                )
    no_sigma = None
    if res.data.spec.rollup is not None:
        no_sigma = (
            f"{values_note(res.data.spec, len(vals))} The control chart judges the "
            "period values, so the within-subgroup sigma of single values is not "
            "known; only Pp and Ppk (overall sigma) are given."
        )
    if normality is None and len(vals) >= distribution.AD_MIN_POINTS:
        normality = _try(res, "capability", distribution.anderson_darling, vals)
    return _try(
        res,
        "capability",
        capability_of,
        vals,
        _sigma_within(res, stage),
        lsl=spec.spec_lower,
        usl=spec.spec_upper,
        target=spec.target,
        stable=stable,
        normality=normality,
        unstable_reason=reason,
        no_sigma_reason=no_sigma,
    )


def _categories(res: MetricAnalysis) -> None:
    """The Pareto and column chart of the baseline (of all data, said so, when the metric has no
    baseline period or none of its rows fall in it), like every other display of the project
    page; and for the history page the baseline's Pareto beside the after period's, the after
    period's bars in the baseline's order, categories new after the baseline appended."""
    data = res.data
    pts = data.points
    cats = pts["category"].astype(str).to_numpy()
    weights = pts["weight"].to_numpy(float)
    stage = pts["stage"].to_numpy(int)
    base = stage == STAGE_BASELINE
    if data.spec.baseline is not None and "period" in pts and base.any():
        res.category_scope = "baseline"
    else:
        res.category_scope = "all data"
        base = np.ones(len(cats), dtype=bool)
    res.category_rows = int(base.sum())
    res.pareto = _try(res, "Pareto chart", pareto, cats[base], weights[base])
    if res.pareto is None:
        return
    # The column chart keeps the categories in their own (alphabetical) order, so that it
    # reads differently from the Pareto; counts come from the same tally.
    tally = dict(zip(res.pareto.categories, res.pareto.counts, strict=True))
    names = tuple(sorted(tally, key=str.casefold))
    res.column = (names, tuple(float(tally[n]) for n in names))
    after = stage == STAGE_AFTER
    if res.category_scope == "baseline" and after.any():
        order = after_order(res.pareto, pareto(cats[after], weights[after]))
        p = _try(res, "history", pareto_in_order, cats[after], weights[after], order)
        if p is not None:
            res.phase_paretos = [
                (STAGE_NAMES[STAGE_BASELINE], res.pareto),
                (STAGE_NAMES[STAGE_AFTER], p),
            ]
            # the counts of every category in both periods, in the after period's bar order
            b_tally = dict(zip(res.pareto.categories, res.pareto.counts, strict=True))
            a_tally = dict(zip(p.categories, p.counts, strict=True))
            res.mix = _try(
                res,
                "change in mix",
                mix_change,
                order,
                [b_tally.get(c, 0.0) for c in order],
                [a_tally.get(c, 0.0) for c in order],
            )


def after_order(baseline: Pareto, after: Pareto) -> list[str]:
    """The after period's bar order: the baseline's (descending there), then the categories
    new in the after period, descending there (ties by name, as its own Pareto orders them);
    a category named "other" (any case) stays last, as the Pareto by phase draws it."""
    seen = set(baseline.categories)
    order = list(baseline.categories) + [c for c in after.categories if c not in seen]
    last = [c for c in order if c.strip().lower() == "other"]
    return [c for c in order if c not in last] + last


# ----------------------------------------------------------------------------- measurement studies


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


def analyse_study(data: StudyData) -> StudyAnalysis:
    """The ANOVA study (with the metric's specification limits, for the shares of the
    tolerance when both are given) and the ranges by appraiser."""
    m = data.spec
    res = StudyAnalysis(m, data)
    res.study = _try(
        res,
        "measurement study",
        gauge_study,
        data.values,
        data.parts,
        data.appraisers,
        lsl=m.spec_lower,
        usl=m.spec_upper,
    )
    res.ranges = _try(
        res, "ranges by appraiser", appraiser_ranges, data.values, data.parts, data.appraisers
    )
    return res
