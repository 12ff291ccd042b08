"""The capability block ('Fit to the specification') shows the result's own figures.

Every number in the block is read from the Capability result; these tests recompute the ones a
reader acts on from the raw values (numpy) and check the drawing's geometry."""

from __future__ import annotations

import json
import re

import numpy as np
import pytest

from steadyline.site.capability_view import capability_view, counted_outside
from steadyline.stats.capability import capability


def _values(seed=3, n=120):
    return np.random.default_rng(seed).normal(10.0, 0.5, n)


def test_counted_share_is_the_count_of_values_outside_the_limits():
    x = _values()
    c = capability(x, sigma_within=0.45, lsl=9.2, usl=10.9)
    outside = int(np.sum((x < 9.2) | (x > 10.9)))  # reference: a plain count with numpy
    assert counted_outside(c) == outside > 0
    tiles = capability_view(c, "mm")["tiles"]
    assert tiles[2]["lead"] == f"{outside} of {len(x)} values"
    assert f"{100 * outside / len(x):.2g}%" in tiles[2]["lines"][0]


def test_leads_are_the_indices_to_two_decimals_and_the_interval_is_stated():
    x = _values()
    c = capability(x, sigma_within=0.45, lsl=8.5, usl=11.5)
    spread, room, _ = capability_view(c, "mm")["tiles"]
    assert spread["lead"] == f"Cp {c.cp:.2f}"
    assert room["lead"] == f"Cpk {c.cpk:.2f}"
    assert f"95% interval {c.cpk_ci[0]:.2f} to {c.cpk_ci[1]:.2f}" in " ".join(room["lines"])
    assert f"Pp {c.pp:.2f}" in " ".join(spread["lines"])
    assert f"Ppk {c.ppk:.2f}" in " ".join(room["lines"])


def test_the_drawing_places_limits_mean_and_spans_in_order():
    x = _values()
    c = capability(x, sigma_within=0.45, lsl=8.5, usl=11.5, target=10.2)
    r = capability_view(c, "mm")["ruler"]
    at = {m["kind"]: m["at"] for m in r["marks"] + r["limits"]}
    assert 0 <= at["lower"] < at["mean"] < at["target"] < at["upper"] <= 100
    assert r["window"] == {"from": at["lower"], "to": at["upper"]}
    short = next(b for b in r["bars"] if b["kind"] == "short")
    # mean ± 3 short-term sigma, on the same linear scale as the limits
    scale = (at["upper"] - at["lower"]) / (11.5 - 8.5)
    assert short["to"] - short["from"] == pytest.approx(6 * 0.45 * scale, abs=0.02)
    assert "The specification runs from 8.5 mm to 11.5 mm" in r["text"]


def test_one_sided_specification_says_what_needs_both_limits():
    c = capability(_values(), sigma_within=0.45, usl=11.5)
    view = capability_view(c, "mm")
    assert view["tiles"][0]["lines"] == ["Needs both a lower and an upper limit."]
    assert view["ruler"]["window"]["from"] == 0.0
    assert "no lower limit" in view["ruler"]["text"]


def test_demo_pages_show_the_block_with_the_results_figures(demo_site):
    page = (demo_site / "projects" / "spoke-tension" / "index.html").read_text(encoding="utf-8")
    results = json.loads((demo_site / "projects" / "spoke-tension" / "results.json").read_text())
    caps = [m["capability"] for m in results["metrics"] if m.get("capability")]
    assert caps
    for c in caps:
        assert f"Cpk {c['cpk']:.2f}" in page
        assert f"Cp {c['cp']:.2f}" in page
    assert "Fit to the specification" in page
    assert 'class="fit-ruler"' in page
    # the old table of within/overall rows is gone
    assert not re.search(r"Expected out of spec \((within|overall)\)", page)
