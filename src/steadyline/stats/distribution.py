"""Distribution displays: box-plot summary, histogram binning and the Anderson–Darling test.

Missing values (nan) are left out; infinite values are an error. Positions reported (outlier
indices) are 0-based positions in the input sequence, missing values included.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Literal, cast

import numpy as np

from . import normal
from .codes import HISTOGRAM_RULES, QUARTILE_METHODS
from .results import BoxSummary, Histogram, NormalityTest, StatsError

# numpy's own names of the Hyndman & Fan methods (every quartile method but "tukey-hinges")
_NumpyQuantileMethod = Literal[
    "inverted_cdf",
    "averaged_inverted_cdf",
    "closest_observation",
    "interpolated_inverted_cdf",
    "hazen",
    "weibull",
    "linear",
    "median_unbiased",
    "normal_unbiased",
]

# The D'Agostino & Stephens small-sample adjustment is given for n >= 8 (from memory).
AD_MIN_POINTS = 8


def _finite(values: Sequence[float] | np.ndarray, what: str) -> tuple[np.ndarray, np.ndarray]:
    """Return (finite values, their positions); nan is dropped, inf is an error."""
    x = np.asarray(values, dtype=float)
    if x.ndim != 1:
        raise StatsError(f"{what} needs a one-dimensional sequence of values")
    if np.isinf(x).any():
        raise StatsError(f"{what} needs finite values, got an infinite value")
    pos = np.flatnonzero(~np.isnan(x))
    return x[pos], pos


def tukey_hinges(sorted_x: np.ndarray) -> tuple[float, float, float]:
    """Lower hinge, median, upper hinge of sorted data (median in both halves when n is odd)."""
    n = len(sorted_x)
    lower = sorted_x[: (n + 1) // 2]
    upper = sorted_x[n // 2 :]
    return float(np.median(lower)), float(np.median(sorted_x)), float(np.median(upper))


def box_summary(values: Sequence[float] | np.ndarray, method: str = "linear") -> BoxSummary:
    """Five-number summary with Tukey fences.

    Quartiles come from ``numpy.quantile(method=...)`` (the Hyndman & Fan types listed in
    :data:`QUARTILE_METHODS`) or from Tukey's hinges (``method="tukey-hinges"``).
    Inner fences at 1.5 x IQR beyond the quartiles; whiskers end at the most extreme data
    points inside the inner fences; points strictly beyond them are outliers, and those
    strictly beyond 3 x IQR are also "far out".
    """
    if method not in QUARTILE_METHODS:
        raise StatsError(
            f"unknown quartile method {method!r}; choose one of {', '.join(QUARTILE_METHODS)}"
        )
    x, pos = _finite(values, "a box plot")
    n = len(x)
    if n == 0:
        raise StatsError("a box plot needs at least one data point, got none")
    if method == "tukey-hinges":
        q1, med, q3 = tukey_hinges(np.sort(x))
    else:
        # numpy's stubs name its methods as literals; ``method`` is one of them (checked above)
        how = cast(_NumpyQuantileMethod, method)
        q1, med, q3 = (float(v) for v in np.quantile(x, [0.25, 0.5, 0.75], method=how))
    iqr = q3 - q1
    lo_f, hi_f = q1 - 1.5 * iqr, q3 + 1.5 * iqr
    lo_far, hi_far = q1 - 3.0 * iqr, q3 + 3.0 * iqr
    inside = (x >= lo_f) & (x <= hi_f)
    out = ~inside
    far = (x < lo_far) | (x > hi_far)
    return BoxSummary(
        method=method,
        method_label=QUARTILE_METHODS[method],
        n=int(n),
        mean=float(np.mean(x)),
        q1=q1,
        median=med,
        q3=q3,
        iqr=float(iqr),
        lower_fence=float(lo_f),
        upper_fence=float(hi_f),
        whisker_low=float(x[inside].min()),
        whisker_high=float(x[inside].max()),
        outlier_indices=tuple(int(i) for i in pos[out]),
        outlier_values=tuple(float(v) for v in x[out]),
        far_out_indices=tuple(int(i) for i in pos[far]),
        minimum=float(x.min()),
        maximum=float(x.max()),
    )


MAX_NAMED_BINS = 500  # our guard: beyond this a named rule falls back to Sturges


def _fd_bins_needed(x: np.ndarray) -> int:
    """Number of bins the Freedman–Diaconis width would give, without allocating them."""
    q1, q3 = np.percentile(x, [25, 75])
    width = 2.0 * float(q3 - q1) * len(x) ** (-1 / 3)  # a float: a huge ratio is inf, no warning
    if not width > 0:
        return 1
    k = (float(x.max()) - float(x.min())) / width
    if not math.isfinite(k):  # a subnormal width: far more bins than any guard allows
        return 10**15
    return int(min(math.ceil(k), 10**15))


def histogram(
    values: Sequence[float] | np.ndarray,
    rule: str | Sequence[float] = "fd",
) -> Histogram:
    """Bin the values with a named rule or with explicit bin edges.

    Named rules ("fd", "sturges", "scott", and numpy's other names) use
    ``numpy.histogram_bin_edges``: equal-width bins, the realised width being range / k.
    Explicit edges must be strictly increasing; points outside them are counted in
    ``below_range`` / ``above_range``. As in numpy, bins are half-open [a, b) except the last,
    which includes its right edge.

    Degenerate data with zero range (all values equal) get one bin of width 1 centred on the
    value, whatever the rule (numpy's convention). When "fd" (or "auto") would need more than
    500 bins — most values packed into a tiny interval with a few far away — Sturges is used
    instead and ``rule`` / ``rule_label`` say so.
    """
    x, _ = _finite(values, "a histogram")
    n = len(x)
    if n == 0:
        raise StatsError("a histogram needs at least one data point, got none")
    below = above = 0
    if isinstance(rule, str):
        if rule not in HISTOGRAM_RULES or rule == "edges":
            raise StatsError(
                f"unknown histogram rule {rule!r}; choose 'fd', 'sturges', 'scott' or give edges"
            )
        rule_key = rule
        label = HISTOGRAM_RULES[rule]
        if x.min() == x.max():
            v = float(x[0])
            edges = np.array([v - 0.5, v + 0.5])
        else:
            too_many = _fd_bins_needed(x) if rule in ("fd", "auto") else 0
            if too_many > MAX_NAMED_BINS:
                rule_key = "sturges"
                label = (
                    f"Sturges ({HISTOGRAM_RULES[rule]} would need {too_many:,} bins because "
                    "most values are packed into a narrow interval)"
                )
            edges = np.histogram_bin_edges(x, bins=rule_key)
        counts, _ = np.histogram(x, bins=edges)
        width: float | None = float(edges[1] - edges[0])
    else:
        edges = np.asarray(rule, dtype=float)
        if edges.ndim != 1 or len(edges) < 2:
            raise StatsError("explicit histogram edges need at least two numbers")
        if not np.all(np.isfinite(edges)) or np.any(np.diff(edges) <= 0):
            raise StatsError("explicit histogram edges must be finite and strictly increasing")
        rule_key = "edges"
        label = HISTOGRAM_RULES[rule_key]
        below = int(np.sum(x < edges[0]))
        above = int(np.sum(x > edges[-1]))
        counts, _ = np.histogram(x, bins=edges)
        d = np.diff(edges)
        width = float(d[0]) if np.allclose(d, d[0], rtol=1e-9, atol=0.0) else None
    return Histogram(
        rule=rule_key,
        rule_label=label,
        edges=tuple(float(e) for e in edges),
        counts=tuple(int(c) for c in counts),
        bin_width=width,
        n=int(n),
        mean=float(np.mean(x)),
        std=float(np.std(x, ddof=1)) if n >= 2 else float("nan"),
        below_range=below,
        above_range=above,
    )


def extend_edges(
    edges: Sequence[float], values: Sequence[float] | np.ndarray, max_bins: int = 100
) -> tuple[float, ...]:
    """Equal-width bin edges extended on the same grid (whole bins of the same width added
    below and above) until they cover every finite value, so that histograms of several groups
    share one set of bins and none leaves values out. The given edges stay as they are, a run
    of the result. Unequal edges, or an extension past ``max_bins`` bins in all, come back
    unchanged (values outside are then counted as out of range, as for explicit edges).

    >>> extend_edges([0.0, 1.0, 2.0], [-1.5, 0.5, 2.2])
    (-2.0, -1.0, 0.0, 1.0, 2.0, 3.0)
    """
    e = np.asarray(edges, dtype=float)
    same = tuple(float(v) for v in e)
    if e.ndim != 1 or len(e) < 2:
        return same
    d = np.diff(e)
    w = float(d[0])
    if not (w > 0 and np.allclose(d, w, rtol=1e-9, atol=0.0)):
        return same
    x = np.asarray(values, dtype=float)
    x = x[np.isfinite(x)]
    if not x.size:
        return same
    lo, hi = float(x.min()), float(x.max())
    k_lo = max(0, math.ceil((e[0] - lo) / w)) if lo < e[0] else 0
    k_hi = max(0, math.ceil((hi - e[-1]) / w)) if hi > e[-1] else 0
    if not (k_lo or k_hi) or len(e) - 1 + k_lo + k_hi > max_bins:
        return same
    below = e[0] - w * np.arange(k_lo, 0, -1)
    above = e[-1] + w * np.arange(1, k_hi + 1)
    out = np.concatenate([below, e, above])
    # rounding of the added edges: a value a hair outside still falls inside the last bin
    if out[0] > lo:
        out[0] = lo
    if out[-1] < hi:
        out[-1] = hi
    return tuple(float(v) for v in out)


def normal_curve(hist: Histogram, points: int = 200) -> tuple[np.ndarray, np.ndarray]:
    """A fitted normal curve over the histogram's range, scaled to counts per bin.

    y = n * bin_width * pdf(x; mean, sd), so its area matches the bars. Needs equal-width
    bins and a positive standard deviation.
    """
    if hist.bin_width is None:
        raise StatsError("a normal curve scaled to counts needs bins of equal width")
    if not (hist.n >= 2 and math.isfinite(hist.std) and hist.std > 0):
        raise StatsError("a normal curve needs at least two points that are not all equal")
    if points < 2:
        raise StatsError("a normal curve needs at least two points")
    x = np.linspace(hist.edges[0], hist.edges[-1], int(points))
    y = hist.n * hist.bin_width * normal.pdf(x, loc=hist.mean, scale=hist.std)
    return x, y


# The p-value approximation for case 3 (mean and sigma estimated): D'Agostino & Stephens (1986),
# Table 4.9, four pieces in A*² (coefficients from memory; the tests check them against
# statsmodels' normal_ad, which implements the same table). The last piece,
# exp(1.2937 − 5.709·A*² + 0.0186·A*⁴), has a quadratic exponent whose lowest point is at
# A*² = 5.709 / (2 × 0.0186) = 153.4677…; the range commonly stated with the table for that piece,
# 0.6 ≤ A*² < 153.467 (from memory), ends just there. Past it the formula turns upward (it climbs
# back to 1 at A*² ≈ 307 and overflows a double past A*² ≈ 402), so a clearly non-normal large
# sample would be called normal. The formula is therefore used only below AD_P_MAX_ADJUSTED;
# beyond it the p-value is reported only as below AD_P_FLOOR, the smallest value the
# approximation gives inside its range (about 2e-190).
AD_P_MAX_ADJUSTED = 153.467
_AD_TAIL = (1.2937, -5.709, 0.0186)


def _ad_tail(a: float) -> float:
    c0, c1, c2 = _AD_TAIL
    return math.exp(c0 + c1 * a + c2 * a * a)


AD_P_FLOOR = _ad_tail(AD_P_MAX_ADJUSTED)


def ad_p_value(adjusted: float) -> float | None:
    """p-value for the adjusted statistic A*² (D'Agostino & Stephens 1986, Table 4.9, case 3:
    mean and sigma estimated), or None when A*² is at or past :data:`AD_P_MAX_ADJUSTED`, where
    the approximation no longer applies (the p-value is then below :data:`AD_P_FLOOR`).

    Inside the range every piece gives a value in (0, 1); no clipping is needed.
    """
    a = float(adjusted)
    if not a < AD_P_MAX_ADJUSTED:  # also catches nan
        return None
    if a >= 0.6:
        return _ad_tail(a)
    if a >= 0.34:
        return math.exp(0.9177 - 4.279 * a - 1.38 * a * a)
    if a >= 0.2:
        return 1.0 - math.exp(-8.318 + 42.796 * a - 59.938 * a * a)
    return 1.0 - math.exp(-13.436 + 101.14 * a - 223.73 * a * a)


def p_below_text(bound: float) -> str:
    """The words for a p-value known only to be below *bound* (the same on every page)."""
    return f"p below {bound:.1g}, the smallest p-value the approximation gives"


def anderson_darling(values: Sequence[float] | np.ndarray) -> NormalityTest:
    """Anderson–Darling test of normality with mean and sigma estimated (Stephens' case 3).

    A² = −n − (1/n) Σ (2i−1)[ln Φ(z₍ᵢ₎) + ln(1 − Φ(z₍ₙ₊₁₋ᵢ₎))], z from the sample mean and the
    n−1 standard deviation; A*² = A²(1 + 0.75/n + 2.25/n²); p-value from the D'Agostino &
    Stephens piecewise formula. Requires at least 8 values that are not all equal.

    When A*² is past the range of the p-value approximation (:data:`AD_P_MAX_ADJUSTED`, reached
    by clearly non-normal samples of a few hundred values or more), ``p_value`` is None and
    ``p_below`` holds :data:`AD_P_FLOOR`: the p-value is smaller than that, and the values are
    not consistent with a normal distribution at the 5% level.
    """
    x, _ = _finite(values, "a normality test")
    n = len(x)
    if n < AD_MIN_POINTS:
        raise StatsError(
            f"the Anderson–Darling normality test needs at least {AD_MIN_POINTS} values, got {n}"
        )
    s = float(np.std(x, ddof=1))
    if not s > 0:
        raise StatsError(
            "the Anderson–Darling normality test needs values that are not all equal "
            "(the standard deviation is zero)"
        )
    z = (np.sort(x) - np.mean(x)) / s
    i = np.arange(1, n + 1)
    a2 = -n - np.sum((2 * i - 1) * (normal.logcdf(z) + normal.logsf(z[::-1]))) / n
    a2 = float(a2)
    adj = a2 * (1.0 + 0.75 / n + 2.25 / n**2)
    p = ad_p_value(adj)
    return NormalityTest(
        statistic=a2,
        adjusted=float(adj),
        p_value=p,
        n=int(n),
        normal_at_5pct=p is not None and p >= 0.05,
        p_below=AD_P_FLOOR if p is None else None,
    )
