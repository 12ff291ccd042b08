"""How unlikely a run pattern is by chance: the limits the run-chart rules judge against.

Kept apart from the analysis (runs.py) because these are exact probability computations with
their own checks against scipy: the Anhøj crossings limit (the 5th percentile of
Binomial(n_useful - 1, 1/2), exact in integers up to ``EXACT_CROSSINGS_MAX`` trials, scipy.stats
above, imported then), the runs distribution of Swed & Eisenhart (1943) and the Perla runs-count
limits drawn from it (its normal approximation above ``EXACT_RUNS_MAX`` points). The rules
themselves are stated in runs.py.
"""

from __future__ import annotations

import math
from functools import lru_cache

from . import normal
from ._lazy import lazy
from .results import StatsError

_st = lazy("scipy.stats")

# Up to this many trials (n_useful - 1) the crossings limit is found with exact integers; the
# sum runs over about m/2 binomial coefficients of up to m bits (a few milliseconds at 10,000).
EXACT_CROSSINGS_MAX = 10_000
PERLA_RUNS_ALPHA = 0.05  # per tail


@lru_cache(maxsize=256)
def _crossings_limit(m: int) -> int:
    """The smallest c with P(C <= c) >= 1/20 for C ~ Binomial(m, 1/2), i.e. with
    20 * sum_(i <= c) C(m, i) >= 2^m."""
    if m > EXACT_CROSSINGS_MAX:
        return int(_st.binom.ppf(0.05, m, 0.5))
    target = 1 << m  # 2^m
    coeff = 1  # C(m, c)
    total = 1  # sum_(i <= c) C(m, i)
    c = 0
    while 20 * total < target:
        coeff = coeff * (m - c) // (c + 1)
        c += 1
        total += coeff
    return c


def anhoj_limits(n_useful: int) -> tuple[int, int]:
    """Anhøj limits for ``n_useful`` points not on the median.

    Returns ``(longest_run_limit, crossings_min)``: a signal when the longest run is greater
    than ``longest_run_limit``, or when crossings are fewer than ``crossings_min``.
    """
    n = int(n_useful)
    if n < 1:
        raise StatsError(f"the Anhøj limits need at least one point off the median, got {n}")
    longest = int(round(math.log2(n) + 3))
    crossings = _crossings_limit(n - 1)
    return longest, crossings


@lru_cache(maxsize=512)
def runs_distribution(n1: int, n2: int) -> tuple[float, ...]:
    """Exact P(R = r), r = 0..n1+n2, for the number of runs in a random arrangement of
    n1 items of one kind and n2 of another (Swed & Eisenhart 1943)."""
    if n1 < 0 or n2 < 0:
        raise StatsError("group sizes must not be negative")
    total = n1 + n2
    probs = [0.0] * (total + 1)
    if n1 == 0 or n2 == 0:
        if total > 0:
            probs[1] = 1.0
        return tuple(probs)
    denom = math.comb(total, n1)
    for r in range(2, total + 1):
        k, odd = divmod(r, 2)
        if not odd:
            ways = 2 * math.comb(n1 - 1, k - 1) * math.comb(n2 - 1, k - 1)
        else:
            ways = math.comb(n1 - 1, k - 1) * math.comb(n2 - 1, k) + math.comb(
                n1 - 1, k
            ) * math.comb(n2 - 1, k - 1)
        probs[r] = ways / denom
    return tuple(probs)


# Above this many points the exact distribution (big-integer binomials, O(n) terms) is replaced by
# its normal approximation with mean 2·n1·n2/N + 1 and variance 2·n1·n2·(2·n1·n2 − N)/(N²(N − 1))
# (Wald & Wolfowitz 1940, from memory), with a continuity correction; the tests check that both
# agree within one run where they meet.
EXACT_RUNS_MAX = 1000


def _runs_limits_normal(n: int, alpha: float) -> tuple[int, int]:
    n1, n2 = n // 2, n - n // 2
    mean = 2.0 * n1 * n2 / n + 1.0
    var = 2.0 * n1 * n2 * (2.0 * n1 * n2 - n) / (n * n * (n - 1.0))
    sd = math.sqrt(var)
    z = normal.ppf(1.0 - alpha)
    low = max(1, math.floor(mean - 0.5 - z * sd))
    high = min(n + 1, math.ceil(mean + 0.5 + z * sd))
    return low, high


def perla_runs_limits(n: int, alpha: float = PERLA_RUNS_ALPHA) -> tuple[int, int]:
    """Runs-count limits for ``n`` points not on the median, ``alpha`` in each tail.

    Returns ``(low, high)``: too few runs when runs <= low, too many when runs >= high.
    ``low`` is the largest r with P(R <= r) <= alpha and ``high`` the smallest r with
    P(R >= r) <= alpha, for n1 = floor(n/2), n2 = ceil(n/2). When no attainable count is that
    unlikely, the limits fall outside the attainable range (low = 1, high = n + 1), so they can
    never signal for a median split.
    """
    n = int(n)
    if n < 2:
        raise StatsError(f"the runs-count limits need at least two points off the median, got {n}")
    if n > EXACT_RUNS_MAX:
        return _runs_limits_normal(n, alpha)
    probs = runs_distribution(n // 2, n - n // 2)
    eps = 1e-12
    low = 1
    cum = 0.0
    for r in range(0, n + 1):
        cum += probs[r]
        if cum <= alpha + eps:
            low = max(low, r)
        else:
            break
    high = n + 1
    cum = 0.0
    for r in range(n, -1, -1):
        cum += probs[r]
        if cum <= alpha + eps:
            high = r
        else:
            break
    return low, high
