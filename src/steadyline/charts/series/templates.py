"""The templates of the series charts: the run chart and the control chart (plain or by
period, with or without its dispersion companion), composed from the layers once per process.
"""

from __future__ import annotations

from .. import style, vl
from ..base.events import event_layers, headroom_layer
from ..base.periods import band_layers
from ..base.templates import finish_template
from .limit_layers import NARROW, _median_layers, _reference_layers
from .point_layers import _value_layers, _y


def _series_view(
    is_time: bool, suf: str, y_slot: str, height: int, refs: str, aside: bool = False
) -> dict:
    prefix = "secondary_" if suf else ""
    layers = band_layers(is_time) + event_layers(is_time, labelled=not suf)
    if refs == "limits":
        layers += _reference_layers(is_time, prefix, y_slot)
    elif refs == "staged":
        layers += _reference_layers(is_time, prefix, y_slot, staged=True)
    else:
        layers += _median_layers(is_time, y_slot)
    if not suf:  # room above the points for the event labels (the chart beneath has none)
        layers.append(headroom_layer(_y("y", y_slot)))
    layers += _value_layers(
        is_time, suf, y_slot, with_limits=refs != "median", staged=refs == "staged", aside=aside
    )
    return vl.layer(*layers, width="container", height=height)


def _run_template(is_time: bool, aside: bool = False) -> dict:
    chart = _series_view(is_time, "", "y_title", style.HEIGHT_MAIN, refs="median", aside=aside)
    return finish_template(chart, "run-chart")


def _control_template(
    is_time: bool, has_secondary: bool, refs: str = "limits", aside: bool = False
) -> dict:
    display = "staged-control-chart" if refs == "staged" else "control-chart"
    main = _series_view(is_time, "", "y_title", style.HEIGHT_MAIN, refs=refs, aside=aside)
    narrow = [{"name": NARROW, "value": False}]
    if not has_secondary:
        return finish_template({**main, "params": narrow}, display)
    second = _series_view(is_time, "2", "y2_title", style.HEIGHT_SECONDARY, refs=refs, aside=aside)
    chart = {
        "params": narrow,
        "vconcat": [main, second],
        "spacing": 18,
        "resolve": {"scale": {"x": "shared"}},
    }
    return finish_template(chart, display)
