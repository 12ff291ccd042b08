"""Box summary, histogram and Anderson–Darling checked against numpy, scipy and the worked examples of docs/methods.md."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from scipy import stats

from steadyline.stats.distribution import (
    AD_P_FLOOR,
    AD_P_MAX_ADJUSTED,
    QUARTILE_METHODS,
    ad_p_value,
    anderson_darling,
    box_summary,
    histogram,
    normal_curve,
    p_below_text,
)
from steadyline.stats.results import StatsError

OWN = [2, 4, 4, 5, 7, 9, 10, 12, 15, 21, 40]  # docs/methods.md §6 worked example (own numbers)


def seeded_sample() -> np.ndarray:
    # docs/methods.md §7/§8: 100 draws from N(50, 5), seed 12345, rounded to 2 dp
    return np.random.default_rng(12345).normal(50, 5, 100).round(2)


# --- quartiles -----------------------------------------------------------------------------

# docs/methods.md §6 table, checked there by hand against the Hyndman & Fan (1996) definitions
OWN_QUARTILES = {
    "inverted_cdf": (4, 9, 15),
    "averaged_inverted_cdf": (4, 9, 15),
    "closest_observation": (4, 9, 12),
    "interpolated_inverted_cdf": (4, 8, 12.75),
    "hazen": (4.25, 9, 14.25),
    "weibull": (4, 9, 15),
    "linear": (4.5, 9, 13.5),
    "median_unbiased": (4 + 1 / 6, 9, 14.5),
    "normal_unbiased": (4.1875, 9, 14.4375),
    "tukey-hinges": (4.5, 9, 13.5),
}
EIGHT_Q = {  # x = 1..8, docs/methods.md §6 second table
    "inverted_cdf": (2, 6),
    "averaged_inverted_cdf": (2.5, 6.5),
    "closest_observation": (2, 6),
    "interpolated_inverted_cdf": (2, 6),
    "hazen": (2.5, 6.5),
    "weibull": (2.25, 6.75),
    "linear": (2.75, 6.25),
    "median_unbiased": (2 + 5 / 12, 6 + 7 / 12),
    "normal_unbiased": (2.4375, 6.5625),
    "tukey-hinges": (2.5, 6.5),
}


@pytest.mark.parametrize("method", list(OWN_QUARTILES))
def test_quartiles_methods_worked_example(method):
    # docs/methods.md §6 worked example; Hyndman & Fan (1996) definitions
    b = box_summary(OWN, method)
    q1, med, q3 = OWN_QUARTILES[method]
    # type 4 median per H&F: h = np = 5.5 -> between x(5)=7 and x(6)=9 -> 8
    assert (b.q1, b.median, b.q3) == pytest.approx((q1, med, q3), abs=1e-9)
    assert b.iqr == pytest.approx(q3 - q1)


@pytest.mark.parametrize("method", list(EIGHT_Q))
def test_quartiles_one_to_eight(method):
    # docs/methods.md §6 second table (x = 1..8)
    b = box_summary(range(1, 9), method)
    assert (b.q1, b.q3) == pytest.approx(EIGHT_Q[method], abs=1e-9)


@pytest.mark.parametrize("method", [m for m in QUARTILE_METHODS if m != "tukey-hinges"])
def test_quartiles_match_numpy(method):
    # reference: numpy.quantile
    x = seeded_sample()
    b = box_summary(x, method)
    assert (b.q1, b.median, b.q3) == tuple(np.quantile(x, [0.25, 0.5, 0.75], method=method))


def test_labels_name_hyndman_fan_types():
    assert box_summary(OWN).method_label == "Hyndman & Fan type 7 (linear)"
    assert "type 1" in QUARTILE_METHODS["inverted_cdf"]
    assert "type 9" in QUARTILE_METHODS["normal_unbiased"]


def test_fences_whiskers_outliers_worked_example():
    # docs/methods.md §6: type 7 fences [-9, 27], whiskers 2 and 21, 40 an outlier
    b = box_summary(OWN)
    assert (b.lower_fence, b.upper_fence) == (-9.0, 27.0)
    assert (b.whisker_low, b.whisker_high) == (2.0, 21.0)
    assert b.outlier_indices == (10,) and b.outlier_values == (40.0,)
    assert b.far_out_indices == ()  # outer fence 13.5 + 27 = 40.5 > 40
    # type 1: IQR 11, fences [-12.5, 31.5], 40 still an outlier
    b1 = box_summary(OWN, "inverted_cdf")
    assert (b1.lower_fence, b1.upper_fence) == (-12.5, 31.5)
    assert b1.outlier_values == (40.0,)


def test_far_out_beyond_three_iqr():
    # Tukey (1977): beyond 3 x IQR is "far out"
    x = [2, 4, 4, 5, 7, 9, 10, 12, 15, 21, 41]
    b = box_summary(x)
    assert b.far_out_indices == (10,)
    assert b.outlier_indices == (10,)


def test_box_ignores_missing_and_keeps_positions():
    x = [np.nan] + OWN
    b = box_summary(x)
    assert b.n == 11
    assert b.outlier_indices == (11,)


def test_box_errors():
    with pytest.raises(StatsError):
        box_summary([])
    with pytest.raises(StatsError):
        box_summary([1, 2, 3], "type-7")
    with pytest.raises(StatsError):
        box_summary([1, np.inf])


def test_box_single_value():
    b = box_summary([5.0])
    assert b.q1 == b.q3 == b.median == 5.0 and b.outlier_indices == ()


# --- histogram ------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "rule,bins",
    [
        ("sturges", 8),
        ("scott", 7),
        ("fd", 8),
        ("doane", 9),
        ("rice", 10),
        ("sqrt", 10),
        ("stone", 8),
        ("auto", 8),
    ],
)
def test_histogram_bin_counts_methods_values(rule, bins):
    # docs/methods.md §7 check values (seed 12345 N(50,5) 2 dp), reproduced with numpy
    h = histogram(seeded_sample(), rule)
    assert len(h.counts) == bins
    assert sum(h.counts) == 100


@pytest.mark.parametrize("rule", ["fd", "sturges", "scott"])
def test_histogram_matches_numpy(rule):
    # reference: numpy.histogram with numpy.histogram_bin_edges
    x = seeded_sample()
    counts, edges = np.histogram(x, bins=rule)
    h = histogram(x, rule)
    assert h.counts == tuple(counts)
    assert h.edges == tuple(edges)


def test_fd_realised_width():
    # docs/methods.md §7: FD h = 3.0733 (2 IQR n^-1/3), realised width 2.85625
    x = seeded_sample()
    h = histogram(x, "fd")
    q1, q3 = np.percentile(x, [25, 75])
    assert 2 * (q3 - q1) * 100 ** (-1 / 3) == pytest.approx(3.0733, abs=1e-4)
    assert h.bin_width == pytest.approx(2.85625, abs=1e-9)
    assert h.rule_label == "Freedman–Diaconis"


def test_sturges_formula():
    # Sturges (1926): k = ceil(log2 n) + 1
    for n in (7, 30, 100, 1000):
        x = np.linspace(0, 1, n)
        assert len(histogram(x, "sturges").counts) == int(np.ceil(np.log2(n))) + 1


def test_explicit_edges_count_outside():
    x = seeded_sample()
    h = histogram(x, [40, 45, 50, 55, 60])
    assert h.rule == "edges" and h.bin_width == 5.0
    assert h.below_range == int((x < 40).sum())
    assert h.above_range == int((x > 60).sum()) and h.above_range > 0
    assert sum(h.counts) + h.below_range + h.above_range == 100
    # reference: numpy.histogram with the same edges
    assert h.counts == tuple(np.histogram(x, bins=[40, 45, 50, 55, 60])[0])
    uneq = histogram(x, [40, 45, 55, 60])
    assert uneq.bin_width is None


def test_explicit_edges_last_bin_closed():
    h = histogram([0, 1, 2, 3], [0, 1, 2, 3])
    assert h.counts == (1, 1, 2) and h.above_range == 0


def test_degenerate_zero_range_gives_one_bin():
    for rule in ("fd", "sturges", "scott"):
        h = histogram([7.0, 7.0, 7.0], rule)
        assert h.counts == (3,)
        assert h.edges == (6.5, 7.5)


def test_fd_falls_back_when_it_would_need_absurd_bin_count():
    x = [0, 1, 1 + 1e-9, 1 + 2e-9, 1 + 3e-9, 1 + 4e-9, 1 + 5e-9, 1 + 6e-9, 1000.0]
    h = histogram(x, "fd")
    assert h.rule == "sturges" and "Freedman–Diaconis would need" in h.rule_label
    # reference: numpy.histogram with the Sturges rule
    assert h.counts == tuple(np.histogram(x, bins="sturges")[0])


def test_fd_falls_back_without_a_warning_when_its_width_is_subnormal():
    # found by the fuzz test: magnitudes within 1e12 whose quartiles differ by a subnormal
    # amount; range / width overflows, which must read as "too many bins", quietly
    x = [-1e12, 1e12] + [0.0] * 10 + [5e-324] * 10
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        h = histogram(x, "fd")
    assert h.rule == "sturges" and "Freedman–Diaconis would need" in h.rule_label
    # reference: numpy.histogram with the Sturges rule
    assert h.counts == tuple(np.histogram(x, bins="sturges")[0])


def test_histogram_errors():
    with pytest.raises(StatsError):
        histogram([], "fd")
    with pytest.raises(StatsError):
        histogram([1, 2], "best")
    with pytest.raises(StatsError):
        histogram([1, 2], [3, 2, 1])


def test_normal_curve_scaled_to_counts():
    x = seeded_sample()
    h = histogram(x, "fd")
    cx, cy = normal_curve(h, points=2001)
    assert cx[0] == h.edges[0] and cx[-1] == h.edges[-1]
    # area under the curve equals n * width * (probability mass inside the range);
    # reference: scipy.stats.norm.cdf
    mass = stats.norm.cdf(h.edges[-1], h.mean, h.std) - stats.norm.cdf(h.edges[0], h.mean, h.std)
    area = np.trapezoid(cy, cx) / h.bin_width
    assert area == pytest.approx(h.n * mass, rel=1e-4)
    with pytest.raises(StatsError):
        normal_curve(histogram(x, [40, 45, 55, 60]))


# --- Anderson–Darling ------------------------------------------------------------------------


def scipy_a2(x) -> float:
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return float(stats.anderson(x, "norm").statistic)


@pytest.mark.parametrize(
    "sample,a2,a2star,p",
    [
        # docs/methods.md §8 comparison table [computed]; p from the D'Agostino & Stephens
        # (1986) Table 4.9 formula, coefficients from memory
        (seeded_sample(), 0.483239, 0.486972, 0.2246),
        (OWN, 0.868509, 0.943876, 0.01694),
    ],
)
def test_anderson_darling_methods_values(sample, a2, a2star, p):
    r = anderson_darling(sample)
    assert r.statistic == pytest.approx(a2, abs=1e-6)
    assert r.adjusted == pytest.approx(a2star, abs=1e-6)
    assert r.p_value == pytest.approx(p, rel=2e-3)


@pytest.mark.parametrize("seed", [0, 1, 2, 3])
def test_anderson_darling_statistic_equals_scipy(seed):
    # reference: scipy.stats.anderson (unadjusted A²)
    rng = np.random.default_rng(seed)
    x = rng.gamma(2.0, 3.0, size=8 + 17 * seed)
    assert anderson_darling(x).statistic == pytest.approx(scipy_a2(x), rel=1e-10)


def test_anderson_darling_decision_matches_scipy_critical_value():
    # reference: scipy.stats.anderson critical values (the A*² table divided by the
    # small-sample factor): A² < 5% critical value <=> p >= 0.05 except at the boundary
    rng = np.random.default_rng(7)
    for _k in range(30):
        x = rng.standard_t(3, size=40)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            res = stats.anderson(x, "norm")
        crit5 = res.critical_values[2]
        ours = anderson_darling(x)
        if abs(ours.statistic - crit5) > 0.02:
            assert ours.normal_at_5pct == (ours.statistic < crit5)


def test_ad_p_value_critical_points():
    # D'Agostino & Stephens (1986) critical values of A*² (from memory): 0.752 at 5%,
    # 1.035 at 1%, 0.631 at 10%; the piecewise formula should give about these p-values
    assert ad_p_value(0.752) == pytest.approx(0.05, abs=0.003)
    assert ad_p_value(1.035) == pytest.approx(0.01, abs=0.001)
    assert ad_p_value(0.631) == pytest.approx(0.10, abs=0.005)
    # continuity at the breakpoints of the piecewise formula
    for a in (0.2, 0.34, 0.6):
        assert ad_p_value(a - 1e-9) == pytest.approx(ad_p_value(a), abs=0.01)


# --- Anderson–Darling at the edges of its p-value approximation --------------------------------

# statsmodels.stats.diagnostic.normal_ad uses the same D'Agostino & Stephens (1986) Table 4.9
# formula for A*² <= 13 and returns 0 above, with the comment "is < 4.9542108058458799e-31"
# (read in the source of statsmodels 0.15, module statsmodels.stats._adnorm).
SM_FORMULA_MAX = 13.0
SM_BELOW = 4.9542108058458799e-31

AD_GRID_N = (8, 20, 50, 100, 1000, 10**4, 10**5, 10**6)
AD_GRID_SHAPES = ("normal", "lognormal", "exponential", "uniform")


def _grid_sample(shape: str, n: int) -> np.ndarray:
    rng = np.random.default_rng(AD_GRID_N.index(n) * 10 + AD_GRID_SHAPES.index(shape))
    return {
        "normal": lambda: rng.normal(50.0, 5.0, n),
        "lognormal": lambda: rng.lognormal(0.0, 1.0, n),
        "exponential": lambda: rng.exponential(2.0, n),
        "uniform": lambda: rng.uniform(0.0, 1.0, n),
    }[shape]()


@pytest.mark.parametrize("shape", AD_GRID_SHAPES)
@pytest.mark.parametrize("n", AD_GRID_N)
def test_anderson_darling_grid_against_statsmodels_and_scipy(shape, n):
    from statsmodels.stats.diagnostic import normal_ad

    x = _grid_sample(shape, n)
    ours = anderson_darling(x)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        sc = stats.anderson(x, "norm")  # method=None: the A² and its critical values
        sm_a2, sm_p = normal_ad(x)
    sm_a2, sm_p = float(sm_a2), float(sm_p)

    # reference: scipy.stats.anderson, the unadjusted A² (logcdf and logsf, as ours)
    assert ours.statistic == pytest.approx(float(sc.statistic), rel=1e-9)
    factor = 1.0 + 0.75 / n + 2.25 / n**2
    assert ours.adjusted == pytest.approx(ours.statistic * factor, rel=1e-12)

    # reference: statsmodels normal_ad. Its A² takes log(cdf) and log1p(-cdf), which is -inf
    # once a value lies so far out that the normal cdf rounds to 1; then only scipy's applies.
    if math.isfinite(sm_a2):
        assert ours.statistic == pytest.approx(sm_a2, rel=1e-6)
    # the p-value: equal to statsmodels' where it uses the formula; where statsmodels gives 0
    # ("below 4.95e-31") ours is a positive number below that while the approximation's
    # published range lasts, and past it no number at all but the bound
    if ours.adjusted <= SM_FORMULA_MAX - 1e-6:
        assert ours.p_value == pytest.approx(sm_p, rel=1e-6)
        assert ours.p_below is None
    elif ours.adjusted < AD_P_MAX_ADJUSTED:
        assert sm_p == 0.0
        assert ours.p_value is not None and 0.0 < ours.p_value < SM_BELOW
        assert ours.p_below is None
    else:
        assert sm_p == 0.0
        assert ours.p_value is None and ours.p_below == AD_P_FLOOR
    # never the old failures: no p of 1.0 (the formula turned upward), no overflow
    assert ours.p_value is None or 0.0 < ours.p_value < 1.0

    # reference: scipy.stats.anderson critical value at 5% (index 2 of 15, 10, 5, 2.5, 1):
    # A² below it <=> normal at 5%. The table's 0.752 and the formula's 5% point (0.7532) and
    # scipy's rounding to 3 decimals leave a sliver of A*² where the two may differ.
    crit5 = float(sc.critical_values[2])
    assert float(sc.significance_level[2]) == 5.0
    if abs(ours.statistic - crit5) > 0.003:
        assert ours.normal_at_5pct == (ours.statistic < crit5)
    if shape != "normal" and n >= 1000:
        assert not ours.normal_at_5pct  # clearly non-normal and large: never called normal


def test_ad_p_value_range_ends_where_the_formula_turns_upward():
    # The last piece exp(1.2937 − 5.709a + 0.0186a²) (D'Agostino & Stephens 1986, Table 4.9,
    # from memory) has its lowest point at a = 5.709 / (2 × 0.0186); the range stated with it
    # ends there, to three decimals.
    vertex = 5.709 / (2 * 0.0186)
    assert AD_P_MAX_ADJUSTED == math.floor(vertex * 1000) / 1000
    # inside the range the p-value falls steadily from about 1 to the floor
    a = np.linspace(0.0, AD_P_MAX_ADJUSTED, 20001)[:-1]
    p = np.array([ad_p_value(v) for v in a])
    assert np.all((p > 0) & (p < 1))
    assert np.all(np.diff(p) <= 1e-12)
    assert p[-1] > AD_P_FLOOR and p[-1] == pytest.approx(AD_P_FLOOR, rel=1e-3)
    assert AD_P_FLOOR == pytest.approx(
        math.exp(1.2937 - 5.709 * AD_P_MAX_ADJUSTED + 0.0186 * AD_P_MAX_ADJUSTED**2), rel=1e-12
    )
    assert 1e-191 < AD_P_FLOOR < 1e-189
    # at and past the end: no p-value (the old code gave 1.0 near a = 307 and overflowed
    # past about 402)
    for past in (
        AD_P_MAX_ADJUSTED,
        200.0,
        306.9,
        307.0,
        402.0,
        1e4,
        1e9,
        float("inf"),
        float("nan"),
    ):
        assert ad_p_value(past) is None


def test_a_large_skewed_sample_is_not_normal_and_says_p_below():
    # the failure reported: a clearly non-normal sample of a few thousand values was called
    # normal (p = 1.0), and from about 5,000 values the p-value overflowed
    for n in (3000, 5000, 10000):
        x = np.random.default_rng(1).lognormal(size=n)
        r = anderson_darling(x)
        assert not r.normal_at_5pct
        assert r.p_value is None and r.p_below == AD_P_FLOOR
    assert p_below_text(AD_P_FLOOR) == (
        "p below 2e-190, the smallest p-value the approximation gives"
    )


def test_anderson_darling_requirements():
    with pytest.raises(StatsError, match="at least 8"):
        anderson_darling([1, 2, 3, 4, 5, 6, 7])
    with pytest.raises(StatsError, match="standard deviation is zero"):
        anderson_darling([3.0] * 10)


# --- bins shared by several periods -------------------------------------------------------------


def test_extended_edges_keep_the_grid_and_cover_every_value():
    from steadyline.stats.distribution import extend_edges

    rng = np.random.default_rng(11)
    base = rng.normal(50, 10, 120)
    later = rng.normal(25, 6, 200)  # shifted well below the baseline's range
    edges = np.histogram_bin_edges(base, bins="fd")
    grid = np.array(extend_edges(edges, later))
    # the baseline's edges are a run of the result, unchanged
    k = int(np.flatnonzero(grid == edges[0])[0])
    assert np.array_equal(grid[k : k + len(edges)], edges)
    # one width throughout (reference: numpy.diff), and every later value inside
    # (reference: numpy.histogram counts all of them)
    assert np.allclose(np.diff(grid), edges[1] - edges[0], rtol=1e-9)
    counts, _ = np.histogram(later, bins=grid)
    assert counts.sum() == len(later) and grid[0] <= later.min()


def test_extended_edges_leave_unequal_or_far_out_edges_alone():
    from steadyline.stats.distribution import extend_edges

    assert extend_edges([0.0, 1.0, 3.0], [-5.0]) == (0.0, 1.0, 3.0)  # unequal widths
    assert extend_edges([0.0, 1.0, 2.0], [0.5, 1.5]) == (0.0, 1.0, 2.0)  # nothing outside
    assert extend_edges([0.0, 1.0, 2.0], [1e6], max_bins=100) == (0.0, 1.0, 2.0)  # too far
