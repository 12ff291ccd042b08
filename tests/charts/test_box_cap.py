"""A box plot's weight does not grow with the number of outlying values."""

from __future__ import annotations

import numpy as np

from steadyline.charts import box_chart
from steadyline.charts.distribution.box import MAX_OUTLIERS_EACH_SIDE
from steadyline.stats import box_summary


def test_only_the_most_extreme_outliers_are_drawn_and_the_rest_counted():
    rng = np.random.default_rng(3)
    # heavy tails: thousands of values beyond the fences (Student t with 2 degrees of freedom)
    values = rng.standard_t(2, 200_000)
    b = box_summary(values)
    assert len(b.outlier_values) > 4 * MAX_OUTLIERS_EACH_SIDE
    chart = box_chart([("Baseline", b)], unit="mm")
    marks = [
        r
        for rows in chart.spec["datasets"].values()
        for r in rows
        if isinstance(r, dict) and str(r.get("kind", "")).startswith(("outlier", "far"))
    ]
    assert len(marks) == 2 * MAX_OUTLIERS_EACH_SIDE
    drawn = sorted(r["value"] for r in marks)
    assert drawn[0] == round(float(values.min()), 12) or abs(drawn[0] - values.min()) < 1e-3
    assert abs(drawn[-1] - values.max()) < 1e-3 * max(1.0, abs(values.max()))
    assert any("not drawn" in s for s in chart.spec["title"].get("subtitle", []))
    row = chart.table[0]
    assert row["outliers"] + row["far out"] == len(b.outlier_values)  # the table counts all
