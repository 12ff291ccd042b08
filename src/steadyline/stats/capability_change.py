"""Capability before versus after: is the change in Cpk beyond what sampling explains?

Two readings of the same question, given the capability of each period:

1. Whether Bissell's 95% intervals for Cpk (see :mod:`steadyline.stats.capability`) overlap.
   Intervals that do not overlap are a clear sign of change; intervals that overlap do not prove
   there was none (two intervals can overlap while their difference is beyond chance).
2. An approximate z-test of the difference, with Bissell's standard errors (Bissell 1990,
   *Applied Statistics* 39:331–340, from memory):

       SE(Cpk) = √(1/(9n) + Cpk²/(2(n − 1))),
       z = (Cpk_after − Cpk_before) / √(SE_before² + SE_after²),  p = 2 · P(Z ≥ |z|).

   The approximation: each Cpk is taken as normally distributed about its true value with the
   standard error evaluated at the estimate (a large-sample result for normally distributed
   values), the two periods are independent, and Bissell derived the error for an overall
   sigma, so with a within-subgroup sigma it is an approximation too. It is named
   "approximate z-test of the change in Cpk" wherever it is reported.

No scipy: the normal tail comes from :mod:`steadyline.stats.normal`.
"""

from __future__ import annotations

import math

from . import normal
from .capability import bissell_interval
from .results import Capability, StatsError
from .results_studies import CapabilityChange

TEST_NAME = "approximate z-test of the change in Cpk (Bissell's standard errors)"


def bissell_se(cpk: float, n: int) -> float:
    """Bissell's (1990) approximate standard error of an estimated Cpk from n values.

    >>> round(bissell_se(1.0, 50), 5)
    0.11147
    """
    if n < 2:
        raise StatsError(f"a standard error of Cpk needs at least two values, got {n}")
    return math.sqrt(1.0 / (9 * n) + cpk**2 / (2 * (n - 1)))


def capability_change(before: Capability, after: Capability) -> CapabilityChange:
    """Compare the Cpk of two periods: overlap of their 95% intervals and an approximate z-test.

    Source: Bissell (1990), from memory; the test is a normal approximation (module text).

    >>> from steadyline.stats import capability
    >>> import numpy as np
    >>> rng = np.random.default_rng(5)
    >>> b, a = rng.normal(10, 1, 60), rng.normal(10, 0.6, 60)
    >>> before = capability(b, sigma_within=1.0, lsl=7, usl=13)
    >>> after = capability(a, sigma_within=0.6, lsl=7, usl=13)
    >>> change = capability_change(before, after)
    >>> round(change.change, 3), change.intervals_overlap, f"{change.p_value:.2g}"
    (0.688, False, '0.00016')
    """
    for name, c in (("before", before), ("after", after)):
        if c.cpk is None:
            raise StatsError(
                f"a change in Cpk needs a Cpk in both periods; the {name} period has none"
            )
    cpk_b, cpk_a = float(before.cpk or 0.0), float(after.cpk or 0.0)  # not None: checked
    notes: list[str] = []
    ci_b = before.cpk_ci or bissell_interval(cpk_b, before.n)
    ci_a = after.cpk_ci or bissell_interval(cpk_a, after.n)
    overlap = ci_b[0] <= ci_a[1] and ci_a[0] <= ci_b[1]
    se_b, se_a = bissell_se(cpk_b, before.n), bissell_se(cpk_a, after.n)
    change = cpk_a - cpk_b
    z = change / math.sqrt(se_b**2 + se_a**2)
    p = 2.0 * normal.sf(abs(z))
    for name, c in (("before", before), ("after", after)):
        if not c.trustworthy:
            notes.append(
                f"The {name} period's Cpk is not to be trusted ("
                + " ".join(c.reasons).rstrip(".")
                + "), and neither is its interval."
            )
    if overlap and p < 0.05:
        notes.append(
            "The 95% intervals overlap although the approximate test finds the change beyond "
            "chance at 5%: overlapping intervals do not show that nothing changed."
        )
    return CapabilityChange(
        cpk_before=cpk_b,
        cpk_after=cpk_a,
        change=float(change),
        interval_before=(float(ci_b[0]), float(ci_b[1])),
        interval_after=(float(ci_a[0]), float(ci_a[1])),
        intervals_overlap=bool(overlap),
        se_before=se_b,
        se_after=se_a,
        z=float(z),
        p_value=float(p),
        test=TEST_NAME,
        notes=tuple(notes),
    )
