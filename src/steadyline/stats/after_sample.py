"""How long to collect after a change: the after sample a test needs to detect a given change.

The baseline is already collected, so its size is fixed; the plan finds the smallest after
sample for which the test, two-sided at level α (5% by default, the level of the
before-and-after comparison), has the wanted power (80% by default, common practice) against
the stated change. Because the baseline's size is fixed, the power cannot exceed the power of
an unlimited after sample (``power_limit``); a change too small for the baseline is reported
as not reachable rather than as a huge number.

- Continuous (values): the two-sample t test with equal standard deviations, the after period
  assumed to vary as the baseline (sd given). With d = (target − baseline) / sd,
  δ = d √(n₁n₂ / (n₁ + n₂)) and ν = n₁ + n₂ − 2, the power is
  P(T′ > t_{1−α/2, ν}) + P(T′ < −t_{1−α/2, ν}), T′ noncentral t with ν degrees of freedom and
  noncentrality δ (Cohen 1988, *Statistical Power Analysis*, from memory; the same as
  statsmodels' ``TTestIndPower``). The comparison itself uses Welch's t-test, whose power is
  nearly the same when the two standard deviations are equal (a seeded simulation of Welch's
  test checks the plan in the tests).
- Defectives (items): the two-proportion z-test with the pooled proportion under the null,
  the same as the comparison's. With p₁ the baseline and p₂ the target proportion, Δ = p₂ − p₁,
  p̄ = (n₁p₁ + n₂p₂)/(n₁ + n₂), σ₀ = √(p̄(1 − p̄)(1/n₁ + 1/n₂)) and
  σ₁ = √(p₁(1 − p₁)/n₁ + p₂(1 − p₂)/n₂):
  power = Φ((Δ − z σ₀)/σ₁) + Φ((−Δ − z σ₀)/σ₁), z = Φ⁻¹(1 − α/2) (Fleiss, *Statistical
  Methods for Rates and Proportions*, from memory; the same as statsmodels'
  ``power_proportions_2indep``).
- Defects (exposure: units, opportunities, hours): the z-test of the log rate ratio with its
  variance at the rates of the alternative, Var = 1/(λ₁e₁) + 1/(λ₂e₂) (the expected counts):
  power = Φ(|ln(λ₂/λ₁)|/√Var − z) + Φ(−|ln(λ₂/λ₁)|/√Var − z) (Zhu & Lakkis 2014, from
  memory; statsmodels' ``power_poisson_ratio_2indep`` with ``method_var="alt"``). The
  comparison uses the exact conditional test, for which this is a large-sample approximation;
  a seeded simulation of the exact test checks the plan in the tests.

The required size is whole values or items for the first two and a (real) exposure for
defects; ``points`` converts it into points (subgroups, days, weeks) by dividing by the
average size per point and rounding up. scipy (the noncentral t) is imported on first use.
"""

from __future__ import annotations

import math

from . import normal
from ._lazy import lazy
from .results import StatsError
from .results_studies import AfterSamplePlan, PowerReached

_st = lazy("scipy.stats")

KINDS = ("continuous", "defectives", "defects")
ALPHA = 0.05
POWER = 0.80  # common practice
MAX_SIZE = 1e9  # beyond this the plan is reported as not reachable in practice
TESTS = {
    "continuous": "two-sample t test (equal standard deviations)",
    "defectives": "two-proportion z-test (pooled proportion)",
    "defects": "z-test of the log rate ratio (large-sample approximation of the exact test)",
}


def _check(kind, baseline, target, baseline_size, sd, alpha):
    if kind not in KINDS:
        raise StatsError(f"the kind of data must be one of {', '.join(KINDS)}, got {kind!r}")
    if not 0 < alpha < 1:
        raise StatsError(f"the significance level must be between 0 and 1, got {alpha:g}")
    for name, v in (("baseline", baseline), ("target", target)):
        if not math.isfinite(v):
            raise StatsError(f"the {name} value must be a finite number")
    if baseline == target:
        raise StatsError("the change to detect must not be zero (target equals the baseline)")
    if not (math.isfinite(baseline_size) and baseline_size > 0):
        raise StatsError(f"the baseline size must be positive, got {baseline_size:g}")
    if kind == "continuous":
        if sd is None or not (math.isfinite(sd) and sd > 0):
            raise StatsError(
                "a plan for measured values needs the baseline's standard "
                "deviation, a positive number"
            )
        if baseline_size < 2:
            raise StatsError("a plan for measured values needs at least two baseline values")
    elif kind == "defectives":
        for name, v in (("baseline", baseline), ("target", target)):
            if not 0 < v < 1:
                raise StatsError(f"the {name} proportion must be between 0 and 1, got {v:g}")
    else:
        for name, v in (("baseline", baseline), ("target", target)):
            if not v > 0:
                raise StatsError(f"the {name} rate must be positive, got {v:g}")


def _power(
    kind: str, baseline: float, target: float, n1: float, n2: float, sd: float | None, alpha: float
) -> float:
    """Power of the kind's test with n2 after (math.inf: an unlimited after sample)."""
    z = normal.ppf(1 - alpha / 2)
    if kind == "continuous":
        assert sd is not None  # _check requires it
        d = (target - baseline) / sd
        if math.isinf(n2):
            nc = abs(d) * math.sqrt(n1)
            return normal.cdf(nc - z) + normal.cdf(-nc - z)
        df = n1 + n2 - 2
        nc = d * math.sqrt(n1 * n2 / (n1 + n2))
        crit = float(_st.t.isf(alpha / 2, df))
        return float(_st.nct.sf(crit, df, nc) + _st.nct.cdf(-crit, df, nc))
    if kind == "defectives":
        p1, p2 = baseline, target
        inv2 = 0.0 if math.isinf(n2) else 1.0 / n2
        pbar = p2 if math.isinf(n2) else (n1 * p1 + n2 * p2) / (n1 + n2)
        s0 = math.sqrt(pbar * (1 - pbar) * (1 / n1 + inv2))
        s1 = math.sqrt(p1 * (1 - p1) / n1 + p2 * (1 - p2) * inv2)
        diff = p2 - p1
        return normal.cdf((diff - z * s0) / s1) + normal.cdf((-diff - z * s0) / s1)
    var = 1 / (baseline * n1) + (0.0 if math.isinf(n2) else 1 / (target * n2))
    es = abs(math.log(target / baseline)) / math.sqrt(var)
    return normal.cdf(es - z) + normal.cdf(-es - z)


def power_reached(
    kind: str,
    baseline: float,
    target: float,
    baseline_size: float,
    after_size: float,
    sd: float | None = None,
    alpha: float = ALPHA,
    wanted: float = POWER,
) -> PowerReached:
    """The power an after sample of ``after_size`` has to detect the change baseline → target.

    Sizes are values (continuous), items (defectives) or exposure (defects). Sources in the
    module's text.

    >>> r = power_reached("defectives", 0.10, 0.05, baseline_size=600, after_size=400)
    >>> round(r.power, 3), r.reached
    (0.831, True)
    """
    _check(kind, baseline, target, baseline_size, sd, alpha)
    if not (math.isfinite(after_size) and after_size > 0):
        raise StatsError(f"the after size must be positive, got {after_size:g}")
    if kind == "continuous" and after_size < 1:
        raise StatsError("the after sample needs at least one value")
    p = _power(kind, baseline, target, baseline_size, after_size, sd, alpha)
    return PowerReached(
        kind=kind,
        test=TESTS[kind],
        alpha=alpha,
        baseline=float(baseline),
        target=float(target),
        baseline_size=float(baseline_size),
        after_size=float(after_size),
        power=p,
        reached=p >= wanted,
        wanted_power=wanted,
    )


def after_sample_needed(
    kind: str,
    baseline: float,
    target: float,
    baseline_size: float,
    size_per_point: float = 1.0,
    sd: float | None = None,
    alpha: float = ALPHA,
    power: float = POWER,
) -> AfterSamplePlan:
    """The smallest after sample for which the test detects baseline → target with ``power``.

    ``size_per_point`` is the average number of values, items or exposure per plotted point
    (subgroup, day, week), to turn the size into points. Sources in the module's text.

    >>> plan = after_sample_needed("continuous", 50.0, 48.0, baseline_size=40, sd=4.0,
    ...                            size_per_point=5)
    >>> plan.required_size, plan.points, round(plan.achieved_power, 3)
    (154, 31, 0.8)
    >>> after_sample_needed("continuous", 50.0, 49.0, 20, sd=4.0).required_size is None
    True
    """
    _check(kind, baseline, target, baseline_size, sd, alpha)
    if not 0 < power < 1:
        raise StatsError(f"the wanted power must be between 0 and 1, got {power:g}")
    if not (math.isfinite(size_per_point) and size_per_point > 0):
        raise StatsError(f"the size per point must be positive, got {size_per_point:g}")
    n1 = float(baseline_size)

    def pw(n2: float) -> float:
        return _power(kind, baseline, target, n1, n2, sd, alpha)

    limit = pw(math.inf)
    notes: list[str] = []
    required: float | None = None
    achieved: float | None = None
    if limit <= power:
        notes.append(
            f"With the baseline's size fixed at {n1:g}, no after sample reaches "
            f"{100 * power:g}% power: even unlimited after data would give "
            f"{100 * limit:.1f}%. A larger baseline or a larger change is needed."
        )
    else:
        whole = kind != "defects"
        lo = 2.0 if kind == "continuous" else (1.0 if whole else 0.0)
        hi = max(lo, 1.0)
        while pw(hi) < power and hi <= MAX_SIZE:
            lo, hi = hi, hi * 2
        if hi > MAX_SIZE:
            notes.append(f"More than {MAX_SIZE:g} would be needed after the change.")
        else:
            if lo > 0 and pw(lo) >= power:
                hi = lo
            # bisection: pw(lo) < power <= pw(hi)
            while (hi - lo > 1) if whole else (hi - lo > 1e-9 * hi):
                mid = math.floor((lo + hi) / 2) if whole else (lo + hi) / 2
                if pw(mid) >= power:
                    hi = mid
                else:
                    lo = mid
            required = float(int(hi)) if whole else hi
            achieved = pw(required)
    points = None if required is None else math.ceil(required / size_per_point - 1e-9)
    return AfterSamplePlan(
        kind=kind,
        test=TESTS[kind],
        alpha=alpha,
        power=power,
        baseline=float(baseline),
        target=float(target),
        baseline_size=n1,
        required_size=(int(required) if required is not None and kind != "defects" else required),
        size_per_point=float(size_per_point),
        points=points,
        achieved_power=achieved,
        power_limit=limit,
        notes=tuple(notes),
    )
