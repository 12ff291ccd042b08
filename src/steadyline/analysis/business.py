"""The figures the business reports (ppm, yields, DPMO, sigma level) per period, from a metric's
totals or its capability study.

They restate results already on the page in the business's own terms, so they are worked out
last, from what the other displays found.
"""

from __future__ import annotations

from ..loading import STAGE_AFTER, STAGE_BASELINE, STAGE_NAMES
from ..stats.business import defect_figures, defective_figures, measured_figures
from .attempt import attempt
from .results import MetricAnalysis

# The portfolio's sigma_level: whether the sigma level adds the trade's long-term shift.
SHIFT = {"with-shift": True, "without-shift": False, "off": False}


def business_figures(res: MetricAnalysis) -> None:
    """The figures the business reports, for the baseline and (with data) the after period:
    from each period's totals (defectives; defects counted on units, ``size``), or from the
    period's capability study (measured values with specification limits)."""
    data, spec = res.data, res.data.spec
    shift = SHIFT[spec.sigma_level]
    if data.kind in ("defectives", "defects"):
        if data.kind == "defects" and spec.size is None:
            return  # no units checked: no figure per unit
        pts = data.points
        stage = pts["stage"].to_numpy(int)
        counts, sizes = pts["count"].to_numpy(float), pts["size"].to_numpy(float)
        for st in (STAGE_BASELINE, STAGE_AFTER):
            sel = stage == st
            if not sel.any():
                continue
            d, u = float(counts[sel].sum()), float(sizes[sel].sum())
            f = (
                attempt(res, "business figures", defective_figures, d, u, shift)
                if data.kind == "defectives"
                else attempt(
                    res,
                    "business figures",
                    defect_figures,
                    d,
                    u,
                    spec.opportunities_per_unit,
                    shift,
                )
            )
            if f is not None:
                res.business.append((STAGE_NAMES[st], f))
    elif res.period_histograms:
        for name, _, c in res.period_histograms:
            if c is not None:
                f = attempt(res, "business figures", measured_figures, c, "overall", shift)
                if f is not None:
                    res.business.append((name, f))
    elif res.capability is not None:
        f = attempt(res, "business figures", measured_figures, res.capability, "overall", shift)
        if f is not None:
            res.business.append((STAGE_NAMES[STAGE_BASELINE], f))
