"""The control chart: centre line and limits per point, its dispersion chart beneath; and the
datasets and template values it shares with the chart by period.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from ...stats.results import ControlChart, Signal
from .. import style
from ..base.events import headroom_rows
from ..base.numbers import plural, titled
from ..base.periods import band_values
from ..base.templates import axis_title, cached_template, make_spec
from ..base.types import ChartSpec, ColumnTable, SeriesContext
from ..base.xaxis import x_axis
from .coded import _Coded, _join_info, _limits_info, _marked_pair, _staged_text
from .limit_rows import _limit_rows, _own_rows, _Parts
from .marks import _mark_codes, _staged_mark_values
from .rows import _bands, _events, _exact, _Keys, _point_rows, _Series, _series_rows, _x_values
from .shape import _check_chart, _secondary_aside, _secondary_fitted, _secondary_stage
from .tables import _control_table, _yes_no
from .templates import _control_template
from .words import _fitted_sentence, _kind_name, _last_limits, _measure_title, _signals_sentence

# Charts whose plotted statistic is in the metric's own unit.
_UNIT_KINDS = {"individuals", "xbar", "moving-range", "range", "stdev"}


def _control_parts(
    ctx: SeriesContext,
    chart: ControlChart,
    signals: Sequence[Signal],
    offset: int,
    own: ControlChart | None = None,
    staged: bool = False,
    evidence=None,
    own_signals: Sequence[Signal] = (),
):
    """Datasets, template values, per-point signal texts of a control chart (plain or staged).

    Staged: ``evidence`` is the pair of :class:`stats.evidence.PointEvidence` of the chart and
    its companion; ``own_signals`` the after period's signals on its own limits."""
    xa = x_axis(ctx)
    sec = chart.secondary
    marked, sec_marked, main_marks, sec_marks = _marking(
        signals, len(ctx.x), offset, sec is not None, staged, evidence, own_signals
    )
    # keys and line pieces are numbered in order of first use: the main chart's points, its
    # limits (and the after period's own), then the companion's, in that order
    keys = _Keys(staged)
    parts = _Parts()
    set_name = "baseline" if staged else None
    own_stage = np.asarray(own.stage, dtype=int) if own is not None else None
    main = _series_rows(
        ctx,
        chart.values,
        marked,
        keys,
        info=_info_of(chart, own, own_stage),
        fitted=chart.fitted,
        marks=main_marks,
        aside=chart.set_aside,
    )
    limits, labels = _limit_rows(
        xa,
        chart,
        0,
        parts,
        carried=_carried_mask(staged, chart.stage, chart.fitted),
        set_name=set_name,
    )
    datasets = {"limits": limits, "labels": labels}
    if staged:
        datasets["own_labels"] = []
        if own is not None:
            o_rows, o_labels = _own_rows(xa, own, own_stage, 0, parts)
            datasets["limits"] = limits + o_rows
            datasets["own_labels"] = o_labels
    second = None
    if sec is not None:
        second = _secondary_parts(
            ctx, chart, sec, own, offset, (sec_marked, sec_marks), keys, parts, staged, datasets
        )
    datasets["points"] = _point_rows(xa, ctx, main, second)
    datasets["point_info"] = keys.point_rows()
    datasets["limit_info"] = keys.limit_rows()
    datasets["limit_parts"] = parts.rows
    datasets["bands"] = _bands(xa, ctx.stage)
    datasets["events"] = _events(xa, ctx.events)
    datasets["headroom"] = _headroom(datasets["events"], chart, own)
    values_map = {"y_title": axis_title(_measure_title(ctx, chart.kind), style.HEIGHT_MAIN)}
    if sec is not None:
        values_map["y2_title"] = axis_title(
            titled(sec.label, ctx.unit if sec.kind in _UNIT_KINDS else ""), style.HEIGHT_SECONDARY
        )
    values_map.update(_x_values(ctx, xa))  # copied: the remembered dict stays as it is
    values_map.update(band_values(datasets["bands"]))
    if staged:
        values_map.update(_staged_mark_values(main_marks, sec_marks))
    return datasets, values_map, marked, sec_marked, labels


def _marking(
    signals: Sequence[Signal],
    n: int,
    offset: int,
    has_sec: bool,
    staged: bool,
    evidence,
    own_signals: Sequence[Signal],
) -> tuple[_Coded, _Coded, np.ndarray | None, np.ndarray | None]:
    """The signal texts per point of the chart and its companion, and for the staged chart
    their mark codes (None on the plain chart)."""
    marked, sec_marked = _marked_pair(signals, n, offset, has_sec)
    main_marks = sec_marks = None
    if staged:
        ev_main, ev_sec = evidence
        own_marked, own_sec_marked = _marked_pair(tuple(own_signals), n, offset, has_sec)
        marked = _staged_text(marked, ev_main.carried, own_marked)
        main_marks = _mark_codes(ev_main)
        if has_sec and ev_sec is not None:
            pad = np.zeros(offset, dtype=bool)
            sec_marked = _staged_text(
                sec_marked, np.concatenate([pad, ev_sec.carried]), own_sec_marked
            )
            sec_marks = _mark_codes(ev_sec)
    return marked, sec_marked, main_marks, sec_marks


def _info_of(c: ControlChart, o: ControlChart | None, stage_arr) -> _Coded:
    """The limits text per point, with the after period's own limits where ``o`` is given."""
    info = _limits_info(c)
    if o is None:
        return info
    return _join_info(info, _limits_info(o), np.asarray(stage_arr) == 1)


def _carried_mask(staged: bool, stage_arr, fitted) -> np.ndarray | None:
    """Per point of the staged chart, whether its limits are the baseline's carried forward."""
    if not staged:
        return None
    return (np.asarray(stage_arr, dtype=int) != 0) & ~np.asarray(fitted, dtype=bool)


def _secondary_parts(
    ctx: SeriesContext,
    chart: ControlChart,
    sec: ControlChart,
    own: ControlChart | None,
    offset: int,
    marking: tuple[_Coded, np.ndarray | None],
    keys: _Keys,
    parts: _Parts,
    staged: bool,
    datasets: dict,
) -> _Series:
    """The companion chart's points, and its limits and labels put into ``datasets``."""
    xa = x_axis(ctx)
    sec_marked, sec_marks = marking
    sfit = _secondary_fitted(chart, offset)
    sstage = _secondary_stage(chart, offset)
    own_sec = own.secondary if own is not None else None
    if own_sec is not None and len(own_sec.values) != len(sec.values):
        own_sec = None
    osstage = _secondary_stage(own, offset) if own is not None and own_sec is not None else None
    second = _series_rows(
        ctx,
        sec.values,
        sec_marked,
        keys,
        offset=offset,
        info=_info_of(sec, own_sec, osstage),
        fitted=sfit,
        marks=sec_marks,
        aside=_secondary_aside(chart, offset),
    )
    set_name = "baseline" if staged else None
    s_limits, s_labels = _limit_rows(
        xa, sec, offset, parts, carried=_carried_mask(staged, sstage, sfit), set_name=set_name
    )
    datasets["secondary_limits"] = s_limits
    datasets["secondary_labels"] = s_labels
    if staged:
        datasets["secondary_own_labels"] = []
        if own_sec is not None:
            o_rows, o_labels = _own_rows(xa, own_sec, osstage, offset, parts)
            datasets["secondary_limits"] = s_limits + o_rows
            datasets["secondary_own_labels"] = o_labels
    return second


def _headroom(events: list[dict], chart: ControlChart, own: ControlChart | None) -> list[dict]:
    """Room above every value and line drawn for the event labels (none without events)."""
    if not events:
        return []
    drawn = [chart.values, chart.centre, chart.upper, chart.lower]
    if own is not None:
        drawn += [own.centre, own.upper, own.lower]
    return headroom_rows(
        events,
        style.HEIGHT_MAIN,
        np.concatenate([np.asarray(a, dtype=float).ravel() for a in drawn]),
    )


def control_chart(ctx: SeriesContext, chart: ControlChart, signals: Sequence[Signal]) -> ChartSpec:
    """The control chart with centre line and limits per point; its mR/R/S chart beneath."""
    n = len(ctx.x)
    offset = _check_chart(ctx, chart)
    sec = chart.secondary
    is_time = ctx.x_is_time
    has_sec = sec is not None
    aside = chart.set_aside if chart.set_aside is not None and np.any(chart.set_aside) else None
    has = aside is not None
    tpl = cached_template(
        ("control-chart", is_time, has_sec) + (("aside",) if has else ()),
        lambda: _control_template(is_time, has_sec, aside=has),
    )
    datasets, values_map, marked, sec_marked, labels = _control_parts(ctx, chart, signals, offset)

    # the chart named once, by the vocabulary's name of its kind
    name = _kind_name(chart)
    title = f"{ctx.metric_name} \u2014 {name}"
    # the period and values the limits come from; the signals are the card's sentences
    # the period the limits come from, whole: the points set aside inside it said apart
    said = _fitted_sentence(ctx, chart.fitted, aside)
    subtitle = [
        *([ctx.points_note] if ctx.points_note else []),
        said + f"; sigma from {chart.sigma_method}" if chart.sigma_method else said,
    ]
    spec = make_spec(tpl, values_map, datasets, title, subtitle, exact=_exact(ctx, datasets))
    table, columns = _control_table(ctx, chart, offset, marked, sec_marked)
    if has:
        columns = columns + ("set aside",)
        table = ColumnTable(columns, {**table.cols, "set aside": _yes_no(aside)})

    lim = _last_limits(labels)
    summary = (
        f"{name} of {ctx.metric_name}: {plural(n, 'point')}"
        + (f", {lim} (at the last point)" if lim else "")
        + f"; {_signals_sentence(signals)}."
    )
    return ChartSpec(spec=spec, table=table, columns=columns, summary=summary)
