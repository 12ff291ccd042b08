"""The index stage's files: the index page and the CSV of every project's headline figures.

Both are made from the projects' index entries (made by the workers, or kept in the manifest
for reused projects) and the build date, on every build: a project's status on the index is
its results' status (``entry["status"]``, the same as its results.json) unless its data are
stale on the build date (:func:`steadyline.status.on_index`). Light: no statistics stack.
"""

from __future__ import annotations

import datetime as dt
import re

from ..config import PHASES, PortfolioSettings
from ..status import LABELS, MEANINGS, Status, Verdict, look_at, on_index
from .common import page_context
from .templates import render

FIGURES_CSV = "headline-figures.csv"
FIGURES_COLUMNS = (
    "project",
    "title",
    "owner",
    "phase",
    "headline_metric",
    "unit",
    "measure",
    "baseline",
    "after",
    "change",
    "percent_change",
    "status",
    "reason",
    "data_to",
)
# The index's sort orders (the select's options): key -> label. The first is the page's own.
SORTS = {
    "status": "status, needing attention first",
    "data": "last data, oldest first",
    "owner": "owner",
    "title": "title",
}

_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")
_NEEDS_QUOTES = re.compile(r'[",\n\r]')


def csv_text(s: str) -> str:
    """A text cell a spreadsheet will not run as a formula, quoted as RFC 4180 wants (the same
    as the chart downloads' cells, site.tables.safe_cell, without importing the charts)."""
    if s.startswith(_FORMULA_START):
        try:
            float(s)
        except ValueError:
            s = "'" + s
    return '"' + s.replace('"', '""') + '"' if _NEEDS_QUOTES.search(s) else s


def _verdict(e: dict) -> Verdict:
    if e["broken"]:
        n = e["problem_count"]
        return Verdict(Status.NOT_BUILT, f"{n} problem{'' if n == 1 else 's'} in its files")
    s = e["status"]
    return Verdict(Status(s["code"]), s["reason"], s["note"])


def _view(e: dict, today: dt.date, stale_after_days: int) -> dict:
    """The entry with what the index shows of its status."""
    result = _verdict(e)
    shown = on_index(result, e.get("data_to", ""), today, stale_after_days)
    if e["broken"]:
        look, href = look_at(shown.status, "", False)
    else:
        look, href = look_at(shown.status, e["status"]["metric"], e["status"]["staged_chart"])
    # a broken project's entry has none of a built one's figures; only a project with a
    # metric not built has metrics_not_built
    return (
        {
            "headline": None,
            "data_to": "",
            "phase_label": "",
            "has_history": False,
            "metrics_not_built": [],
        }
        | e
        | {
            "result_status": str(result.status),
            "status_code": str(shown.status),
            "status_label": shown.status.label,
            "status_reason": shown.reason,
            "status_note": shown.note,
            "look_text": look,
            "look_href": f"projects/{e['slug']}/{href}",
        }
    )


def _orders(views: list[dict]) -> None:
    """Each project's place in every sort order, for the page script (which sorts by these
    numbers, so the browser's order is exactly this one). Ties go by title, then slug."""

    def title(v):
        return (v["title"].casefold(), v["slug"])

    keys = {
        "status": lambda v: (Status(v["status_code"]).rank, *title(v)),
        # no data (a broken project) first, then the oldest
        "data": lambda v: (v.get("data_to") or "", *title(v)),
        "owner": lambda v: (v["owner"].casefold(), *title(v)),
        "title": title,
    }
    for key, fn in keys.items():
        for i, v in enumerate(sorted(views, key=fn)):
            v.setdefault("order", {})[key] = i


def figures_csv(views: list[dict]) -> bytes:
    lines = [",".join(FIGURES_COLUMNS)]
    for v in views:
        f = v.get("figures") or {}
        cells = [
            csv_text(v["slug"]),
            csv_text(v["title"]),
            csv_text(v["owner"]),
            csv_text(v["phase"]),
            f.get("metric", ""),
            f.get("unit", ""),
            f.get("measure", ""),
            f.get("baseline", ""),
            f.get("after", ""),
            f.get("change", ""),
            f.get("percent_change", ""),
            csv_text(v["status_label"]),
            csv_text(v["status_reason"]),
            csv_text(v.get("data_to", "")),
        ]
        lines.append(",".join(cells))
    return ("\n".join(lines) + "\n").encode("utf-8")


def index_files(
    entries: list[dict], settings: PortfolioSettings, live: str | None, today: dt.date
) -> dict[str, bytes]:
    """index.html and the headline figures' CSV, from every project's entry."""
    views = [_view(e, today, settings.stale_after_days) for e in entries]
    _orders(views)
    views.sort(key=lambda v: v["order"]["status"])  # the page's own order, without a script
    ok = [v for v in views if not v["broken"]]
    ctx = page_context("", settings, live)
    # every project in its phase, a broken one too when its phase could be read
    by_phase = [(p, n) for p in PHASES if (n := sum(v["phase"] == p for v in views))]
    by_status = [(s, n) for s in Status if (n := sum(v["status_code"] == s for v in views))]
    html = render(
        "index.html",
        projects=views,
        broken=len(views) - len(ok),
        partly=sum(bool(v["metrics_not_built"]) for v in ok),
        phases=[p for p, _ in by_phase],
        by_phase=by_phase,
        statuses=[
            {"code": str(s), "label": LABELS[s], "meaning": MEANINGS[s], "count": n}
            for s, n in by_status
        ],
        sorts=SORTS,
        figures_csv=FIGURES_CSV,
        today=today.isoformat(),
        stale_after_days=settings.stale_after_days,
        owners=sorted({v["owner"] for v in ok}, key=str.casefold),
        tags=sorted({t for v in ok for t in v["tags"]}, key=str.casefold),
        **ctx,
    )
    return {"index.html": html.encode(), FIGURES_CSV: figures_csv(views)}
