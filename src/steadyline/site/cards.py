"""Display cards shared by the project and history pages: chart + sentences + downloads."""

from __future__ import annotations

import numpy as np
from markupsafe import Markup

from ..analysis import MetricAnalysis, points_note
from ..charts import ChartSpec, SeriesContext
from ..config import ProjectSpec
from ..memo import by_identity
from ..vocab import proportion_unit
from .serialise import Plain, compact_bytes, escape_for_script
from .tables import table_body, table_csv

# The page shows at most this many rows of a chart's data table; the CSV download has them all,
# so that a page's weight does not grow with the data.
TABLE_ROWS_SHOWN = 200


# A card states at most this many findings: the lead sentence and the first few of the list;
# the rest are counted and left to the data table, whose "signals" (and "mark") column names
# every point.
FINDINGS_SHOWN = 4
# The order of a card's findings by kind: signals of instability first, then evidence of a
# change, then the sentences that say nothing signals.
_KIND_ORDER = {"signal": 0, "clear": 2}


def shown_findings(findings, limit: int = FINDINGS_SHOWN) -> tuple[list, int]:
    """The findings a card shows, in :func:`order_findings`'s order, and how many it leaves to
    its data table. Short of room, the sentences that name a signal's points are left out
    (last first), never one that counts or sums up (a period's signals, the evidence of a
    change): the table names every point, but not those sums."""
    ordered = order_findings(findings)
    keep = [not f.names_points for f in ordered]
    if sum(keep) > limit:  # more sums than room: the first ones (the table marks every point)
        sums = [i for i, k in enumerate(keep) if k]
        keep = [i in sums[:limit] for i in range(len(ordered))]
    room = limit - sum(keep)
    for i, f in enumerate(ordered):
        if room <= 0:
            break
        if f.names_points:
            keep[i] = True
            room -= 1
    shown = [f for f, k in zip(ordered, keep, strict=True) if k]
    return shown, len(ordered) - len(shown)


def order_findings(findings) -> list:
    """A card's findings, most important first: signals of instability by the date of the
    first point they name (a sentence that counts a period's signals before the sentences on
    them), then evidence of a change in the order given, then the all-clear sentences."""

    def key(item):
        i, f = item
        rank = _KIND_ORDER.get(f.kind, 1)
        at = f.at if f.at is not None else -1
        return rank, at, i

    return [f for _i, f in sorted(enumerate(findings), key=key)]


class Displays:
    """Collects a metric's display cards and their download files."""

    def __init__(self, slug: str, metric_id: str, files: dict[str, bytes], prefix: str = ""):
        self.slug, self.metric_id, self.files = slug, metric_id, files
        self.prefix = prefix
        self.cards: list[dict] = []

    def add(
        self,
        key: str,
        title: str,
        chart: ChartSpec,
        findings=(),
        cautions=(),
        method: str = "",
        notes=(),
    ) -> dict:
        """One card. ``cautions`` are every caution of the display (results.json lists them
        all); those also in ``notes`` say how the chart was drawn rather than how far to trust
        it, and go with the method under "How this chart is made"."""
        base = f"{self.prefix}{self.metric_id}-{key}"
        data_name = f"data/{base}.csv"
        spec_name = f"data/{base}.vl.json"
        self.files[data_name] = table_csv(chart)
        raw = compact_bytes(chart.spec)  # chart specs are plain JSON already (charts package)
        self.files[spec_name] = raw + b"\n"
        text = raw.decode("utf-8")
        kept, left = shown_findings(findings)
        shown = [f.__dict__ for f in kept]
        all_cautions = list(dict.fromkeys(cautions))
        method_notes = set(notes)
        card = {
            "key": key,
            "title": title,
            "anchor": base,
            "chart_id": f"chart-{base}",
            # escape_for_script leaves no '<', '>' or '&', so the JSON cannot end its script element
            "spec_json": Markup(escape_for_script(text)),
            # the chart's own description, for readers who cannot see it
            "label": chart.summary,
            # one sentence under the title: the most important finding, or, on a chart that
            # has none, what the chart shows
            "lead": shown[0] if shown else None,
            "summary": shown[0]["text"] if shown else chart.summary,
            "findings": shown[1:],
            "more_findings": left,
            "cautions": all_cautions,
            "cautions_shown": [c for c in all_cautions if c not in method_notes],
            "notes": [c for c in all_cautions if c in method_notes],
            "method": method,
            "csv_href": data_name,
            "spec_href": spec_name,
            "table_id": f"{base}-table",
            "table": {
                "columns": list(chart.columns),
                "total": len(chart.table),
                "shown": min(len(chart.table), TABLE_ROWS_SHOWN),
                "body": table_body(chart.table, chart.columns, TABLE_ROWS_SHOWN),
            },
        }
        self.cards.append(card)
        return card


def series_context(a: MetricAnalysis, spec: ProjectSpec) -> SeriesContext:
    periods = a.point_periods
    assert periods is not None  # a time series has a date column
    # ISO text to the second, midnight written as the date alone
    seconds = periods.astype("datetime64[s]")
    stamps = np.datetime_as_string(seconds, unit="s")
    return SeriesContext(
        x=tuple(t[:10] if t.endswith("T00:00:00") else t for t in stamps.tolist()),
        stamps=seconds,
        x_is_time=True,
        stage=a.stage_names,
        segment=tuple(a.point_segments.tolist()),
        # a defectives metric plots the proportion defective: its unit names the items checked
        unit=proportion_unit(a.spec.unit) if a.effective_type == "defectives" else a.spec.unit,
        metric_name=a.spec.name,
        # the events' dates as dates: the charts write them as text where they draw them
        events=tuple((e.date, e.label) for e in spec.events),
        points_note=points_note(a.spec),
    )


@by_identity(4)  # the project and history pages' entries of a metric list the same signals
def signals_json(signals, x) -> list[Plain]:
    # a Signal's texts are plain str (stats.results); x holds one text per point
    at = x.__getitem__
    out = []
    for s in signals:
        idx = list(map(int, s.indices))
        out.append(
            Plain(
                rule=s.rule,
                description=s.description,
                indices=idx,
                dates=list(map(at, idx)),
                side=s.side,
                chart=s.chart,
            )
        )
    return out
