"""A measurement study's data -> its figures: the ANOVA study and the ranges by appraiser.

A metric of type measurement-study is read by ``loading.load_study`` and analysed here, apart
from the process metrics: it has no periods, no control chart of its own and no status.
"""

from __future__ import annotations

from ..loading import StudyData
from ..stats.gauge import appraiser_ranges, gauge_study
from .attempt import attempt
from .results import StudyAnalysis


def analyse_study(data: StudyData) -> StudyAnalysis:
    """The ANOVA study (with the metric's specification limits, for the shares of the
    tolerance when both are given) and the ranges by appraiser."""
    m = data.spec
    res = StudyAnalysis(m, data)
    res.study = attempt(
        res,
        "measurement study",
        gauge_study,
        data.values,
        data.parts,
        data.appraisers,
        lsl=m.spec_lower,
        usl=m.spec_upper,
    )
    res.ranges = attempt(
        res, "ranges by appraiser", appraiser_ranges, data.values, data.parts, data.appraisers
    )
    return res
