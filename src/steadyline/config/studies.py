"""What a measurement study's metric may hold, and how process metrics name their study.

A study has no time axis, direction of better or control chart: its own keys are checked
apart from a process metric's, and the links between metrics only once the whole project is
read.
"""

from __future__ import annotations

import difflib

from .keys import STUDY
from .model import MetricSpec
from .reading import Checker, Reader

# Keys a measurement study has no use for: it has no time axis, no direction of better, no
# control chart and no periods of its own (the project's [comparison] does not apply to it).
_NOT_FOR_STUDY = (
    "time",
    "subgroup",
    "subgroup_size",
    "count",
    "size",
    "category",
    "better",
    "target",
    "chart",
    "signal_rules",
    "run_rules",
    "limits",
    "quartiles",
    "bins",
    "normal_curve",
    "baseline",
    "after",
    "rollup",
    "measurement_study",
    "opportunities_per_unit",
    "expected_change",
)


def check_study_shape(ck: Checker, m: MetricSpec, prefix: str, r: Reader, need) -> None:
    """A measurement study names its value, part and appraiser columns; every key of a process
    metric is refused by name, so that nothing in its table is silently ignored."""
    need("value", "the column with each measurement")
    need("part", "the column naming the part measured")
    need("appraiser", "the column naming who measured it")
    for key in _NOT_FOR_STUDY:
        if key in r.data:
            why = (
                "a study's measurements of one part and appraiser are its trials, in the "
                "file's order"
                if key == "time"
                else "a study is named by the process metric it checks, not the other way round"
                if key == "measurement_study"
                else "it has no time axis, control chart or direction of better"
            )
            ck.add(
                f"{prefix}{key}",
                f"'{key}' does not apply to a measurement study ({why}); remove it",
                r._line(key),
            )
    if m.spec_lower is not None and m.spec_upper is not None and m.spec_lower >= m.spec_upper:
        ck.add(
            f"{prefix}spec_lower",
            f"spec_lower ({m.spec_lower:g}) must be below spec_upper ({m.spec_upper:g})",
            r._line("spec_lower"),
        )


def check_study_links(ck: Checker, indexed: list[tuple[int, MetricSpec]]) -> None:
    """What only the whole project can tell of its measurement studies: a metric's
    ``measurement_study`` names a study of the same project; a study is never the headline
    (the index judges a process by it); a project holds at least one metric besides its
    studies."""
    by_id = {m.id: m for _, m in indexed}
    for i, m in indexed:
        sid = m.measurement_study
        if sid is None:
            continue
        line = ck.loc.line_of("measurement_study", "metric", i)
        target = by_id.get(sid)
        if target is None:
            studies = [x.id for _, x in indexed if x.type == STUDY]
            near = difflib.get_close_matches(sid, studies, n=1, cutoff=0.6)
            hint = (
                f"; did you mean '{near[0]}'?"
                if near
                else f"; its studies are: {', '.join(studies)}"
                if studies
                else f'; it has no metric of type "{STUDY}"'
            )
            ck.add(
                f"metric[{i + 1}].measurement_study",
                f"no metric of this project has the id {sid!r}{hint}",
                line,
            )
        elif target.type != STUDY:
            ck.add(
                f"metric[{i + 1}].measurement_study",
                f'{sid!r} is a {target.type} metric, not a measurement study (type = "{STUDY}")',
                line,
            )
    for i, m in indexed:
        if m.type == STUDY and m.headline:
            ck.add(
                f"metric[{i + 1}].headline",
                "a measurement study cannot be the headline "
                "metric: the index judges a project by a process metric; mark one of those",
                ck.loc.line_of("headline", "metric", i),
            )
    if indexed and all(m.type == STUDY for _, m in indexed):
        ck.add(
            "metric",
            "every metric is a measurement study; a project needs at least one "
            "process metric for its measurements to qualify and its status to judge",
            ck.loc.line_of(None, "metric", 0),
        )
