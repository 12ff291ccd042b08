"""Templates are composed once per process; filled specs equal freshly composed ones."""

from __future__ import annotations

import copy
import json
import time

import numpy as np
from chart_fixtures import (
    MAIN_SIGNALS,
    all_chart_specs,
    make_ctx,
    make_individuals,
    missing_fields,
)

from steadyline.charts import clear_template_cache, control_chart
from steadyline.charts.base import templates as chart_base


def _dump(spec) -> str:
    return json.dumps(spec, sort_keys=True, allow_nan=False)


def test_cached_specs_equal_fresh_composition():
    clear_template_cache()
    fresh = [_dump(c.spec) for _, c in all_chart_specs()]  # composes every template anew
    assert chart_base._TEMPLATES, "templates were not cached"
    cached_1 = [_dump(c.spec) for _, c in all_chart_specs()]
    cached_2 = [_dump(c.spec) for _, c in all_chart_specs()]
    assert cached_1 == fresh
    assert cached_2 == fresh


def test_filled_specs_do_not_share_state_with_the_template():
    ctx = make_ctx()
    a = control_chart(ctx, make_individuals(), MAIN_SIGNALS).spec
    before = copy.deepcopy(chart_base._TEMPLATES)
    # vandalise the returned spec: nothing of it may leak into the cache or the next spec
    a["vconcat"][0]["layer"][0]["encoding"]["x"]["scale"]["type"] = "linear"
    a["config"]["font"] = "serif"
    a["datasets"]["points"].clear()
    assert chart_base._TEMPLATES == before
    b = control_chart(ctx, make_individuals(), MAIN_SIGNALS).spec
    assert b["vconcat"][0]["layer"][0]["encoding"]["x"]["scale"]["type"] == "utc"
    assert b["config"]["font"] != "serif"
    assert b["datasets"]["points"]


def test_different_data_gives_different_specs_from_one_template():
    ctx = make_ctx()
    cc = make_individuals()
    a = control_chart(ctx, cc, ()).spec
    cc2 = make_individuals()
    cc2.values[0] = 99.0
    b = control_chart(ctx, cc2, ()).spec
    assert a["datasets"]["points"][0]["v"] != b["datasets"]["points"][0]["v"]
    a["datasets"] = b["datasets"] = None
    assert _dump(a) == _dump(b)  # same template, only the data differ


def test_hundred_control_charts_after_the_first():
    ctx = make_ctx(n=300)
    rng = np.random.default_rng(11)
    charts_in = []
    for _ in range(100):
        cc = make_individuals(n=300)
        cc.values[:] = rng.normal(30, 4, 300)
        charts_in.append(cc)
    control_chart(ctx, charts_in[0], MAIN_SIGNALS)  # composes the template
    t0 = time.perf_counter()
    out = [control_chart(ctx, cc, MAIN_SIGNALS) for cc in charts_in]
    elapsed = time.perf_counter() - t0
    print(f"\n100 control charts of 300 points from the cached template: {elapsed * 1000:.0f} ms")
    assert len({_dump(c.spec["datasets"]["points"]) for c in out}) == 100
    assert missing_fields(out[-1].spec) == []
