"""Measurement system study (gauge repeatability and reproducibility) by analysis of variance.

A crossed study: every appraiser measures every part the same number of times (trials). The
two-way model with interaction (Montgomery, *Introduction to Statistical Quality Control*, §8.7;
AIAG, *Measurement Systems Analysis*, 4th ed., the ANOVA method; both from memory):

    y_ijk = μ + P_i + O_j + (PO)_ij + e_ijk,  p parts, o appraisers, r trials.

Sums of squares (ȳ the grand mean, ȳ_i.. part means, ȳ_.j. appraiser means, ȳ_ij. cell means):
    SS_P = o r Σ (ȳ_i.. − ȳ)²,  SS_O = p r Σ (ȳ_.j. − ȳ)²,
    SS_PO = r Σ (ȳ_ij. − ȳ_i.. − ȳ_.j. + ȳ)²,  SS_E = Σ (y_ijk − ȳ_ij.)²,
with p − 1, o − 1, (p − 1)(o − 1) and p o (r − 1) degrees of freedom. Parts and appraisers are
random effects, so the interaction is tested against repeatability (F = MS_PO / MS_E) and the
main effects against the interaction (F = MS_P / MS_PO, MS_O / MS_PO).

When the interaction's p-value is above 0.25 (AIAG's level, from memory) it is pooled into
repeatability: MS_pooled = (SS_PO + SS_E) / (df_PO + df_E), and the main effects are tested
against MS_pooled (the additive two-way model).

Variance components (expected mean squares of the random-effects model):
    with interaction:  σ²_repeat = MS_E,  σ²_PO = (MS_PO − MS_E) / r,
                       σ²_O = (MS_O − MS_PO) / (p r),  σ²_P = (MS_P − MS_PO) / (o r);
    pooled:            σ²_repeat = MS_pooled,  σ²_PO = 0,
                       σ²_O = (MS_O − MS_pooled) / (p r),  σ²_P = (MS_P − MS_pooled) / (o r).
A negative estimate is set to zero (the usual convention: a variance cannot be negative; a
note says so). Reproducibility = σ²_O + σ²_PO; measurement system = repeatability +
reproducibility; total = measurement system + part-to-part.

Shares: of the study variation 100 σ_x / σ_total (the ratio of sigmas, equal to the ratio of
6-sigma spreads); of the contribution 100 σ²_x / σ²_total; of the tolerance
100 · 6 σ_x / (USL − LSL) (6-sigma spread, AIAG 4th ed.; older texts used 5.15, from memory).
Number of distinct categories: floor(1.41 σ_P / σ_measurement system) (AIAG, from memory;
1.41 ≈ √2). Verdict on the measurement system's share (AIAG's guide, from memory): under 10%
"adequate", 10% to 30% "depends on use", over 30% "inadequate".

The p-values of the F tests come from ``scipy.stats.f`` (imported on first use: a study is not
on the common path of a site build).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from ._lazy import lazy
from .constants import d3_factor, d4_factor
from .results import StatsError
from .results_studies import AnovaRow, AppraiserRanges, GaugeStudy, VarianceComponent

_st = lazy("scipy.stats")

POOL_ABOVE = 0.25  # AIAG, from memory: pool the interaction when its p-value is above this
NDC_FACTOR = 1.41  # AIAG, from memory (≈ √2)
SPREAD = 6.0  # sigmas in the spread compared with the tolerance (AIAG 4th ed., from memory)
ADEQUATE_BELOW = 10.0  # percent, AIAG's guide (from memory)
INADEQUATE_ABOVE = 30.0
MIN_CATEGORIES = 5  # AIAG recommends at least 5 distinct categories (from memory)
VERDICTS = ("adequate", "depends on use", "inadequate")


def verdict_for(percent: float) -> str:
    """The plain verdict for a measurement system's share of the variation or tolerance.

    >>> verdict_for(8.0), verdict_for(10.0), verdict_for(30.0), verdict_for(31.0)
    ('adequate', 'depends on use', 'depends on use', 'inadequate')
    """
    if percent < ADEQUATE_BELOW:
        return "adequate"
    if percent <= INADEQUATE_ABOVE:
        return "depends on use"
    return "inadequate"


def _cube(values, parts, appraisers) -> tuple[np.ndarray, tuple, tuple]:
    """The measurements as a parts × appraisers × trials array, refusing unbalanced designs."""
    y = np.asarray(values, dtype=float)
    if y.ndim != 1:
        raise StatsError("a measurement study needs one-dimensional sequences of values")
    if not (len(parts) == len(appraisers) == len(y)):
        raise StatsError(
            f"a measurement study needs one part and one appraiser per value, got "
            f"{len(y)} values, {len(parts)} parts and {len(appraisers)} appraisers"
        )
    if np.isnan(y).any():
        raise StatsError(
            f"a measurement study needs every measurement; {int(np.isnan(y).sum())} "
            "value(s) are missing"
        )
    if np.isinf(y).any():
        raise StatsError("a measurement study needs finite values, got an infinite value")
    part_names = tuple(dict.fromkeys(parts))
    appr_names = tuple(dict.fromkeys(appraisers))
    if len(part_names) < 2:
        raise StatsError(f"a measurement study needs at least two parts, got {len(part_names)}")
    if len(appr_names) < 2:
        raise StatsError(
            f"a measurement study needs at least two appraisers, got {len(appr_names)} "
            "(reproducibility cannot be estimated from one)"
        )
    pi = {name: i for i, name in enumerate(part_names)}
    oj = {name: j for j, name in enumerate(appr_names)}
    cells: list[list[list[float]]] = [[[] for _ in appr_names] for _ in part_names]
    for v, p, o in zip(y.tolist(), parts, appraisers, strict=True):
        cells[pi[p]][oj[o]].append(v)
    counts = {(p, o): len(cells[pi[p]][oj[o]]) for p in part_names for o in appr_names}
    empty = [k for k, n in counts.items() if n == 0]
    if empty:
        p, o = empty[0]
        raise StatsError(
            f"a measurement study needs every appraiser to measure every part; part {p!r} "
            f"has no measurement by appraiser {o!r} ({len(empty)} empty cell(s))"
        )
    trials = set(counts.values())
    if len(trials) > 1:
        (p, o), n = min(counts.items(), key=lambda kv: kv[1])
        raise StatsError(
            "a measurement study needs the same number of trials in every cell (a balanced "
            f"study); they range from {min(trials)} to {max(trials)} (part {p!r}, appraiser "
            f"{o!r} has {n})"
        )
    r = trials.pop()
    if r < 2:
        raise StatsError(
            "a measurement study needs at least two trials per part and appraiser, got 1 "
            "(repeatability cannot be estimated from one)"
        )
    return np.array(cells, dtype=float), part_names, appr_names


def _row(source: str, df: int, ss: float, f: float | None, dfn: int, dfd: int) -> AnovaRow:
    ms = ss / df
    p = None if f is None else float(_st.f.sf(f, dfn, dfd))
    return AnovaRow(source, df, float(ss), float(ms), None if f is None else float(f), p)


def _ratio(num: float, den: float) -> float:
    return math.inf if den == 0 else num / den


def gauge_study(
    values: Sequence[float] | np.ndarray,
    parts: Sequence,
    appraisers: Sequence,
    lsl: float | None = None,
    usl: float | None = None,
    pool_above: float = POOL_ABOVE,
) -> GaugeStudy:
    """A crossed measurement system study by the ANOVA method (see the module's text).

    ``values``, ``parts`` and ``appraisers`` are parallel sequences, one entry per measurement
    (long format, any order); every appraiser must measure every part the same number of times.
    With both ``lsl`` and ``usl`` the shares of the tolerance are given too.

    Source: AIAG, *Measurement Systems Analysis*, 4th ed., ANOVA method; Montgomery,
    *Introduction to Statistical Quality Control*, §8.7 (both from memory).

    >>> values = [10.1, 10.2, 10.0, 10.1, 12.0, 12.1, 12.2, 12.1, 11.0, 11.1, 11.2, 11.0]
    >>> parts = ["a"] * 4 + ["b"] * 4 + ["c"] * 4
    >>> appraisers = ["x", "x", "y", "y"] * 3
    >>> study = gauge_study(values, parts, appraisers)
    >>> study.interaction_pooled, study.distinct_categories, study.verdict
    (True, 15, 'adequate')
    >>> round(study.component("measurement system").study_percent, 2)
    9.1
    """
    # One function from the readings to the verdict, on purpose: it follows the ANOVA method's
    # table line by line (sums of squares, mean squares, the interaction test and its pooling,
    # variance components, shares, distinct categories), so that it reads against the published
    # worked example, and each line uses several figures of the lines above it.
    y, part_names, appr_names = _cube(values, parts, appraisers)
    p, o, r = y.shape
    grand = float(y.mean())
    if float(np.max(np.abs(y - grand))) == 0.0:
        raise StatsError("a measurement study needs variation: every measurement is the same")
    part_mean = y.mean(axis=(1, 2))
    appr_mean = y.mean(axis=(0, 2))
    cell = y.mean(axis=2)
    ss_p = o * r * float(((part_mean - grand) ** 2).sum())
    ss_o = p * r * float(((appr_mean - grand) ** 2).sum())
    ss_po = r * float(((cell - part_mean[:, None] - appr_mean[None, :] + grand) ** 2).sum())
    ss_e = float(((y - cell[..., None]) ** 2).sum())
    df_p, df_o, df_po, df_e = p - 1, o - 1, (p - 1) * (o - 1), p * o * (r - 1)
    ms_p, ms_o, ms_po, ms_e = ss_p / df_p, ss_o / df_o, ss_po / df_po, ss_e / df_e
    if ms_e == 0.0:
        raise StatsError(
            "a measurement study needs repeated trials that differ: every appraiser got the "
            "same value on every trial of each part, so repeatability cannot be estimated "
            "(the readings may be rounded too coarsely)"
        )

    f_po = ms_po / ms_e
    anova = (
        _row("part", df_p, ss_p, _ratio(ms_p, ms_po), df_p, df_po),
        _row("appraiser", df_o, ss_o, _ratio(ms_o, ms_po), df_o, df_po),
        _row("part × appraiser", df_po, ss_po, f_po, df_po, df_e),
        _row("repeatability", df_e, ss_e, None, 0, 0),
    )
    p_interaction = float(anova[2].p_value or 0.0)  # always set on the interaction line
    pooled = p_interaction > pool_above
    notes: list[str] = []
    reduced = None
    if pooled:
        df_pool = df_po + df_e
        ms_pool = (ss_po + ss_e) / df_pool
        reduced = (
            _row("part", df_p, ss_p, ms_p / ms_pool, df_p, df_pool),
            _row("appraiser", df_o, ss_o, ms_o / ms_pool, df_o, df_pool),
            _row("repeatability", df_pool, ss_po + ss_e, None, 0, 0),
        )
        v_repeat, v_po = ms_pool, 0.0
        v_o = (ms_o - ms_pool) / (p * r)
        v_p = (ms_p - ms_pool) / (o * r)
        notes.append(
            f"The part × appraiser interaction is not significant (p = {p_interaction:.3g}, "
            f"above {pool_above:g}), so it is pooled into repeatability."
        )
    else:
        v_repeat = ms_e
        v_po = (ms_po - ms_e) / r
        v_o = (ms_o - ms_po) / (p * r)
        v_p = (ms_p - ms_po) / (o * r)
        notes.append(
            f"The part × appraiser interaction is significant (p = {p_interaction:.3g}, not "
            f"above {pool_above:g}), so it is kept as part of reproducibility."
        )
    for name, v in (("appraiser", v_o), ("part × appraiser", v_po), ("part-to-part", v_p)):
        if v < 0:
            notes.append(
                f"The {name} variance was estimated below zero ({v:.3g}) and is set to zero."
            )
    v_o, v_po, v_p = max(v_o, 0.0), max(v_po, 0.0), max(v_p, 0.0)
    v_repro = v_o + v_po
    v_ms = v_repeat + v_repro
    v_total = v_ms + v_p

    if lsl is not None and usl is not None:
        if not (math.isfinite(lsl) and math.isfinite(usl) and lsl < usl):
            raise StatsError(f"the LSL ({lsl:g}) must be a finite number below the USL ({usl:g})")
        tolerance: float | None = float(usl) - float(lsl)
    else:
        tolerance = None
        if lsl is not None or usl is not None:
            notes.append("Shares of the tolerance need both specification limits.")
    sd_total = math.sqrt(v_total)

    def component(source: str, v: float) -> VarianceComponent:
        s = math.sqrt(v)
        return VarianceComponent(
            source=source,
            variance=float(v),
            sigma=s,
            study_percent=100.0 * s / sd_total,
            contribution_percent=100.0 * v / v_total,
            tolerance_percent=None if tolerance is None else 100.0 * SPREAD * s / tolerance,
        )

    components = (
        component("repeatability", v_repeat),
        component("reproducibility", v_repro),
        component("appraiser", v_o),
        component("part × appraiser", v_po),
        component("measurement system", v_ms),
        component("part-to-part", v_p),
        component("total", v_total),
    )
    ndc = int(math.floor(NDC_FACTOR * math.sqrt(v_p) / math.sqrt(v_ms)))
    if ndc < MIN_CATEGORIES:
        notes.append(
            f"The study separates the parts into {ndc} distinct categories; at least "
            f"{MIN_CATEGORIES} are recommended (AIAG, from memory)."
        )
    ms_share = components[4]
    return GaugeStudy(
        parts=p,
        appraisers=o,
        trials=r,
        anova=anova,
        interaction_p_value=p_interaction,
        pool_above=float(pool_above),
        interaction_pooled=pooled,
        reduced_anova=reduced,
        components=components,
        distinct_categories=ndc,
        verdict=verdict_for(ms_share.study_percent),
        tolerance_verdict=(
            None if ms_share.tolerance_percent is None else verdict_for(ms_share.tolerance_percent)
        ),
        lsl=None if lsl is None else float(lsl),
        usl=None if usl is None else float(usl),
        notes=tuple(notes),
    )


def appraiser_ranges(
    values: Sequence[float] | np.ndarray, parts: Sequence, appraisers: Sequence
) -> tuple[AppraiserRanges, ...]:
    """The range chart of each appraiser of a crossed study: each part's range over its trials,
    the appraiser's average range R̄ as centre line and D3·R̄, D4·R̄ as limits (the factors of
    the R chart for subgroups of the number of trials; Montgomery, *Introduction to SQC*, §6.2
    and Appendix VI). A range above its upper limit says that appraiser's trials of that part
    disagree more than the rest: a reading or recording slip, or a part hard to measure.

    The study must be balanced (as :func:`gauge_study` requires), so every range spans the same
    number of trials.

    >>> r = appraiser_ranges([1.0, 1.2, 2.0, 2.1, 1.1, 1.1, 2.3, 2.0],
    ...                      ["a", "a", "b", "b"] * 2, ["x"] * 4 + ["y"] * 4)
    >>> [round(x, 2) for x in r[0].ranges], round(r[0].centre, 2), round(r[0].upper, 3)
    ([0.2, 0.1], 0.15, 0.49)
    """
    y, part_names, appr_names = _cube(values, parts, appraisers)
    r = y.shape[2]
    ranges = y.max(axis=2) - y.min(axis=2)  # parts × appraisers
    out = []
    for j, name in enumerate(appr_names):
        col = ranges[:, j]
        centre = float(col.mean())
        upper, lower = d4_factor(r) * centre, d3_factor(r) * centre
        beyond = tuple(int(i) for i in np.flatnonzero(col > upper * (1 + 1e-12)))
        out.append(
            AppraiserRanges(
                str(name),
                tuple(str(p) for p in part_names),
                tuple(float(x) for x in col),
                centre,
                float(upper),
                float(lower),
                beyond,
            )
        )
    return tuple(out)
