"""Property tests: invariants any correct control chart must satisfy (hypothesis)."""

from __future__ import annotations

import numpy as np
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from steadyline.stats import control as C
from steadyline.stats.rules import detect_signals

SETTINGS = settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])

finite = st.floats(min_value=-1e3, max_value=1e3, allow_nan=False, allow_infinity=False)
series = st.lists(finite, min_size=2, max_size=40)
shift = st.floats(min_value=-1e3, max_value=1e3, allow_nan=False)
scale = st.floats(min_value=0.01, max_value=100.0, allow_nan=False)
subgroups = st.lists(st.lists(finite, min_size=2, max_size=6), min_size=1, max_size=12)


def ordered(chart, tol=1e-9):
    ok = ~np.isnan(chart.upper)
    span = np.maximum(1.0, np.abs(chart.centre[ok]))
    assert np.all(chart.lower[ok] <= chart.centre[ok] + tol * span)
    assert np.all(chart.centre[ok] <= chart.upper[ok] + tol * span)


@SETTINGS
@given(series)
def test_individuals_limits_ordered(x):
    ch = C.individuals(x)
    ordered(ch)
    ordered(ch.secondary)
    assert np.all(ch.secondary.lower[1:] >= 0)


@SETTINGS
@given(series, shift, scale)
def test_individuals_affine_equivariance(x, a, b):
    base = C.individuals(x)
    moved = C.individuals(np.asarray(x) * b + a)
    tol = 1e-6 * (1 + abs(a) + b * (1 + np.max(np.abs(x))))
    np.testing.assert_allclose(moved.centre, base.centre * b + a, atol=tol)
    np.testing.assert_allclose(moved.upper, base.upper * b + a, atol=tol)
    np.testing.assert_allclose(moved.lower, base.lower * b + a, atol=tol)
    np.testing.assert_allclose(moved.sigma, base.sigma * b, atol=tol)
    np.testing.assert_allclose(moved.secondary.upper[1:], base.secondary.upper[1:] * b, atol=tol)


@SETTINGS
@given(subgroups, shift, scale)
def test_subgroup_charts_affine_equivariance(groups, a, b):
    for fn in (C.xbar_r, C.xbar_s):
        base = fn(groups)
        moved = fn([np.asarray(g) * b + a for g in groups])
        tol = 1e-6 * (1 + abs(a) + b * (1 + max(np.max(np.abs(g)) for g in groups)))
        ordered(base)
        ordered(base.secondary)
        np.testing.assert_allclose(moved.centre, base.centre * b + a, atol=tol)
        np.testing.assert_allclose(moved.upper, base.upper * b + a, atol=tol)
        np.testing.assert_allclose(moved.secondary.upper, base.secondary.upper * b, atol=tol)
        np.testing.assert_allclose(moved.secondary.lower, base.secondary.lower * b, atol=tol)


@st.composite
def defectives(draw):
    m = draw(st.integers(min_value=1, max_value=30))
    n = draw(st.lists(st.integers(min_value=0, max_value=500), min_size=m, max_size=m))
    assume(sum(n) > 0)
    d = [draw(st.integers(min_value=0, max_value=k)) for k in n]
    return d, n


@SETTINGS
@given(defectives())
def test_p_limits_within_unit_interval(dn):
    d, n = dn
    for fn in (C.p_chart, C.laney_p):
        ch = fn(d, n)
        ok = ~np.isnan(ch.upper)
        assert np.all((ch.lower[ok] >= 0) & (ch.upper[ok] <= 1))
        ordered(ch)
        assert np.all(np.isnan(ch.values) == (np.asarray(n) == 0))


@SETTINGS
@given(
    st.lists(st.integers(min_value=0, max_value=200), min_size=1, max_size=30),
    st.data(),
)
def test_count_charts_nonnegative(c, data):
    ch = C.c_chart(c)
    ordered(ch)
    assert np.all(ch.lower >= 0)
    areas = data.draw(
        st.lists(
            st.floats(min_value=0.1, max_value=50, allow_nan=False),
            min_size=len(c),
            max_size=len(c),
        )
    )
    for fn in (C.u_chart, C.laney_u):
        u = fn(c, areas)
        ordered(u)
        assert np.all(u.lower >= 0)


def _swap(side):
    return {"above": "below", "below": "above", "up": "down", "down": "up"}.get(side, side)


def _sigset(signals, flip=False):
    # mirroring the data swaps the sides on the main chart; moving ranges do not change
    return {
        (s.rule, s.indices, _swap(s.side) if flip and s.chart == "main" else s.side, s.chart)
        for s in signals
    }


@SETTINGS
@given(
    st.lists(
        st.floats(min_value=-100, max_value=100, allow_nan=False).map(lambda v: round(v, 1)),
        min_size=2,
        max_size=60,
    ),
    st.integers(min_value=-50, max_value=50),
    st.sampled_from([0.5, 2.0, 4.0]),
    st.sampled_from(["western-electric", "nelson"]),
)
def test_rules_invariant_under_shift_scale_and_mirror(x, a, b, rule_set):
    # dyadic scale factors and integer shifts keep the arithmetic exact enough that no point
    # moves across a zone boundary through rounding
    x = np.asarray(x)
    base = _sigset(detect_signals(C.individuals(x), rule_set))
    moved = _sigset(detect_signals(C.individuals(x * b + a), rule_set))
    mirrored = _sigset(detect_signals(C.individuals(-x), rule_set), flip=True)
    assume(len(base) < 40)
    assert moved == base
    assert mirrored == base


@SETTINGS
@given(series, st.integers(min_value=1, max_value=5))
def test_baseline_limits_constant_after_baseline(x, cut):
    assume(len(x) > cut + 1)
    stage = [0] * (cut + 1) + [1] * (len(x) - cut - 1)
    ch = C.individuals(x, stage=stage)
    assert np.all(ch.upper == ch.upper[0]) and np.all(ch.centre == ch.centre[0])
    assert ch.fitted.sum() == cut + 1
