"""Control charts checked against published examples, open data and independent computation.

Sources named beside each check. "Own regression numbers" are the worked values of
docs/methods.md §2 (no published answer); each is also recomputed here with plain
numpy so that the test does not merely trust the digits.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from steadyline.stats import control as C
from steadyline.stats.constants import a2, a3, b3, b4, c4, d2, d3
from steadyline.stats.results import StatsError

NIST_FLOW = [49.6, 47.6, 49.9, 51.3, 47.8, 51.2, 52.6, 52.4, 53.6, 52.1]
SUBGROUPS = [
    [10.2, 9.8, 10.1, 10.0],
    [10.4, 10.1, 9.9, 10.2],
    [9.7, 10.0, 10.3, 9.9],
    [10.1, 10.5, 10.2, 10.0],
    [9.9, 9.6, 10.0, 10.1],
    [10.3, 10.2, 10.4, 9.9],
]
P_COUNTS = [12, 15, 8, 22, 18, 10, 14, 25, 9, 16]
P_SIZES = [400, 420, 380, 450, 410, 390, 400, 460, 370, 420]


@pytest.fixture(scope="module")
def nile() -> np.ndarray:
    sm = pytest.importorskip("statsmodels.api")
    return sm.datasets.nile.load_pandas().data["volume"].to_numpy(dtype=float)


# ------------------------------------------------------------------------------ individuals


def test_nist_individuals_example():
    # NIST/SEMATECH e-Handbook 6.3.2.2 (flow-rate data): x-bar = 50.81, MR-bar = 1.8778,
    # UCL = 55.8041, LCL = 45.8159, published with d2 = 1.128.
    ch = C.individuals(NIST_FLOW)
    xbar = ch.extras["mean"]
    mr_bar = ch.extras["average_moving_range"]
    assert xbar == pytest.approx(50.81, abs=5e-3)
    assert mr_bar == pytest.approx(1.8778, abs=5e-5)
    # our limits are exactly x-bar +- 3 MR-bar / d2(2) with the exact d2(2) = 2/sqrt(pi)
    assert ch.upper == pytest.approx(np.full(10, xbar + 3 * mr_bar / (2 / math.sqrt(math.pi))))
    assert ch.lower == pytest.approx(np.full(10, xbar - 3 * mr_bar / (2 / math.sqrt(math.pi))))
    # with the printed d2 = 1.128 the same figures give NIST's numbers within rounding
    assert xbar + 3 * mr_bar / 1.128 == pytest.approx(55.8041, abs=1e-4)
    assert xbar - 3 * mr_bar / 1.128 == pytest.approx(45.8159, abs=1e-4)
    # and our exact limits differ from the published ones only by the d2 rounding
    assert ch.upper[0] == pytest.approx(55.8025, abs=1e-4)  # docs/methods.md §2, computed
    # mR chart: CL = MR-bar, UCL = D4(2) MR-bar (printed 3.267), LCL = 0
    mr = ch.secondary
    assert np.isnan(mr.values[0])
    assert mr.values[1:] == pytest.approx(np.abs(np.diff(NIST_FLOW)))
    assert mr.upper[1] == pytest.approx(3.267 * mr_bar, abs=2e-3)
    assert mr.upper[1] == pytest.approx((1 + 3 * d3(2) / d2(2)) * mr_bar)
    assert mr.lower[1] == 0.0


def test_a_moving_range_never_spans_a_gap():
    # NIST/SEMATECH e-Handbook 6.3.2.2 flow-rate data, with one or more missing periods
    # between the 5th and 6th values (segment 0, then 1). MR_i = |x_i - x_(i-1)| is defined for
    # successive observations (NIST 6.3.2.2; Montgomery section 6.4), so the 6th value has no
    # moving range. By hand, the nine moving ranges are 2.0, 2.3, 1.4, 3.5, [3.4], 1.4, 0.2,
    # 1.2, 1.5 (sum 16.9, MR-bar 1.8778 as published); without the bracketed one across the
    # gap: sum 13.5 over 8, MR-bar = 1.6875. x-bar stays 50.81 (every value is still a point).
    # With the printed d2(2) = 1.128: UCL = 50.81 + 3 * 1.6875 / 1.128 = 55.2980,
    # LCL = 46.3220; mR chart UCL = 3.267 * 1.6875 = 5.5131.
    segment = [0, 0, 0, 0, 0, 1, 1, 1, 1, 1]
    ch = C.individuals(NIST_FLOW, segment=segment)
    mr = ch.secondary
    assert np.isnan(mr.values[0]) and np.isnan(mr.values[5])  # drawn as a break
    assert ch.extras["average_moving_range"] == pytest.approx(1.6875, abs=1e-12)
    assert ch.extras["moving_ranges_used"] == 8
    assert ch.centre[0] == pytest.approx(50.81, abs=1e-12)
    # the same figures with the printed d2 = 1.128, D4 = 3.267, within their rounding
    assert ch.upper[0] == pytest.approx(55.2980, abs=2e-3)
    assert ch.lower[0] == pytest.approx(46.3220, abs=2e-3)
    assert mr.upper[1] == pytest.approx(5.5131, abs=2e-3)
    # and exactly x-bar +- 3 MR-bar / d2(2) with the exact d2(2)
    assert ch.upper == pytest.approx(np.full(10, 50.81 + 3 * 1.6875 / d2(2)))
    assert not mr.fitted[5] and mr.fitted[[1, 2, 3, 4, 6, 7, 8, 9]].all()
    assert any("gap in the periods" in n for n in ch.notes)
    # the old result, with the range across the gap, is not what comes out
    assert ch.extras["average_moving_range"] != pytest.approx(16.9 / 9)
    # one segment throughout is the chart without gaps
    same = C.individuals(NIST_FLOW, segment=[3] * 10)
    assert same.upper == pytest.approx(C.individuals(NIST_FLOW).upper)
    assert not any("gap" in n for n in same.notes)


def test_gaps_and_stages_together_and_bad_segments():
    # a gap inside the baseline and a change of period: neither range is used or drawn
    x = [10.0, 12.0, 11.0, 30.0, 31.0, 29.0, 40.0, 41.0]
    ch = C.individuals(x, stage=[0, 0, 0, 0, 0, 0, 1, 1], segment=[0, 0, 0, 1, 1, 1, 1, 1])
    assert np.isnan(ch.secondary.values[[0, 3, 6]]).all()
    # by hand: baseline moving ranges 2, 1 | 1, 2 -> MR-bar 1.5
    assert ch.extras["average_moving_range"] == pytest.approx(1.5)
    per_period = C.individuals(
        x, stage=[0, 0, 0, 0, 0, 0, 1, 1], limits="per-period", segment=[0, 0, 0, 1, 1, 1, 1, 1]
    )
    assert per_period.extras["process_sigma_stage_1"] == pytest.approx(1.0 / d2(2))
    # a baseline of single points between gaps has no moving range at all
    with pytest.raises(StatsError, match="two consecutive points"):
        C.individuals([1.0, 2.0, 3.0], segment=[0, 1, 2])
    with pytest.raises(StatsError, match="one segment number per point"):
        C.individuals([1.0, 2.0, 3.0], segment=[0, 1])
    with pytest.raises(StatsError, match="whole numbers"):
        C.individuals([1.0, 2.0, 3.0], segment=[0, 0.5, 1])


def test_nile_individuals(nile):
    # statsmodels.datasets.nile; docs/methods.md §2 (computed): x-bar 919.35, MR-bar 133.2525,
    # exact-d2 limits 1273.63 / 565.07, with 2.66: 1273.80 / 564.90, mR UCL 3.267 MR-bar = 435.34
    ch = C.individuals(nile)
    assert ch.centre[0] == pytest.approx(919.35, abs=5e-3)
    mr_bar = ch.extras["average_moving_range"]
    assert mr_bar == pytest.approx(133.2525, abs=5e-5)
    assert mr_bar == pytest.approx(np.mean(np.abs(np.diff(nile))))  # reference: numpy
    assert ch.upper[0] == pytest.approx(1273.63, abs=5e-3)
    assert ch.lower[0] == pytest.approx(565.07, abs=5e-3)
    assert ch.centre[0] + 2.66 * mr_bar == pytest.approx(1273.80, abs=5e-3)
    assert 3.267 * mr_bar == pytest.approx(435.34, abs=5e-3)
    # sigma is within (moving range), not the overall SD which the shift inflates
    assert ch.process_sigma == pytest.approx(118.09, abs=5e-3)
    assert np.std(nile, ddof=1) == pytest.approx(169.23, abs=5e-3)  # reference: numpy
    assert ch.process_sigma < 0.75 * np.std(nile, ddof=1)


def test_individuals_sigma_ignores_level_shift():
    # a pure step: the overall SD is large, the moving ranges see only the one jump
    x = np.r_[np.zeros(20), np.full(20, 10.0)] + np.tile([0.0, 1.0], 20)
    ch = C.individuals(x)
    mr = np.abs(np.diff(x))
    assert ch.process_sigma == pytest.approx(mr.mean() / d2(2))
    assert ch.process_sigma < np.std(x, ddof=1) / 3


def test_individuals_baseline_carried_forward_and_boundary_range_excluded():
    x = [5.0, 6.0, 5.5, 6.5, 5.0, 20.0, 21.0, 19.0]
    st = [0, 0, 0, 0, 0, 1, 1, 1]
    ch = C.individuals(x, stage=st)
    base = np.array(x[:5])
    mr_bar = np.mean(np.abs(np.diff(base)))  # only moving ranges inside stage 0
    assert ch.centre == pytest.approx(np.full(8, base.mean()))
    assert ch.upper == pytest.approx(np.full(8, base.mean() + 3 * mr_bar / d2(2)))
    assert ch.fitted.tolist() == [True] * 5 + [False] * 3
    assert np.isnan(ch.secondary.values[5])  # moving range across the change of period
    assert ch.secondary.fitted.tolist() == [False, True, True, True, True, False, False, False]
    assert any("change of period" in n for n in ch.notes)


def test_individuals_per_period_equals_separate_fits():
    rng = np.random.default_rng(3)
    a, b = rng.normal(10, 1, 12), rng.normal(14, 2, 9)
    ch = C.individuals(np.r_[a, b], stage=[0] * 12 + [1] * 9, limits="per-period")
    sa, sb = C.individuals(a), C.individuals(b)
    assert ch.upper[:12] == pytest.approx(sa.upper)
    assert ch.upper[12:] == pytest.approx(sb.upper)
    assert ch.secondary.upper[13:] == pytest.approx(sb.secondary.upper[1:])
    assert ch.fitted.all()
    assert ch.extras["process_sigma_stage_1"] == pytest.approx(sb.process_sigma)


def test_baseline_without_stage_zero_uses_lowest_stage():
    ch = C.individuals([1.0, 2.0, 3.0, 2.0], stage=[1, 1, 2, 2])
    assert ch.fitted.tolist() == [True, True, False, False]
    assert any("stage 1 is used as the baseline" in n for n in ch.notes)


def test_per_period_short_stage_gets_no_limits():
    ch = C.individuals([1.0, 2.0, 3.0, 2.0, 9.0], stage=[0, 0, 0, 0, 1], limits="per-period")
    assert np.isnan(ch.upper[4]) and np.isnan(ch.centre[4])
    assert any("Stage 1" in n and "no limits" in n for n in ch.notes)


def test_individuals_degenerate():
    with pytest.raises(StatsError, match="at least two data points, got 1"):
        C.individuals([3.0])
    with pytest.raises(StatsError, match="must not be empty"):
        C.individuals([])
    with pytest.raises(StatsError, match="finite"):
        C.individuals([1.0, float("nan"), 2.0])
    with pytest.raises(StatsError, match="baseline"):
        C.individuals([1.0, 2.0, 3.0], stage=[0, 1, 1])  # one baseline point: no moving range
    with pytest.raises(StatsError, match="limits must be one of"):
        C.individuals([1.0, 2.0], limits="rolling")
    with pytest.raises(StatsError, match="one stage number per point"):
        C.individuals([1.0, 2.0], stage=[0])
    with pytest.raises(StatsError, match="sigma_multiple"):
        C.individuals([1.0, 2.0], sigma_multiple=0)
    flat = C.individuals([4.0, 4.0, 4.0, 4.0])
    assert flat.upper == pytest.approx(flat.centre) and flat.lower == pytest.approx(flat.centre)
    assert any("collapse onto the centre line" in n for n in flat.notes)


def test_sigma_multiple():
    ch2 = C.individuals(NIST_FLOW, sigma_multiple=2.0)
    ch3 = C.individuals(NIST_FLOW)
    assert ch2.upper[0] - ch2.centre[0] == pytest.approx((ch3.upper[0] - ch3.centre[0]) * 2 / 3)


# ------------------------------------------------------------------------------ subgroups


def test_xbar_r_worked_values():
    # own regression numbers (docs/methods.md §2, computed with printed A2 = 0.729, D4 = 2.282):
    # X-double-bar 10.075, R-bar 0.5, UCL 10.4395, LCL 9.7105, R UCL 1.141, sigma 0.24284
    ch = C.xbar_r(SUBGROUPS)
    arr = np.array(SUBGROUPS)
    grand, rbar = arr.mean(axis=1).mean(), np.ptp(arr, axis=1).mean()  # reference: numpy
    assert grand == pytest.approx(10.075) and rbar == pytest.approx(0.5)
    assert ch.centre[0] == pytest.approx(grand)
    assert ch.upper[0] == pytest.approx(grand + a2(4) * rbar)
    assert ch.lower[0] == pytest.approx(grand - a2(4) * rbar)
    assert ch.upper[0] == pytest.approx(10.4395, abs=3e-4)  # printed-constant value
    assert ch.lower[0] == pytest.approx(9.7105, abs=3e-4)
    assert ch.secondary.upper[0] == pytest.approx(1.141, abs=1e-3)
    assert ch.secondary.lower[0] == 0.0
    assert ch.secondary.centre[0] == pytest.approx(rbar)
    assert ch.process_sigma == pytest.approx(0.24284, abs=5e-5)
    assert ch.values == pytest.approx(arr.mean(axis=1))
    assert ch.secondary.values == pytest.approx(np.ptp(arr, axis=1))


def test_xbar_s_worked_values():
    # own regression numbers (docs/methods.md §2, printed A3 = 1.628, B4 = 2.266): s-bar 0.212836,
    # UCL 10.4215, LCL 9.7285, S UCL 0.48229, sigma s-bar/c4 = 0.23101
    ch = C.xbar_s(SUBGROUPS)
    arr = np.array(SUBGROUPS)
    sbar = arr.std(axis=1, ddof=1).mean()  # reference: numpy
    assert sbar == pytest.approx(0.212836, abs=2e-6)  # docs/methods.md prints 6 dp, exact 0.2128372
    assert ch.upper[0] == pytest.approx(10.075 + a3(4) * sbar)
    assert ch.upper[0] == pytest.approx(10.4215, abs=1e-4)
    assert ch.lower[0] == pytest.approx(9.7285, abs=1e-4)
    assert ch.secondary.upper[0] == pytest.approx(b4(4) * sbar)
    assert ch.secondary.upper[0] == pytest.approx(0.48229, abs=5e-5)
    assert ch.secondary.lower[0] == pytest.approx(b3(4) * sbar)
    assert ch.process_sigma == pytest.approx(0.23101, abs=5e-5)
    # S chart sigma = sigma * sqrt(1 - c4^2) (reference: scipy.stats.chi -- sd of s)
    sd_of_s = stats.chi(3).std() / math.sqrt(3) * ch.process_sigma
    assert ch.secondary.sigma[0] == pytest.approx(sd_of_s)


def test_xbar_s_variable_n_pooled_and_stepped():
    # Montgomery's variable-n form: pooled s-bar, limits A3(n_i) s-bar and B3/B4(n_i) s-bar
    groups = [[5.1, 4.9, 5.3], [5.0, 5.2, 4.8, 5.1, 5.0], [4.7, 5.3, 5.1, 4.9], [5.2, 5.0, 5.4]]
    ch = C.xbar_s(groups)
    n = np.array([len(g) for g in groups])
    s = np.array([np.std(g, ddof=1) for g in groups])
    pooled = math.sqrt(np.sum((n - 1) * s**2) / np.sum(n - 1))
    grand = np.concatenate(groups).mean()
    assert ch.centre[0] == pytest.approx(grand)
    for i, ni in enumerate(n):
        assert ch.upper[i] == pytest.approx(grand + a3(int(ni)) * pooled)
        assert ch.secondary.upper[i] == pytest.approx(b4(int(ni)) * pooled)
        assert ch.secondary.lower[i] == pytest.approx(b3(int(ni)) * pooled)
    assert ch.process_sigma == pytest.approx(pooled / c4(int(np.sum(n - 1)) + 1))
    assert ch.sizes.tolist() == n.tolist()
    assert any("step" in note for note in ch.notes)


def test_xbar_r_variable_n_uses_r_over_d2():
    groups = [[1.0, 2.0], [1.0, 2.5, 3.0], [2.0, 2.2], [1.5, 3.0, 2.0]]
    ch = C.xbar_r(groups)
    sigma = np.mean([np.ptp(g) / d2(len(g)) for g in groups])
    assert ch.process_sigma == pytest.approx(sigma)
    assert ch.secondary.centre[1] == pytest.approx(d2(3) * sigma)


def test_subgroup_of_one_excluded_from_range():
    groups = [[10.0, 10.4, 9.8], [10.1], [9.9, 10.3, 10.0], [10.2, 9.7, 10.1]]
    ch = C.xbar_r(groups)
    full = C.xbar_r([groups[0], groups[2], groups[3]])
    assert ch.process_sigma == pytest.approx(full.process_sigma)
    assert np.isnan(ch.secondary.values[1]) and np.isnan(ch.secondary.upper[1])
    assert ch.values[1] == 10.1 and not np.isnan(ch.upper[1])
    assert any("single value" in n for n in ch.notes)
    chs = C.xbar_s(groups)
    assert np.isnan(chs.secondary.values[1])
    with pytest.raises(StatsError, match="no subgroup of two or more"):
        C.xbar_r([[1.0], [2.0]])
    with pytest.raises(StatsError, match="subgroup 1 is empty"):
        C.xbar_s([[1.0, 2.0], []])
    with pytest.raises(StatsError, match="subgroup 1 is empty"):
        C.xbar_r([np.array([1.0, 2.0]), np.zeros(0)])  # the loader's form: float arrays
    with pytest.raises(StatsError, match="subgroup 1 is not a flat list"):
        C.xbar_r([[1.0, 2.0], [[1.0, 2.0], [3.0, 4.0]]])
    with pytest.raises(StatsError, match="subgroup 0 holds a value that is not a finite"):
        C.xbar_r([np.array([1.0, np.nan]), np.array([2.0, 3.0])])
    with pytest.raises(StatsError, match="at least one subgroup"):
        C.xbar_r([])


def test_large_subgroups_in_range_chart_get_a_note():
    rng = np.random.default_rng(0)
    ch = C.xbar_r([rng.normal(size=12) for _ in range(5)])
    assert any("Xbar-S" in n for n in ch.notes)


# ------------------------------------------------------------------------------ attributes


def test_p_chart_worked_values():
    # own regression numbers (docs/methods.md §2): p-bar = 149/4100 = 0.036341; n = 400:
    # UCL 0.06441, LCL 0.00827
    ch = C.p_chart(P_COUNTS, P_SIZES)
    pbar = sum(P_COUNTS) / sum(P_SIZES)
    assert ch.centre[0] == pytest.approx(pbar) and pbar == pytest.approx(0.036341, abs=1e-6)
    assert ch.upper[0] == pytest.approx(0.06441, abs=5e-6)
    assert ch.lower[0] == pytest.approx(0.00827, abs=5e-6)
    # sigma per point: reference scipy.stats.binom (sd of a binomial count / n)
    for i, n in enumerate(P_SIZES):
        assert ch.sigma[i] == pytest.approx(stats.binom(n, pbar).std() / n)
    assert len(set(np.round(ch.upper, 10))) > 1  # stepped limits
    assert ch.values == pytest.approx(np.array(P_COUNTS) / np.array(P_SIZES))
    assert ch.process_sigma is None


def test_p_chart_truncation_and_cap():
    ch = C.p_chart([1, 1, 0, 2], [3, 4, 2, 5])
    assert np.all(ch.lower >= 0) and np.all(ch.upper <= 1)
    assert ch.upper[2] == 1.0  # p-bar + 3 sigma > 1 for n = 2
    assert ch.lower[0] == 0.0


def test_p_chart_zero_size_dropped_and_errors():
    ch = C.p_chart([2, 0, 3], [50, 0, 60])
    assert np.isnan(ch.values[1]) and np.isnan(ch.upper[1])
    assert not ch.fitted[1]
    assert ch.centre[0] == pytest.approx(5 / 110)
    assert any("left out" in n for n in ch.notes)
    with pytest.raises(StatsError, match="cannot exceed the number checked"):
        C.p_chart([5, 3], [4, 10])
    with pytest.raises(StatsError, match="must not be negative"):
        C.p_chart([-1, 3], [4, 10])
    with pytest.raises(StatsError, match="same length"):
        C.p_chart([1, 3], [4, 10, 5])
    with pytest.raises(StatsError, match="whole numbers"):
        C.p_chart([1.5, 3], [4, 10])
    zero = C.p_chart([0, 0, 0], [10, 20, 10])
    assert zero.upper == pytest.approx(zero.centre)
    assert any("collapse" in n for n in zero.notes)


def test_laney_p_worked_values():
    # own regression numbers (docs/methods.md §2, computed with d2 = 1.128): sigma_z = 1.53846,
    # Laney UCL (n = 400) = 0.07953. Recomputed here with numpy.
    ch = C.laney_p(P_COUNTS, P_SIZES)
    d, n = np.array(P_COUNTS, float), np.array(P_SIZES, float)
    pbar = d.sum() / n.sum()
    z = (d / n - pbar) / np.sqrt(pbar * (1 - pbar) / n)
    sigma_z = np.mean(np.abs(np.diff(z))) / (2 / math.sqrt(math.pi))
    assert ch.kind == "laney-p"
    assert ch.extras["sigma_z"] == pytest.approx(sigma_z)
    assert ch.extras["sigma_z"] * d2(2) / 1.128 == pytest.approx(1.53846, abs=5e-6)
    ucl_printed = pbar + 3 * math.sqrt(pbar * (1 - pbar) / 400) * (sigma_z * d2(2) / 1.128)
    assert ucl_printed == pytest.approx(0.07953, abs=5e-6)
    assert ch.upper[0] == pytest.approx(pbar + 3 * math.sqrt(pbar * (1 - pbar) / 400) * sigma_z)


def test_laney_sigma_z_skips_the_moving_range_across_a_gap():
    # Laney (2002): sigma_z is the average moving range of successive z-scores / d2(2); a gap
    # in the periods (segment change after the 4th point) leaves that one range out.
    # Recomputed with numpy.
    seg = [0, 0, 0, 0, 1, 1, 1, 1, 1, 1]
    d, n = np.array(P_COUNTS, float), np.array(P_SIZES, float)
    pbar = d.sum() / n.sum()
    z = (d / n - pbar) / np.sqrt(pbar * (1 - pbar) / n)
    mr = np.abs(np.diff(z))
    keep = np.ones(9, dtype=bool)
    keep[3] = False  # the range between the 4th and 5th points
    for fn in (C.laney_p, C.laney_u):
        ch = fn(P_COUNTS, P_SIZES, segment=seg)
        if fn is C.laney_p:
            assert ch.extras["sigma_z"] == pytest.approx(np.mean(mr[keep]) / d2(2))
            assert ch.extras["sigma_z"] != pytest.approx(np.mean(mr) / d2(2))
        else:  # u: z against the Poisson sigma
            ubar = d.sum() / n.sum()
            zu = (d / n - ubar) / np.sqrt(ubar / n)
            mu = np.abs(np.diff(zu))
            assert ch.extras["sigma_z"] == pytest.approx(np.mean(mu[keep]) / d2(2))


def test_laney_falls_back_with_few_points():
    ch = C.laney_p([3, 5], [100, 120])
    classic = C.p_chart([3, 5], [100, 120])
    assert ch.kind == "p" and "sigma_z" not in ch.extras
    assert ch.upper == pytest.approx(classic.upper)
    assert any("at least 3" in n for n in ch.notes)


def test_laney_sigma_z_near_one_for_binomial_data():
    # reference: scipy.stats.binom draws -- a binomial process gives sigma_z close to 1
    rng = np.random.default_rng(11)
    n = rng.integers(800, 1200, size=400)
    d = stats.binom.rvs(n, 0.1, random_state=rng)
    ch = C.laney_p(d, n)
    assert ch.extras["sigma_z"] == pytest.approx(1.0, abs=0.1)


def test_u_chart_worked_values():
    # own regression numbers (docs/methods.md §2): u-bar 0.56, UCL (a = 10) 1.26993, LCL 0
    c, a = [5, 8, 3, 9, 6, 4, 7], [10, 12, 8, 15, 11, 9, 10]
    ch = C.u_chart(c, a)
    ubar = sum(c) / sum(a)
    assert ch.centre[0] == pytest.approx(0.56)
    assert ch.upper[0] == pytest.approx(1.26993, abs=5e-6)
    assert ch.lower[0] == 0.0
    for i, ai in enumerate(a):  # reference: scipy.stats.poisson (sd of a count / area)
        assert ch.sigma[i] == pytest.approx(stats.poisson(ubar * ai).std() / ai)
    lu = C.laney_u(c, a)
    assert lu.kind == "laney-u" and lu.extras["sigma_z"] > 0
    with pytest.raises(StatsError, match="not be negative"):
        C.u_chart([1, 2], [1, -1])


def test_c_chart():
    # NIST/SEMATECH e-Handbook 6.3.3.1: c-bar = 16 gives LCL 4, UCL 28 (raw counts not used;
    # any counts with mean 16 give the same limits)
    counts = [14, 18, 16, 12, 20, 16, 15, 17]
    ch = C.c_chart(counts)
    assert ch.centre[0] == 16.0
    assert ch.lower[0] == pytest.approx(4.0) and ch.upper[0] == pytest.approx(28.0)
    assert ch.sigma[0] == pytest.approx(stats.poisson(16).std())  # reference: scipy.stats.poisson
    # own regression numbers (docs/methods.md §2): c-bar 4 -> UCL 10, LCL 0 (truncated from -2)
    small = C.c_chart([3, 5, 4, 4])
    assert small.upper[0] == pytest.approx(10.0) and small.lower[0] == 0.0


def test_np_chart_matches_p_chart_times_n():
    d = [3, 5, 2, 7, 4, 6]
    ch = C.np_chart(d, 50)
    p = C.p_chart(d, [50] * 6)
    assert ch.centre == pytest.approx(50 * p.centre)
    assert ch.upper == pytest.approx(50 * p.upper)
    assert ch.lower == pytest.approx(50 * p.lower)
    pbar = sum(d) / 300
    assert ch.sigma[0] == pytest.approx(stats.binom(50, pbar).std())  # reference: scipy.stats.binom
    with pytest.raises(StatsError, match="use a p chart"):
        C.np_chart(d, [50, 50, 50, 50, 50, 60])
    with pytest.raises(StatsError, match="cannot exceed"):
        C.np_chart([51], 50)


def test_attribute_per_period():
    d = [5, 6, 4, 5, 15, 16, 14]
    n = [100] * 7
    ch = C.p_chart(d, n, stage=[0, 0, 0, 0, 1, 1, 1], limits="per-period")
    assert ch.centre[0] == pytest.approx(20 / 400)
    assert ch.centre[5] == pytest.approx(45 / 300)
    base = C.p_chart(d, n, stage=[0, 0, 0, 0, 1, 1, 1])
    assert base.centre[5] == pytest.approx(20 / 400)
    assert base.fitted.tolist() == [True] * 4 + [False] * 3


def test_chart_functions_registry():
    assert set(C.CHART_FUNCTIONS) == {
        "xmr",
        "xbar-r",
        "xbar-s",
        "p",
        "np",
        "c",
        "u",
        "laney-p",
        "laney-u",
    }


# Results are found again by identity (steadyline.memo, the serialiser), so a chart's arrays must
# never change once computed: a write raises instead of silently changing a figure already drawn.
_READ_ONLY_CASES = {
    "xmr": lambda v, s: C.individuals(v, stage=s, set_aside=[False] * 11 + [True]),
    "xbar-r": lambda v, s: C.xbar_r(np.reshape(v, (6, 2)), stage=s[:6]),
    "xbar-s": lambda v, s: C.xbar_s(np.reshape(v, (4, 3)), stage=s[:4]),
    "p": lambda v, s: C.p_chart(v, v + 10, stage=s),
    "np": lambda v, s: C.np_chart(v, 20, stage=s),
    "c": lambda v, s: C.c_chart(v, stage=s),
    "u": lambda v, s: C.u_chart(v, v + 3.5, stage=s),
    "laney-p": lambda v, s: C.laney_p(v, v + 10, stage=s),
    "laney-u": lambda v, s: C.laney_u(v, v + 3.5, stage=s),
}


@pytest.mark.parametrize("kind", sorted(_READ_ONLY_CASES))
def test_result_arrays_are_read_only_and_inputs_stay_writable(kind):
    values = np.array([3.0, 5, 4, 6, 2, 5, 4, 3, 7, 4, 5, 6])
    stage = np.array([0] * 8 + [1] * 4)
    chart = _READ_ONLY_CASES[kind](values, stage)
    charts = [chart] + ([chart.secondary] if chart.secondary is not None else [])
    arrays = [
        (c.kind, name, getattr(c, name))
        for c in charts
        for name in ("values", "centre", "lower", "upper", "sigma", "fitted", "stage", "sizes")
        + ("set_aside",)
        if getattr(c, name) is not None
    ]
    assert len(arrays) >= 7
    for where, name, arr in arrays:
        with pytest.raises(ValueError, match="read-only"):
            arr[0] = arr[0]
        assert not arr.flags.writeable, (where, name)
    # the caller's arrays are not the chart's: they stay as they were, writable
    assert values.flags.writeable and stage.flags.writeable
    values[0] = 3.0
