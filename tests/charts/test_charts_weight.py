"""Page weight and composition cost: a spec carries only what it draws, in few bytes, and the
templates cost next to nothing to compose in a fresh process (the build composes them in every
spawn-started worker)."""

from __future__ import annotations

import json
import re

import numpy as np
import pytest
from chart_fixtures import (
    MAIN_SIGNALS,
    all_chart_specs,
    make_ctx,
    make_individuals,
    make_run_analysis,
    run_fresh,
    walk_values,
)

from steadyline.charts import control_chart, run_chart
from steadyline.charts.base.numbers import disp

SPECS = all_chart_specs()
IDS = [name for name, _ in SPECS]


def _used_fields(spec: dict) -> set[str]:
    """Every field name a view reads: encodings and tooltips, lookups, filters, calculations,
    expressions of mark properties."""
    used: set[str] = set()

    def walk(node):
        if isinstance(node, dict):
            for k, v in node.items():
                if k == "field" and isinstance(v, str):
                    used.add(v)
                elif k == "lookup" and isinstance(v, str):
                    used.add(v)
                elif k == "key" and isinstance(v, str):
                    used.add(v)
                elif k == "fields" and isinstance(v, list):
                    used.update(f for f in v if isinstance(f, str))
                elif k in ("calculate", "test", "filter", "expr") and isinstance(v, str):
                    used.update(re.findall(r"datum\.(\w+)", v))
                if k != "datasets":
                    walk(v)
        elif isinstance(node, list):
            for v in node:
                walk(v)

    walk(spec)
    return used


@pytest.mark.parametrize(("name", "chart"), SPECS, ids=IDS)
def test_rows_carry_only_fields_that_are_used(name, chart):
    used = _used_fields(chart.spec)
    for ds, rows in chart.spec["datasets"].items():
        for row in rows:
            extra = set(row) - used
            assert not extra, f"{ds}: fields nothing reads: {sorted(extra)}"


@pytest.mark.parametrize(("name", "chart"), SPECS, ids=IDS)
def test_numbers_in_rows_have_at_most_six_significant_digits(name, chart):
    for v in walk_values(chart.spec["datasets"]):
        if isinstance(v, float):
            assert float(f"{v:.6g}") == v, v


def test_display_rounding():
    assert disp(29.699999999999996) == 29.7
    assert disp(0.04945904173106646) == 0.049459
    assert disp(1234567.8) == 1234570 and isinstance(disp(1234567.8), int)
    assert disp(float("nan")) is None and disp(None) is None
    assert disp(-0.0) == 0


def _bytes_per_point(spec: dict, n: int) -> float:
    data = json.dumps(spec["datasets"], separators=(",", ":"), ensure_ascii=False, sort_keys=True)
    return len(data.encode()) / n


def test_bytes_per_point_of_long_series():
    # bounds are our own budget (common practice: keep a page's data near what is drawn); before
    # the compact rows these charts took about 580 and 200 bytes per point
    n = 300
    ctx = make_ctx(n=n)
    rng = np.random.default_rng(5)
    cc = make_individuals(n=n)
    cc.values[:] = rng.normal(30, 4, n)
    cc.secondary.values[:] = np.abs(np.diff(cc.values))
    control = control_chart(ctx, cc, MAIN_SIGNALS)
    run = run_chart(ctx, cc.values, make_run_analysis(n))
    per_control = _bytes_per_point(control.spec, n)
    per_run = _bytes_per_point(run.spec, n)
    print(f"\n{per_control:.0f} B/point control chart with mR, {per_run:.0f} B/point run chart")
    assert per_control < 100
    assert per_run < 50
    # the table (CSV download) stays complete, at full precision
    assert len(control.table) == n and control.table[7]["value"] == float(cc.values[7])


def test_fresh_process_composes_every_template_quickly_without_altair():
    code = (
        "import sys, time\n"
        "sys.path.insert(0, sys.argv[1])\n"
        "from chart_fixtures import all_chart_specs\n"
        "from steadyline.charts.base import templates as base\n"
        "all_chart_specs()  # warm up the imports\n"
        "base.clear_template_cache()\n"
        "t = time.perf_counter(); all_chart_specs(); dt = time.perf_counter() - t\n"
        "print(len(base._TEMPLATES), dt, 'altair' in sys.modules)\n"
    )
    out = run_fresh(code).split()
    count, seconds, altair_loaded = int(out[0]), float(out[1]), out[2] == "True"
    assert count >= 12
    assert not altair_loaded  # templates are plain dicts: no Altair composition at all
    # every display and variant composed and filled once; was over 2 s with Altair composition
    assert seconds < 0.5, seconds
