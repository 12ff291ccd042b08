"""Business figures (docs/methods.md §15).

References: ``scipy.stats.norm`` for Φ⁻¹ and the normal model; ``scipy.stats.poisson`` for the
yield exp(−DPU) = P(no defect); the widely published sigma-level table with the 1.5 shift
(3.4 ↔ 6, 233 ↔ 5, 6,210 ↔ 4, 66,807 ↔ 3 per million; from memory); NIST/SEMATECH §6.1.6
for the capability example feeding the measured figures.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats as st

from steadyline.stats import (
    StatsError,
    capability,
    defect_figures,
    defective_figures,
    measured_figures,
    sigma_level,
)
from steadyline.stats.business import sigma_level_from_bad


@pytest.mark.parametrize(("dpmo", "level"), [(3.4, 6), (233, 5), (6210, 4), (66807, 3)])
def test_published_sigma_table_with_shift(dpmo, level):
    # the widely published table (from memory), to its printed precision
    assert sigma_level_from_bad(dpmo / 1e6) == pytest.approx(level, abs=0.005)
    assert sigma_level_from_bad(dpmo / 1e6, shift=False) == pytest.approx(level - 1.5, abs=0.005)


def test_sigma_level_against_scipy():
    for bad in (1e-12, 3.4e-6, 1e-4, 0.01, 0.2, 0.5, 0.9):
        assert sigma_level_from_bad(bad) == pytest.approx(st.norm.isf(bad) + 1.5, rel=1e-12)
        assert sigma_level(1 - bad, shift=False) == pytest.approx(
            st.norm.ppf(1 - bad), rel=1e-9, abs=1e-12
        )
    assert sigma_level_from_bad(0.0) is None and sigma_level(0.0) is None


def test_defectives():
    f = defective_figures(12, 4000)
    assert f.proportion_defective == pytest.approx(0.003)
    assert f.ppm == pytest.approx(3000.0)
    assert f.first_pass_yield == pytest.approx(0.997)
    assert f.sigma_level == pytest.approx(st.norm.isf(0.003) + 1.5)
    f = defective_figures(0, 50, shift=False)
    assert f.sigma_level is None and not f.shift_applied
    assert any("infinite" in n for n in f.notes)


def test_defects_poisson_yield_and_dpmo():
    f = defect_figures(45, 300, opportunities_per_unit=12)
    assert f.dpu == pytest.approx(0.15)
    assert f.dpmo == pytest.approx(1e6 * 45 / (300 * 12))
    assert f.yield_ == pytest.approx(st.poisson.pmf(0, 0.15), rel=1e-12)
    assert f.sigma_basis == "opportunities"
    assert f.sigma_level == pytest.approx(st.norm.isf(45 / 3600) + 1.5)
    f = defect_figures(45, 300)
    assert f.dpmo is None and f.sigma_basis == "units"
    assert f.sigma_level == pytest.approx(st.norm.ppf(st.poisson.pmf(0, 0.15)) + 1.5)


def test_measured_from_capability_nist_example():
    # NIST §6.1.6: μ 16, σ 2, LSL 8, USL 20 → 22,781.80 ppm expected out (ppm computed)
    rng = np.random.default_rng(0)
    z = rng.standard_normal(200)
    x = 16 + 2 * (z - z.mean()) / z.std(ddof=1)
    c = capability(x, sigma_within=2.0, lsl=8, usl=20)
    for which in ("overall", "within"):
        f = measured_figures(c, sigma=which)
        expected_bad = st.norm.cdf(8, 16, 2) + st.norm.sf(20, 16, 2)
        assert f.ppm == pytest.approx(1e6 * expected_bad)
        assert f.ppm == pytest.approx(22781.80, abs=0.01)
        assert f.yield_ == pytest.approx(1 - expected_bad)
        assert f.sigma_level == pytest.approx(st.norm.isf(expected_bad) + 1.5)


@pytest.mark.parametrize(
    ("call", "message"),
    [
        (lambda: defective_figures(5, 0), "positive number of units"),
        (lambda: defective_figures(6, 5), "between 0 and the units"),
        (lambda: defect_figures(-1, 5), "zero or more"),
        (lambda: defect_figures(50, 5, opportunities_per_unit=2), "more defects per unit"),
        (lambda: defect_figures(5, 5, opportunities_per_unit=0), "must be positive"),
        (lambda: sigma_level(1.5), "between 0 and 1"),
    ],
)
def test_refusals(call, message):
    with pytest.raises(StatsError, match=message):
        call()


def test_measured_within_needs_a_within_sigma():
    c = capability(np.linspace(9, 11, 40), sigma_within=None, lsl=8, usl=12)
    with pytest.raises(StatsError, match="within-subgroup sigma"):
        measured_figures(c, sigma="within")
    assert math.isfinite(measured_figures(c).sigma_level)
