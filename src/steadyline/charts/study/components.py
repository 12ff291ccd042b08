"""The components of variation of a measurement study, as shares with the acceptance guide's
lines.
"""

from __future__ import annotations

from ...stats.results_studies import GaugeStudy
from .. import style, vl
from ..base.templates import cached_template, finish_template, make_spec
from ..base.types import ChartSpec
from ..categorical.categories import bar_keys
from .naming import _HEIGHT_STUDY, _legend_keyed

# The bands of the published acceptance guide for the measurement system's share, in percent
# (AIAG, Measurement Systems Analysis, 4th ed.; from memory): drawn as two reference lines.
GUIDE_LINES = (10.0, 30.0)
# The sources drawn as bars, in the order they stand (the study's own words).
SOURCES = ("repeatability", "reproducibility", "measurement system", "part-to-part")
SHARE_STUDY = "share of the study variation"
SHARE_CONTRIBUTION = "share of the variance (contribution)"
SHARE_TOLERANCE = "share of the tolerance"


def _components_template() -> dict:
    y = vl.field("source:N", title=None, sort=None, axis={"labelLimit": 130})
    colour = vl.field(
        "share_key:N",
        title=None,
        scale={"range": [style.DATA, style.HIST_BAR, style.CURVE]},
        # one entry a line: two columns of these long names run past a card's edge
        legend=_legend_keyed(None) | {"columns": 1},
    )
    x = vl.field(
        "percent:Q",
        title="percent",
        scale={"domainMin": 0, "zero": True},
    )
    bars = vl.view(
        "shares",
        vl.mark("bar", height={"band": 0.9}),
        {
            "y": y,
            "yOffset": vl.field("share_key:N"),
            "x": x,
            "color": colour,
            "tooltip": [
                vl.tip("source:N", "source"),
                vl.tip("share:N", "share"),
                vl.tip("percent:Q", "percent", ".1f"),
            ],
        },
    )
    labels = vl.view(
        "shares",
        vl.mark("text", align="left", dx=3, baseline="middle", fontSize=10),
        {"y": y, "yOffset": vl.field("share_key:N"), "x": x, "text": vl.field("text:N")},
    )
    guide = vl.view(
        "guide",
        vl.mark("rule", color=style.LIMIT, strokeDash=style.DASH_LIMIT),
        {"x": vl.field("percent:Q")},
    )
    guide_text = vl.view(
        "guide",
        vl.mark("text", color=style.INK, align="left", dx=3, baseline="top", y=0, fontSize=10),
        {"x": vl.field("percent:Q"), "text": vl.field("text:N")},
    )
    chart = vl.layer(guide, bars, labels, guide_text, width="container", height=_HEIGHT_STUDY)
    return finish_template(chart, "study-components")


def components_chart(study: GaugeStudy, *, values_text: str = "") -> ChartSpec:
    """Bars of each source's share of the study variation and of the variance (and of the
    tolerance, when both specification limits were given), with reference lines at the
    guide's 10% and 30%. ``values_text`` names what the study measured (the subtitle)."""
    tpl = cached_template(("study-components",), _components_template)
    shares = [(SHARE_STUDY, "study_percent"), (SHARE_CONTRIBUTION, "contribution_percent")]
    if study.component("measurement system").tolerance_percent is not None:
        shares.append((SHARE_TOLERANCE, "tolerance_percent"))
    keys = bar_keys([name for name, _ in shares])
    rows = []
    for source in SOURCES:
        c = study.component(source)
        for key, (name, attr) in zip(keys, shares, strict=True):
            v = getattr(c, attr)
            rows.append(
                {
                    "source": source,
                    "share": name,
                    "share_key": key,
                    "percent": v,
                    "text": f"{v:.1f}%",
                }
            )
    guide = [{"percent": g, "text": f"{g:g}%"} for g in GUIDE_LINES]
    sub = [values_text] if values_text else []
    sub.append(
        f"dashed lines at {GUIDE_LINES[0]:g}% and {GUIDE_LINES[1]:g}%, the bands of the "
        "acceptance guide for the measurement system's share"
    )
    spec = make_spec(tpl, {}, {"shares": rows, "guide": guide}, "Components of variation", sub)
    table = []
    for c in study.components:
        row = {
            "source": c.source,
            "variance": c.variance,
            "standard deviation": c.sigma,
            SHARE_STUDY + " (%)": c.study_percent,
            SHARE_CONTRIBUTION + " (%)": c.contribution_percent,
        }
        if c.tolerance_percent is not None:
            row[SHARE_TOLERANCE + " (%)"] = c.tolerance_percent
        table.append(row)
    columns = tuple(table[0])
    ms = study.component("measurement system")
    summary = (
        f"Bars of the shares of repeatability, reproducibility, the measurement system "
        f"and the parts; the measurement system takes {ms.study_percent:.1f}% of the "
        f"study variation"
    )
    if ms.tolerance_percent is not None:
        summary += f" and {ms.tolerance_percent:.1f}% of the tolerance"
    return ChartSpec(spec=spec, table=table, columns=columns, summary=summary + ".")
