"""A Pareto chart in sentences: the vital few by name, and a caution when there are none.

Pure functions: results in, sentences out.
"""

from __future__ import annotations

from collections.abc import Sequence

from ..stats.results import Pareto
from .sentences import CLEAR_MARKER, SIGNAL_MARKER, Finding

__all__ = ["NAMED_VITAL", "pareto_cautions", "pareto_findings", "vital_names"]

# A finding or subtitle names at most this many of the vital few, then says how many more: a
# list of hundreds of names is read by no one (common practice).
NAMED_VITAL = 10


def vital_names(vital: Sequence[str]) -> str:
    """The vital few by name: all of them, or the first NAMED_VITAL and how many more."""
    names = [str(v) for v in vital]
    if len(names) <= NAMED_VITAL:
        return ", ".join(names)
    return ", ".join(names[:NAMED_VITAL]) + f" and {len(names) - NAMED_VITAL:,} more"


def pareto_findings(p: Pareto) -> list[Finding]:
    k, n = len(p.vital_few), len(p.categories)
    share = p.cumulative_percent[k - 1] if k else 0.0
    text = (
        f"{k:,} of {n:,} categories ({vital_names(p.vital_few)}) make up {share:.0f}% of the "
        f"total of {p.total:g}."
    )
    return [
        Finding(
            "signal" if k and k <= n / 2 else "clear",
            SIGNAL_MARKER if k <= n / 2 else CLEAR_MARKER,
            text,
        )
    ]


def pareto_cautions(p: Pareto) -> list[str]:
    k, n = len(p.vital_few), len(p.categories)
    if n >= 3 and k > n / 2:
        return [
            "No clear vital few: it takes more than half of the categories to reach "
            f"{p.threshold:.0f}% (the 80/20 split is a heuristic, not a law; common "
            "practice)."
        ]
    return []
