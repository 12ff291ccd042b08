"""Result types of the study statistics: measurement system study, change in mix, capability
before versus after, business figures and how long to collect after a change.

Kept apart from :mod:`steadyline.stats.results` so that each kind of study can grow on its own;
the conventions are the same: frozen dataclasses holding plain floats, ints, strings and tuples,
``None`` for a number that does not apply, ``notes`` in plain sentences saying what was done in a
special case.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class AnovaRow:
    """One line of an analysis-of-variance table.

    ``f`` and ``p_value`` are None on the line of the error (repeatability) term.
    """

    source: str  # "part", "appraiser", "part × appraiser", "repeatability"
    df: int
    sum_of_squares: float
    mean_square: float
    f: float | None
    p_value: float | None


@dataclass(frozen=True)
class VarianceComponent:
    """One source of variation of a measurement system study.

    variance:        the estimated variance (negative estimates set to zero, see ``notes`` of
                     the study).
    sigma:           its square root.
    study_percent:   100 · sigma / sigma_total (equal to the ratio of 6-sigma spreads).
    contribution_percent: 100 · variance / variance_total.
    tolerance_percent: 100 · 6 · sigma / (USL − LSL), None without both limits.
    """

    source: str  # "repeatability", "reproducibility", "appraiser", "part × appraiser",
    #              "measurement system", "part-to-part", "total"
    variance: float
    sigma: float
    study_percent: float
    contribution_percent: float
    tolerance_percent: float | None


@dataclass(frozen=True)
class GaugeStudy:
    """A crossed measurement system study by the analysis-of-variance method.

    anova:            the full two-way table with interaction (always reported).
    interaction_pooled: True when the part × appraiser term was not significant at
                      ``pool_above`` and was pooled into repeatability.
    reduced_anova:    the table without interaction when pooled, else None.
    components:       repeatability, reproducibility, appraiser, part × appraiser,
                      measurement system (repeatability + reproducibility), part-to-part, total.
    distinct_categories: floor(1.41 · sigma_part / sigma_measurement_system).
    verdict:          on the measurement system's share of the study variation:
                      "adequate" (< 10%), "depends on use" (10% to 30%), "inadequate" (> 30%).
    tolerance_verdict: the same bands on the share of the tolerance, None without both limits.
    """

    parts: int
    appraisers: int
    trials: int
    anova: tuple[AnovaRow, ...]
    interaction_p_value: float
    pool_above: float
    interaction_pooled: bool
    reduced_anova: tuple[AnovaRow, ...] | None
    components: tuple[VarianceComponent, ...]
    distinct_categories: int
    verdict: str
    tolerance_verdict: str | None
    lsl: float | None
    usl: float | None
    notes: tuple[str, ...] = ()

    def component(self, source: str) -> VarianceComponent:
        """The component of one source, e.g. ``study.component("repeatability")``."""
        for c in self.components:
            if c.source == source:
                return c
        raise KeyError(source)


@dataclass(frozen=True)
class AppraiserRanges:
    """One appraiser's range chart of a measurement study: the range of each part's trials.

    parts:   the part names, in the study's order; ranges: the range of each, in that order.
    centre:  the appraiser's average range R̄; upper / lower: D4·R̄ and D3·R̄ for subgroups of
             ``trials`` (Montgomery §6.2; the AIAG range method draws the same chart).
    beyond:  the indices of the parts whose range is above ``upper``.
    """

    appraiser: str
    parts: tuple[str, ...]
    ranges: tuple[float, ...]
    centre: float
    upper: float
    lower: float
    beyond: tuple[int, ...]


@dataclass(frozen=True)
class MixChange:
    """Whether the shares of categories differ between baseline and after.

    categories:   the categories tested, after any merging (the merged group last, named
                  ``merged_name``); categories with no count in either period are left out.
    baseline / after: counts per category of ``categories``.
    expected_baseline / expected_after: expected counts under equal shares.
    test:         "Pearson's chi-square test of homogeneity" or "Fisher's exact test".
    statistic:    chi-square (None for Fisher's test, whose statistic is the odds ratio,
                  given in ``odds_ratio``).
    merged:       the original categories merged into one group so that the expected counts
                  met the rule, smallest first; empty when none were.
    expected_rule_met: whether the final table meets the expected-count rule (a 2 × 2 table
                  that does not is tested exactly instead).
    """

    categories: tuple[str, ...]
    baseline: tuple[int, ...]
    after: tuple[int, ...]
    baseline_share: tuple[float, ...]
    after_share: tuple[float, ...]
    expected_baseline: tuple[float, ...]
    expected_after: tuple[float, ...]
    test: str
    statistic: float | None
    df: int | None
    p_value: float
    odds_ratio: float | None
    merged: tuple[str, ...]
    merged_name: str | None
    expected_rule_met: bool
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class CapabilityChange:
    """Cpk before versus after: do the intervals overlap, and an approximate z-test.

    intervals_overlap: whether Bissell's 95% intervals of the two periods share any value.
    z / p_value:  the approximate z-test of the difference with Bissell's standard errors
                  (two-sided), None when a period has no Cpk.
    """

    cpk_before: float
    cpk_after: float
    change: float
    interval_before: tuple[float, float]
    interval_after: tuple[float, float]
    intervals_overlap: bool
    se_before: float
    se_after: float
    z: float
    p_value: float
    test: str
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class BusinessFigures:
    """The figures managers quote, with the model each one rests on.

    kind:        "defectives", "defects" or "measured".
    yield_:      the share of units expected or found good (0..1); how it was found is in
                 ``yield_model``.
    sigma_level: Φ⁻¹(yield) (+ 1.5 when ``shift_applied``), None when the yield is 0 or 1.
    Fields that do not apply to the kind are None.
    """

    kind: str
    units: float | None
    proportion_defective: float | None
    ppm: float | None
    first_pass_yield: float | None
    defects: float | None
    dpu: float | None
    opportunities_per_unit: float | None
    dpmo: float | None
    yield_: float
    yield_model: str
    sigma_level: float | None
    sigma_basis: str  # "units" or "opportunities": whose share bad the level is of
    shift_applied: bool
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class AfterSamplePlan:
    """How much after-change data a test needs to detect a given change.

    kind:            "continuous", "defectives" or "defects".
    test:            the test the plan is for, in words.
    baseline / target: the baseline figure and the value after the change to be detected
                     (means, proportions or rates).
    baseline_size:   the baseline's number of values, items or exposure (fixed).
    required_size:   the smallest after sample (values, items, exposure) reaching ``power``,
                     None when no after sample can (the baseline is too small).
    points:          required_size / size_per_point rounded up, None when not reachable.
    power_limit:     the power an unlimited after sample would give.
    """

    kind: str
    test: str
    alpha: float
    power: float
    baseline: float
    target: float
    baseline_size: float
    required_size: float | None
    size_per_point: float
    points: int | None
    achieved_power: float | None
    power_limit: float
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class PowerReached:
    """The power an after sample of a given size has to detect a given change."""

    kind: str
    test: str
    alpha: float
    baseline: float
    target: float
    baseline_size: float
    after_size: float
    power: float
    reached: bool  # power >= the wanted power
    wanted_power: float
