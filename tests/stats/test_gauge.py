"""Measurement system study by ANOVA (docs/methods.md §12).

References: statsmodels' two-way ANOVA (``ols`` + ``anova_lm``) for sums of squares, mean squares,
F and p; Montgomery, *Introduction to Statistical Quality Control*, §8.7, the 20 parts × 3
operators × 2 trials gauge study (data and printed ANOVA from memory, their agreement checked
here); seeded simulations for the variance components.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from steadyline.stats import StatsError, gauge_study
from steadyline.stats.gauge import verdict_for

# Montgomery, Introduction to SQC, §8.7 gauge study (from memory): per part, operator 1 trials
# 1-2, operator 2 trials 1-2, operator 3 trials 1-2
MONTGOMERY = """21 20 20 20 19 21
24 23 24 24 23 24
20 21 19 21 20 22
27 27 28 26 27 28
19 18 19 18 18 21
23 21 24 21 23 22
22 21 22 24 22 20
19 17 18 20 19 18
24 23 25 23 24 24
25 23 26 25 24 25
21 20 20 20 21 20
18 19 17 19 18 19
23 25 25 25 25 25
24 24 23 25 24 25
29 30 30 28 31 30
26 26 25 26 25 27
20 20 19 20 20 20
19 21 19 19 21 23
25 26 25 24 25 25
19 19 18 17 19 17"""


def long_form(cube: np.ndarray):
    values, parts, appraisers = [], [], []
    for i, j, k in np.ndindex(*cube.shape):
        values.append(float(cube[i, j, k]))
        parts.append(f"p{i}")
        appraisers.append(f"o{j}")
    return values, parts, appraisers


def montgomery_cube() -> np.ndarray:
    rows = [[float(v) for v in line.split()] for line in MONTGOMERY.splitlines()]
    return np.array(rows).reshape(20, 3, 2)


def simulate(
    rng, parts=10, appraisers=3, trials=3, sd_part=2.0, sd_appr=0.0, sd_inter=0.0, sd_rep=0.5
):
    return (
        rng.normal(0, sd_part, (parts, 1, 1))
        + rng.normal(0, sd_appr, (1, appraisers, 1))
        + rng.normal(0, sd_inter, (parts, appraisers, 1))
        + rng.normal(0, sd_rep, (parts, appraisers, trials))
        + 50.0
    )


def statsmodels_tables(cube):
    pd = pytest.importorskip("pandas")
    smf = pytest.importorskip("statsmodels.formula.api")
    from statsmodels.stats.anova import anova_lm

    values, parts, appraisers = long_form(cube)
    df = pd.DataFrame({"y": values, "part": parts, "appr": appraisers})
    full = anova_lm(smf.ols("y ~ C(part) * C(appr)", df).fit(), typ=2)
    additive = anova_lm(smf.ols("y ~ C(part) + C(appr)", df).fit(), typ=2)
    return full, additive


def test_montgomery_printed_anova_from_memory():
    # Montgomery §8.7 (from memory): SS 1185.425, 2.617, 27.050, 59.500; MS 62.39, 1.31, 0.71,
    # 0.99; interaction not significant (F 0.72, p 0.86), so the reduced model is used:
    # repeatability 0.88, operator 0.0108 (about 0.01), part 10.25; gauge variance 0.88 + 0.0108
    study = gauge_study(*long_form(montgomery_cube()), lsl=5, usl=60)
    ss = [row.sum_of_squares for row in study.anova]
    assert ss == pytest.approx([1185.425, 2.6167, 27.05, 59.5], abs=5e-4)
    assert [row.mean_square for row in study.anova] == pytest.approx(
        [62.39, 1.31, 0.71, 0.99], abs=0.005
    )
    assert study.anova[2].f == pytest.approx(0.7178, abs=1e-3)
    assert study.interaction_pooled
    assert study.component("repeatability").variance == pytest.approx(0.88, abs=0.005)
    assert study.component("appraiser").variance == pytest.approx(0.0108, abs=5e-4)
    assert study.component("part-to-part").variance == pytest.approx(10.25, abs=0.005)
    assert study.component("measurement system").variance == pytest.approx(0.8908, abs=0.005)
    # P/T = 6 σ_gauge / (USL − LSL) ≈ 0.10 with USL 60, LSL 5 (Montgomery, from memory)
    assert study.component("measurement system").tolerance_percent == pytest.approx(10.3, abs=0.1)
    assert study.component("measurement system").tolerance_percent == pytest.approx(
        100 * 6 * math.sqrt(0.8832 + 0.0106) / 55, abs=0.01
    )
    # the shares by their definitions
    ms = study.component("measurement system")
    total = study.component("total")
    assert ms.study_percent == pytest.approx(100 * ms.sigma / total.sigma)
    assert ms.contribution_percent == pytest.approx(100 * ms.variance / total.variance)
    assert study.distinct_categories == math.floor(
        1.41 * study.component("part-to-part").sigma / ms.sigma
    )
    assert study.distinct_categories == 4


def test_montgomery_against_statsmodels():
    cube = montgomery_cube()
    study = gauge_study(*long_form(cube))
    full, additive = statsmodels_tables(cube)
    ours = {row.source: row for row in study.anova}
    names = {
        "part": "C(part)",
        "appraiser": "C(appr)",
        "part × appraiser": "C(part):C(appr)",
        "repeatability": "Residual",
    }
    for source, sm in names.items():
        assert ours[source].df == full.loc[sm, "df"]
        assert ours[source].sum_of_squares == pytest.approx(full.loc[sm, "sum_sq"], rel=1e-10)
    # the interaction is tested against repeatability, as statsmodels does for every term
    assert ours["part × appraiser"].f == pytest.approx(full.loc["C(part):C(appr)", "F"])
    assert ours["part × appraiser"].p_value == pytest.approx(
        full.loc["C(part):C(appr)", "PR(>F)"], rel=1e-8
    )
    # pooled: the additive model's residual is the pooled error, and its F tests are ours
    reduced = {row.source: row for row in study.reduced_anova}
    assert reduced["repeatability"].mean_square == pytest.approx(
        additive.loc["Residual", "sum_sq"] / additive.loc["Residual", "df"]
    )
    for source in ("part", "appraiser"):
        sm = names[source]
        assert reduced[source].f == pytest.approx(additive.loc[sm, "F"], rel=1e-10)
        assert reduced[source].p_value == pytest.approx(additive.loc[sm, "PR(>F)"], rel=1e-8)


def test_interaction_kept_against_statsmodels():
    # seeded data with a strong part × appraiser interaction: not pooled; main effects are
    # tested against the interaction (random effects), i.e. statsmodels' F × MS_E / MS_PO
    cube = simulate(np.random.default_rng(7), sd_inter=1.5)
    study = gauge_study(*long_form(cube))
    full, _ = statsmodels_tables(cube)
    assert not study.interaction_pooled and study.reduced_anova is None
    ms_e = full.loc["Residual", "sum_sq"] / full.loc["Residual", "df"]
    ms_po = full.loc["C(part):C(appr)", "sum_sq"] / full.loc["C(part):C(appr)", "df"]
    assert study.anova[0].f == pytest.approx(full.loc["C(part)", "F"] * ms_e / ms_po)
    assert study.anova[1].f == pytest.approx(full.loc["C(appr)", "F"] * ms_e / ms_po)
    # components from the expected mean squares
    p, o, r = cube.shape
    assert study.component("part × appraiser").variance == pytest.approx((ms_po - ms_e) / r)
    assert study.component("repeatability").variance == pytest.approx(ms_e)
    repro = study.component("reproducibility").variance
    assert repro == pytest.approx(
        study.component("appraiser").variance + study.component("part × appraiser").variance
    )


def test_no_appraiser_effect_gives_small_reproducibility():
    # seeded simulations: with no appraiser effect the reproducibility is near zero, with a
    # large one it is large and close to the appraiser variance simulated
    small, large = [], []
    for seed in range(20):
        rng = np.random.default_rng(seed)
        small.append(gauge_study(*long_form(simulate(rng))).component("reproducibility"))
        large.append(
            gauge_study(*long_form(simulate(rng, sd_appr=3.0))).component("reproducibility")
        )
    assert np.median([c.sigma for c in small]) < 0.15
    assert max(c.sigma for c in small) < 0.3
    assert np.median([c.sigma for c in large]) > 1.5
    assert np.median([c.study_percent for c in large]) > 50
    assert np.median([c.study_percent for c in small]) < 5


def test_negative_estimates_set_to_zero():
    # appraisers with identical means: MS_O = 0 < MS_pooled, the estimate is negative
    cube = simulate(np.random.default_rng(3))
    cube -= cube.mean(axis=(0, 2), keepdims=True)
    study = gauge_study(*long_form(cube))
    assert study.component("appraiser").variance == 0.0
    assert any("below zero" in note for note in study.notes)


def test_verdict_bands():
    assert [verdict_for(x) for x in (0, 9.99, 10, 29.9, 30, 30.01)] == [
        "adequate",
        "adequate",
        "depends on use",
        "depends on use",
        "depends on use",
        "inadequate",
    ]


def without_cell(values, parts, appraisers, part, appraiser):
    keep = [
        i for i, key in enumerate(zip(parts, appraisers, strict=True)) if key != (part, appraiser)
    ]
    return ([values[i] for i in keep], [parts[i] for i in keep], [appraisers[i] for i in keep])


@pytest.mark.parametrize(
    ("edit", "message"),
    [
        (lambda v, p, a: (v[:-1], p[:-1], a[:-1]), "same number of trials"),
        (lambda v, p, a: without_cell(v, p, a, "p1", "o1"), "no measurement by appraiser"),
        (lambda v, p, a: (v[:1] + [float("nan")] + v[2:], p, a), "missing"),
        (lambda v, p, a: (v, p, ["o0"] * len(a)), "at least two appraisers"),
        (lambda v, p, a: (v, ["p0"] * len(p), a), "at least two parts"),
        (lambda v, p, a: (v[::2], p[::2], a[::2]), "at least two trials"),
        (lambda v, p, a: ([1.0] * len(v), p, a), "every measurement is the same"),
    ],
)
def test_refusals(edit, message):
    values, parts, appraisers = long_form(
        simulate(np.random.default_rng(1), parts=3, appraisers=2, trials=2)
    )
    with pytest.raises(StatsError, match=message):
        gauge_study(*edit(values, parts, appraisers))


def test_refuses_trials_that_never_differ():
    cube = np.repeat(simulate(np.random.default_rng(2), trials=1), 2, axis=2)
    with pytest.raises(StatsError, match="repeatability cannot be estimated"):
        gauge_study(*long_form(cube))
