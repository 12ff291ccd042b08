"""Before/after comparison checked against scipy and statsmodels."""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from scipy import stats
from statsmodels.stats.proportion import proportions_ztest
from statsmodels.stats.rates import test_poisson_2indep as sm_poisson_2indep

from steadyline.stats.compare import compare, format_p_value, welch_t_test
from steadyline.stats.results import StatsError


def test_welch_when_normal():
    rng = np.random.default_rng(11)
    b, a = rng.normal(10, 1, 40), rng.normal(9.4, 1.5, 35)
    c = compare(b, a, "continuous", "lower")
    # reference: scipy.stats.ttest_ind(equal_var=False)
    ref = stats.ttest_ind(a, b, equal_var=False)
    assert c.test == "Welch's t-test" and c.measure == "mean"
    assert c.statistic == pytest.approx(ref.statistic)
    assert c.p_value == pytest.approx(ref.pvalue)
    assert c.baseline == pytest.approx(b.mean()) and c.after == pytest.approx(a.mean())
    assert c.improved is True
    assert (c.n_baseline, c.n_after) == (40, 35)


def _welch_cases():
    rng = np.random.default_rng(2024)
    for _ in range(400):
        na, nb = (int(v) for v in rng.integers(2, 400, 2))
        if rng.random() < 0.2:
            na, nb = int(rng.integers(2, 6)), int(rng.integers(2, 6))
        scale_a, scale_b = 10.0 ** rng.uniform(-4, 4, 2)
        a = rng.normal(rng.normal(0, 3), scale_a, na)
        b = rng.normal(rng.normal(0, 3), scale_b, nb)
        if rng.random() < 0.3:
            a, b = np.round(a, 1), np.round(b, 1)
        yield a, b
    yield np.array([1.0, 1.0, 1.0]), np.array([2.0, 2.5, 3.5])  # one period without spread
    yield np.array([0.0, 1e-6]), np.array([1e6, 1e6 + 1e-6, 1e6 + 2e-6])  # |t| ~ 1e12
    yield np.arange(5000.0), np.arange(5000.0) + 1.0  # large df, tiny t
    yield (
        np.random.default_rng(3).normal(0, 1, 20000),
        np.random.default_rng(4).normal(0.05, 2, 30000),
    )


def test_welch_t_test_against_scipy_ttest_ind():
    # reference: scipy.stats.ttest_ind(a, b, equal_var=False) -- statistic, df and two-sided p
    # (p compared relatively down to 1e-300; below that both must be negligible)
    checked = 0
    for a, b in _welch_cases():
        if np.std(a) == 0 and np.std(b) == 0:
            continue
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)  # scipy's precision-loss notice
            ref = stats.ttest_ind(a, b, equal_var=False)
        t, p, df = welch_t_test(a, b)
        assert t == pytest.approx(ref.statistic, rel=1e-12)
        assert df == pytest.approx(ref.df, rel=1e-12)
        if ref.pvalue > 1e-300:
            assert p == pytest.approx(ref.pvalue, rel=1e-10), (len(a), len(b), t, df)
            checked += 1
        else:
            assert p < 1e-290
    assert checked > 350


def test_mann_whitney_when_small_and_skewed():
    rng = np.random.default_rng(5)
    b = np.concatenate([rng.exponential(1, 10), [15.0]])
    a = rng.exponential(0.5, 12)
    c = compare(b, a, "continuous", "lower")
    # reference: scipy.stats.mannwhitneyu
    ref = stats.mannwhitneyu(a, b, alternative="two-sided")
    assert c.test == "Mann–Whitney U test" and c.measure == "median"
    assert c.statistic == pytest.approx(ref.statistic)
    assert c.p_value == pytest.approx(ref.pvalue)
    assert c.baseline == pytest.approx(np.median(b))


def test_mann_whitney_when_too_few_to_check_normality():
    c = compare([1, 2, 3, 4], [2, 3, 4, 5, 6], "continuous", "higher")
    assert c.test == "Mann–Whitney U test"
    assert c.improved is True


def test_two_proportion_z_test():
    d_b, n_b = [41, 39, 43], [1000, 1000, 1000]
    d_a, n_a = [19, 20, 18], [1000, 1000, 1000]
    c = compare(
        d_b,
        d_a,
        "defectives",
        "lower",
        baseline_sizes=n_b,
        after_sizes=n_a,
        metric="weekly error rate",
    )
    # reference: statsmodels.stats.proportion.proportions_ztest (pooled); our sign is after-baseline
    z, p = proportions_ztest([123, 57], [3000, 3000])
    assert c.statistic == pytest.approx(-z)
    assert c.p_value == pytest.approx(p)
    assert c.baseline == pytest.approx(0.041) and c.after == pytest.approx(0.019)
    assert c.percent_change == pytest.approx(-53.658536, rel=1e-6)
    assert c.sentence == (
        "The weekly error rate fell from 4.1% to 1.9% (\u22122.2 percentage points, \u221254% "
        "relative); a change this large would be "
        "unlikely by chance alone (two-proportion z-test, p < 0.001)."
    )


@pytest.mark.filterwarnings("ignore:divide by zero:RuntimeWarning")
@pytest.mark.parametrize(
    "cb,eb,ca,ea",
    [(26, 40, 9, 30), (3, 10, 7, 12), (120, 50, 95, 50), (0, 5, 4, 5)],
)
def test_poisson_rate_exact(cb, eb, ca, ea):
    c = compare([cb], [ca], "defects", "lower", baseline_sizes=[eb], after_sizes=[ea])
    # reference: statsmodels.stats.rates.test_poisson_2indep, exact conditional test
    ref = sm_poisson_2indep(ca, ea, cb, eb, method="exact-cond")
    assert c.p_value == pytest.approx(ref.pvalue, rel=1e-9)
    assert c.baseline == pytest.approx(cb / eb) and c.after == pytest.approx(ca / ea)


def test_poisson_default_exposure_one():
    c = compare([5, 7, 6, 8], [3, 2, 4], "defects", "lower")
    ref = sm_poisson_2indep(9, 3, 26, 4, method="exact-cond")
    assert c.p_value == pytest.approx(ref.pvalue, rel=1e-9)


def test_target_direction():
    c = compare(
        [9, 12, 8, 13, 10, 11, 9, 12, 10, 11],
        [10, 10.5, 9.5, 10, 10.2, 9.8, 10, 10.1],
        "continuous",
        "target",
        target=10.5,
    )
    assert c.improved == (abs(c.after - 10.5) < abs(c.baseline - 10.5))
    none = compare([1, 2, 3], [2, 3, 4], "continuous", "target")
    assert none.improved is None


def test_no_test_when_no_variation():
    c = compare(
        [0, 0], [0, 0], "defectives", "lower", baseline_sizes=[10, 10], after_sizes=[10, 10]
    )
    assert c.p_value is None and c.statistic is None
    assert "did not change" in c.sentence
    assert c.percent_change is None


def test_format_p_value():
    assert format_p_value(0.0004) == "p < 0.001"
    assert format_p_value(0.0049) == "p = 0.005"
    assert format_p_value(0.0498) == "p = 0.050"
    assert format_p_value(0.234) == "p = 0.23"
    assert format_p_value(0.999) == "p > 0.99"
    assert format_p_value(None) == "no p-value"


def test_sentence_for_not_significant_rise():
    c = compare(
        [10, 11, 9, 10, 12, 8, 10, 11, 9, 10],
        [10, 12, 9, 11, 12, 9, 10, 11, 10, 11],
        "continuous",
        "lower",
        metric="cycle time",
        unit="min",
    )
    assert c.sentence.startswith("The cycle time rose from 10 min to 10.5 min (+5%)")
    assert "could well be due to chance alone" in c.sentence


def test_errors():
    with pytest.raises(StatsError):
        compare([1], [2, 3], "continuous", "lower")
    with pytest.raises(StatsError):
        compare([1, 2], [2, 3], "ratio", "lower")
    with pytest.raises(StatsError):
        compare([1, 2], [2, 3], "continuous", "better")
    with pytest.raises(StatsError):
        compare([1], [2], "defectives", "lower")
    with pytest.raises(StatsError):
        compare([11], [2], "defectives", "lower", baseline_sizes=[10], after_sizes=[10])
