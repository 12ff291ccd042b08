"""What results.json and the pages carry of a metric whose data outgrow what is drawn.

A metric with more points than a chart shows legibly is drawn by period
(``MetricAnalysis.by_period``); the cards and results.json say which period and why.
Lists that grow with the rows (a box plot's outlying values, free-text categories) are capped,
with the number left out, so that no file of the site grows with the rows: the full-resolution
values stay in the user's own file.
"""

from __future__ import annotations

import numpy as np

from ..analysis import MetricAnalysis
from ..charts.distribution import MAX_OUTLIERS_EACH_SIDE
from ..stats.results import BoxSummary, Pareto
from .serialise import plain


def by_period_brief(a: MetricAnalysis) -> str:
    b = a.by_period
    return "" if b is None else f", drawn by {b.period}"


def by_period_text(a: MetricAnalysis) -> str:
    """The sentence a time-based card adds when its points are periods the tool chose: what
    it chose and why ("" otherwise)."""
    b = a.by_period
    return "" if b is None else " " + b.reason


def by_period_json(a: MetricAnalysis) -> dict | None:
    """results.json's account of a period the tool chose to draw by (None when the metric is
    drawn point by point or by its own roll-up)."""
    b = a.by_period
    if b is None:
        return None
    return {
        "period": b.period,
        "points": b.points,
        "periods": b.periods,
        "limit": b.limit,
        "how": b.how,
        "reason": b.reason,
    }


def box_json(b: BoxSummary) -> dict:
    """A box plot's results.json entry with its outlying values capped as the chart caps them:
    the MAX_OUTLIERS_EACH_SIDE lowest and the MAX_OUTLIERS_EACH_SIDE highest (kept in their
    order in the data), with the number left out, so that the file does not grow with the
    rows."""
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


# Categories listed in results.json per Pareto or column chart: the page's data tables show at
# most 200 rows too (cards.TABLE_ROWS_SHOWN); free-text categories can grow with the rows.
CATEGORIES_LISTED = 200


def pareto_json(p: Pareto) -> dict:
    """A Pareto's results.json entry with its categories capped at the CATEGORIES_LISTED largest
    (in the Pareto's order), with the number of categories and the count left out; the total,
    percentages and cumulative percentages stay those of every category."""
    out = plain(p)
    left = max(0, len(p.categories) - CATEGORIES_LISTED)
    out["categories_left_out"] = left
    out["count_left_out"] = plain(float(sum(p.counts[CATEGORIES_LISTED:]))) if left else 0.0
    out["vital_few_left_out"] = 0
    if left:
        for key in ("categories", "counts", "percent", "cumulative_percent"):
            out[key] = out[key][:CATEGORIES_LISTED]
        kept = set(out["categories"])
        out["vital_few"] = [c for c in p.vital_few if c in kept]
        out["vital_few_left_out"] = len(p.vital_few) - len(out["vital_few"])
    return out


def column_json(p: Pareto | None, names: tuple[str, ...], counts: tuple[float, ...]) -> dict:
    """The column chart's results.json entry: its categories in their own (alphabetical) order,
    capped at the CATEGORIES_LISTED largest (those the Pareto entry lists), with the number of
    categories and the count left out."""
    left = max(0, len(names) - CATEGORIES_LISTED)
    if left and p is not None:
        kept = set(p.categories[:CATEGORIES_LISTED])
        pairs = [(n, c) for n, c in zip(names, counts, strict=True) if n in kept]
        out_count = float(sum(counts)) - float(sum(c for _, c in pairs))
        names, counts = tuple(n for n, _ in pairs), tuple(c for _, c in pairs)
    else:
        left, out_count = 0, 0.0
    return {
        "categories": list(names),
        "counts": list(counts),
        "categories_left_out": left,
        "count_left_out": plain(out_count),
    }
