"""Every display compiles as Vega-Lite, renders, and holds only plain JSON data."""

from __future__ import annotations

import json
import math
import re
from datetime import date, datetime

import pytest
import vl_convert as vlc
from chart_fixtures import all_chart_specs, missing_fields, run_fresh, unit_views, walk_values

SPECS = all_chart_specs()
IDS = [name for name, _ in SPECS]
EXPECTED_DISPLAY = {
    "run-chart": "run-chart",
    "control-chart": "control-chart",
    "histogram": "histogram",
    "box-plot": "box-plot",
    "column-chart": "column-chart",
    "pareto": "pareto",
    "pareto-by-period": "pareto-by-period",
    "staged-control-chart": "staged-control-chart",
    "study-components": "study-components",
    "study-ranges": "study-ranges",
    "study-measurements": "study-measurements",
}


@pytest.mark.parametrize(("name", "chart"), SPECS, ids=IDS)
def test_compiles_to_vega(name, chart):
    # reference: the Vega-Lite compiler itself (vl-convert); a broken spec raises here
    vega = vlc.vegalite_to_vega(chart.spec)
    assert vega["$schema"].endswith("vega/v6.json")
    assert vega.get("marks"), "compiled spec draws nothing"


@pytest.mark.parametrize(("name", "chart"), SPECS, ids=IDS)
def test_every_encoded_field_is_in_its_data(name, chart):
    # vl-convert only warns on an unknown field or dataset, so check them ourselves
    assert missing_fields(chart.spec) == []
    assert list(unit_views(chart.spec)), "no views found"


@pytest.mark.parametrize(("name", "chart"), SPECS, ids=IDS)
def test_plain_json_no_nan_no_urls(name, chart):
    text = json.dumps(chart.spec, sort_keys=True, allow_nan=False)  # raises on NaN / inf
    for v in walk_values(chart.spec):
        assert not isinstance(v, date | datetime)
        assert v is None or isinstance(v, str | int | float | bool)
        if isinstance(v, float):
            assert math.isfinite(v)
        if isinstance(v, str):
            # the only URL is the schema identifier, which is never fetched
            assert "://" not in v or v.startswith("https://vega.github.io/schema/vega-lite/")
            assert not v.startswith("\u00a7\u00a7"), f"unfilled template placeholder {v}"
    assert '"url"' not in text
    json.dumps(list(chart.table), allow_nan=False)
    for row in chart.table:
        assert tuple(row) == chart.columns


@pytest.mark.parametrize(("name", "chart"), SPECS, ids=IDS)
def test_usermeta_names_display_and_config_is_shared(name, chart):
    display = chart.spec["usermeta"]["steadyline"]["display"]
    assert display == EXPECTED_DISPLAY[name.split(" ")[0]]
    from steadyline.charts.style import vega_config

    assert chart.spec["config"] == vega_config()
    assert chart.summary and "\n" not in chart.summary


def test_renders_to_svg():
    # reference: vl-convert's renderer; TZ=UTC keeps dates stable. Run in a child process so
    # that TZ is in effect from the start.
    code = (
        "import sys, json, vl_convert as vlc\n"
        "sys.path.insert(0, sys.argv[1])\n"
        "from chart_fixtures import all_chart_specs\n"
        "spec = dict(all_chart_specs())['control-chart X-mR'].spec\n"
        "print(vlc.vegalite_to_svg(spec, allowed_base_urls=[]))\n"
    )
    out = run_fresh(code, TZ="UTC")
    assert out.lstrip().startswith("<svg")
    texts = re.findall(r"<text[^>]*>([^<]*)</text>", out)
    for text in ("UCL 44.4", "CL 30", "UCL 17.6", "LCL 15.6", "Baseline", "After"):
        assert texts.count(text) >= 1, text
    assert texts.count("new intake form") == 1  # labelled once, on the upper chart
    assert texts.count("part of a signal") == 1  # one merged legend entry
    assert "limits from Baseline, 2026-01-05 to 2026-05-18 (20 points)" in out


def test_deterministic_across_processes():
    code = (
        "import sys, json\n"
        "sys.path.insert(0, sys.argv[1])\n"
        "from chart_fixtures import all_chart_specs\n"
        "print(json.dumps([c.spec for _, c in all_chart_specs()], sort_keys=True, allow_nan=False))\n"
    )
    out = run_fresh(code)
    here = json.dumps([c.spec for _, c in SPECS], sort_keys=True, allow_nan=False)
    assert out.strip() == here


def test_field_checker_catches_a_missing_field_and_dataset():
    spec = json.loads(json.dumps(dict(SPECS)["control-chart X-mR"].spec))
    del spec["datasets"]["limits"][0]["p"]
    assert any("'p'" in p for p in missing_fields(spec))
    del spec["datasets"]["labels"]
    assert any("'labels'" in p for p in missing_fields(spec))


@pytest.mark.parametrize(("name", "chart"), SPECS, ids=IDS)
def test_compiles_without_warnings(name, chart, capfd):
    # the compiler's warnings (conflicting scales, dropped channels, unknown fields) are printed
    # by vl-convert on the process's stderr
    capfd.readouterr()
    vlc.vegalite_to_vega(chart.spec, show_warnings=True)
    err = capfd.readouterr().err
    assert "WARN" not in err, err
