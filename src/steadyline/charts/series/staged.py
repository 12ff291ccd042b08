"""The control chart by period: the baseline's limits carried forward over the later periods
and the after period's own limits, with marks telling a change from instability.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from ...stats.evidence import PointEvidence, point_evidence
from ...stats.results import ControlChart, Signal
from .. import style
from ..base.numbers import plural
from ..base.templates import cached_template, make_spec
from ..base.types import ChartSpec, SeriesContext
from .control import _control_parts
from .marks import MARK_ASIDE, _mark_column
from .rows import _exact
from .shape import _check_chart, _check_len
from .tables import _control_table
from .templates import _control_template
from .words import (
    _change_sentence,
    _fitted_sentence,
    _kind_name,
    _last_limits,
    _own_signals_sentence,
    _when,
)


def staged_control_chart(
    ctx: SeriesContext,
    carried: ControlChart,
    own: ControlChart | None,
    signals: Sequence[Signal],
    own_signals: Sequence[Signal] = (),
    evidence: tuple[PointEvidence, PointEvidence | None] | None = None,
) -> ChartSpec:
    """A control chart by period: the baseline limits carried forward over the later periods
    (dashed, labelled "baseline UCL ..."), and, when ``own`` is given, the after period's own
    centre line and limits drawn solid over the after period only ("after UCL ...").

    ``signals`` are found on ``carried``; ``own_signals`` on the after period's own limits.
    ``evidence`` (:func:`stats.evidence.point_evidence` of the two) says per point what its
    mark is: a point outside the baseline in a signal against the baseline's limits is evidence
    of a change (better / worse); a point in a signal on its own period's limits gets the signal
    diamond beneath it. Without ``evidence`` no direction is judged. The mR/R/S chart beneath
    is drawn the same way."""
    n = len(ctx.x)
    offset = _check_chart(ctx, carried, "carried")
    if own is not None:
        _check_own(ctx, carried, own, offset)
    if evidence is None:
        evidence = point_evidence(carried, signals, own_signals, better="")
    sec = carried.secondary
    is_time = ctx.x_is_time
    has_sec = sec is not None
    aside = (
        carried.set_aside if carried.set_aside is not None and np.any(carried.set_aside) else None
    )
    has = aside is not None
    tpl = cached_template(
        ("staged-control-chart", is_time, has_sec) + (("aside",) if has else ()),
        lambda: _control_template(is_time, has_sec, refs="staged", aside=has),
    )
    datasets, values_map, marked, sec_marked, labels = _control_parts(
        ctx,
        carried,
        signals,
        offset,
        own=own,
        staged=True,
        evidence=evidence,
        own_signals=own_signals,
    )
    if has:  # the points set aside: a mark of their own, named in the legend
        values_map["mark_domain"] = [*values_map["mark_domain"], MARK_ASIDE]
        values_map["mark_shapes"] = [*values_map["mark_shapes"], style.SHAPE_ASIDE]
        values_map["mark_colours"] = [*values_map["mark_colours"], style.ASIDE]

    name = _kind_name(carried)
    title = f"{ctx.metric_name} \u2014 {name} by period"
    # the periods and limits drawn; what they show is said in the card's sentences
    subtitle = _staged_subtitle(ctx, carried, own)
    change = _change_sentence(evidence[0], carried)
    unstable = _own_signals_sentence(signals, own_signals, evidence)
    spec = make_spec(tpl, values_map, datasets, title, subtitle, exact=_exact(ctx, datasets))
    table, columns = _control_table(
        ctx, carried, offset, marked, sec_marked, own=own, marks=_mark_column(evidence, offset)
    )

    lim = _last_limits(labels)
    own_lim = _last_limits(datasets.get("own_labels", []))
    summary = (
        f"{name} of {ctx.metric_name} by period: {plural(n, 'point')}"
        + (f", {lim}" if lim else "")
        + (f"; {own_lim}" if own_lim else "")
        + f"; {change}; {unstable}."
    )
    return ChartSpec(spec=spec, table=table, columns=columns, summary=summary)


def _check_own(ctx: SeriesContext, carried: ControlChart, own: ControlChart, offset: int) -> None:
    """The own-limits chart's lengths, and its companion the same as the carried chart's."""
    _check_len("own.stage", own.stage, len(ctx.x))
    own_offset = _check_chart(ctx, own, "own")
    if (own.secondary is None) != (carried.secondary is None) or (
        own.secondary is not None and own_offset != offset
    ):
        raise ValueError(
            "the own-limits chart must have the same companion chart as the carried one"
        )


def _staged_subtitle(
    ctx: SeriesContext, carried: ControlChart, own: ControlChart | None
) -> list[str]:
    """The periods the limits come from: the baseline's, carried forward, and the after
    period's own."""
    after_idx = (
        np.flatnonzero(np.asarray(own.stage, dtype=int) == 1)
        if own is not None
        else np.zeros(0, dtype=np.intp)
    )
    subtitle = [
        *([ctx.points_note] if ctx.points_note else []),
        _fitted_sentence(ctx, carried.fitted, carried.set_aside) + ", dashed where carried forward",
    ]
    if len(after_idx):
        a, b = int(after_idx[0]), int(after_idx[-1])
        subtitle.append(
            f"after period's own limits (solid) from {_when(ctx.x[a])} to {_when(ctx.x[b])} "
            f"({plural(len(after_idx), 'point')})"
        )
    return subtitle
