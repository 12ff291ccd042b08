"""The figures managers quote: share defective, parts per million, yields and the sigma level.

Defectives (d defective units of u inspected):
    proportion defective p = d / u,  ppm = 10⁶ · p,
    first-pass yield = 1 − p: the share of units good at their first inspection, when the
    counts are those of the first inspection (units reworked and passed later count as
    defective).
Defects (D defects on u units, m opportunities for a defect per unit):
    DPU = D / u,  DPMO = 10⁶ · D / (u · m),
    yield = exp(−DPU): the probability that a unit has no defect when defects fall on units
    as a Poisson process with mean DPU (P(0) of the Poisson distribution; Montgomery,
    *Introduction to SQC*, from memory).
Measured values with specification limits:
    expected yield = 1 − expected ppm / 10⁶ from the normal model of the capability study
    (:func:`steadyline.stats.capability`; overall sigma by default, within-subgroup on request).

Sigma level (a convention of the trade, common practice; the 1.5 shift is optional):
    Z = Φ⁻¹(yield), plus 1.5 when ``shift=True``: the convention assumes the process mean
    drifts by 1.5 sigma in the long run, so a long-run yield is quoted as the short-run Z it
    would come from. With the shift, 3.4 per million ↔ 6, 233 ↔ 5, 6,210 ↔ 4, 66,807 ↔ 3 (the
    widely published table, from memory). It is computed from the share bad (Φ⁻¹(1 − bad) =
    −Φ⁻¹(bad)), which keeps its precision where the yield is close to 1. For defects the
    sigma level is that of the opportunities (1 − DPMO/10⁶) when opportunities per unit are
    given, otherwise that of the units (the Poisson yield).
"""

from __future__ import annotations

import math

from . import normal
from .results import Capability, StatsError
from .results_studies import BusinessFigures

SHIFT = 1.5  # the trade's long-term shift in sigmas (convention, common practice)


def sigma_level_from_bad(bad_share: float, shift: bool = True) -> float | None:
    """The sigma level of a process whose share of bad units (or opportunities) is given.

    None when the share is 0 or 1 (the level is then infinite).

    >>> round(sigma_level_from_bad(3.4e-6), 3), round(sigma_level_from_bad(0.066807), 3)
    (6.0, 3.0)
    >>> round(sigma_level_from_bad(0.066807, shift=False), 3)
    1.5
    """
    if not 0.0 <= bad_share <= 1.0 or math.isnan(bad_share):
        raise StatsError(f"a share of bad units must be between 0 and 1, got {bad_share:g}")
    if bad_share in (0.0, 1.0):
        return None
    return float(-normal.ppf(bad_share)) + (SHIFT if shift else 0.0)


def sigma_level(yield_: float, shift: bool = True) -> float | None:
    """Z = Φ⁻¹(yield) (+ 1.5 with the shift convention); None for a yield of 0 or 1.

    >>> round(sigma_level(0.99379), 2), round(sigma_level(0.99379, shift=False), 2)
    (4.0, 2.5)
    """
    return sigma_level_from_bad(1.0 - yield_, shift)


def _note(shift: bool) -> str:
    if shift:
        return (
            "The sigma level includes the trade's conventional 1.5-sigma shift (common practice)."
        )
    return "The sigma level is Φ⁻¹(yield), without the conventional 1.5-sigma shift."


def _infinite_note(level: float | None, notes: list[str]) -> None:
    if level is None:
        notes.append("No sigma level: with no bad units (or all bad) it is infinite.")


def defective_figures(defectives: float, units: float, shift: bool = True) -> BusinessFigures:
    """Proportion defective, ppm, first-pass yield and sigma level from d defective of u.

    >>> f = defective_figures(12, 4000)
    >>> f.proportion_defective, f.ppm, f.first_pass_yield, round(f.sigma_level, 3)
    (0.003, 3000.0, 0.997, 4.248)
    """
    if not (math.isfinite(units) and units > 0):
        raise StatsError(f"business figures need a positive number of units, got {units:g}")
    if not (math.isfinite(defectives) and 0 <= defectives <= units):
        raise StatsError(
            f"the defectives must be between 0 and the units ({units:g}), got {defectives:g}"
        )
    p = defectives / units
    level = sigma_level_from_bad(p, shift)
    notes = [_note(shift)]
    _infinite_note(level, notes)
    return BusinessFigures(
        kind="defectives",
        units=float(units),
        proportion_defective=p,
        ppm=1e6 * p,
        first_pass_yield=1.0 - p,
        defects=None,
        dpu=None,
        opportunities_per_unit=None,
        dpmo=None,
        yield_=1.0 - p,
        yield_model="observed share of good units",
        sigma_level=level,
        sigma_basis="units",
        shift_applied=shift,
        notes=tuple(notes),
    )


def defect_figures(
    defects: float,
    units: float,
    opportunities_per_unit: float | None = None,
    shift: bool = True,
) -> BusinessFigures:
    """DPU, DPMO, the Poisson yield exp(−DPU) and the sigma level from D defects on u units.

    >>> f = defect_figures(30, 1000, opportunities_per_unit=10)
    >>> f.dpu, f.dpmo, round(f.yield_, 5), round(f.sigma_level, 3)
    (0.03, 3000.0, 0.97045, 4.248)
    """
    if not (math.isfinite(units) and units > 0):
        raise StatsError(f"business figures need a positive number of units, got {units:g}")
    if not (math.isfinite(defects) and defects >= 0):
        raise StatsError(f"the defects must be zero or more, got {defects:g}")
    notes = [_note(shift)]
    dpu = defects / units
    dpmo = None
    if opportunities_per_unit is not None:
        m = opportunities_per_unit
        if not (math.isfinite(m) and m > 0):
            raise StatsError(f"the opportunities per unit must be positive, got {m:g}")
        if dpu > m:
            raise StatsError(f"more defects per unit ({dpu:g}) than opportunities per unit ({m:g})")
        dpmo = 1e6 * dpu / m
        level = sigma_level_from_bad(dpu / m, shift)
        basis = "opportunities"
    else:
        level = sigma_level_from_bad(-math.expm1(-dpu), shift)
        basis = "units"
    _infinite_note(level, notes)
    return BusinessFigures(
        kind="defects",
        units=float(units),
        proportion_defective=None,
        ppm=None,
        first_pass_yield=None,
        defects=float(defects),
        dpu=dpu,
        opportunities_per_unit=None
        if opportunities_per_unit is None
        else float(opportunities_per_unit),
        dpmo=dpmo,
        yield_=math.exp(-dpu),
        yield_model="Poisson: probability of a unit with no defect, exp(−DPU)",
        sigma_level=level,
        sigma_basis=basis,
        shift_applied=shift,
        notes=tuple(notes),
    )


def measured_figures(
    study: Capability, sigma: str = "overall", shift: bool = True
) -> BusinessFigures:
    """Expected yield, ppm and sigma level of measured values from a capability study.

    ``sigma`` is "overall" (the sample standard deviation, the long-run figure) or "within"
    (the within-subgroup sigma).

    >>> from steadyline.stats import capability
    >>> c = capability([9.8, 10.1, 10.0, 9.9, 10.2, 10.0, 9.7, 10.3], 0.2, lsl=9.4, usl=10.6)
    >>> f = measured_figures(c)
    >>> round(f.ppm, 1), round(f.sigma_level, 3)
    (2699.8, 4.282)
    """
    if sigma == "overall":
        ppm = study.ppm_expected_overall
    elif sigma == "within":
        if study.ppm_expected_within is None:
            raise StatsError(
                "an expected yield from the within-subgroup sigma needs that sigma, and the "
                "capability study has none"
            )
        ppm = study.ppm_expected_within
    else:
        raise StatsError(f"sigma must be 'overall' or 'within', got {sigma!r}")
    bad = min(ppm / 1e6, 1.0)
    level = sigma_level_from_bad(bad, shift)
    notes = [_note(shift)]
    _infinite_note(level, notes)
    if not study.trustworthy:
        notes.append("The capability study is not to be trusted: " + " ".join(study.reasons))
    return BusinessFigures(
        kind="measured",
        units=float(study.n),
        proportion_defective=bad,
        ppm=ppm,
        first_pass_yield=None,
        defects=None,
        dpu=None,
        opportunities_per_unit=None,
        dpmo=None,
        yield_=1.0 - bad,
        yield_model=f"normal model with the {sigma} sigma: expected share within the limits",
        sigma_level=level,
        sigma_basis="units",
        shift_applied=shift,
        notes=tuple(notes),
    )
