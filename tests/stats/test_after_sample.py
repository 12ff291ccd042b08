"""How long to collect after a change (docs/methods.md §16).

References: statsmodels' ``TTestIndPower`` (two-sample t test), ``power_proportions_2indep``
(two-proportion z-test, pooled under the null) and ``power_poisson_ratio_2indep``
(``method_var="alt"``, two-sided) for the power formulas; seeded simulations of the project's
own tests (Welch's t-test, the pooled z-test, the exact conditional Poisson test through
``scipy.stats.binomtest``) for the plans.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats as st

from steadyline.stats import StatsError, after_sample_needed, power_reached

sm_power = pytest.importorskip("statsmodels.stats.power")
from statsmodels.stats.proportion import power_proportions_2indep  # noqa: E402
from statsmodels.stats.rates import power_poisson_ratio_2indep  # noqa: E402


@pytest.mark.parametrize(
    ("d", "n1", "n2"), [(0.5, 40, 60), (0.3, 100, 37), (-0.8, 12, 12), (1.2, 5, 3)]
)
def test_t_power_against_statsmodels(d, n1, n2):
    ours = power_reached("continuous", 10.0, 10.0 + 2.0 * d, n1, n2, sd=2.0).power
    ref = sm_power.TTestIndPower().power(abs(d), n1, 0.05, ratio=n2 / n1)
    assert ours == pytest.approx(ref, rel=1e-9)


def test_t_plan_against_statsmodels_solve_power():
    plan = after_sample_needed("continuous", 50.0, 48.0, baseline_size=40, sd=4.0, size_per_point=5)
    ratio = sm_power.TTestIndPower().solve_power(0.5, nobs1=40, alpha=0.05, power=0.8, ratio=None)
    assert plan.required_size == math.ceil(ratio * 40)
    assert plan.points == math.ceil(plan.required_size / 5)
    assert plan.achieved_power >= 0.8
    assert power_reached("continuous", 50, 48, 40, plan.required_size - 1, sd=4.0).power < 0.8


@pytest.mark.parametrize(
    ("p1", "p2", "n1", "n2"),
    [(0.10, 0.05, 600, 400), (0.02, 0.04, 2000, 900), (0.3, 0.2, 150, 150)],
)
def test_proportion_power_against_statsmodels(p1, p2, n1, n2):
    ours = power_reached("defectives", p1, p2, n1, n2).power
    # statsmodels: group 1 is the after sample (prop1 = prop2 + diff), ratio = n2_sm / n1_sm
    ref = power_proportions_2indep(
        p2 - p1, p1, n2, ratio=n1 / n2, alpha=0.05, alternative="two-sided"
    ).power
    assert ours == pytest.approx(ref, rel=1e-9)


@pytest.mark.parametrize(
    ("r1", "r2", "e1", "e2"), [(0.5, 0.3, 200, 150), (2.0, 2.6, 40, 90), (0.01, 0.005, 5000, 3000)]
)
def test_poisson_power_against_statsmodels(r1, r2, e1, e2):
    ours = power_reached("defects", r1, r2, e1, e2).power
    ref = power_poisson_ratio_2indep(
        r2,
        r1,
        nobs1=e2,
        nobs_ratio=e1 / e2,
        exposure=1,
        value=1,
        alpha=0.05,
        alternative="two-sided",
        method_var="alt",
    )
    assert ours == pytest.approx(float(ref.power), rel=1e-9)


def test_plans_are_smallest_sizes():
    for kind, b, t, n1 in (("defectives", 0.08, 0.05, 1500), ("defects", 0.4, 0.25, 300)):
        plan = after_sample_needed(kind, b, t, n1, size_per_point=25)
        assert plan.achieved_power >= 0.8
        step = 1 if kind == "defectives" else 1e-6 * plan.required_size
        assert power_reached(kind, b, t, n1, plan.required_size - step).power < 0.8
        assert plan.points == math.ceil(plan.required_size / 25 - 1e-9)


def test_not_reachable_with_a_small_baseline():
    plan = after_sample_needed("continuous", 50.0, 49.0, 20, sd=4.0)
    assert plan.required_size is None and plan.points is None
    # the limit: d √n1 standardised, as the after sample grows without end
    nc = 0.25 * math.sqrt(20)
    assert plan.power_limit == pytest.approx(
        st.norm.cdf(nc - 1.959964) + st.norm.cdf(-nc - 1.959964), rel=1e-6
    )
    assert plan.power_limit < 0.8 and "unlimited" in plan.notes[0]
    # the power of a huge after sample approaches the limit
    big = power_reached("continuous", 50.0, 49.0, 20, 1e7, sd=4.0).power
    assert big == pytest.approx(plan.power_limit, abs=1e-4)


@pytest.mark.slow
def test_plans_hold_for_the_projects_own_tests_by_simulation():
    # seeded simulations: at the planned size the tests the comparison uses reject in about 80%
    rng = np.random.default_rng(2024)
    reps = 2000
    plan = after_sample_needed("continuous", 50.0, 48.0, 40, sd=4.0)
    b = rng.normal(50, 4, (reps, 40))
    a = rng.normal(48, 4, (reps, plan.required_size))
    p = st.ttest_ind(b, a, axis=1, equal_var=False).pvalue
    assert np.mean(p < 0.05) == pytest.approx(0.80, abs=0.03)

    plan = after_sample_needed("defectives", 0.10, 0.06, 800)
    n2 = plan.required_size
    d1, d2 = rng.binomial(800, 0.10, reps), rng.binomial(n2, 0.06, reps)
    pool = (d1 + d2) / (800 + n2)
    z = (d2 / n2 - d1 / 800) / np.sqrt(pool * (1 - pool) * (1 / 800 + 1 / n2))
    assert np.mean(2 * st.norm.sf(np.abs(z)) < 0.05) == pytest.approx(0.80, abs=0.03)

    plan = after_sample_needed("defects", 0.5, 0.35, 400)
    e2 = plan.required_size
    c1, c2 = rng.poisson(0.5 * 400, reps), rng.poisson(0.35 * e2, reps)
    share = e2 / (400 + e2)
    rejected = [
        st.binomtest(int(k), int(k + j), share).pvalue < 0.05 for j, k in zip(c1, c2, strict=True)
    ]
    assert np.mean(rejected) == pytest.approx(0.80, abs=0.04)


@pytest.mark.parametrize(
    ("call", "message"),
    [
        (lambda: after_sample_needed("ratio", 1, 2, 10), "kind of data"),
        (lambda: after_sample_needed("continuous", 1, 1, 10, sd=1), "must not be zero"),
        (lambda: after_sample_needed("continuous", 1, 2, 10), "standard deviation"),
        (lambda: after_sample_needed("defectives", 0, 0.2, 10), "between 0 and 1"),
        (lambda: after_sample_needed("defects", 0.2, -1, 10), "must be positive"),
        (lambda: after_sample_needed("defects", 0.2, 0.1, 10, power=1.0), "wanted power"),
        (lambda: after_sample_needed("defects", 0.2, 0.1, 10, size_per_point=0), "per point"),
        (lambda: power_reached("defects", 0.2, 0.1, 10, 0), "after size"),
    ],
)
def test_refusals(call, message):
    with pytest.raises(StatsError, match=message):
        call()
