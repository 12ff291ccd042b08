"""Process capability (Cp, Cpk with within-subgroup sigma) and performance (Pp, Ppk with the
overall sample standard deviation).

Formulas (NIST/SEMATECH e-Handbook §6.1.6; Montgomery, *Introduction to SQC*, ch. 8):
    Cp  = (USL − LSL) / 6σ_within        Cpu = (USL − μ) / 3σ_within
    Cpl = (μ − LSL) / 3σ_within          Cpk = min(Cpu, Cpl)
    Pp, Ppu, Ppl, Ppk: the same with the overall sample SD s (n − 1 divisor).
With a one-sided specification Cp and Pp are undefined (None) and Cpk / Ppk is the one side.

Expected nonconforming parts per million under a normal model:
    10⁶ [Φ((LSL − μ)/σ) + 1 − Φ((USL − μ)/σ)], with σ_within ("within") and s ("overall").
Observed ppm counts points strictly outside the limits (a point on a limit conforms).

95% interval for Cpk (Bissell 1990, "How reliable is your capability index?", *Applied
Statistics* 39:331–340; citation from memory):
    Cpk ± 1.96 √(1/(9n) + Cpk²/(2(n − 1))). Bissell derived it for an overall-sigma estimate,
    so with a within-subgroup sigma it is an approximation.

The indices are flagged as not trustworthy, with plain reasons, when the process is not
stable, when the Anderson–Darling test rejects normality at 5%, when normality cannot be
checked, or when there are fewer than 30 values (common practice).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from . import normal
from .distribution import AD_MIN_POINTS, AD_P_FLOOR, anderson_darling, p_below_text
from .results import Capability, NormalityTest, StatsError

MIN_POINTS_FOR_CAPABILITY = 30  # common practice


def _ppm(mean: float, sigma: float, lsl: float | None, usl: float | None) -> float:
    """Expected ppm outside the limits for N(mean, sigma). For sigma = 0 the limit of the
    normal model is used: 0 inside the limits, 10⁶ outside, half on a limit."""
    total = 0.0
    if sigma > 0:
        if lsl is not None:
            total += normal.cdf((lsl - mean) / sigma)
        if usl is not None:
            total += normal.sf((usl - mean) / sigma)
    else:
        if lsl is not None:
            total += 1.0 if mean < lsl else (0.5 if mean == lsl else 0.0)
        if usl is not None:
            total += 1.0 if mean > usl else (0.5 if mean == usl else 0.0)
    return 1e6 * total


def _indices(
    mean: float, sigma: float | None, lsl: float | None, usl: float | None
) -> tuple[float | None, float | None, float | None, float | None]:
    if sigma is None or not sigma > 0:
        return None, None, None, None
    upper = (usl - mean) / (3 * sigma) if usl is not None else None
    lower = (mean - lsl) / (3 * sigma) if lsl is not None else None
    both = (usl - lsl) / (6 * sigma) if (usl is not None and lsl is not None) else None
    k = min(v for v in (upper, lower) if v is not None)
    return both, upper, lower, k


def bissell_interval(cpk: float, n: int, level: float = 0.95) -> tuple[float, float]:
    """Approximate confidence interval for Cpk (Bissell 1990)."""
    if n < 2:
        raise StatsError(f"a Cpk interval needs at least two values, got {n}")
    z = normal.ppf(0.5 + level / 2)
    if not math.isfinite(cpk) or abs(cpk) > 1e150:
        raise StatsError(f"a Cpk interval needs a finite, moderate Cpk, got {cpk:g}")
    half = z * math.sqrt(1.0 / (9 * n) + cpk**2 / (2 * (n - 1)))
    return cpk - half, cpk + half


def capability(
    values: Sequence[float] | np.ndarray,
    sigma_within: float | None,
    lsl: float | None = None,
    usl: float | None = None,
    target: float | None = None,
    stable: bool = True,
    normality: NormalityTest | None = None,
    unstable_reason: str | None = None,
    min_points: int = MIN_POINTS_FOR_CAPABILITY,
    no_sigma_reason: str | None = None,
) -> Capability:
    """Capability and performance indices of individual values against specification limits.

    ``sigma_within`` is the within-subgroup sigma from the control chart (MR̄/d2, R̄/d2,
    s̄/c4, pooled s). ``stable`` (and optionally ``unstable_reason``, a short phrase such as
    "2 signals on the control chart") come from the caller's control chart;
    ``no_sigma_reason`` says why there is no within-subgroup sigma, when the caller knows.
    ``normality`` is computed by Anderson–Darling when not given and there are at least 8
    values. Missing values (nan) are left out.
    """
    # One function on purpose: the checks of the input, the indices within and overall, the
    # observed and expected ppm and the reasons an index is not to be trusted share the same
    # mean, sigmas and limits; cut apart, each part would take most of them as arguments.
    x = np.asarray(values, dtype=float)
    if x.ndim != 1:
        raise StatsError("capability needs a one-dimensional sequence of values")
    if np.isinf(x).any():
        raise StatsError("capability needs finite values, got an infinite value")
    x = x[~np.isnan(x)]
    n = int(len(x))
    if lsl is None and usl is None:
        raise StatsError("capability needs at least one specification limit (LSL or USL)")
    for name, v in (("LSL", lsl), ("USL", usl), ("target", target)):
        if v is not None and not math.isfinite(v):
            raise StatsError(f"the {name} must be a finite number")
    if lsl is not None and usl is not None and not lsl < usl:
        raise StatsError(f"the LSL ({lsl:g}) must be below the USL ({usl:g})")
    if n < 2:
        raise StatsError(f"capability needs at least two values, got {n}")
    lsl = None if lsl is None else float(lsl)
    usl = None if usl is None else float(usl)

    reasons: list[str] = []
    mean = float(np.mean(x))
    with np.errstate(over="ignore"):  # an overflowing spread is refused just below
        s = float(np.std(x, ddof=1))
    if not math.isfinite(s):
        raise StatsError("the values are too large for their spread to be computed")

    sw: float | None = None if sigma_within is None else float(sigma_within)
    if sw is not None and not math.isfinite(sw):
        raise StatsError("the within-subgroup sigma must be a finite number")
    if sw is None:
        reasons.append(
            no_sigma_reason
            or "No within-subgroup sigma was given, so Cp and Cpk are not calculated."
        )
    elif sw <= 0:
        reasons.append(
            "The within-subgroup sigma is zero, so Cp and Cpk cannot be calculated "
            "(the values do not vary from point to point)."
        )
    cp, cpu, cpl, cpk = _indices(mean, sw, lsl, usl)
    pp, ppu, ppl, ppk = _indices(mean, s, lsl, usl)
    if not s > 0:
        reasons.append(
            "All values are equal, so Pp and Ppk cannot be calculated and the expected "
            "out-of-specification figures are only the limit of the normal model."
        )

    ppm_within = _ppm(mean, sw, lsl, usl) if (sw is not None and sw > 0) else None
    ppm_overall = _ppm(mean, s, lsl, usl)
    outside = np.zeros(n, dtype=bool)
    if lsl is not None:
        outside |= x < lsl
    if usl is not None:
        outside |= x > usl
    ppm_observed = 1e6 * float(outside.sum()) / n

    try:
        cpk_ci = bissell_interval(cpk, n) if cpk is not None else None
    except StatsError:
        cpk_ci = None  # an absurd Cpk has no meaningful interval

    if not stable:
        why = f" ({unstable_reason.rstrip('.')})" if unstable_reason else ""
        reasons.append(
            f"The process is not stable{why}, so the indices do not predict future performance."
        )
    if normality is None and n >= AD_MIN_POINTS and s > 0:
        normality = anderson_darling(x)
    if normality is None:
        reasons.append(
            f"Normality could not be checked (it needs at least {AD_MIN_POINTS} values that "
            "are not all equal); the expected out-of-specification figures assume a normal "
            "distribution."
        )
    elif not normality.normal_at_5pct:
        p = (
            f"p = {normality.p_value:.3g}"
            if normality.p_value is not None
            else p_below_text(normality.p_below if normality.p_below is not None else AD_P_FLOOR)
        )
        reasons.append(
            f"The values do not look normally distributed (Anderson–Darling {p}), so the "
            "indices and expected figures, which assume a normal distribution, may mislead."
        )
    if n < min_points:
        reasons.append(
            f"Only {n} values; at least {min_points} are commonly recommended before "
            "capability indices are quoted."
        )
    trustworthy = stable and normality is not None and normality.normal_at_5pct
    trustworthy = trustworthy and n >= min_points and cpk is not None and s > 0

    return Capability(
        lsl=lsl,
        usl=usl,
        target=None if target is None else float(target),
        mean=mean,
        sigma_within=sw,
        sigma_overall=s,
        n=n,
        cp=cp,
        cpu=cpu,
        cpl=cpl,
        cpk=cpk,
        cpk_ci=cpk_ci,
        pp=pp,
        ppu=ppu,
        ppl=ppl,
        ppk=ppk,
        ppm_expected_within=ppm_within,
        ppm_expected_overall=ppm_overall,
        ppm_observed=ppm_observed,
        normality=normality,
        trustworthy=bool(trustworthy),
        reasons=tuple(reasons),
    )
