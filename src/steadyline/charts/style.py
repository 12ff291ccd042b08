"""The look of every chart, defined once: palette, marker shapes, fonts and the Vega-Lite config.

Palette. The colours are our own choice. Every pair of colours that meets on one chart is meant to
differ in CIE L* (lightness) by at least 15, so that the pair stays apart in greyscale prints and
for every kind of colour-vision deficiency (they change hue, not lightness, to a first
approximation). How it was checked: tests/charts/test_charts_style.py computes L* from the sRGB
hex codes with the sRGB transfer function (IEC 61966-2-1) and the CIE 1976 L* formula, and asserts
the differences for the pairs listed in ``CONTRASTING_PAIRS``. Colour never carries meaning alone:
signal points also change shape and size, limits are dashed, the vital few also differ in opacity,
and every marked thing is named in a legend or a label.
"""

from __future__ import annotations

from ..vocab import PeriodKind

# --- colours --------------------------------------------------------------------------------------
INK = "#262626"  # text, axes, medians (L* 15)
DATA = "#1f4e79"  # measured values: lines, points, main bars (L* 32)
SIGNAL = "#e08a00"  # points taking part in a signal (L* 65)
CENTRE = "#707070"  # centre line, solid (L* 47)
LIMIT = "#707070"  # control limits, dashed (L* 47)
OWN_LIMIT = "#262626"  # a later period's own limits on the staged chart, solid (L* 15)
EVENT = "#7b5aa6"  # event rules, dotted (L* 45)
SPEC = "#9a3412"  # specification limits on a histogram, dashed (L* 37)
TARGET = INK  # target on a histogram, dotted
HIST_BAR = "#8fb3d9"  # histogram bars (L* 72)
BOX_FILL = "#8fb3d9"  # box between the quartiles (L* 72)
CURVE = "#c46a00"  # fitted normal curve, cumulative-percentage line (L* 54)
VITAL = DATA  # vital-few bars on a Pareto chart, full opacity (L* 32)
REMAINING = "#a9c6e4"  # remaining bars on a Pareto chart, lighter and translucent (L* 79)
# On the control chart by period: an after point judged against the baseline's limits and taking
# part in a signal there is evidence of a change, drawn in a shape and colour of its own with a
# dark outline (the outline, L* 15, sets it apart from the signal diamond it may sit on, L* 65).
CHANGE_BETTER = "#5cc39a"  # square (L* 72)
CHANGE_WORSE = "#ee99aa"  # cross (L* 72)
CHANGE_UNJUDGED = "#b0b0b0"  # triangle, direction not judged (L* 72)
CHANGE_OUTLINE = INK
# A point set aside (a known cause found and removed): drawn, but left out of the baseline's
# statistics; a grey square, set apart from the ordinary points in shape as well as colour.
ASIDE = "#8c8c8c"  # (L* 58)
GRID = "#e3e3e3"
WHITE = "#ffffff"

# Period backgrounds: one fill per kind of period, the same on every chart, whatever the order
# of the periods (the kinds in time order; kept very light, L* 94 to 97, so that points and
# lines read on every one; the band's name is printed on it and in the legend, so the fill
# never carries the meaning alone).
# The kinds' words are the vocabulary's (steadyline.vocab.PeriodKind), defined there once.
PERIOD_BEFORE = PeriodKind.BEFORE.value
PERIOD_BASELINE = PeriodKind.BASELINE.value
PERIOD_BETWEEN = PeriodKind.BETWEEN.value
PERIOD_AFTER = PeriodKind.AFTER.value
PERIOD_LATER = PeriodKind.LATER.value
PERIOD_FILLS = {
    PERIOD_BEFORE: "#f0f0f0",  # grey (L* 95)
    PERIOD_BASELINE: "#e8f0f8",  # light blue (L* 94)
    PERIOD_BETWEEN: "#faf6e9",  # light sand (L* 97)
    PERIOD_AFTER: "#eaf4ea",  # light green (L* 95)
    PERIOD_LATER: "#f5eef6",  # light lilac (L* 95)
}
PERIOD_KINDS = tuple(PERIOD_FILLS)
PALETTE = {
    "ink": INK,
    "data": DATA,
    "signal": SIGNAL,
    "centre": CENTRE,
    "limit": LIMIT,
    "own_limit": OWN_LIMIT,
    "event": EVENT,
    "spec": SPEC,
    "hist_bar": HIST_BAR,
    "box_fill": BOX_FILL,
    "curve": CURVE,
    "vital": VITAL,
    "remaining": REMAINING,
    "change_better": CHANGE_BETTER,
    "change_worse": CHANGE_WORSE,
    "change_unjudged": CHANGE_UNJUDGED,
    "change_outline": CHANGE_OUTLINE,
}

# Series told apart by colour (the appraisers of a measurement study, in the order they
# appear): the config's category range, named once here.
SERIES = (DATA, CURVE, EVENT, SPEC, "#4d8f2a", "#8a8a8a")

# Pairs that are drawn on top of or next to each other (checked for lightness difference >= 15).
CONTRASTING_PAIRS = (
    ("data", "signal"),
    ("data", "limit"),
    ("signal", "limit"),
    ("own_limit", "data"),
    ("own_limit", "signal"),
    ("own_limit", "limit"),
    ("hist_bar", "spec"),
    ("hist_bar", "curve"),
    ("hist_bar", "ink"),
    ("box_fill", "ink"),
    ("box_fill", "data"),
    ("vital", "remaining"),
    ("vital", "curve"),
    ("remaining", "curve"),
    ("change_better", "data"),
    ("change_better", "limit"),
    ("change_better", "own_limit"),
    ("change_worse", "data"),
    ("change_worse", "limit"),
    ("change_worse", "own_limit"),
    ("change_unjudged", "data"),
    ("change_unjudged", "limit"),
    ("change_unjudged", "own_limit"),
    ("change_outline", "signal"),
)

# --- marker shapes (Vega-Lite shape names) --------------------------------------------------------
SHAPE_POINT = "circle"
SHAPE_SIGNAL = "diamond"
SHAPE_OUTLIER = "circle"
SHAPE_FAR_OUT = "triangle-up"
SHAPE_MEAN = "cross"
SHAPE_CHANGE_BETTER = "square"
SHAPE_CHANGE_WORSE = "cross"
SHAPE_CHANGE_UNJUDGED = "triangle-up"
SHAPE_ASIDE = "square"
SIZE_ASIDE = 44
SIZE_POINT = 28
SIZE_SIGNAL = 90
SIZE_CHANGE = 70
SIZE_OWN_SIGNAL = 190  # the diamond drawn beneath a point in a signal on its own limits

# Stroke dash patterns.
DASH_LIMIT = [6, 4]
DASH_EVENT = [2, 3]
DASH_TARGET = [2, 2]
DASH_REFERENCE = [4, 3]

# --- type -----------------------------------------------------------------------------------------
# System fonts only: nothing is fetched, every platform finds one of these.
FONT = (
    'system-ui, -apple-system, "Segoe UI", Roboto, "Noto Sans", "Liberation Sans", '
    "Helvetica, Arial, sans-serif"
)
FONT_SIZE = 12
TITLE_SIZE = 14

# Default heights (width follows the page: "container"); low enough that a chart, its lead
# sentence and its card's foot fit a laptop's screen at once.
HEIGHT_MAIN = 220
HEIGHT_SECONDARY = 110
HEIGHT_DISTRIBUTION = 200
PANEL_STEP = 22  # px per category in side-by-side Pareto panels


def vega_config() -> dict:
    """The one Vega-Lite config shared by every chart (a fresh dict each call)."""
    return {
        "font": FONT,
        # lets the time axes pass Vega a multi-format object (charts.base.xaxis.x_encoding)
        "customFormatTypes": True,
        "background": "#ffffff",
        # room on the right for the last label of a time axis, centred on its tick: Vega
        # estimates text widths, and the browser's font can draw a few pixels wider
        "padding": {"top": 8, "bottom": 8, "left": 8, "right": 20},
        "view": {"stroke": None, "continuousHeight": HEIGHT_MAIN},
        "title": {
            "anchor": "start",
            "font": FONT,
            "fontSize": TITLE_SIZE,
            "fontWeight": 600,
            "color": INK,
            "subtitleFont": FONT,
            "subtitleFontSize": FONT_SIZE - 1,
            "subtitleColor": "#4a4a4a",
            "offset": 8,
        },
        "axis": {
            "labelFont": FONT,
            "titleFont": FONT,
            "labelFontSize": FONT_SIZE - 1,
            "titleFontSize": FONT_SIZE,
            "titleFontWeight": 500,
            "labelColor": INK,
            "titleColor": INK,
            "domainColor": "#8a8a8a",
            "tickColor": "#8a8a8a",
            "gridColor": GRID,
            # the first and last labels of a continuous axis stay inside the drawing instead of
            # being centred on the end ticks and cut at the edge
            "labelFlush": True,
        },
        "legend": {
            "labelFont": FONT,
            "titleFont": FONT,
            "labelFontSize": FONT_SIZE - 1,
            "titleFontSize": FONT_SIZE - 1,
            "labelColor": INK,
            "titleColor": INK,
            "orient": "bottom",
            "direction": "horizontal",
        },
        "header": {"labelFont": FONT, "titleFont": FONT},
        "text": {"font": FONT, "fontSize": FONT_SIZE - 1, "color": INK},
        "line": {"strokeWidth": 1.5},
        "point": {"filled": True},
        "range": {"category": list(SERIES)},
    }
