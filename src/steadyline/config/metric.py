"""One ``[[metric]]`` table -> MetricSpec: its keys read and checked.

The same rules serve a metric of project.toml and one given as a dict for data that come from
elsewhere (:func:`metric_from_dict`, a DataFrame in a notebook). Which keys each data type
needs is checked in :mod:`.shape`, the days set aside in :mod:`.set_aside`.
"""

from __future__ import annotations

import difflib
from dataclasses import replace
from pathlib import Path
from typing import Any

from .. import files, formats
from ..errors import ProjectError, rel
from .keys import (
    BETTER,
    BIN_RULES,
    CHARTS,
    COLUMN_KEYS,
    CSV_KEYS,
    DATA_TYPES,
    LIMIT_MODES,
    METRIC_KEYS,
    PERIODS,
    QUARTILE_METHODS,
    ROLLUP_KEYS,
    RUN_RULES,
    SIGNAL_RULES,
    SLUG_RE,
    STATISTICS,
    STUDY,
)
from .model import CsvOptions, MetricSpec, Period, PortfolioSettings, Rollup
from .reading import Checker, Reader, is_text_encoding, type_name
from .set_aside import read_set_aside
from .shape import check_metric_shape, period_clash
from .toml_file import file_fault


def read_metric(
    ck: Checker,
    m: dict,
    i: int,
    folder: Path | None,
    root: Path | None,
    settings: PortfolioSettings,
    comp_baseline: Period | None,
    comp_after: Period | None,
) -> MetricSpec | None:
    """The i-th metric's table read and checked, or None when it has an error (recorded in
    *ck*). *folder* None: the data come from elsewhere (a DataFrame, see metric_from_dict), no
    file is named or read. The keys are read in the order the messages list their problems."""
    prefix = f"metric[{i + 1}]."
    before = len(ck.problems)
    ck.unknown_keys(m, METRIC_KEYS, prefix, table="metric", index=i)
    r = Reader(ck, m, prefix, table="metric", index=i)
    mid = r.text("id", required=True, what="a short id like 'lead-time'")
    if mid is not None and not SLUG_RE.match(mid):
        ck.add(
            f"{prefix}id",
            f"{mid!r} is not a valid id; use lower-case letters, digits and hyphens",
            r._line("id"),
        )
    name = r.text("name", required=True, what="the metric's name")
    dtype = r.choice("type", DATA_TYPES, required=True)
    better = r.choice("better", BETTER, required=dtype != STUDY)
    file_, path = _data_file(ck, r, folder)
    sheet = r.text("sheet")
    if file_ is not None and folder is not None:
        _check_format(ck, file_, sheet, m.get("csv"), prefix, r)
    cols = {k: r.text(k) for k in COLUMN_KEYS}
    study_id = _study_id(ck, r)
    subgroup_size = r.integer("subgroup_size", minimum=1)
    rollup = _rollup(ck, r, i)
    csv = _csv_options(ck, r, i)
    own_baseline, own_after = r.period("baseline"), r.period("after")
    bins = _bins(r, m, settings)
    spec = MetricSpec(
        id=mid or f"metric-{i + 1}",
        name=name or "",
        file=path or (folder / (file_ or "") if folder is not None else ck.path),
        file_rel=rel(folder / (file_ or ""), root) if folder is not None else ck.shown,
        type=dtype or "continuous",
        better=better or ("" if dtype == STUDY else "lower"),
        subgroup_size=subgroup_size,
        **_plain_keys(r, settings),
        bins=bins,
        sigma_level=settings.sigma_level,
        baseline=own_baseline or comp_baseline,
        after=own_after or comp_after,
        rollup=rollup,
        csv=csv,
        line=ck.loc.line_of(None, "metric", i),
        sheet=sheet,
        measurement_study=study_id,
        **cols,
    )
    spec = _check_whole(ck, spec, r, i, dtype is not None, (own_baseline, own_after))
    if len([p for p in ck.problems[before:] if p.severity == "error"]):
        return None
    return spec


def _data_file(ck: Checker, r: Reader, folder: Path | None) -> tuple[str | None, Path | None]:
    """The ``file`` as written, and its resolved path when it is a data file inside the
    project folder (None, with the reason recorded, when it is not)."""
    prefix = r.prefix
    file_ = r.text(
        "file",
        required=folder is not None,
        what="the data file (CSV, .xlsx or .parquet), relative to the project folder",
    )
    if file_ is None or folder is None:
        return file_, None
    p = folder / file_
    if Path(file_).is_absolute() or not files.inside(p, folder):
        ck.add(
            f"{prefix}file",
            f"{file_!r} points outside the project folder; metric files must live inside it",
            r._line("file"),
        )
    elif not files.exists(p):
        near = difflib.get_close_matches(
            file_,
            sorted(
                x.name
                for x in folder.iterdir()
                if x.suffix.lower() in (".csv", ".xlsx", ".parquet")
            ),
            1,
        )
        hint = f"; did you mean '{near[0]}'?" if near else ""
        ck.add(f"{prefix}file", f"the file {file_!r} does not exist{hint}", r._line("file"))
    elif (why := file_fault(p, file_)) is not None:
        ck.add(f"{prefix}file", why, r._line("file"))
    else:
        return file_, p.resolve()
    return file_, None


def _study_id(ck: Checker, r: Reader) -> str | None:
    """The id of the measurement study that checks this metric's gauge, when it is an id."""
    study_id = r.text("measurement_study")
    if study_id is not None and not SLUG_RE.match(study_id):
        ck.add(
            f"{r.prefix}measurement_study",
            f"{study_id!r} is not a metric id; name the id of "
            "the measurement study metric of this project",
            r._line("measurement_study"),
        )
        return None
    return study_id


def _rollup(ck: Checker, r: Reader, i: int) -> Rollup | None:
    """The metric's [metric.rollup], when it names both a period and a statistic."""
    rt = r.table_("rollup")
    if rt is None:
        return None
    prefix = r.prefix
    ck.unknown_keys(rt, ROLLUP_KEYS, prefix + "rollup.", table="metric", index=i, sub="rollup")
    rr = Reader(ck, rt, prefix + "rollup.", table="metric", index=i, sub="rollup")
    per = rr.choice("period", PERIODS, required=True)
    stat = rr.choice("statistic", STATISTICS, required=True)
    return Rollup(per, stat) if per and stat else None


def _csv_options(ck: Checker, r: Reader, i: int) -> CsvOptions:
    """The metric's [metric.csv]; a wrong value is reported and its default used."""
    ct = r.table_("csv")
    if ct is None:
        return CsvOptions()
    prefix = r.prefix
    ck.unknown_keys(ct, CSV_KEYS, prefix + "csv.", table="metric", index=i, sub="csv")
    cr = Reader(ck, ct, prefix + "csv.", table="metric", index=i, sub="csv")
    delim = cr.text("delimiter", default=",")
    if delim is not None and len(delim) != 1:
        ck.add(
            f"{prefix}csv.delimiter",
            f"expected one character, got {delim!r}",
            cr._line("delimiter"),
        )
        delim = ","
    dec = cr.choice("decimal", (".", ","), default=".")
    enc = cr.text("encoding", default="utf-8")
    if enc is not None and not is_text_encoding(enc):
        ck.add(
            f"{prefix}csv.encoding",
            f"unknown text encoding {enc!r}; try utf-8, utf-16 or latin-1",
            cr._line("encoding"),
        )
        enc = "utf-8"
    tz = cr.text("timezone")
    if tz is not None:
        try:
            import zoneinfo

            zoneinfo.ZoneInfo(tz)
        except (zoneinfo.ZoneInfoNotFoundError, ValueError):
            ck.add(
                f"{prefix}csv.timezone",
                f"unknown time zone {tz!r}; use a name like 'Europe/Berlin' or 'UTC'",
                cr._line("timezone"),
            )
            tz = None
    if delim == dec:
        ck.add(
            f"{prefix}csv",
            "the delimiter and the decimal mark are the same character; "
            'files with decimal commas use delimiter = ";"',
            cr._line("decimal"),
        )
    return CsvOptions(delim or ",", dec or ".", enc or "utf-8", cr.text("date_format"), tz)


def _bins(r: Reader, m: dict, settings: PortfolioSettings) -> str | tuple[float, ...]:
    """The histogram's bins: a rule's name, or edges (at least two, increasing)."""
    if "bins" not in m:
        return settings.bins
    v = m["bins"]
    if not isinstance(v, list):
        return r.choice("bins", BIN_RULES, settings.bins)
    if (
        len(v) < 2
        or not all(isinstance(x, int | float) and not isinstance(x, bool) for x in v)
        or any(b <= a for a, b in zip(v, v[1:], strict=False))
    ):
        r._bad("bins", "a list of at least two increasing numbers", v)
        return settings.bins
    return tuple(float(x) for x in v)


# The code ``limits`` had before "phase" was kept for the project's stage in the improvement
# cycle (steadyline-results/2 and earlier): still read, with a warning that names the new one.
_OLDER_LIMIT_CODES = {"per-phase": "per-period"}


def _limits(r: Reader) -> str:
    """``limits``; an older code is read as the code that replaced it, with a warning."""
    v = r.data.get("limits")
    if isinstance(v, str) and v in _OLDER_LIMIT_CODES:
        new = _OLDER_LIMIT_CODES[v]
        r.ck.add(
            f"{r.prefix}limits",
            f"{v!r} is the older name of {new!r}; read as {new!r} (write {new!r} to keep this quiet)",
            r._line("limits"),
            severity="warning",
        )
        return new
    return r.choice("limits", LIMIT_MODES, "baseline")


def _plain_keys(r: Reader, settings: PortfolioSettings) -> dict[str, Any]:
    """The keys read on their own, with their defaults (the portfolio's where it has one)."""
    return {
        "unit": r.text("unit", default="") or "",
        "spec_lower": r.number("spec_lower"),
        "spec_upper": r.number("spec_upper"),
        "target": r.number("target"),
        "headline": r.boolean("headline"),
        "chart": r.choice("chart", CHARTS, "auto"),
        "signal_rules": r.choice("signal_rules", SIGNAL_RULES, settings.signal_rules),
        "run_rules": r.choice("run_rules", RUN_RULES, settings.run_rules),
        "limits": _limits(r),
        "quartiles": r.choice("quartiles", QUARTILE_METHODS, settings.quartiles),
        "normal_curve": r.boolean("normal_curve"),
        "opportunities_per_unit": r.number("opportunities_per_unit"),
        "expected_change": r.number("expected_change"),
    }


def _check_whole(
    ck: Checker,
    spec: MetricSpec,
    r: Reader,
    i: int,
    typed: bool,
    own: tuple[Period | None, Period | None],
) -> MetricSpec:
    """What only the whole metric can tell: its days set aside, the keys its type needs (when
    its type is *typed*, one of the types), and whether the periods it sets itself (*own*:
    baseline, after) can be compared."""
    m, prefix = r.data, r.prefix
    own_baseline, own_after = own
    if "set_aside" in m:
        spec = replace(spec, set_aside=read_set_aside(ck, m["set_aside"], i, spec))
    if typed:
        check_metric_shape(ck, spec, prefix, r)
    # Periods the metric sets itself are checked here, at the metric's own key; a clash of the
    # [comparison] periods alone is reported once, at [comparison].
    owned = [k for k, v in (("baseline", own_baseline), ("after", own_after)) if v is not None]
    if owned and spec.baseline and spec.after:
        clash = period_clash(spec.baseline, spec.after)
        if clash:
            key = clash[0] if clash[0] in owned else owned[0]
            ck.add(f"{prefix}{key}", clash[1], r._line(key))
    return spec


# [metric.csv] keys that say how text is stored, which a workbook or Parquet file does not have.
_TEXT_ONLY_KEYS = ("delimiter", "encoding")


def _check_format(
    ck: Checker, file_: str, sheet: str | None, csv_table, prefix: str, r: Reader
) -> None:
    """What the data file's kind (by its name's ending) allows: `sheet` only for a workbook;
    a spreadsheet of a kind that is not read is named with what to do; the [metric.csv] keys
    of text files do nothing for a workbook or Parquet file (a warning)."""
    kind = formats.data_format(file_)
    other = formats.unread_sheet_kind(file_)
    if other is not None:
        ck.add(
            f"{prefix}file",
            f"{file_!r} is {other}, which is not read; save it as an Excel "
            "Workbook (.xlsx) or export the data as CSV",
            r._line("file"),
        )
    if sheet is not None and kind != formats.WORKBOOK:
        ck.add(
            f"{prefix}sheet",
            f"'sheet' names a sheet of a workbook (.xlsx), but {file_!r} "
            "is not one; remove the key",
            r._line("sheet"),
        )
    if kind != formats.CSV and isinstance(csv_table, dict):
        what = "a workbook" if kind == formats.WORKBOOK else "a Parquet file"
        for key in _TEXT_ONLY_KEYS:
            if key in csv_table:
                ck.add(
                    f"{prefix}csv.{key}",
                    f"has no effect on {what}: its cells are read as stored; remove the key",
                    ck.loc.line_of(key, "metric", r.index, "csv"),
                    severity="warning",
                )


def metric_from_dict(
    data: dict, settings: PortfolioSettings | None = None, source: str = "<DataFrame>"
) -> MetricSpec:
    """One metric's keys, as a ``[[metric]]`` table of project.toml holds them (dates as
    ``datetime.date`` or ISO text), checked by the very rules a project's metrics are, for data
    that come from elsewhere (a DataFrame): ``file`` is not needed (and not read when given).
    *source* names the data in
    messages. Returns the metric; raises ProjectError with every error (warnings are dropped:
    :func:`steadyline.notebook.analyse_frame` reports the data's own)."""
    settings = settings or PortfolioSettings()
    ck = Checker(Path(source), None, "")
    if not isinstance(data, dict):
        ck.add("metric", f"expected a dict of the metric's keys, got {type_name(data)}")
        raise ProjectError(ck.problems)
    comp = {}
    # a metric copied from project.toml keeps its `file`: not read, the DataFrame is the data
    data = {k: v for k, v in data.items() if k != "file"}
    for key in ("baseline", "after"):  # a period may be given as a tuple too
        if isinstance(data.get(key), tuple):
            comp[key] = list(data[key])
    spec = read_metric(ck, data | comp, 0, None, None, settings, None, None)
    if spec is None or any(p.severity == "error" for p in ck.problems):
        raise ProjectError(ck.problems)
    return spec
