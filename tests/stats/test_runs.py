"""Run-chart rules checked against scipy, an open data set and an independent enumeration."""

from __future__ import annotations

import itertools
import math
from collections import Counter

import numpy as np
import pytest
from scipy import stats

from steadyline.stats import run_limits
from steadyline.stats.results import StatsError
from steadyline.stats.run_limits import anhoj_limits, perla_runs_limits, runs_distribution
from steadyline.stats.runs import analyse_runs, shift_against

# docs/methods.md §4 table [computed with numpy/scipy]: n -> (longest-run limit,
# minimum crossings), Anhøj & Olesen 2014 definitions.
# fmt: off
ANHOJ_TABLE = {
    10: (6, 2), 11: (6, 2), 12: (7, 3), 13: (7, 3), 14: (7, 4), 15: (7, 4), 16: (7, 4),
    17: (7, 5), 18: (7, 5), 19: (7, 6), 20: (7, 6), 21: (7, 6), 22: (7, 7), 23: (8, 7),
    24: (8, 8), 25: (8, 8), 26: (8, 8), 27: (8, 9), 28: (8, 9), 29: (8, 10), 30: (8, 10),
    31: (8, 11), 32: (8, 11), 33: (8, 11), 34: (8, 12), 35: (8, 12), 36: (8, 13), 37: (8, 13),
    38: (8, 14), 39: (8, 14), 40: (8, 14), 41: (8, 15), 42: (8, 15), 43: (8, 16), 44: (8, 16),
    45: (8, 17), 46: (9, 17), 47: (9, 17), 48: (9, 18), 49: (9, 18), 50: (9, 19), 51: (9, 19),
    52: (9, 20), 53: (9, 20), 54: (9, 21), 55: (9, 21), 56: (9, 21), 57: (9, 22), 58: (9, 22),
    59: (9, 23), 60: (9, 23),
}

# docs/methods.md §4 table [computed from the Swed & Eisenhart 1943 distribution],
# alpha = 0.05 per tail: N -> (too few if runs <= low, too many if runs >= high).
PERLA_TABLE = {
    10: (3, 9), 11: (3, 10), 12: (3, 11), 13: (4, 11), 14: (4, 12), 15: (4, 13), 16: (5, 13),
    17: (5, 14), 18: (6, 14), 19: (6, 15), 20: (6, 16), 21: (7, 16), 22: (7, 17), 23: (8, 17),
    24: (8, 18), 25: (9, 18), 26: (9, 19), 27: (9, 20), 28: (10, 20), 29: (10, 21),
    30: (11, 21), 31: (11, 22), 32: (11, 23), 33: (12, 23), 34: (12, 24), 35: (13, 24),
    36: (13, 25), 37: (14, 25), 38: (14, 26), 39: (14, 27), 40: (15, 27), 41: (15, 28),
    42: (16, 28), 43: (16, 29), 44: (17, 29), 45: (17, 30), 46: (17, 31), 47: (18, 31),
    48: (18, 32), 49: (19, 32), 50: (19, 33), 51: (20, 33), 52: (20, 34), 53: (21, 34),
    54: (21, 35), 55: (21, 36), 56: (22, 36), 57: (22, 37), 58: (23, 37), 59: (23, 38),
    60: (24, 38),
}
# fmt: on


def nile() -> np.ndarray:
    import statsmodels.datasets.nile as nile_data

    return nile_data.load_pandas().data["volume"].to_numpy(dtype=float)


# --- Anhøj limits -----------------------------------------------------------------------


@pytest.mark.parametrize("n", range(10, 61))
def test_anhoj_limits_match_methods_table(n):
    # docs/methods.md §4 table (Anhøj & Olesen 2014 definitions, computed with scipy)
    assert anhoj_limits(n) == ANHOJ_TABLE[n]


@pytest.mark.parametrize("n", [1, 2, 5, 9, 13, 77, 100, 250])
def test_anhoj_crossings_limit_is_binomial_5th_percentile(n):
    # reference: scipy.stats.binom — the smallest c with P(C <= c) >= 0.05, C ~ Bin(n-1, 1/2)
    _, cmin = anhoj_limits(n)
    assert stats.binom.cdf(cmin, n - 1, 0.5) >= 0.05
    if cmin > 0:
        assert stats.binom.cdf(cmin - 1, n - 1, 0.5) < 0.05
    # Schilling-based longest-run limit, round(log2 n + 3) (Anhøj & Olesen 2014)
    assert anhoj_limits(n)[0] == round(math.log2(n) + 3)


def test_anhoj_crossings_limit_equals_scipy_binom_ppf_for_every_n():
    # reference: scipy.stats.binom.ppf(0.05, n - 1, 0.5), the definition in Anhøj & Olesen (2014);
    # ours is exact integer arithmetic up to EXACT_CROSSINGS_MAX trials, scipy's beyond
    n = np.arange(1, 2201)
    ref = stats.binom.ppf(0.05, n - 1, 0.5).astype(int)
    ours = np.array([anhoj_limits(int(k))[1] for k in n])
    np.testing.assert_array_equal(ours, ref)


@pytest.mark.parametrize(
    "n",
    [
        2999,
        4096,
        7777,
        run_limits.EXACT_CROSSINGS_MAX,
        run_limits.EXACT_CROSSINGS_MAX + 1,
        run_limits.EXACT_CROSSINGS_MAX + 2,
        25_000,
        1_000_000,
    ],
)
def test_anhoj_crossings_limit_equals_scipy_for_large_n(n):
    # reference: scipy.stats.binom.ppf(0.05, n - 1, 0.5), on both sides of the switch from exact
    # integers to scipy
    assert anhoj_limits(n)[1] == int(stats.binom.ppf(0.05, n - 1, 0.5))


def test_anhoj_crossings_exact_sum_is_the_binomial_tail():
    # the integer criterion itself, against exact binomial sums (math.comb, standard library):
    # 20 * sum_(i <= c) C(m, i) >= 2^m at c and not at c - 1
    for n in (2, 14, 61, 300, 1001):
        m, c = n - 1, anhoj_limits(n)[1]
        tail = sum(math.comb(m, i) for i in range(c + 1))
        assert 20 * tail >= 2**m
        assert c == 0 or 20 * (tail - math.comb(m, c)) < 2**m


def test_anhoj_limit_for_13_points_from_popular_write_up():
    # Wentzel-Larsen & Anhøj popular write-up (docs/methods.md §4, third-party): 13 points,
    # "less than three crossings" signals
    assert anhoj_limits(13)[1] == 3


def test_anhoj_limits_reject_zero():
    with pytest.raises(StatsError):
        anhoj_limits(0)


# --- Nile series (statsmodels.datasets.nile) ---------------------------------------------


def test_nile_anhoj_both_rules_signal():
    # statsmodels.datasets.nile; values per docs/methods.md §4: median 893.5, longest run 11,
    # crossings 29, limits 10 and 41, both rules signal (known shift about 1898)
    res = analyse_runs(nile())
    assert res.median == 893.5
    assert res.n == 100 and res.n_useful == 100
    assert res.longest_run == 11
    assert res.crossings == 29
    assert res.runs == 30
    assert res.longest_run_limit == 10
    assert res.crossings_limit == 41
    rules = {s.rule for s in res.signals}
    assert rules == {"unusually-long-run", "too-few-crossings"}
    long_run = next(s for s in res.signals if s.rule == "unusually-long-run")
    assert len(long_run.indices) == 11
    v = nile()
    side = np.sign(v[list(long_run.indices)] - 893.5)
    assert abs(side.sum()) == 11  # all on one side
    assert list(long_run.indices) == list(range(long_run.indices[0], long_run.indices[0] + 11))
    crossings = next(s for s in res.signals if s.rule == "too-few-crossings")
    assert crossings.indices == tuple(range(100))


def test_nile_perla_runs():
    # statsmodels.datasets.nile: 30 runs among 100 points; exact limits computed from
    # Swed & Eisenhart, cross-checked below against scipy-free enumeration for small N
    res = analyse_runs(nile(), rule_set="perla")
    assert res.runs == 30
    low, high = res.runs_limits
    assert res.runs <= low
    assert "too-few-runs" in {s.rule for s in res.signals}
    assert res.longest_run_limit == 6


# --- Swed & Eisenhart runs distribution ----------------------------------------------------


def brute_force_runs(n1: int, n2: int) -> Counter:
    counts: Counter = Counter()
    n = n1 + n2
    for pos in itertools.combinations(range(n), n1):
        seq = [0] * n
        for p in pos:
            seq[p] = 1
        r = 1 + sum(1 for i in range(1, n) if seq[i] != seq[i - 1])
        counts[r] += 1
    return counts


@pytest.mark.parametrize("n1,n2", [(1, 1), (2, 3), (3, 3), (4, 5), (5, 5), (3, 7), (6, 7), (7, 7)])
def test_runs_distribution_against_enumeration(n1, n2):
    # independent brute-force enumeration of all arrangements
    counts = brute_force_runs(n1, n2)
    total = math.comb(n1 + n2, n1)
    probs = runs_distribution(n1, n2)
    for r in range(len(probs)):
        assert probs[r] == pytest.approx(counts.get(r, 0) / total, abs=1e-15)


@pytest.mark.parametrize("n", range(4, 17))
def test_perla_limits_against_enumeration(n):
    # brute force: alpha = 0.05 per tail, median split
    counts = brute_force_runs(n // 2, n - n // 2)
    total = math.comb(n, n // 2)
    cdf = lambda r: sum(c for k, c in counts.items() if k <= r) / total  # noqa: E731
    sf = lambda r: sum(c for k, c in counts.items() if k >= r) / total  # noqa: E731
    low = max([r for r in range(1, n + 1) if cdf(r) <= 0.05], default=1)
    high = min([r for r in range(1, n + 2) if sf(r) <= 0.05], default=n + 1)
    assert perla_runs_limits(n) == (low, high)


@pytest.mark.parametrize("n", range(10, 61))
def test_perla_limits_match_methods_table(n):
    # docs/methods.md §4 table (alpha = 0.05 per tail, Swed & Eisenhart 1943)
    assert perla_runs_limits(n) == PERLA_TABLE[n]


@pytest.mark.parametrize("n,expected", [(10, (3, 9)), (20, (6, 16)), (24, (8, 18))])
def test_perla_limits_recalled_from_paper(n, expected):
    # Perla, Provost & Murray 2011, Table 1 — from memory (docs/methods.md §4)
    assert perla_runs_limits(n) == expected


# --- rule behaviour --------------------------------------------------------------------------


def test_points_on_median_are_skipped_in_runs():
    # 7 points: median 4; point on median neither adds to nor breaks the run
    x = [1, 2, 3, 4, 5, 6, 7]
    res = analyse_runs(x)
    assert res.n_useful == 6
    assert res.crossings == 1
    assert res.longest_run == 3
    assert any("on the median" in n for n in res.notes)
    assert any("at least 10" in n for n in res.notes)


def test_perla_shift_skips_median_points():
    # 3 above, one on the median, 3 above: a shift of 6 (Perla et al. 2011 convention)
    x = [10, 10, 10, 5, 10, 10, 10, 1, 1, 1, 1, 1, 1, 1, 5]
    res = analyse_runs(x, rule_set="perla", median=5.0)
    shifts = [s for s in res.signals if s.rule == "shift"]
    assert [s.indices for s in shifts] == [(0, 1, 2, 4, 5, 6), (7, 8, 9, 10, 11, 12, 13)]
    assert [s.side for s in shifts] == ["above", "below"]


def test_perla_five_is_no_shift_but_six_is():
    res5 = analyse_runs([1, 9, 1, 9, 9, 9, 9, 9, 1, 9, 1, 9], "perla", median=5)
    assert not [s for s in res5.signals if s.rule == "shift"]
    res6 = analyse_runs([1, 9, 1, 9, 9, 9, 9, 9, 9, 1, 9, 1], "perla", median=5)
    assert [s.indices for s in res6.signals if s.rule == "shift"] == [(3, 4, 5, 6, 7, 8)]


def test_perla_trend_with_equal_values_counted_once():
    # 1,2,2,3,4 is only 4 distinct rising values: no trend; 1,2,2,3,4,5 is 5: trend
    no = analyse_runs([3, 1, 2, 2, 3, 4, 3, 5, 2, 6, 1], "perla")
    assert not [s for s in no.signals if s.rule == "trend"]
    yes = analyse_runs([3, 1, 2, 2, 3, 4, 5, 2, 6, 1, 3], "perla")
    trends = [s for s in yes.signals if s.rule == "trend"]
    assert [(s.indices, s.side) for s in trends] == [((1, 2, 3, 4, 5, 6), "up")]


def test_perla_trend_turning_point_shared():
    res = analyse_runs([1, 2, 3, 4, 5, 4, 3, 2, 1, 1], "perla")
    trends = [(s.side, s.indices) for s in res.signals if s.rule == "trend"]
    assert trends == [("up", (0, 1, 2, 3, 4)), ("down", (4, 5, 6, 7, 8))]


def test_perla_notes_astronomical_point_is_judgement():
    res = analyse_runs(list(range(12)), "perla")
    assert any("judgement" in n for n in res.notes)


def test_anhoj_long_run_uses_strictly_longer_than():
    # 12 useful points -> limit 7: a run of 7 does not signal, a run of 8 does
    seven = [9] * 7 + [1, 9, 1, 1, 1]
    r7 = analyse_runs(seven, median=5)
    assert r7.longest_run == 7 and r7.longest_run_limit == 7
    assert "unusually-long-run" not in {s.rule for s in r7.signals}
    eight = [9] * 8 + [1, 1, 1, 1]
    r8 = analyse_runs(eight, median=5)
    assert "unusually-long-run" in {s.rule for s in r8.signals}


def test_anhoj_crossings_signal_when_fewer_than_limit():
    # 13 useful points: limit 3 crossings. 2 crossings signal, 3 do not.
    two = [9, 9, 9, 9, 9, 1, 1, 1, 1, 9, 9, 9, 9]
    assert analyse_runs(two, median=5).crossings == 2
    assert "too-few-crossings" in {s.rule for s in analyse_runs(two, median=5).signals}
    three = [9, 9, 9, 9, 1, 1, 1, 1, 9, 9, 9, 1, 1]
    assert analyse_runs(three, median=5).crossings == 3
    assert "too-few-crossings" not in {s.rule for s in analyse_runs(three, median=5).signals}


def test_missing_values_keep_positions():
    x = [1.0, np.nan, 9, 9, 9, 9, 9, 9, 9, 9, 1, 1, 9, 1]
    res = analyse_runs(x, median=5)
    assert res.n == 14 and res.n_useful == 13
    long_run = [s for s in res.signals if s.rule == "unusually-long-run"]
    assert long_run and long_run[0].indices == tuple(range(2, 10))


def test_shift_against_baseline_median():
    # after-period values all below the baseline median: sustained shift
    after = [3.0, 2.5, 3.2, 2.8, 3.1, 2.9, 3.3, 2.7, 3.0, 2.6, 3.4, 2.9]
    res = shift_against(after, reference_median=5.0)
    assert res.median == 5.0
    assert res.longest_run == 12
    rules = {s.rule for s in res.signals}
    assert "unusually-long-run" in rules
    p = shift_against(after, 5.0, rule_set="perla")
    assert {s.rule for s in p.signals} <= {"shift", "too-few-runs"}
    assert "shift" in {s.rule for s in p.signals}


def test_errors():
    with pytest.raises(StatsError):
        analyse_runs([], "anhoj")
    with pytest.raises(StatsError):
        analyse_runs([1, 2, 3], "rule-two")
    with pytest.raises(StatsError):
        analyse_runs([1, np.inf])


def test_all_on_median_gives_no_limits():
    res = analyse_runs([4, 4, 4, 4])
    assert res.n_useful == 0 and res.longest_run == 0 and res.signals == ()
    assert res.longest_run_limit is None


def test_runs_limits_normal_approximation_meets_the_exact_distribution():
    # Wald & Wolfowitz (1940) normal approximation (from memory) against the exact
    # Swed & Eisenhart (1943) distribution where the two meet: they agree within one run.

    for n in range(200, run_limits.EXACT_RUNS_MAX + 1, 40):
        exact = run_limits.perla_runs_limits(n)
        approx = run_limits._runs_limits_normal(n, run_limits.PERLA_RUNS_ALPHA)
        assert abs(exact[0] - approx[0]) <= 1 and abs(exact[1] - approx[1]) <= 1, n


def test_perla_rules_on_a_million_points_stay_fast_and_quiet():
    import time

    x = np.random.default_rng(7).normal(0, 1, 1_000_000)
    t = time.perf_counter()
    res = analyse_runs(x, "perla")
    took = time.perf_counter() - t
    print(f"\nPerla rules on 10^6 points: {took:.2f} s")
    # random data: no runs-count signal expected at the 5% level per tail (seeded, so fixed)
    assert not [s for s in res.signals if s.rule in ("too-few-runs", "too-many-runs")]
