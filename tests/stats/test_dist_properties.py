"""Property tests (hypothesis) for distribution summaries, Pareto and run-chart rules."""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from steadyline.stats.distribution import QUARTILE_METHODS, box_summary, histogram
from steadyline.stats.pareto import pareto, pareto_in_order
from steadyline.stats.run_limits import perla_runs_limits, runs_distribution
from steadyline.stats.runs import analyse_runs

finite = st.floats(min_value=-1e6, max_value=1e6, allow_nan=False, allow_infinity=False)
samples = st.lists(finite, min_size=1, max_size=60)
methods = st.sampled_from(sorted(QUARTILE_METHODS))

SETTINGS = settings(max_examples=60, deadline=None)


@SETTINGS
@given(samples, st.randoms(use_true_random=False), st.sampled_from(["fd", "sturges", "scott"]))
def test_histogram_invariant_under_shuffle(xs, rnd, rule):
    h1 = histogram(xs, rule)
    ys = list(xs)
    rnd.shuffle(ys)
    h2 = histogram(ys, rule)
    assert h1.counts == h2.counts and h1.edges == h2.edges
    assert sum(h1.counts) == len(xs)


@SETTINGS
@given(samples, st.randoms(use_true_random=False), methods)
def test_box_summary_invariant_under_shuffle(xs, rnd, method):
    b1 = box_summary(xs, method)
    ys = list(xs)
    rnd.shuffle(ys)
    b2 = box_summary(ys, method)
    for f in ("q1", "median", "q3", "iqr", "whisker_low", "whisker_high", "minimum", "maximum"):
        assert getattr(b1, f) == getattr(b2, f)
    assert sorted(b1.outlier_values) == sorted(b2.outlier_values)


@SETTINGS
@given(samples, methods)
def test_quartiles_ordered_and_whiskers_within(xs, method):
    b = box_summary(xs, method)
    assert b.minimum <= b.q1 <= b.median <= b.q3 <= b.maximum
    assert b.minimum <= b.whisker_low <= b.whisker_high <= b.maximum
    assert b.lower_fence <= b.whisker_low and b.whisker_high <= b.upper_fence
    assert set(b.far_out_indices) <= set(b.outlier_indices)
    assert len(b.outlier_indices) + int(
        np.sum((np.asarray(xs) >= b.lower_fence) & (np.asarray(xs) <= b.upper_fence))
    ) == len(xs)


cats = st.lists(st.sampled_from(list("abcdefghij")), min_size=1, max_size=80)


@SETTINGS
@given(cats, st.one_of(st.none(), st.integers(min_value=2, max_value=6)))
def test_pareto_cumulative_ends_at_100_and_non_decreasing(cs, max_bars):
    p = pareto(cs, max_bars=max_bars)
    cum = p.cumulative_percent
    assert cum[-1] == 100.0
    assert all(b >= a for a, b in zip(cum, cum[1:], strict=False))
    assert sum(p.counts) == len(cs)
    named = [c for c in p.categories if c != "Other"]
    counts = dict(zip(p.categories, p.counts, strict=True))
    assert all(counts[a] >= counts[b] for a, b in zip(named, named[1:], strict=False))
    # vital few is the smallest leading set reaching 80 %
    full = pareto(cs)
    share = np.cumsum([full.counts[full.categories.index(c)] for c in full.vital_few])
    assert 100 * share[-1] / len(cs) >= 80 - 1e-9
    if len(share) > 1:
        assert 100 * share[-2] / len(cs) < 80


@SETTINGS
@given(cats, st.randoms(use_true_random=False))
def test_pareto_invariant_under_shuffle(cs, rnd):
    ys = list(cs)
    rnd.shuffle(ys)
    assert pareto(cs) == pareto(ys)


@SETTINGS
@given(cats)
def test_pareto_in_order_keeps_order_and_totals(cs):
    order = list("jihgfedcba")
    p = pareto_in_order(cs, None, order)
    assert p.categories == tuple(order)
    assert sum(p.counts) == len(cs)
    assert p.cumulative_percent[-1] == 100.0


@settings(max_examples=30, deadline=None)
@given(st.integers(min_value=2, max_value=80))
def test_runs_distribution_sums_to_one_and_limits_ordered(n):
    probs = runs_distribution(n // 2, n - n // 2)
    assert abs(sum(probs) - 1.0) < 1e-12
    low, high = perla_runs_limits(n)
    assert 1 <= low < high <= n + 1


@SETTINGS
@given(st.lists(st.integers(min_value=0, max_value=9), min_size=1, max_size=50))
def test_runs_identities(xs):
    r = analyse_runs(xs)
    if r.n_useful:
        assert r.runs == r.crossings + 1
        assert 1 <= r.longest_run <= r.n_useful
    # reversing the series does not change runs, crossings or longest run
    rr = analyse_runs(xs[::-1])
    assert (rr.runs, rr.crossings, rr.longest_run) == (r.runs, r.crossings, r.longest_run)
