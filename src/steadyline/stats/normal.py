"""The standard normal distribution without importing scipy.

Importing ``scipy.stats`` takes most of a second and ``scipy.special`` about a third of one, more
than a rebuild of one project may spend in all. The few normal-distribution values the common
statistics need are computed here from the standard library and numpy; the tests check them
against ``scipy.stats.norm`` and ``scipy.special`` (tests/stats/test_normal.py).

- ``cdf(x) = erfc(-x / sqrt 2) / 2`` and ``sf(x) = erfc(x / sqrt 2) / 2``: ``math.erfc`` keeps
  its relative precision far into either tail, where ``1 - erf`` would cancel.
- ``ppf(p)``: Wichura's algorithm AS 241 (*Applied Statistics* 37:477-484, 1988; citation from
  memory, the algorithm's name from the standard library's documentation), as the standard
  library's ``statistics.NormalDist.inv_cdf`` implements it, followed by one Newton step on the
  smaller of p and 1 - p, which removes most of the last-digit error left by the rational
  approximation.
- ``pdf(x, loc, scale)``: exp(-z^2/2) / sqrt(2 pi) / scale with numpy, the same arithmetic as
  ``scipy.stats.norm.pdf`` (so equal to the last bit).
- ``logcdf(z)`` / ``logsf(z)`` on arrays: log(cdf) in the middle, ``log1p(-sf)`` above zero, and
  below ``ASYMPTOTIC_BELOW`` the asymptotic series
  ``log Phi(x) = -x^2/2 - log(-x) - log(2 pi)/2 + log(1 - 1/x^2 + 1*3/x^4 - 1*3*5/x^6 + ...)``
  (Abramowitz & Stegun 26.2.12, from memory), where ``erfc`` would underflow. Up to
  ``LOOP_MAX`` values ``math.erfc`` is applied value by value (a few milliseconds); longer
  arrays call ``scipy.special.log_ndtr``, whose import cost is then small beside the work.

Agreement with scipy is to within a few units in the last place near the centre; in the tails
both are limited by the rounding of x / sqrt 2, whose effect on erfc grows like x^2, so the
relative agreement of cdf and sf is 1e-13 or better for |x| < 20 and about 1e-11 towards
|x| = 37, where the tail probability nears the smallest floats. The two libraries use different
``erfc`` implementations, so single values are not always equal to the last bit.
"""

from __future__ import annotations

import math
from statistics import NormalDist

import numpy as np

from ._lazy import lazy

_special = lazy("scipy.special")

_SQRT1_2 = math.sqrt(0.5)
_LOG_SQRT_2PI = 0.5 * math.log(2.0 * math.pi)
_SQRT_2PI = np.sqrt(2 * np.pi)  # the constant scipy.stats.norm.pdf divides by
_STANDARD = NormalDist()

# Below this z the log-cdf uses the asymptotic series (it converges to full precision there:
# the terms fall below 1e-16 of the sum long before they start to grow).
ASYMPTOTIC_BELOW = -20.0
# Arrays longer than this go to scipy.special.log_ndtr (vectorised) instead of a Python loop.
LOOP_MAX = 20_000


def cdf(x: float) -> float:
    """P(Z <= x) for a standard normal Z."""
    return 0.5 * math.erfc(-x * _SQRT1_2)


def sf(x: float) -> float:
    """P(Z > x) = 1 - cdf(x), accurate for large x."""
    return 0.5 * math.erfc(x * _SQRT1_2)


def _pdf1(z: float) -> float:
    return math.exp(-0.5 * z * z) / _SQRT_2PI


def ppf(p: float) -> float:
    """The x with cdf(x) = p (the quantile function); -inf at 0, inf at 1, nan outside [0, 1]."""
    p = float(p)
    if not 0.0 <= p <= 1.0:
        return math.nan
    if p == 0.0:
        return -math.inf
    if p == 1.0:
        return math.inf
    z = _STANDARD.inv_cdf(p)
    # One Newton step on the smaller tail probability, which cdf / sf give to full relative
    # precision (1 - p is exact for p >= 1/2).
    dens = _pdf1(z)
    if dens == 0.0 or not math.isfinite(z):
        return z
    if p < 0.5:
        return z - (cdf(z) - p) / dens
    return z + (sf(z) - (1.0 - p)) / dens


def pdf(x, loc: float = 0.0, scale: float = 1.0) -> np.ndarray:
    """Density of N(loc, scale^2) at x (array or scalar); scale must be positive."""
    z = np.asarray((np.asarray(x, dtype=float) - loc) / scale, dtype=float)
    return np.exp(-(z**2) / 2.0) / _SQRT_2PI / scale


_ERFC = np.frompyfunc(math.erfc, 1, 1)


def _erfc(x: np.ndarray) -> np.ndarray:
    """math.erfc elementwise over a float array."""
    if x.size == 0:
        return np.zeros(0)
    return _ERFC(x).astype(float)


def _logcdf1(x: float) -> float:
    if x > 0.0:
        return math.log1p(-0.5 * math.erfc(x * _SQRT1_2))
    if x > ASYMPTOTIC_BELOW:
        return math.log(0.5 * math.erfc(-x * _SQRT1_2))
    if x != x:
        return math.nan
    if x == -math.inf:
        return -math.inf
    # 1 - 1/x^2 + 3/x^4 - 15/x^6 + ...: the k-th term is (-1)^k (2k-1)!! / x^(2k)
    inv2 = 1.0 / (x * x)
    term = 1.0
    rest = 0.0
    k = 0
    while True:
        k += 1
        term *= -(2 * k - 1) * inv2
        rest += term
        if abs(term) <= 1e-17 * (1.0 + rest):
            break
    return -0.5 * x * x - math.log(-x) - _LOG_SQRT_2PI + math.log1p(rest)


def logcdf(z) -> np.ndarray:
    """log P(Z <= z) elementwise, accurate in both tails (array in, float array out)."""
    a = np.asarray(z, dtype=float)
    if a.size > LOOP_MAX:
        return np.asarray(_special.log_ndtr(a), dtype=float)
    flat = a.ravel()
    out = np.empty(flat.shape, dtype=float)
    # the two common branches of _logcdf1 for the whole array at once (math.erfc per value,
    # called from numpy's loop), the far lower tail and nan one by one
    upper = flat > 0.0
    middle = ~upper & (flat > ASYMPTOTIC_BELOW)
    out[upper] = np.log1p(-0.5 * _erfc(flat[upper] * _SQRT1_2))
    out[middle] = np.log(0.5 * _erfc(-flat[middle] * _SQRT1_2))
    rest = np.flatnonzero(~upper & ~middle)
    if rest.size:
        out[rest] = [_logcdf1(v) for v in flat[rest].tolist()]
    return out.reshape(a.shape)


def logsf(z) -> np.ndarray:
    """log P(Z > z) elementwise (= logcdf(-z) by symmetry)."""
    return logcdf(-np.asarray(z, dtype=float))
