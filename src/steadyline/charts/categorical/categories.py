"""Categories as the bar charts stand them: each bar on a key of our own (never a name, which
Vega would take for an inherited property), the many categories beyond MAX_BARS gathered
into one last bar, and the legend's words for the first 80% and the rest.
"""

from __future__ import annotations

from collections.abc import Sequence

from .. import vl

# The bars of the smallest leading set that reaches 80% and the rest. The legend does not call
# them "the vital few": whether they are a vital few is the card's finding (none is clear when it
# takes more than half of the categories), which a legend cannot qualify.
VITAL_LABEL = "first 80%"
REST_LABEL = "the rest"
IN_FIRST = "in the first 80%"  # the data tables' column
_GROUPS = [VITAL_LABEL, REST_LABEL]

# Category names are data, never code. Vega keeps the values of a band scale's field as keys of
# plain objects (its aggregates, stacks and scale domains), so a category named "constructor",
# "toString" or "__proto__" would be taken for a property every object inherits: the chart was
# refused ("Operator not defined") or its bars went missing. And an explicit sort order is
# compiled by Vega-Lite into an expression holding every name. So each bar stands on a key of
# our own, never a name: its place, zero-padded, a space, then the name ("03 toString"). Keys
# begin with a digit, so none is an inherited property's name; they sort as the bars stand, so
# no sort order is needed; and the axis shows the name, everything after the key's first space.
_KEY_LABEL = "slice(datum.label, indexof(datum.label, ' ') + 1)"

# A bar chart of categories stays legible up to about two dozen bars at a page's width (labels
# at an angle, each bar some 20 px wide; common practice). Beyond MAX_BARS categories, the
# first MAX_BARS - 1 in the chart's order are drawn one by one and all the others go into one
# last bar, named with how many it gathers; the data table and CSV keep every category.
MAX_BARS = 25


def gathered(n_categories: int) -> int:
    """How many categories a chart of ``n_categories`` gathers into its last bar (0: none)."""
    return n_categories - (MAX_BARS - 1) if n_categories > MAX_BARS else 0


def others_label(n: int) -> str:
    """The name of the bar that gathers ``n`` categories."""
    # short enough for the axis label's room (140 px at an angle) to show the number whole
    return f"all {n:,} others"


def bar_keys(names: Sequence[str]) -> list[str]:
    """The x keys of bars in the order they stand (see _KEY_LABEL)."""
    width = len(str(len(names)))
    return [f"{i:0{width}d} {n}" for i, n in enumerate(names, 1)]


def _category_x() -> dict:
    return vl.field(
        "key:N",
        title="category",
        axis={"title": None, "labelAngle": -35, "labelLimit": 140, "labelExpr": _KEY_LABEL},
    )
