"""Binomial probabilities and the exact two-sided binomial test (steadyline.stats.binomial)
against scipy.stats.binom / binomtest and exact rational arithmetic."""

from __future__ import annotations

import math
from fractions import Fraction

import numpy as np
import pytest
from scipy import stats

from steadyline.stats import binomial


def _cases(seed: int, count: int):
    rng = np.random.default_rng(seed)
    for _ in range(count):
        n = int(10 ** rng.uniform(0, 6))
        p = (
            float(rng.uniform(0.001, 0.999))
            if rng.random() < 0.8
            else float(rng.choice([0.5, 0.25, 1 / 3, 0.01, 0.99]))
        )
        sd = math.sqrt(n * p * (1 - p))
        k = int(np.clip(round(rng.normal(n * p, 3 * sd + 1)), 0, n))
        yield k, n, p


def test_pmf_against_scipy():
    # reference: scipy.stats.binom.pmf. Forming n p in floating point alone moves the pmf by
    # about |x - n p| * 1e-16 relative, in both libraries, hence the tolerance.
    rng = np.random.default_rng(17)
    for _ in range(3000):
        n = int(10 ** rng.uniform(0, 6))
        p = float(rng.uniform(0, 1))
        x = int(rng.integers(0, n + 1))
        ref = stats.binom.pmf(x, n, p)
        if ref < 1e-290:
            assert binomial.pmf(x, n, p) < 1e-280
            continue
        tol = 1e-13 + 4e-16 * abs(x - n * p)
        assert binomial.pmf(x, n, p) == pytest.approx(ref, rel=tol), (x, n, p)


def test_pmf_exact_small_n():
    # exact rational arithmetic (fractions.Fraction and math.comb, standard library)
    for n in (1, 2, 7, 30, 90):
        for p in (Fraction(1, 2), Fraction(1, 3), Fraction(9, 10)):
            for x in range(n + 1):
                exact = math.comb(n, x) * p**x * (1 - p) ** (n - x)
                assert binomial.pmf(x, n, float(p)) == pytest.approx(float(exact), rel=1e-14)


def test_two_sided_p_against_scipy_binomtest():
    # reference: scipy.stats.binomtest(k, n, p).pvalue (two-sided), relative down to 1e-300
    checked = 0
    for k, n, p in _cases(4, 2500):
        ref = stats.binomtest(k, n, p).pvalue
        ours = binomial.two_sided_p(k, n, p)
        if ref > 1e-300:
            assert ours == pytest.approx(ref, rel=1e-10), (k, n, p)
            checked += 1
        else:
            assert ours < 1e-290
    assert checked > 2000


def _exact_two_sided(k: int, n: int, p: Fraction) -> Fraction:
    probs = [math.comb(n, x) * p**x * (1 - p) ** (n - x) for x in range(n + 1)]
    return sum((q for q in probs if q <= probs[k]), Fraction(0))


@pytest.mark.parametrize("n", [1, 2, 5, 12, 25, 40])
def test_two_sided_p_exact_small_n(n):
    # the definition itself in exact rationals (standard library): the sum of the
    # probabilities of all outcomes no more likely than the observed one. Exact ties (n = 2,
    # p = 1/3: P(0) = P(1) = 4/9) count as "no more likely", as the 1e-7 allowance makes them
    # count despite rounding; no two probabilities here are within 1e-7 without being equal.
    for p in (Fraction(1, 3), Fraction(2, 7)):
        for k in range(n + 1):
            exact = min(Fraction(1), _exact_two_sided(k, n, p))
            assert binomial.two_sided_p(k, n, float(p)) == pytest.approx(float(exact), rel=1e-13)


def test_two_sided_p_symmetric_case_is_twice_the_tail():
    # p = 1/2: the distribution is symmetric, so the p-value is 2 P(X <= min(k, n - k)), capped
    # at 1 (reference: scipy.stats.binom.cdf)
    for n, k in ((10, 2), (51, 17), (1000, 460), (1000, 540), (20001, 9800)):
        ref = min(1.0, 2 * stats.binom.cdf(min(k, n - k), n, 0.5))
        assert binomial.two_sided_p(k, n, 0.5) == pytest.approx(ref, rel=1e-11)


def test_two_sided_p_edges():
    # k at the mean gives 1; p = 0 or 1 and out-of-range input (reference: scipy.stats.binomtest)
    assert binomial.two_sided_p(5, 10, 0.5) == 1.0
    assert binomial.two_sided_p(0, 10, 0.0) == stats.binomtest(0, 10, 0.0).pvalue
    assert binomial.two_sided_p(10, 10, 1.0) == stats.binomtest(10, 10, 1.0).pvalue
    assert binomial.two_sided_p(0, 3000, 0.2) == pytest.approx(
        stats.binomtest(0, 3000, 0.2).pvalue, rel=1e-10
    )
    assert binomial.two_sided_p(3000, 3000, 0.999) == pytest.approx(
        stats.binomtest(3000, 3000, 0.999).pvalue, rel=1e-10
    )
    for k, n, p in ((-1, 5, 0.5), (6, 5, 0.5), (1, 0, 0.5), (1, 5, 1.5)):
        assert math.isnan(binomial.two_sided_p(k, n, p))
