"""The scipy-free normal distribution (steadyline.stats.normal) against scipy.stats.norm and
scipy.special, which remain the reference."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import special, stats

from steadyline.stats import normal


def _grid() -> np.ndarray:
    rng = np.random.default_rng(20240611)
    return np.concatenate(
        [
            np.linspace(-37.5, 37.5, 3001),
            rng.normal(0, 3, 3000),
            rng.uniform(-37.5, 37.5, 3000),
            [0.0, -0.0, 1e-300, -1e-300, 5e-324],
        ]
    )


def test_cdf_and_sf_match_scipy():
    # reference: scipy.stats.norm.cdf / sf. Both sides compute erfc(x / sqrt 2), whose
    # relative condition number is about x^2, so the agreement is 1e-13 only up to |x| ~ 20
    # and loosens to ~1e-11 near 37 (where cdf is ~1e-300).
    x = _grid()
    mine_cdf = np.array([normal.cdf(v) for v in x])
    mine_sf = np.array([normal.sf(v) for v in x])
    tol = np.maximum(1e-13, 2e-16 * x**2)
    ref_cdf, ref_sf = stats.norm.cdf(x), stats.norm.sf(x)
    assert np.all(np.abs(mine_cdf - ref_cdf) <= tol * ref_cdf)
    assert np.all(np.abs(mine_sf - ref_sf) <= tol * ref_sf)
    assert normal.cdf(math.inf) == 1.0 and normal.cdf(-math.inf) == 0.0
    assert normal.sf(math.inf) == 0.0 and normal.sf(-math.inf) == 1.0
    assert math.isnan(normal.cdf(math.nan))


def test_ppf_matches_scipy():
    # reference: scipy.stats.norm.ppf (scipy.special.ndtri)
    rng = np.random.default_rng(7)
    p = np.concatenate(
        [
            rng.uniform(0, 1, 4000),
            10.0 ** rng.uniform(-300, -1, 2000),
            1.0 - 10.0 ** rng.uniform(-15, -1, 500),
            [0.5, 0.95, 0.975, 0.995, 0.05, 0.025, 1e-300, 5e-324],
        ]
    )
    mine = np.array([normal.ppf(v) for v in p])
    ref = stats.norm.ppf(p)
    # at p = 5e-324 (the smallest float) both are limited by the subnormal, so allow 1e-12 there
    tol = np.where(p < 1e-307, 1e-12, 4e-15)
    assert np.all(np.abs(mine - ref) <= tol * np.maximum(np.abs(ref), 1e-300))
    assert normal.ppf(0.0) == -math.inf and normal.ppf(1.0) == math.inf
    assert normal.ppf(0.5) == 0.0
    assert math.isnan(normal.ppf(-0.1)) and math.isnan(normal.ppf(1.5))
    assert math.isnan(normal.ppf(math.nan))


def test_ppf_inverts_cdf():
    # round trip: cdf(ppf(p)) = p (the definition of the quantile function)
    for p in (1e-200, 1e-10, 0.001, 0.05, 0.3, 0.5, 0.7, 0.95, 0.999):
        assert normal.cdf(normal.ppf(p)) == pytest.approx(p, rel=1e-13)


def test_pdf_is_scipys_to_the_last_bit():
    # reference: scipy.stats.norm.pdf (the same arithmetic, so the same floats)
    x = np.linspace(-60.0, 80.0, 5001)
    for loc, scale in ((0.0, 1.0), (10.0, 2.5), (-3.3, 0.01), (1e6, 1e3)):
        xs = loc + scale * x / 10
        np.testing.assert_array_equal(normal.pdf(xs, loc, scale), stats.norm.pdf(xs, loc, scale))
    assert normal.pdf(0.0) == pytest.approx(1 / math.sqrt(2 * math.pi), rel=1e-16)


def _log_grid() -> np.ndarray:
    rng = np.random.default_rng(99)
    return np.concatenate(
        [
            np.linspace(-60.0, 40.0, 4001),
            -(10.0 ** rng.uniform(0, 8, 1500)),  # far lower tail, asymptotic series
            rng.normal(0, 4, 2000),
            [
                normal.ASYMPTOTIC_BELOW,
                np.nextafter(normal.ASYMPTOTIC_BELOW, 0.0),
                np.nextafter(normal.ASYMPTOTIC_BELOW, -1.0),
                0.0,
                -1e-300,
                1e-300,
                1e300,
                -1e300,
            ],
        ]
    )


def _close(mine: np.ndarray, ref: np.ndarray, z: np.ndarray) -> bool:
    """Relative agreement max(2e-15, 2e-16 z^2): log Phi(z) for z > 0 is about -sf(z), which
    inherits the z^2 condition of erfc; values below 1e-300 (subnormal sf) compare absolutely;
    infinities must match exactly."""
    inf = np.isinf(ref)
    if not np.array_equal(mine[inf], ref[inf]):
        return False
    z, mine, ref = z[~inf], mine[~inf], ref[~inf]
    tol = np.maximum(2e-15, 2e-16 * np.minimum(z * z, 1e4)) * np.abs(ref)
    return bool(np.all(np.abs(mine - ref) <= np.maximum(tol, 1e-300)))


def test_logcdf_and_logsf_match_scipy():
    # reference: scipy.special.log_ndtr (what scipy.stats.norm.logcdf / logsf call)
    z = _log_grid()
    assert z.size <= normal.LOOP_MAX  # the pure-Python path
    with np.errstate(over="ignore"):
        assert _close(normal.logcdf(z), special.log_ndtr(z), z)
        assert _close(normal.logsf(z), special.log_ndtr(-z), z)
    # far in the lower tail the asymptotic series is in use: log Phi(z) ~ -z^2/2 - ln(-z sqrt(2 pi))
    # (Abramowitz & Stegun 26.2.12, leading term; from memory)
    zz = np.array([-1e3, -1e5])
    lead = -(zz**2) / 2 - np.log(-zz * math.sqrt(2 * math.pi))
    np.testing.assert_allclose(normal.logcdf(zz), lead, rtol=1e-6)


def test_logcdf_edges_and_shape():
    # log Phi(-inf) = -inf, log Phi(inf) = 0, nan stays nan (reference: scipy.special.log_ndtr)
    out = normal.logcdf(np.array([-np.inf, np.inf, np.nan]))
    assert out[0] == -np.inf and out[1] == 0.0 and np.isnan(out[2])
    grid = np.linspace(-5, 5, 12).reshape(3, 4)
    assert normal.logcdf(grid).shape == (3, 4)
    np.testing.assert_allclose(normal.logcdf(grid), special.log_ndtr(grid), rtol=1e-14)


def test_logcdf_long_arrays_take_the_vectorised_path_and_agree():
    # Above LOOP_MAX values scipy.special.log_ndtr is used; the two paths agree with each other
    # (reference: scipy.special.log_ndtr) so the switch cannot move a result.
    rng = np.random.default_rng(5)
    z = np.concatenate([rng.normal(0, 5, normal.LOOP_MAX + 1000), [-25.0, -1e4]])
    long_path = normal.logcdf(z)
    short_path = np.concatenate([normal.logcdf(part) for part in np.array_split(z, 4)])
    assert all(len(part) <= normal.LOOP_MAX for part in np.array_split(z, 4))
    np.testing.assert_array_equal(long_path, special.log_ndtr(z))
    assert _close(short_path, long_path, z)
