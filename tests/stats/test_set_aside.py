"""Points set aside (an assignable cause found and removed) and the revised limits.

The practice checked is that of revising trial limits on phase I charts (Montgomery,
*Introduction to Statistical Quality Control*, phase I control charts): the limits are computed
again from the points that remain. Each expected figure is computed here by hand with plain numpy
on the remaining points (d2(2) = 2/sqrt(pi) = 1.1284, D4(2) = 3.267, A2, d2(n) from
steadyline.stats.constants, themselves checked against published tables in test_constants.py).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from steadyline.stats import control as C
from steadyline.stats import rules, runs
from steadyline.stats.constants import d2

X = np.array([10.0, 11.0, 9.5, 10.5, 30.0, 31.0, 10.2, 9.8, 10.4, 10.1, 9.9, 10.6])
ASIDE = np.zeros(X.size, dtype=bool)
ASIDE[[4, 5]] = True


def test_individuals_limits_are_those_of_the_remaining_points():
    ch = C.individuals(X, set_aside=ASIDE)
    keep = ~ASIDE
    mean = X[keep].mean()
    # moving ranges of successive observations that involve no set-aside point: |x_i - x_(i-1)|
    # with neither i nor i - 1 set aside (the pair 3-6 across the hole is no moving range)
    mr = [abs(X[i] - X[i - 1]) for i in range(1, X.size) if keep[i] and keep[i - 1]]
    assert len(mr) == X.size - 1 - 3
    sigma = np.mean(mr) / (2 / math.sqrt(math.pi))
    assert ch.centre[0] == pytest.approx(mean, rel=1e-12)
    assert ch.upper[0] == pytest.approx(mean + 3 * sigma, rel=1e-12)
    assert ch.lower[0] == pytest.approx(mean - 3 * sigma, rel=1e-12)
    assert ch.secondary.centre[1] == pytest.approx(np.mean(mr), rel=1e-12)
    assert ch.secondary.upper[1] == pytest.approx(3.267 * np.mean(mr), rel=1e-3)
    assert ch.extras["moving_ranges_used"] == len(mr)
    np.testing.assert_array_equal(ch.set_aside, ASIDE)
    # the moving ranges at 4, 5 and 6 involve a set-aside point
    np.testing.assert_array_equal(np.flatnonzero(ch.secondary.set_aside), [4, 5, 6])
    assert not ch.secondary.fitted[[4, 5, 6]].any()
    assert not ch.fitted[ASIDE].any() and ch.fitted[~ASIDE].all()
    # without setting them aside the limits are far wider (the check can fail)
    assert C.individuals(X).upper[0] > ch.upper[0] + 5


def test_set_aside_points_raise_no_signal_and_the_rest_are_judged_on_revised_limits():
    ch = C.individuals(X, set_aside=ASIDE)
    found = rules.detect_signals(ch, "western-electric")
    assert all(not (set(s.indices) & {4, 5}) for s in found)
    assert all(not (set(s.indices) & {4, 5, 6}) for s in found if s.chart == "secondary")
    # a point beyond the revised limits (but inside the old ones) is a signal
    y = X.copy()
    y[11] = 14.0
    old = C.individuals(y)
    new = C.individuals(y, set_aside=ASIDE)
    assert old.lower[11] < 14.0 < old.upper[11]
    assert 14.0 > new.upper[11]
    hits = [
        s
        for s in rules.detect_signals(new, "western-electric")
        if s.rule == "beyond-limits" and s.chart == "main"
    ]
    assert [s.indices for s in hits] == [(11,)]
    # on the limits with them, the point is inside and only the removed cause's points signal
    assert [
        s.indices
        for s in rules.detect_signals(old, "western-electric")
        if s.rule == "beyond-limits" and s.chart == "main"
    ] == [(4,), (5,)]


def test_xbar_r_limits_from_the_remaining_subgroups():
    rng = np.random.default_rng(7)
    groups = [list(rng.normal(10, 1, 4)) for _ in range(10)]
    groups[3] = [20.0, 25.0, 18.0, 22.0]
    aside = np.zeros(10, dtype=bool)
    aside[3] = True
    ch = C.xbar_r(groups, set_aside=aside)
    keep = [g for g, a in zip(groups, aside, strict=True) if not a]
    grand = np.mean([np.mean(g) for g in keep])
    rbar = np.mean([np.ptp(g) for g in keep])
    assert ch.centre[0] == pytest.approx(grand, rel=1e-12)
    assert ch.upper[0] == pytest.approx(grand + 3 * rbar / d2(4) / 2, rel=1e-12)
    assert ch.secondary.centre[0] == pytest.approx(rbar, rel=1e-12)


def test_p_and_c_charts_from_the_remaining_points():
    d = np.array([5, 6, 4, 30, 5, 7, 6])
    n = np.array([100, 110, 90, 100, 105, 100, 95])
    aside = d == 30
    p = C.p_chart(d, n, set_aside=aside)
    pbar = d[~aside].sum() / n[~aside].sum()
    assert p.centre[0] == pytest.approx(pbar, rel=1e-12)
    assert p.upper[1] == pytest.approx(pbar + 3 * math.sqrt(pbar * (1 - pbar) / 110), rel=1e-12)
    c = C.c_chart(d, set_aside=aside)
    cbar = d[~aside].mean()
    assert c.upper[0] == pytest.approx(cbar + 3 * math.sqrt(cbar), rel=1e-12)
    lp = C.laney_p(d, n, set_aside=aside)
    z = (d / n - pbar) / np.sqrt(pbar * (1 - pbar) / n)
    pairs = [(i - 1, i) for i in range(1, d.size) if not aside[i] and not aside[i - 1]]
    sigma_z = np.mean([abs(z[b] - z[a]) for a, b in pairs]) / d2(2)
    assert lp.extras["sigma_z"] == pytest.approx(sigma_z, rel=1e-12)


def test_run_chart_leaves_set_aside_points_out_of_median_and_runs():
    r = runs.analyse_runs(X, "anhoj", set_aside=ASIDE)
    assert r.median == pytest.approx(np.median(X[~ASIDE]))
    assert r.n_useful + sum(X[~ASIDE] == r.median) == int((~ASIDE).sum())
    for s in r.signals:
        assert not set(s.indices) & {4, 5}
    assert any("set aside" in n for n in r.notes)
