"""Capability indices checked against the NIST e-Handbook example and scipy."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from steadyline.stats.capability import bissell_interval, capability
from steadyline.stats.distribution import anderson_darling
from steadyline.stats.results import NormalityTest, StatsError


def exact_sample(mean: float, sd: float, n: int = 200) -> np.ndarray:
    """Normal-score sample with exactly the given mean and sample SD (n - 1)."""
    z = stats.norm.ppf((np.arange(1, n + 1) - 0.5) / n)
    z = (z - z.mean()) / z.std(ddof=1)
    return mean + sd * z


def test_nist_6_1_6_example():
    # NIST/SEMATECH e-Handbook §6.1.6 (transcribed, docs/methods.md §5): USL 20, LSL 8, mean 16,
    # sigma 2 -> Cp 1.0, Cpu 0.6667, Cpl 1.3333, Cpk 0.6667; total 22,781.80 ppm
    x = exact_sample(16.0, 2.0)
    c = capability(x, sigma_within=2.0, lsl=8, usl=20)
    assert c.mean == pytest.approx(16.0)
    assert c.cp == pytest.approx(1.0)
    assert c.cpu == pytest.approx(0.6667, abs=5e-5)
    assert c.cpl == pytest.approx(1.3333, abs=5e-5)
    assert c.cpk == pytest.approx(0.6667, abs=5e-5)
    assert c.ppm_expected_within == pytest.approx(22781.80, abs=0.01)
    # overall SD equals 2 by construction, so performance indices equal capability ones
    assert c.pp == pytest.approx(1.0) and c.ppk == pytest.approx(c.cpk)
    assert c.ppm_expected_overall == pytest.approx(22781.80, abs=0.01)


@pytest.mark.parametrize(
    "cp,ppm",
    [
        # NIST e-Handbook §6.1.6 centred-process table (transcribed, docs/methods.md §5):
        # 1.00 -> 0.27%, 4/3 -> 64 ppm, 5/3 -> 0.6 ppm, 2.00 -> 2 ppb
        (1.0, 2700.0),
        (4 / 3, 64.0),
        (5 / 3, 0.6),
        (2.0, 0.002),
    ],
)
def test_nist_centred_process_table(cp, ppm):
    sigma = 1.0
    half = 3 * cp * sigma
    x = exact_sample(0.0, 1.0)
    c = capability(x, sigma_within=sigma, lsl=-half, usl=half)
    assert c.cp == pytest.approx(cp)
    assert c.cpk == pytest.approx(cp)
    assert c.ppm_expected_within == pytest.approx(ppm, rel=0.05)
    # exact two-sided value (docs/methods.md §5, computed): reference scipy.stats.norm
    assert c.ppm_expected_within == pytest.approx(2e6 * stats.norm.sf(3 * cp), rel=1e-9)


def test_methods_own_xbar_example():
    # docs/methods.md §2 own worked numbers [computed]: USL 10.8, LSL 9.4, sigma_R 0.24284
    # -> Cp 0.9609, Cpk 0.9265; overall s 0.22312 -> Pp 1.0458, Ppk 1.0084
    data = [
        10.2,
        9.8,
        10.1,
        10.0,
        10.4,
        10.1,
        9.9,
        10.2,
        9.7,
        10.0,
        10.3,
        9.9,
        10.1,
        10.5,
        10.2,
        10.0,
        9.9,
        9.6,
        10.0,
        10.1,
        10.3,
        10.2,
        10.4,
        9.9,
    ]
    sigma_r = 0.5 / 2.059  # R-bar / d2(4), printed constant
    c = capability(data, sigma_within=sigma_r, lsl=9.4, usl=10.8)
    assert c.sigma_overall == pytest.approx(0.22312, abs=1e-5)
    assert c.cp == pytest.approx(0.9609, abs=1e-4)
    assert c.cpk == pytest.approx(0.9265, abs=1e-4)
    assert c.pp == pytest.approx(1.0458, abs=1e-4)
    assert c.ppk == pytest.approx(1.0084, abs=1e-4)
    assert not c.trustworthy  # only 24 values
    assert any("24 values" in r for r in c.reasons)


def test_one_sided_upper():
    x = exact_sample(16.0, 2.0)
    c = capability(x, 2.0, usl=20)
    assert c.cp is None and c.pp is None and c.cpl is None
    assert c.cpk == pytest.approx(c.cpu) == pytest.approx(4 / 6)
    # NIST §6.1.6: above USL at z = 2 -> 22,750.13 ppm (computed, docs/methods.md §5)
    assert c.ppm_expected_within == pytest.approx(22750.13, abs=0.01)


def test_one_sided_lower():
    x = exact_sample(16.0, 2.0)
    c = capability(x, 2.0, lsl=8)
    assert c.cp is None and c.cpu is None
    assert c.cpk == pytest.approx(4 / 3)
    # below LSL at z = 4 -> 31.67 ppm (computed, docs/methods.md §5)
    assert c.ppm_expected_within == pytest.approx(31.67, abs=0.01)


def test_observed_ppm_counts_points_strictly_outside():
    x = np.array([1.0, 2, 3, 4, 5, 6, 7, 8, 9, 10])
    c = capability(x, 1.0, lsl=2, usl=9)
    assert c.ppm_observed == pytest.approx(2e5)  # 1 and 10 outside; 2 and 9 conform


def test_bissell_interval_formula():
    # Bissell (1990) approximation: Cpk ± z sqrt(1/(9n) + Cpk²/(2(n-1))); z from scipy.stats.norm
    lo, hi = bissell_interval(1.2, 50)
    half = stats.norm.ppf(0.975) * math.sqrt(1 / 450 + 1.44 / 98)
    assert (lo, hi) == pytest.approx((1.2 - half, 1.2 + half))
    x = exact_sample(16, 2)
    c = capability(x, 2.0, 8, 20)
    assert c.cpk_ci == pytest.approx(bissell_interval(c.cpk, 200))


def test_bissell_coverage_simulation():
    # Monte Carlo check of the approximation with Ppk (Bissell's overall-sigma setting):
    # coverage of the true Cpk should be near 95%
    rng = np.random.default_rng(2024)
    true_cpk = min(20 - 16, 16 - 8) / 6
    hits = 0
    reps = 400
    for _ in range(reps):
        x = rng.normal(16, 2, 100)
        s = x.std(ddof=1)
        ppk = min(20 - x.mean(), x.mean() - 8) / (3 * s)
        lo, hi = bissell_interval(ppk, 100)
        hits += lo <= true_cpk <= hi
    assert 0.91 <= hits / reps <= 0.98


def test_trustworthy_and_reasons():
    x = exact_sample(16, 2, 100)
    ok = capability(x, 2.0, 8, 20)
    assert ok.trustworthy and ok.reasons == ()
    assert ok.normality is not None and ok.normality.normal_at_5pct
    unstable = capability(x, 2.0, 8, 20, stable=False, unstable_reason="two points beyond limits")
    assert not unstable.trustworthy
    assert any("not stable (two points beyond limits)" in r for r in unstable.reasons)
    # the caller's own words for a missing within-subgroup sigma replace the general ones
    rolled = capability(x, None, 8, 20, no_sigma_reason="Rolled up; no within sigma.")
    assert "Rolled up; no within sigma." in rolled.reasons and rolled.cp is None
    skewed = np.random.default_rng(3).exponential(1.0, 200)
    sk = capability(skewed, 1.0, usl=6)
    assert not sk.trustworthy
    assert any("normally distributed" in r for r in sk.reasons)
    # the normality result equals the Anderson–Darling computed separately
    assert sk.normality == anderson_darling(skewed)


def test_given_normality_is_used():
    x = exact_sample(16, 2, 100)
    fake = NormalityTest(statistic=2.0, adjusted=2.0, p_value=0.001, n=100, normal_at_5pct=False)
    c = capability(x, 2.0, 8, 20, normality=fake)
    assert c.normality is fake and not c.trustworthy


def test_zero_sigma_gives_none_not_inf():
    c = capability([5.0] * 40, 0.0, lsl=4, usl=6)
    assert c.cp is None and c.cpk is None and c.pp is None and c.ppk is None
    assert c.cpk_ci is None
    assert c.ppm_expected_within is None
    assert c.ppm_expected_overall == 0.0
    assert not c.trustworthy and c.reasons


def test_errors():
    with pytest.raises(StatsError):
        capability([1, 2, 3], 1.0)
    with pytest.raises(StatsError):
        capability([1, 2, 3], 1.0, lsl=5, usl=4)
    with pytest.raises(StatsError):
        capability([1], 1.0, lsl=0)
