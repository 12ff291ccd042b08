"""What results.json and the pages carry of a metric whose data outgrow what is drawn.

A metric with more points than a chart shows legibly is drawn by period
(:class:`steadyline.loading.ByPeriod`); the cards and results.json say which period and why.
Lists that grow with the rows (a box plot's outlying values) are capped as the charts cap them,
with the number left out, so that no file of the site grows with the rows: the full-resolution
values stay in the user's own file.
"""

from __future__ import annotations

import numpy as np

from ..analysis import MetricAnalysis
from ..charts.distribution import MAX_OUTLIERS_EACH_SIDE
from ..stats.results import BoxSummary
from .serialise import plain


def by_period_brief(a: MetricAnalysis) -> str:
    b = a.data.by_period
    return "" if b is None else f", drawn by {b.period}"


def by_period_text(a: MetricAnalysis) -> str:
    """The sentence a time-based card adds when its points are periods the tool chose: what
    it chose and why ("" otherwise)."""
    b = a.data.by_period
    return "" if b is None else " " + b.reason


def by_period_json(a: MetricAnalysis) -> dict | None:
    """results.json's account of a period the tool chose to draw by (None when the metric is
    drawn point by point or by its own roll-up)."""
    b = a.data.by_period
    if b is None:
        return None
    return {"period": b.period, "points": b.points, "periods": b.periods, "limit": b.limit,
            "how": b.how, "reason": b.reason}


def box_json(b: BoxSummary) -> dict:
    """A box plot's results.json entry with its outlying values capped as the chart caps them:
    the most extreme MAX_OUTLIERS_EACH_SIDE below the box and above it (in the order of the
    values), with the number left out, so that the file does not grow with the rows."""
    out = plain(b)
    idx = np.asarray(b.outlier_indices, dtype=np.int64)
    vals = np.asarray(b.outlier_values, dtype=float)
    keep_each = MAX_OUTLIERS_EACH_SIDE
    left_out = max(0, len(idx) - 2 * keep_each)
    out["outliers_left_out"] = left_out
    out["far_out_left_out"] = 0
    if left_out:
        order = np.argsort(vals, kind="stable")
        kept = np.sort(np.concatenate([order[:keep_each], order[-keep_each:]]))
        kept_idx = idx[kept]
        far = np.asarray(b.far_out_indices, dtype=np.int64)
        far_kept = far[np.isin(far, kept_idx)]
        out["outlier_indices"] = kept_idx.tolist()
        out["outlier_values"] = plain(vals[kept])
        out["far_out_indices"] = far_kept.tolist()
        out["far_out_left_out"] = int(len(far) - len(far_kept))
    return out
