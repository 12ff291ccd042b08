"""Baseline versus after: how much did the metric change, and could chance explain it?

Tests (all two-sided):
- ``continuous``: Welch's t-test on the means (Welch 1947) when each period either has at least
  30 values (common practice: the mean is then close to normally distributed) or passes the
  Anderson–Darling test at 5% (which needs at least 8 values); otherwise the Mann–Whitney U
  test (scipy's default exact/asymptotic choice) with the medians as the measure.
  Welch's test is computed here (:func:`welch_t_test`, the same arithmetic as
  ``scipy.stats.ttest_ind(equal_var=False)``, with the t tail from
  :func:`steadyline.stats.special.t_two_sided`), so the common path needs no scipy; only the
  Mann–Whitney test imports scipy.stats, when it is used.
- ``defectives``: two-proportion z-test with the pooled proportion, on (Σd, Σn) per period.
  ``baseline`` / ``after`` are defective counts; ``baseline_sizes`` / ``after_sizes`` the
  numbers inspected.
- ``defects``: exact conditional test for two Poisson rates: given the total count C, the
  after-period count is Binomial(C, e_after / (e_baseline + e_after)) under equal rates; the
  two-sided p-value sums the probabilities no larger than that of the observed count
  (as scipy.stats.binomtest; computed by :func:`steadyline.stats.binomial.two_sided_p`).
  ``baseline_sizes`` / ``after_sizes`` are the areas of opportunity (units, hours...), 1 per
  value when not given.

``statistic`` is signed as after minus baseline where it has a sign (t, z); for
Mann–Whitney it is U of the after period; for the exact rate test it is the rate ratio
after / baseline.

``improved`` reports direction only (lower / higher as wanted, or closer to the target);
whether chance could explain the change is said by the p-value and the sentence.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from . import binomial, normal
from ._lazy import lazy
from .codes import CHARTED_TYPES, Better
from .distribution import AD_MIN_POINTS, anderson_darling
from .results import Comparison, StatsError
from .special import t_two_sided

_st = lazy("scipy.stats")

DATA_TYPES = CHARTED_TYPES
BETTER = tuple(b.value for b in Better)
LARGE_SAMPLE = 30  # common practice
ALPHA = 0.05


def format_p_value(p: float | None) -> str:
    """'p < 0.001', 'p = 0.004', 'p = 0.049', 'p = 0.23', 'p > 0.99'; 'no p-value' for None."""
    if p is None or not math.isfinite(p):
        return "no p-value"
    if p < 0.001:
        return "p < 0.001"
    if p < 0.1:
        return f"p = {p:.3f}"
    if p > 0.99:
        return "p > 0.99"
    return f"p = {p:.2f}"


def _fmt(v: float) -> str:
    """A number for a sentence: 4 significant figures, no trailing zeros, unicode minus."""
    if v == 0:
        return "0"
    digits = max(0, 3 - int(math.floor(math.log10(abs(v)))))
    s = f"{v:,.{digits}f}"
    if "." in s:
        s = s.rstrip("0").rstrip(".")
    return s.replace("-", "\u2212")


def _fmt_pct(v: float) -> str:
    s = f"{v:.1f}" if abs(v) < 10 else f"{v:.0f}"
    if s.endswith(".0"):
        s = s[:-2]
    return s.replace("-", "\u2212")


def _signed_pct(v: float) -> str:
    s = _fmt_pct(v)
    return s if s.startswith("\u2212") or s == "0" else "+" + s


def _array(values: Sequence[float] | np.ndarray, what: str) -> np.ndarray:
    x = np.asarray(values, dtype=float)
    if x.ndim != 1:
        raise StatsError(f"the {what} values must be a one-dimensional sequence")
    if np.isinf(x).any():
        raise StatsError(f"the {what} values must be finite")
    return x[~np.isnan(x)]


def welch_t_test(a: np.ndarray, b: np.ndarray) -> tuple[float, float, float]:
    """Welch's t-test of mean(a) - mean(b): returns (t, two-sided p, degrees of freedom).

    t = (mean a - mean b) / sqrt(v_a/n_a + v_b/n_b) with the n - 1 variances and
    df = (v_a/n_a + v_b/n_b)^2 / ((v_a/n_a)^2/(n_a - 1) + (v_b/n_b)^2/(n_b - 1)) (Welch 1947;
    Satterthwaite 1946). Each period needs at least two values and one of them some spread.
    """
    a = np.asarray(a, dtype=float)
    b = np.asarray(b, dtype=float)
    na, nb = len(a), len(b)
    ma, mb = np.mean(a), np.mean(b)
    # mean square about the mean times n/(n - 1), in scipy's order of operations
    va = np.mean((a - ma) ** 2) * (np.float64(na) / (na - 1))
    vb = np.mean((b - mb) ** 2) * (np.float64(nb) / (nb - 1))
    vna, vnb = va / na, vb / nb
    df = float((vna + vnb) ** 2 / (vna**2 / (na - 1) + vnb**2 / (nb - 1)))
    t = float((ma - mb) / np.sqrt(vna + vnb))
    return t, t_two_sided(t, df), df


def _looks_normal(x: np.ndarray) -> bool:
    if len(x) < AD_MIN_POINTS:
        return False
    try:
        return anderson_darling(x).normal_at_5pct
    except StatsError:
        return False


def compare(
    baseline: Sequence[float] | np.ndarray,
    after: Sequence[float] | np.ndarray,
    data_type: str,
    better: str = "lower",
    *,
    baseline_sizes: Sequence[float] | np.ndarray | None = None,
    after_sizes: Sequence[float] | np.ndarray | None = None,
    target: float | None = None,
    metric: str | None = None,
    unit: str = "",
) -> Comparison:
    """Compare the after period with the baseline; see the module docstring for the tests.

    ``metric`` names the measure in the sentence ("weekly error rate"); ``unit`` is appended to
    continuous values and rates ("min", "per 1,000 bed-days").
    """
    # One function on purpose: one test chosen by the type of data, then one reading of its
    # result by the direction of better; both halves fill the same Comparison, and the
    # choice of test is easiest to check against the module's table when it is in one place.
    if data_type not in DATA_TYPES:
        raise StatsError(f"unknown data type {data_type!r}; choose one of {', '.join(DATA_TYPES)}")
    if better not in BETTER:
        raise StatsError(f"'better' must be one of {', '.join(BETTER)}, got {better!r}")
    b = _array(baseline, "baseline")
    a = _array(after, "after")
    statistic: float | None
    p: float | None
    if data_type == "continuous":
        if len(b) < 2 or len(a) < 2:
            raise StatsError(
                f"comparing continuous data needs at least two values in each period, got "
                f"{len(b)} and {len(a)}"
            )
        ok_b = len(b) >= LARGE_SAMPLE or _looks_normal(b)
        ok_a = len(a) >= LARGE_SAMPLE or _looks_normal(a)
        if ok_b and ok_a:
            measure, test = "mean", "Welch's t-test"
            vb, va = float(np.mean(b)), float(np.mean(a))
            if np.std(b) == 0 and np.std(a) == 0:
                statistic = p = None
            else:
                statistic, p, _ = welch_t_test(a, b)
        else:
            measure, test = "median", "Mann–Whitney U test"
            vb, va = float(np.median(b)), float(np.median(a))
            r = _st.mannwhitneyu(a, b, alternative="two-sided")
            statistic, p = float(r.statistic), float(r.pvalue)
            if not math.isfinite(p):
                p = None
        nb, na = len(b), len(a)
    else:
        nb, na = len(b), len(a)
        if nb == 0 or na == 0:
            raise StatsError("each period needs at least one count to compare")
        if np.any(b < 0) or np.any(a < 0):
            raise StatsError("counts must not be negative")
        sb = _sizes(baseline_sizes, nb, data_type, "baseline")
        sa = _sizes(after_sizes, na, data_type, "after")
        db, da = float(b.sum()), float(a.sum())
        eb, ea = float(sb.sum()), float(sa.sum())
        vb, va = db / eb, da / ea
        if data_type == "defectives":
            if db > eb or da > ea:
                raise StatsError("there cannot be more defectives than items inspected")
            measure, test = "proportion", "two-proportion z-test"
            pooled = (db + da) / (eb + ea)
            if pooled <= 0 or pooled >= 1:
                statistic = p = None
            else:
                se = math.sqrt(pooled * (1 - pooled) * (1 / eb + 1 / ea))
                if se == 0 or not math.isfinite(se):
                    raise StatsError("the numbers checked are too large to compare proportions")
                statistic = (va - vb) / se
                p = 2.0 * normal.sf(abs(statistic))
        else:
            measure, test = "rate", "exact Poisson rate test"
            total = int(round(db + da))
            if abs(db - round(db)) > 1e-9 or abs(da - round(da)) > 1e-9:
                raise StatsError("defect counts must be whole numbers")
            if total == 0:
                statistic = p = None
            else:
                p = binomial.two_sided_p(int(round(da)), total, ea / (eb + ea))
                statistic = (va / vb) if vb > 0 else None

    change = va - vb
    pct = 100.0 * change / abs(vb) if vb != 0 else None
    if better == "lower":
        improved: bool | None = va < vb
    elif better == "higher":
        improved = va > vb
    elif target is not None:
        improved = abs(va - target) < abs(vb - target)
    else:
        improved = None

    sentence = _sentence(measure, metric, unit, vb, va, pct, test, p)
    return Comparison(
        measure=measure,
        baseline=vb,
        after=va,
        change=change,
        percent_change=pct,
        better=better,
        improved=improved,
        test=test,
        statistic=statistic,
        p_value=p,
        sentence=sentence,
        n_baseline=nb,
        n_after=na,
    )


def _sizes(sizes, n: int, data_type: str, what: str) -> np.ndarray:
    if sizes is None:
        if data_type == "defectives":
            raise StatsError(f"defectives need the number inspected for each {what} count")
        return np.ones(n)
    s = np.asarray(sizes, dtype=float)
    if s.ndim != 1 or len(s) != n:
        raise StatsError(f"the {what} sizes must give one size per count ({n}), got {s.size}")
    if not np.all(np.isfinite(s)) or np.any(s <= 0):
        raise StatsError(f"the {what} sizes must be positive numbers")
    return s


def _sentence(
    measure: str,
    metric: str | None,
    unit: str,
    vb: float,
    va: float,
    pct: float | None,
    test: str,
    p: float | None,
) -> str:
    if metric:
        subject = f"The {metric}"
    else:
        subject = {
            "mean": "The mean",
            "median": "The median",
            "proportion": "The proportion defective",
            "rate": "The defect rate",
        }[measure]
    if measure == "proportion":
        fb, fa = _fmt_pct(100 * vb) + "%", _fmt_pct(100 * va) + "%"
    else:
        suffix = f" {unit}" if unit else ""
        fb, fa = _fmt(vb) + suffix, _fmt(va) + suffix
    if va == vb:
        head = f"{subject} did not change ({fb} in both periods)"
    else:
        verb = "rose" if va > vb else "fell"
        pct_txt = f" ({_signed_pct(pct)}%)" if pct is not None else ""
        if measure == "proportion":
            # a change of a proportion is a difference of percentages: in percentage points,
            # the relative change beside it
            pp = _signed_pct(100 * (va - vb))
            pct_txt = f" ({pp} percentage points" + (
                f", {_signed_pct(pct)}% relative)" if pct is not None else ")"
            )
        head = f"{subject} {verb} from {fb} to {fa}{pct_txt}"
    if p is None:
        tail = f"no test was possible because the data do not vary ({test})."
    elif p < ALPHA:
        tail = (
            f"a change this large would be unlikely by chance alone ({test}, {format_p_value(p)})."
        )
    else:
        tail = f"a change of this size could well be due to chance alone ({test}, {format_p_value(p)})."
    return f"{head}; {tail}"
