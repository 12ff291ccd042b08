"""The palette: one place, distinct in lightness; system fonts only."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from steadyline.charts import style


def srgb_lightness(hex_colour: str) -> float:
    """CIE 1976 L* of an sRGB colour (IEC 61966-2-1 transfer function, D65 luminance Y)."""
    r, g, b = (int(hex_colour[i : i + 2], 16) / 255 for i in (1, 3, 5))

    def lin(c: float) -> float:
        return c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4

    y = 0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b)
    f = y ** (1 / 3) if y > (6 / 29) ** 3 else y / (3 * (6 / 29) ** 2) + 4 / 29
    return 116 * f - 16


def test_lightness_formula_reference_points():
    # CIE 15 definition of L*: white 100, black 0, L* = 50 at Y = ((50 + 16) / 116)^3 = 0.1842
    assert srgb_lightness("#ffffff") == pytest.approx(100.0, abs=1e-9)
    assert srgb_lightness("#000000") == pytest.approx(0.0, abs=1e-9)
    # sRGB 119/255 decodes to Y = 0.1845 (IEC 61966-2-1), just above L* 50
    assert srgb_lightness("#777777") == pytest.approx(50.03, abs=0.02)
    # the two branches of the L* formula meet at the CIE threshold (continuity)
    eps = (6 / 29) ** 3
    assert 116 * eps ** (1 / 3) - 16 == pytest.approx(
        116 * (eps / (3 * (6 / 29) ** 2) + 4 / 29) - 16
    )


@pytest.mark.parametrize(("a", "b"), style.CONTRASTING_PAIRS)
def test_colours_that_meet_differ_in_lightness(a, b):
    # common practice: a lightness difference of at least 15 L* keeps two colours apart in
    # greyscale and under the common colour-vision deficiencies
    la, lb = srgb_lightness(style.PALETTE[a]), srgb_lightness(style.PALETTE[b])
    assert abs(la - lb) >= 15, (a, b, la, lb)


def test_signal_differs_from_ordinary_point_in_shape_too():
    assert style.SHAPE_SIGNAL != style.SHAPE_POINT
    assert style.SHAPE_FAR_OUT != style.SHAPE_OUTLIER != style.SHAPE_MEAN
    assert style.SIZE_SIGNAL > style.SIZE_POINT


def test_colours_defined_only_in_style():
    here = Path(style.__file__).parent
    for path in here.glob("*.py"):
        if path.name == "style.py":
            continue
        assert not re.search(r"#[0-9a-fA-F]{6}\b", path.read_text()), path.name


def test_fonts_are_system_fonts_without_urls():
    cfg = style.vega_config()
    assert cfg["font"].rstrip().endswith("sans-serif")
    assert "url(" not in str(cfg) and "://" not in str(cfg)
    assert cfg["axis"]["labelFont"] == cfg["title"]["font"] == style.FONT
    assert style.vega_config() is not style.vega_config()  # callers may change their copy
    hexes = [v for v in style.PALETTE.values()]
    assert all(re.fullmatch(r"#[0-9a-f]{6}", h) for h in hexes)


def test_one_fill_per_kind_of_period_light_enough_to_read_marks_on():
    assert style.PERIOD_KINDS == (
        "before the baseline",
        "baseline",
        "between periods",
        "after",
        "after the after period",
    )
    fills = [style.PERIOD_FILLS[k] for k in style.PERIOD_KINDS]
    assert len(set(fills)) == len(fills)
    # every mark colour and line differs from every band by at least 15 L* (common practice,
    # as for the pairs above)
    for fill in fills:
        for name in (
            "data",
            "signal",
            "limit",
            "own_limit",
            "change_better",
            "change_worse",
            "change_unjudged",
        ):
            assert srgb_lightness(fill) - srgb_lightness(style.PALETTE[name]) >= 15, (fill, name)


def test_change_marks_differ_from_points_and_signals_in_shape():
    shapes = [
        style.SHAPE_POINT,
        style.SHAPE_SIGNAL,
        style.SHAPE_CHANGE_BETTER,
        style.SHAPE_CHANGE_WORSE,
        style.SHAPE_CHANGE_UNJUDGED,
    ]
    assert len(set(shapes)) == len(shapes)
    assert style.SIZE_OWN_SIGNAL > style.SIZE_CHANGE > style.SIZE_POINT  # the diamond shows round
