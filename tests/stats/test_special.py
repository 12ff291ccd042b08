"""Gamma ratio and Student's t tail (steadyline.stats.special) against scipy.special and
scipy.stats, and against closed forms."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import special, stats

from steadyline.stats import special as S


@pytest.mark.parametrize("z", [0.5, 1.0, 2.5, 9.5, 9.999, 10.0, 10.5, 17.25, 60.0, 250.0])
@pytest.mark.parametrize("s", [0.5, 1.0, 0.25])
def test_log_gamma_ratio_against_scipy_gammaln(z, s):
    # reference: scipy.special.gammaln; its difference of two values near z ln z carries an
    # absolute error of about 1e-16 * z ln z, hence the tolerance
    ref = special.gammaln(z + s) - special.gammaln(z)
    assert S.log_gamma_ratio(z, s) == pytest.approx(
        ref, rel=1e-13, abs=4e-16 * (1 + z * math.log(z + 1))
    )


@pytest.mark.parametrize("z", [10.0, 33.3, 1e3, 1e5, 1e8, 1e12])
def test_log_gamma_ratio_recurrence(z):
    # Gamma(z + 1) = z Gamma(z) (Abramowitz & Stegun 6.1.15, from memory): the two half steps add up to ln z;
    # at large z this is a sharper check than any difference of gammaln values
    two_halves = S.log_gamma_ratio(z, 0.5) + S.log_gamma_ratio(z + 0.5, 0.5)
    assert two_halves == pytest.approx(math.log(z), rel=2e-15)
    assert S.log_gamma_ratio(z, 1.0) == pytest.approx(math.log(z), rel=2e-15)


def test_log_gamma_ratio_large_z_against_scipy_poch():
    # reference: scipy.special.poch(z, s) = Gamma(z + s) / Gamma(z); scipy's own value is good to
    # about 1e-11 relative at z in the thousands (measured against 40-digit arithmetic), hence
    # the tolerance; the recurrence test above is the sharp check
    for z in (12.0, 150.0, 4321.5, 1e6):
        assert math.exp(S.log_gamma_ratio(z, 0.5)) == pytest.approx(special.poch(z, 0.5), rel=2e-11)


def _random_cases(seed: int, count: int):
    rng = np.random.default_rng(seed)
    df = 10.0 ** rng.uniform(-0.3, 7.3, count)  # 0.5 to 2e7
    t = 10.0 ** rng.uniform(-8, 3.5, count) * rng.choice([-1.0, 1.0], count)
    return t, df


def test_t_two_sided_against_scipy_stdtr():
    # reference: scipy.special.stdtr (Boost's Student t cdf): P(|T| >= |t|) = 2 stdtr(df, -|t|);
    # both sides are compared relatively down to 1e-300 (smaller values may be subnormal)
    t, df = _random_cases(1, 20000)
    ref = 2.0 * special.stdtr(df, -np.abs(t))
    mine = np.array([S.t_two_sided(a, b) for a, b in zip(t, df, strict=True)])
    big = ref > 1e-300
    assert big.sum() > 15000
    np.testing.assert_allclose(mine[big], ref[big], rtol=1e-10)
    assert np.all(mine[~big] < 1e-290)


@pytest.mark.parametrize(
    "t, df",
    [
        (1e-12, 3.0),
        (0.3, 0.6),
        (50.0, 0.7),
        (1e4, 1.0),
        (1e150, 2.0),
        (2.0, 19.999),
        (2.0, 20.0),
        (1.3, 20.5),
        (2.7, 2000.0),
        (5.0, 2000.0),
        (0.01, 1e6),
        (4.0, 1e6),
        (9.0, 1e6),
        (1.96, 1e9),
        (3.0, 3e7),
        (40.0, 3e3),
        (60.0, 1e5),
        (8.0, 7.5),
    ],
)
def test_t_two_sided_edge_cases(t, df):
    # reference: scipy.stats.t.sf, two-sided; covers both sides of every switch in the method
    # (expansion from df = 20 while t^2/df <= e - 1; continued fraction otherwise)
    ref = 2.0 * stats.t.sf(abs(t), df)
    assert S.t_two_sided(t, df) == pytest.approx(ref, rel=1e-10)
    assert S.t_two_sided(-t, df) == S.t_two_sided(t, df)


def test_t_two_sided_closed_forms():
    # df = 1 is the Cauchy distribution: P(|T| >= t) = 1 - (2/pi) atan t; df = 2:
    # P(|T| >= t) = 1 - t / sqrt(2 + t^2) (standard results; reference: scipy.stats.cauchy)
    for t in (1e-6, 0.1, 1.0, 3.0, 12.7, 1e3, 1e200):
        assert S.t_two_sided(t, 1.0) == pytest.approx(2 * stats.cauchy.sf(t), rel=1e-12)
        exact2 = 2.0 / (math.sqrt(2.0 + t * t) * (math.sqrt(2.0 + t * t) + t))  # 1 - t/sqrt(2+t^2)
        assert S.t_two_sided(t, 2.0) == pytest.approx(exact2, rel=1e-12)


def test_t_two_sided_limits_and_invalid_input():
    # t = 0 leaves all probability; the normal limit for infinite df (reference: scipy.stats.norm)
    assert S.t_two_sided(0.0, 5.0) == 1.0
    assert S.t_two_sided(math.inf, 5.0) == 0.0
    assert S.t_two_sided(1.96, math.inf) == pytest.approx(2 * stats.norm.sf(1.96), rel=1e-13)
    assert S.t_two_sided(1.96, 1e12) == pytest.approx(2 * stats.norm.sf(1.96), rel=1e-10)
    for t, df in ((math.nan, 3.0), (1.0, math.nan), (1.0, 0.0), (1.0, -2.0)):
        assert math.isnan(S.t_two_sided(t, df))
