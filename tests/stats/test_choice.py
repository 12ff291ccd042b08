"""Chart choice: the usual selection guide (Montgomery; NIST/SEMATECH e-Handbook 6.3; ASTM
E2587 -- from memory) and the overdispersion check for Laney charts (Laney 2002, from memory).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from steadyline.stats import choice as CH
from steadyline.stats.control.kinds import CHART_FUNCTIONS
from steadyline.stats.control.rates import laney_p
from steadyline.stats.results import StatsError


def test_continuous_choices():
    c = CH.choose_chart("continuous")
    assert c.kind == "xmr" and "single measured values" in c.reason and not c.overridden
    assert CH.choose_chart("continuous", subgroup_sizes=[1, 1, 1]).kind == "xmr"
    assert CH.choose_chart("continuous", subgroup_sizes=[2] * 5).kind == "xbar-r"
    assert CH.choose_chart("continuous", subgroup_sizes=[10] * 5).kind == "xbar-r"
    big = CH.choose_chart("continuous", subgroup_sizes=[11] * 5)
    assert big.kind == "xbar-s" and "more than 10" in big.reason
    mixed = CH.choose_chart("continuous", subgroup_sizes=[4, 5, 4])
    assert mixed.kind == "xbar-s" and "unequal" in mixed.reason


def test_attribute_choices():
    assert CH.choose_chart("defectives", sizes=[50, 50, 50]).kind == "np"
    p = CH.choose_chart("defectives", sizes=[50, 60, 50])
    assert p.kind == "p" and p.reason == (
        "defectives out of a varying number checked: p chart with stepped limits"
    )
    assert CH.choose_chart("defects").kind == "c"
    assert CH.choose_chart("defects", sizes=[2.0, 2.0]).kind == "c"
    assert CH.choose_chart("defects", sizes=[2.0, 3.5]).kind == "u"
    with pytest.raises(StatsError, match="number checked"):
        CH.choose_chart("defectives")
    with pytest.raises(StatsError, match="data_type"):
        CH.choose_chart("ratings")


def test_reasons_are_one_sentence():
    for c in (
        CH.choose_chart("continuous"),
        CH.choose_chart("continuous", subgroup_sizes=[5, 5]),
        CH.choose_chart("defectives", sizes=[5, 6]),
        CH.choose_chart("defects", sizes=[1, 2]),
    ):
        assert c.reason and ". " not in c.reason and "\n" not in c.reason


def test_overrides():
    c = CH.choose_chart("continuous", subgroup_sizes=[5, 5], override="xbar-s")
    assert c.kind == "xbar-s" and c.overridden and "Xbar-R chart" in c.reason
    assert not CH.choose_chart("continuous", override="xmr").overridden
    assert CH.choose_chart("defectives", sizes=[5, 6], override="laney-p").kind == "laney-p"
    with pytest.raises(StatsError, match="does not fit defectives"):
        CH.choose_chart("defectives", sizes=[5, 6], override="xbar-r")
    with pytest.raises(StatsError, match="does not fit"):
        CH.choose_chart("defectives", sizes=[5, 6], override="np")  # varying n
    with pytest.raises(StatsError, match="does not fit"):
        CH.choose_chart("defects", sizes=[1, 2], override="c")
    with pytest.raises(StatsError, match="does not fit single measured values"):
        CH.choose_chart("continuous", override="p")
    with pytest.raises(StatsError, match="unknown chart kind"):
        CH.choose_chart("continuous", override="fancy")
    assert set(CH.CHART_KINDS) == set(CHART_FUNCTIONS)


@pytest.mark.parametrize("m", [10, 25, 60])
def test_sigma_z_sd_against_simulation(m):
    # reference: numpy simulation of m independent N(0,1) z-scores
    rng = np.random.default_rng(m)
    z = rng.standard_normal((20000, m))
    sz = np.mean(np.abs(np.diff(z, axis=1)), axis=1) / (2 / np.sqrt(np.pi))
    assert sz.mean() == pytest.approx(1.0, abs=0.01)
    assert CH.sigma_z_sd(m) == pytest.approx(sz.std(), rel=0.03)


def test_bound_false_alarm_rate_on_binomial_data():
    # reference: scipy.stats.binom draws of a stable process -- the 95% bound should be
    # exceeded about 5% of the time (estimating p-bar makes it slightly rarer)
    rng = np.random.default_rng(5)
    m, trials = 25, 2000
    n = rng.integers(1500, 3000, size=m)
    bound = CH.sigma_z_bound(m)
    exceed = 0
    for _ in range(trials):
        d = stats.binom.rvs(n, 0.03, random_state=rng)
        exceed += CH.sigma_z_of(d, n) > bound
    assert 0.02 <= exceed / trials <= 0.08


def test_sigma_z_of_matches_laney_chart():
    d = [12, 15, 8, 22, 18, 10, 14, 25, 9, 16]
    n = [400, 420, 380, 450, 410, 390, 400, 460, 370, 420]
    assert CH.sigma_z_of(d, n) == pytest.approx(laney_p(d, n).extras["sigma_z"])


def test_overdispersed_large_subgroups_choose_laney():
    rng = np.random.default_rng(8)
    n = rng.integers(4000, 6000, size=30)
    p = rng.normal(0.05, 0.006, size=30)  # the true rate drifts between subgroups
    d = stats.binom.rvs(n, p, random_state=rng)
    c = CH.choose_chart("defectives", sizes=n, counts=d)
    assert c.kind == "laney-p" and "sigma_z" in c.reason
    # a stable binomial process with the same sizes keeps the p chart (fixed seed: by design a
    # stable process exceeds the 95% bound in 5% of samples, see the false-alarm test above)
    d2 = stats.binom.rvs(n, 0.05, random_state=rng)
    c2 = CH.choose_chart("defectives", sizes=n, counts=d2)
    assert c2.kind == "p" and "no overdispersion" in c2.reason
    # small subgroups are not checked
    assert CH.choose_chart("defectives", sizes=n // 100, counts=d // 100).kind == "p"


def test_overdispersed_counts_choose_laney_u():
    rng = np.random.default_rng(4)
    a = rng.uniform(50, 80, size=30)
    rate = rng.normal(4.0, 0.6, size=30)
    c = rng.poisson(rate * a)
    assert CH.choose_chart("defects", sizes=a, counts=c).kind == "laney-u"
    stable = rng.poisson(4.0 * a)
    assert CH.choose_chart("defects", sizes=a, counts=stable).kind == "u"


def test_invalid_counts():
    with pytest.raises(StatsError, match="cannot exceed"):
        CH.choose_chart("defectives", sizes=[10, 12], counts=[11, 3])
    with pytest.raises(StatsError, match="not negative"):
        CH.choose_chart("defects", counts=[-1, 3])


# --- the check on the points the limits are fitted to ------------------------------------------


def _by_hand(d, n, fit, neighbours):
    """Laney's sigma_z written out (Laney 2002): the pooled rate of the fitted points, their
    z-scores, the mean of |z_b - z_a| over the given neighbouring pairs, divided by
    d2(2) = 2/sqrt(pi) (the expected range of two standard normal values)."""
    d, n = np.asarray(d, float), np.asarray(n, float)
    p = d[fit].sum() / n[fit].sum()
    z = (d / n - p) / np.sqrt(p * (1 - p) / n)
    return np.mean([abs(z[b] - z[a]) for a, b in neighbours]) / (2 / np.sqrt(np.pi))


def test_sigma_z_of_the_baseline_breaks_at_gaps_and_points_set_aside():
    d = [12, 15, 8, 22, 18, 10, 14, 25, 9, 16, 30, 5, 28, 6]
    n = [400, 420, 380, 450, 410, 390, 400, 460, 370, 420, 400, 400, 400, 400]
    stage = [0] * 10 + [1] * 4
    segment = [0, 0, 0, 0, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1]  # a missing period before point 4
    aside = [False] * 6 + [True] + [False] * 7  # point 6 set aside
    fit = np.array([s == 0 and not a for s, a in zip(stage, aside, strict=True)])
    # successive fitted points in one segment, none across the set-aside point 6
    pairs = [(0, 1), (1, 2), (2, 3), (4, 5), (7, 8), (8, 9)]
    want = _by_hand(d, n, fit, pairs)
    got = CH.sigma_z_of(d, n, stage=stage, segment=segment, set_aside=aside)
    assert got == pytest.approx(want, rel=1e-12)
    # and it is the sigma_z of the Laney chart fitted to the baseline
    chart = laney_p(d, n, stage=stage, segment=segment, set_aside=aside)
    assert chart.extras["sigma_z"] == pytest.approx(got, rel=1e-12)


def test_sigma_z_sd_of_ranges_in_runs_against_simulation():
    # reference: numpy simulation of independent N(0,1) z-scores in runs of 5, 8 and 12
    # successive points (a moving range only within a run)
    rng = np.random.default_rng(7)
    runs = [5, 8, 12]
    mrs = [np.abs(np.diff(rng.standard_normal((20000, r)), axis=1)) for r in runs]
    sz = np.concatenate(mrs, axis=1).mean(axis=1) / (2 / np.sqrt(np.pi))
    k = sum(r - 1 for r in runs)
    pairs = sum(r - 2 for r in runs)
    assert CH._sd_of_mr_mean(k, pairs) == pytest.approx(sz.std(), rel=0.03)
    assert CH._sd_of_mr_mean(k, k - 1) == pytest.approx(CH.sigma_z_sd(k + 1))


def test_after_points_do_not_change_the_chart_of_the_baseline():
    # a stable baseline of large subgroups (binomial draws, scipy) and an after period that
    # swings far more than the binomial model: judged on every point the check would ask for
    # a Laney chart; judged on the baseline it keeps the p chart the baseline calls for
    rng = np.random.default_rng(11)
    n = rng.integers(1500, 3000, size=40)
    base = stats.binom.rvs(n[:20], 0.03, random_state=rng)
    after = np.round(n[20:] * np.where(np.arange(20) % 2 == 0, 0.005, 0.05))
    d = np.concatenate([base, after])
    stage = [0] * 20 + [1] * 20
    assert CH.choose_chart("defectives", sizes=n[:20], counts=base).kind == "p"
    assert CH.choose_chart("defectives", sizes=n, counts=d).kind == "laney-p"
    kept = CH.choose_chart("defectives", sizes=n, counts=d, stage=stage)
    assert kept.kind == "p" and "no overdispersion" in kept.reason
