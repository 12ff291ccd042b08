"""Every display's spec is valid Vega-Lite by the schema Altair ships (reference: altair)."""

from __future__ import annotations

import copy

import pytest
from chart_fixtures import all_chart_specs
from vl_schema import _CHECKED, SpecError, check_spec


def test_every_display_and_variant_passes_altairs_vega_lite_schema():
    specs = all_chart_specs()
    assert len(specs) >= 7
    for name, chart in specs:
        try:
            check_spec(chart.spec)
        except SpecError as e:  # pragma: no cover - the message names the failing variant
            pytest.fail(f"{name}: {e}")


def test_an_invalid_spec_is_refused_with_its_display_named():
    spec = copy.deepcopy(all_chart_specs()[0][1].spec)
    spec.pop("layer", None)
    spec.pop("vconcat", None)
    spec["mark"] = {"type": "not-a-mark"}
    _CHECKED.clear()
    with pytest.raises(SpecError, match="run-chart spec is not valid Vega-Lite"):
        check_spec(spec)
