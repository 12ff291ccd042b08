"""The statistics in a notebook: a DataFrame and a metric's keys in one call give what a build
of the same data gives, and charts that display themselves in Jupyter (tested on the objects,
with no Jupyter)."""

from __future__ import annotations

import json
import tomllib
from pathlib import Path

import pandas as pd
import pytest

from steadyline.config import load_portfolio
from steadyline.errors import ProjectError
from steadyline.notebook import Chart, analyse_frame, vegalite_media_type

REPO = Path(__file__).resolve().parents[1]
DEMO = REPO / "projects"


def _demo_metric(slug: str, index: int = 0) -> tuple[dict, dict]:
    """A demo metric's keys as a notebook user would copy them from project.toml (the
    project's [comparison] periods added), and its project's events."""
    meta = tomllib.loads((DEMO / slug / "project.toml").read_text(encoding="utf-8"))
    m = dict(meta["metric"][index])
    comp = meta.get("comparison", {})
    for key in ("baseline", "after"):
        if key not in m and key in comp:
            m[key] = comp[key]
    events = [(e["date"], e["label"]) for e in meta.get("event", [])]
    return m, events


@pytest.mark.parametrize("slug", ["spoke-tension", "customer-returns", "order-picking-errors"])
def test_a_frame_gives_what_the_build_of_its_csv_gives(demo_site, slug):
    """The frame read by pandas from the demo's CSV, with the metric's keys from its
    project.toml, gives the same figures as the built site's results.json (every key but the
    file's name), and the same charts as the site's chart downloads."""
    m, events = _demo_metric(slug)
    frame = pd.read_csv(DEMO / slug / m["file"], parse_dates=[m["time"]] if "time" in m else None)
    before = frame.copy()
    # the demo portfolio's settings (its sigma_level shows the sigma level)
    settings, _ = load_portfolio(DEMO)
    r = analyse_frame(frame, m, events=events, settings=settings)
    pd.testing.assert_frame_equal(frame, before)  # the frame is not changed
    built = json.loads((demo_site / "projects" / slug / "results.json").read_text())
    entry = next(e for e in built["metrics"] if e["id"] == m["id"])
    assert r.results["file"] == "<DataFrame>"
    # a frame holds one metric: the study a metric names (measurement_study) is not there
    own = ("file", "measurement_study")
    assert {k: v for k, v in r.results.items() if k not in own} == {
        k: v for k, v in entry.items() if k not in own
    }
    if built["history"]:
        assert r.history == next(h for h in built["history"] if h["id"] == m["id"])
    data = demo_site / "projects" / slug / "data"
    assert r.charts
    for key, chart in r.charts.items():
        name = (
            f"{key.replace('history-', 'history-' + m['id'] + '-', 1)}"
            if key.startswith("history-")
            else f"{m['id']}-{key}"
        )
        assert chart.spec == json.loads((data / f"{name}.vl.json").read_text()), key
        assert chart.title and chart.summary


def test_the_charts_display_themselves(demo_site):
    m, events = _demo_metric("spoke-tension")
    frame = pd.read_csv(DEMO / "spoke-tension" / m["file"], parse_dates=[m["time"]])
    r = analyse_frame(frame, m, events=events)
    chart = r.charts["control"]
    assert isinstance(chart, Chart)
    bundle = chart._repr_mimebundle_()
    # Altair keys a Vega-Lite spec by the major version of its schema; our specs name theirs
    import altair as alt

    major = alt.SCHEMA_VERSION.lstrip("v").split(".")[0]
    assert chart.spec["$schema"].endswith(f"/vega-lite/{alt.SCHEMA_VERSION}.json")
    media = f"application/vnd.vegalite.v{major}+json"
    assert vegalite_media_type(chart.spec) == media
    assert set(bundle) == {media, "image/svg+xml", "text/plain"}
    assert bundle[media] is chart.spec
    svg = bundle["image/svg+xml"]
    assert svg.startswith("<svg") and svg.rstrip().endswith("</svg>")
    assert "<script" not in svg
    assert chart.title in bundle["text/plain"]
    assert set(chart._repr_mimebundle_(include=["image/svg+xml"])) == {"image/svg+xml"}
    assert media not in chart._repr_mimebundle_(exclude=[media])
    # the findings and cautions of the page's card
    page = (demo_site / "projects" / "spoke-tension" / "index.html").read_text()
    assert chart.findings and all(f.replace("'", "&#39;") in page for f in chart.findings)
    with pytest.raises(ValueError):
        vegalite_media_type({"mark": "point"})


def test_bad_keys_and_bad_cells_are_named_like_a_files():
    frame = pd.DataFrame(
        {"day": pd.date_range("2026-01-01", periods=6), "v": [1.0, 2.0, "x", 4.0, None, 6.0]}
    )
    keys = {
        "id": "a",
        "name": "A",
        "type": "continuous",
        "better": "lower",
        "time": "day",
        "value": "v",
    }
    with pytest.raises(ProjectError) as e:
        analyse_frame(frame, keys | {"better": "sideways"})
    assert [p.format() for p in e.value.problems if p.severity == "error"] == [
        "<DataFrame>: metric[1].better: expected one of lower, higher, target, got 'sideways'"
    ]
    with pytest.raises(ProjectError) as e:
        analyse_frame(frame, keys)
    # rows numbered as the lines of a CSV file with a header: the third row is line 4
    assert [p.format() for p in e.value.problems] == [
        "<DataFrame>:4: column 'v': 'x' is not a number",
        "<DataFrame>:6: warning: column 'v': blank cell; the row is left out",
    ]
    with pytest.raises(ProjectError) as e:
        analyse_frame(frame, keys | {"value": "w"})
    assert "column 'w': not found" in e.value.problems[0].format()
    with pytest.raises(ProjectError) as e:
        analyse_frame(frame.iloc[:0], keys)
    assert e.value.problems[0].format() == "<DataFrame>: the DataFrame has no rows"


def test_a_file_key_copied_from_project_toml_is_not_read():
    frame = pd.DataFrame(
        {"day": pd.date_range("2026-01-01", periods=20), "v": [float(i % 5) for i in range(20)]}
    )
    keys = {
        "id": "a",
        "name": "A",
        "type": "continuous",
        "better": "lower",
        "time": "day",
        "value": "v",
        "baseline": ("2026-01-01", "2026-01-10"),
    }
    r = analyse_frame(frame, keys | {"file": "no/such/file.csv"})
    assert r.results["file"] == "<DataFrame>"
    assert r.results["periods"]["baseline"] == ["2026-01-01", "2026-01-10"]
