"""The binomial distribution and the exact two-sided binomial test, without importing scipy.

Used by the exact test for two Poisson rates in :mod:`steadyline.stats.compare` (given the total
count, the after-period count is binomial). The tests check every value against
``scipy.stats.binom`` and ``scipy.stats.binomtest`` (tests/stats/test_binomial.py).

- ``pmf(x, n, p)`` by the saddle-point form (Loader 2000, "Fast and accurate computation of
  binomial probabilities", from memory):
  ``P(X = x) = exp(-delta(x) - delta(n - x) + delta(n) - D(x, n p) - D(n - x, n q))
  * sqrt(n / (2 pi x (n - x)))``, with ``delta`` Stirling's error term
  (:func:`steadyline.stats.special.stirling_error`) and ``D(x, M) = x ln(x / M) + M - x``
  summed as ``(x - M) v + 2x (v^3/3 + v^5/5 + ...)``, ``v = (x - M) / (x + M)``, when x is near M
  (the series ln((1 + v) / (1 - v)) = 2 (v + v^3/3 + v^5/5 + ...)), so nothing cancels. It
  keeps about 1e-15 relative precision at any n, where a product of powers or a difference of
  log-gamma values loses digits as n grows.
- Tail sums start at their inner end, whose term comes from ``pmf``, and walk outwards with the
  ratio of neighbouring terms; every term is smaller than the last, and the term is recomputed
  from ``pmf`` every ``_RESYNC`` steps so rounding cannot drift.
- ``two_sided_p(k, n, p)``: the p-value of the exact binomial test, the total probability of
  all outcomes no more likely than the observed one, with the relative tolerance 1e-7 on "no
  more likely" that ``scipy.stats.binomtest`` uses so that probabilities equal but for rounding
  count as equal. For n above ``DIRECT_MAX`` scipy is asked instead (imported then).
"""

from __future__ import annotations

import math

from ._lazy import lazy
from .special import STIRLING_FROM, stirling_error

_st = lazy("scipy.stats")

DIRECT_MAX = 10_000_000  # beyond this many trials the tail walks get long; scipy answers
_RESYNC = 64
_LOG_2PI = math.log(2.0 * math.pi)
_HALF_LOG_2PI = 0.5 * _LOG_2PI
_TIES = 1.0 + 1e-7  # the relative tolerance of scipy.stats.binomtest


def _delta(m: float) -> float:
    """Stirling's error ln(m!) - [(m + 1/2) ln m - m + ln(2 pi) / 2] for m >= 1."""
    if m >= STIRLING_FROM:
        return stirling_error(m)
    return math.lgamma(m + 1.0) - (m + 0.5) * math.log(m) + m - _HALF_LOG_2PI


def _deviance(x: float, mean: float) -> float:
    """x ln(x / mean) + mean - x, without cancellation when x is close to mean."""
    if abs(x - mean) < 0.1 * (x + mean):
        v = (x - mean) / (x + mean)
        total = (x - mean) * v
        term = 2.0 * x * v
        v2 = v * v
        j = 1
        while True:
            term *= v2
            new = total + term / (2 * j + 1)
            if new == total:
                return total
            total = new
            j += 1
    return x * math.log(x / mean) + mean - x


def _pmf(x: int, n: int, p: float, q: float) -> float:
    """P(X = x) for X ~ Binomial(n, p), q = 1 - p given separately (it may be more precise)."""
    if x < 0 or x > n:
        return 0.0
    if p == 0.0:
        return 1.0 if x == 0 else 0.0
    if q == 0.0:
        return 1.0 if x == n else 0.0
    if x == 0:
        return math.pow(q, n)
    if x == n:
        return math.pow(p, n)
    y = n - x
    exponent = _delta(n) - _delta(x) - _delta(y) - _deviance(x, n * p) - _deviance(y, n * q)
    return math.exp(exponent) * math.sqrt(n / (2.0 * math.pi * x * y))


def pmf(x: int, n: int, p: float) -> float:
    """P(X = x) for X ~ Binomial(n, p)."""
    return _pmf(int(x), int(n), float(p), 1.0 - float(p))


def _lower_tail(k: int, n: int, p: float, q: float) -> float:
    """P(X <= k), summed from k down to 0."""
    if k < 0:
        return 0.0
    if k >= n:
        return 1.0
    ratio = q / p  # P(X = i - 1) / P(X = i) = i / (n - i + 1) * q / p
    term = _pmf(k, n, p, q)
    total = term
    i = k
    steps = 0
    while i > 0 and term > 1e-17 * total:
        term *= i / (n - i + 1) * ratio
        i -= 1
        steps += 1
        if steps % _RESYNC == 0:
            term = _pmf(i, n, p, q)
        total += term
    return total


def _upper_tail(k: int, n: int, p: float, q: float) -> float:
    """P(X >= k), summed from k up to n."""
    if k <= 0:
        return 1.0
    if k > n:
        return 0.0
    ratio = p / q  # P(X = i + 1) / P(X = i) = (n - i) / (i + 1) * p / q
    term = _pmf(k, n, p, q)
    total = term
    i = k
    steps = 0
    while i < n and term > 1e-17 * total:
        term *= (n - i) / (i + 1) * ratio
        i += 1
        steps += 1
        if steps % _RESYNC == 0:
            term = _pmf(i, n, p, q)
        total += term
    return total


def two_sided_p(k: int, n: int, p: float, q: float | None = None) -> float:
    """Exact two-sided binomial test of k successes in n trials against success probability p.

    The p-value sums P(X = x) over every x with P(X = x) <= P(X = k) (1 + 1e-7). The other tail
    is found by bisection, using that the probabilities fall monotonically away from the mode.
    ``q`` (= 1 - p) may be given when it is known more precisely than 1 - p.
    """
    k, n, p = int(k), int(n), float(p)
    q = 1.0 - p if q is None else float(q)
    if n < 1 or not 0 <= k <= n or not 0.0 <= p <= 1.0:
        return math.nan
    if n > DIRECT_MAX or p in (0.0, 1.0):
        return float(_st.binomtest(k, n, p).pvalue)
    limit = _pmf(k, n, p, q) * _TIES
    mean = p * n
    if k == mean:
        return 1.0
    if k < mean:
        # the first x >= ceil(mean) whose probability is at most the limit (n + 1 if none)
        lo, hi = math.ceil(mean), n + 1
        while lo < hi:
            mid = (lo + hi) // 2
            if _pmf(mid, n, p, q) <= limit:
                hi = mid
            else:
                lo = mid + 1
        total = _lower_tail(k, n, p, q) + _upper_tail(lo, n, p, q)
    else:
        # the last x <= floor(mean) whose probability is at most the limit (-1 if none)
        lo, hi = -1, math.floor(mean)
        while lo < hi:
            mid = (lo + hi + 1) // 2
            if _pmf(mid, n, p, q) <= limit:
                lo = mid
            else:
                hi = mid - 1
        total = _lower_tail(lo, n, p, q) + _upper_tail(k, n, p, q)
    return min(1.0, total)
