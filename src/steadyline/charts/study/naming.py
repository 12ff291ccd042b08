"""Parts and appraisers as a study's charts name them: in natural order, on keys of our own
(see charts.categorical), legends showing the names; the height of their panels.
"""

from __future__ import annotations

import re

from ..categorical.categories import _KEY_LABEL

_HEIGHT_STUDY = 190
_DIGITS = re.compile(r"(\d+)")


def natural_order(names) -> list[str]:
    """Part names in the order a reader looks for them: digits compared as numbers ("S2"
    before "S10"), the rest as text; the file's order of measuring is no order to read by.

    >>> natural_order(["S10", "S2", "b", "A"])
    ['A', 'b', 'S2', 'S10']
    """

    def key(name: str):
        return [
            (0, int(t), "") if t.isdigit() else (1, 0, t.casefold())
            for t in _DIGITS.split(name)
            if t
        ]

    return sorted(dict.fromkeys(names), key=key)


def _legend_keyed(title: str | None) -> dict:
    return {"title": title, "labelExpr": _KEY_LABEL, "labelLimit": 260}
